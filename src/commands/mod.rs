//! One module per subcommand. These are the only places that read and write user paths;
//! each loads bytes, calls the library stages and prints or writes the result.

pub mod check;
pub mod completions;
pub mod diff;
pub mod load;
pub mod memo;
pub mod new;
pub mod output;
pub mod pack;
pub mod rates;
pub mod schema;
pub mod verify;
pub mod watch;

/// Exit code: everything held.
pub const EXIT_OK: u8 = 0;
/// Exit code: the input is invalid (or a verification failed).
pub const EXIT_INVALID: u8 = 1;
/// Exit code: candor itself failed (I/O, internal error).
pub const EXIT_INTERNAL: u8 = 2;
