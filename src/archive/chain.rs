//! The chain of a deal's versions: each manifest records the SHA-256 of the previous
//! version's manifest, so a version deleted, swapped, reordered or inserted breaks a
//! link, and the latest manifest's hash (the head) stands for the whole history. A
//! consistent rewrite of the latest versions changes the head, which is why `verify`
//! prints it for the firm to record somewhere else.

use super::*;
use crate::memo::sha256_hex;

/// The head of a deal's chain: its latest version and that manifest's SHA-256.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ChainHead {
    /// The deal's folder.
    pub deal_dir: PathBuf,
    /// The latest version's folder name.
    pub version: String,
    /// The SHA-256 of its `manifest.json`.
    pub sha256: String,
}

/// One version as the chain sees it.
struct Link {
    number: u32,
    name: String,
    /// SHA-256 of its manifest bytes.
    sha256: String,
    /// The manifest's format and its record of the previous manifest.
    format: u32,
    previous: Option<String>,
}

fn link_of(deal_dir: &Path, number: u32, name: &str) -> Option<Link> {
    let dir = deal_dir.join(name);
    let bytes = read_manifest_bytes(&dir).ok()?;
    let manifest: Manifest = serde_json::from_slice(&bytes).ok()?;
    Some(Link {
        number,
        name: name.to_string(),
        sha256: sha256_hex(&bytes),
        format: manifest.format,
        previous: manifest.previous_manifest,
    })
}

/// Checks the links between the versions (`(number, folder name)`, ascending) of the
/// deal folder `deal_dir`: numbers without gaps from 001, and each manifest naming
/// its predecessor's hash. Versions whose manifest cannot be read are left to
/// [`super::verify_version`], which reports them. Returns the head.
pub(super) fn check_chain(
    deal_dir: &Path,
    versions: &[(u32, String)],
    problems: &mut Vec<String>,
    notes: &mut Vec<String>,
) -> Option<ChainHead> {
    let shown = deal_dir.display().to_string();
    let mut expected = 1u32;
    for (n, _) in versions {
        if *n > expected {
            let missing = if *n == expected + 1 {
                format!("version {expected:03} is missing")
            } else {
                format!("versions {expected:03} to {:03} are missing", n - 1)
            };
            problems.push(format!(
                "{shown}: {missing}: the versions are numbered without gaps, so one was \
                 removed or renumbered"
            ));
        }
        expected = n.saturating_add(1);
    }
    let links: Vec<Link> = versions
        .iter()
        .filter_map(|(n, name)| link_of(deal_dir, *n, name))
        .collect();
    let unchained: Vec<&str> = links
        .iter()
        .filter(|l| l.format < 2)
        .map(|l| l.name.as_str())
        .collect();
    if !unchained.is_empty() {
        notes.push(format!(
            "{shown}: version{} {} {} filed before versions were chained (manifest format 1), \
             so {} link to the version before {} not checked",
            if unchained.len() == 1 { "" } else { "s" },
            unchained.join(", "),
            if unchained.len() == 1 { "was" } else { "were" },
            if unchained.len() == 1 { "its" } else { "their" },
            if unchained.len() == 1 {
                "it is"
            } else {
                "them is"
            },
        ));
    }
    let mut before: Option<&Link> = None;
    for link in &links {
        if link.format >= 2 {
            check_link(&shown, before, link, problems);
        }
        before = Some(link);
    }
    links.last().map(|l| ChainHead {
        deal_dir: deal_dir.to_path_buf(),
        version: l.name.clone(),
        sha256: l.sha256.clone(),
    })
}

fn check_link(shown: &str, before: Option<&Link>, link: &Link, problems: &mut Vec<String>) {
    let me = format!("{shown}/{}", link.name);
    match (before, &link.previous) {
        (None, None) => {}
        (None, Some(recorded)) => problems.push(format!(
            "{me}: its manifest records a previous version (manifest SHA-256 {recorded}), but \
             none is filed before it: earlier versions were removed"
        )),
        (Some(prev), None) => problems.push(format!(
            "{me}: its manifest records no previous version, but version {} is filed before \
             it: a version was inserted or replaced",
            prev.name
        )),
        (Some(prev), Some(recorded)) if *recorded != prev.sha256 => {
            let gap = if link.number != prev.number + 1 {
                " (and the numbers between them are missing)"
            } else {
                ""
            };
            problems.push(format!(
                "{me}: its manifest records the previous manifest's SHA-256 as {recorded}, but \
                 {}/{MANIFEST} hashes to {}{gap}: a version was removed, swapped, reordered or \
                 replaced",
                prev.name, prev.sha256
            ));
        }
        (Some(_), Some(_)) => {}
    }
}

/// Folder names of the versions in a deal's folder, as numbers, ascending: real
/// folders named by digits only (links and other entries are not versions).
pub(super) fn numbered_versions(deal_dir: &Path) -> std::io::Result<Vec<(u32, String)>> {
    let mut out = Vec::new();
    for (name, kind) in strict::entries(deal_dir)? {
        if kind == strict::EntryKind::Folder
            && !name.is_empty()
            && name.bytes().all(|b| b.is_ascii_digit())
        {
            if let Ok(n) = name.parse::<u32>() {
                out.push((n, name));
            }
        }
    }
    out.sort();
    Ok(out)
}
