//! The lock that lets one filer at a time choose a deal's next version number: an
//! exclusive lock, taken through the kernel (`File::try_lock`), on `DIR/<deal>/.lock`.
//!
//! The kernel releases the lock when its holder ends, however it ends, so a filing
//! killed outright never holds up the next one. The holder writes its process number
//! into the file and removes the file before it lets go; a filer that takes the lock
//! and finds a number already there knows that its holder stopped without finishing,
//! and says so. A filer re-checks, once it holds the lock, that the path still names
//! the file it locked: another filer may have removed that file meanwhile.

use super::{archive_error, io_words};
use crate::diag::Diagnostic;
use crate::files::output::{Unfinished, UnfinishedKind};
use std::fs::{File, OpenOptions, TryLockError};
use std::io::{Read as _, Seek as _, Write as _};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// How long a filer waits for another to finish before giving up.
pub(super) const LOCK_WAIT: Duration = Duration::from_secs(120);

/// How long a filer sleeps between two tries.
const RETRY: Duration = Duration::from_millis(25);

/// An exclusive claim on a deal's folder, released (and its file removed) on drop, and
/// its file removed by the interrupt handler.
pub(super) struct ArchiveLock {
    path: PathBuf,
    file: File,
    _pending: Unfinished,
}

/// True when the open file and the path are one and the same file.
#[cfg(unix)]
fn same_file(file: &File, path: &Path) -> bool {
    use std::os::unix::fs::MetadataExt as _;
    match (file.metadata(), std::fs::metadata(path)) {
        (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
        _ => false,
    }
}

/// Elsewhere the file is checked to be still there.
#[cfg(not(unix))]
fn same_file(_file: &File, path: &Path) -> bool {
    path.is_file()
}

impl ArchiveLock {
    /// Takes the lock at `path`, waiting up to [`LOCK_WAIT`] for another filer to
    /// finish. When the file named a holder that stopped while filing, one sentence
    /// saying so goes to `notes`.
    pub(super) fn acquire(path: &Path, notes: &mut Vec<String>) -> Result<ArchiveLock, Diagnostic> {
        let started = Instant::now();
        let timed_out = || started.elapsed() > LOCK_WAIT;
        loop {
            if std::fs::symlink_metadata(path).is_ok_and(|m| !m.is_file()) {
                return Err(archive_error(
                    "the archive's lock is not a plain file (a folder or a link is in its place)",
                    path,
                )
                .with_hint("remove it; candor makes the lock file itself"));
            }
            let opened = OpenOptions::new()
                .read(true)
                .write(true)
                .create(true)
                .truncate(false)
                .open(path);
            let mut file = match opened {
                Ok(f) => f,
                // The deal's folder went between its creation and the lock: a first
                // filing that failed removed it, empty. Make it again.
                Err(e) if e.kind() == std::io::ErrorKind::NotFound && !timed_out() => {
                    if let Some(folder) = path.parent() {
                        std::fs::create_dir_all(folder).map_err(|e| {
                            archive_error(
                                format!("cannot create the archive folder: {}", io_words(&e)),
                                folder,
                            )
                        })?;
                    }
                    continue;
                }
                Err(e) => {
                    return Err(archive_error(
                        format!("cannot write in the archive folder: {}", io_words(&e)),
                        path,
                    ))
                }
            };
            match file.try_lock() {
                Ok(()) => {}
                Err(TryLockError::WouldBlock) => {
                    if timed_out() {
                        return Err(archive_error(
                            format!(
                                "another filing of this deal has held the lock for more than {} \
                                 seconds",
                                LOCK_WAIT.as_secs()
                            ),
                            path,
                        )
                        .with_hint(
                            "wait for the other filing to finish, then run the command again",
                        ));
                    }
                    std::thread::sleep(RETRY);
                    continue;
                }
                Err(TryLockError::Error(e)) => {
                    return Err(archive_error(
                        format!("cannot lock the archive: {}", io_words(&e)),
                        path,
                    ))
                }
            }
            // The holder before us removed the file just before letting go: this one is
            // no longer the lock. Try again with the file now at the path.
            if !same_file(&file, path) {
                continue;
            }
            let mut before = String::new();
            let _ = file.read_to_string(&mut before);
            if let Ok(pid) = before
                .split_whitespace()
                .next()
                .unwrap_or("")
                .parse::<u32>()
            {
                notes.push(format!(
                    "removed the lock {} left by candor process {pid}, which was stopped while \
                     filing",
                    path.display()
                ));
            }
            let written = file
                .set_len(0)
                .and_then(|()| file.rewind())
                .and_then(|()| writeln!(file, "{}", std::process::id()));
            if let Err(e) = written {
                return Err(archive_error(
                    format!("cannot write in the archive folder: {}", io_words(&e)),
                    path,
                ));
            }
            return Ok(ArchiveLock {
                path: path.to_path_buf(),
                file,
                _pending: Unfinished::register(path, UnfinishedKind::Lock, path),
            });
        }
    }
}

impl Drop for ArchiveLock {
    fn drop(&mut self) {
        // Removed while still held, so a waiter that then gets the old file sees that
        // the path no longer names it and tries again.
        let _ = std::fs::remove_file(&self.path);
        let _ = self.file.unlock();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_lock_makes_its_folder_again_when_a_failed_first_filing_removed_it() {
        let dir = tempfile::tempdir().unwrap();
        let deal_dir = dir.path().join("deal");
        // As if another filer's failed first filing removed the empty folder between
        // this filer's `create_dir_all` and its lock.
        let path = deal_dir.join(super::super::LOCK);
        let mut notes = Vec::new();
        let lock = ArchiveLock::acquire(&path, &mut notes).expect("the lock is taken");
        assert!(path.is_file() && notes.is_empty());
        drop(lock);
        assert!(!path.exists());
    }

    #[test]
    fn a_second_filer_waits_for_the_lock() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(super::super::LOCK);
        let first = ArchiveLock::acquire(&path, &mut Vec::new()).unwrap();
        let (tx, rx) = std::sync::mpsc::channel();
        let p2 = path.clone();
        let waiter = std::thread::spawn(move || {
            let second = ArchiveLock::acquire(&p2, &mut Vec::new())
                .map(|l| l.path.clone())
                .map_err(|d| d.message);
            tx.send(second).unwrap();
        });
        // The waiter cannot get the lock while the first holder keeps it.
        assert!(rx.recv_timeout(Duration::from_millis(200)).is_err());
        drop(first);
        let got = rx.recv_timeout(Duration::from_secs(10)).unwrap();
        assert_eq!(got, Ok(path.clone()));
        waiter.join().unwrap();
        assert!(!path.exists(), "the lock file is removed when released");
    }

    #[test]
    fn a_lock_file_left_by_a_stopped_filer_is_taken_and_named() {
        // The kernel released the lock of the process that wrote this file; only the
        // file remains.
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(super::super::LOCK);
        std::fs::write(&path, "4194305\n").unwrap();
        let mut notes = Vec::new();
        let lock = ArchiveLock::acquire(&path, &mut notes).unwrap();
        assert_eq!(notes.len(), 1, "{notes:?}");
        assert!(
            notes[0].contains("left by candor process 4194305, which was stopped"),
            "{notes:?}"
        );
        let held = std::fs::read_to_string(&path).unwrap();
        assert_eq!(held, format!("{}\n", std::process::id()));
        drop(lock);
        assert!(!path.exists());
    }

    #[test]
    fn a_lock_that_is_a_folder_is_reported_at_once() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(super::super::LOCK);
        std::fs::create_dir(&path).unwrap();
        let started = Instant::now();
        let err = ArchiveLock::acquire(&path, &mut Vec::new())
            .map(|_| ())
            .unwrap_err();
        assert!(started.elapsed() < Duration::from_secs(5));
        assert!(err.message.contains("not a plain file"), "{}", err.message);
    }
}
