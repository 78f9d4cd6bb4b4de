//! `candor schema`: prints the JSON Schema of deal files (see [`crate::schema`]).

use super::{EXIT_INTERNAL, EXIT_OK};
use std::io::Write;

/// Writes the schema to stdout.
pub fn run() -> u8 {
    let mut out = std::io::stdout().lock();
    match out
        .write_all(crate::schema::deal_schema_text().as_bytes())
        .and_then(|()| out.flush())
    {
        Ok(()) => EXIT_OK,
        Err(e) => {
            eprintln!("error: cannot write the schema: {e}");
            EXIT_INTERNAL
        }
    }
}
