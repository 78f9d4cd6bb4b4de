//! Getting output files onto disk without ever losing an earlier one: the atomic writer
//! every command uses, the checks made on a destination before any work is done, plain
//! messages for write failures (missing folder, read-only folder, full disk), the
//! removal of unfinished files on Ctrl-C or termination, and the sweep of temporary
//! files that a killed run left behind.
//!
//! A file appears at its destination only complete: it is written to a temporary file
//! `.candor-<process id>-<random>.part` in the same folder, synced, and renamed over
//! the destination. The writer holds a kernel lock on the temporary file while it
//! writes, and the process id is in the name: a later run removes a file only when
//! nobody holds its lock and its process has ended.

use crate::diag::{Diagnostic, Failure, FailureClass};
use std::fs::File;
use std::io::{self, ErrorKind, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Mutex, MutexGuard, Once};

/// Test-only hook (an environment variable, not part of the user interface): when it
/// holds a number of seconds, [`Disk`] writes half of each file, syncs it and sleeps that
/// long before writing the rest, so that a test can kill candor in the middle of a
/// write. See DEVELOPERS.md, "Fault tests".
pub const PAUSE_HOOK: &str = "CANDOR_TEST_PAUSE_MID_WRITE";

#[cfg(not(unix))]
/// Exit code after Ctrl-C (128 + SIGINT, as shells report it). SIGTERM and SIGHUP
/// give 128 plus their own numbers (143 and 129), so a script or service manager can
/// tell what stopped candor; where signals have no numbers, every stop gives this one.
pub(crate) const EXIT_INTERRUPTED: i32 = 130;

/// How bytes reach an open file. [`Disk`] is the real thing; tests put in their own
/// sink to make a write fail the way a full disk does, at a chosen byte.
pub trait Sink {
    /// Writes all of `bytes` to `file` and makes them durable.
    fn put(&mut self, file: &mut File, bytes: &[u8]) -> io::Result<()>;
}

/// Writes to the file system and syncs.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct Disk;

impl Sink for Disk {
    fn put(&mut self, file: &mut File, bytes: &[u8]) -> io::Result<()> {
        let pause = std::env::var(PAUSE_HOOK)
            .ok()
            .and_then(|s| s.trim().parse::<u64>().ok());
        if let Some(seconds) = pause {
            let half = bytes.len() / 2;
            file.write_all(&bytes[..half])?;
            file.sync_all()?;
            std::thread::sleep(std::time::Duration::from_secs(seconds));
            file.write_all(&bytes[half..])?;
        } else {
            file.write_all(bytes)?;
        }
        file.sync_all()
    }
}

/// The folder a file is written in (`.` for a bare file name).
pub(crate) fn folder_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn temp_prefix() -> String {
    format!(".candor-{}-", std::process::id())
}

/// The cause of an I/O error in plain words.
pub fn cause(e: &io::Error) -> String {
    // ENOSPC and EDQUOT (Linux numbers) also arrive through paths that do not map them.
    if e.kind() == ErrorKind::StorageFull || matches!(e.raw_os_error(), Some(28 | 122)) {
        return "the disk is full".to_string();
    }
    match e.kind() {
        ErrorKind::PermissionDenied => "permission denied".to_string(),
        ErrorKind::ReadOnlyFilesystem => "the file system is read-only".to_string(),
        ErrorKind::NotFound => "its folder does not exist".to_string(),
        ErrorKind::IsADirectory => "a folder of that name is in the way".to_string(),
        ErrorKind::NotADirectory => "a part of the path is a file, not a folder".to_string(),
        _ => e.to_string(),
    }
}

fn hint_for(e: &io::Error, option: &str) -> String {
    match cause(e).as_str() {
        "the disk is full" => {
            format!("free some space on that disk, or write elsewhere with `{option}`")
        }
        "permission denied" | "the file system is read-only" => {
            format!("write to a folder you may write in with `{option}`, or ask for write access")
        }
        _ => format!("check the path, or write elsewhere with `{option}`"),
    }
}

/// What is at a path, in words, when it is neither a regular file nor a folder.
fn special_kind(file_type: &std::fs::FileType) -> Option<&'static str> {
    if file_type.is_symlink() {
        return Some("a symbolic link");
    }
    if file_type.is_file() || file_type.is_dir() {
        return None;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt as _;
        if file_type.is_char_device() {
            return Some("a character device");
        }
        if file_type.is_block_device() {
            return Some("a block device");
        }
        if file_type.is_fifo() {
            return Some("a named pipe (FIFO)");
        }
        if file_type.is_socket() {
            return Some("a socket");
        }
    }
    Some("not a regular file")
}

/// True when two metadata describe the same file: the same device and inode (on Unix),
/// however the paths are spelt (links, `./`, `..`).
#[cfg(unix)]
fn same_file(a: &std::fs::Metadata, b: &std::fs::Metadata) -> bool {
    use std::os::unix::fs::MetadataExt as _;
    a.dev() == b.dev() && a.ino() == b.ino()
}

/// Elsewhere, the same canonical path.
#[cfg(not(unix))]
fn same_file_path(a: &Path, b: &Path) -> bool {
    matches!((a.canonicalize(), b.canonicalize()), (Ok(x), Ok(y)) if x == y)
}

/// Why `path` must not be written: it is not a regular file or a new path (a symbolic
/// link, a device, a FIFO, a socket), or it is one of `inputs`, the files the run
/// reads (compared by device and inode). `None` when it may be written.
fn refusal(path: &Path, inputs: &[PathBuf]) -> Option<(String, String)> {
    let meta = std::fs::symlink_metadata(path).ok()?;
    if let Some(kind) = special_kind(&meta.file_type()) {
        return Some((
            format!(
                "`{}` is {kind}; candor writes only to a regular file or a new path",
                path.display()
            ),
            "give the path of a regular file, or of a file that does not exist yet".to_string(),
        ));
    }
    if !meta.is_file() {
        return None;
    }
    for input in inputs {
        #[cfg(unix)]
        let same = std::fs::metadata(input).is_ok_and(|m| same_file(&meta, &m));
        #[cfg(not(unix))]
        let same = same_file_path(path, input);
        if same {
            let also = if input.as_path() == path {
                String::new()
            } else {
                format!(" (as `{}`)", input.display())
            };
            return Some((
                format!(
                    "`{}` is a file this run reads{also}: writing there would replace it",
                    path.display(),
                ),
                "write to another path".to_string(),
            ));
        }
    }
    None
}

/// Refuses, with nothing written, a destination that is one of `inputs` (the files the
/// run reads, compared by device and inode) or that is not a regular file or a new
/// path (see [`check_destination`]).
pub(crate) fn refuse_inputs(
    path: &Path,
    what: &str,
    option: &str,
    inputs: &[PathBuf],
) -> Result<(), Failure> {
    match refusal(path, inputs) {
        None => Ok(()),
        Some((message, hint)) => Err(Failure::invalid(
            Diagnostic::error("write", format!("cannot write the {what}: {message}"))
                .in_file(path.display().to_string())
                .with_hint(format!("{hint}, with `{option}`")),
        )),
    }
}

/// Checks, before any work is done, that `what` (for example "memo") can be written at
/// `path`: it is a regular file or a new path (not a symbolic link, device, FIFO or
/// socket), not one of `inputs` (every file the run reads: deal files, their CSV
/// files, templates; compared by device and inode, not by spelling), its folder exists
/// and is a folder, the path is not a folder, and a file can be created in the folder
/// (a probe file, removed at once). `option` is how the user chooses another path,
/// named in the hint.
pub(crate) fn check_destination(
    path: &Path,
    what: &str,
    option: &str,
    inputs: &[PathBuf],
) -> Result<(), Failure> {
    refuse_inputs(path, what, option, inputs)?;
    let folder = folder_of(path);
    let shown = path.display().to_string();
    let fail = |message: String, hint: String, class: FailureClass| {
        Failure::many(
            vec![
                Diagnostic::error("write", format!("cannot write the {what}: {message}"))
                    .in_file(shown.clone())
                    .with_hint(hint),
            ],
            class,
        )
    };
    match std::fs::metadata(&folder) {
        Err(e) if e.kind() == ErrorKind::NotFound => {
            return Err(fail(
                format!("the folder `{}` does not exist", folder.display()),
                format!(
                    "create it first (`mkdir -p {}`), or write elsewhere with `{option}`",
                    folder.display()
                ),
                FailureClass::Invalid,
            ))
        }
        Err(e) => {
            return Err(fail(
                format!(
                    "the folder `{}` cannot be read: {}",
                    folder.display(),
                    cause(&e)
                ),
                hint_for(&e, option),
                FailureClass::Internal,
            ))
        }
        Ok(m) if !m.is_dir() => {
            return Err(fail(
                format!("`{}` is a file, not a folder", folder.display()),
                format!("write inside a folder with `{option}`"),
                FailureClass::Internal,
            ))
        }
        Ok(_) => {}
    }
    if path.is_dir() {
        return Err(fail(
            format!("`{shown}` is a folder"),
            format!("give a file name, such as `{option} {shown}/{what}.pdf`"),
            FailureClass::Internal,
        ));
    }
    // Permission bits do not tell the whole story (root, access lists, read-only
    // mounts): only creating a file does.
    match tempfile::Builder::new()
        .prefix(&temp_prefix())
        .suffix(".part")
        .tempfile_in(&folder)
    {
        Ok(probe) => {
            let _ = probe.close();
            Ok(())
        }
        Err(e) => Err(fail(
            format!(
                "cannot create a file in `{}`: {}",
                folder.display(),
                cause(&e)
            ),
            hint_for(&e, option),
            FailureClass::Internal,
        )),
    }
}

/// Writes `bytes` to `path` through a temporary file in the same folder, so the file
/// appears only when complete; on any failure, and on Ctrl-C, the temporary file is
/// removed and whatever was at `path` before is left as it was.
pub(crate) fn write_atomically_with(
    path: &Path,
    bytes: &[u8],
    sink: &mut dyn Sink,
) -> io::Result<()> {
    write_atomically_by(path, &mut |file| sink.put(file, bytes))
}

/// [`write_atomically_with`] with the temporary file filled by `fill`, which must
/// write everything and make it durable.
fn write_atomically_by(
    path: &Path,
    fill: &mut dyn FnMut(&mut File) -> io::Result<()>,
) -> io::Result<()> {
    let folder = folder_of(path);
    let mut tmp = tempfile::Builder::new()
        .prefix(&temp_prefix())
        .suffix(".part")
        .tempfile_in(&folder)?;
    // Held until the file is renamed or removed, so that another run's sweep of
    // leftovers never takes a file being written for one (the kernel drops the lock
    // when this process ends, however it ends).
    tmp.as_file().lock()?;
    let pending = Unfinished::register(tmp.path(), UnfinishedKind::File, path);
    let written = fill(tmp.as_file_mut()).and_then(|()| {
        // A temporary file is private (0600); the output is an ordinary document.
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt as _;
            std::fs::set_permissions(tmp.path(), std::fs::Permissions::from_mode(0o644))?;
        }
        Ok(())
    });
    if let Err(e) = written {
        // The file goes before its registration, so an interruption in between still
        // finds it.
        drop(tmp);
        drop(pending);
        return Err(e);
    }
    pending.finish(|| tmp.persist(path).map(|_| ()).map_err(|e| e.error))?;
    // Make the rename itself durable (best effort: not every system opens folders).
    if let Ok(dir) = File::open(&folder) {
        let _ = dir.sync_all();
    }
    Ok(())
}

/// [`write_atomically_with`] to the real disk, with a message naming what happened,
/// the file and what to do when it fails. `what` names the file for the reader ("memo"),
/// `option` how to choose another path.
pub(crate) fn write_output(
    path: &Path,
    bytes: &[u8],
    what: &str,
    option: &str,
    sink: &mut dyn Sink,
) -> Result<(), Failure> {
    // Checked again at the last moment: a device or link may have appeared meanwhile.
    refuse_inputs(path, what, option, &[])?;
    write_atomically_with(path, bytes, sink).map_err(|e| write_failure(path, what, option, &e))
}

/// [`write_output`] with the file's bytes written by `write` as they are made (a pack,
/// joined memo by memo), into the temporary file that becomes `path` once `write` has
/// finished. When `write` fails, nothing is left behind, and the failure is the one
/// [`write_output`] gives when the file itself could not be written (a full disk),
/// else `write`'s own.
pub(crate) fn write_output_with(
    path: &Path,
    what: &str,
    option: &str,
    write: &mut dyn FnMut(&mut dyn Write) -> Result<(), Failure>,
) -> Result<(), Failure> {
    refuse_inputs(path, what, option, &[])?;
    let mut failed = None;
    let written = write_atomically_by(path, &mut |file| {
        let mut recording = Recording { file, error: None };
        let made = write(&mut recording);
        if let Some(e) = recording.error {
            return Err(e);
        }
        match made {
            Ok(()) => file.sync_all(),
            Err(f) => {
                failed = Some(f);
                Err(io::Error::other("stopped"))
            }
        }
    });
    if let Some(f) = failed {
        return Err(f);
    }
    written.map_err(|e| write_failure(path, what, option, &e))
}

/// A file that keeps the first error writing to it, for the message.
struct Recording<'a> {
    file: &'a mut File,
    error: Option<io::Error>,
}

impl Write for Recording<'_> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.file.write(buf).inspect_err(|e| self.keep(e))
    }

    fn flush(&mut self) -> io::Result<()> {
        self.file.flush().inspect_err(|e| self.keep(e))
    }
}

impl Recording<'_> {
    fn keep(&mut self, e: &io::Error) {
        if self.error.is_none() {
            self.error = Some(io::Error::new(e.kind(), e.to_string()));
        }
    }
}

/// The failure to write `path`: what happened, the file and what to do.
fn write_failure(path: &Path, what: &str, option: &str, e: &io::Error) -> Failure {
    let class = if e.kind() == ErrorKind::NotFound {
        FailureClass::Invalid
    } else {
        FailureClass::Internal
    };
    Failure::many(
        vec![Diagnostic::error(
            "write",
            format!(
                "cannot write the {what}: {}; nothing was written, and a file already at \
                 this path is unchanged",
                cause(e)
            ),
        )
        .in_file(path.display().to_string())
        .with_hint(hint_for(e, option))],
        class,
    )
}

/// True when process `pid` is known to have ended: Linux `/proc` shows no such
/// process. Elsewhere nothing is known and the answer is false.
pub(crate) fn process_ended(pid: u32) -> bool {
    pid != std::process::id()
        && Path::new("/proc/self").exists()
        && !Path::new("/proc").join(pid.to_string()).exists()
}

/// True when a live candor run holds the kernel lock that every writer takes on its
/// temporary file (see [`write_atomically_with`]): the file is being written now.
fn held_by_a_writer(path: &Path) -> bool {
    match File::open(path) {
        Ok(f) => matches!(f.try_lock_shared(), Err(std::fs::TryLockError::WouldBlock)),
        Err(_) => false,
    }
}

/// Removes the temporary files that killed candor runs left in `folder`, and returns
/// one sentence per file removed or left (when its writer may still be running).
pub(crate) fn sweep_leftovers(folder: &Path) -> Vec<String> {
    let mut notes = Vec::new();
    let Ok(entries) = std::fs::read_dir(folder) else {
        return notes;
    };
    let mut names: Vec<String> = entries
        .filter_map(Result::ok)
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(".candor-") && n.ends_with(".part"))
        .collect();
    names.sort();
    for name in names {
        let path = folder.join(&name);
        let owner = name
            .trim_start_matches(".candor-")
            .split_once('-')
            .and_then(|(pid, _)| pid.parse::<u32>().ok());
        if owner == Some(std::process::id()) || held_by_a_writer(&path) {
            continue;
        }
        match owner {
            Some(pid) if process_ended(pid) => match std::fs::remove_file(&path) {
                Ok(()) => notes.push(format!(
                    "removed {}, an unfinished file left by candor process {pid}, which was \
                     stopped before it finished writing",
                    path.display()
                )),
                Err(e) => notes.push(format!(
                    "{} is an unfinished file left by candor process {pid}, which was stopped; \
                     it cannot be removed ({}): remove it by hand",
                    path.display(),
                    cause(&e)
                )),
            },
            _ => notes.push(format!(
                "{} looks like an unfinished file of another candor run; remove it if no \
                 candor is writing in this folder",
                path.display()
            )),
        }
    }
    notes
}

/// What an unfinished path is, for the clean-up after an interruption.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum UnfinishedKind {
    /// A temporary file about to be renamed over the destination.
    File,
    /// A folder being built into an archive version.
    Folder,
    /// An archive lock held by this process.
    Lock,
}

#[derive(Debug)]
struct Pending {
    id: u64,
    path: PathBuf,
    kind: UnfinishedKind,
    destination: PathBuf,
}

static PENDING: Mutex<Vec<Pending>> = Mutex::new(Vec::new());
static NEXT_ID: AtomicU64 = AtomicU64::new(0);

fn pending() -> MutexGuard<'static, Vec<Pending>> {
    PENDING
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// A path that must not outlive an interruption: registered while it exists
/// unfinished, removed by the interrupt handler, forgotten when dropped.
#[derive(Debug)]
pub(crate) struct Unfinished {
    id: u64,
}

impl Unfinished {
    /// Registers `path` (of `kind`, on its way to `destination`) for removal should
    /// candor be interrupted before [`Unfinished::finish`] or the guard is dropped.
    pub(crate) fn register(path: &Path, kind: UnfinishedKind, destination: &Path) -> Unfinished {
        let id = NEXT_ID.fetch_add(1, Ordering::Relaxed);
        pending().push(Pending {
            id,
            path: path.to_path_buf(),
            kind,
            destination: destination.to_path_buf(),
        });
        Unfinished { id }
    }

    /// Runs the step that completes the path (a rename), with the interrupt handler
    /// held off, and forgets the path: an interruption then finds either the
    /// unfinished path or the finished result, never a half-removed one.
    pub fn finish<R>(self, step: impl FnOnce() -> R) -> R {
        let mut list = pending();
        let out = step();
        list.retain(|p| p.id != self.id);
        out
    }
}

impl Drop for Unfinished {
    fn drop(&mut self) {
        pending().retain(|p| p.id != self.id);
    }
}

/// Installs, once per process, the handler that on Ctrl-C (SIGINT), SIGTERM or SIGHUP
/// removes every unfinished file and folder, then releases archive locks, says so,
/// and exits with 128 plus the signal's number ([`EXIT_INTERRUPTED`] for Ctrl-C).
pub(crate) fn clean_up_on_interrupt() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // Without a handler the default applies: candor stops, and the next run removes
        // or reports what was left.
        #[cfg(unix)]
        {
            // The signals are taken over inside the thread that answers them: should
            // the thread not start, they keep their default action instead of being
            // caught with no one to act on them. The caller waits until they are.
            use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
            let (ready, wait) = std::sync::mpsc::channel();
            let started = std::thread::Builder::new()
                .name("interrupt".to_string())
                .spawn(move || {
                    let signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP]);
                    let _ = ready.send(());
                    if let Some(number) = signals.ok().and_then(|mut s| s.forever().next()) {
                        on_interrupt(128 + number);
                    }
                });
            if started.is_ok() {
                let _ = wait.recv();
            }
        }
        #[cfg(not(unix))]
        {
            let _ = ctrlc::set_handler(|| on_interrupt(EXIT_INTERRUPTED));
        }
    });
}

fn on_interrupt(code: i32) {
    // Held until the process exits, so no rename can start during the clean-up.
    let list = pending();
    let mut lines = Vec::new();
    // Locks last: no other filer may start while a half-built version is still there.
    for p in list.iter().filter(|p| p.kind != UnfinishedKind::Lock) {
        let removed = match p.kind {
            UnfinishedKind::Folder => remove_folder(&p.path),
            _ => std::fs::remove_file(&p.path).or_else(|e| {
                if e.kind() == ErrorKind::NotFound {
                    Ok(())
                } else {
                    Err(e)
                }
            }),
        };
        let what = if p.kind == UnfinishedKind::Folder {
            "version being filed"
        } else {
            "file"
        };
        lines.push(match removed {
            Ok(()) => format!(
                "removed the unfinished {what} {}; {} is as it was before",
                p.path.display(),
                p.destination.display()
            ),
            Err(e) => format!(
                "could not remove the unfinished {what} {} ({}): remove it by hand",
                p.path.display(),
                cause(&e)
            ),
        });
    }
    for p in list.iter().filter(|p| p.kind == UnfinishedKind::Lock) {
        match std::fs::remove_file(&p.path) {
            Ok(()) => lines.push(format!("released the archive lock {}", p.path.display())),
            Err(e) => lines.push(format!(
                "could not release the archive lock {} ({}): remove it by hand",
                p.path.display(),
                cause(&e)
            )),
        }
    }
    let mut err = io::stderr().lock();
    if lines.is_empty() {
        // Between writes (while a memo is made, or `--watch` waits): nothing half-done.
        let _ = writeln!(err, "candor: interrupted");
    } else {
        let _ = writeln!(err, "candor: interrupted before it finished writing");
        for line in lines {
            let _ = writeln!(err, "  {line}");
        }
        let _ = writeln!(err, "  run the command again to finish");
    }
    std::process::exit(code);
}

/// Removes a folder that files may still be appearing in (the main thread may be
/// writing into it while the handler runs).
fn remove_folder(path: &Path) -> io::Result<()> {
    let mut last = Ok(());
    for _ in 0..5 {
        last = std::fs::remove_dir_all(path);
        match &last {
            Ok(()) => return Ok(()),
            Err(e) if e.kind() == ErrorKind::NotFound => return Ok(()),
            Err(_) => std::thread::sleep(std::time::Duration::from_millis(20)),
        }
    }
    last
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leftovers_of_a_dead_process_are_removed_and_others_reported() {
        if !Path::new("/proc/self").exists() {
            return;
        }
        let dir = tempfile::tempdir().unwrap();
        // Above Linux's largest process id (2^22), so no process has it.
        let dead = dir.path().join(".candor-4194305-abcdef.part");
        let mine = dir.path().join(format!("{}abcdef.part", temp_prefix()));
        let unknown = dir.path().join(".candor-abcdef.part");
        for p in [&dead, &mine, &unknown] {
            std::fs::write(p, "half").unwrap();
        }
        let notes = sweep_leftovers(dir.path());
        assert!(!dead.exists());
        assert!(mine.exists(), "this process's own file is being written");
        assert!(unknown.exists(), "a file of unknown owner is only reported");
        assert_eq!(notes.len(), 2, "{notes:?}");
        assert!(notes[0].contains("candor process 4194305"), "{notes:?}");
        assert!(
            notes[1].contains("remove it if no candor is writing"),
            "{notes:?}"
        );
    }

    #[test]
    fn a_finished_path_is_forgotten() {
        let count = || {
            pending()
                .iter()
                .filter(|p| p.path == Path::new("/x/a"))
                .count()
        };
        let a = Unfinished::register(Path::new("/x/a"), UnfinishedKind::File, Path::new("/x/b"));
        assert_eq!(count(), 1);
        a.finish(|| ());
        assert_eq!(count(), 0);
        let b = Unfinished::register(Path::new("/x/a"), UnfinishedKind::File, Path::new("/x/b"));
        drop(b);
        assert_eq!(count(), 0);
    }
}
