//! `candor check` as a user sees it: every malformed fixture gives the exact text
//! held in its snapshot, names the stable code that starts its file name
//! (`<code>--<what>.yaml`), and exits with 1; generated files cover the size limits.

use std::path::Path;
use std::process::{Command, Output};

fn candor(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_candor"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the candor binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn fixtures() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/malformed");
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("fixtures folder")
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    names.sort();
    names
}

#[test]
fn every_malformed_fixture_is_refused_with_its_code() {
    let names = fixtures();
    assert!(names.len() >= 25, "only {} fixtures", names.len());
    for name in names {
        let rel = format!("tests/fixtures/malformed/{name}");
        let out = candor(&["check", &rel]);
        let stderr = text(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{name}: {stderr}");
        assert!(out.stdout.is_empty(), "{name} printed to stdout");
        let code = name.split("--").next().unwrap_or_default();
        if code != "several" {
            assert!(
                stderr.starts_with(&format!("error[{code}]")),
                "{name} should report {code} first:\n{stderr}"
            );
        }
        assert!(stderr.contains(&rel), "{name}: the message names the file");
        let stem = name.trim_end_matches(".yaml");
        insta::assert_snapshot!(format!("malformed__{stem}"), stderr);
    }
}

#[test]
fn several_mistakes_are_all_reported() {
    let out = candor(&[
        "check",
        "tests/fixtures/malformed/several--five-mistakes.yaml",
    ]);
    let stderr = text(&out.stderr);
    let codes: Vec<&str> = stderr
        .lines()
        .filter_map(|l| l.strip_prefix("error["))
        .filter_map(|l| l.split(']').next())
        .collect();
    assert_eq!(
        codes,
        [
            "unknown-field",
            "missing-field",
            "bad-currency",
            "bad-date",
            "bad-number",
            "rate-range",
            "bad-date",
            "bad-number",
            "unknown-value"
        ]
    );
}

#[test]
fn json_output_lists_each_file() {
    let out = candor(&[
        "check",
        "--json",
        "example-deals/kestrel-bay-cold-store.yaml",
        "tests/fixtures/malformed/bad-date--february-30.yaml",
    ]);
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    assert_eq!(v[0]["ok"], true);
    assert_eq!(v[0]["deal"], "Kestrel Bay cold store");
    assert_eq!(v[1]["ok"], false);
    let d = &v[1]["diagnostics"][0];
    assert_eq!(d["code"], "bad-date");
    assert_eq!(d["field"], "deal.as_of");
    assert_eq!(d["position"]["line"], 5);
    assert_eq!(d["position"]["column"], 10);
}

#[test]
fn valid_files_print_one_line_each() {
    let out = candor(&["check", "example-deals/corrie-vale-quarry.yaml"]);
    assert_eq!(out.status.code(), Some(0));
    insta::assert_snapshot!("ok_line", text(&out.stdout));
}

#[test]
fn missing_file_is_an_input_error() {
    let out = candor(&["check", "tests/fixtures/no-such-deal.yaml"]);
    assert_eq!(out.status.code(), Some(1));
    insta::assert_snapshot!("missing_file", text(&out.stderr));
}

#[test]
fn too_many_flows_is_refused() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("many.yaml");
    let amounts = vec!["100"; 100_001].join(", ");
    let deal = format!(
        "candor: 1\ndeal: {{ name: Many, currency: EUR, as_of: 2027-01-01 }}\nhurdle_rate: 9%\ncash_flows:\n  every: day\n  amounts: [-1000, {amounts}]\n"
    );
    std::fs::write(&path, deal).expect("write");
    let out = candor(&["check", path.to_str().expect("utf-8 path")]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr.starts_with("error[too-many-flows]"), "{stderr}");
    assert!(stderr.contains(":6:12"), "points at the list");
    assert!(stderr.len() < 2000, "long lines are cut");
}

#[test]
fn oversized_file_is_refused_before_reading() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("big.yaml");
    let mut body = String::from("candor: 1\n");
    while body.len() <= 10 * 1024 * 1024 {
        body.push_str("# padding padding padding padding padding padding padding padding\n");
    }
    std::fs::write(&path, body).expect("write");
    let out = candor(&["check", path.to_str().expect("utf-8 path")]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr.starts_with("error[file-too-large]"), "{stderr}");
}
