//! `candor rates`.

use crate::cli::RatesArgs;

/// Runs the command.
pub fn run(_args: &RatesArgs) -> u8 {
    todo!()
}
