//! `candor memo`.

use crate::cli::MemoArgs;

/// Runs the command.
pub fn run(_args: &MemoArgs) -> u8 {
    todo!()
}
