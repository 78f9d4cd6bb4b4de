//! `candor rates` end to end: deal files in, the JSON contract of docs/design.md out,
//! checked against published worked examples (sources named beside each check; the
//! values and their sources are collected in docs/methods.md, Check values).

use crate::support::command as candor;
use serde_json::Value;
use std::path::Path;

/// Writes a deal file into a temporary folder and runs `candor rates --json` on it.
fn rates_json(dir: &Path, yaml: &str) -> Value {
    let path = dir.join("deal.yaml");
    std::fs::write(&path, yaml).unwrap();
    let out = candor()
        .arg("rates")
        .arg(&path)
        .arg("--json")
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "rates failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn periodic(name: &str, hurdle: &str, amounts: &str) -> String {
    format!(
        "candor: 1\ndeal:\n  name: {name}\n  currency: EUR\n  as_of: 2026-11-30\nhurdle_rate: {hurdle}\ncash_flows:\n  every: year\n  amounts: [{amounts}]\n"
    )
}

fn roots(v: &Value) -> Vec<f64> {
    v["scenarios"][0]["irr"]["roots"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["annual_rate"].as_f64().unwrap())
        .collect()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

#[test]
fn lorie_savage_pump() {
    // Lorie & Savage, "Three problems in rationing capital", Journal of Business 28
    // (1955) [flows from memory]; IRRs 25% and 400%, NPV@10% = -773.5537,
    // MIRR(10%, 10%) = 5.598956% (values per docs/methods.md, computed).
    let dir = tempfile::tempdir().unwrap();
    let v = rates_json(dir.path(), &periodic("Pump", "10%", "-1600, 10000, -10000"));
    let s = &v["scenarios"][0];
    assert_eq!(s["name"], "base");
    assert_eq!(s["irr"]["count"], 2);
    assert_eq!(s["irr"]["upper_bound"], 2);
    let r = roots(&v);
    assert!(close(r[0], 0.25, 1e-12) && close(r[1], 4.0, 1e-11), "{r:?}");
    assert_eq!(s["npv_at_hurdle"], "-773.55");
    assert!(close(s["mirr"].as_f64().unwrap(), 0.05598956, 1e-8));
    let first = &s["irr"]["roots"][0];
    assert_eq!(first["balance_kind"], "mixed");
    assert_eq!(first["multiplicity"], 1);
    let iv = first["interval"].as_array().unwrap();
    assert!(iv[0].as_f64().unwrap() <= 0.25 && 0.25 <= iv[1].as_f64().unwrap());
    // Hazen (2003): every root's reading agrees with the NPV at the hurdle (reject).
    for root in s["irr"]["roots"].as_array().unwrap() {
        assert_eq!(root["decision"], "reject");
    }
}

#[test]
fn mine_with_closure_cost() {
    // Corporate-finance textbook mine example [memory]: -30, +10 for 9 years, -65.
    // IRRs 3.503024% and 19.542150%, NPV@10% = 2.529924, MIRR(10%,10%) = 10.495274%
    // (values per docs/methods.md, computed).
    let dir = tempfile::tempdir().unwrap();
    let v = rates_json(
        dir.path(),
        &periodic(
            "Mine",
            "10%",
            "-30, 10, 10, 10, 10, 10, 10, 10, 10, 10, -65",
        ),
    );
    let s = &v["scenarios"][0];
    let r = roots(&v);
    assert_eq!(r.len(), 2);
    assert!(
        close(r[0], 0.03503024, 1e-8) && close(r[1], 0.19542150, 1e-8),
        "{r:?}"
    );
    assert_eq!(s["npv_at_hurdle"], "2.53");
    assert!(close(s["mirr"].as_f64().unwrap(), 0.10495274, 1e-8));
}

#[test]
fn no_real_irr() {
    // Corporate-finance textbook example [memory]: 1000, -3000, 2500 has only the
    // complex IRRs 50% +- 50i%; NPV@10% = 338.8430 (values per docs/methods.md, computed).
    let dir = tempfile::tempdir().unwrap();
    let v = rates_json(dir.path(), &periodic("Prepaid", "10%", "1000, -3000, 2500"));
    let s = &v["scenarios"][0];
    assert_eq!(s["irr"]["count"], 0);
    assert_eq!(s["irr"]["upper_bound"], 2);
    assert_eq!(s["irr"]["certified"], true);
    assert_eq!(s["npv_at_hurdle"], "338.84");
    let codes: Vec<&str> = s["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["code"].as_str().unwrap())
        .collect();
    assert!(codes.contains(&"no-irr"), "{codes:?}");
}

#[test]
fn double_root() {
    // -100, 220, -121 = -(10 - 11v)^2: one IRR, 10%, of multiplicity 2 (docs/methods.md,
    // computed).
    let dir = tempfile::tempdir().unwrap();
    let v = rates_json(dir.path(), &periodic("Touch", "8%", "-100, 220, -121"));
    let s = &v["scenarios"][0];
    assert_eq!(s["irr"]["count"], 2);
    assert_eq!(s["irr"]["roots"].as_array().unwrap().len(), 1);
    assert_eq!(s["irr"]["roots"][0]["multiplicity"], 2);
    assert!(close(roots(&v)[0], 0.1, 1e-15));
}

#[test]
fn dated_day_counts() {
    // Lorie & Savage flows dated 2024-01-01, 2025-01-01, 2026-01-01: Act/365F 25.025516%
    // and 397.076089%; Act/360 24.643578% and 386.275997%; Act/Act ISDA 25% and 400%
    // (docs/methods.md, computed).
    let dir = tempfile::tempdir().unwrap();
    for (dc, lo, hi) in [
        ("act/365f", 0.25025516, 3.97076089),
        ("act/360", 0.24643578, 3.86275997),
        ("act/act-isda", 0.25, 4.0),
    ] {
        let yaml = format!(
            "candor: 1\ndeal:\n  name: Dated pump\n  currency: USD\n  as_of: 2023-12-31\nhurdle_rate: 10%\ncash_flows:\n  day_count: {dc}\n  dated:\n    - {{ date: 2024-01-01, amount: -1600 }}\n    - {{ date: 2025-01-01, amount: 10000 }}\n    - {{ date: 2026-01-01, amount: -10000 }}\n"
        );
        let v = rates_json(dir.path(), &yaml);
        let r = roots(&v);
        assert!(
            close(r[0], lo, 1e-8) && close(r[1], hi, 1e-7),
            "{dc}: {r:?}"
        );
        assert!(v["scenarios"][0]["irr"]["roots"][0]["periodic_rate"].is_null());
    }
}

#[test]
fn batch_screening_keeps_going_past_bad_lines() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("series.jsonl");
    std::fs::write(
        &path,
        concat!(
            "{\"id\": \"pump\", \"every\": \"year\", \"amounts\": [-1600, 10000, -10000], \"hurdle_rate\": \"10%\"}\n",
            "{\"id\": \"broken\", \"every\": \"fortnight\", \"amounts\": [-1, 2]}\n",
            "not json at all\n",
            "{\"id\": 7, \"day_count\": \"act/act-isda\", \"dated\": [{\"date\": \"2024-01-01\", \"amount\": \"-1600\"}, {\"date\": \"2025-01-01\", \"amount\": 10000}, {\"date\": \"2026-01-01\", \"amount\": -10000}]}\n",
        ),
    )
    .unwrap();
    let out = candor()
        .args(["rates", "--batch"])
        .arg(&path)
        .output()
        .unwrap();
    assert!(out.status.success());
    let lines: Vec<Value> = String::from_utf8(out.stdout)
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 4);
    assert_eq!(lines[0]["id"], "pump");
    assert_eq!(lines[0]["count"], 2);
    // Lorie & Savage (1955) [flows from memory]: NPV@10% = -773.55 (docs/methods.md).
    assert_eq!(lines[0]["npv_at_hurdle"], "-773.55");
    assert_eq!(lines[1]["id"], "broken");
    assert_eq!(lines[1]["error"]["code"], "unknown-value");
    assert_eq!(lines[2]["error"]["code"], "bad-line");
    assert_eq!(lines[3]["id"], 7);
    // Act/Act ISDA on whole calendar years gives exactly 25% and 400% (docs/methods.md).
    let r: Vec<f64> = lines[3]["roots"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["annual_rate"].as_f64().unwrap())
        .collect();
    assert!(close(r[0], 0.25, 1e-12) && close(r[1], 4.0, 1e-11), "{r:?}");
}

/// The terminal report of every example deal, kept as a snapshot: what an analyst reads
/// first (user-facing text; a change to it is reviewed with `cargo insta review`).
/// The figures themselves are checked against outside sources in the tests above and
/// in the cross-check; this test keeps their wording and layout from drifting.
#[test]
fn terminal_report_of_every_example_deal() {
    let mut deals: Vec<String> = std::fs::read_dir("example-deals")
        .unwrap()
        .filter_map(Result::ok)
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    deals.sort();
    assert!(deals.len() >= 5, "{deals:?}");
    for name in deals {
        let rel = format!("example-deals/{name}");
        let out = candor().args(["rates", &rel]).output().unwrap();
        let stdout = String::from_utf8(out.stdout).unwrap();
        assert!(
            out.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let stem = name.trim_end_matches(".yaml");
        insta::assert_snapshot!(format!("terminal__{stem}"), stdout);
    }
}
