//! `candor verify`: check filed memo versions (see [`crate::archive`]), and the filing
//! step `candor memo --archive` calls.

// Every stage reports through the one `Diagnostic` type (docs/design.md, Pipeline);
// errors are the cold path, so their size does not matter.
#![allow(clippy::result_large_err)]

use super::output::{self, WriteFailure};
use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::archive::{self, Filed, Filing};
use crate::cli::VerifyArgs;
use crate::commands::load::LoadedDeal;
use crate::commands::memo::MemoInputs;
use crate::diag::Diagnostic;
use crate::engine::Analysis;
use crate::report::ChangesSince;
use std::io::Write as _;
use std::path::Path;

/// How often a filing is retried when other filings of the same deal keep taking the
/// next number first; each retry follows a filing that succeeded.
const FILING_ATTEMPTS: usize = 64;

/// Files a memo in `dir`, printing the version's path on stdout. `make_pdf` makes the
/// memo given its "changes since" section (it reports its own failures and returns the
/// exit code); it is called again when another filing takes the next number first.
/// Returns the PDF that was filed (or that equals the unchanged latest version), or the
/// exit code.
pub fn file_memo(
    dir: &Path,
    loaded: &LoadedDeal,
    analysis: &Analysis,
    inputs: &MemoInputs<'_>,
    make_pdf: &dyn Fn(Option<ChangesSince>) -> Result<Vec<u8>, u8>,
) -> Result<Vec<u8>, u8> {
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let filed_at = match archive::filing_time(epoch.as_deref()) {
        Ok(t) => t,
        Err(d) => {
            eprintln!("{}", d.render(None));
            return Err(EXIT_INVALID);
        }
    };
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
    };
    let mut latest = String::new();
    for _ in 0..FILING_ATTEMPTS {
        let previous = match archive::predecessor(dir, &plan) {
            Ok(p) => p,
            Err(d) => {
                eprintln!("{}", d.render(None));
                return Err(EXIT_INTERNAL);
            }
        };
        let changes = previous.as_ref().map(|(version, folder)| {
            archive::changes_since(version, folder, &loaded.deal, analysis)
        });
        let pdf = make_pdf(changes)?;
        let filing = Filing {
            pdf: &pdf,
            previous: previous.as_ref().map(|(v, _)| v.as_str()),
            ..plan.clone()
        };
        let filed = archive::file_with(dir, &filing, &mut output::Disk).map(|(filed, notes)| {
            for note in notes {
                eprintln!("note: {note}");
            }
            filed
        });
        match filed {
            Ok(Filed::New { version, path }) => {
                eprintln!("filed version {version}");
                println!("{}", path.display());
                return Ok(pdf);
            }
            Ok(Filed::Unchanged { version, path }) => {
                eprintln!(
                    "unchanged: version {version} holds exactly these inputs; nothing new was filed"
                );
                println!("{}", path.display());
                return Ok(pdf);
            }
            Ok(Filed::Overtaken { latest: now }) => latest = now,
            Err(d) => {
                eprintln!("{}", d.render(None));
                return Err(EXIT_INTERNAL);
            }
        }
    }
    let d = crate::diag::Diagnostic::error(
        "archive",
        format!(
            "other filings of this deal kept taking the next version number (the latest is \
             {latest}); nothing was filed"
        ),
    )
    .with_hint("run the command again");
    eprintln!("{}", d.render(None));
    Err(EXIT_INTERNAL)
}

/// Makes sure the archive folder `dir` of `memo --archive` is there before the memo is
/// made. An archive is started by filing into it, so a missing archive folder is
/// created, but only inside a folder that exists: a mistyped path does not silently
/// grow a tree of folders. Returns the sentence to show when the folder was created.
pub fn prepare_archive(dir: &Path) -> Result<Option<String>, WriteFailure> {
    let shown = dir.display().to_string();
    let fail = |message: String, hint: &str, code: u8| WriteFailure {
        diagnostic: Diagnostic::error("archive", message)
            .in_file(shown.clone())
            .with_hint(hint),
        code,
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
            EXIT_INVALID,
        )),
        Err(e) => Err(fail(
            format!(
                "cannot create the archive folder: `{}` cannot be read: {}",
                parent.display(),
                output::cause(&e)
            ),
            "check the `--archive` path",
            EXIT_INTERNAL,
        )),
        Ok(m) if !m.is_dir() => Err(fail(
            format!(
                "cannot create the archive folder: `{}` is a file, not a folder",
                parent.display()
            ),
            "check the `--archive` path",
            EXIT_INTERNAL,
        )),
        Ok(_) => match std::fs::create_dir(dir) {
            Ok(()) => Ok(Some(format!("created the archive folder {shown}"))),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => Err(fail(
                format!("cannot file the memo: `{shown}` is a file, not an archive folder"),
                "give the archive's folder with `--archive DIR`",
                EXIT_INTERNAL,
            )),
            Err(e) => Err(fail(
                format!("cannot create the archive folder: {}", output::cause(&e)),
                "file into a folder you may write in, or ask for write access",
                EXIT_INTERNAL,
            )),
        },
    }
}

/// Runs the command.
pub fn run(args: &VerifyArgs) -> u8 {
    let report = match archive::verify(&args.path) {
        Ok(r) => r,
        Err(d) => {
            eprintln!("{}", d.render(None));
            return EXIT_INVALID;
        }
    };
    for note in &report.notes {
        eprintln!("note: {note}");
    }
    let mut out = String::new();
    for problem in &report.problems {
        out.push_str(problem);
        out.push('\n');
    }
    if report.problems.is_empty() {
        out.push_str(&format!(
            "ok: {} version{} verified\n",
            report.versions.len(),
            if report.versions.len() == 1 { "" } else { "s" }
        ));
    }
    // A reader that stops early (`| head`) is not an error worth a panic.
    let _ = std::io::stdout().lock().write_all(out.as_bytes());
    if report.problems.is_empty() {
        EXIT_OK
    } else {
        eprintln!(
            "{} problem{} in {} version{}",
            report.problems.len(),
            if report.problems.len() == 1 { "" } else { "s" },
            report.versions.len(),
            if report.versions.len() == 1 { "" } else { "s" }
        );
        EXIT_INVALID
    }
}
