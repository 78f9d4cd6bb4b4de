//! Reading a deal file (and any CSV it names) from disk, then parsing and validating it.
//! Every subcommand that takes a deal file goes through [`load_deal`].

use crate::diag::Diagnostic;
use crate::model::Deal;
use std::path::{Path, PathBuf};

/// A deal read from disk together with the exact bytes it came from.
#[derive(Debug, Clone)]
pub struct LoadedDeal {
    /// The validated deal.
    pub deal: Deal,
    /// The path as the user gave it.
    pub path: PathBuf,
    /// The exact bytes of the deal file.
    pub source: Vec<u8>,
    /// Every other file the deal read (CSV flows), as (path relative to the deal file, bytes).
    pub companions: Vec<(String, Vec<u8>)>,
}

/// Why a deal could not be loaded: every diagnostic, plus the text to show source lines.
#[derive(Debug, Clone)]
pub struct LoadFailure {
    /// The problems found, all at once.
    pub diagnostics: Vec<Diagnostic>,
    /// The deal file's text, when it could be read, for rendering source lines.
    pub source: Option<String>,
}

/// Reads, parses and validates a deal file.
pub fn load_deal(_path: &Path) -> Result<LoadedDeal, LoadFailure> {
    todo!()
}
