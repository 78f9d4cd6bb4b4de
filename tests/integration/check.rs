//! `candor check` as a user sees it: every malformed fixture gives the exact text
//! held in its snapshot, names the stable code that starts its file name
//! (`<code>--<what>.yaml`), and exits with 1; generated files cover the size and
//! count limits, run from their temporary folder so that the snapshots hold no
//! temporary paths; files saved with a UTF-8 byte-order mark are read as without.

use crate::support::{candor, candor_in, root, text};
use std::path::Path;
use std::process::Command;

fn fixtures() -> Vec<String> {
    let dir = root().join("tests/fixtures/malformed");
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
    assert!(names.len() >= 45, "only {} fixtures", names.len());
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

/// Runs `candor check` on a file in `dir`, from `dir`, so messages name it as given.
fn check_in(dir: &Path, file: &str) -> (Option<i32>, String, String) {
    let out = candor_in(dir, &["check", file]);
    (out.status.code(), text(&out.stdout), text(&out.stderr))
}

const HEADER: &str =
    "candor: 1\ndeal: { name: Many, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\n";

/// A periodic deal of `n` daily flows: one outlay, then equal receipts.
fn daily_deal(n: usize) -> String {
    let amounts = vec!["100"; n - 1].join(", ");
    format!("{HEADER}cash_flows:\n  every: day\n  amounts: [-1000, {amounts}]\n")
}

#[test]
fn a_flow_list_at_the_limit_is_accepted() {
    // MAX_FLOWS is 100,000 (src/model/validate.rs): exactly that many pass.
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("limit.yaml"), daily_deal(100_000)).expect("write");
    let (code, stdout, stderr) = check_in(dir.path(), "limit.yaml");
    assert_eq!(code, Some(0), "{stderr}");
    assert_eq!(
        stdout,
        "ok  limit.yaml  Many: 100000 flows, base case + 0 scenarios\n"
    );
}

#[test]
fn too_many_flows_is_refused() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("many.yaml"), daily_deal(100_001)).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "many.yaml");
    assert_eq!(code, Some(1));
    assert!(stderr.starts_with("error[too-many-flows]"), "{stderr}");
    assert!(stderr.contains(":6:12"), "points at the list");
    assert!(stderr.len() < 2000, "long lines are cut");
}

#[test]
fn two_hundred_thousand_flows_are_refused_with_one_message() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("huge-list.yaml"), daily_deal(200_000)).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "huge-list.yaml");
    assert_eq!(code, Some(1));
    insta::assert_snapshot!("generated__two_hundred_thousand_flows", stderr);
}

#[test]
fn a_csv_of_more_rows_than_the_limit_is_refused() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut csv = String::from("period,amount\n0,-1000000\n");
    for p in 1..=100_000 {
        csv.push_str(&format!("{p},15\n"));
    }
    std::fs::write(dir.path().join("long.csv"), csv).expect("write");
    let deal = format!("{HEADER}cash_flows:\n  csv: long.csv\n  every: day\n");
    std::fs::write(dir.path().join("long.yaml"), deal).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "long.yaml");
    assert_eq!(code, Some(1));
    insta::assert_snapshot!("generated__csv_beyond_the_limit", stderr);
}

#[test]
fn a_csv_of_exactly_the_limit_is_accepted() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut csv = String::from("date,amount\n");
    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 1).expect("a date");
    for day in 0..100_000u64 {
        let date = start + chrono::Days::new(day);
        let amount = if day == 0 { "-1000000" } else { "15.25" };
        csv.push_str(&format!("{date},{amount}\n"));
    }
    std::fs::write(dir.path().join("limit.csv"), csv).expect("write");
    let deal = format!("{HEADER}cash_flows:\n  csv: limit.csv\n  day_count: act/365f\n");
    std::fs::write(dir.path().join("limit.yaml"), deal).expect("write");
    let (code, stdout, stderr) = check_in(dir.path(), "limit.yaml");
    assert_eq!(code, Some(0), "{stderr}");
    assert!(stdout.contains("100000 flows"), "{stdout}");
}

#[test]
fn scenarios_copying_a_long_base_series_are_bounded() {
    // Fifty one-line scenarios over 100,000 base flows would be 5.1 million flows from
    // a 0.6 MB file; the total is bounded at 1,000,000 (MAX_TOTAL_FLOWS).
    let dir = tempfile::tempdir().expect("temp dir");
    let mut deal = daily_deal(100_000);
    deal.push_str("scenarios:\n");
    for i in 0..50 {
        deal.push_str(&format!("  copy-{i}: {{ inflows_factor: 1 }}\n"));
    }
    std::fs::write(dir.path().join("copies.yaml"), deal).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "copies.yaml");
    assert_eq!(code, Some(1));
    insta::assert_snapshot!("generated__scenarios_beyond_the_total", stderr);
}

#[test]
fn an_oversized_csv_is_refused_before_reading() {
    let dir = tempfile::tempdir().expect("temp dir");
    let big = std::fs::File::create(dir.path().join("big.csv")).expect("create");
    // A sparse file: its size is known from the metadata, its bytes never read.
    big.set_len(10 * 1024 * 1024 + 1).expect("set length");
    let deal = format!("{HEADER}cash_flows:\n  csv: big.csv\n  every: year\n");
    std::fs::write(dir.path().join("deal.yaml"), deal).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "deal.yaml");
    assert_eq!(code, Some(1));
    insta::assert_snapshot!("generated__oversized_csv", stderr);
}

#[test]
fn oversized_file_is_refused_before_reading() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut body = String::from("candor: 1\n");
    while body.len() <= 50 * 1000 * 1000 {
        body.push_str("# padding padding padding padding padding padding padding padding\n");
    }
    std::fs::write(dir.path().join("big.yaml"), body).expect("write");
    let (code, _, stderr) = check_in(dir.path(), "big.yaml");
    assert_eq!(code, Some(1));
    insta::assert_snapshot!("generated__fifty_megabytes", stderr);
}

#[test]
fn a_file_too_large_to_read_is_refused_from_its_size_alone() {
    // 64 GiB, sparse: reading it would take minutes and more memory than the machine
    // has, so finishing at all shows that only the metadata was looked at.
    let dir = tempfile::tempdir().expect("temp dir");
    let file = std::fs::File::create(dir.path().join("vast.yaml")).expect("create");
    if file.set_len(64 << 30).is_err() {
        // A file system without sparse files cannot hold the test.
        return;
    }
    let (code, _, stderr) = check_in(dir.path(), "vast.yaml");
    assert_eq!(code, Some(1));
    assert!(stderr.starts_with("error[file-too-large]"), "{stderr}");
    assert!(stderr.contains("68,719,476,736 bytes"), "{stderr}");
}

#[test]
fn utf8_byte_order_mark_is_accepted() {
    // Deal file and CSV both saved with a byte-order mark and CRLF line ends, as
    // editors and spreadsheet exports on Windows write them.
    let out = candor(&["check", "tests/fixtures/wellformed/utf8-bom.yaml"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(
        text(&out.stdout),
        "ok  tests/fixtures/wellformed/utf8-bom.yaml  Marsh Lane depot (saved with a byte-order mark): 4 flows, base case + 0 scenarios\n"
    );
    // The same bytes without the marks give the same figures.
    let dir = tempfile::tempdir().expect("temp dir");
    let src = root().join("tests/fixtures/wellformed");
    for name in ["utf8-bom.yaml", "utf8-bom-flows.csv"] {
        let bytes = std::fs::read(src.join(name)).expect("fixture");
        assert!(bytes.starts_with(b"\xEF\xBB\xBF"), "{name} keeps its mark");
        std::fs::write(dir.path().join(name), &bytes[3..]).expect("write");
    }
    let with = candor(&["rates", "--json", "tests/fixtures/wellformed/utf8-bom.yaml"]);
    let without = candor_in(dir.path(), &["rates", "--json", "utf8-bom.yaml"]);
    assert_eq!(with.status.code(), Some(0));
    assert!(!with.stdout.is_empty());
    assert_eq!(text(&with.stdout), text(&without.stdout));
}

#[test]
fn positions_after_a_byte_order_mark_count_from_the_first_character() {
    // A mistake on line 1 of a file with a mark: the column is the editor's.
    let out = candor(&[
        "check",
        "--json",
        "tests/fixtures/malformed/unknown-version--after-utf8-bom.yaml",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    let d = &v[0]["diagnostics"][0];
    assert_eq!(d["code"], "unknown-version");
    assert_eq!(d["position"]["line"], 1);
    assert_eq!(d["position"]["column"], 9);
}

#[test]
fn columns_count_characters_on_lines_with_non_ascii_text() {
    // `deal: { name: Zürich–Genève 😀 depot, currency: SFR, ...`: 47 characters (but 54
    // bytes) come before `SFR`.
    let out = candor(&[
        "check",
        "--json",
        "tests/fixtures/malformed/bad-currency--after-non-ascii-name.yaml",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    let d = &v[0]["diagnostics"][0];
    assert_eq!(d["field"], "deal.currency");
    assert_eq!(d["position"]["line"], 2);
    assert_eq!(d["position"]["column"], 48);
}

/// A mistake in a deal's CSV file is shown under the CSV's own line by every command
/// that reads deals, not under the deal file's line of the same number.
#[test]
fn a_csv_mistake_shows_the_csv_line_in_every_command() {
    let deal = "tests/fixtures/malformed/csv-format--text-amount.yaml";
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("out.pdf");
    let out = out.to_string_lossy();
    let runs: [Vec<&str>; 4] = [
        vec!["rates", deal],
        vec!["memo", deal, "-o", &out],
        vec!["pack", deal, "-o", &out],
        vec!["diff", deal, deal],
    ];
    for args in runs {
        let run = candor(&args);
        let err = text(&run.stderr);
        assert_eq!(run.status.code(), Some(1), "{args:?}: {err}");
        assert!(
            err.contains("--> tests/fixtures/malformed/text-amount.csv:3:3"),
            "{args:?}: {err}"
        );
        assert!(err.contains(" 3 | 1,six hundred,"), "{args:?}: {err}");
        // Line 3 of the deal file is `name: Fixture deal`; it must not be shown.
        assert!(!err.contains("Fixture deal"), "{args:?}: {err}");
    }
}

/// The codes of a file's diagnostics, as `check --json` lists them, and their fields.
fn codes_and_fields(dir: &Path, file: &str) -> Vec<(String, String)> {
    let out = Command::new(env!("CARGO_BIN_EXE_candor"))
        .args(["check", "--json", file])
        .current_dir(dir)
        .output()
        .expect("the candor binary runs");
    assert_eq!(out.status.code(), Some(1), "{file} is refused");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON on stdout");
    v[0]["diagnostics"]
        .as_array()
        .expect("a list")
        .iter()
        .map(|d| {
            (
                d["code"].as_str().unwrap_or_default().to_string(),
                d["field"].as_str().unwrap_or_default().to_string(),
            )
        })
        .collect()
}

#[test]
fn texts_too_long_for_the_memo_are_refused_naming_the_field() {
    // A PDF string holds at most 32,767 characters (ISO 32000-1, annex C, table C.1):
    // a name beyond that, or a word that no line can break, must be refused here
    // rather than fail the typesetter.
    let dir = tempfile::tempdir().expect("temp dir");
    let long_name = format!(
        "candor: 1\ndeal: {{ name: {}end, currency: EUR, as_of: 2027-01-01 }}\nhurdle_rate: 9%\ncash_flows: {{ every: year, amounts: [-1000, 600, 600] }}\n",
        "Quarry ".repeat(5_000)
    );
    std::fs::write(dir.path().join("name.yaml"), long_name).expect("write");
    assert_eq!(
        codes_and_fields(dir.path(), "name.yaml"),
        [("text-too-long".to_string(), "deal.name".to_string())]
    );
    let (_, _, stderr) = check_in(dir.path(), "name.yaml");
    assert!(
        stderr.contains("`deal.name` is 35,003 characters long; at most 200 are accepted"),
        "{stderr}"
    );
    // (codes and fields, what `check` prints) for a deal whose memo is `memo`.
    let with_memo = |memo: String| {
        let deal = format!(
            "{HEADER}cash_flows: {{ every: year, amounts: [-1000, 600, 600] }}\nmemo:\n{memo}"
        );
        std::fs::write(dir.path().join("word.yaml"), deal).expect("write");
        let (_, _, stderr) = check_in(dir.path(), "word.yaml");
        (codes_and_fields(dir.path(), "word.yaml"), stderr)
    };
    let (codes, stderr) = with_memo(format!(
        "  summary: Before {} after.\n",
        "w".repeat(200_000)
    ));
    assert_eq!(
        codes,
        [("text-too-long".to_string(), "memo.summary".to_string())]
    );
    assert!(
        stderr.contains("`memo.summary` is 200,014 characters long"),
        "the longer limit is named first: {stderr}"
    );
    let (codes, stderr) = with_memo(format!(
        "  risks:\n    - Fine.\n    - Before {} after.\n",
        "w".repeat(10_000)
    ));
    assert_eq!(
        codes,
        [("text-too-long".to_string(), "memo.risks[1]".to_string())]
    );
    assert!(
        stderr.contains("holds a word of 10,000 characters"),
        "{stderr}"
    );
    assert!(stderr.len() < 2_000, "the message does not echo the word");
}

#[test]
fn long_lists_of_text_are_refused_at_once() {
    // 200,000 risks (a 2.4 MB file) took 24 s and 3.3 GB before lists were bounded.
    let dir = tempfile::tempdir().expect("temp dir");
    let mut deal = format!(
        "{HEADER}cash_flows: {{ every: year, amounts: [-1000, 600, 600] }}\nmemo:\n  risks:\n"
    );
    for i in 0..200_000 {
        deal.push_str(&format!("    - risk {i}\n"));
    }
    std::fs::write(dir.path().join("risks.yaml"), deal).expect("write");
    let started = std::time::Instant::now();
    assert_eq!(
        codes_and_fields(dir.path(), "risks.yaml"),
        [("too-many-items".to_string(), "memo.risks".to_string())]
    );
    // A guard against a return of the quadratic work, far above the time it takes.
    assert!(started.elapsed().as_secs() < 10, "{:?}", started.elapsed());
}

#[test]
fn control_characters_from_escapes_never_reach_the_terminal() {
    for fixture in [
        "control-character--escapes-in-quoted-name.yaml",
        "control-character--terminal-title-in-scenario-key.yaml",
        "control-character--line-break-in-name.yaml",
    ] {
        let rel = format!("tests/fixtures/malformed/{fixture}");
        for command in ["check", "rates", "diff"] {
            let out = if command == "diff" {
                candor(&[command, &rel, &rel])
            } else {
                candor(&[command, &rel])
            };
            assert_eq!(out.status.code(), Some(1), "{command} {fixture}");
            let all = [&out.stdout[..], &out.stderr[..]].concat();
            assert!(
                !all.iter()
                    .any(|b| b.is_ascii_control() && !b"\n".contains(b)),
                "{command} {fixture} printed a control character: {}",
                text(&all)
            );
            assert!(
                !text(&all).lines().any(|l| l.starts_with("error: forged")),
                "{command} {fixture} let the file forge a line"
            );
        }
    }
}

/// A CSV file outside the deal file's folder (by an absolute path, by `..`, or by a
/// symbolic link out of the folder), or one that is not a regular file (a FIFO, a link
/// to `/dev/zero`), is refused by every command that reads a deal, and no line of it
/// is shown. The rule is ours (the issue's), checked against the file system's own
/// notion of where a path leads (`canonicalize`).
#[cfg(unix)]
#[test]
fn a_csv_outside_the_deal_folder_or_not_a_file_is_refused_unread() {
    let root = tempfile::tempdir().unwrap();
    let secret = root.path().join("secret.csv");
    std::fs::write(&secret, "period,amount\nSECRET-FIRST-LINE,1\n").unwrap();
    let folder = root.path().join("a/b");
    std::fs::create_dir_all(&folder).unwrap();
    std::os::unix::fs::symlink(&secret, folder.join("link-out.csv")).unwrap();
    std::os::unix::fs::symlink("/dev/zero", folder.join("zero.csv")).unwrap();
    let fifo_made = Command::new("mkfifo")
        .arg(folder.join("pipe.csv"))
        .status()
        .is_ok_and(|s| s.success());
    // A link that stays inside the folder is fine.
    std::fs::create_dir(folder.join("data")).unwrap();
    std::fs::write(
        folder.join("data/flows.csv"),
        "period,amount\n0,-100\n1,60\n2,60\n",
    )
    .unwrap();
    std::os::unix::fs::symlink("data/flows.csv", folder.join("inside.csv")).unwrap();
    let deal = |csv: &str| format!("{HEADER}cash_flows:\n  csv: {csv}\n  every: year\n");
    std::fs::write(folder.join("inside.yaml"), deal("inside.csv")).unwrap();
    std::fs::write(folder.join("below.yaml"), deal("data/flows.csv")).unwrap();
    for ok in ["inside.yaml", "below.yaml"] {
        let (code, _, err) = check_in(&folder, ok);
        assert_eq!(code, Some(0), "{ok}: {err}");
    }
    let mut cases = vec![
        ("outside", "../../secret.csv", "outside the folder"),
        ("absolute", "/etc/passwd", "outside the folder"),
        ("environ", "/proc/self/environ", "outside the folder"),
        ("link", "link-out.csv", "outside the folder"),
        ("zero", "zero.csv", "outside the folder"),
    ];
    if fifo_made {
        cases.push(("fifo", "pipe.csv", "not a regular file"));
    }
    for (name, csv, why) in cases {
        let file = format!("{name}.yaml");
        std::fs::write(folder.join(&file), deal(csv)).unwrap();
        for command in [
            vec!["check", file.as_str()],
            vec!["rates", file.as_str()],
            vec!["memo", file.as_str(), "-o", "m.pdf"],
            vec!["pack", file.as_str(), "-o", "m.pdf"],
            vec!["diff", "inside.yaml", file.as_str()],
        ] {
            let out = Command::new(env!("CARGO_BIN_EXE_candor"))
                .args(&command)
                .current_dir(&folder)
                .env("SOURCE_DATE_EPOCH", "1798675200")
                .output()
                .unwrap();
            let err = text(&out.stderr);
            assert_eq!(out.status.code(), Some(1), "{command:?}: {err}");
            assert!(err.contains(why), "{command:?}: {err}");
            for leak in ["SECRET-FIRST-LINE", "root:", "PATH="] {
                assert!(!err.contains(leak), "{command:?} shows {leak}: {err}");
            }
            assert!(!folder.join("m.pdf").exists());
        }
    }
}

/// A deal that passes `check` makes a memo: a name in Latin with accents, Greek or
/// Cyrillic passes both (the bundled Libertinus Serif covers those scripts, from
/// memory of its documentation, and the typesetter here is the judge), while emoji,
/// CJK, Thai, Korean or the noncharacter U+FFFF fail `check` and `memo` alike with exit
/// 1, naming the field and the character's code point.
#[test]
fn check_refuses_what_the_memo_cannot_show() {
    let dir = tempfile::tempdir().unwrap();
    let deal = |name: &str| {
        format!(
            "candor: 1\ndeal: {{ name: \"{name}\", currency: EUR, as_of: 2027-01-01 }}\n\
             hurdle_rate: 8%\ncash_flows:\n  every: year\n  amounts: [-100, 60, 60]\n"
        )
    };
    let run = |args: &[&str]| {
        let out = Command::new(env!("CARGO_BIN_EXE_candor"))
            .args(args)
            .current_dir(dir.path())
            .env("SOURCE_DATE_EPOCH", "1798675200")
            .output()
            .unwrap();
        (out.status.code(), text(&out.stderr))
    };
    for (i, name) in [
        "Gare d’Orsay à Zürich",
        "Ωμέγα πλατεία",
        "Кирилловский склад",
    ]
    .into_iter()
    .enumerate()
    {
        let file = format!("ok{i}.yaml");
        std::fs::write(dir.path().join(&file), deal(name)).unwrap();
        assert_eq!(run(&["check", &file]).0, Some(0), "{name}");
        let (code, err) = run(&["memo", &file, "-o", "m.pdf"]);
        assert_eq!(code, Some(0), "{name}: {err}");
    }
    for (i, (name, code_point)) in [
        ("Pier \u{1F600}", "U+1F600"),
        ("倉庫", "U+5009"),
        ("โกดัง", "U+0E42"),
        ("창고", "U+CC3D"),
        ("Pier \\uFFFF", "U+FFFF"),
    ]
    .into_iter()
    .enumerate()
    {
        let file = format!("bad{i}.yaml");
        std::fs::write(dir.path().join(&file), deal(name)).unwrap();
        for command in [
            vec!["check", file.as_str()],
            vec!["memo", file.as_str(), "-o", "x.pdf"],
        ] {
            let (code, err) = run(&command);
            assert_eq!(code, Some(1), "{command:?} {name}: {err}");
            assert!(err.contains("unshowable-character"), "{err}");
            assert!(err.contains("field `deal.name`"), "{err}");
            assert!(err.contains(code_point), "{err}");
        }
    }
    assert!(!dir.path().join("x.pdf").exists());
}
