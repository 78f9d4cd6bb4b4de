//! Verifying filed versions: the manifest's hashes, unlisted files, the recomputed
//! analysis and the rebuilt PDF.

use super::*;
use crate::files::load::load_deal;
use crate::memo::{build_memo_with_changes, sha256_hex, MemoInputs};

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
        fonts: crate::pdf::HouseFonts::default(),
        created,
    };
    // The section on changes is rebuilt from the version before this one by number,
    // exactly as it was made when this version was filed.
    let changes = version_before(dir)
        .map(|(version, before)| changes_since(&version, &before, &loaded.deal, &analysis));
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
    let fresh = match crate::present::json::analysis_text(recomputed) {
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
            // Only the filed keys are compared: the JSON contract adds keys and never
            // removes one (docs/design.md), so a key the filed analysis lacks was added
            // after it was filed (such as `sensitivity`), and the manifest's hash
            // already shows that no key was taken out of the file.
            for k in x.keys() {
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
    fn only_plain_relative_paths_are_filed() {
        assert_eq!(plain_relative("a/b.csv").as_deref(), Some("a/b.csv"));
        assert_eq!(plain_relative("./b.csv").as_deref(), Some("b.csv"));
        assert_eq!(plain_relative("../b.csv"), None);
        assert_eq!(plain_relative("/etc/b.csv"), None);
        assert_eq!(plain_relative(""), None);
    }

    #[test]
    fn keys_added_to_the_contract_after_filing_are_not_differences() {
        let filed: Value = serde_json::json!({"s": [{"npv": "1.00"}]});
        let now: Value = serde_json::json!({"s": [{"npv": "1.00", "sensitivity": {"x": 1}}]});
        let mut out = Vec::new();
        json_diff("", &filed, &now, &mut out);
        assert!(out.is_empty(), "{out:?}");
        json_diff("", &now, &filed, &mut out);
        assert_eq!(out.len(), 1, "a filed key missing now is a difference");
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
