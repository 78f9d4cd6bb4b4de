//! Typst markup to an archival PDF.

/// Typesets the markup.
pub fn typeset() {}
