//! `candor verify`: check filed memo versions (see [`crate::archive`]), and the filing
//! step `candor memo --archive` calls.

use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::archive::{self, Filed, Filing};
use crate::cli::VerifyArgs;
use crate::commands::load::LoadedDeal;
use crate::commands::memo::MemoInputs;
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
        match archive::file(dir, &filing) {
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
