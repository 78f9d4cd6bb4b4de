//! Verifying filed versions: nothing in the archive followed blindly, the manifest's
//! hashes and what it says checked against what it describes, the chain of versions,
//! the figures recomputed and compared as figures, the PDF rebuilt, and the reviewer's
//! signature.

use super::chain::{check_chain, numbered_versions, ChainHead};
use super::figures::compare_figures;
use super::filing::signoff_record;
use super::signing::{check_signature, AllowedSigners, SignatureState};
use super::*;
use crate::files::load::load_deal;
use crate::files::strict::{self, EntryKind, StrictError};
use crate::memo::{build_memo_with_changes, sha256_hex, MemoInputs};

/// How to verify.
#[derive(Debug, Clone, Default)]
pub struct VerifyOptions {
    /// The allowed signers to check signatures against; `None`: a valid signature is
    /// reported with its key's fingerprint only.
    pub allowed_signers: Option<AllowedSigners>,
    /// Chain heads recorded earlier (SHA-256 of a manifest, lower-case hex): each must
    /// still be the manifest of a version found, else a version was removed or
    /// rewritten since it was recorded.
    pub expected_heads: Vec<String>,
}

/// The sign-off of one version as verified.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct VersionState {
    /// The version's folder.
    pub dir: PathBuf,
    /// The decision its manifest records.
    pub decision: String,
    /// Its signature.
    pub signature: SignatureState,
}

/// What verifying found.
#[derive(Debug, Clone, Default)]
pub struct VerifyReport {
    /// Every version folder checked.
    pub versions: Vec<PathBuf>,
    /// One precise sentence per problem; empty when everything held.
    pub problems: Vec<String>,
    /// Things not checked or checked differently, and why.
    pub notes: Vec<String>,
    /// The decision and signature of each version whose manifest could be read.
    pub states: Vec<VersionState>,
    /// The head of each deal's chain.
    pub heads: Vec<ChainHead>,
    /// The SHA-256 of each manifest read, with its version's folder.
    pub manifests: Vec<(PathBuf, String)>,
}

/// The words of a version's sign-off and signature: `approved, signed by X`,
/// `approved, not signed`, ...
pub(crate) fn signoff_words(state: &VersionState) -> String {
    let signature = match &state.signature {
        SignatureState::NotSigned => "not signed".to_string(),
        SignatureState::SignedBy { principal, .. } => format!("signed by {principal}"),
        SignatureState::SignedUnchecked { fingerprint } => format!(
            "signed with the key {fingerprint} (give --allowed-signers to know whose it is)"
        ),
        SignatureState::Bad(_) => "signature invalid".to_string(),
    };
    format!("{}, {signature}", state.decision)
}

fn is_version_dir(p: &Path) -> bool {
    EntryKind::at(&p.join(MANIFEST)).is_ok() || EntryKind::at(&p.join(MANIFEST_HASH)).is_ok()
}

fn is_digits(name: &str) -> bool {
    !name.is_empty() && name.bytes().all(|b| b.is_ascii_digit())
}

/// Verifies a version folder, a deal's folder of versions, or a whole archive.
pub fn verify(path: &Path, options: &VerifyOptions) -> Result<VerifyReport, Diagnostic> {
    let cannot = |e: std::io::Error| archive_error(format!("cannot read: {}", io_words(&e)), path);
    let mut report = VerifyReport::default();
    let meta = std::fs::metadata(path).map_err(cannot)?;
    if !meta.is_dir() {
        return Err(archive_error(
            "not a folder; give a version folder, a deal's folder or an archive",
            path,
        ));
    }
    if is_version_dir(path) {
        verify_version(path, &mut report, options);
        check_predecessor_link(path, &mut report);
        check_expected_heads(&mut report, options);
        return Ok(report);
    }
    let entries = strict::entries(path).map_err(cannot)?;
    let looks_like_deal_dir = entries
        .iter()
        .any(|(name, _)| name == LOCK || is_digits(name));
    if looks_like_deal_dir {
        verify_deal(path, &mut report, options).map_err(cannot)?;
    } else {
        for (name, kind) in entries {
            let sub = path.join(&name);
            match kind {
                EntryKind::Folder => verify_deal(&sub, &mut report, options).map_err(cannot)?,
                EntryKind::File => {}
                other => report.problems.push(format!(
                    "{} is {}; an archive holds deal folders, never links or special files",
                    sub.display(),
                    other.words()
                )),
            }
        }
    }
    if report.versions.is_empty() && report.problems.is_empty() {
        report
            .problems
            .push(format!("{}: no filed versions found here", path.display()));
    }
    check_expected_heads(&mut report, options);
    Ok(report)
}

/// Each head recorded earlier must be the manifest of a version still there: the head
/// now, or a version that later ones were filed after (a note).
fn check_expected_heads(report: &mut VerifyReport, options: &VerifyOptions) {
    for expected in &options.expected_heads {
        let expected = expected.trim().to_ascii_lowercase();
        let found = report
            .manifests
            .iter()
            .find(|(_, sha)| *sha == expected)
            .map(|(dir, _)| dir.clone());
        match found {
            Some(dir) => {
                if !report.heads.iter().any(|h| h.sha256 == expected) {
                    report.notes.push(format!(
                        "the recorded head {expected} is {}, and versions were filed after it",
                        dir.display()
                    ));
                }
            }
            None => report.problems.push(format!(
                "the recorded head {expected} is the manifest of no version here: the version \
                 it named was removed or rewritten after it was recorded"
            )),
        }
    }
}

/// Verifies every version of one deal's folder, and the chain between them.
fn verify_deal(
    deal_dir: &Path,
    report: &mut VerifyReport,
    options: &VerifyOptions,
) -> std::io::Result<()> {
    for (name, kind) in strict::entries(deal_dir)? {
        let sub = deal_dir.join(&name);
        let shown = sub.display();
        match kind {
            EntryKind::Folder if name.starts_with(".filing-") => report.notes.push(format!(
                "{shown} is an unfinished filing (in progress, or left by a run that was killed); \
                 it is not a version"
            )),
            EntryKind::Folder if is_version_dir(&sub) => verify_version(&sub, report, options),
            EntryKind::Folder if is_digits(&name) => report
                .problems
                .push(format!("{shown}: a version folder without {MANIFEST}")),
            EntryKind::File if name == LOCK => {}
            EntryKind::Folder | EntryKind::File => report.notes.push(format!(
                "{shown} is not part of the archive (not a version, not the lock); it was not checked"
            )),
            other => report.problems.push(format!(
                "{shown} is {}; a deal's folder holds version folders, never links or special \
                 files{}",
                other.words(),
                if is_digits(&name) {
                    " (a version replaced by a link to a copy elsewhere?)"
                } else {
                    ""
                }
            )),
        }
    }
    let versions = numbered_versions(deal_dir)?;
    if let Some(head) = check_chain(deal_dir, &versions, &mut report.problems, &mut report.notes) {
        report.heads.push(head);
    }
    Ok(())
}

/// In a check of one version only: its link to the version before it.
fn check_predecessor_link(dir: &Path, report: &mut VerifyReport) {
    let Ok(dir) = std::fs::canonicalize(dir) else {
        return;
    };
    let (Some(name), Some(deal_dir)) = (dir.file_name(), dir.parent()) else {
        return;
    };
    let name = name.to_string_lossy().to_string();
    let Ok(versions) = numbered_versions(deal_dir) else {
        return;
    };
    let Some(at) = versions.iter().position(|(_, n)| *n == name) else {
        return;
    };
    let from = at.saturating_sub(1);
    let mut notes = Vec::new();
    let mut problems = Vec::new();
    let head = check_chain(deal_dir, &versions[from..=at], &mut problems, &mut notes);
    // Numbers before the pair are not looked at here; only the link itself counts.
    report.problems.extend(
        problems
            .into_iter()
            .filter(|p| !p.contains("missing: the versions")),
    );
    report.notes.extend(notes);
    if let Some(head) = head {
        if at + 1 == versions.len() {
            report.heads.push(head);
        }
    }
}

/// Reads a listed file of a version: a regular file, at most the size the manifest
/// records (plus one byte, to see that it grew) and never more than
/// [`MAX_FILED_BYTES`](crate::limits::MAX_FILED_BYTES).
fn read_listed(dir: &Path, entry: &FileEntry) -> Result<Vec<u8>, StrictError> {
    let limit = entry
        .bytes
        .saturating_add(1)
        .min(crate::limits::MAX_FILED_BYTES);
    strict::read_inside(dir, &entry.path, limit)
}

/// The manifest's own checks that need no other file: its format, its paths (plain,
/// each once, the deal file and the memo listed with their roles).
fn check_manifest_shape(shown: &str, manifest: &Manifest, problems: &mut Vec<String>) {
    if manifest.format > MANIFEST_FORMAT {
        problems.push(format!(
            "{shown}/{MANIFEST} is of format {}, written by a later candor than this one (which \
             reads formats up to {MANIFEST_FORMAT}); verify it with that release or a later one",
            manifest.format
        ));
    }
    let mut seen = std::collections::BTreeSet::new();
    for entry in &manifest.files {
        if plain_relative(&entry.path).as_deref() != Some(entry.path.as_str()) {
            problems.push(format!(
                "{shown}/{MANIFEST} lists `{}`, which is not a plain path inside the version",
                entry.path
            ));
        } else if !seen.insert(entry.path.as_str()) {
            problems.push(format!("{shown}/{MANIFEST} lists `{}` twice", entry.path));
        }
    }
    let listed_as = |path: &str, role: Role| {
        manifest
            .files
            .iter()
            .any(|f| f.path == path && f.role == role)
    };
    if !listed_as(&manifest.deal_file, Role::Deal) {
        problems.push(format!(
            "{shown}/{MANIFEST}: its deal file `{}` is not one of the version's files listed as \
             the deal; nothing outside the version is read",
            manifest.deal_file
        ));
    }
    if !listed_as(&manifest.memo, Role::Memo) {
        problems.push(format!(
            "{shown}/{MANIFEST}: its memo `{}` is not one of the version's files listed as the \
             memo; nothing outside the version is read",
            manifest.memo
        ));
    }
    if !listed_as(ANALYSIS, Role::Analysis) {
        problems.push(format!(
            "{shown}/{MANIFEST} does not list {ANALYSIS} as the analysis"
        ));
    }
}

/// Checks one version: the folder and everything in it (nothing followed), the
/// manifest's own hash and format, every listed hash, unlisted files, the manifest
/// against the filed deal and analysis, the figures recomputed, the PDF rebuilt, and
/// the signature.
pub(crate) fn verify_version(dir: &Path, report: &mut VerifyReport, options: &VerifyOptions) {
    report.versions.push(dir.to_path_buf());
    let shown = dir.display().to_string();
    match EntryKind::at(dir) {
        Ok(EntryKind::Folder) => {}
        Ok(kind) => {
            report.problems.push(format!(
                "{shown} is {}, not a version folder; nothing in an archive is followed",
                kind.words()
            ));
            return;
        }
        Err(e) => {
            report
                .problems
                .push(format!("{shown} cannot be read: {}", io_words(&e)));
            return;
        }
    }
    let problems = &mut report.problems;

    let manifest_bytes = match read_manifest_bytes(dir) {
        Ok(b) => b,
        Err(why) => {
            problems.push(format!("{shown}/{why}"));
            return;
        }
    };
    // The manifest's own hash catches accidental damage to it; like every hash kept
    // beside the data it does not stop someone rewriting both on purpose: the chain,
    // its head recorded elsewhere, and the signature do.
    match strict::read_inside(dir, MANIFEST_HASH, 4096) {
        Ok(bytes) => {
            let text = String::from_utf8_lossy(&bytes);
            let recorded = text.split_whitespace().next().unwrap_or("").to_string();
            let actual = sha256_hex(&manifest_bytes);
            if recorded != actual {
                problems.push(format!(
                    "{shown}/{MANIFEST} changed: its SHA-256 is {actual}, {MANIFEST_HASH} records {recorded}"
                ));
            }
        }
        Err(e) => problems.push(format!("{shown}/{MANIFEST_HASH} {}", e.words())),
    }
    report
        .manifests
        .push((dir.to_path_buf(), sha256_hex(&manifest_bytes)));
    let problems = &mut report.problems;
    let manifest: Manifest = match serde_json::from_slice(&manifest_bytes) {
        Ok(m) => m,
        Err(e) => {
            problems.push(format!(
                "{shown}/{MANIFEST} is not a valid manifest: {e}; nothing else in this version can be checked"
            ));
            return;
        }
    };
    let real = std::fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf());
    let folder_name = real
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_default();
    if manifest.version != folder_name {
        problems.push(format!(
            "{shown}/{MANIFEST} names version {}, but the folder is {folder_name}",
            manifest.version
        ));
    }
    if let Some(deal_folder) = real.parent().and_then(Path::file_name) {
        let deal_folder = deal_folder.to_string_lossy();
        if manifest.slug != deal_folder {
            problems.push(format!(
                "{shown}/{MANIFEST} was filed in the deal folder `{}`, but lies in `{deal_folder}`",
                manifest.slug
            ));
        }
    }
    let shape_problems = problems.len();
    check_manifest_shape(&shown, &manifest, problems);
    let paths_hold = problems.len() == shape_problems;

    // Everything in the folder, links not followed.
    let mut unsafe_entries = false;
    match strict::tree(dir) {
        Ok(tree) => {
            for (rel, kind) in tree {
                let listed = manifest.files.iter().any(|f| f.path == rel);
                let holds_listed = manifest
                    .files
                    .iter()
                    .any(|f| f.path.starts_with(&format!("{rel}/")));
                match kind {
                    EntryKind::File
                        if listed
                            || [MANIFEST, MANIFEST_HASH, SIGNATURE].contains(&rel.as_str()) => {}
                    EntryKind::Folder if holds_listed => {}
                    EntryKind::File | EntryKind::Folder if !listed => problems.push(format!(
                        "{shown}/{rel} is not listed in the manifest (a filed version is never \
                         added to)"
                    )),
                    // A listed path of the wrong kind is reported where it is read.
                    EntryKind::Folder => {}
                    other => {
                        unsafe_entries = true;
                        if !listed {
                            problems.push(format!(
                                "{shown}/{rel} is {}; nothing in a filed version is a link or a \
                                 special file, and it was not followed",
                                other.words()
                            ));
                        }
                    }
                }
            }
        }
        Err(e) => problems.push(format!("{shown} cannot be listed: {}", io_words(&e))),
    }

    let mut filed: BTreeMap<String, Vec<u8>> = BTreeMap::new();
    for entry in &manifest.files {
        if plain_relative(&entry.path).as_deref() != Some(entry.path.as_str()) {
            continue;
        }
        match read_listed(dir, entry) {
            Ok(bytes) => {
                let sha = sha256_hex(&bytes);
                if sha != entry.sha256 {
                    problems.push(format!(
                        "{shown}/{} changed: its SHA-256 is {sha}, the manifest records {} \
                         ({} bytes now, {} filed)",
                        entry.path,
                        entry.sha256,
                        bytes.len(),
                        entry.bytes
                    ));
                }
                filed.insert(entry.path.clone(), bytes);
            }
            Err(StrictError::TooLarge { .. }) => problems.push(format!(
                "{shown}/{} changed: it is larger than the {} bytes filed, so it was not read",
                entry.path, entry.bytes
            )),
            Err(e) => {
                if matches!(e, StrictError::Kind { .. }) {
                    unsafe_entries = true;
                }
                problems.push(format!("{shown}/{} {}", entry.path, e.words()));
            }
        }
    }
    let signature = check_signature(
        dir,
        &manifest_bytes,
        options.allowed_signers.as_ref(),
        crate::archive::filing_time(None).unwrap_or_default(),
    );
    if let SignatureState::Bad(why) = &signature {
        problems.push(format!("{shown}/{why}"));
    }
    report.states.push(VersionState {
        dir: dir.to_path_buf(),
        decision: manifest.signoff.decision.clone(),
        signature,
    });
    if !paths_hold {
        problems.push(format!(
            "{shown}: the figures and the PDF were not recomputed, since the manifest's paths \
             do not hold"
        ));
        return;
    }
    if unsafe_entries {
        problems.push(format!(
            "{shown}: the figures and the PDF were not recomputed, since the version holds \
             links or special files"
        ));
        return;
    }
    recompute(dir, &shown, &manifest, &filed, report);
}

/// The second half of [`verify_version`]: the filed deal loaded again, checked against
/// the manifest, analysed and compared with the filed analysis, the PDF rebuilt.
fn recompute(
    dir: &Path,
    shown: &str,
    manifest: &Manifest,
    filed: &BTreeMap<String, Vec<u8>>,
    report: &mut VerifyReport,
) {
    let problems = &mut report.problems;
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
    // What the manifest says, against what it describes.
    let recorded = signoff_record(&loaded.deal);
    if manifest.signoff != recorded {
        problems.push(format!(
            "{shown}/{MANIFEST} records the sign-off as {}, but the filed deal file says {}",
            signoff_summary(&manifest.signoff),
            signoff_summary(&recorded)
        ));
    }
    if manifest.deal != loaded.deal.name {
        problems.push(format!(
            "{shown}/{MANIFEST} names the deal `{}`, but the filed deal file names it `{}`",
            manifest.deal, loaded.deal.name
        ));
    }
    if let Some(currency) = &manifest.currency {
        if *currency != loaded.deal.currency {
            problems.push(format!(
                "{shown}/{MANIFEST} records the currency {currency}, but the filed deal file says {}",
                loaded.deal.currency
            ));
        }
    }

    let analysis = crate::engine::analyse(&loaded.deal);
    let analysis_path = format!("{shown}/{ANALYSIS}");
    let running = crate::release::version();
    if let Some(bytes) = filed.get(ANALYSIS) {
        match split_analysis(bytes) {
            Err(why) => problems.push(format!("{analysis_path}: {why}")),
            Ok((format, version, body)) => {
                if format > ANALYSIS_FORMAT {
                    problems.push(format!(
                        "{analysis_path} is of format {format}, written by a later candor; this \
                         one reads format {ANALYSIS_FORMAT}"
                    ));
                }
                if let Some(v) = &version {
                    if *v != manifest.candor_version {
                        problems.push(format!(
                            "{shown}/{MANIFEST} records candor {}, but {ANALYSIS} was written by \
                             candor {v}",
                            manifest.candor_version
                        ));
                    }
                }
                match crate::present::json::analysis(&analysis) {
                    Err(e) => problems.push(format!(
                        "{analysis_path}: the recomputed analysis cannot be written: {e}"
                    )),
                    Ok(fresh) => {
                        let c = compare_figures(&body, &fresh);
                        let total = c.problems.len();
                        for p in c.problems.iter().take(MAX_FIGURES_SHOWN) {
                            problems.push(format!("{analysis_path}: {p}"));
                        }
                        if total > MAX_FIGURES_SHOWN {
                            problems.push(format!(
                                "{analysis_path}: and {} more differing figures",
                                total - MAX_FIGURES_SHOWN
                            ));
                        }
                        if !c.wording.is_empty() {
                            let shown_paths: Vec<&str> =
                                c.wording.iter().take(5).map(String::as_str).collect();
                            let more = c.wording.len().saturating_sub(5);
                            report.notes.push(format!(
                                "{analysis_path}: the wording or layout of {} entr{} differs \
                                 from candor {running}'s ({}{}; filed by candor {}); these are \
                                 words, not figures, and every figure agrees{}",
                                c.wording.len(),
                                if c.wording.len() == 1 { "y" } else { "ies" },
                                shown_paths.join(", "),
                                if more > 0 {
                                    format!(" and {more} more")
                                } else {
                                    String::new()
                                },
                                manifest.candor_version,
                                if total > 0 {
                                    " but those listed as problems"
                                } else {
                                    ""
                                }
                            ));
                        }
                    }
                }
            }
        }
    }
    let problems = &mut report.problems;

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
        match filed.get(&entry.path).map(|b| String::from_utf8(b.clone())) {
            Some(Ok(text)) => {
                templates.insert(name, text);
            }
            _ => {
                problems.push(format!(
                    "{shown}/{}: the template cannot be read as text; the PDF cannot be rebuilt",
                    entry.path
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
        companions: &loaded.companions,
        templates,
        fonts: crate::pdf::HouseFonts::default(),
        created,
    };
    // The section on changes is rebuilt from the version before this one by number,
    // exactly as it was made when this version was filed.
    let before = version_before(dir);
    // When the chain says this version followed another manifest than the one now
    // before it, its section on changes cannot be rebuilt as it was filed.
    let followed_other = manifest.format >= 2
        && match &before {
            Some((_, folder)) => read_manifest_bytes(folder)
                .map(|b| Some(sha256_hex(&b)) != manifest.previous_manifest)
                .unwrap_or(true),
            None => manifest.previous_manifest.is_some(),
        };
    let changes =
        before.map(|(version, before)| changes_since(&version, &before, &loaded.deal, &analysis));
    // The title block names the version the memo was filed as: this folder's.
    let filed_as = dir.file_name().map(|n| n.to_string_lossy().to_string());
    let rebuilt = match build_memo_with_changes(
        &analysis,
        &loaded.deal,
        inputs,
        changes,
        filed_as.as_deref(),
    ) {
        Ok(m) => m.pdf,
        Err(f) => {
            problems.push(format!(
                "{shown}: the PDF cannot be rebuilt: {}",
                f.diagnostics
                    .iter()
                    .map(|d| d.message.as_str())
                    .collect::<Vec<_>>()
                    .join("; ")
            ));
            return;
        }
    };
    let pdf_path = format!("{shown}/{}", manifest.memo);
    let Some(pdf) = filed.get(&manifest.memo) else {
        return;
    };
    if *pdf == rebuilt {
        return;
    }
    if manifest.candor_version != running {
        report.notes.push(format!(
            "{pdf_path} was filed by candor {}, and candor {running} lays the memo out \
             differently, so it could not be rebuilt byte for byte; it is checked by its \
             SHA-256 in the manifest, and its figures through {ANALYSIS}",
            manifest.candor_version
        ));
        return;
    }
    let at = pdf
        .iter()
        .zip(&rebuilt)
        .position(|(a, b)| a != b)
        .unwrap_or(pdf.len().min(rebuilt.len()));
    let why = if followed_other {
        "; its section on changes since the previous version was rebuilt from the version \
         now before it, which is not the one it was filed after (see the chain)"
    } else {
        ""
    };
    problems.push(format!(
        "{pdf_path} differs from the PDF rebuilt from the filed inputs (first difference at byte \
         {at}; {} bytes filed, {} rebuilt){why}",
        pdf.len(),
        rebuilt.len()
    ));
}

fn signoff_summary(s: &SignoffRecord) -> String {
    let mut out = s.decision.clone();
    if let Some(r) = &s.reviewed_by {
        out.push_str(&format!(", reviewed by {r}"));
    }
    if let Some(p) = &s.prepared_by {
        out.push_str(&format!(", prepared by {p}"));
    }
    if let Some(d) = &s.date {
        out.push_str(&format!(", dated {d}"));
    }
    out
}

/// A filed analysis split into its header (`analysis_format`, 1 when absent;
/// `candor_version`, when present) and the JSON contract it holds.
pub(super) fn split_analysis(bytes: &[u8]) -> Result<(u64, Option<String>, Value), String> {
    let mut value: Value =
        serde_json::from_slice(bytes).map_err(|e| format!("not valid JSON: {e}"))?;
    let Some(map) = value.as_object_mut() else {
        return Err("not a JSON object".to_string());
    };
    let format = match map.shift_remove("analysis_format") {
        None => 1,
        Some(v) => v
            .as_u64()
            .ok_or_else(|| format!("analysis_format {v} is not a whole number"))?,
    };
    let version = match map.shift_remove("candor_version") {
        None => None,
        Some(Value::String(s)) => Some(s),
        Some(v) => return Err(format!("candor_version {v} is not text")),
    };
    Ok((format, version, value))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_plain_relative_paths_are_filed() {
        assert_eq!(plain_relative("a/b.csv").as_deref(), Some("a/b.csv"));
        assert_eq!(plain_relative("./b.csv").as_deref(), Some("b.csv"));
        assert_eq!(plain_relative("../b.csv"), None);
        assert_eq!(plain_relative("/etc/b.csv"), None);
        assert_eq!(plain_relative(""), None);
    }

    #[test]
    fn an_analysis_header_is_read_and_an_old_file_has_none() {
        let (f, v, body) =
            split_analysis(br#"{"analysis_format": 1, "candor_version": "0.1.0", "deal": "x"}"#)
                .expect("reads");
        assert_eq!((f, v.as_deref()), (1, Some("0.1.0")));
        assert_eq!(body, serde_json::json!({"deal": "x"}));
        let (f, v, _) = split_analysis(br#"{"deal": "x"}"#).expect("reads");
        assert_eq!((f, v), (1, None));
        assert!(split_analysis(b"[1]").is_err());
    }
}
