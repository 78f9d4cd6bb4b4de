//! Reading inside an archive, where nothing is followed blindly: a path is read only
//! when every part of it below the folder it is read from is a real folder and its
//! last part a regular file (no symbolic link, FIFO, device or socket), and never more
//! than a stated number of bytes. Folders are listed without following links, each
//! entry with what it is, so `verify` can report what does not belong.

use std::io::Read as _;
use std::path::{Component, Path};

/// What an entry of a folder is, read without following a symbolic link.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum EntryKind {
    /// A regular file.
    File,
    /// A folder.
    Folder,
    /// A symbolic link (to anything, or to nothing).
    Link,
    /// A named pipe.
    Fifo,
    /// A character or block device.
    Device,
    /// A socket.
    Socket,
    /// Anything else the system has.
    Other,
}

impl EntryKind {
    /// The entry's kind of a file system's metadata, read with `symlink_metadata`.
    pub fn of(meta: &std::fs::Metadata) -> EntryKind {
        let t = meta.file_type();
        if t.is_symlink() {
            return EntryKind::Link;
        }
        if t.is_dir() {
            return EntryKind::Folder;
        }
        if t.is_file() {
            return EntryKind::File;
        }
        #[cfg(unix)]
        {
            use std::os::unix::fs::FileTypeExt as _;
            if t.is_fifo() {
                return EntryKind::Fifo;
            }
            if t.is_char_device() || t.is_block_device() {
                return EntryKind::Device;
            }
            if t.is_socket() {
                return EntryKind::Socket;
            }
        }
        EntryKind::Other
    }

    /// The kind of the entry at `path` itself (a link is not followed).
    pub fn at(path: &Path) -> std::io::Result<EntryKind> {
        std::fs::symlink_metadata(path).map(|m| EntryKind::of(&m))
    }

    /// Words for the kind, after "is": `a symbolic link`, `a FIFO (named pipe)`, ...
    pub fn words(self) -> &'static str {
        match self {
            EntryKind::File => "a file",
            EntryKind::Folder => "a folder",
            EntryKind::Link => "a symbolic link",
            EntryKind::Fifo => "a FIFO (named pipe)",
            EntryKind::Device => "a device",
            EntryKind::Socket => "a socket",
            EntryKind::Other => "not a regular file",
        }
    }
}

/// Why a strict read failed.
#[derive(Debug)]
pub(crate) enum StrictError {
    /// The path, or a folder on the way to it (by its path relative to the base), is
    /// not what it should be.
    Kind {
        /// The part of the path that is wrong, relative to the base folder.
        at: String,
        /// What it is.
        kind: EntryKind,
    },
    /// The path is not a plain relative path (`..`, a root, empty).
    NotPlain,
    /// Larger than the bound.
    TooLarge {
        /// Its size when it was looked at, or at least the bound plus one.
        bytes: u64,
        /// The bound.
        limit: u64,
    },
    /// The system refused (not found, permission, ...).
    Io(std::io::Error),
}

impl StrictError {
    /// The reason as words, after the path: `is a symbolic link`, `is missing`, ...
    pub fn words(&self) -> String {
        match self {
            StrictError::Kind { at, kind } if at.is_empty() => {
                format!("is {}, not a regular file", kind.words())
            }
            StrictError::Kind { at, kind } => {
                format!("cannot be read: `{at}` on its way is {}", kind.words())
            }
            StrictError::NotPlain => "is not a plain path inside the folder".to_string(),
            StrictError::TooLarge { bytes, limit } => {
                format!("is {bytes} bytes or more, over the {limit} bytes candor reads of it")
            }
            StrictError::Io(e) if e.kind() == std::io::ErrorKind::NotFound => {
                "is missing".to_string()
            }
            StrictError::Io(e) => format!("cannot be read: {}", super::output::cause(e)),
        }
    }
}

/// Reads `rel` (a plain relative path, `/`-separated) inside `base`: every folder on
/// the way must be a real folder and the file a regular file, checked without
/// following links before it is opened (so a FIFO is never opened and cannot make the
/// read wait), opened without following a link and without waiting, checked again once
/// open, and read to at most `limit` bytes.
pub(crate) fn read_inside(base: &Path, rel: &str, limit: u64) -> Result<Vec<u8>, StrictError> {
    let mut parts = Vec::new();
    for c in Path::new(rel).components() {
        match c {
            Component::Normal(p) => parts.push(p),
            Component::CurDir => {}
            _ => return Err(StrictError::NotPlain),
        }
    }
    let Some((last, folders)) = parts.split_last() else {
        return Err(StrictError::NotPlain);
    };
    let mut path = base.to_path_buf();
    let mut shown = String::new();
    for folder in folders {
        path.push(folder);
        if !shown.is_empty() {
            shown.push('/');
        }
        shown.push_str(&folder.to_string_lossy());
        let kind = EntryKind::at(&path).map_err(StrictError::Io)?;
        if kind != EntryKind::Folder {
            return Err(StrictError::Kind { at: shown, kind });
        }
    }
    path.push(last);
    read_file(&path, limit)
}

/// Reads the regular file at `path` (its last part not followed if a link), at most
/// `limit` bytes, without ever opening a FIFO or a device.
pub(crate) fn read_file(path: &Path, limit: u64) -> Result<Vec<u8>, StrictError> {
    read_regular(path, limit, false)
}

/// Reads a file a user named outside any archive (a key, an allowed-signers file): a
/// link to it is followed, but what it leads to must be a regular file, opened without
/// waiting and read to at most `limit` bytes.
pub(crate) fn read_named(path: &Path, limit: u64) -> Result<Vec<u8>, StrictError> {
    read_regular(path, limit, true)
}

fn read_regular(path: &Path, limit: u64, follow: bool) -> Result<Vec<u8>, StrictError> {
    let meta = if follow {
        std::fs::metadata(path)
    } else {
        std::fs::symlink_metadata(path)
    }
    .map_err(StrictError::Io)?;
    let kind = EntryKind::of(&meta);
    if kind != EntryKind::File {
        return Err(StrictError::Kind {
            at: String::new(),
            kind,
        });
    }
    if meta.len() > limit {
        return Err(StrictError::TooLarge {
            bytes: meta.len(),
            limit,
        });
    }
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt as _;
        // Swapped for a link or a pipe after the look above: refused, not waited on.
        let no_follow = if follow { 0 } else { libc::O_NOFOLLOW };
        options.custom_flags(no_follow | libc::O_NONBLOCK);
    }
    let file = options.open(path).map_err(StrictError::Io)?;
    let open_kind = EntryKind::of(&file.metadata().map_err(StrictError::Io)?);
    if open_kind != EntryKind::File {
        return Err(StrictError::Kind {
            at: String::new(),
            kind: open_kind,
        });
    }
    let mut bytes = Vec::new();
    file.take(limit.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(StrictError::Io)?;
    if bytes.len() as u64 > limit {
        return Err(StrictError::TooLarge {
            bytes: bytes.len() as u64,
            limit,
        });
    }
    Ok(bytes)
}

/// The entries of a folder, by name (sorted), each with its kind; links not followed.
pub fn entries(dir: &Path) -> std::io::Result<Vec<(String, EntryKind)>> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(dir)? {
        let entry = entry?;
        let name = entry.file_name().to_string_lossy().to_string();
        let kind = EntryKind::at(&entry.path())?;
        out.push((name, kind));
    }
    out.sort();
    Ok(out)
}

/// Every entry under `dir` at any depth, as (`/`-joined path relative to `dir`, kind),
/// sorted; real folders are entered, links are listed and never followed.
pub fn tree(dir: &Path) -> std::io::Result<Vec<(String, EntryKind)>> {
    let mut out = Vec::new();
    walk(dir, "", &mut out)?;
    out.sort();
    Ok(out)
}

fn walk(dir: &Path, prefix: &str, out: &mut Vec<(String, EntryKind)>) -> std::io::Result<()> {
    for (name, kind) in entries(dir)? {
        let rel = if prefix.is_empty() {
            name.clone()
        } else {
            format!("{prefix}/{name}")
        };
        if kind == EntryKind::Folder {
            walk(&dir.join(&name), &rel, out)?;
        }
        out.push((rel, kind));
    }
    Ok(())
}

#[cfg(all(test, unix))]
mod tests {
    use super::*;

    #[test]
    fn links_pipes_and_large_files_are_refused_without_waiting() {
        let dir = tempfile::tempdir().expect("temp dir");
        let d = dir.path();
        std::fs::write(d.join("a.txt"), b"hello").expect("write");
        std::fs::create_dir(d.join("sub")).expect("mkdir");
        std::fs::write(d.join("sub/b.txt"), b"inner").expect("write");
        std::os::unix::fs::symlink(d.join("a.txt"), d.join("link.txt")).expect("link");
        std::os::unix::fs::symlink(d.join("sub"), d.join("linked")).expect("link");
        let fifo = d.join("pipe");
        let made = std::process::Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .expect("mkfifo runs");
        assert!(made.success());

        assert_eq!(read_inside(d, "a.txt", 100).expect("read"), b"hello");
        assert_eq!(read_inside(d, "sub/b.txt", 100).expect("read"), b"inner");
        let words = |r: Result<Vec<u8>, StrictError>| r.expect_err("refused").words();
        assert_eq!(
            words(read_inside(d, "link.txt", 100)),
            "is a symbolic link, not a regular file"
        );
        assert_eq!(
            words(read_inside(d, "linked/b.txt", 100)),
            "cannot be read: `linked` on its way is a symbolic link"
        );
        // A FIFO with no writer would block an open(2) without O_NONBLOCK forever.
        assert_eq!(
            words(read_inside(d, "pipe", 100)),
            "is a FIFO (named pipe), not a regular file"
        );
        assert!(matches!(
            read_inside(d, "a.txt", 4),
            Err(StrictError::TooLarge { bytes: 5, limit: 4 })
        ));
        assert!(matches!(
            read_inside(d, "../a.txt", 4),
            Err(StrictError::NotPlain)
        ));
        assert_eq!(words(read_inside(d, "none", 4)), "is missing");
        let kinds = tree(d).expect("tree");
        assert_eq!(
            kinds,
            vec![
                ("a.txt".to_string(), EntryKind::File),
                ("link.txt".to_string(), EntryKind::Link),
                ("linked".to_string(), EntryKind::Link),
                ("pipe".to_string(), EntryKind::Fifo),
                ("sub".to_string(), EntryKind::Folder),
                ("sub/b.txt".to_string(), EntryKind::File),
            ]
        );
    }
}
