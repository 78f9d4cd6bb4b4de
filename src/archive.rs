//! The archive: filing a memo as a numbered, never-modified version folder, and
//! verifying filed versions against their manifest, their recomputed figures and their
//! rebuilt PDF.
//!
//! Layout of `DIR/<deal-slug>/<version>/` (versions `001`, `002`, ...):
//!
//! | path | what |
//! | --- | --- |
//! | `<deal-slug>.pdf` | the memo |
//! | `inputs/<deal file>` | the exact bytes of the deal file |
//! | `inputs/<csv>` | every CSV the deal reads, at its path relative to the deal file |
//! | `templates/<name>.j2` | the house style, when one replaced built-in templates |
//! | `analysis.json` | the engine's analysis, pretty JSON |
//! | `manifest.json` | every file above with its SHA-256, versions, times, sign-off |
//! | `manifest.sha256` | the SHA-256 of `manifest.json` (`sha256sum` format) |
//!
//! A version is built in a hidden temporary folder beside the versions and renamed into
//! place while an exclusive lock on `DIR/<deal-slug>/.lock` is held, so a failed run
//! leaves nothing and two runs never take the same number. A run stopped by Ctrl-C
//! removes its unfinished folder and its lock; a run killed outright leaves both, and
//! the next filing of the deal removes them (the lock only once its process has ended)
//! and says so.

// Every stage reports through the one `Diagnostic` type (docs/design.md, Pipeline);
// errors are the cold path, so their size does not matter.
#![allow(clippy::result_large_err)]

use crate::commands::load::load_deal;
use crate::commands::memo::{build_memo_with_changes, sha256_hex, slug, MemoInputs};
use crate::commands::output::{self, Disk, Kind, Sink, Unfinished};
use crate::diag::Diagnostic;
use crate::engine::Analysis;
use crate::model::{Deal, SignoffDecision};
use crate::report::ChangesSince;
use chrono::NaiveDateTime;
use serde::{Deserialize, Serialize};
use serde_json::Value;
use std::collections::BTreeMap;
use std::io::Write as _;
use std::path::{Component, Path, PathBuf};

/// File name of a version's manifest.
pub const MANIFEST: &str = "manifest.json";
/// File name of the manifest's own hash.
pub const MANIFEST_HASH: &str = "manifest.sha256";
/// File name of the filed analysis.
pub const ANALYSIS: &str = "analysis.json";
/// Folder of the filed input files inside a version.
pub const INPUTS: &str = "inputs";
/// Folder of the filed house-style templates inside a version.
pub const TEMPLATES: &str = "templates";
/// The lock file in a deal's folder.
pub const LOCK: &str = ".lock";
/// Version of the manifest's layout.
pub const MANIFEST_FORMAT: u32 = 1;
/// At most this many differing figures are listed per version; the rest are counted.
pub const MAX_FIGURES_SHOWN: usize = 20;

/// What a file in a version is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Role {
    /// The memo PDF.
    Memo,
    /// The deal file.
    Deal,
    /// A file the deal file reads (CSV flows).
    Companion,
    /// A house-style template.
    Template,
    /// The analysis JSON.
    Analysis,
}

impl Role {
    /// True for the files the memo was made from (whose hashes decide "unchanged").
    pub fn is_input(self) -> bool {
        matches!(self, Role::Deal | Role::Companion | Role::Template)
    }
}

/// One file of a version.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct FileEntry {
    /// Path inside the version folder, with `/` separators.
    pub path: String,
    /// What the file is.
    pub role: Role,
    /// Size in bytes.
    pub bytes: u64,
    /// SHA-256, lower-case hex.
    pub sha256: String,
}

/// The sign-off state a version was filed with.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SignoffRecord {
    /// `pending`, `approved`, `declined` or `deferred`.
    pub decision: String,
    /// True when the memo was filed approved (it then carries no DRAFT mark).
    pub approved: bool,
    /// Who prepared the memo.
    pub prepared_by: Option<String>,
    /// Who reviewed it.
    pub reviewed_by: Option<String>,
    /// The date of the decision, ISO 8601.
    pub date: Option<String>,
}

/// The manifest of one filed version.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Manifest {
    /// Layout version of this manifest.
    pub format: u32,
    /// The deal's name.
    pub deal: String,
    /// The deal's folder name in the archive.
    pub slug: String,
    /// This version's folder name (`001`, ...).
    pub version: String,
    /// The candor version that filed it.
    pub candor_version: String,
    /// When it was filed, UTC, RFC 3339.
    pub filed_at: String,
    /// The creation time written into the PDF (UTC, ISO 8601), needed to rebuild it.
    pub memo_created: String,
    /// Path of the deal file inside the version.
    pub deal_file: String,
    /// Path of the memo PDF inside the version.
    pub memo: String,
    /// The sign-off state.
    pub signoff: SignoffRecord,
    /// Every file of the version except the manifest and its hash, sorted by path.
    pub files: Vec<FileEntry>,
}

impl Manifest {
    /// The input files' entries (path, role, hash), which decide whether a new filing
    /// would change anything.
    pub fn input_key(&self) -> Vec<(String, Role, String)> {
        input_key(&self.files)
    }
}

fn input_key(files: &[FileEntry]) -> Vec<(String, Role, String)> {
    let mut key: Vec<(String, Role, String)> = files
        .iter()
        .filter(|f| f.role.is_input())
        .map(|f| (f.path.clone(), f.role, f.sha256.clone()))
        .collect();
    key.sort();
    key
}

/// Everything a filing writes, already made by the earlier stages.
#[derive(Debug, Clone)]
pub struct Filing<'a> {
    /// The validated deal.
    pub deal: &'a Deal,
    /// The deal file's name (no folders).
    pub deal_file_name: &'a str,
    /// The exact bytes of the deal file.
    pub source: &'a [u8],
    /// Files the deal read, as (path relative to the deal file, bytes).
    pub companions: &'a [(String, Vec<u8>)],
    /// House-style templates used, by name (empty for the built-in style).
    pub templates: &'a BTreeMap<String, String>,
    /// The analysis the memo shows.
    pub analysis: &'a Analysis,
    /// The memo PDF.
    pub pdf: &'a [u8],
    /// The creation time written into the PDF.
    pub memo_created: NaiveDateTime,
    /// The filing time (UTC).
    pub filed_at: NaiveDateTime,
    /// The version the memo's "changes since" section compares with (`None`: the memo
    /// has no such section). Filing refuses with [`Filed::Overtaken`] unless this is
    /// still the latest version, since `verify` rebuilds the section from the version
    /// just before the one filed.
    pub previous: Option<&'a str>,
}

/// The outcome of a filing.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Filed {
    /// A new version was filed at this path.
    New {
        /// The version's folder name.
        version: String,
        /// The version's folder.
        path: PathBuf,
    },
    /// The latest version already holds exactly these inputs; nothing was filed.
    Unchanged {
        /// The latest version's folder name.
        version: String,
        /// The latest version's folder.
        path: PathBuf,
    },
    /// Another filing took the next number while this memo was made, so its "changes
    /// since" section compares with the wrong version; nothing was filed, and the memo
    /// must be made again.
    Overtaken {
        /// The latest version's folder name now.
        latest: String,
    },
}

/// The filing time: `SOURCE_DATE_EPOCH` when given (reproducible runs), else now (UTC).
pub fn filing_time(source_date_epoch: Option<&str>) -> Result<NaiveDateTime, Diagnostic> {
    match source_date_epoch.map(str::trim) {
        Some(text) if !text.is_empty() => {
            crate::pdf::creation_time(chrono::NaiveDate::default(), Some(text))
        }
        _ => {
            let secs = std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs())
                .unwrap_or(0);
            let secs = i64::try_from(secs).unwrap_or(0);
            Ok(chrono::DateTime::from_timestamp(secs, 0)
                .map(|t| t.naive_utc())
                .unwrap_or_default())
        }
    }
}

/// A relative path made only of plain names (no `..`, no root), as `/`-joined text.
fn plain_relative(path: &str) -> Option<String> {
    let mut parts = Vec::new();
    for c in Path::new(path).components() {
        match c {
            Component::Normal(p) => parts.push(p.to_str()?.to_string()),
            Component::CurDir => {}
            _ => return None,
        }
    }
    if parts.is_empty() {
        None
    } else {
        Some(parts.join("/"))
    }
}

fn archive_error(message: impl Into<String>, path: &Path) -> Diagnostic {
    Diagnostic::error("archive", message).in_file(path.display().to_string())
}

fn io_words(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file or folder".to_string(),
        _ => output::cause(e),
    }
}

/// The files of a version besides the manifest, as (path inside the version, role, bytes).
/// Manifest entries (path, role, size, SHA-256) for files about to be filed.
fn file_entries(files: &[(String, Role, Vec<u8>)]) -> Vec<FileEntry> {
    files
        .iter()
        .map(|(path, role, bytes)| FileEntry {
            path: path.clone(),
            role: *role,
            bytes: bytes.len() as u64,
            sha256: sha256_hex(bytes),
        })
        .collect()
}

fn version_files(
    filing: &Filing<'_>,
    slug: &str,
) -> Result<Vec<(String, Role, Vec<u8>)>, Diagnostic> {
    let mut files = Vec::new();
    let deal_name = plain_relative(filing.deal_file_name)
        .filter(|n| !n.contains('/'))
        .ok_or_else(|| {
            Diagnostic::error(
                "archive",
                format!(
                    "`{}` cannot be used as a file name in the archive",
                    filing.deal_file_name
                ),
            )
        })?;
    files.push((
        format!("{INPUTS}/{deal_name}"),
        Role::Deal,
        filing.source.to_vec(),
    ));
    for (name, bytes) in filing.companions {
        let rel = plain_relative(name).ok_or_else(|| {
            Diagnostic::error(
                "archive",
                format!(
                    "the deal reads `{name}`, which lies outside the deal file's folder, so a \
                     filed version could not hold it"
                ),
            )
            .with_hint(
                "move the file into the deal file's folder (or below it) and name it from there",
            )
        })?;
        files.push((format!("{INPUTS}/{rel}"), Role::Companion, bytes.clone()));
    }
    for (name, text) in filing.templates {
        let rel = plain_relative(name)
            .filter(|n| !n.contains('/'))
            .ok_or_else(|| {
                Diagnostic::error(
                    "archive",
                    format!("the template name `{name}` cannot be used in the archive"),
                )
            })?;
        files.push((
            format!("{TEMPLATES}/{rel}"),
            Role::Template,
            text.as_bytes().to_vec(),
        ));
    }
    let mut analysis = serde_json::to_vec_pretty(filing.analysis).map_err(|e| {
        Diagnostic::error("archive", format!("cannot write the analysis as JSON: {e}"))
    })?;
    analysis.push(b'\n');
    files.push((ANALYSIS.to_string(), Role::Analysis, analysis));
    files.push((format!("{slug}.pdf"), Role::Memo, filing.pdf.to_vec()));
    let mut seen = std::collections::BTreeSet::new();
    for (path, _, _) in &files {
        if !seen.insert(path.clone()) {
            return Err(Diagnostic::error(
                "archive",
                format!("two files of this memo would both be filed as `{path}`"),
            ));
        }
    }
    Ok(files)
}

fn signoff_record(deal: &Deal) -> SignoffRecord {
    let s = deal.signoff.as_ref();
    let decision = s.map(|s| s.decision).unwrap_or(SignoffDecision::Pending);
    SignoffRecord {
        decision: match decision {
            SignoffDecision::Pending => "pending",
            SignoffDecision::Approved => "approved",
            SignoffDecision::Declined => "declined",
            SignoffDecision::Deferred => "deferred",
        }
        .to_string(),
        approved: decision == SignoffDecision::Approved,
        prepared_by: s.and_then(|s| s.prepared_by.clone()),
        reviewed_by: s.and_then(|s| s.reviewed_by.clone()),
        date: s.and_then(|s| s.date).map(|d| d.to_string()),
    }
}

/// Folder names of the versions in a deal's folder, as numbers, ascending.
fn versions_in(deal_dir: &Path) -> std::io::Result<Vec<(u32, String)>> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(deal_dir)? {
        let entry = entry?;
        let name = entry.file_name().to_string_lossy().to_string();
        if !name.is_empty() && name.bytes().all(|b| b.is_ascii_digit()) {
            if let Ok(n) = name.parse::<u32>() {
                out.push((n, name));
            }
        }
    }
    out.sort();
    Ok(out)
}

fn write_file(path: &Path, bytes: &[u8], sink: &mut dyn Sink) -> std::io::Result<()> {
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent)?;
    }
    let mut f = std::fs::File::create(path)?;
    sink.put(&mut f, bytes)?;
    // Read-only: a filed version is never modified, and an editor should say so.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o444))?;
    }
    Ok(())
}

/// How long a filer waits for another to finish before giving up.
const LOCK_WAIT: std::time::Duration = std::time::Duration::from_secs(120);

/// An exclusive claim on a deal's folder: a lock file created with `create_new` (atomic
/// on every file system candor targets), holding the owner's process id and host name,
/// removed on drop (and by the interrupt handler). `File::lock` would need Rust 1.89,
/// above the crate's minimum.
struct ArchiveLock {
    path: PathBuf,
    _pending: Unfinished,
}

/// This machine's name, so that a lock taken on another machine sharing the archive
/// is never judged by this machine's processes.
fn host_name() -> String {
    std::fs::read_to_string("/proc/sys/kernel/hostname")
        .map(|h| h.trim().to_string())
        .unwrap_or_default()
}

fn create_lock_file(path: &Path) -> std::io::Result<()> {
    let mut f = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)?;
    let me = std::process::id();
    match output::process_identity(me) {
        Some(identity) => writeln!(f, "{me} {} {identity}", host_name()),
        None => writeln!(f, "{me} {}", host_name()),
    }
}

impl ArchiveLock {
    /// Takes the lock, waiting for another filer to finish. A lock whose process has
    /// ended (a filing killed outright) is removed, with a sentence in `notes`.
    fn acquire(path: &Path, notes: &mut Vec<String>) -> Result<ArchiveLock, Diagnostic> {
        let started = std::time::Instant::now();
        loop {
            match create_lock_file(path) {
                // Registered only once it is ours, so the handler never removes another
                // filer's lock; a Ctrl-C in between leaves a lock of an ended process,
                // which the next filing removes.
                Ok(()) => {
                    return Ok(ArchiveLock {
                        path: path.to_path_buf(),
                        _pending: Unfinished::register(path, Kind::Lock, path),
                    })
                }
                // The deal's folder went between its creation and the lock: a first
                // filing that failed removed it, empty. Make it again.
                Err(e)
                    if e.kind() == std::io::ErrorKind::NotFound
                        && started.elapsed() < LOCK_WAIT =>
                {
                    if let Some(folder) = path.parent() {
                        std::fs::create_dir_all(folder).map_err(|e| {
                            archive_error(
                                format!("cannot create the archive folder: {}", io_words(&e)),
                                folder,
                            )
                        })?;
                    }
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    if let Some(pid) = dead_owner(path) {
                        if break_stale_lock(path, pid)? {
                            notes.push(format!(
                                "removed the lock {} left by candor process {pid}, which was \
                                 stopped while filing",
                                path.display()
                            ));
                        }
                        continue;
                    }
                    if started.elapsed() > LOCK_WAIT {
                        return Err(archive_error(
                            format!(
                                "another filing of this deal has held the lock for more than {} \
                                 seconds",
                                LOCK_WAIT.as_secs()
                            ),
                            path,
                        )
                        .with_hint("if no candor is filing this deal, remove the lock file"));
                    }
                    std::thread::sleep(std::time::Duration::from_millis(25));
                }
                Err(e) => {
                    return Err(archive_error(
                        format!("cannot write in the archive folder: {}", io_words(&e)),
                        path,
                    ));
                }
            }
        }
    }
}

impl Drop for ArchiveLock {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.path);
    }
}

/// Removes the lock at `path` if it still names the ended process `pid`; true when it
/// did. Two runs may find the same dead lock: each removal happens while holding a
/// second lock, `.lock.break`, and after reading the lock again, so a run never removes
/// a lock that another run has just taken.
fn break_stale_lock(path: &Path, pid: u32) -> Result<bool, Diagnostic> {
    let breaker = path.with_file_name(format!("{LOCK}.break"));
    match create_lock_file(&breaker) {
        Ok(()) => {
            let pending = Unfinished::register(&breaker, Kind::Lock, &breaker);
            let removed = dead_owner(path) == Some(pid) && std::fs::remove_file(path).is_ok();
            let _ = std::fs::remove_file(&breaker);
            drop(pending);
            Ok(removed)
        }
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            match dead_owner(&breaker) {
                Some(other) => Err(archive_error(
                    format!(
                        "candor process {other} was stopped while removing a stale lock of \
                         this deal's archive, and left {} behind",
                        breaker.display()
                    ),
                    &breaker,
                )
                .with_hint(format!(
                    "if no candor is filing this deal, remove {} and {}",
                    breaker.display(),
                    path.display()
                ))),
                // Another run is removing it right now.
                None => {
                    std::thread::sleep(std::time::Duration::from_millis(25));
                    Ok(false)
                }
            }
        }
        Err(e) => Err(archive_error(
            format!("cannot write in the archive folder: {}", io_words(&e)),
            &breaker,
        )),
    }
}

/// The process id in a lock file when that process is known to have ended: it ran on
/// this machine (same host name, or a lock that names none) and Linux `/proc` no longer
/// shows it, or shows a later process under the same number (its boot and start time
/// differ from those the lock recorded). Elsewhere a lock is never declared dead and
/// the wait times out instead.
fn dead_owner(path: &Path) -> Option<u32> {
    let text = std::fs::read_to_string(path).ok()?;
    let mut words = text.split_whitespace();
    let pid: u32 = words.next()?.parse().ok()?;
    if let Some(host) = words.next() {
        if host != host_name() {
            return None;
        }
    }
    if output::process_ended(pid) {
        return Some(pid);
    }
    // The number is in use, but perhaps by a later process that was given it again:
    // the lock is dead all the same when the identity it recorded is not that one's.
    let recorded = words.next()?;
    let reused = pid != std::process::id()
        && output::process_identity(pid).is_some_and(|now| now != recorded);
    reused.then_some(pid)
}

/// Removes the unfinished version folders (`.filing-*`) that interrupted filings left
/// in `deal_dir`. Called with the lock held: a live filing builds its folder only
/// under the lock, so every such folder found then is a leftover.
fn sweep_unfinished(deal_dir: &Path, notes: &mut Vec<String>) {
    let Ok(entries) = std::fs::read_dir(deal_dir) else {
        return;
    };
    let mut stale: Vec<PathBuf> = entries
        .filter_map(Result::ok)
        .filter(|e| e.file_name().to_string_lossy().starts_with(".filing-"))
        .map(|e| e.path())
        .collect();
    stale.sort();
    for dir in stale {
        match std::fs::remove_dir_all(&dir) {
            Ok(()) => notes.push(format!(
                "removed {}, a version left unfinished by an interrupted filing (never a \
                 filed version)",
                dir.display()
            )),
            Err(e) => notes.push(format!(
                "{} is a version left unfinished by an interrupted filing; it cannot be removed \
                 ({}): remove it by hand",
                dir.display(),
                io_words(&e)
            )),
        }
    }
}

/// Files a memo in `archive/<deal-slug>/<next version>/`, or reports that the latest
/// version already holds the same inputs.
pub fn file(archive: &Path, filing: &Filing<'_>) -> Result<Filed, Diagnostic> {
    file_with(archive, filing, &mut Disk).map(|(filed, _)| filed)
}

/// [`file`], writing every file through `sink` (the disk, or in tests one that fails on
/// purpose), and returning besides the outcome one sentence for each leftover of an
/// interrupted filing that was removed (a lock, an unfinished version folder).
pub fn file_with(
    archive: &Path,
    filing: &Filing<'_>,
    sink: &mut dyn Sink,
) -> Result<(Filed, Vec<String>), Diagnostic> {
    let slug = slug(&filing.deal.name);
    let files = version_files(filing, &slug)?;
    let deal_dir = archive.join(&slug);
    let first = !deal_dir.exists();
    std::fs::create_dir_all(&deal_dir).map_err(|e| {
        archive_error(
            format!("cannot create the archive folder: {}", io_words(&e)),
            &deal_dir,
        )
    })?;
    let filed = file_under_lock(filing, files, &slug, &deal_dir, sink);
    if first && filed.is_err() {
        // A first filing that failed leaves no empty deal folder behind. Only an empty
        // folder goes; a filer that created its lock here meanwhile keeps it, and one
        // about to create it makes the folder again (see `ArchiveLock::acquire`).
        let _ = std::fs::remove_dir(&deal_dir);
    }
    filed
}

/// [`file_with`] once the deal's folder exists: takes the lock, chooses the number
/// and builds the version beside it, then renames it into place.
fn file_under_lock(
    filing: &Filing<'_>,
    files: Vec<(String, Role, Vec<u8>)>,
    slug: &str,
    deal_dir: &Path,
    sink: &mut dyn Sink,
) -> Result<(Filed, Vec<String>), Diagnostic> {
    let mut notes = Vec::new();
    let lock_path = deal_dir.join(LOCK);
    // Held until dropped: one filer at a time chooses a number and renames.
    let lock = ArchiveLock::acquire(&lock_path, &mut notes)?;
    sweep_unfinished(deal_dir, &mut notes);

    let versions = versions_in(deal_dir).map_err(|e| {
        archive_error(
            format!("cannot list the filed versions: {}", io_words(&e)),
            deal_dir,
        )
    })?;
    let mut entries: Vec<FileEntry> = file_entries(&files);
    entries.sort_by(|a, b| a.path.cmp(&b.path));
    let next = match versions.last() {
        Some((n, name)) => {
            let latest_dir = deal_dir.join(name);
            let latest = read_manifest(&latest_dir).map_err(|why| {
                archive_error(
                    format!(
                        "the latest version cannot be read ({why}); nothing was filed. \
                         Run `candor verify` on the archive"
                    ),
                    &latest_dir,
                )
            })?;
            if latest.input_key() == input_key(&entries) {
                return Ok((
                    Filed::Unchanged {
                        version: name.clone(),
                        path: latest_dir,
                    },
                    notes,
                ));
            }
            if filing.previous != Some(name.as_str()) {
                return Ok((
                    Filed::Overtaken {
                        latest: name.clone(),
                    },
                    notes,
                ));
            }
            n.checked_add(1).ok_or_else(|| {
                archive_error("the archive holds the largest version number", deal_dir)
            })?
        }
        None if filing.previous.is_some() => {
            return Ok((
                Filed::Overtaken {
                    latest: String::new(),
                },
                notes,
            ))
        }
        None => 1,
    };
    let version = format!("{next:03}");
    let deal_file = files
        .iter()
        .find(|(_, r, _)| *r == Role::Deal)
        .map(|(p, _, _)| p.clone())
        .unwrap_or_default();
    let manifest = Manifest {
        format: MANIFEST_FORMAT,
        deal: filing.deal.name.clone(),
        slug: slug.to_string(),
        version: version.clone(),
        candor_version: env!("CARGO_PKG_VERSION").to_string(),
        filed_at: filing.filed_at.format("%Y-%m-%dT%H:%M:%SZ").to_string(),
        memo_created: filing.memo_created.format("%Y-%m-%dT%H:%M:%S").to_string(),
        deal_file,
        memo: format!("{slug}.pdf"),
        signoff: signoff_record(filing.deal),
        files: entries,
    };
    let mut manifest_bytes = serde_json::to_vec_pretty(&manifest)
        .map_err(|e| Diagnostic::error("archive", format!("cannot write the manifest: {e}")))?;
    manifest_bytes.push(b'\n');
    let manifest_hash = format!("{}  {MANIFEST}\n", sha256_hex(&manifest_bytes));

    let tmp = tempfile::Builder::new()
        .prefix(".filing-")
        .tempdir_in(deal_dir)
        .map_err(|e| {
            archive_error(
                format!("cannot write in the archive folder: {}", io_words(&e)),
                deal_dir,
            )
        })?;
    let pending = Unfinished::register(tmp.path(), Kind::Folder, deal_dir);
    let mut write_all = || -> Result<(), (String, std::io::Error)> {
        let mut put = |rel: &str, bytes: &[u8]| {
            write_file(&tmp.path().join(rel), bytes, sink).map_err(|e| (rel.to_string(), e))
        };
        for (path, _, bytes) in &files {
            put(path, bytes)?;
        }
        put(MANIFEST, &manifest_bytes)?;
        put(MANIFEST_HASH, manifest_hash.as_bytes())?;
        // A temporary folder is private (0700); a filed version is readable by all.
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt as _;
            std::fs::set_permissions(tmp.path(), std::fs::Permissions::from_mode(0o755))
                .map_err(|e| (String::new(), e))?;
        }
        Ok(())
    };
    if let Err((rel, e)) = write_all() {
        // The folder goes before its registration, so an interruption in between still
        // finds it.
        let _ = tmp.close();
        drop(pending);
        let what = if rel.is_empty() {
            format!("version {version}")
        } else {
            format!("`{rel}` of version {version}")
        };
        let hint = if output::cause(&e) == "the disk is full" {
            "free some space on the archive's disk, then file again"
        } else {
            "file into an archive folder you may write in, or ask for write access"
        };
        return Err(archive_error(
            format!(
                "cannot write {what}: {}; nothing was filed, and the versions already filed \
                 are unchanged",
                io_words(&e)
            ),
            deal_dir,
        )
        .with_hint(hint));
    }
    let target = deal_dir.join(&version);
    let built = tmp.keep();
    let moved = pending.finish(|| {
        let moved = std::fs::rename(&built, &target);
        if moved.is_err() {
            let _ = std::fs::remove_dir_all(&built);
        }
        moved
    });
    if let Err(e) = moved {
        return Err(archive_error(
            format!("cannot move the version into place: {}", io_words(&e)),
            &target,
        ));
    }
    // Make the rename itself durable before the lock is released.
    if let Ok(dir) = std::fs::File::open(deal_dir) {
        let _ = dir.sync_all();
    }
    drop(lock);
    Ok((
        Filed::New {
            version,
            path: target,
        },
        notes,
    ))
}

/// The version a new filing of these inputs compares with, as (folder name, folder):
/// the latest version, or when the latest already holds exactly these inputs (the
/// filing will then be reported unchanged) the one before it, so that the memo made
/// equals the one filed. `None` for a deal not yet filed. Reads without the lock:
/// [`file`] checks the answer again under it. The filing's PDF is not looked at.
pub fn predecessor(
    archive: &Path,
    filing: &Filing<'_>,
) -> Result<Option<(String, PathBuf)>, Diagnostic> {
    let deal_dir = archive.join(slug(&filing.deal.name));
    if !deal_dir.is_dir() {
        return Ok(None);
    }
    let versions = versions_in(&deal_dir).map_err(|e| {
        archive_error(
            format!("cannot list the filed versions: {}", io_words(&e)),
            &deal_dir,
        )
    })?;
    let Some((_, latest)) = versions.last() else {
        return Ok(None);
    };
    let entries: Vec<FileEntry> = file_entries(&version_files(filing, "memo")?);
    let same_as_latest = read_manifest(&deal_dir.join(latest))
        .map(|m| m.input_key() == input_key(&entries))
        .unwrap_or(false);
    let pick = if same_as_latest {
        versions.len().checked_sub(2).map(|i| &versions[i])
    } else {
        versions.last()
    };
    Ok(pick.map(|(_, name)| (name.clone(), deal_dir.join(name))))
}

/// The version filed just before the version folder `dir`, by number, in the same
/// deal's folder, as (folder name, folder).
pub fn version_before(dir: &Path) -> Option<(String, PathBuf)> {
    // `verify .` inside a version folder names it only once resolved.
    let dir = std::fs::canonicalize(dir).ok()?;
    let name = dir.file_name()?.to_str()?.to_string();
    let parent = dir.parent()?;
    let versions = versions_in(parent).ok()?;
    let at = versions.iter().position(|(_, n)| *n == name)?;
    let (_, before) = versions.get(at.checked_sub(1)?)?;
    Some((before.clone(), parent.join(before)))
}

/// The "changes since version N" section of a memo: the filed deal of version
/// `version` (in `dir`) compared with `deal` and its analysis by [`crate::diff::diff`].
pub fn changes_since(version: &str, dir: &Path, deal: &Deal, analysis: &Analysis) -> ChangesSince {
    let old = read_manifest(dir)
        .ok()
        .and_then(|m| load_deal(&dir.join(&m.deal_file)).ok());
    let lines = match old {
        // The earlier deal is analysed again rather than read from its analysis.json:
        // filing and verifying then take the same path, and `verify` has checked that
        // the two agree.
        Some(old) => {
            let old_analysis = crate::engine::analyse(&old.deal);
            crate::diff::plain_lines(&crate::diff::diff(
                (&old.deal, &old_analysis),
                (deal, analysis),
            ))
        }
        None => vec![format!(
            "The inputs filed as version {version} can no longer be read, so what changed \
             since then is not shown."
        )],
    };
    ChangesSince {
        version: version.to_string(),
        lines,
    }
}

/// Reads and parses a version's manifest.
fn read_manifest(dir: &Path) -> Result<Manifest, String> {
    let bytes =
        std::fs::read(dir.join(MANIFEST)).map_err(|e| format!("{MANIFEST}: {}", io_words(&e)))?;
    serde_json::from_slice(&bytes).map_err(|e| format!("{MANIFEST} is not a valid manifest: {e}"))
}

/// What verifying found.
#[derive(Debug, Clone, Default)]
pub struct VerifyReport {
    /// Every version folder checked.
    pub versions: Vec<PathBuf>,
    /// One precise sentence per problem; empty when everything held.
    pub problems: Vec<String>,
    /// Things not checked, and why.
    pub notes: Vec<String>,
}

fn is_version_dir(p: &Path) -> bool {
    p.join(MANIFEST).is_file() || p.join(MANIFEST_HASH).is_file()
}

fn sorted_subdirs(dir: &Path) -> std::io::Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(dir)? {
        let entry = entry?;
        if entry.file_type()?.is_dir() {
            out.push(entry.path());
        }
    }
    out.sort();
    Ok(out)
}

/// Verifies a version folder, a deal's folder of versions, or a whole archive.
pub fn verify(path: &Path) -> Result<VerifyReport, Diagnostic> {
    let cannot = |e: std::io::Error| archive_error(format!("cannot read: {}", io_words(&e)), path);
    let mut report = VerifyReport::default();
    let meta = std::fs::metadata(path).map_err(cannot)?;
    if !meta.is_dir() {
        return Err(archive_error(
            "not a folder; give a version folder, a deal's folder or an archive",
            path,
        ));
    }
    let mut deal_dirs = Vec::new();
    if is_version_dir(path) {
        verify_version(path, &mut report);
        return Ok(report);
    }
    let looks_like_deal_dir = path.join(LOCK).is_file()
        || sorted_subdirs(path)
            .map_err(cannot)?
            .iter()
            .any(|d| is_version_dir(d));
    if looks_like_deal_dir {
        deal_dirs.push(path.to_path_buf());
    } else {
        deal_dirs = sorted_subdirs(path).map_err(cannot)?;
    }
    for deal_dir in deal_dirs {
        for sub in sorted_subdirs(&deal_dir).map_err(cannot)? {
            let name = sub
                .file_name()
                .map(|n| n.to_string_lossy().to_string())
                .unwrap_or_default();
            if name.starts_with(".filing-") {
                report.notes.push(format!(
                    "{} is an unfinished filing (in progress, or left by a run that was killed); \
                     it is not a version",
                    sub.display()
                ));
            } else if is_version_dir(&sub) {
                verify_version(&sub, &mut report);
            } else if name.bytes().all(|b| b.is_ascii_digit()) {
                report.problems.push(format!(
                    "{}: a version folder without {MANIFEST}",
                    sub.display()
                ));
            }
        }
    }
    if report.versions.is_empty() && report.problems.is_empty() {
        report
            .problems
            .push(format!("{}: no filed versions found here", path.display()));
    }
    Ok(report)
}

fn hash_file(path: &Path) -> std::io::Result<(u64, String)> {
    let bytes = std::fs::read(path)?;
    Ok((bytes.len() as u64, sha256_hex(&bytes)))
}

/// Every file under `dir`, as `/`-joined paths relative to it.
fn files_under(dir: &Path, prefix: &str, out: &mut Vec<String>) -> std::io::Result<()> {
    for entry in std::fs::read_dir(dir)? {
        let entry = entry?;
        let name = entry.file_name().to_string_lossy().to_string();
        let rel = if prefix.is_empty() {
            name
        } else {
            format!("{prefix}/{name}")
        };
        if entry.file_type()?.is_dir() {
            files_under(&entry.path(), &rel, out)?;
        } else {
            out.push(rel);
        }
    }
    Ok(())
}

/// Checks one version: the manifest's own hash, every listed hash, unlisted files, the
/// recomputed analysis and the rebuilt PDF.
pub fn verify_version(dir: &Path, report: &mut VerifyReport) {
    report.versions.push(dir.to_path_buf());
    let shown = dir.display().to_string();
    let problems = &mut report.problems;

    // The manifest's own hash catches accidental damage to it; like every hash kept
    // beside the data it does not stop someone rewriting both on purpose.
    let manifest_bytes = match std::fs::read(dir.join(MANIFEST)) {
        Ok(b) => b,
        Err(e) => {
            problems.push(format!(
                "{shown}/{MANIFEST} cannot be read: {}",
                io_words(&e)
            ));
            return;
        }
    };
    match std::fs::read_to_string(dir.join(MANIFEST_HASH)) {
        Ok(text) => {
            let recorded = text.split_whitespace().next().unwrap_or("").to_string();
            let actual = sha256_hex(&manifest_bytes);
            if recorded != actual {
                problems.push(format!(
                    "{shown}/{MANIFEST} changed: its SHA-256 is {actual}, {MANIFEST_HASH} records {recorded}"
                ));
            }
        }
        Err(e) => problems.push(format!(
            "{shown}/{MANIFEST_HASH} cannot be read: {}",
            io_words(&e)
        )),
    }
    let manifest: Manifest = match serde_json::from_slice(&manifest_bytes) {
        Ok(m) => m,
        Err(e) => {
            problems.push(format!(
                "{shown}/{MANIFEST} is not a valid manifest: {e}; nothing else in this version can be checked"
            ));
            return;
        }
    };
    let folder_name = dir
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    if manifest.version != folder_name {
        problems.push(format!(
            "{shown}/{MANIFEST} names version {}, but the folder is {folder_name}",
            manifest.version
        ));
    }
    for entry in &manifest.files {
        let Some(rel) = plain_relative(&entry.path) else {
            problems.push(format!(
                "{shown}/{MANIFEST} lists `{}`, which is not a path inside the version",
                entry.path
            ));
            continue;
        };
        match hash_file(&dir.join(&rel)) {
            Ok((bytes, sha)) => {
                if sha != entry.sha256 {
                    problems.push(format!(
                        "{shown}/{rel} changed: its SHA-256 is {sha}, the manifest records {} \
                         ({bytes} bytes now, {} filed)",
                        entry.sha256, entry.bytes
                    ));
                }
            }
            Err(e) => problems.push(format!("{shown}/{rel} is missing: {}", io_words(&e))),
        }
    }
    let mut present = Vec::new();
    if let Err(e) = files_under(dir, "", &mut present) {
        problems.push(format!("{shown} cannot be listed: {}", io_words(&e)));
    }
    present.sort();
    for p in present {
        if p != MANIFEST && p != MANIFEST_HASH && !manifest.files.iter().any(|f| f.path == p) {
            problems.push(format!(
                "{shown}/{p} is not listed in the manifest (a filed version is never added to)"
            ));
        }
    }

    // Recompute from the filed inputs, whatever their hashes said: a precise figure
    // tells the reader what a changed input would have changed.
    let deal_path = dir.join(&manifest.deal_file);
    let loaded = match load_deal(&deal_path) {
        Ok(l) => l,
        Err(failure) => {
            let first = failure
                .diagnostics
                .first()
                .map(|d| d.message.clone())
                .unwrap_or_default();
            problems.push(format!(
                "{} no longer loads ({first}); the figures and the PDF cannot be recomputed",
                deal_path.display()
            ));
            return;
        }
    };
    let analysis = crate::engine::analyse(&loaded.deal);
    let analysis_path = dir.join(ANALYSIS);
    match std::fs::read(&analysis_path) {
        Ok(filed) => {
            for p in compare_analysis(&filed, &analysis, MAX_FIGURES_SHOWN) {
                problems.push(format!("{}: {p}", analysis_path.display()));
            }
        }
        Err(e) => problems.push(format!(
            "{} cannot be read: {}",
            analysis_path.display(),
            io_words(&e)
        )),
    }

    let current = env!("CARGO_PKG_VERSION");
    if manifest.candor_version != current {
        report.notes.push(format!(
            "{shown}: the PDF was not rebuilt: it was filed by candor {}, this is candor {current}, \
             whose templates and typesetting may lay it out differently",
            manifest.candor_version
        ));
        return;
    }
    let Ok(created) = NaiveDateTime::parse_from_str(&manifest.memo_created, "%Y-%m-%dT%H:%M:%S")
    else {
        problems.push(format!(
            "{shown}/{MANIFEST}: memo_created `{}` is not a time; the PDF cannot be rebuilt",
            manifest.memo_created
        ));
        return;
    };
    let mut templates = BTreeMap::new();
    for entry in manifest.files.iter().filter(|f| f.role == Role::Template) {
        let name = entry.path.rsplit('/').next().unwrap_or("").to_string();
        match std::fs::read_to_string(dir.join(&entry.path)) {
            Ok(text) => {
                templates.insert(name, text);
            }
            Err(e) => {
                problems.push(format!(
                    "{shown}/{}: cannot read the template: {}; the PDF cannot be rebuilt",
                    entry.path,
                    io_words(&e)
                ));
                return;
            }
        }
    }
    let source_name = deal_path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    let inputs = MemoInputs {
        source: &loaded.source,
        source_name: &source_name,
        templates,
        created,
    };
    // The section on changes is rebuilt from the version before this one by number,
    // exactly as it was made when this version was filed.
    let changes = version_before(dir)
        .map(|(version, before)| changes_since(&version, &before, &loaded.deal, &analysis));
    let rebuilt = match build_memo_with_changes(&analysis, &loaded.deal, inputs, changes) {
        Ok(m) => m.pdf,
        Err(f) => {
            problems.push(format!(
                "{shown}: the PDF cannot be rebuilt: {}",
                f.diagnostic.message
            ));
            return;
        }
    };
    let pdf_path = dir.join(&manifest.memo);
    match std::fs::read(&pdf_path) {
        Ok(filed) if filed == rebuilt => {}
        Ok(filed) => {
            let at = filed
                .iter()
                .zip(&rebuilt)
                .position(|(a, b)| a != b)
                .unwrap_or(filed.len().min(rebuilt.len()));
            problems.push(format!(
                "{} differs from the PDF rebuilt from the filed inputs (first difference at byte \
                 {at}; {} bytes filed, {} rebuilt)",
                pdf_path.display(),
                filed.len(),
                rebuilt.len()
            ));
        }
        Err(e) => problems.push(format!(
            "{} cannot be read: {}",
            pdf_path.display(),
            io_words(&e)
        )),
    }
}

/// Compares a filed analysis JSON with a recomputed analysis; one sentence per differing
/// figure (by JSON path), at most `limit` of them plus a count of the rest.
pub fn compare_analysis(filed: &[u8], recomputed: &Analysis, limit: usize) -> Vec<String> {
    // Both sides go through the same text round trip, so equal figures compare equal
    // whatever the float parser does with the last digit.
    let fresh = match serde_json::to_string_pretty(recomputed) {
        Ok(t) => t,
        Err(e) => return vec![format!("the recomputed analysis cannot be written: {e}")],
    };
    let old: Value = match serde_json::from_slice(filed) {
        Ok(v) => v,
        Err(e) => return vec![format!("not valid JSON: {e}")],
    };
    let new: Value = match serde_json::from_str(&fresh) {
        Ok(v) => v,
        Err(e) => return vec![format!("the recomputed analysis cannot be read: {e}")],
    };
    let mut diffs = Vec::new();
    json_diff("", &old, &new, &mut diffs);
    let total = diffs.len();
    let mut out: Vec<String> = diffs
        .into_iter()
        .take(limit)
        .map(|(path, a, b)| format!("{path} is {a} in the file, {b} when recomputed"))
        .collect();
    if total > limit {
        out.push(format!("and {} more differing figures", total - limit));
    }
    out
}

fn short(v: Option<&Value>) -> String {
    match v {
        None => "absent".to_string(),
        Some(v) => {
            let t = v.to_string();
            if t.chars().count() > 80 {
                format!("{}...", t.chars().take(77).collect::<String>())
            } else {
                t
            }
        }
    }
}

/// The differing leaves of two JSON values, as (path, old, new).
fn json_diff(path: &str, a: &Value, b: &Value, out: &mut Vec<(String, String, String)>) {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            let mut keys: Vec<&String> = x.keys().collect();
            keys.extend(y.keys().filter(|k| !x.contains_key(*k)));
            for k in keys {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                match (x.get(k), y.get(k)) {
                    (Some(va), Some(vb)) => json_diff(&p, va, vb, out),
                    (va, vb) => out.push((p, short(va), short(vb))),
                }
            }
        }
        (Value::Array(x), Value::Array(y)) => {
            for i in 0..x.len().max(y.len()) {
                let p = format!("{path}[{i}]");
                match (x.get(i), y.get(i)) {
                    (Some(va), Some(vb)) => json_diff(&p, va, vb, out),
                    (va, vb) => out.push((p, short(va), short(vb))),
                }
            }
        }
        _ if a == b => {}
        _ => out.push((path.to_string(), short(Some(a)), short(Some(b)))),
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
        let path = deal_dir.join(LOCK);
        let mut notes = Vec::new();
        let lock = ArchiveLock::acquire(&path, &mut notes).expect("the lock is taken");
        assert!(path.is_file() && notes.is_empty());
        drop(lock);
        assert!(!path.exists());
    }

    #[test]
    fn only_plain_relative_paths_are_filed() {
        assert_eq!(plain_relative("a/b.csv").as_deref(), Some("a/b.csv"));
        assert_eq!(plain_relative("./b.csv").as_deref(), Some("b.csv"));
        assert_eq!(plain_relative("../b.csv"), None);
        assert_eq!(plain_relative("/etc/b.csv"), None);
        assert_eq!(plain_relative(""), None);
    }

    #[test]
    fn a_second_filer_waits_for_the_lock() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(LOCK);
        let first = ArchiveLock::acquire(&path, &mut Vec::new()).unwrap();
        let (tx, rx) = std::sync::mpsc::channel();
        let p2 = path.clone();
        let waiter = std::thread::spawn(move || {
            let second = ArchiveLock::acquire(&p2, &mut Vec::new())
                .map(|_| ())
                .map_err(|d| d.message);
            tx.send(second).unwrap();
        });
        // The waiter cannot get the lock while the first holder keeps it.
        assert!(rx
            .recv_timeout(std::time::Duration::from_millis(200))
            .is_err());
        drop(first);
        let got = rx.recv_timeout(std::time::Duration::from_secs(10)).unwrap();
        assert_eq!(got, Ok(()));
        waiter.join().unwrap();
        assert!(!path.exists(), "the lock file is removed when released");
    }

    #[test]
    fn a_lock_left_by_a_dead_process_is_removed_and_named() {
        if !Path::new("/proc/self").exists() {
            return;
        }
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(LOCK);
        // Above Linux's largest process id (2^22), so no process has it; the old form
        // without a host name, and the new form with this machine's.
        for content in [
            "4194305\n".to_string(),
            format!("4194305 {}\n", host_name()),
        ] {
            std::fs::write(&path, content).unwrap();
            let mut notes = Vec::new();
            let lock = ArchiveLock::acquire(&path, &mut notes).unwrap();
            assert_eq!(notes.len(), 1, "{notes:?}");
            assert!(
                notes[0].contains("left by candor process 4194305, which was stopped"),
                "{notes:?}"
            );
            let held = std::fs::read_to_string(&path).unwrap();
            assert!(
                held.starts_with(&format!("{} ", std::process::id())),
                "{held}"
            );
            drop(lock);
            assert!(!path.exists());
            assert!(!dir.path().join(".lock.break").exists());
        }
    }

    #[test]
    fn a_lock_from_another_machine_is_never_judged_dead_here() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(LOCK);
        std::fs::write(&path, "4194305 some-other-machine-name\n").unwrap();
        assert_eq!(dead_owner(&path), None);
    }

    #[test]
    fn a_lock_whose_process_number_was_given_again_is_dead() {
        let Some(mine) = output::process_identity(std::process::id()) else {
            return;
        };
        assert!(mine.contains('/'), "{mine}");
        // A live process standing in for a later one that was given the number again.
        let mut later = std::process::Command::new("sleep")
            .arg("30")
            .spawn()
            .expect("sleep starts");
        let pid = later.id();
        let now = output::process_identity(pid).expect("the identity of a live process");
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(LOCK);
        let host = host_name();
        // The lock recorded the same number for an earlier start: it is dead.
        std::fs::write(&path, format!("{pid} {host} {mine}-earlier\n")).unwrap();
        assert_eq!(dead_owner(&path), Some(pid));
        // The identity the lock recorded is the live process's own: it is not dead, and
        // neither is a lock without an identity (as older candor versions wrote it).
        for content in [format!("{pid} {host} {now}\n"), format!("{pid} {host}\n")] {
            std::fs::write(&path, content).unwrap();
            assert_eq!(dead_owner(&path), None);
        }
        let _ = later.kill();
        let _ = later.wait();
        // Once it has ended, any form of the lock is dead.
        assert_eq!(dead_owner(&path), Some(pid));
    }

    #[test]
    fn a_breaker_left_by_a_dead_process_is_reported_not_removed() {
        if !Path::new("/proc/self").exists() {
            return;
        }
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(LOCK);
        let breaker = dir.path().join(".lock.break");
        std::fs::write(&path, "4194305\n").unwrap();
        std::fs::write(&breaker, "4194304\n").unwrap();
        let err = ArchiveLock::acquire(&path, &mut Vec::new())
            .map(|_| ())
            .unwrap_err();
        assert!(
            err.message.contains("candor process 4194304 was stopped"),
            "{}",
            err.message
        );
        assert!(path.exists() && breaker.exists());
    }

    #[test]
    fn json_differences_are_named_by_path() {
        let a: Value = serde_json::json!({"s": [{"npv": "1.00", "r": [0.1]}], "x": 1});
        let b: Value = serde_json::json!({"s": [{"npv": "2.00", "r": [0.1, 0.2]}], "x": 1});
        let mut out = Vec::new();
        json_diff("", &a, &b, &mut out);
        assert_eq!(
            out,
            vec![
                (
                    "s[0].npv".to_string(),
                    "\"1.00\"".to_string(),
                    "\"2.00\"".to_string()
                ),
                (
                    "s[0].r[1]".to_string(),
                    "absent".to_string(),
                    "0.2".to_string()
                ),
            ]
        );
    }
}
