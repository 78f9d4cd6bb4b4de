//! Output faults end to end: a missing output or archive folder, a folder that cannot be
//! written, a path in the way, a full disk (injected always; a real small tmpfs when the
//! test runs as root and `mount` works), a run killed outright (SIGKILL) in the middle
//! of writing a memo or filing a version, and a run stopped by Ctrl-C, SIGTERM or SIGHUP.
//!
//! What every case checks is the promise of the hardening work, common practice for
//! tools that write documents: a non-zero exit, a message naming what happened, the file
//! and what to do, the earlier memo byte-identical, the filed versions and their
//! manifests untouched, no half-written file or version left visible, and a next run
//! that works and says what it cleaned up. The expected outcomes come from that promise
//! and from POSIX semantics (rename is atomic, ENOSPC on a full file system, SIGKILL
//! cannot be caught), not from candor's own output.

use crate::support::{
    candor, command, command_as_nobody, is_root, last_line, names, s, setpriv_available, text,
};
use candor::archive::{self, Filing};
use candor::files::load::load_deal;
use candor::files::output::{Sink, PAUSE_HOOK};
use candor::memo::write_memo;
use std::collections::BTreeMap;
use std::io::{ErrorKind, Write as _};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// The deal's folder in an archive: named after its deal file, `ferrow.yaml`.
const SLUG: &str = "ferrow";

/// A deal of our own invention, small so that each memo is quick to make.
const DEAL: &str = "\
candor: 1
deal:
  name: Ferrow Quay warehouse
  currency: EUR
  as_of: 2027-01-15
hurdle_rate: 8%
cash_flows:
  every: year
  amounts: [-1000000, 250000, 300000, 350000, 400000]
";

/// Starts candor paused in the middle of its first file write (see DEVELOPERS.md,
/// "Fault tests"), with its output captured.
fn spawn_paused(args: &[&str]) -> Child {
    command()
        .args(args)
        .env(PAUSE_HOOK, "120")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the candor binary starts")
}

/// A folder holding the deal file, as an analyst would have it.
fn deal_folder() -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().expect("temp dir");
    let deal = dir.path().join("ferrow.yaml");
    std::fs::write(&deal, DEAL).expect("write deal");
    (dir, deal)
}

/// A second forecast of the same deal: a later version for the archive, and a memo
/// whose bytes differ from the first.
fn revise(deal: &Path) {
    let t = std::fs::read_to_string(deal).expect("read deal");
    assert!(t.contains("400000]"));
    std::fs::write(deal, t.replace("400000]", "420000]")).expect("write deal");
}

/// Every file and folder under `dir` with its bytes and permission bits, to show that
/// nothing was added, removed or changed.
fn tree(dir: &Path) -> BTreeMap<String, (u32, Vec<u8>)> {
    fn walk(dir: &Path, prefix: &str, out: &mut BTreeMap<String, (u32, Vec<u8>)>) {
        use std::os::unix::fs::PermissionsExt as _;
        let Ok(entries) = std::fs::read_dir(dir) else {
            return;
        };
        for e in entries.map(|e| e.expect("dir entry")) {
            let rel = format!("{prefix}{}", e.file_name().to_string_lossy());
            let meta = std::fs::symlink_metadata(e.path()).expect("metadata");
            let mode = meta.permissions().mode();
            if meta.is_dir() {
                out.insert(format!("{rel}/"), (mode, Vec::new()));
                walk(&e.path(), &format!("{rel}/"), out);
            } else {
                out.insert(rel, (mode, std::fs::read(e.path()).expect("read")));
            }
        }
    }
    let mut out = BTreeMap::new();
    walk(dir, "", &mut out);
    out
}

fn leftovers(dir: &Path) -> Vec<String> {
    names(dir)
        .into_iter()
        .filter(|n| n.ends_with(".part") || n.starts_with(".filing-") || n.starts_with(".lock"))
        .collect()
}

/// A memo of the deal at `out` made by candor itself: the earlier memo a failed run
/// must leave alone.
/// A deal folder with a memo made from the deal's first forecast, the deal then
/// revised, and candor paused half way through writing the new memo over the old:
/// (folder, deal, memo path, the earlier memo's bytes, the paused run).
fn memo_paused_mid_write() -> (tempfile::TempDir, PathBuf, PathBuf, Vec<u8>, Child) {
    let (dir, deal) = deal_folder();
    let out = dir.path().join("ferrow.pdf");
    let before = earlier_memo(&deal, &out);
    revise(&deal);
    let mut child = spawn_paused(&["memo", s(&deal), "-o", s(&out)]);
    wait_until(&mut child, "the memo was half written", || {
        part_written(dir.path())
    });
    (dir, deal, out, before, child)
}

/// A deal folder whose archive holds version 001, the deal then revised:
/// (folder, deal, archive folder, the deal's folder in the archive).
fn archive_with_one_version_and_a_revision() -> (tempfile::TempDir, PathBuf, PathBuf, PathBuf) {
    let (dir, deal) = deal_folder();
    let archive = dir.path().join("archive");
    let deal_dir = archive.join(SLUG);
    file_first_version(&deal, &archive);
    revise(&deal);
    (dir, deal, archive, deal_dir)
}

fn earlier_memo(deal: &Path, out: &Path) -> Vec<u8> {
    let made = candor(&["memo", s(deal), "-o", s(out)]);
    assert_eq!(made.status.code(), Some(0), "{}", text(&made.stderr));
    let bytes = std::fs::read(out).expect("the earlier memo");
    assert!(bytes.starts_with(b"%PDF-"));
    bytes
}

fn file_first_version(deal: &Path, archive: &Path) {
    let filed = candor(&["memo", s(deal), "--archive", s(archive)]);
    assert_eq!(filed.status.code(), Some(0), "{}", text(&filed.stderr));
    assert_eq!(names(&archive.join(SLUG)), ["001"]);
}

fn verify_ok(archive: &Path, versions: usize) {
    let v = candor(&["verify", s(archive)]);
    let plural = if versions == 1 { "" } else { "s" };
    assert_eq!(
        last_line(&v.stdout),
        format!("ok: {versions} version{plural} verified"),
        "{}",
        text(&v.stderr)
    );
    assert_eq!(v.status.code(), Some(0));
}

// ---------------------------------------------------------------- missing folders

#[test]
fn a_memo_into_a_missing_folder_names_the_folder_and_creates_nothing() {
    let (dir, deal) = deal_folder();
    let out = dir.path().join("missing").join("dir").join("x.pdf");
    let run = candor(&["memo", s(&deal), "-o", s(&out)]);
    let err = text(&run.stderr);
    // A mistake in the path given: an input error, as for `candor new -o`.
    assert_eq!(run.status.code(), Some(1), "{err}");
    let folder = dir.path().join("missing").join("dir");
    assert!(
        err.contains(&format!("the folder `{}` does not exist", folder.display())),
        "{err}"
    );
    assert!(
        err.contains(&format!("mkdir -p {}", folder.display())),
        "{err}"
    );
    assert!(err.contains(&out.display().to_string()), "{err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(!dir.path().join("missing").exists(), "no folder is created");

    // The markup of `--emit` is checked the same way, before any work.
    let emit = dir.path().join("nowhere").join("memo.typ");
    let run = candor(&["memo", s(&deal), "--emit", "typst", s(&emit)]);
    assert_eq!(run.status.code(), Some(1));
    assert!(text(&run.stderr).contains("cannot write the markup"));
    assert_eq!(names(dir.path()), ["ferrow.yaml"], "not even the memo");
}

#[test]
fn a_pack_into_a_missing_folder_names_the_folder() {
    let (dir, deal) = deal_folder();
    let out = dir.path().join("meetings").join("march.pdf");
    let run = candor(&["pack", s(&deal), "-o", s(&out)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(err.contains("cannot write the pack"), "{err}");
    assert!(
        err.contains(&format!(
            "the folder `{}` does not exist",
            dir.path().join("meetings").display()
        )),
        "{err}"
    );
    assert!(!dir.path().join("meetings").exists());
}

#[test]
fn a_missing_archive_folder_is_created_only_inside_an_existing_folder() {
    let (dir, deal) = deal_folder();
    // The first filing starts the archive: the analyst names a new folder.
    let archive = dir.path().join("archive");
    let run = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    assert_eq!(run.status.code(), Some(0), "{}", text(&run.stderr));
    assert!(
        text(&run.stderr).contains(&format!("created the archive folder {}", archive.display()))
    );
    assert_eq!(names(&archive.join(SLUG)), ["001"]);

    // A mistyped path does not grow a tree of folders.
    let deep = dir.path().join("archvie").join("2027").join("archive");
    let run = candor(&["memo", s(&deal), "--archive", s(&deep)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(1), "{err}");
    assert!(
        err.contains(&format!(
            "cannot create the archive folder: the folder `{}` it would go in does not exist",
            dir.path().join("archvie").join("2027").display()
        )),
        "{err}"
    );
    assert!(err.contains("check the `--archive` path"), "{err}");
    assert!(!dir.path().join("archvie").exists());
}

// ------------------------------------------------------ paths in the way, read-only

#[test]
fn a_folder_or_a_file_in_the_way_is_refused_and_left_alone() {
    let (dir, deal) = deal_folder();
    // The output named is an existing folder.
    let folder = dir.path().join("memos");
    std::fs::create_dir(&folder).unwrap();
    std::fs::write(folder.join("keep.txt"), "kept").unwrap();
    for cmd in ["memo", "pack"] {
        let run = candor(&[cmd, s(&deal), "-o", s(&folder)]);
        let err = text(&run.stderr);
        assert_eq!(run.status.code(), Some(2), "{err}");
        assert!(
            err.contains(&format!("`{}` is a folder", folder.display())),
            "{err}"
        );
        assert!(err.contains("give a file name"), "{err}");
        assert_eq!(names(&folder), ["keep.txt"]);
    }
    // A file stands where the output's folder should be.
    let file = dir.path().join("notes.txt");
    std::fs::write(&file, "notes").unwrap();
    let run = candor(&["memo", s(&deal), "-o", s(&file.join("x.pdf"))]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(
        err.contains(&format!("`{}` is a file, not a folder", file.display())),
        "{err}"
    );
    assert_eq!(std::fs::read(&file).unwrap(), b"notes");
    // The archive named is a file.
    let run = candor(&["memo", s(&deal), "--archive", s(&file)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(err.contains("is a file, not an archive folder"), "{err}");
    assert_eq!(std::fs::read(&file).unwrap(), b"notes");
}

/// A sink that fails the way the given error kind says, after `after` bytes in all.
struct Failing {
    after: usize,
    written: usize,
    kind: ErrorKind,
}

impl Failing {
    fn new(after: usize, kind: ErrorKind) -> Failing {
        Failing {
            after,
            written: 0,
            kind,
        }
    }
}

impl Sink for Failing {
    fn put(&mut self, file: &mut std::fs::File, bytes: &[u8]) -> std::io::Result<()> {
        let room = self.after.saturating_sub(self.written);
        if bytes.len() <= room {
            file.write_all(bytes)?;
            self.written += bytes.len();
            return Ok(());
        }
        file.write_all(&bytes[..room])?;
        self.written += room;
        Err(std::io::Error::new(self.kind, "injected by the test"))
    }
}

#[test]
fn a_read_only_folder_refuses_the_memo_and_keeps_the_earlier_one() {
    use std::os::unix::fs::PermissionsExt as _;
    let (dir, deal) = deal_folder();
    let out_dir = dir.path().join("memos");
    std::fs::create_dir(&out_dir).unwrap();
    let out = out_dir.join("ferrow.pdf");
    let before = earlier_memo(&deal, &out);
    revise(&deal);
    std::fs::set_permissions(dir.path(), std::fs::Permissions::from_mode(0o755)).unwrap();
    std::fs::set_permissions(&out_dir, std::fs::Permissions::from_mode(0o555)).unwrap();
    // Root writes through permission bits: find out by trying, as candor does.
    let bits_hold = std::fs::write(out_dir.join("probe"), "x").is_err();
    let _ = std::fs::remove_file(out_dir.join("probe"));
    let mut run = command();
    if !bits_hold {
        if !setpriv_available() {
            std::fs::set_permissions(&out_dir, std::fs::Permissions::from_mode(0o755)).unwrap();
            // No other user to run as: the refusal is injected at the write itself.
            eprintln!("read-only folder: running as root without setpriv, so injected");
            let mut sink = Failing::new(0, ErrorKind::PermissionDenied);
            let f = write_memo(&out, b"%PDF-new", &mut sink).unwrap_err();
            let shown = f.render();
            assert_eq!(f.exit_code(), 2);
            assert!(
                shown.contains("cannot write the memo: permission denied"),
                "{shown}"
            );
            assert!(shown.contains("ask for write access"), "{shown}");
            assert_eq!(std::fs::read(&out).unwrap(), before);
            assert_eq!(names(&out_dir), ["ferrow.pdf"]);
            return;
        }
        // As root, candor runs as the unprivileged user 65534 (util-linux setpriv).
        run = command_as_nobody();
    }
    let run = run
        .args(["memo", s(&deal), "-o", s(&out)])
        .output()
        .expect("candor runs");
    std::fs::set_permissions(&out_dir, std::fs::Permissions::from_mode(0o755)).unwrap();
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(
        err.contains(&format!(
            "cannot write the memo: cannot create a file in `{}`: permission denied",
            out_dir.display()
        )),
        "{err}"
    );
    assert!(err.contains("ask for write access"), "{err}");
    assert_eq!(
        std::fs::read(&out).unwrap(),
        before,
        "the earlier memo is kept"
    );
    assert_eq!(names(&out_dir), ["ferrow.pdf"]);
}

// ------------------------------------------------------------------------ full disk

#[test]
fn a_full_disk_is_reported_and_the_earlier_memo_kept_injected() {
    let (dir, deal) = deal_folder();
    let out = dir.path().join("ferrow.pdf");
    let before = earlier_memo(&deal, &out);
    let listing = names(dir.path());
    // The writer does not look at the bytes; a memo-sized block stands in for a memo.
    let new = vec![b'%'; before.len() + 1000];
    for after in [0, 1, 4096, before.len(), new.len() - 1] {
        let mut sink = Failing::new(after, ErrorKind::StorageFull);
        let f = write_memo(&out, &new, &mut sink).unwrap_err();
        let shown = f.render();
        assert_eq!(f.exit_code(), 2, "after {after} bytes");
        assert!(
            shown.contains("cannot write the memo: the disk is full"),
            "{shown}"
        );
        assert!(shown.contains(&out.display().to_string()), "{shown}");
        assert!(
            shown.contains("a file already at this path is unchanged"),
            "{shown}"
        );
        assert!(shown.contains("free some space on that disk"), "{shown}");
        assert_eq!(std::fs::read(&out).unwrap(), before, "after {after} bytes");
        assert_eq!(names(dir.path()), listing, "no temporary file is left");
    }
    // The same writer with room enough writes the file whole.
    let mut sink = Failing::new(usize::MAX, ErrorKind::StorageFull);
    write_memo(&out, &new, &mut sink).unwrap();
    assert_eq!(std::fs::read(&out).unwrap(), new);
    assert_eq!(names(dir.path()), listing);
}

/// What a filing needs besides the archive, loaded from a deal file once: the test
/// then files it through a sink of its own. The archive does not read the PDF; a short
/// stand-in keeps the tests quick.
struct FilingInputs {
    loaded: candor::files::load::LoadedDeal,
    analysis: candor::engine::Analysis,
    templates: BTreeMap<String, String>,
    pdf: Vec<u8>,
    created: chrono::NaiveDateTime,
}

impl FilingInputs {
    fn load(deal: &Path) -> FilingInputs {
        let loaded = load_deal(deal).map_err(|f| f.diagnostics).unwrap();
        let analysis = candor::engine::analyse(&loaded.deal);
        FilingInputs {
            loaded,
            analysis,
            templates: BTreeMap::new(),
            pdf: b"%PDF-1.7 stand-in".to_vec(),
            created: chrono::DateTime::from_timestamp(1798675200, 0)
                .unwrap()
                .naive_utc(),
        }
    }

    /// The filing of these inputs after version `previous` (`None`: the first).
    fn filing<'a>(&'a self, previous: Option<&'a str>) -> Filing<'a> {
        Filing {
            deal: &self.loaded.deal,
            deal_file_name: "ferrow.yaml",
            source: &self.loaded.source,
            companions: &self.loaded.companions,
            templates: &self.templates,
            analysis: &self.analysis,
            pdf: &self.pdf,
            memo_created: self.created,
            filed_at: self.created,
            previous,
            rename: false,
        }
    }
}

#[test]
fn a_full_disk_while_filing_leaves_the_archive_as_it_was_injected() {
    let (dir, deal) = deal_folder();
    let archive = dir.path().join("archive");
    file_first_version(&deal, &archive);
    revise(&deal);
    let before = tree(&archive);
    let inputs = FilingInputs::load(&deal);
    let filing = inputs.filing(Some("001"));
    let pdf = &inputs.pdf;
    // Fails in the deal file, the analysis, the PDF and the manifest in turn.
    let analysis_len = serde_json::to_vec_pretty(&inputs.analysis).unwrap().len();
    let deal_len = inputs.loaded.source.len();
    for after in [
        0,
        deal_len / 2,
        deal_len + analysis_len / 2,
        deal_len + analysis_len + 3,
        deal_len + analysis_len + pdf.len() + 40,
    ] {
        let mut sink = Failing::new(after, ErrorKind::StorageFull);
        let d = archive::file_with(&archive, &filing, &mut sink).unwrap_err();
        let shown = d.render(None);
        assert!(shown.contains("the disk is full"), "{shown}");
        assert!(shown.contains("of version 002"), "{shown}");
        assert!(
            shown.contains("nothing was filed, and the versions already filed are unchanged"),
            "{shown}"
        );
        assert!(
            shown.contains(&archive.join(SLUG).display().to_string()),
            "{shown}"
        );
        assert!(
            shown.contains("free some space on the archive's disk"),
            "{shown}"
        );
        assert_eq!(tree(&archive), before, "after {after} bytes");
    }
    // The archive still verifies, and the next filing (from the real command) works.
    verify_ok(&archive, 1);
    let next = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    assert_eq!(next.status.code(), Some(0), "{}", text(&next.stderr));
    assert_eq!(names(&archive.join(SLUG)), ["001", "002"]);
    verify_ok(&archive, 2);
}

#[test]
fn a_full_disk_on_a_first_filing_leaves_no_empty_deal_folder() {
    let (dir, deal) = deal_folder();
    let archive = dir.path().join("archive");
    std::fs::create_dir(&archive).unwrap();
    let inputs = FilingInputs::load(&deal);
    let filing = inputs.filing(None);
    // Fails at once, and in the middle of the deal file.
    for after in [0, inputs.loaded.source.len() / 2] {
        let mut sink = Failing::new(after, ErrorKind::StorageFull);
        let d = archive::file_with(&archive, &filing, &mut sink).unwrap_err();
        let shown = d.render(None);
        assert!(shown.contains("of version 001"), "{shown}");
        assert!(shown.contains("nothing was filed"), "{shown}");
        assert!(
            names(&archive).is_empty(),
            "after {after} bytes: {:?}",
            tree(&archive)
        );
    }
    // A deal folder that was there before the failed filing stays.
    std::fs::create_dir(archive.join(SLUG)).unwrap();
    let mut sink = Failing::new(0, ErrorKind::StorageFull);
    archive::file_with(&archive, &filing, &mut sink).unwrap_err();
    assert_eq!(names(&archive), [SLUG]);
    std::fs::remove_dir(archive.join(SLUG)).unwrap();
    // The next filing (from the real command) works.
    file_first_version(&deal, &archive);
    verify_ok(&archive, 1);
}

/// A small tmpfs mounted for one test, unmounted when dropped.
struct Tmpfs {
    dir: tempfile::TempDir,
}

impl Tmpfs {
    /// `None` when this run may not mount (not root, or a container without the right).
    fn mount(size: &str) -> Option<Tmpfs> {
        if !is_root() {
            return None;
        }
        let dir = tempfile::tempdir().ok()?;
        let ok = Command::new("mount")
            .args([
                "-t",
                "tmpfs",
                "-o",
                &format!("size={size}"),
                "tmpfs",
                s(dir.path()),
            ])
            .output()
            .is_ok_and(|o| o.status.success());
        ok.then_some(Tmpfs { dir })
    }

    fn path(&self) -> &Path {
        self.dir.path()
    }

    /// Fills the file system up to `room` bytes from full.
    fn fill(&self, room: u64) -> PathBuf {
        let filler = self.path().join("filler");
        let mut f = std::fs::File::create(&filler).expect("filler");
        let block = vec![0u8; 4096];
        let mut size = 0u64;
        loop {
            match f.write(&block) {
                Ok(0) => break,
                Ok(n) => size += n as u64,
                Err(_) => break,
            }
        }
        f.set_len(size.saturating_sub(room))
            .expect("shrink the filler");
        f.sync_all().expect("sync");
        filler
    }
}

impl Drop for Tmpfs {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(self.dir.path()).output();
    }
}

#[test]
fn a_full_disk_on_a_small_tmpfs() {
    let Some(fs) = Tmpfs::mount("4m") else {
        eprintln!("skipped the real full disk: cannot mount a tmpfs here (the injected tests ran)");
        return;
    };
    let (_dir, deal) = deal_folder();
    let out = fs.path().join("ferrow.pdf");
    let before = earlier_memo(&deal, &out);
    let archive = fs.path().join("archive");
    file_first_version(&deal, &archive);
    let filed = tree(&archive);
    revise(&deal);
    // Room for the probe file and little else: the memo runs out of space mid-write.
    let filler = fs.fill(8192);

    let run = candor(&["memo", s(&deal), "-o", s(&out)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(
        err.contains("cannot write the memo: the disk is full"),
        "{err}"
    );
    assert!(err.contains(&out.display().to_string()), "{err}");
    assert_eq!(
        std::fs::read(&out).unwrap(),
        before,
        "the earlier memo is kept"
    );
    assert!(leftovers(fs.path()).is_empty(), "{:?}", names(fs.path()));

    let run = candor(&["pack", s(&deal), "-o", s(&fs.path().join("pack.pdf"))]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(
        err.contains("cannot write the pack: the disk is full"),
        "{err}"
    );
    assert!(!fs.path().join("pack.pdf").exists());

    let run = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(err.contains("the disk is full"), "{err}");
    assert!(err.contains("nothing was filed"), "{err}");
    assert_eq!(tree(&archive), filed, "the archive is as it was");
    assert!(text(&run.stdout).is_empty());

    // With space again, the same commands work.
    std::fs::remove_file(filler).unwrap();
    let run = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    assert_eq!(run.status.code(), Some(0), "{}", text(&run.stderr));
    verify_ok(&archive, 2);
    eprintln!("the real full disk ran on a 4 MiB tmpfs");
}

// ---------------------------------------------------------------- interrupted runs

/// Waits until `ready` holds, failing with the child's output if it ends first.
fn wait_until(child: &mut Child, what: &str, ready: impl Fn() -> bool) {
    let started = Instant::now();
    while !ready() {
        if let Ok(Some(status)) = child.try_wait() {
            let mut err = String::new();
            if let Some(mut e) = child.stderr.take() {
                use std::io::Read as _;
                let _ = e.read_to_string(&mut err);
            }
            panic!("candor ended ({status}) before {what}: {err}");
        }
        assert!(
            started.elapsed() < Duration::from_secs(300),
            "timed out waiting for {what}"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// A temporary memo file with bytes in it (the writer is mid-way).
fn part_written(dir: &Path) -> bool {
    names(dir)
        .iter()
        .any(|n| n.ends_with(".part") && std::fs::metadata(dir.join(n)).is_ok_and(|m| m.len() > 0))
}

/// An unfinished version folder holding a file with bytes in it.
fn version_half_built(deal_dir: &Path) -> bool {
    names(deal_dir).iter().any(|n| {
        n.starts_with(".filing-")
            && tree(&deal_dir.join(n))
                .values()
                .any(|(_, bytes)| !bytes.is_empty())
    })
}

fn signal(child: &Child, name: &str) {
    // The shell's own `kill`, present wherever `sh` is.
    let sent = Command::new("sh")
        .args(["-c", &format!("kill -{name} {}", child.id())])
        .status()
        .expect("sh runs");
    assert!(sent.success());
}

#[test]
fn a_memo_killed_mid_write_leaves_the_earlier_one_and_the_next_run_cleans_up() {
    let (dir, deal, out, before, mut child) = memo_paused_mid_write();
    let pid = child.id();
    child.kill().expect("SIGKILL");
    child.wait().expect("reaped");
    assert_eq!(
        std::fs::read(&out).unwrap(),
        before,
        "the earlier memo is kept"
    );
    let left = leftovers(dir.path());
    assert_eq!(left.len(), 1, "SIGKILL leaves the temporary file: {left:?}");
    assert!(left[0].starts_with(&format!(".candor-{pid}-")), "{left:?}");

    let run = candor(&["memo", s(&deal), "-o", s(&out)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(0), "{err}");
    assert!(
        err.contains(&format!(
            "note: removed {}, an unfinished file left by candor process {pid}",
            dir.path().join(&left[0]).display()
        )),
        "{err}"
    );
    assert!(leftovers(dir.path()).is_empty());
    let after = std::fs::read(&out).unwrap();
    assert!(after.starts_with(b"%PDF-") && after != before);
}

#[test]
fn a_filing_killed_mid_write_leaves_the_archive_intact_and_the_next_run_recovers() {
    let (_dir, deal, archive, deal_dir) = archive_with_one_version_and_a_revision();
    let before = tree(&deal_dir.join("001"));
    let mut child = spawn_paused(&["memo", s(&deal), "--archive", s(&archive)]);
    wait_until(&mut child, "the version was half built", || {
        version_half_built(&deal_dir)
    });
    let pid = child.id();
    child.kill().expect("SIGKILL");
    child.wait().expect("reaped");

    assert_eq!(
        tree(&deal_dir.join("001")),
        before,
        "version 001 is untouched"
    );
    let left = names(&deal_dir);
    assert_eq!(left.len(), 3, "{left:?}");
    assert!(left[0].starts_with(".filing-"), "{left:?}");
    assert_eq!(left[1], ".lock");
    assert_eq!(left[2], "001", "no version 002 is visible");
    let lock = std::fs::read_to_string(deal_dir.join(".lock")).unwrap();
    assert_eq!(lock.trim(), pid.to_string(), "the lock names its holder");
    // The half-built folder is no version: the archive still verifies.
    verify_ok(&archive, 1);

    let run = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    let err = text(&run.stderr);
    assert_eq!(run.status.code(), Some(0), "{err}");
    assert!(
        err.contains(&format!(
            "removed the lock {} left by candor process {pid}, which was stopped while filing",
            deal_dir.join(".lock").display()
        )),
        "{err}"
    );
    assert!(
        err.contains(&format!(
            "removed {}, a version left unfinished by an interrupted filing",
            deal_dir.join(&left[0]).display()
        )),
        "{err}"
    );
    assert_eq!(names(&deal_dir), ["001", "002"]);
    verify_ok(&archive, 2);
}

#[test]
fn ctrl_c_sigterm_or_sighup_while_writing_removes_the_unfinished_memo() {
    // 128 plus the signal's number, as shells report a process stopped by a signal
    // (common practice; POSIX signal numbers SIGHUP 1, SIGINT 2, SIGTERM 15).
    for (sig, code) in [("INT", 130), ("TERM", 143), ("HUP", 129)] {
        let (dir, _deal, out, before, child) = memo_paused_mid_write();
        signal(&child, sig);
        let done = child.wait_with_output().expect("candor ends");
        let err = text(&done.stderr);
        assert_eq!(done.status.code(), Some(code), "SIG{sig}: {err}");
        assert!(
            err.contains("candor: interrupted before it finished writing"),
            "{err}"
        );
        assert!(err.contains("removed the unfinished file"), "{err}");
        assert!(
            err.contains(&format!("{} is as it was before", out.display())),
            "{err}"
        );
        assert!(err.contains("run the command again to finish"), "{err}");
        assert!(
            leftovers(dir.path()).is_empty(),
            "SIG{sig}: {:?}",
            names(dir.path())
        );
        assert_eq!(std::fs::read(&out).unwrap(), before);
    }
}

#[test]
fn ctrl_c_while_filing_removes_the_unfinished_version_and_the_lock() {
    let (_dir, deal, archive, deal_dir) = archive_with_one_version_and_a_revision();
    let before = tree(&archive);
    let mut child = spawn_paused(&["memo", s(&deal), "--archive", s(&archive)]);
    wait_until(&mut child, "the version was half built", || {
        version_half_built(&deal_dir)
    });
    signal(&child, "INT");
    let done = child.wait_with_output().expect("candor ends");
    let err = text(&done.stderr);
    assert_eq!(done.status.code(), Some(130), "{err}");
    assert!(
        err.contains("removed the unfinished version being filed"),
        "{err}"
    );
    assert!(
        err.contains(&format!(
            "released the archive lock {}",
            deal_dir.join(".lock").display()
        )),
        "{err}"
    );
    assert_eq!(tree(&archive), before, "the archive is as it was");
    let next = candor(&["memo", s(&deal), "--archive", s(&archive)]);
    assert_eq!(next.status.code(), Some(0), "{}", text(&next.stderr));
    assert!(
        !text(&next.stderr).contains("note:"),
        "nothing was left to clean"
    );
    verify_ok(&archive, 2);
}

/// `SOURCE_DATE_EPOCH` outside what a PDF date holds (before 1970, or after
/// 9999-12-31T23:59:59Z, Unix time 253402300799, `date -u -d @253402300799`) is an
/// input error naming the variable, for a memo and a pack alike, and nothing is written.
#[test]
fn a_source_date_epoch_out_of_range_is_an_input_error() {
    let (dir, deal) = deal_folder();
    let out = dir.path().join("m.pdf");
    for epoch in ["-99999999999", "253402300800"] {
        for args in [
            vec!["memo", s(&deal), "-o", s(&out)],
            vec!["pack", s(&deal), "-o", s(&out)],
        ] {
            let run = Command::new(env!("CARGO_BIN_EXE_candor"))
                .args(&args)
                .env("SOURCE_DATE_EPOCH", epoch)
                .env_remove(PAUSE_HOOK)
                .output()
                .unwrap();
            let err = text(&run.stderr);
            assert_eq!(run.status.code(), Some(1), "{epoch} {args:?}: {err}");
            assert!(err.contains("SOURCE_DATE_EPOCH"), "{err}");
            assert!(err.contains(epoch), "{err}");
            assert!(!out.exists());
        }
    }
}

/// A deal reading its flows from a CSV file beside it: (folder, deal, CSV).
fn deal_with_csv() -> (tempfile::TempDir, PathBuf, PathBuf) {
    let dir = tempfile::tempdir().expect("temp dir");
    let deal = dir.path().join("depot.yaml");
    let csv = dir.path().join("depot-flows.csv");
    std::fs::write(
        &deal,
        DEAL.replace(
            "  every: year\n  amounts: [-1000000, 250000, 300000, 350000, 400000]\n",
            "  csv: depot-flows.csv\n  every: year\n",
        ),
    )
    .unwrap();
    std::fs::write(&csv, "period,amount\n0,-1000\n1,600\n2,600\n").unwrap();
    (dir, deal, csv)
}

/// Asserts a refused run: exit 1, the message says why, and every file listed is
/// byte for byte as it was.
fn assert_refused(args: &[&str], why: &str, kept: &[&Path]) {
    let before: Vec<Vec<u8>> = kept.iter().map(|p| std::fs::read(p).unwrap()).collect();
    let out = candor(args);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{args:?}: {err}");
    assert!(err.contains(why), "{args:?}: {err}");
    for (p, bytes) in kept.iter().zip(before) {
        assert_eq!(std::fs::read(p).unwrap(), bytes, "{} changed", p.display());
    }
}

/// An output path that is one of the run's inputs is refused before anything is
/// written, however it is spelt (a `..` detour, a hard link): the input is kept.
#[test]
fn an_output_that_is_an_input_is_refused_and_the_input_kept() {
    let (dir, deal, csv) = deal_with_csv();
    let d = dir.path();
    let detour = d.join("sub/../depot.yaml");
    std::fs::create_dir(d.join("sub")).unwrap();
    let hard = d.join("hard-link.yaml");
    std::fs::hard_link(&deal, &hard).unwrap();
    let why = "is a file this run reads";
    for out in [&deal, &detour, &hard, &csv] {
        assert_refused(&["memo", s(&deal), "-o", s(out)], why, &[&deal, &csv]);
        assert_refused(&["pack", s(&deal), "-o", s(out)], why, &[&deal, &csv]);
        let pdf = d.join("m.pdf");
        assert_refused(
            &["memo", s(&deal), "-o", s(&pdf), "--emit", "typst", s(out)],
            why,
            &[&deal, &csv],
        );
        assert!(!pdf.exists());
    }
    // A house-style file is an input too.
    let style = d.join("style");
    std::fs::create_dir(&style).unwrap();
    let memo_template = style.join("memo.typ.j2");
    std::fs::write(&memo_template, candor::report::BUILTIN_TEMPLATES[0].1).unwrap();
    assert_refused(
        &[
            "memo",
            s(&deal),
            "--templates",
            s(&style),
            "-o",
            s(&memo_template),
        ],
        why,
        &[&memo_template],
    );
    // The refusal leaves no probe or temporary file behind.
    assert_eq!(leftovers(d), Vec::<String>::new());
}

/// Only a regular file or a new path is written: a symbolic link (here to the standard
/// output), a FIFO and, as root, a character device are refused and left as they were.
#[cfg(unix)]
#[test]
fn a_link_fifo_or_device_is_never_a_destination() {
    use std::os::unix::fs::FileTypeExt as _;
    let (dir, deal) = deal_folder();
    let d = dir.path();
    let link = d.join("out.pdf");
    std::os::unix::fs::symlink("/proc/self/fd/1", &link).unwrap();
    let why = "is a symbolic link";
    assert_refused(&["memo", s(&deal), "-o", s(&link)], why, &[]);
    assert_refused(&["pack", s(&deal), "-o", s(&link)], why, &[]);
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());

    let fifo = d.join("pipe.pdf");
    let made = Command::new("mkfifo").arg(&fifo).status();
    if made.is_ok_and(|s| s.success()) {
        assert_refused(&["memo", s(&deal), "-o", s(&fifo)], "is a named pipe", &[]);
        assert!(std::fs::symlink_metadata(&fifo)
            .unwrap()
            .file_type()
            .is_fifo());
    }
    // mknod needs root; /dev/null itself is never offered as a destination here.
    let null = d.join("null");
    let made = is_root()
        && Command::new("mknod")
            .args([s(&null), "c", "1", "3"])
            .status()
            .is_ok_and(|s| s.success());
    if made {
        assert_refused(
            &["memo", s(&deal), "-o", s(&null)],
            "is a character device",
            &[],
        );
        assert_refused(
            &["pack", s(&deal), "-o", s(&null)],
            "is a character device",
            &[],
        );
        assert!(std::fs::symlink_metadata(&null)
            .unwrap()
            .file_type()
            .is_char_device());
    } else {
        eprintln!("skipped the character device: mknod needs root");
    }
    assert_eq!(leftovers(d), Vec::<String>::new());
}
