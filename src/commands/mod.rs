//! The command layer, one module per subcommand: each turns its arguments into calls
//! of the library, prints the outcome and chooses the exit code. No logic lives here
//! that a library caller would need; failures arrive as [`crate::diag::Failure`] and
//! are printed by [`fail`], the one place diagnostics are rendered for a person.

pub mod check;
pub mod completions;
pub mod diff;
pub mod ledger;
pub mod memo;
pub mod new;
pub mod pack;
pub mod rates;
pub mod schema;
pub mod sign;
pub mod verify;
pub mod watch;

use crate::diag::Failure;

/// Exit code: everything held.
pub(crate) const EXIT_OK: u8 = 0;
/// Exit code: the input is invalid (or a verification failed).
pub(crate) const EXIT_INVALID: u8 = 1;
/// Exit code: candor itself failed (I/O, internal error).
pub(crate) const EXIT_INTERNAL: u8 = 2;

/// Prints a failure on standard error and returns its exit code.
pub fn fail(failure: &Failure) -> u8 {
    eprintln!("{}", failure.render());
    failure.exit_code()
}
