//! `candor pack` end to end: the binary packs example deals into one PDF, read back with
//! poppler's pdftotext and pdfinfo (independent of candor's typesetter).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn example(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("example-deals")
        .join(name)
}

fn candor(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_candor"))
        .args(args)
        .env("SOURCE_DATE_EPOCH", "1798675200")
        .output()
        .expect("run candor")
}

fn tool(name: &str, args: &[&str]) -> String {
    let out = Command::new(name)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("{name} is needed for this test (poppler-utils): {e}"));
    assert!(out.status.success(), "{name} {args:?} failed");
    String::from_utf8_lossy(&out.stdout).to_string()
}

fn pages(pdf: &Path) -> usize {
    let info = tool("pdfinfo", &[&pdf.to_string_lossy()]);
    info.lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|n| n.trim().parse().ok())
        .expect("page count")
}

fn text(pdf: &Path) -> String {
    tool("pdftotext", &["-enc", "UTF-8", &pdf.to_string_lossy(), "-"])
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

const DEALS: [(&str, &str); 3] = [
    ("brannock-mill-hydro.yaml", "Brannock Mill hydro scheme"),
    ("corrie-vale-quarry.yaml", "Corrie Vale quarry"),
    ("tollgate-depot.yaml", "Tollgate Road bus depot"),
];

/// Three deals make one PDF: cover with the summary, contents, then the memos in the
/// order given, longer than any single memo.
#[test]
fn three_deals_make_one_pack() {
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("pack.pdf");
    let files: Vec<String> = DEALS
        .iter()
        .map(|(f, _)| example(f).to_string_lossy().to_string())
        .collect();
    let mut args: Vec<&str> = vec!["pack"];
    args.extend(files.iter().map(String::as_str));
    let out_s = out.to_string_lossy().to_string();
    args.extend(["-o", &out_s, "--title", "December committee"]);
    let run = candor(&args);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let t = text(&out);
    assert!(t.contains("December committee"));
    assert!(t.contains("Summary of the deals"));
    assert!(t.contains("Real IRRs"));
    assert!(t.contains("Contents"));
    // SOURCE_DATE_EPOCH 1798675200 is 2026-12-31T00:00:00Z (Unix time, common practice).
    assert!(t.contains("31 December 2026"), "cover date");
    // Each deal appears in the summary, the contents, then as a memo, in order.
    let memos = t
        .find("INVESTMENT COMMIT")
        .expect("the first memo's heading");
    let mut at = memos;
    for (_, name) in DEALS {
        assert!(
            t[..memos].contains(name),
            "{name} missing from the front matter"
        );
        let found = t[at..]
            .find(name)
            .unwrap_or_else(|| panic!("{name} missing or out of order"));
        at += found + name.len();
    }
    let pack_pages = pages(&out);
    for (f, _) in DEALS {
        let memo = dir.path().join(format!("{f}.pdf"));
        let ex = example(f).to_string_lossy().to_string();
        let run = candor(&["memo", &ex, "-o", &memo.to_string_lossy()]);
        assert!(run.status.success());
        assert!(pack_pages > pages(&memo), "{f}");
    }
    // Every deal file is attached.
    let list = tool("pdfdetach", &["-list", &out_s]);
    for (f, _) in DEALS {
        assert!(list.contains(f), "{f} not attached: {list}");
    }
}

fn broken_copy(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(example("tollgate-depot.yaml")).expect("read");
    let path = dir.join("broken-deal.yaml");
    std::fs::write(&path, text.replacen("name:", "nmae:", 1)).expect("write");
    path
}

/// With an invalid deal and no `--skip-invalid`, nothing is written and the exit is 1.
#[test]
fn an_invalid_deal_stops_the_pack() {
    let dir = tempfile::tempdir().expect("tempdir");
    let broken = broken_copy(dir.path());
    let out = dir.path().join("pack.pdf");
    let good = example(DEALS[0].0).to_string_lossy().to_string();
    let run = candor(&[
        "pack",
        &good,
        &broken.to_string_lossy(),
        "-o",
        &out.to_string_lossy(),
    ]);
    assert_eq!(run.status.code(), Some(1));
    assert!(!out.exists());
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(err.contains("broken-deal.yaml"), "{err}");
    // Nothing else is left in the folder either (no temporary file).
    let left: Vec<_> = std::fs::read_dir(dir.path()).expect("dir").collect();
    assert_eq!(left.len(), 1);
}

/// `--skip-invalid` packs the valid deals and names the skipped file on the cover.
#[test]
fn skip_invalid_names_the_skipped_file() {
    let dir = tempfile::tempdir().expect("tempdir");
    let broken = broken_copy(dir.path());
    let out = dir.path().join("pack.pdf");
    let good = example(DEALS[1].0).to_string_lossy().to_string();
    let run = candor(&[
        "pack",
        &good,
        &broken.to_string_lossy(),
        "-o",
        &out.to_string_lossy(),
        "--skip-invalid",
    ]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let t = text(&out);
    assert!(t.contains("Left out of this pack"), "{t}");
    assert!(t.contains("broken-deal.yaml"));
    assert!(t.contains(DEALS[1].1));
}
