//! `candor memo --watch`: build the memo, then poll the deal file and its CSV files and
//! rebuild whenever one of them changes. Bad input is reported and the watch goes on;
//! only Ctrl-C (or a signal) ends it.
//!
//! Polling by modification time, size and file number needs no dependency and works on
//! every file system, including network shares where change notifications are
//! unreliable. The files are looked at every [`POLL_INTERVAL`] (a `stat` call each, a
//! few microseconds); a change is built once the files have held still for
//! [`SETTLE`], so that a save in progress is not read half-written. A save that
//! pauses longer than that mid-write is read half-written at worst: that build reports
//! the problem, and the rest of the save is a change of its own, built in turn. The
//! stamps are taken before a build reads the files, so a save during a build is built
//! after it. The fonts and typst's memoised layout stay in the process between builds
//! (see `pdf`), so a rebuild costs little more than the typesetting of what changed.

use crate::cli::MemoArgs;
use crate::files::load::load_deal;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant, SystemTime};

/// How often the files are looked at.
pub(crate) const POLL_INTERVAL: Duration = Duration::from_millis(15);

/// How long the files must hold still after a change before they are read.
pub(crate) const SETTLE: Duration = Duration::from_millis(15);

/// What is known of one watched file: its modification time, size and file number
/// (an editor that saves by writing a new file and renaming it over the old one
/// changes the number), or `None` when it cannot be read (an editor may delete and
/// recreate it while saving).
pub(crate) type Stamp = Option<(SystemTime, u64, u64)>;

/// The stamps of the given files, in order.
pub fn stamps(paths: &[PathBuf]) -> Vec<Stamp> {
    paths
        .iter()
        .map(|p| {
            std::fs::metadata(p).ok().map(|m| {
                (
                    m.modified().unwrap_or(SystemTime::UNIX_EPOCH),
                    m.len(),
                    file_number(&m),
                )
            })
        })
        .collect()
}

#[cfg(unix)]
fn file_number(m: &std::fs::Metadata) -> u64 {
    std::os::unix::fs::MetadataExt::ino(m)
}

#[cfg(not(unix))]
fn file_number(_: &std::fs::Metadata) -> u64 {
    0
}

/// The files a deal reads: the deal file itself and the CSV files it names. When the
/// deal cannot be loaded the CSV files are unknown, and `previous` is kept so that a
/// CSV edit still counts while the deal file is being fixed.
pub fn watched_files(deal: &Path, previous: &[PathBuf]) -> Vec<PathBuf> {
    match load_deal(deal) {
        Ok(loaded) => loaded.files(),
        Err(_) if !previous.is_empty() => previous.to_vec(),
        Err(_) => vec![deal.to_path_buf()],
    }
}

/// Polls `files()` every `interval` and calls `rebuild` once the stamps have changed
/// and then held still for `settle`. Returns after `max_rebuilds` rebuilds, or never
/// when it is `None`. `files` is asked again after every rebuild, since an edit may name
/// other CSV files.
pub(crate) fn watch_loop(
    files: &mut dyn FnMut() -> Vec<PathBuf>,
    rebuild: &mut dyn FnMut(),
    interval: Duration,
    settle: Duration,
    max_rebuilds: Option<usize>,
) {
    let mut paths = files();
    let mut seen = stamps(&paths);
    let mut rebuilds = 0usize;
    loop {
        if max_rebuilds.is_some_and(|m| rebuilds >= m) {
            return;
        }
        std::thread::sleep(interval);
        let mut settled = stamps(&paths);
        if settled == seen {
            continue;
        }
        // Wait until the files have not changed for `settle` before reading them.
        let mut still_since = Instant::now();
        loop {
            std::thread::sleep(interval.min(settle));
            let again = stamps(&paths);
            if again != settled {
                settled = again;
                still_since = Instant::now();
            } else if still_since.elapsed() >= settle {
                break;
            }
        }
        rebuild();
        rebuilds += 1;
        let now = files();
        // What the build read is what `settled` describes; a save during the build
        // differs from it and is built next.
        seen = if now == paths { settled } else { stamps(&now) };
        paths = now;
    }
}

/// Runs `candor memo --watch`: one build, then a rebuild after every change. Never
/// returns on bad input; the process ends with Ctrl-C.
pub fn run(args: &MemoArgs) -> u8 {
    let once = MemoArgs {
        file: args.file.clone(),
        output: args.output.clone(),
        templates: args.templates.clone(),
        emit: args.emit.clone(),
        archive: None,
        watch: false,
        rename: false,
    };
    let build = || {
        let code = super::memo::run(&once);
        if code != super::EXIT_OK {
            eprintln!(
                "watching {}: fix the problems above and save again",
                args.file.display()
            );
        }
    };
    build();
    eprintln!(
        "watching {} and the files it reads (Ctrl-C to stop)",
        args.file.display()
    );
    let mut known: Vec<PathBuf> = Vec::new();
    let mut files = || {
        known = watched_files(&args.file, &known);
        known.clone()
    };
    let mut rebuild = || {
        eprintln!("change seen, rebuilding");
        build();
    };
    watch_loop(&mut files, &mut rebuild, POLL_INTERVAL, SETTLE, None);
    super::EXIT_OK
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A change to a watched file causes exactly one rebuild per settled change.
    #[test]
    fn a_change_triggers_a_rebuild() {
        let dir = tempfile::tempdir().expect("tempdir");
        let file = dir.path().join("deal.yaml");
        std::fs::write(&file, "a").expect("write");
        let writer_path = file.clone();
        let writer = std::thread::spawn(move || {
            std::thread::sleep(Duration::from_millis(60));
            std::fs::write(&writer_path, "a longer text").expect("write");
        });
        let mut count = 0;
        let watched = file.clone();
        watch_loop(
            &mut || vec![watched.clone()],
            &mut || count += 1,
            Duration::from_millis(20),
            Duration::from_millis(20),
            Some(1),
        );
        writer.join().expect("writer");
        assert_eq!(count, 1);
    }

    /// A save made while a build runs is built after it: the stamps that count as
    /// built are the ones taken before the build read the files.
    #[test]
    fn a_save_during_a_build_is_built_next() {
        let dir = tempfile::tempdir().expect("tempdir");
        let file = dir.path().join("deal.yaml");
        std::fs::write(&file, "a").expect("write");
        let (done, finished) = std::sync::mpsc::channel();
        let watched = file.clone();
        let writer_path = file.clone();
        std::thread::spawn(move || {
            let mut builds = 0;
            let mut rebuild = || {
                builds += 1;
                if builds == 1 {
                    // The save lands while the first build runs.
                    std::fs::write(&writer_path, "a longer text").expect("write");
                }
            };
            watch_loop(
                &mut || vec![watched.clone()],
                &mut rebuild,
                Duration::from_millis(5),
                Duration::from_millis(5),
                Some(2),
            );
            let _ = done.send(());
        });
        std::thread::sleep(Duration::from_millis(50));
        std::fs::write(&file, "ab").expect("write");
        assert!(
            finished.recv_timeout(Duration::from_secs(20)).is_ok(),
            "the save made during the first build was never built"
        );
    }

    /// A file that disappears and comes back counts as a change, not an error.
    #[test]
    fn a_missing_file_is_a_change_not_an_error() {
        let dir = tempfile::tempdir().expect("tempdir");
        let file = dir.path().join("deal.yaml");
        assert_eq!(stamps(std::slice::from_ref(&file)), vec![None]);
        std::fs::write(&file, "abc").expect("write");
        let s = stamps(std::slice::from_ref(&file));
        assert_eq!(s[0].map(|(_, len, _)| len), Some(3));
    }
}
