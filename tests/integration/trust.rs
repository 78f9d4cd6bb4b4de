//! An archive that holds for years: every way of tampering with a filed version that
//! `verify` must catch (a rewritten sign-off, a changed recorded version, paths out of
//! the version, links, pipes and devices, deleted, swapped and inserted versions),
//! verification by a later release (other wording and decimals, through the test-only
//! switch `CANDOR_TEST_NEXT_RELEASE`), older archives, signing and its checks, the CSV
//! files attached and hashed, one folder per deal in any script, renames, and the
//! ledger. OpenSSH's own `ssh-keygen` checks candor's signatures in `sshsig`.

use crate::support::{candor, command, examples, last_line, names, root, s, text};
use candor::memo::sha256_hex;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

/// A small deal of our own invention, quick to typeset.
const DEAL: &str = "\
candor: 1
deal:
  name: Saltmarsh ferry pier
  currency: EUR
  as_of: 2027-03-01
hurdle_rate: 7%
cash_flows:
  every: year
  amounts: [-500000, 120000, 140000, 160000, 180000]
signoff:
  reviewed_by: Ana Reviewer
  decision: approved
";

/// The deal's folder in an archive: named after its file, `pier.yaml`.
const FOLDER: &str = "pier";

fn file_deal(deal: &Path, archive: &Path) -> Output {
    candor(&["memo", s(deal), "--archive", s(archive)])
}

/// A folder with the pier deal file and an archive holding `versions` versions of it
/// (each filed after raising the last inflow by 1,000).
pub(crate) fn pier_archive(versions: usize) -> (tempfile::TempDir, PathBuf, PathBuf) {
    let dir = tempfile::tempdir().expect("temp dir");
    let deal = dir.path().join("pier.yaml");
    let archive = dir.path().join("archive");
    for i in 0..versions {
        let last = 180000 + 1000 * i;
        std::fs::write(&deal, DEAL.replace("180000", &last.to_string())).unwrap();
        let out = file_deal(&deal, &archive);
        assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    }
    (dir, deal, archive)
}

fn verify(path: &Path, extra: &[&str]) -> Output {
    let mut args = vec!["verify", s(path)];
    args.extend_from_slice(extra);
    candor(&args)
}

/// `verify`'s problem lines (without the sign-off and head lines).
fn problems(out: &Output) -> Vec<String> {
    text(&out.stdout)
        .lines()
        .filter(|l| !l.starts_with("sign-off of ") && !l.starts_with("head of "))
        .map(str::to_string)
        .collect()
}

fn has(lines: &[String], needle: &str) -> bool {
    lines.iter().any(|l| l.contains(needle))
}

/// Asserts that one of `verify`'s problem lines holds `needle`.
fn assert_problem(out: &Output, needle: &str) {
    assert!(
        has(&problems(out), needle),
        "`{needle}` not among the problems:\n{}",
        text(&out.stdout)
    );
}

fn writable(path: &Path) {
    use std::os::unix::fs::PermissionsExt as _;
    let mode = if path.is_dir() { 0o755 } else { 0o644 };
    std::fs::set_permissions(path, std::fs::Permissions::from_mode(mode)).unwrap();
}

/// Rewrites a manifest with `change` and its hash file as `sha256sum` would, the way
/// someone covering their tracks would.
fn rewrite_manifest(version: &Path, change: impl Fn(&mut Value)) {
    let path = version.join("manifest.json");
    let mut m: Value = serde_json::from_slice(&std::fs::read(&path).unwrap()).unwrap();
    change(&mut m);
    let mut bytes = serde_json::to_vec_pretty(&m).unwrap();
    bytes.push(b'\n');
    writable(&path);
    std::fs::write(&path, &bytes).unwrap();
    let hash = version.join("manifest.sha256");
    writable(&hash);
    std::fs::write(&hash, format!("{}  manifest.json\n", sha256_hex(&bytes))).unwrap();
}

fn head_of(out: &Output) -> String {
    text(&out.stdout)
        .lines()
        .find_map(|l| l.strip_prefix("head of ").map(str::to_string))
        .expect("a head line")
}

#[test]
fn an_intact_archive_prints_each_sign_off_and_the_chain_head() {
    let (_dir, _deal, archive) = pier_archive(2);
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
    let deal_dir = archive.join(FOLDER);
    let v2 = std::fs::read(deal_dir.join("002/manifest.json")).unwrap();
    let v1 = std::fs::read(deal_dir.join("001/manifest.json")).unwrap();
    let m2: Value = serde_json::from_slice(&v2).unwrap();
    // Each manifest records the hash of the one before; the first records none.
    assert_eq!(m2["format"], 2);
    assert_eq!(m2["previous_manifest"], sha256_hex(&v1));
    let m1: Value = serde_json::from_slice(&v1).unwrap();
    assert_eq!(m1["previous_manifest"], Value::Null);
    assert_eq!(m1["currency"], "EUR");
    assert_eq!(
        text(&out.stdout),
        format!(
            "sign-off of {d}/001: approved, not signed\n\
             sign-off of {d}/002: approved, not signed\n\
             head of {d}: version 002, manifest SHA-256 {h}\n\
             ok: 2 versions verified\n",
            d = deal_dir.display(),
            h = sha256_hex(&v2)
        )
    );
}

#[test]
fn a_later_release_with_other_wording_and_decimals_still_verifies() {
    // The quarry has cautions (two IRRs), so its wording is compared.
    let dir = tempfile::tempdir().unwrap();
    let deal = dir.path().join("quarry.yaml");
    std::fs::copy(examples().join("corrie-vale-quarry.yaml"), &deal).unwrap();
    let archive = dir.path().join("archive");
    assert_eq!(file_deal(&deal, &archive).status.code(), Some(0));
    let later = command()
        .args(["verify", s(&archive)])
        .env(candor::release::NEXT_RELEASE_HOOK, "1")
        .output()
        .unwrap();
    let err = text(&later.stderr);
    assert_eq!(later.status.code(), Some(0), "{}{err}", text(&later.stdout));
    assert_eq!(last_line(&later.stdout), "ok: 1 version verified");
    // The changed wording is a note naming what differs, not a problem.
    assert!(
        err.contains("the wording or layout of")
            && err.contains("cautions[0].text")
            && err.contains("every figure agrees"),
        "{err}"
    );
    // The PDF cannot be rebuilt by another release: said, not skipped silently.
    assert!(
        err.contains(&format!(
            "was filed by candor {v}, and candor {v}+next lays the memo out differently",
            v = env!("CARGO_PKG_VERSION")
        )),
        "{err}"
    );
    // The same release, asked the same, is silent.
    let now = verify(&archive, &[]);
    assert_eq!(text(&now.stderr), "");
    // The later release's analysis does differ in words and decimals.
    let rates = command()
        .args(["rates", "--json", s(&deal)])
        .env(candor::release::NEXT_RELEASE_HOOK, "1")
        .output()
        .unwrap();
    let later_json: Value = serde_json::from_slice(&rates.stdout).unwrap();
    let money = later_json["scenarios"][0]["money_multiple"]
        .as_str()
        .unwrap();
    assert_eq!(money.split('.').nth(1).map(str::len), Some(6), "{money}");
}

#[test]
fn a_changed_figure_is_still_a_problem_for_a_later_release() {
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    let analysis = v1.join("analysis.json");
    let t = std::fs::read_to_string(&analysis).unwrap();
    let m: Value = serde_json::from_str(&t).unwrap();
    let npv = m["scenarios"][0]["npv_at_hurdle"].as_str().unwrap();
    writable(&analysis);
    std::fs::write(&analysis, t.replace(npv, "1.00")).unwrap();
    let out = command()
        .args(["verify", s(&archive)])
        .env(candor::release::NEXT_RELEASE_HOOK, "1")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert_problem(
        &out,
        "analysis.json: scenarios[0].npv_at_hurdle is \"1.00\" in the file",
    );
}

#[test]
fn an_archive_filed_before_format_2_still_verifies() {
    // A version as the first releases filed it: manifest format 1 without a chain link
    // or currency, an analysis without its header.
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    let analysis = v1.join("analysis.json");
    let mut a: Value = serde_json::from_slice(&std::fs::read(&analysis).unwrap()).unwrap();
    let map = a.as_object_mut().unwrap();
    map.shift_remove("analysis_format");
    map.shift_remove("candor_version");
    let bytes = serde_json::to_string_pretty(&a).unwrap() + "\n";
    writable(&analysis);
    std::fs::write(&analysis, &bytes).unwrap();
    rewrite_manifest(&v1, |m| {
        let o = m.as_object_mut().unwrap();
        o.insert("format".into(), 1.into());
        o.shift_remove("previous_manifest");
        o.shift_remove("currency");
        for f in o["files"].as_array_mut().unwrap() {
            if f["path"] == "analysis.json" {
                f["sha256"] = sha256_hex(bytes.as_bytes()).into();
                f["bytes"] = bytes.len().into();
            }
        }
    });
    let out = verify(&archive, &[]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert!(
        text(&out.stderr).contains("filed before versions were chained (manifest format 1)"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn a_sign_off_rewritten_to_approved_with_a_regenerated_hash_is_caught() {
    let dir = tempfile::tempdir().unwrap();
    let deal = dir.path().join("pier.yaml");
    std::fs::write(
        &deal,
        DEAL.replace("decision: approved", "decision: pending"),
    )
    .unwrap();
    let archive = dir.path().join("archive");
    assert_eq!(file_deal(&deal, &archive).status.code(), Some(0));
    let v1 = archive.join(FOLDER).join("001");
    rewrite_manifest(&v1, |m| {
        m["signoff"]["decision"] = "approved".into();
        m["signoff"]["approved"] = true.into();
    });
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    assert_eq!(
        p,
        [format!(
            "{}/manifest.json records the sign-off as approved, reviewed by Ana Reviewer, but the \
             filed deal file says pending, reviewed by Ana Reviewer",
            v1.display()
        )],
        "{}",
        text(&out.stdout)
    );
}

#[test]
fn a_changed_recorded_version_is_caught_and_nothing_is_skipped() {
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    rewrite_manifest(&v1, |m| m["candor_version"] = "0.0.1".into());
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    assert!(
        has(
            &p,
            &format!(
                "manifest.json records candor 0.0.1, but analysis.json was written by candor {}",
                env!("CARGO_PKG_VERSION")
            )
        ),
        "{p:?}"
    );
    // The PDF was still rebuilt (and equals the filed one), so no note says otherwise.
    assert!(
        !text(&out.stderr).contains("not rebuilt"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn manifest_paths_outside_the_version_are_refused_not_followed() {
    let (_dir, _deal, archive) = pier_archive(2);
    let v2 = archive.join(FOLDER).join("002");
    for (field, target) in [
        ("deal_file", "/etc/passwd"),
        ("deal_file", "../001/inputs/pier.yaml"),
        ("memo", "../001/pier.pdf"),
    ] {
        rewrite_manifest(&v2, |m| m[field] = target.into());
        let out = verify(&v2, &[]);
        assert_eq!(out.status.code(), Some(1), "{field} = {target}");
        let p = problems(&out);
        let what = if field == "memo" { "memo" } else { "deal file" };
        assert!(
            has(
                &p,
                &format!(
                    "its {what} `{target}` is not one of the version's files listed as the {}",
                    if field == "memo" { "memo" } else { "deal" }
                )
            ),
            "{p:?}"
        );
        // Nothing was read from there: no figure of /etc/passwd, no "no longer loads".
        assert!(!has(&p, "no longer loads"), "{p:?}");
        if field == "deal_file" {
            // `diff` of filed versions does not follow it either.
            let v1 = archive.join(FOLDER).join("001");
            let diff = candor(&["diff", s(&v1), s(&v2)]);
            assert_eq!(diff.status.code(), Some(1));
            assert!(
                text(&diff.stderr).contains(&format!(
                    "names the deal file `{target}`, which is not a file of the version listed \
                     as its deal"
                )),
                "{}",
                text(&diff.stderr)
            );
        }
    }
    // A listed path that leaves the folder is refused as well.
    rewrite_manifest(&v2, |m| {
        m["deal_file"] = "inputs/pier.yaml".into();
        m["memo"] = "pier.pdf".into();
        m["files"][0]["path"] = "../001/analysis.json".into();
    });
    let out = verify(&v2, &[]);
    assert_problem(
        &out,
        "lists `../001/analysis.json`, which is not a plain path inside the version",
    );
}

#[test]
fn a_version_replaced_by_a_link_to_a_tampered_copy_is_caught() {
    let (dir, _deal, archive) = pier_archive(2);
    let deal_dir = archive.join(FOLDER);
    let copy = dir.path().join("copy");
    let status = Command::new("cp")
        .args(["-a", s(&deal_dir.join("002")), s(&copy)])
        .status()
        .unwrap();
    assert!(status.success());
    writable(&deal_dir);
    writable(&deal_dir.join("002"));
    std::fs::remove_dir_all(deal_dir.join("002")).unwrap();
    std::os::unix::fs::symlink(&copy, deal_dir.join("002")).unwrap();
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    assert!(
        has(
            &p,
            &format!(
                "{}/002 is a symbolic link; a deal's folder holds version folders, never links",
                deal_dir.display()
            )
        ),
        "{p:?}"
    );
    // Asked about the link itself, verify refuses it as well.
    let direct = verify(&deal_dir.join("002"), &[]);
    assert_eq!(direct.status.code(), Some(1), "{}", text(&direct.stdout));
    // And filing refuses to add to a deal folder holding it.
    let deal = dir.path().join("pier.yaml");
    std::fs::write(&deal, DEAL.replace("180000", "999000")).unwrap();
    let filed = file_deal(&deal, &archive);
    assert_ne!(filed.status.code(), Some(0));
    assert!(
        text(&filed.stderr).contains("`002` in the deal's folder is a symbolic link"),
        "{}",
        text(&filed.stderr)
    );
}

/// Runs verify, failing (and killing it) if it has not finished within a minute: a
/// read that waits on a pipe or reads a device without end must not hang the suite.
fn verify_within_a_minute(path: &Path) -> Output {
    let mut child = command()
        .args(["verify", s(path)])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    loop {
        if child.try_wait().unwrap().is_some() {
            return child.wait_with_output().unwrap();
        }
        if start.elapsed() > Duration::from_secs(60) {
            let _ = child.kill();
            let _ = child.wait();
            panic!("verify still running after a minute: it blocked on the archive");
        }
        std::thread::sleep(Duration::from_millis(50));
    }
}

#[test]
fn a_fifo_and_a_link_to_dev_zero_are_reported_without_blocking() {
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    writable(&v1);
    writable(&v1.join("inputs"));
    // The deal file swapped for a FIFO that no one writes to.
    let deal_file = v1.join("inputs/pier.yaml");
    writable(&deal_file);
    std::fs::remove_file(&deal_file).unwrap();
    assert!(Command::new("mkfifo")
        .arg(&deal_file)
        .status()
        .unwrap()
        .success());
    // The memo swapped for a link to an endless device.
    let pdf = v1.join("pier.pdf");
    writable(&pdf);
    std::fs::remove_file(&pdf).unwrap();
    std::os::unix::fs::symlink("/dev/zero", &pdf).unwrap();
    // And an extra FIFO nobody listed.
    assert!(Command::new("mkfifo")
        .arg(v1.join("extra"))
        .status()
        .unwrap()
        .success());
    let out = verify_within_a_minute(&archive);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    let d = v1.display();
    for expected in [
        format!("{d}/inputs/pier.yaml is a FIFO (named pipe), not a regular file"),
        format!("{d}/pier.pdf is a symbolic link, not a regular file"),
        format!("{d}/extra is a FIFO (named pipe); nothing in a filed version is a link"),
        format!("{d}: the figures and the PDF were not recomputed"),
    ] {
        assert!(has(&p, &expected), "{expected}\n{p:?}");
    }
}

#[test]
fn a_folder_where_a_file_belongs_is_reported() {
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    let pdf = v1.join("pier.pdf");
    writable(&v1);
    writable(&pdf);
    std::fs::remove_file(&pdf).unwrap();
    std::fs::create_dir(&pdf).unwrap();
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    assert_problem(
        &out,
        &format!("{}/pier.pdf is a folder, not a regular file", v1.display()),
    );
}

/// Renames version folders in a deal's folder (links and permissions allowing).
fn rename(deal_dir: &Path, from: &str, to: &str) {
    writable(deal_dir);
    std::fs::rename(deal_dir.join(from), deal_dir.join(to)).unwrap();
}

#[test]
fn deleted_swapped_and_inserted_versions_break_the_chain() {
    // Deleted: the middle one of three.
    let (_dir, _deal, archive) = pier_archive(3);
    let deal_dir = archive.join(FOLDER);
    writable(&deal_dir);
    let v2 = deal_dir.join("002");
    let status = Command::new("chmod")
        .args(["-R", "u+w", s(&v2)])
        .status()
        .unwrap();
    assert!(status.success());
    std::fs::remove_dir_all(&v2).unwrap();
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    let d = deal_dir.display();
    assert!(has(&p, &format!("{d}: version 002 is missing")), "{p:?}");
    // 003's memo names the changes since 002, which is gone: said, not left a riddle.
    assert!(
        has(
            &p,
            "which is not the one it was filed after (see the chain)"
        ),
        "{p:?}"
    );
    assert!(
        has(
            &p,
            &format!("{d}/003: its manifest records the previous manifest's SHA-256 as ")
        ),
        "{p:?}"
    );

    // Swapped: 002 and 003 trade places.
    let (_dir, _deal, archive) = pier_archive(3);
    let deal_dir = archive.join(FOLDER);
    rename(&deal_dir, "002", "tmp");
    rename(&deal_dir, "003", "002");
    rename(&deal_dir, "tmp", "003");
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    let d = deal_dir.display();
    assert!(
        has(
            &p,
            &format!("{d}/002/manifest.json names version 003, but the folder is 002")
        ),
        "{p:?}"
    );
    assert!(
        has(&p, "a version was removed, swapped, reordered or replaced"),
        "{p:?}"
    );

    // Inserted: a version of a rewritten history put in as 002, the real 002 moved up.
    let (_dir, _deal, archive) = pier_archive(2);
    let (_other, _, foreign) = pier_archive(3);
    let deal_dir = archive.join(FOLDER);
    rename(&deal_dir, "002", "003");
    let status = Command::new("cp")
        .args([
            "-a",
            s(&foreign.join(FOLDER).join("003")),
            s(&deal_dir.join("002")),
        ])
        .status()
        .unwrap();
    assert!(status.success());
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(1));
    let p = problems(&out);
    assert!(
        has(
            &p,
            &format!(
                "{}/003: its manifest records the previous manifest's SHA-256",
                deal_dir.display()
            )
        ),
        "{p:?}"
    );
}

#[test]
fn a_consistent_rewrite_of_the_latest_version_changes_the_head() {
    // A rewrite made with candor itself: the same deal filed with other flows into a
    // copy of the archive, then put in place of the real latest version. Every hash
    // inside agrees, so only the head (recorded elsewhere) and the signature tell.
    let (dir, deal, archive) = pier_archive(2);
    let before = verify(&archive, &[]);
    assert_eq!(before.status.code(), Some(0));
    let recorded_head = head_of(&before);
    let forged = dir.path().join("forged");
    let status = Command::new("cp")
        .args(["-a", s(&archive), s(&forged)])
        .status()
        .unwrap();
    assert!(status.success());
    let forged_dir = forged.join(FOLDER);
    writable(&forged_dir);
    let status = Command::new("chmod")
        .args(["-R", "u+w", s(&forged_dir.join("002"))])
        .status()
        .unwrap();
    assert!(status.success());
    std::fs::remove_dir_all(forged_dir.join("002")).unwrap();
    std::fs::write(&deal, DEAL.replace("180000", "950000")).unwrap();
    assert_eq!(file_deal(&deal, &forged).status.code(), Some(0));
    let after = verify(&forged, &[]);
    assert_eq!(after.status.code(), Some(0), "{}", text(&after.stdout));
    assert_ne!(head_of(&after), recorded_head);
    // Given the head recorded before, verify names the rewrite.
    let hash = recorded_head.rsplit(' ').next().unwrap();
    let checked = verify(&forged, &["--head", hash]);
    assert_eq!(checked.status.code(), Some(1));
    assert_problem(
        &checked,
        &format!("the recorded head {hash} is the manifest of no version here"),
    );
    // The real archive still holds it; after one more filing it is a note, not a problem.
    assert_eq!(verify(&archive, &["--head", hash]).status.code(), Some(0));
    std::fs::write(&deal, DEAL.replace("180000", "960000")).unwrap();
    assert_eq!(file_deal(&deal, &archive).status.code(), Some(0));
    let later = verify(&archive, &["--head", hash]);
    assert_eq!(later.status.code(), Some(0), "{}", text(&later.stdout));
    assert!(
        text(&later.stderr).contains("and versions were filed after it"),
        "{}",
        text(&later.stderr)
    );
}

#[test]
fn a_deleted_latest_version_is_caught_by_the_recorded_head() {
    let (_dir, _deal, archive) = pier_archive(2);
    let before = verify(&archive, &[]);
    let head = head_of(&before);
    let hash = head.rsplit(' ').next().unwrap();
    let deal_dir = archive.join(FOLDER);
    writable(&deal_dir);
    let status = Command::new("chmod")
        .args(["-R", "u+w", s(&deal_dir.join("002"))])
        .status()
        .unwrap();
    assert!(status.success());
    std::fs::remove_dir_all(deal_dir.join("002")).unwrap();
    // Without the recorded head the shorter chain is whole...
    assert_eq!(verify(&archive, &[]).status.code(), Some(0));
    // ...with it, the loss is named.
    let out = verify(&archive, &["--head", hash]);
    assert_eq!(out.status.code(), Some(1));
    assert_problem(
        &out,
        &format!(
            "the recorded head {hash} is the manifest of no version here: the version it named \
             was removed or rewritten after it was recorded"
        ),
    );
}

fn key(name: &str) -> PathBuf {
    root().join("tests/fixtures/keys").join(name)
}

/// An allowed-signers file naming the reviewer's test key.
fn allowed_signers(dir: &Path, options: &str) -> PathBuf {
    let public = std::fs::read_to_string(key("reviewer.pub")).unwrap();
    let path = dir.join("allowed_signers");
    std::fs::write(
        &path,
        format!("# reviewers\nana@example.org {options}{}", public.trim()),
    )
    .unwrap();
    path
}

#[test]
fn a_signed_version_names_its_signer_and_tampering_breaks_it() {
    let (dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    let out = candor(&["sign", s(&v1), "--key", s(&key("reviewer"))]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(text(&out.stdout).trim(), s(&v1.join("manifest.json.sig")));
    let sig = std::fs::read_to_string(v1.join("manifest.json.sig")).unwrap();
    assert!(sig.starts_with("-----BEGIN SSH SIGNATURE-----\n"), "{sig}");
    // A signature is never replaced.
    let again = candor(&["sign", s(&v1), "--key", s(&key("outsider"))]);
    assert_eq!(again.status.code(), Some(1));
    assert!(text(&again.stderr).contains("a signature is never replaced"));

    let allowed = allowed_signers(dir.path(), "");
    let ok = verify(&archive, &["--allowed-signers", s(&allowed)]);
    assert_eq!(ok.status.code(), Some(0), "{}", text(&ok.stdout));
    assert!(
        text(&ok.stdout).contains(&format!(
            "sign-off of {}: approved, signed by ana@example.org\n",
            v1.display()
        )),
        "{}",
        text(&ok.stdout)
    );
    // Without the file the signature is checked but its signer not named.
    let unnamed = verify(&archive, &[]);
    assert!(text(&unnamed.stdout).contains("approved, signed with the key SHA256:"));
    // A key the file lists only for other namespaces, or not at all, is no signer.
    let git_only = allowed_signers(dir.path(), "namespaces=\"git\" ");
    let out = verify(&archive, &["--allowed-signers", s(&git_only)]);
    assert_eq!(out.status.code(), Some(1));
    assert_problem(&out, "only for the namespaces git");
    let other = dir.path().join("others");
    let outsider = std::fs::read_to_string(key("outsider.pub")).unwrap();
    std::fs::write(&other, format!("bo@example.org {}", outsider.trim())).unwrap();
    let out = verify(&archive, &["--allowed-signers", s(&other)]);
    assert_eq!(out.status.code(), Some(1));
    assert_problem(&out, "which is not an allowed signer");

    // Rewriting the sign-off (hash regenerated) breaks the signature too.
    rewrite_manifest(&v1, |m| m["signoff"]["reviewed_by"] = "Someone Else".into());
    let out = verify(&archive, &["--allowed-signers", s(&allowed)]);
    assert_eq!(out.status.code(), Some(1));
    assert_problem(
        &out,
        "manifest.json.sig does not verify against manifest.json",
    );
}

#[test]
fn a_protected_key_and_a_damaged_version_are_not_signed() {
    let (_dir, _deal, archive) = pier_archive(1);
    let v1 = archive.join(FOLDER).join("001");
    let out = candor(&["sign", s(&v1), "--key", s(&key("protected"))]);
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("protected by a passphrase"));
    assert!(text(&out.stderr).contains("ssh-keygen -Y sign -n signoff@candor"));
    let out = candor(&["sign", s(&v1), "--key", s(&key("reviewer.pub"))]);
    assert_eq!(out.status.code(), Some(1));
    rewrite_manifest(&v1, |m| m["filed_at"] = "2020-01-01T00:00:00Z".into());
    let analysis = v1.join("analysis.json");
    writable(&analysis);
    std::fs::write(&analysis, "{}").unwrap();
    let out = candor(&["sign", s(&v1), "--key", s(&key("reviewer"))]);
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("the version does not verify, so it is not signed"));
    assert!(!v1.join("manifest.json.sig").exists());
}

#[test]
fn deals_named_in_other_scripts_get_folders_of_their_own() {
    let dir = tempfile::tempdir().unwrap();
    let archive = dir.path().join("archive");
    for (file, name) in [
        ("Λιμάνι.yaml", "Λιμάνι Βόλου"),
        ("Порт.yaml", "Северный порт"),
    ] {
        let deal = dir.path().join(file);
        std::fs::write(&deal, DEAL.replace("Saltmarsh ferry pier", name)).unwrap();
        let out = file_deal(&deal, &archive);
        assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
        assert!(
            text(&out.stdout).trim().ends_with("/001"),
            "{}",
            text(&out.stdout)
        );
    }
    assert_eq!(names(&archive), ["λιμάνι", "порт"]);
    assert_eq!(names(&archive.join("порт")), ["001"]);
    let pdf = archive.join("λιμάνι/001/λιμάνι.pdf");
    assert!(pdf.is_file(), "{}", pdf.display());
    let out = verify(&archive, &[]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stdout));
}

#[test]
fn a_deal_id_names_the_folder_whatever_the_file_is_called() {
    let dir = tempfile::tempdir().unwrap();
    let archive = dir.path().join("archive");
    let with_id = DEAL.replace("  currency: EUR", "  id: Saltmarsh-Pier\n  currency: EUR");
    for file in ["pier-draft.yaml", "pier-final.yaml"] {
        let deal = dir.path().join(file);
        std::fs::write(&deal, &with_id).unwrap();
        let out = file_deal(&deal, &archive);
        assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    }
    // One folder, and the second file (same inputs but its name) is a second version.
    assert_eq!(names(&archive), ["saltmarsh-pier"]);
    assert_eq!(names(&archive.join("saltmarsh-pier")), ["001", "002"]);
}

#[test]
fn a_renamed_deal_needs_the_flag_and_the_rename_is_recorded() {
    let (_dir, deal, archive) = pier_archive(1);
    std::fs::write(
        &deal,
        DEAL.replace("Saltmarsh ferry pier", "Saltmarsh pier")
            .replace("EUR", "GBP"),
    )
    .unwrap();
    let refused = file_deal(&deal, &archive);
    assert_eq!(refused.status.code(), Some(1));
    let err = text(&refused.stderr);
    assert!(
        err.contains(
            "the deal's folder holds `Saltmarsh ferry pier` in EUR (version 001), and this deal \
             file names `Saltmarsh pier` in GBP; nothing was filed"
        ),
        "{err}"
    );
    assert!(err.contains("--rename"), "{err}");
    assert!(!archive.join(FOLDER).join("002").exists());
    let out = candor(&["memo", s(&deal), "--archive", s(&archive), "--rename"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let m: Value = serde_json::from_slice(
        &std::fs::read(archive.join(FOLDER).join("002/manifest.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(
        m["renamed_from"],
        serde_json::json!({"deal": "Saltmarsh ferry pier", "currency": "EUR"})
    );
    let ledger = candor(&["ledger", s(&archive)]);
    assert!(
        text(&ledger.stdout).contains("(renamed from Saltmarsh ferry pier)"),
        "{}",
        text(&ledger.stdout)
    );
    assert_eq!(verify(&archive, &[]).status.code(), Some(0));
}

#[test]
fn the_ledger_lists_deals_versions_decisions_and_signatures() {
    let (dir, _deal, archive) = pier_archive(2);
    let deal_dir = archive.join(FOLDER);
    let out = candor(&[
        "sign",
        s(&deal_dir.join("002")),
        "--key",
        s(&key("reviewer")),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let allowed = allowed_signers(dir.path(), "");
    let head = sha256_hex(&std::fs::read(deal_dir.join("002/manifest.json")).unwrap());
    let listing = candor(&["ledger", s(&archive), "--allowed-signers", s(&allowed)]);
    assert_eq!(listing.status.code(), Some(0));
    assert_eq!(
        text(&listing.stdout),
        format!(
            "pier  head {head}\n  \
             001  2026-12-31  approved, not signed  Saltmarsh ferry pier EUR\n  \
             002  2026-12-31  approved, signed by ana@example.org  Saltmarsh ferry pier EUR\n"
        )
    );
    let json = candor(&["ledger", s(&archive), "--json"]);
    let v: Value = serde_json::from_slice(&json.stdout).unwrap();
    assert_eq!(v["deals"][0]["folder"], "pier");
    assert_eq!(v["deals"][0]["head"], head);
    assert_eq!(v["deals"][0]["versions"][0]["signature"]["state"], "none");
    assert_eq!(
        v["deals"][0]["versions"][1]["signature"]["state"],
        "unchecked"
    );
    assert_eq!(v["deals"][0]["versions"][1]["decision"], "approved");
    assert_eq!(v["deals"][0]["versions"][1]["reviewed_by"], "Ana Reviewer");
}

#[test]
fn a_csv_deal_attaches_its_csv_and_its_footer_hash_covers_both() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("depot.pdf");
    let made = candor(&[
        "memo",
        s(&examples().join("tollgate-depot.yaml")),
        "-o",
        s(&out),
    ]);
    assert_eq!(made.status.code(), Some(0), "{}", text(&made.stderr));
    let pdf = crate::support::pdf::Pdf::parse(&std::fs::read(&out).unwrap());
    let attached: Vec<String> = pdf.attachments().into_iter().map(|(n, _)| n).collect();
    assert!(
        attached.contains(&"tollgate-depot-flows.csv".to_string()),
        "{attached:?}"
    );
    // coreutils: `sha256sum deal csv | sha256sum`, independent of candor's hashing.
    let listing = Command::new("sha256sum")
        .args(["tollgate-depot.yaml", "tollgate-depot-flows.csv"])
        .current_dir(examples())
        .output()
        .unwrap();
    let mut both = Command::new("sha256sum")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    use std::io::Write as _;
    both.stdin
        .take()
        .unwrap()
        .write_all(&listing.stdout)
        .unwrap();
    let both = both.wait_with_output().unwrap();
    let hash = text(&both.stdout)
        .split_whitespace()
        .next()
        .unwrap()
        .to_string();
    let words = pdf.text();
    assert!(words.contains(&hash), "{hash} not in the memo");
    assert!(words.contains(&format!("input SHA-256 {}", &hash[..12])));
}
