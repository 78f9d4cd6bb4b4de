//! `candor check`.

use crate::cli::CheckArgs;

/// Runs the command.
pub fn run(_args: &CheckArgs) -> u8 {
    todo!()
}
