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

/// Runs `candor rates --batch` on the given lines; the output lines as text.
fn batch_text(lines: &[&str]) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("series.jsonl");
    std::fs::write(&path, lines.join("\n") + "\n").unwrap();
    let out = candor()
        .args(["rates", "--batch"])
        .arg(&path)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout)
        .unwrap()
        .lines()
        .map(str::to_string)
        .collect()
}

/// The first diagnostic `candor check --json` gives for a deal file: (code, message).
fn deal_diagnostic(yaml: &str) -> (String, String) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("deal.yaml");
    std::fs::write(&path, yaml).unwrap();
    let out = candor()
        .args(["check", "--json"])
        .arg(&path)
        .output()
        .unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let d = &v[0]["diagnostics"][0];
    (
        d["code"].as_str().unwrap_or_default().to_string(),
        d["message"].as_str().unwrap_or_default().to_string(),
    )
}

#[test]
fn batch_lines_and_deal_files_refuse_the_same_values_in_the_same_words() {
    // (JSON in a batch line, the same value in a deal file): amounts, rates and dates.
    let amount = |json: &str, yaml: &str| {
        (
            format!(r#"{{"id": "a", "amounts": [-100, {json}]}}"#),
            periodic("Same", "9%", &format!("-100, {yaml}")),
            "amounts[1]: ",
        )
    };
    let hurdle = |json: &str, yaml: &str| {
        (
            format!(r#"{{"id": "h", "amounts": [-100, 110], "hurdle_rate": {json}}}"#),
            periodic("Same", yaml, "-100, 110"),
            "hurdle_rate: ",
        )
    };
    let date = |d: &str| {
        (
            format!(r#"{{"id": "d", "dated": [{{"date": "{d}", "amount": -100}}, {{"date": "2028-01-01", "amount": 110}}]}}"#),
            format!("candor: 1\ndeal: {{ name: Same, currency: EUR, as_of: 2027-01-01 }}\nhurdle_rate: 9%\ncash_flows:\n  day_count: act/365f\n  dated:\n    - {{ date: {d}, amount: -100 }}\n    - {{ date: 2028-01-01, amount: 110 }}\n"),
            "dated[0].date: ",
        )
    };
    let cases = [
        // A bare 9 is 900% (a fraction without a percent sign) and refused in deal files.
        hurdle("9", "9"),
        hurdle(r#""1000001%""#, "1000001%"),
        hurdle(r#""99999999999%""#, "99999999999%"),
        hurdle(r#""-100%""#, "-100%"),
        // Exponents are refused in deal files, whatever the size of the number.
        amount("1e20", "1e20"),
        amount("1e-28", "1e-28"),
        amount("1.0000001", "1.0000001"),
        amount("1000000000000000.5", "1000000000000000.5"),
        amount("true", "true"),
        amount(r#""12,5""#, "\"12,5\""),
        // Deal files accept the years 1900 to 2399 (src/model/values.rs).
        date("0001-01-01"),
        date("9999-12-31"),
        date("2400-01-01"),
    ];
    for (line, yaml, prefix) in &cases {
        let out: Value = serde_json::from_str(&batch_text(&[line])[0]).unwrap();
        let (code, message) = deal_diagnostic(yaml);
        assert_eq!(out["error"]["code"], code.as_str(), "{line}: {out}");
        assert_eq!(
            out["error"]["message"],
            format!("{prefix}{message}"),
            "{line}"
        );
    }
}

#[test]
fn batch_ids_come_back_exactly_as_written() {
    let lines = [
        r#"{"id": 1e400, "amounts": [-100, 110]}"#,
        r#"{"id": 18446744073709551616, "amounts": [-100, 110]}"#,
        r#"{"id": 1E2, "amounts": [0, 0]}"#,
        r#"{"id": -0.10, "amounts": [-100, 110], "every": "fortnight"}"#,
        r#"{"id": {"deal": "x", "n": [1,	2]}, "amounts": [-100, 110]}"#,
    ];
    let out = batch_text(&lines);
    assert!(
        out[0].starts_with(r#"{"id":1e400,"count":1,"#),
        "{}",
        out[0]
    );
    assert!(
        out[1].starts_with(r#"{"id":18446744073709551616,"#),
        "{}",
        out[1]
    );
    assert!(out[2].starts_with(r#"{"id":1E2,"error":"#), "{}", out[2]);
    assert!(out[3].starts_with(r#"{"id":-0.10,"error":"#), "{}", out[3]);
    // A tab inside the id is JSON white space: dropped, so that no control character
    // reaches the output.
    assert!(
        out[4].starts_with(r#"{"id":{"deal":"x","n":[1,2]},"#),
        "{}",
        out[4]
    );
}

#[test]
fn batch_messages_name_what_is_wrong() {
    let out = batch_text(&[
        "[1,2,3]",
        r#"{"id": "t", "amounts": [-100, true]}"#,
        r#"{"id": "l", "amounts": [-100, [110]]}"#,
    ]);
    let v: Vec<Value> = out
        .iter()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(v[0]["id"], "line 1");
    assert!(
        v[0]["error"]["message"]
            .as_str()
            .unwrap()
            .starts_with("the line must be a JSON object"),
        "{}",
        v[0]
    );
    assert_eq!(v[1]["error"]["code"], "bad-number");
    assert_eq!(
        v[1]["error"]["message"],
        "amounts[1]: `true` is not a number"
    );
    assert_eq!(v[2]["error"]["code"], "wrong-type");
    assert_eq!(
        v[2]["error"]["message"],
        "amounts[1]: it should be a number, but it is a list"
    );
}

#[test]
fn batch_and_deal_files_give_the_same_npv_beyond_an_exact_decimal() {
    // At -99.9999% a year, 1 received after ten years is worth (10^-6)^-10 = 10^60 today
    // (the discount factor's definition, common practice): far past Decimal's 7.9e28.
    let dir = tempfile::tempdir().unwrap();
    let deal = rates_json(
        dir.path(),
        &periodic("Beyond", "-99.9999%", "-1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1"),
    );
    let s = &deal["scenarios"][0];
    assert!(s["npv_at_hurdle"].is_null());
    assert_eq!(s["npv_at_hurdle_approx"], "1.00e60");
    let out = batch_text(&[
        r#"{"id": "b", "amounts": [-1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1], "hurdle_rate": "-99.9999%"}"#,
    ]);
    let line: Value = serde_json::from_str(&out[0]).unwrap();
    assert!(line["npv_at_hurdle"].is_null(), "{line}");
    assert_eq!(line["npv_at_hurdle_approx"], s["npv_at_hurdle_approx"]);
}

#[test]
fn an_endless_batch_line_is_answered_and_memory_stays_bounded() {
    // `/dev/zero` is one line that never ends: before lines were capped at 16 MiB the
    // run aborted with "memory allocation failed" (exit 134).
    if !Path::new("/dev/zero").exists() {
        return;
    }
    let mut child = candor()
        .args(["rates", "--batch", "/dev/zero"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let stdout = child.stdout.take().unwrap();
    let (send, receive) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        let mut first = String::new();
        let _ = std::io::BufRead::read_line(&mut std::io::BufReader::new(stdout), &mut first);
        let _ = send.send(first);
    });
    let first = receive.recv_timeout(std::time::Duration::from_secs(60));
    // Reading goes on past the line; a while later the memory is still what one line
    // takes, not what the input has grown to.
    std::thread::sleep(std::time::Duration::from_millis(500));
    let status =
        std::fs::read_to_string(format!("/proc/{}/status", child.id())).unwrap_or_default();
    let still_running = child.try_wait().unwrap().is_none();
    let _ = child.kill();
    let _ = child.wait();
    let first = first.expect("the first line is answered within a minute");
    let v: Value = serde_json::from_str(&first).unwrap();
    assert_eq!(v["id"], "line 1");
    assert_eq!(v["error"]["code"], "line-too-long");
    assert!(still_running, "reading goes on after the long line");
    let peak_kb = status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok());
    if let Some(kb) = peak_kb {
        assert!(kb < 200_000, "{kb} kB");
    }
}

#[test]
fn sensitivity_of_the_pump() {
    // The pump of Lorie and Savage (1955) [flows from memory]: -1,600, +10,000, -10,000
    // a year apart, IRRs 25% and 400%, NPV at 10% = -773.55 (docs/methods.md, Check
    // values). Keys in the order of docs/design.md, `sensitivity`.
    let dir = tempfile::tempdir().unwrap();
    let v = rates_json(dir.path(), &periodic("Pump", "10%", "-1600, 10000, -10000"));
    let s = &v["scenarios"][0]["sensitivity"];
    let keys: Vec<&str> = s.as_object().unwrap().keys().map(|k| k.as_str()).collect();
    assert_eq!(
        keys,
        [
            "steps",
            "npv_at_hurdle",
            "tornado",
            "break_even",
            "hurdle_band",
            "count_map",
            "table",
            "headlines"
        ]
    );
    assert_eq!(s["npv_at_hurdle"], "-773.55");
    // The band is the range between the two IRRs (the NPV is -1600 + 10000 v -
    // 10000 v^2 with v = 1 / (1 + r), positive between v = 0.2 and v = 0.8).
    let band = &s["hurdle_band"];
    assert_eq!(band["certified"], true);
    let range = &band["ranges"][0];
    assert!(close(
        range["from"]["annual_rate"].as_f64().unwrap(),
        0.25,
        1e-12
    ));
    assert!(close(
        range["to"]["annual_rate"].as_f64().unwrap(),
        4.0,
        1e-9
    ));
    // The inflows times f: -1600 + 10000 f v - 10000 v^2 has a double root where
    // (10000 f)^2 = 4 * 1600 * 10000, f = 0.8, at v = 0.4 (r = 150%); by hand.
    let inflows = s["count_map"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["key"] == "inflows")
        .unwrap();
    let p = &inflows["change_points"][0];
    let [lo, hi] = [0, 1].map(|i| p["interval"][i].as_f64().unwrap());
    assert!(lo <= 0.8 && 0.8 <= hi, "{p}");
    assert!(close(p["annual_rate"].as_f64().unwrap(), 1.5, 1e-9));
    assert_eq!(
        (p["count_below"].as_u64(), p["count_above"].as_u64()),
        (Some(0), Some(2))
    );
    // Break-even of the inflows at 10%: -1600 + 10000 f / 1.1 - 10000 / 1.21 = 0,
    // f = 1.1 (1600 + 10000 / 1.21) / 10000 = 1.0850909...; by hand.
    let be = &s["break_even"][0];
    assert_eq!(be["key"], "inflows");
    assert_eq!(be["status"], "at");
    let f: f64 = be["factor"].as_str().unwrap().parse().unwrap();
    assert!(
        close(f, 1.1 * (1600.0 + 10000.0 / 1.21) / 10000.0, 1e-12),
        "{f}"
    );
}

/// The deal's `sensitivity` block chooses the steps, the range of the count map and
/// the line of the two-way table, and a chosen step moves the NPV as the moved deal's
/// NPV computed by hand.
#[test]
fn the_deal_chooses_its_sensitivity_steps_range_and_table_line() {
    let dir = tempfile::tempdir().unwrap();
    let yaml = periodic("Pump", "10%", "-1600, 10000, -10000")
        + "sensitivity:\n  steps: [-50%, 25%]\n  factor_range: [0.5, 2]\n  table_line: outflows\n";
    let v = rates_json(dir.path(), &yaml);
    let s = &v["scenarios"][0]["sensitivity"];
    assert_eq!(s["steps"], serde_json::json!([-0.5, 0.25]));
    assert_eq!(s["table"]["key"], "outflows");
    for m in s["count_map"].as_array().unwrap() {
        assert_eq!(m["range"], serde_json::json!([0.5, 2.0]), "{m}");
    }
    let outflows = s["tornado"]
        .as_array()
        .unwrap()
        .iter()
        .find(|b| b["key"] == "outflows")
        .expect("the outflows' bar");
    let halved = &outflows["moves"][0];
    assert_eq!(halved["step"], -0.5);
    // Outflows halved: -800, +10,000, -5,000 at 10%: -800 + 10,000/1.1 - 5,000/1.21
    // = -800 + 9,090.909090... - 4,132.231404... = 4,158.677685... (computed by hand).
    assert_eq!(halved["npv"], "4158.68");
}
