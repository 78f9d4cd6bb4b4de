//! The archive end to end through the built binary: filing (`memo --archive`), refiling,
//! concurrent filing, failures that must leave nothing behind, `verify` on intact and
//! damaged versions, and `diff` between deal files and between filed versions.
//!
//! Hashes are checked against coreutils `sha256sum`, an independent implementation, and
//! the hash function itself against the FIPS 180-2 example.

use crate::support::pdf::Pdf;
use crate::support::{
    candor, command, command_as_nobody, examples, is_root, last_line, names, root, s,
    setpriv_available, text,
};
use candor::memo::sha256_hex;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The depot deal's folder in an archive: named after its deal file.
const DEPOT_SLUG: &str = "tollgate-depot";

/// A folder with the CSV depot deal (deal file and its CSV), as a user would have it.
fn depot_folder() -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().expect("temp dir");
    for name in ["tollgate-depot.yaml", "tollgate-depot-flows.csv"] {
        std::fs::copy(examples().join(name), dir.path().join(name)).expect("copy example");
    }
    let deal = dir.path().join("tollgate-depot.yaml");
    (dir, deal)
}

fn edit(path: &Path, from: &str, to: &str) {
    let t = std::fs::read_to_string(path).expect("read deal");
    assert!(t.contains(from), "`{from}` not in {}", path.display());
    std::fs::write(path, t.replacen(from, to, 1)).expect("write deal");
}

fn file_memo(deal: &Path, archive: &Path) -> Output {
    candor(&["memo", s(deal), "--archive", s(archive)])
}

/// The versions filed in a deal's folder.
fn versions(deal_dir: &Path) -> Vec<String> {
    names(deal_dir)
}

fn manifest(version: &Path) -> Value {
    serde_json::from_slice(&std::fs::read(version.join("manifest.json")).expect("manifest"))
        .expect("manifest is JSON")
}

/// SHA-256 by coreutils, independent of candor's own hashing.
fn sha256sum(path: &Path) -> String {
    let out = Command::new("sha256sum")
        .arg(path)
        .output()
        .expect("sha256sum runs");
    text(&out.stdout)
        .split_whitespace()
        .next()
        .unwrap_or("")
        .to_string()
}

#[test]
fn sha256_matches_the_published_example() {
    // FIPS 180-2, appendix B.1: SHA-256("abc").
    assert_eq!(
        sha256_hex(b"abc"),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    );
}

#[test]
fn filing_creates_version_001_with_exact_inputs_and_hashes() {
    let (dir, deal) = depot_folder();
    let archive = dir.path().join("archive");
    let out = file_memo(&deal, &archive);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v1 = archive.join(DEPOT_SLUG).join("001");
    assert_eq!(text(&out.stdout).trim(), s(&v1));
    // With --archive and no --output the memo goes only into the archive.
    assert!(!dir.path().join(format!("{DEPOT_SLUG}.pdf")).exists());

    // The exact bytes of the deal file and of the CSV it reads.
    for name in ["tollgate-depot.yaml", "tollgate-depot-flows.csv"] {
        assert_eq!(
            std::fs::read(v1.join("inputs").join(name)).unwrap(),
            std::fs::read(dir.path().join(name)).unwrap(),
            "{name}"
        );
    }
    let m = manifest(&v1);
    assert_eq!(m["version"], "001");
    assert_eq!(m["slug"], DEPOT_SLUG);
    assert_eq!(m["candor_version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(m["filed_at"], "2026-12-31T00:00:00Z");
    assert_eq!(m["deal_file"], "inputs/tollgate-depot.yaml");
    assert_eq!(m["signoff"]["decision"], "pending");
    assert_eq!(m["signoff"]["approved"], false);
    let files = m["files"].as_array().expect("files");
    let mut listed: Vec<&str> = files.iter().map(|f| f["path"].as_str().unwrap()).collect();
    listed.sort();
    assert_eq!(
        listed,
        vec![
            "analysis.json",
            "inputs/tollgate-depot-flows.csv",
            "inputs/tollgate-depot.yaml",
            "tollgate-depot.pdf",
        ]
    );
    for f in files {
        let path = v1.join(f["path"].as_str().unwrap());
        assert_eq!(f["sha256"].as_str().unwrap(), sha256sum(&path), "{f}");
        assert_eq!(
            f["bytes"].as_u64().unwrap(),
            std::fs::metadata(&path).unwrap().len()
        );
    }
    // The manifest's own hash, in sha256sum's format, checks with sha256sum itself.
    let check = Command::new("sha256sum")
        .args(["--check", "--status", "manifest.sha256"])
        .current_dir(&v1)
        .status()
        .expect("sha256sum runs");
    assert!(check.success());
    // The filed analysis is its format and candor's version, then the JSON contract
    // `candor rates --json` prints.
    let rates = candor(&["rates", "--json", s(&deal)]);
    let rates: Value = serde_json::from_slice(&rates.stdout).expect("rates JSON");
    let mut filed: Value =
        serde_json::from_slice(&std::fs::read(v1.join("analysis.json")).unwrap()).unwrap();
    let header = filed.as_object_mut().expect("an object");
    let keys: Vec<&String> = header.keys().take(2).collect();
    assert_eq!(keys, ["analysis_format", "candor_version"]);
    assert_eq!(header.shift_remove("analysis_format"), Some(Value::from(1)));
    assert_eq!(
        header.shift_remove("candor_version"),
        Some(Value::from(env!("CARGO_PKG_VERSION")))
    );
    assert_eq!(filed, rates);
    // Nothing but the versions is left: no temporary folder, no lock.
    assert_eq!(versions(&archive.join(DEPOT_SLUG)), vec!["001"]);
}

#[test]
fn refiling_unchanged_inputs_files_nothing_and_a_change_files_002() {
    let (dir, deal) = depot_folder();
    let archive = dir.path().join("archive");
    assert_eq!(file_memo(&deal, &archive).status.code(), Some(0));
    let v1 = archive.join(DEPOT_SLUG).join("001");
    let before = std::fs::read(v1.join("manifest.json")).unwrap();

    let again = file_memo(&deal, &archive);
    assert_eq!(again.status.code(), Some(0));
    assert!(text(&again.stderr).contains("unchanged: version 001"));
    assert_eq!(versions(&archive.join(DEPOT_SLUG)), vec!["001"]);

    edit(&deal, "hurdle_rate: 8.25%", "hurdle_rate: 9%");
    let changed = file_memo(&deal, &archive);
    assert_eq!(changed.status.code(), Some(0), "{}", text(&changed.stderr));
    let v2 = archive.join(DEPOT_SLUG).join("002");
    assert_eq!(text(&changed.stdout).trim(), s(&v2));
    assert_eq!(versions(&archive.join(DEPOT_SLUG)), vec!["001", "002"]);
    assert_eq!(std::fs::read(v1.join("manifest.json")).unwrap(), before);

    let ok = candor(&["verify", s(&archive)]);
    assert_eq!(ok.status.code(), Some(0), "{}", text(&ok.stdout));
    assert_eq!(last_line(&ok.stdout), "ok: 2 versions verified");
    // A deal's folder and a single version verify too.
    let ok = candor(&["verify", s(&archive.join(DEPOT_SLUG))]);
    assert_eq!(last_line(&ok.stdout), "ok: 2 versions verified");
    let ok = candor(&["verify", s(&v2)]);
    assert_eq!(last_line(&ok.stdout), "ok: 1 version verified");
}

#[test]
fn approved_signoff_is_recorded_in_the_manifest() {
    let dir = tempfile::tempdir().unwrap();
    let deal = dir.path().join("quarry.yaml");
    std::fs::copy(
        root().join("tests/fixtures/v1/corrie-vale-quarry.yaml"),
        &deal,
    )
    .unwrap();
    edit(&deal, "decision: deferred", "decision: approved");
    let archive = dir.path().join("archive");
    let out = file_memo(&deal, &archive);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let m = manifest(&archive.join("quarry").join("001"));
    assert_eq!(
        m["signoff"],
        serde_json::json!({
            "decision": "approved",
            "approved": true,
            "prepared_by": "Callum Brodie, analyst",
            "reviewed_by": "Priya Nandakumar, investment director",
            "date": "2026-11-20",
        })
    );
}

/// Files the depot once, changes one byte of one filed file and returns verify's output.
fn verify_after(damage: impl Fn(&Path)) -> (Option<i32>, String, PathBuf, tempfile::TempDir) {
    let (dir, deal) = depot_folder();
    let archive = dir.path().join("archive");
    assert_eq!(file_memo(&deal, &archive).status.code(), Some(0));
    let v1 = archive.join(DEPOT_SLUG).join("001");
    damage(&v1);
    let out = candor(&["verify", s(&archive)]);
    (out.status.code(), problems(&out.stdout), v1, dir)
}

/// The lines of `verify`'s output that report problems: without the sign-off of each
/// version and the head of each deal's chain.
fn problems(stdout: &[u8]) -> String {
    text(stdout)
        .lines()
        .filter(|l| !l.starts_with("sign-off of ") && !l.starts_with("head of "))
        .map(|l| format!("{l}\n"))
        .collect()
}

fn writable(path: &Path) {
    let mut p = std::fs::metadata(path).unwrap().permissions();
    #[allow(clippy::permissions_set_readonly_false)]
    p.set_readonly(false);
    std::fs::set_permissions(path, p).unwrap();
}

fn flip_byte(path: &Path, at: usize) {
    writable(path);
    let mut b = std::fs::read(path).unwrap();
    b[at] ^= 0x01;
    std::fs::write(path, b).unwrap();
}

fn replace_in(path: &Path, from: &str, to: &str) {
    writable(path);
    edit(path, from, to);
}

#[test]
fn verify_names_a_changed_pdf() {
    let pdf = format!("{DEPOT_SLUG}.pdf");
    let (code, out, v1, _dir) = verify_after(|v| {
        let p = v.join(&pdf);
        let at = std::fs::metadata(&p).unwrap().len() as usize / 2;
        flip_byte(&p, at);
    });
    assert_eq!(code, Some(1));
    let first = format!("{}/{pdf} changed: its SHA-256 is ", v1.display());
    assert!(out.contains(&first), "{out}");
    assert!(
        out.contains("differs from the PDF rebuilt from the filed inputs"),
        "{out}"
    );
    assert!(!out.contains("analysis.json"), "{out}");
}

#[test]
fn verify_names_a_changed_deal_file() {
    // A change in a comment: the figures stay, the bytes (and the attached copy) do not.
    let (code, out, v1, _dir) = verify_after(|v| {
        replace_in(
            &v.join("inputs/tollgate-depot.yaml"),
            "path relative to this file",
            "path relative to this fild",
        )
    });
    assert_eq!(code, Some(1));
    let expected = format!(
        "{}/inputs/tollgate-depot.yaml changed: its SHA-256 is ",
        v1.display()
    );
    assert!(out.contains(&expected), "{out}");
    assert!(!out.contains("analysis.json"), "{out}");
}

#[test]
fn verify_names_the_figure_that_differs() {
    let (code, out, v1, _dir) = verify_after(|v| {
        let p = v.join("analysis.json");
        let t = std::fs::read_to_string(&p).unwrap();
        let v: Value = serde_json::from_str(&t).unwrap();
        let npv = v["scenarios"][0]["npv_at_hurdle"]
            .as_str()
            .unwrap()
            .to_string();
        let mut other = npv.clone();
        let last = other.pop().unwrap();
        other.push(if last == '9' { '8' } else { '9' });
        replace_in(
            &p,
            &format!("\"npv_at_hurdle\": \"{npv}\""),
            &format!("\"npv_at_hurdle\": \"{other}\""),
        );
    });
    assert_eq!(code, Some(1));
    let hash = format!("{}/analysis.json changed: its SHA-256 is ", v1.display());
    assert!(out.contains(&hash), "{out}");
    assert!(
        out.contains("analysis.json: scenarios[0].npv_at_hurdle is \""),
        "{out}"
    );
    assert_eq!(out.lines().count(), 2, "{out}");
}

#[test]
fn verify_names_a_changed_manifest() {
    let (code, out, v1, _dir) = verify_after(|v| {
        replace_in(
            &v.join("manifest.json"),
            "\"filed_at\": \"2026",
            "\"filed_at\": \"2025",
        )
    });
    assert_eq!(code, Some(1));
    assert_eq!(out.lines().count(), 1, "only the manifest changed: {out}");
    let expected = format!("{}/manifest.json changed: its SHA-256 is ", v1.display());
    assert!(out.starts_with(&expected), "{out}");
}

#[test]
fn verify_reports_an_added_file() {
    let (code, out, v1, _dir) = verify_after(|v| {
        std::fs::write(v.join("inputs/extra.csv"), "period,amount\n").unwrap();
    });
    assert_eq!(code, Some(1));
    assert!(
        out.contains(&format!(
            "{}/inputs/extra.csv is not listed in the manifest",
            v1.display()
        )),
        "{out}"
    );
}

#[test]
fn concurrent_filings_take_distinct_versions() {
    let (dir, _deal) = depot_folder();
    let archive = dir.path().join("archive");
    // Four variants of one deal (one slug) filed at the same moment.
    let hurdles = ["8.25%", "9%", "10%", "11%"];
    let mut children = Vec::new();
    for (i, h) in hurdles.iter().enumerate() {
        let variant_dir = dir.path().join(format!("v{i}"));
        std::fs::create_dir(&variant_dir).unwrap();
        for name in ["tollgate-depot.yaml", "tollgate-depot-flows.csv"] {
            std::fs::copy(dir.path().join(name), variant_dir.join(name)).unwrap();
        }
        let variant = variant_dir.join("tollgate-depot.yaml");
        edit(&variant, "hurdle_rate: 8.25%", &format!("hurdle_rate: {h}"));
        children.push(
            command()
                .args(["memo", s(&variant), "--archive", s(&archive)])
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .expect("spawn candor"),
        );
    }
    let mut printed: Vec<String> = children
        .into_iter()
        .map(|c| {
            let out = c.wait_with_output().unwrap();
            assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
            text(&out.stdout).trim().to_string()
        })
        .collect();
    printed.sort();
    let deal_dir = archive.join(DEPOT_SLUG);
    let expected: Vec<String> = ["001", "002", "003", "004"]
        .iter()
        .map(|v| deal_dir.join(v).display().to_string())
        .collect();
    assert_eq!(printed, expected);
    assert_eq!(versions(&deal_dir), vec!["001", "002", "003", "004"]);
    let ok = candor(&["verify", s(&archive)]);
    assert_eq!(last_line(&ok.stdout), "ok: 4 versions verified");
    // Each version holds one of the four hurdles, each once.
    let mut filed: Vec<String> = (1..=4)
        .map(|n| {
            let t = std::fs::read_to_string(
                deal_dir
                    .join(format!("{n:03}"))
                    .join("inputs/tollgate-depot.yaml"),
            )
            .unwrap();
            t.lines()
                .find(|l| l.starts_with("hurdle_rate:"))
                .unwrap()
                .to_string()
        })
        .collect();
    filed.sort();
    filed.dedup();
    assert_eq!(filed.len(), 4);
}

#[test]
fn an_unwritable_archive_fails_cleanly_and_leaves_nothing() {
    let (dir, deal) = depot_folder();
    // A path through a regular file cannot be created, whoever runs the test.
    let blocker = dir.path().join("not-a-folder");
    std::fs::write(&blocker, "x").unwrap();
    let out = file_memo(&deal, &blocker.join("archive"));
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("cannot create the archive folder"),
        "{}",
        text(&out.stderr)
    );
    assert!(text(&out.stdout).is_empty());

    // A read-only archive folder. Root ignores permissions, so as root the filing runs
    // as the unprivileged user 65534 through util-linux `setpriv` when it is there.
    let mut run = if !is_root() {
        command()
    } else if setpriv_available() {
        command_as_nobody()
    } else {
        eprintln!("skipped the read-only check: running as root without setpriv");
        return;
    };
    use std::os::unix::fs::PermissionsExt as _;
    // The other user must reach the deal; the archive stays read-only to everyone.
    std::fs::set_permissions(dir.path(), std::fs::Permissions::from_mode(0o755)).unwrap();
    let archive = dir.path().join("archive");
    std::fs::create_dir_all(archive.join(DEPOT_SLUG)).unwrap();
    for p in [archive.join(DEPOT_SLUG), archive.clone()] {
        std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o555)).unwrap();
    }
    let out = run
        .args(["memo", s(&deal), "--archive", s(&archive)])
        .output()
        .expect("candor runs");
    for p in [archive.clone(), archive.join(DEPOT_SLUG)] {
        std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o755)).unwrap();
    }
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("cannot write in the archive folder: permission denied"),
        "{}",
        text(&out.stderr)
    );
    assert!(versions(&archive.join(DEPOT_SLUG)).is_empty());
}

fn quarry_pair(dir: &Path) -> (PathBuf, PathBuf) {
    let old = dir.join("old").join("quarry.yaml");
    let new = dir.join("new").join("quarry.yaml");
    for p in [&old, &new] {
        std::fs::create_dir_all(p.parent().unwrap()).unwrap();
        std::fs::copy(root().join("tests/fixtures/v1/corrie-vale-quarry.yaml"), p).unwrap();
    }
    // A larger closure cost and a higher hurdle.
    edit(&new, "-7000000]", "-9000000]");
    edit(&new, "hurdle_rate: \"9%\"", "hurdle_rate: \"10%\"");
    (old, new)
}

/// The quarry's IRRs before the change, 5.60% and 15.65% a year, and none after it:
/// computed independently with numpy.roots on the polynomial in v = 1/(1+r) with
/// coefficients −3.6, 1.25 (eight times), −7 (resp. −9) million: 0.056013 and
/// 0.156463; for −9 million no real positive v.
#[test]
fn diff_names_the_flow_the_hurdle_and_the_lost_roots() {
    let dir = tempfile::tempdir().unwrap();
    let (old, new) = quarry_pair(dir.path());
    let out = candor(&["diff", s(&old), s(&new)]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let report = text(&out.stdout);
    for line in [
        "  hurdle_rate: 9% → 10%",
        "  flow at 2036-04-01, base case: \u{2212}7,000,000.00 → \u{2212}9,000,000.00",
        "  base case: IRR 5.60% disappeared",
        "  base case: IRR 15.65% disappeared",
        "  base case: IRR count: 2 → 0",
        "  base case: NPV rule at hurdle: accept → reject",
        "  base case: caution multiple-irr no longer raised",
    ] {
        assert!(report.lines().any(|l| l == line), "`{line}` in\n{report}");
    }

    let json = candor(&["diff", "--json", s(&old), s(&new)]);
    let d: Value = serde_json::from_slice(&json.stdout).expect("diff JSON");
    assert_eq!(d["inputs"][0]["field"], "hurdle_rate");
    assert_eq!(d["flows"][0]["scenario"], "base");
    assert_eq!(d["flows"][0]["old"], "-7000000");
    assert_eq!(d["flows"][0]["new"], "-9000000");
    let gone = d["results"][0]["irr_disappeared"].as_array().unwrap();
    let rates: Vec<f64> = gone
        .iter()
        .map(|r| r["annual_rate"].as_f64().unwrap())
        .collect();
    assert_eq!(rates.len(), 2);
    assert!((rates[0] - 0.056013).abs() < 1e-6, "{rates:?}");
    assert!((rates[1] - 0.156463).abs() < 1e-6, "{rates:?}");

    // The same comparison between two filed versions.
    let archive = dir.path().join("archive");
    assert_eq!(file_memo(&old, &archive).status.code(), Some(0));
    assert_eq!(file_memo(&new, &archive).status.code(), Some(0));
    let deal_dir = archive.join("quarry");
    let filed = candor(&["diff", s(&deal_dir.join("001")), s(&deal_dir.join("002"))]);
    assert_eq!(text(&filed.stdout), report);
}

#[test]
fn diff_of_a_deal_with_itself_is_empty() {
    let deal = examples().join("marlow-fen-solar.yaml");
    let out = candor(&["diff", s(&deal), s(&deal)]);
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(
        text(&out.stdout),
        "Inputs\n  no changes\nResults\n  no changes\n"
    );
}

#[test]
fn a_house_style_is_filed_and_the_pdf_rebuilt_with_it() {
    let dir = tempfile::tempdir().unwrap();
    let house = dir.path().join("house");
    std::fs::create_dir(&house).unwrap();
    let style = std::fs::read_to_string(root().join("templates/style.typ.j2")).unwrap();
    assert!(style.contains("paper: \"a4\""));
    std::fs::write(
        house.join("style.typ.j2"),
        style.replace("paper: \"a4\"", "paper: \"us-letter\""),
    )
    .unwrap();
    let deal = dir.path().join("quarry.yaml");
    std::fs::copy(examples().join("corrie-vale-quarry.yaml"), &deal).unwrap();
    let archive = dir.path().join("archive");
    let out = candor(&[
        "memo",
        s(&deal),
        "--templates",
        s(&house),
        "--archive",
        s(&archive),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v1 = archive.join("quarry").join("001");
    assert_eq!(
        std::fs::read(v1.join("templates/style.typ.j2")).unwrap(),
        std::fs::read(house.join("style.typ.j2")).unwrap()
    );
    let ok = candor(&["verify", s(&v1)]);
    assert_eq!(last_line(&ok.stdout), "ok: 1 version verified");
    // The built-in style is a different input: a new version, not "unchanged".
    let plain = file_memo(&deal, &archive);
    assert!(text(&plain.stdout).trim().ends_with("002"));
}

/// The words of a PDF as a reader independent of candor's typesetter reads them
/// (`support::pdf`), so that wrapped lines read whole.
fn pdf_words(pdf: &Path) -> String {
    Pdf::open(pdf).text()
}

/// A second version's memo says what changed since the first, from the same
/// comparison `candor diff` prints (roots 5.60% and 15.65% before, none after: see
/// `diff_names_the_flow_the_hurdle_and_the_lost_roots`), and `verify` rebuilds both
/// PDFs byte for byte.
#[test]
fn a_new_version_memo_names_the_changes_since_the_previous() {
    let dir = tempfile::tempdir().unwrap();
    let (old, new) = quarry_pair(dir.path());
    let archive = dir.path().join("archive");
    let first = file_memo(&old, &archive);
    assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
    let second = file_memo(&new, &archive);
    assert_eq!(second.status.code(), Some(0), "{}", text(&second.stderr));
    let deal_dir = archive.join("quarry");
    let v1 = pdf_words(&deal_dir.join("001").join("quarry.pdf"));
    let v2 = pdf_words(&deal_dir.join("002").join("quarry.pdf"));

    assert!(!v1.contains("Changes since version"), "{v1}");
    for phrase in [
        "Changes since version 001",
        "Hurdle rate changed from 9% to 10%.",
        "Base case: the flow at 2036-04-01 changed from \u{2212}7,000,000.00 to \
         \u{2212}9,000,000.00.",
        "Base case: the IRR of 5.60% disappeared.",
        "Base case: the IRR of 15.65% disappeared.",
        "Base case: NPV rule at hurdle changed from accept to reject.",
        // The title block names the version the memo is filed as.
        "version 002 in the archive",
    ] {
        assert!(v2.contains(phrase), "`{phrase}` in\n{v2}");
    }
    assert!(v1.contains("version 001 in the archive"), "{v1}");
    // The section follows the decision page's figures and risks and comes before the
    // scenarios' detail.
    let figures = v2.find("The figures").expect("figures heading");
    let risks = v2.find("Risks").expect("risks heading");
    let changes = v2
        .find("Changes since version 001")
        .expect("changes heading");
    let detail = v2.find("Cautions for Base case").expect("detail");
    assert!(figures < risks && risks < changes && changes < detail);

    let ok = candor(&["verify", s(&archive)]);
    assert_eq!(
        last_line(&ok.stdout),
        "ok: 2 versions verified",
        "{}",
        text(&ok.stderr)
    );
    // Verifying the second version alone still finds the first to compare with.
    let ok = candor(&["verify", s(&deal_dir.join("002"))]);
    assert_eq!(last_line(&ok.stdout), "ok: 1 version verified");

    // Refiling the new inputs files nothing, and a copy asked for with `--output`
    // equals the filed memo, section included.
    let copy = dir.path().join("copy.pdf");
    let again = candor(&[
        "memo",
        s(&new),
        "--archive",
        s(&archive),
        "--output",
        s(&copy),
    ]);
    assert_eq!(again.status.code(), Some(0), "{}", text(&again.stderr));
    assert!(text(&again.stderr).contains("unchanged: version 002"));
    assert_eq!(
        std::fs::read(&copy).unwrap(),
        std::fs::read(deal_dir.join("002").join("quarry.pdf")).unwrap()
    );
}
