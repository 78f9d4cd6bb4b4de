//! `candor new`: the starter files load with `candor check` (the validator is the
//! judge of the format), names survive YAML quoting, and nothing is ever overwritten.

use crate::support::candor_in as candor;
use std::path::Path;
use std::process::Command;

/// `candor check --json` on one file: (exit code, the deal's name as read back).
fn check(dir: &Path, file: &str) -> (Option<i32>, serde_json::Value) {
    let out = candor(dir, &["check", "--json", file]);
    let reports: serde_json::Value =
        serde_json::from_slice(&out.stdout).expect("check --json prints JSON");
    (out.status.code(), reports[0].clone())
}

#[test]
fn periodic_starter_is_named_after_the_deal_and_passes_check() {
    let dir = tempfile::tempdir().unwrap();
    let out = candor(dir.path(), &["new", "Harbour Row offices"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    assert!(dir.path().join("harbour-row-offices.yaml").is_file());
    let (code, report) = check(dir.path(), "harbour-row-offices.yaml");
    assert_eq!(code, Some(0), "{report}");
    assert_eq!(report["deal"], "Harbour Row offices");
    // Periodic starter: 11 yearly flows, base case + 5 scenarios.
    assert_eq!(report["flows"], 11);
    assert_eq!(report["scenarios"].as_array().map(Vec::len), Some(6));
    let text = std::fs::read_to_string(dir.path().join("harbour-row-offices.yaml")).unwrap();
    assert!(text.contains("every: year"));
    assert!(!text.contains("day_count"));
    // It teaches format version 2: lines, a generated stream, a terminal value, and
    // labelled scenarios that change one assumption each.
    for taught in [
        "candor: 2",
        "lines:",
        "stream:",
        "terminal:",
        "label:",
        "factors:",
        "shift:",
        "change:",
        "extend_horizon:",
        "units:",
        "basis:",
    ] {
        assert!(text.contains(taught), "the starter lacks {taught}");
    }
    // The starter also goes through the whole analysis.
    let rates = candor(dir.path(), &["rates", "harbour-row-offices.yaml"]);
    assert_eq!(rates.status.code(), Some(0));
}

#[test]
fn dated_starter_passes_check_and_rates() {
    let dir = tempfile::tempdir().unwrap();
    let out = candor(dir.path(), &["new", "--dated", "Dock Lane depot"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let (code, report) = check(dir.path(), "dock-lane-depot.yaml");
    assert_eq!(code, Some(0), "{report}");
    assert_eq!(report["deal"], "Dock Lane depot");
    let text = std::fs::read_to_string(dir.path().join("dock-lane-depot.yaml")).unwrap();
    assert!(text.contains("day_count: act/365f"));
    assert!(!text.contains("timing:\n  every"));
    for taught in ["lines:", "dated:", "stream:", "label:", "shift:", "drop:"] {
        assert!(text.contains(taught), "the dated starter lacks {taught}");
    }
    let rates = candor(dir.path(), &["rates", "--json", "dock-lane-depot.yaml"]);
    assert_eq!(rates.status.code(), Some(0));
}

#[test]
fn awkward_names_read_back_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let name = "Quay 7: \"phase 2\" # east, {a, b} 'x' \\ café";
    let out = candor(dir.path(), &["new", name, "-o", "quay.yaml"]);
    assert_eq!(out.status.code(), Some(0), "{out:?}");
    let (code, report) = check(dir.path(), "quay.yaml");
    assert_eq!(code, Some(0), "{report}");
    assert_eq!(report["deal"], name);
}

#[test]
fn never_overwrites_an_existing_file() {
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("mill-yard.yaml");
    std::fs::write(&target, "keep me\n").unwrap();
    let out = candor(dir.path(), &["new", "Mill Yard"]);
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("mill-yard.yaml already exists"), "{err}");
    assert_eq!(std::fs::read_to_string(&target).unwrap(), "keep me\n");
    // Same with an explicit output, and no temporary file is left behind.
    let out = candor(
        dir.path(),
        &["new", "--dated", "Other", "-o", "mill-yard.yaml"],
    );
    assert_eq!(out.status.code(), Some(1));
    assert_eq!(std::fs::read_to_string(&target).unwrap(), "keep me\n");
    let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(left.len(), 1);
}

#[test]
fn a_name_without_letters_needs_an_output_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = candor(dir.path(), &["new", "—"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("-o FILE.yaml"));
    let out = candor(dir.path(), &["new", "   "]);
    assert_eq!(out.status.code(), Some(1));
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn a_missing_folder_is_an_input_error() {
    let dir = tempfile::tempdir().unwrap();
    let out = candor(
        dir.path(),
        &["new", "Ash Court", "-o", "no/such/folder/a.yaml"],
    );
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("folder does not exist"));
}

#[test]
fn same_name_gives_the_same_bytes() {
    let dir = tempfile::tempdir().unwrap();
    candor(dir.path(), &["new", "Ash Court", "-o", "a.yaml"]);
    candor(dir.path(), &["new", "Ash Court", "-o", "b.yaml"]);
    let a = std::fs::read_to_string(dir.path().join("a.yaml")).unwrap();
    let b = std::fs::read_to_string(dir.path().join("b.yaml")).unwrap();
    assert_eq!(a.replace("a.yaml", "b.yaml"), b);
}

/// A starter file gets the mode any new document gets, 0666 less the umask (common
/// practice: what `touch` or an editor creates), not a temporary file's private 0600.
#[cfg(unix)]
#[test]
fn starter_files_have_the_usual_mode() {
    use std::os::unix::fs::PermissionsExt as _;
    let dir = tempfile::tempdir().unwrap();
    for (umask, file, mode) in [("022", "a.yaml", 0o644), ("002", "b.yaml", 0o664)] {
        let out = Command::new("sh")
            .arg("-c")
            .arg(format!("umask {umask} && exec \"$0\" new Plain -o {file}",))
            .arg(env!("CARGO_BIN_EXE_candor"))
            .current_dir(dir.path())
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "{out:?}");
        let meta = std::fs::metadata(dir.path().join(file)).unwrap();
        assert_eq!(meta.permissions().mode() & 0o777, mode, "umask {umask}");
    }
}
