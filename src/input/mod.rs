//! The deal file as written: serde structs that mirror the YAML one to one, read with
//! positions so that every later problem can point at a line and column.

/// The deal file as written.
#[derive(Debug, Clone)]
pub struct RawDeal;

/// Parses the text of a deal file.
pub fn parse() {}
