//! `candor ledger`: the archive's deals, versions, decisions and signatures, as text or
//! JSON (see [`crate::archive::list`]).

use super::{fail, EXIT_INVALID, EXIT_OK};
use crate::archive;
use crate::cli::LedgerArgs;
use crate::diag::{terminal_safe, Failure};
use std::io::Write as _;

/// Runs the command.
pub fn run(args: &LedgerArgs) -> u8 {
    let allowed = match &args.allowed_signers {
        Some(path) => match archive::read_allowed_signers(path) {
            Ok(a) => Some(a),
            Err(d) => return fail(&Failure::invalid(d)),
        },
        None => None,
    };
    let listing = match archive::list(&args.archive, allowed.as_ref()) {
        Ok(l) => l,
        Err(d) => return fail(&Failure::invalid(d)),
    };
    let out = if args.json {
        format!("{:#}\n", listing.json())
    } else {
        // Each line made safe on its own, so a name cannot forge a line.
        listing
            .text()
            .lines()
            .map(|l| format!("{}\n", terminal_safe(l)))
            .collect()
    };
    let _ = std::io::stdout().lock().write_all(out.as_bytes());
    if listing.problems.is_empty() {
        EXIT_OK
    } else {
        EXIT_INVALID
    }
}
