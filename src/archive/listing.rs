//! The ledger of an archive: its deals, their versions, each version's decision and
//! signature, and each deal's chain head, read from the manifests (nothing followed,
//! nothing recomputed: `verify` does that).

use super::chain::numbered_versions;
use super::signing::{check_signature, AllowedSigners, SignatureState};
use super::*;
use crate::files::strict::{self, EntryKind};
use crate::memo::sha256_hex;
use serde_json::json;

/// One version as the ledger shows it.
#[derive(Debug, Clone)]
pub struct ListedVersion {
    /// The version's folder name.
    pub version: String,
    /// What its manifest says, or why it cannot be read.
    pub manifest: Result<Manifest, String>,
    /// Its signature.
    pub signature: SignatureState,
}

/// One deal folder of the archive.
#[derive(Debug, Clone)]
pub struct ListedDeal {
    /// The folder's name.
    pub folder: String,
    /// Its versions, in order.
    pub versions: Vec<ListedVersion>,
    /// The SHA-256 of the latest version's manifest (the chain's head).
    pub head: Option<String>,
}

/// The ledger of an archive.
#[derive(Debug, Clone, Default)]
pub struct Listing {
    /// The deals, by folder name.
    pub deals: Vec<ListedDeal>,
    /// Entries of the archive that are not deal folders (links, special files).
    pub problems: Vec<String>,
}

/// Reads the ledger of the archive folder `archive`. With `allowed`, signatures name
/// their signers; without, they give their key's fingerprint.
pub fn list(archive: &Path, allowed: Option<&AllowedSigners>) -> Result<Listing, Diagnostic> {
    let cannot =
        |e: std::io::Error| archive_error(format!("cannot read: {}", io_words(&e)), archive);
    let mut out = Listing::default();
    let now = filing_time(None).unwrap_or_default();
    for (name, kind) in strict::entries(archive).map_err(cannot)? {
        match kind {
            EntryKind::Folder => {}
            EntryKind::File => continue,
            other => {
                out.problems.push(format!(
                    "{} is {}, not a deal folder",
                    archive.join(&name).display(),
                    other.words()
                ));
                continue;
            }
        }
        let deal_dir = archive.join(&name);
        let versions = numbered_versions(&deal_dir).map_err(cannot)?;
        if versions.is_empty() {
            continue;
        }
        let mut deal = ListedDeal {
            folder: name,
            versions: Vec::new(),
            head: None,
        };
        for (_, version) in versions {
            let dir = deal_dir.join(&version);
            let bytes = read_manifest_bytes(&dir);
            deal.head = bytes.as_ref().ok().map(|b| sha256_hex(b));
            let manifest = bytes.clone().and_then(|b| {
                serde_json::from_slice::<Manifest>(&b)
                    .map_err(|e| format!("{MANIFEST} is not a valid manifest: {e}"))
            });
            let signature = match &bytes {
                Ok(b) => check_signature(&dir, b, allowed, now),
                Err(_) => SignatureState::NotSigned,
            };
            deal.versions.push(ListedVersion {
                version,
                manifest,
                signature,
            });
        }
        out.deals.push(deal);
    }
    Ok(out)
}

fn signature_words(s: &SignatureState) -> String {
    match s {
        SignatureState::NotSigned => "not signed".to_string(),
        SignatureState::SignedBy { principal, .. } => format!("signed by {principal}"),
        SignatureState::SignedUnchecked { fingerprint } => format!("signed, key {fingerprint}"),
        SignatureState::Bad(why) => format!("signature invalid: {why}"),
    }
}

impl Listing {
    /// The ledger as text: per deal its folder and chain head, then one line per
    /// version (number, date filed, decision, signature, name, rename).
    pub fn text(&self) -> String {
        let mut out = String::new();
        for deal in &self.deals {
            out.push_str(&format!(
                "{}  head {}\n",
                deal.folder,
                deal.head.as_deref().unwrap_or("unknown")
            ));
            for v in &deal.versions {
                match &v.manifest {
                    Ok(m) => {
                        let renamed = m
                            .renamed_from
                            .as_ref()
                            .map(|r| format!(" (renamed from {})", r.deal))
                            .unwrap_or_default();
                        out.push_str(&format!(
                            "  {}  {}  {}, {}  {} {}{renamed}\n",
                            v.version,
                            m.filed_at.get(..10).unwrap_or(&m.filed_at),
                            m.signoff.decision,
                            signature_words(&v.signature),
                            m.deal,
                            m.currency.as_deref().unwrap_or(""),
                        ));
                    }
                    Err(why) => out.push_str(&format!("  {}  {why}\n", v.version)),
                }
            }
        }
        for p in &self.problems {
            out.push_str(&format!("problem: {p}\n"));
        }
        out
    }

    /// The ledger as JSON: `deals` (each `folder`, `head`, `versions`: `version`,
    /// `deal`, `currency`, `filed_at`, `candor_version`, `decision`, `reviewed_by`,
    /// `renamed_from`, `signature` {`state`, `signer`, `key`, `reason`}, or `error`)
    /// and `problems`.
    pub fn json(&self) -> Value {
        let deals: Vec<Value> = self
            .deals
            .iter()
            .map(|d| {
                let versions: Vec<Value> = d
                    .versions
                    .iter()
                    .map(|v| {
                        let signature = match &v.signature {
                            SignatureState::NotSigned => json!({"state": "none"}),
                            SignatureState::SignedBy {
                                principal,
                                fingerprint,
                            } => json!({"state": "signed", "signer": principal, "key": fingerprint}),
                            SignatureState::SignedUnchecked { fingerprint } => {
                                json!({"state": "unchecked", "key": fingerprint})
                            }
                            SignatureState::Bad(why) => json!({"state": "invalid", "reason": why}),
                        };
                        match &v.manifest {
                            Ok(m) => json!({
                                "version": v.version,
                                "deal": m.deal,
                                "currency": m.currency,
                                "filed_at": m.filed_at,
                                "candor_version": m.candor_version,
                                "decision": m.signoff.decision,
                                "reviewed_by": m.signoff.reviewed_by,
                                "renamed_from": m.renamed_from.as_ref().map(|r| json!({"deal": r.deal, "currency": r.currency})),
                                "signature": signature,
                            }),
                            Err(why) => json!({"version": v.version, "error": why}),
                        }
                    })
                    .collect();
                json!({"folder": d.folder, "head": d.head, "versions": versions})
            })
            .collect();
        json!({"deals": deals, "problems": self.problems})
    }
}
