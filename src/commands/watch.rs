//! `candor memo --watch`: build the memo, then poll the deal file and its CSV files and
//! rebuild whenever one of them changes. Bad input is reported and the watch goes on;
//! only Ctrl-C (or a signal) ends it.
//!
//! Polling by modification time and size needs no dependency and works on every file
//! system, including network shares where change notifications are unreliable.

use crate::cli::MemoArgs;
use crate::files::load::load_deal;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

/// How often the files are looked at.
pub(crate) const POLL_INTERVAL: Duration = Duration::from_millis(300);

/// What is known of one watched file: its modification time and size, or `None` when
/// it cannot be read (an editor may delete and recreate it while saving).
pub(crate) type Stamp = Option<(SystemTime, u64)>;

/// The stamps of the given files, in order.
pub fn stamps(paths: &[PathBuf]) -> Vec<Stamp> {
    paths
        .iter()
        .map(|p| {
            std::fs::metadata(p)
                .ok()
                .map(|m| (m.modified().unwrap_or(SystemTime::UNIX_EPOCH), m.len()))
        })
        .collect()
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
/// and then held still for one interval (so that a save in progress is not read
/// half-written). Returns after `max_rebuilds` rebuilds, or never when it is `None`.
/// `files` is asked again after every rebuild, since an edit may name other CSV files.
pub(crate) fn watch_loop(
    files: &mut dyn FnMut() -> Vec<PathBuf>,
    rebuild: &mut dyn FnMut(),
    interval: Duration,
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
        let now = stamps(&paths);
        if now == seen {
            continue;
        }
        // Wait until the files stop changing before reading them.
        let mut settled = now;
        loop {
            std::thread::sleep(interval);
            let again = stamps(&paths);
            if again == settled {
                break;
            }
            settled = again;
        }
        rebuild();
        rebuilds += 1;
        paths = files();
        seen = stamps(&paths);
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
    watch_loop(&mut files, &mut rebuild, POLL_INTERVAL, None);
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
            Some(1),
        );
        writer.join().expect("writer");
        assert_eq!(count, 1);
    }

    /// A file that disappears and comes back counts as a change, not an error.
    #[test]
    fn a_missing_file_is_a_change_not_an_error() {
        let dir = tempfile::tempdir().expect("tempdir");
        let file = dir.path().join("deal.yaml");
        assert_eq!(stamps(std::slice::from_ref(&file)), vec![None]);
        std::fs::write(&file, "abc").expect("write");
        let s = stamps(std::slice::from_ref(&file));
        assert_eq!(s[0].map(|(_, len)| len), Some(3));
    }
}
