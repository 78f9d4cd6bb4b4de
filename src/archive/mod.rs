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
//! | `analysis.json` | the analysis as the JSON contract of `rates --json` states it |
//! | `manifest.json` | every file above with its SHA-256, versions, times, sign-off |
//! | `manifest.sha256` | the SHA-256 of `manifest.json` (`sha256sum` format) |
//! | `manifest.json.sig` | added by `candor sign`: the reviewer's SSH signature of `manifest.json` |
//!
//! Each manifest records the SHA-256 of the previous version's manifest, so the
//! versions of a deal form a chain whose head (the latest manifest's hash) a firm can
//! record elsewhere. A deal's folder is named after the deal file (or its `deal.id`),
//! not after the deal's name, so a renamed deal stays in its folder and two deals never
//! share one.
//!
//! A version is built in a hidden temporary folder beside the versions and renamed into
//! place while an exclusive lock on `DIR/<deal-slug>/.lock` is held, so a failed run
//! leaves nothing and two runs never take the same number. A run stopped by Ctrl-C
//! removes its unfinished folder and its lock; a run killed outright leaves both, and
//! the next filing of the deal removes them (the lock only once its process has ended)
//! and says so.

mod chain;
mod figures;
mod filing;
mod listing;
mod lock;
mod naming;
mod signing;
mod verify;

pub(crate) use filing::{changes_since, prepare_archive, version_before};
pub use filing::{file, file_memo, file_with};
pub use listing::list;
pub(crate) use naming::folder_name;
pub(crate) use signing::{read_allowed_signers, sign_version};
pub use verify::verify;
pub(crate) use verify::{signoff_words, verify_version, VerifyOptions, VerifyReport};

use crate::diag::Diagnostic;
use crate::engine::Analysis;
use crate::files::{output, strict};
use crate::model::{Deal, SignoffDecision};
use crate::report::ChangesSince;
use chrono::NaiveDateTime;
use serde::{Deserialize, Serialize};
use serde_json::Value;
use std::collections::BTreeMap;
use std::path::{Component, Path, PathBuf};

/// File name of a version's manifest.
pub(crate) const MANIFEST: &str = "manifest.json";
/// File name of the manifest's own hash.
pub(crate) const MANIFEST_HASH: &str = "manifest.sha256";
/// File name of a version's SSH signature of its manifest, added by `candor sign`.
pub const SIGNATURE: &str = "manifest.json.sig";
/// File name of the filed analysis.
pub(crate) const ANALYSIS: &str = "analysis.json";
/// Folder of the filed input files inside a version.
pub(crate) const INPUTS: &str = "inputs";
/// Folder of the filed house-style templates inside a version.
pub(crate) const TEMPLATES: &str = "templates";
/// The lock file in a deal's folder.
pub(crate) const LOCK: &str = ".lock";
/// Version of the manifest's layout.
/// Format 2 added `currency`, `previous_manifest` and `renamed_from`.
pub(crate) const MANIFEST_FORMAT: u32 = 2;
/// Version of the filed analysis file's layout: the JSON contract of `rates --json`
/// with `analysis_format` and `candor_version` in front. A file without the key is
/// of the same layout, filed before the key was added.
pub(crate) const ANALYSIS_FORMAT: u64 = 1;
/// At most this many differing figures are listed per version; the rest are counted.
pub(crate) const MAX_FIGURES_SHOWN: usize = 20;

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
    pub(crate) fn is_input(self) -> bool {
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
    /// The deal's currency (absent in format 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub currency: Option<String>,
    /// The deal's folder name in the archive.
    pub slug: String,
    /// This version's folder name (`001`, ...).
    pub version: String,
    /// The SHA-256 of the previous version's `manifest.json`; null for a deal's first
    /// version (absent in format 1, before versions were chained).
    #[serde(default)]
    pub previous_manifest: Option<String>,
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
    /// The deal's name and currency in the previous version, when this filing renamed
    /// the deal (`memo --archive --rename`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub renamed_from: Option<Renamed>,
    /// Every file of the version except the manifest and its hash, sorted by path.
    pub files: Vec<FileEntry>,
}

impl Manifest {
    /// The input files' entries (path, role, hash), which decide whether a new filing
    /// would change anything.
    pub(crate) fn input_key(&self) -> Vec<(String, Role, String)> {
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

/// A deal's name and currency before a rename.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Renamed {
    /// The previous name.
    pub deal: String,
    /// The previous currency.
    pub currency: Option<String>,
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
    /// True when the deal may be filed under a name or currency other than its folder's
    /// latest version's (recorded as a rename).
    pub rename: bool,
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
    /// The deal's folder holds a deal of another name or currency, and the filing did
    /// not say it renames that deal; nothing was filed.
    RenameRefused {
        /// The latest version's folder name.
        latest: String,
        /// The deal's name there.
        deal: String,
        /// Its currency there, where known.
        currency: Option<String>,
    },
}

/// The filing time: `SOURCE_DATE_EPOCH` when given (reproducible runs), else now (UTC).
pub(crate) fn filing_time(source_date_epoch: Option<&str>) -> Result<NaiveDateTime, Diagnostic> {
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

/// Reads a version's manifest bytes: a regular file, at most
/// [`MAX_MANIFEST_BYTES`](crate::limits::MAX_MANIFEST_BYTES).
fn read_manifest_bytes(dir: &Path) -> Result<Vec<u8>, String> {
    strict::read_inside(dir, MANIFEST, crate::limits::MAX_MANIFEST_BYTES)
        .map_err(|e| format!("{MANIFEST} {}", e.words()))
}

/// The deal file of the filed version in `dir`, as its manifest names it: only a plain
/// path inside the version that the manifest lists as the deal, every part of it a
/// real folder or file (no link followed, no FIFO or device), so that nothing outside
/// the version is ever read as its deal. The error is a sentence about the manifest.
pub(crate) fn filed_deal_file(dir: &Path) -> Result<PathBuf, String> {
    let manifest = read_manifest(dir)?;
    let listed = manifest
        .files
        .iter()
        .any(|f| f.path == manifest.deal_file && f.role == Role::Deal);
    if !listed || plain_relative(&manifest.deal_file).as_deref() != Some(&manifest.deal_file) {
        return Err(format!(
            "{MANIFEST} names the deal file `{}`, which is not a file of the version listed as \
             its deal",
            manifest.deal_file
        ));
    }
    strict::read_inside(dir, &manifest.deal_file, crate::limits::MAX_FILE_BYTES)
        .map_err(|e| format!("{} {}", manifest.deal_file, e.words()))?;
    Ok(dir.join(&manifest.deal_file))
}

/// Reads and parses a version's manifest.
fn read_manifest(dir: &Path) -> Result<Manifest, String> {
    let bytes = read_manifest_bytes(dir)?;
    serde_json::from_slice(&bytes).map_err(|e| format!("{MANIFEST} is not a valid manifest: {e}"))
}
