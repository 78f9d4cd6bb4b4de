//! Filing: a memo becomes the next numbered version of its deal, built in a hidden
//! folder and renamed into place under the deal's lock.

use super::lock::ArchiveLock;
use super::*;
use crate::diag::{Failure, FailureClass};
use crate::files::load::{load_deal, LoadedDeal};
use crate::files::output::{Disk, Sink, Unfinished, UnfinishedKind};
use crate::files::strict::{self, EntryKind};
use crate::memo::{sha256_hex, MemoInputs};

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
    // The JSON contract, as `rates --json` prints it, after its format and candor's
    // version.
    let analysis = analysis_file(filing.analysis).map_err(|e| {
        Diagnostic::error("archive", format!("cannot write the analysis as JSON: {e}"))
    })?;
    files.push((ANALYSIS.to_string(), Role::Analysis, analysis.into_bytes()));
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

/// The filed analysis: `analysis_format` and `candor_version`, then the JSON contract
/// of `rates --json`.
fn analysis_file(analysis: &Analysis) -> Result<String, serde_json::Error> {
    let mut out = serde_json::Map::new();
    out.insert("analysis_format".to_string(), Value::from(ANALYSIS_FORMAT));
    out.insert(
        "candor_version".to_string(),
        Value::String(crate::release::version()),
    );
    if let Value::Object(body) = crate::present::json::analysis(analysis)? {
        out.extend(body);
    }
    Ok(serde_json::to_string_pretty(&Value::Object(out))? + "\n")
}

pub(super) fn signoff_record(deal: &Deal) -> SignoffRecord {
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
    super::chain::numbered_versions(deal_dir)
}

/// Refuses to file into a deal folder that holds a link or a special file (where a
/// version, the lock or a filing folder should be), or that is not a real folder.
fn refuse_unsafe_deal_dir(deal_dir: &Path) -> Result<(), Diagnostic> {
    let refuse = |what: String| {
        Err(archive_error(
            format!("{what}; an archive holds no links or special files, so nothing was filed"),
            deal_dir,
        )
        .with_hint("run `candor verify` on the archive, and put the real folders back"))
    };
    match EntryKind::at(deal_dir) {
        Ok(EntryKind::Folder) => {}
        Ok(kind) => return refuse(format!("the deal's folder is {}", kind.words())),
        Err(_) => return Ok(()),
    }
    let entries = strict::entries(deal_dir).map_err(|e| {
        archive_error(
            format!("cannot list the deal's folder: {}", io_words(&e)),
            deal_dir,
        )
    })?;
    for (name, kind) in entries {
        if !matches!(kind, EntryKind::Folder | EntryKind::File) {
            return refuse(format!("`{name}` in the deal's folder is {}", kind.words()));
        }
    }
    Ok(())
}

/// The currency the version in `dir` was filed with: its manifest's, or for a manifest
/// of format 1 its analysis file's.
fn filed_currency(dir: &Path, manifest: &Manifest) -> Option<String> {
    if let Some(c) = &manifest.currency {
        return Some(c.clone());
    }
    let bytes = strict::read_inside(dir, ANALYSIS, crate::limits::MAX_FILED_BYTES).ok()?;
    let (_, _, body) = super::verify::split_analysis(&bytes).ok()?;
    body.get("currency")?.as_str().map(str::to_string)
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
    let slug = folder_name(filing.deal_file_name, filing.deal.id.as_deref());
    let files = version_files(filing, &slug)?;
    let deal_dir = archive.join(&slug);
    refuse_unsafe_deal_dir(&deal_dir)?;
    let first = EntryKind::at(&deal_dir).is_err();
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
    refuse_unsafe_deal_dir(deal_dir)?;

    let versions = versions_in(deal_dir).map_err(|e| {
        archive_error(
            format!("cannot list the filed versions: {}", io_words(&e)),
            deal_dir,
        )
    })?;
    let mut entries: Vec<FileEntry> = file_entries(&files);
    entries.sort_by(|a, b| a.path.cmp(&b.path));
    let mut previous_manifest = None;
    let mut renamed_from = None;
    let next = match versions.last() {
        Some((n, name)) => {
            let latest_dir = deal_dir.join(name);
            let latest_bytes = read_manifest_bytes(&latest_dir);
            let latest = latest_bytes
                .clone()
                .and_then(|b| {
                    serde_json::from_slice::<Manifest>(&b)
                        .map_err(|e| format!("{MANIFEST} is not a valid manifest: {e}"))
                })
                .map_err(|why| {
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
            let currency = filed_currency(&latest_dir, &latest);
            if latest.deal != filing.deal.name
                || currency
                    .as_deref()
                    .is_some_and(|c| c != filing.deal.currency)
            {
                if !filing.rename {
                    return Ok((
                        Filed::RenameRefused {
                            latest: name.clone(),
                            deal: latest.deal,
                            currency,
                        },
                        notes,
                    ));
                }
                renamed_from = Some(Renamed {
                    deal: latest.deal.clone(),
                    currency,
                });
            }
            previous_manifest = latest_bytes.ok().map(|b| sha256_hex(&b));
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
        currency: Some(filing.deal.currency.clone()),
        slug: slug.to_string(),
        version: version.clone(),
        previous_manifest,
        candor_version: crate::release::version(),
        filed_at: filing.filed_at.format("%Y-%m-%dT%H:%M:%SZ").to_string(),
        memo_created: filing.memo_created.format("%Y-%m-%dT%H:%M:%S").to_string(),
        deal_file,
        memo: format!("{slug}.pdf"),
        signoff: signoff_record(filing.deal),
        renamed_from,
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
    let pending = Unfinished::register(tmp.path(), UnfinishedKind::Folder, deal_dir);
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
pub(crate) fn predecessor(
    archive: &Path,
    filing: &Filing<'_>,
) -> Result<Option<(String, PathBuf)>, Diagnostic> {
    let deal_dir = archive.join(folder_name(
        filing.deal_file_name,
        filing.deal.id.as_deref(),
    ));
    if EntryKind::at(&deal_dir).ok() != Some(EntryKind::Folder) {
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
pub(crate) fn version_before(dir: &Path) -> Option<(String, PathBuf)> {
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
pub(crate) fn changes_since(
    version: &str,
    dir: &Path,
    deal: &Deal,
    analysis: &Analysis,
) -> ChangesSince {
    let old = filed_deal_file(dir)
        .ok()
        .and_then(|file| load_deal(&file).ok());
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

/// How often a filing is retried when other filings of the same deal keep taking the
/// next number first; each retry follows a filing that succeeded.
const FILING_ATTEMPTS: usize = 64;

/// A memo filed by [`file_memo`].
#[derive(Debug, Clone)]
pub struct FiledMemo {
    /// The PDF that was filed, or that equals the unchanged latest version.
    pub pdf: Vec<u8>,
    /// A new version, or the unchanged latest one.
    pub outcome: Filed,
    /// One sentence for each leftover of an interrupted filing that was removed.
    pub notes: Vec<String>,
}

/// Files a memo in `dir`. `make_pdf` makes the memo given its "changes since" section;
/// it is called again when another filing takes the next number first. `rename`
/// allows filing under a name or currency other than the deal folder's latest version's,
/// recorded in the manifest as a rename.
pub fn file_memo(
    dir: &Path,
    loaded: &LoadedDeal,
    analysis: &Analysis,
    inputs: &MemoInputs<'_>,
    make_pdf: &dyn Fn(Option<ChangesSince>) -> Result<Vec<u8>, Failure>,
    rename: bool,
) -> Result<FiledMemo, Failure> {
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let filed_at = filing_time(epoch.as_deref()).map_err(Failure::invalid)?;
    // Without a PDF, for finding the version this memo will follow.
    let plan = Filing {
        deal: &loaded.deal,
        deal_file_name: inputs.source_name,
        source: &loaded.source,
        companions: &loaded.companions,
        templates: &inputs.templates,
        analysis,
        pdf: &[],
        memo_created: inputs.created,
        filed_at,
        previous: None,
        rename,
    };
    let mut latest = String::new();
    let mut notes = Vec::new();
    for _ in 0..FILING_ATTEMPTS {
        let previous = predecessor(dir, &plan).map_err(Failure::internal)?;
        let changes = previous
            .as_ref()
            .map(|(version, folder)| changes_since(version, folder, &loaded.deal, analysis));
        let pdf = make_pdf(changes)?;
        let filing = Filing {
            pdf: &pdf,
            previous: previous.as_ref().map(|(v, _)| v.as_str()),
            ..plan.clone()
        };
        let (filed, more) = file_with(dir, &filing, &mut Disk).map_err(Failure::internal)?;
        notes.extend(more);
        match filed {
            Filed::Overtaken { latest: now } => latest = now,
            Filed::RenameRefused {
                latest: version,
                deal,
                currency,
            } => {
                let was = match &currency {
                    Some(c) if *c != loaded.deal.currency => {
                        format!("`{deal}` in {c}")
                    }
                    _ => format!("`{deal}`"),
                };
                let now = match &currency {
                    Some(c) if *c != loaded.deal.currency => {
                        format!("`{}` in {}", loaded.deal.name, loaded.deal.currency)
                    }
                    _ => format!("`{}`", loaded.deal.name),
                };
                return Err(Failure::invalid(
                    Diagnostic::error(
                        "archive",
                        format!(
                            "the deal's folder holds {was} (version {version}), and this deal \
                             file names {now}; nothing was filed"
                        ),
                    )
                    .in_file(loaded.path.display().to_string())
                    .with_hint(
                        "if this is the same deal renamed, file it with `--rename`, which \
                         records the rename; if it is another deal, give its file another \
                         name or a `deal.id` of its own",
                    ),
                ));
            }
            outcome => {
                return Ok(FiledMemo {
                    pdf,
                    outcome,
                    notes,
                })
            }
        }
    }
    Err(Failure::internal(
        Diagnostic::error(
            "archive",
            format!(
                "other filings of this deal kept taking the next version number (the latest \
                 is {latest}); nothing was filed"
            ),
        )
        .with_hint("run the command again"),
    ))
}

/// Makes sure the archive folder `dir` of `memo --archive` is there before the memo is
/// made. An archive is started by filing into it, so a missing archive folder is
/// created, but only inside a folder that exists: a mistyped path does not silently
/// grow a tree of folders. Returns the sentence to show when the folder was created.
pub(crate) fn prepare_archive(dir: &Path) -> Result<Option<String>, Failure> {
    let shown = dir.display().to_string();
    let fail = |message: String, hint: &str, class: FailureClass| {
        Failure::many(
            vec![Diagnostic::error("archive", message)
                .in_file(shown.clone())
                .with_hint(hint)],
            class,
        )
    };
    if dir.is_dir() {
        return Ok(None);
    }
    let parent = output::folder_of(dir);
    match std::fs::metadata(&parent) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Err(fail(
            format!(
                "cannot create the archive folder: the folder `{}` it would go in does not \
                 exist",
                parent.display()
            ),
            "check the `--archive` path, or create the folders above the archive first",
            FailureClass::Invalid,
        )),
        Err(e) => Err(fail(
            format!(
                "cannot create the archive folder: `{}` cannot be read: {}",
                parent.display(),
                output::cause(&e)
            ),
            "check the `--archive` path",
            FailureClass::Internal,
        )),
        Ok(m) if !m.is_dir() => Err(fail(
            format!(
                "cannot create the archive folder: `{}` is a file, not a folder",
                parent.display()
            ),
            "check the `--archive` path",
            FailureClass::Internal,
        )),
        Ok(_) => match std::fs::create_dir(dir) {
            Ok(()) => Ok(Some(format!("created the archive folder {shown}"))),
            // Another filing created it a moment ago: nothing to do.
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && dir.is_dir() => Ok(None),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => Err(fail(
                format!("cannot file the memo: `{shown}` is a file, not an archive folder"),
                "give the archive's folder with `--archive DIR`",
                FailureClass::Internal,
            )),
            Err(e) => Err(fail(
                format!("cannot create the archive folder: {}", output::cause(&e)),
                "file into a folder you may write in, or ask for write access",
                FailureClass::Internal,
            )),
        },
    }
}
