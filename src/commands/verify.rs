//! `candor verify`: check filed memo versions (see [`crate::archive`]).

use super::{fail, EXIT_INVALID, EXIT_OK};
use crate::archive::{self, VerifyOptions};
use crate::cli::VerifyArgs;
use crate::diag::{terminal_safe, Failure};
use std::io::Write as _;

/// Runs the command.
pub fn run(args: &VerifyArgs) -> u8 {
    let mut options = VerifyOptions {
        expected_heads: args.head.clone(),
        ..VerifyOptions::default()
    };
    if let Some(path) = &args.allowed_signers {
        match archive::read_allowed_signers(path) {
            Ok(a) => {
                for skipped in &a.skipped {
                    eprintln!(
                        "note: {}: {} (left out)",
                        path.display(),
                        terminal_safe(skipped)
                    );
                }
                options.allowed_signers = Some(a);
            }
            Err(d) => return fail(&Failure::invalid(d)),
        }
    }
    let report = match archive::verify(&args.path, &options) {
        Ok(r) => r,
        Err(d) => return fail(&Failure::invalid(d)),
    };
    for note in &report.notes {
        eprintln!("note: {}", terminal_safe(note));
    }
    let mut out = String::new();
    for state in &report.states {
        out.push_str(&format!(
            "sign-off of {}: {}\n",
            state.dir.display(),
            archive::signoff_words(state)
        ));
    }
    for head in &report.heads {
        out.push_str(&format!(
            "head of {}: version {}, manifest SHA-256 {}\n",
            head.deal_dir.display(),
            head.version,
            head.sha256
        ));
    }
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
    let out: String = out
        .lines()
        .map(|l| format!("{}\n", terminal_safe(l)))
        .collect();
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
