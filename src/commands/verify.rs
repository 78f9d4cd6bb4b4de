//! `candor verify`: check filed memo versions (see [`crate::archive`]), and the filing
//! step `candor memo --archive` calls.

use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::archive::{self, Filed, Filing};
use crate::cli::VerifyArgs;
use crate::commands::load::LoadedDeal;
use crate::commands::memo::MemoInputs;
use crate::engine::Analysis;
use std::io::Write as _;
use std::path::Path;

/// Files a finished memo in `dir`, printing the version's path on stdout; returns the
/// exit code.
pub fn file_memo(
    dir: &Path,
    loaded: &LoadedDeal,
    analysis: &Analysis,
    inputs: &MemoInputs<'_>,
    pdf: &[u8],
) -> u8 {
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let filed_at = match archive::filing_time(epoch.as_deref()) {
        Ok(t) => t,
        Err(d) => {
            eprintln!("{}", d.render(None));
            return EXIT_INVALID;
        }
    };
    let filing = Filing {
        deal: &loaded.deal,
        deal_file_name: inputs.source_name,
        source: &loaded.source,
        companions: &loaded.companions,
        templates: &inputs.templates,
        analysis,
        pdf,
        memo_created: inputs.created,
        filed_at,
    };
    match archive::file(dir, &filing) {
        Ok(Filed::New { version, path }) => {
            eprintln!("filed version {version}");
            println!("{}", path.display());
            EXIT_OK
        }
        Ok(Filed::Unchanged { version, path }) => {
            eprintln!(
                "unchanged: version {version} holds exactly these inputs; nothing new was filed"
            );
            println!("{}", path.display());
            EXIT_OK
        }
        Err(d) => {
            eprintln!("{}", d.render(None));
            EXIT_INTERNAL
        }
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
