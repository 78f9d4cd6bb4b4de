//! `candor verify`: check filed memo versions (see [`crate::archive`]).

use super::{fail, EXIT_INVALID, EXIT_OK};
use crate::archive;
use crate::cli::VerifyArgs;
use crate::diag::Failure;
use std::io::Write as _;

/// Runs the command.
pub fn run(args: &VerifyArgs) -> u8 {
    let report = match archive::verify(&args.path) {
        Ok(r) => r,
        Err(d) => return fail(&Failure::invalid(d)),
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
