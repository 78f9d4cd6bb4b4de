//! Deal format version 2 end to end: version-1 files give byte for byte what they
//! gave before lines existed; a deal rewritten in lines gives the same figures as its
//! version-1 original; every line sums to the net flows; JSON, terminal and memo show
//! units, basis, lines, peak exposure and committed outflows.

use crate::support::pdf::Pdf;
use crate::support::{candor, example_deals, root, text, words};
use candor::memo::sha256_hex;
use rust_decimal::Decimal;
use serde_json::Value;
use std::collections::BTreeMap;

/// The version-1 originals of the examples rewritten in lines, kept as fixtures with
/// what the release before lines printed for them (`expected/`: the terminal report,
/// and the SHA-256 of `rates --json`).
const ORIGINALS: &[&str] = &[
    "corrie-vale-quarry",
    "harrow-lane-prepaid-build",
    "marlow-fen-solar",
];

fn json(path: &str) -> Value {
    let out = candor(&["rates", path, "--json"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("JSON")
}

#[test]
fn version_one_files_print_what_they_printed_before() {
    for name in ORIGINALS {
        let deal = format!("tests/fixtures/v1/{name}.yaml");
        let expected = root().join("tests/fixtures/v1/expected");
        let out = candor(&["rates", &deal]);
        let before = std::fs::read_to_string(expected.join(format!("{name}.txt"))).unwrap();
        assert_eq!(text(&out.stdout), before, "{name}: terminal report");
        let out = candor(&["rates", &deal, "--json"]);
        let sha = std::fs::read_to_string(expected.join(format!("{name}.json.sha256"))).unwrap();
        assert_eq!(sha256_hex(&out.stdout), sha.trim(), "{name}: rates --json");
    }
}

#[test]
fn the_quarry_in_lines_gives_the_figures_of_its_version_one_original() {
    // The rewrite's base case and first two scenarios are the original's, line by
    // line: every key the original printed has the same value.
    let old = json("tests/fixtures/v1/corrie-vale-quarry.yaml");
    let new = json("example-deals/corrie-vale-quarry.yaml");
    assert_eq!(new["units"], "thousands");
    assert_eq!(new["basis"]["tax"], "after");
    assert!(old.get("units").is_none(), "version 1 prints no new keys");
    for i in 0..3 {
        let (o, n) = (&old["scenarios"][i], &new["scenarios"][i]);
        for (key, value) in o.as_object().unwrap() {
            // The sensitivity moves the deal's parts: the lines here, the inflows and
            // outflows in version 1, so it differs by design.
            if key == "sensitivity" {
                continue;
            }
            assert_eq!(&n[key], value, "scenario {i}, key {key}");
        }
    }
    let longer = &new["scenarios"][3];
    assert_eq!(longer["label"], "Two more years of extraction");
    assert_eq!(longer["hurdle_rate"], 0.1);
    assert_eq!(longer["flows"].as_array().unwrap().len(), 12);
}

#[test]
fn every_line_sums_to_the_flows_in_the_json() {
    let mut seen = 0;
    let mut deals = example_deals();
    // A 70-flow concession with a loan, kept beside the examples (its memo runs longer
    // than the examples' page limits allow).
    deals.push(root().join("tests/fixtures/wellformed/ashcombe-ridge-toll-road.yaml"));
    for path in deals {
        let v = json(path.to_str().unwrap());
        for s in v["scenarios"].as_array().unwrap() {
            let Some(lines) = s.get("lines") else {
                continue;
            };
            seen += 1;
            // Add every line's amounts by time (years, non-negative, so their bits
            // sort as the numbers do) and compare with the net flows.
            let mut by_time: BTreeMap<u64, Decimal> = BTreeMap::new();
            let mut committed = Decimal::ZERO;
            for l in lines.as_array().unwrap() {
                for f in l["flows"].as_array().unwrap() {
                    let a: Decimal = f["amount"].as_str().unwrap().parse().unwrap();
                    *by_time
                        .entry(f["years"].as_f64().unwrap().to_bits())
                        .or_default() += a;
                    committed += a.min(Decimal::ZERO);
                }
            }
            let summed: Vec<Decimal> = by_time.into_values().filter(|a| !a.is_zero()).collect();
            let flows: Vec<Decimal> = s["flows"]
                .as_array()
                .unwrap()
                .iter()
                .map(|f| f["amount"].as_str().unwrap().parse().unwrap())
                .collect();
            assert_eq!(summed, flows, "{}: {}", path.display(), s["name"]);
            let stated: Decimal = s["committed_outflows"].as_str().unwrap().parse().unwrap();
            assert_eq!(stated, committed);
            assert!(s["peak_exposure"]["amount"].is_string());
        }
    }
    assert!(seen >= 10, "only {seen} scenarios with lines");
}

#[test]
fn the_memo_shows_units_basis_lines_and_exposure() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("quarry.pdf");
    let out = candor(&[
        "memo",
        "example-deals/corrie-vale-quarry.yaml",
        "-o",
        pdf.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let t = words(&Pdf::open(&pdf).text());
    for expected in [
        "Amounts entered in thousands of GBP; every amount shown here in GBP",
        "Basis nominal amounts, after tax; rates nominal",
        "Net sales of aggregate",
        "Closure, restoration and aftercare bond",
        "Peak exposure (the lowest running total of the flows, undiscounted): GBP \u{2212}3,600,000.00 in period 0 (2027-04-01)",
        "Committed outflows (every negative amount of every line, before lines are netted): GBP \u{2212}10,600,000.00",
        "Two more years of extraction",
    ] {
        assert!(t.contains(expected), "memo lacks {expected:?}");
    }
}

#[test]
fn a_real_basis_with_rates_not_marked_real_is_cautioned() {
    let dir = tempfile::tempdir().unwrap();
    let deal = dir.path().join("real.yaml");
    std::fs::write(
        &deal,
        "candor: 2\ndeal: { name: Real, currency: EUR, as_of: 2027-01-01, basis: { prices: real } }\nhurdle_rate: 7%\ntiming: { every: year }\nlines:\n  build: { amounts: [-1000] }\n  rent: { stream: { first: 120, start: 1, periods: 12 } }\n  exit: { terminal: { at: 12, next_flow: 100, growth: 6%, discount: 7% } }\n",
    )
    .unwrap();
    let v = json(deal.to_str().unwrap());
    let codes: Vec<&str> = v["scenarios"][0]["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["code"].as_str().unwrap())
        .collect();
    assert!(
        codes.ends_with(&["terminal-spread", "real-amounts-nominal-rates"]),
        "{codes:?}"
    );
    let spread = &v["scenarios"][0]["cautions"][codes.len() - 2]["text"];
    // 100 / (0.07 - 0.06) = 10,000; one point higher: 100 / 0.02 = 5,000.
    assert!(
        spread.as_str().unwrap().contains("EUR 10,000.00"),
        "{spread}"
    );
    assert!(
        spread.as_str().unwrap().contains("EUR 5,000.00"),
        "{spread}"
    );
    std::fs::write(
        &deal,
        std::fs::read_to_string(&deal)
            .unwrap()
            .replace("prices: real }", "prices: real, rates: real }"),
    )
    .unwrap();
    let v = json(deal.to_str().unwrap());
    assert!(!v["scenarios"][0]["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .any(|c| c["code"] == "real-amounts-nominal-rates"));
}

#[test]
fn diff_names_the_line_and_the_field_that_changed() {
    let dir = tempfile::tempdir().unwrap();
    let old = dir.path().join("old.yaml");
    let new = dir.path().join("new.yaml");
    let text =
        std::fs::read_to_string(root().join("example-deals/corrie-vale-quarry.yaml")).unwrap();
    std::fs::write(&old, &text).unwrap();
    let edited = text
        .replace("      growth: 0%  ", "      growth: 1%  ")
        .replace(
            "    factors: { sales: 0.85 }",
            "    factors: { sales: 0.8 }",
        );
    assert_ne!(edited, text);
    std::fs::write(&new, edited).unwrap();
    let out = candor(&[
        "diff",
        old.to_str().unwrap(),
        new.to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text_of(&out.stderr));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let inputs = v["inputs"].as_array().unwrap();
    let find = |field: &str| inputs.iter().find(|c| c["field"] == field).cloned();
    let growth = find("lines.sales.stream.growth").expect("the growth change");
    assert_eq!(
        (growth["old"].as_str(), growth["new"].as_str()),
        (Some("0%"), Some("1%"))
    );
    assert!(find("lines.sales (amounts)").is_some());
    let weak = find("scenarios.weak_demand.description").expect("the factor change");
    assert_eq!(weak["new"], "sales x 0.8");
}

fn text_of(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[test]
fn watch_and_archive_take_the_csv_files_of_lines() {
    // Two lines read one CSV file: it is watched, and filed, once.
    let deal = root().join("example-deals/marlow-fen-solar.yaml");
    let watched = candor::commands::watch::watched_files(&deal, &[]);
    let names: Vec<String> = watched
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    assert_eq!(
        names,
        ["marlow-fen-solar.yaml", "marlow-fen-solar-costs.csv"]
    );
    let dir = tempfile::tempdir().unwrap();
    for name in ["marlow-fen-solar.yaml", "marlow-fen-solar-costs.csv"] {
        std::fs::copy(
            root().join("example-deals").join(name),
            dir.path().join(name),
        )
        .unwrap();
    }
    let archive = dir.path().join("archive");
    let out = candor(&[
        "memo",
        dir.path().join("marlow-fen-solar.yaml").to_str().unwrap(),
        "--archive",
        archive.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text_of(&out.stderr));
    let version = archive.join("marlow-fen-solar").join("001");
    let manifest: Value =
        serde_json::from_slice(&std::fs::read(version.join("manifest.json")).unwrap()).unwrap();
    let paths: Vec<&str> = manifest["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["path"].as_str().unwrap())
        .collect();
    assert!(
        paths.contains(&"inputs/marlow-fen-solar-costs.csv"),
        "{paths:?}"
    );
    let out = candor(&["verify", archive.join("marlow-fen-solar").to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text_of(&out.stderr));
}
