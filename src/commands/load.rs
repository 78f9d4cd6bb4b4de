//! Reading a deal file (and any CSV it names) from disk, then parsing and validating it.
//! Every subcommand that takes a deal file goes through [`load_deal`].

use crate::diag::Diagnostic;
use crate::model::Deal;
use std::io::Read;
use std::path::{Path, PathBuf};

/// Largest deal file (and CSV file) read, in bytes: checked before reading, so a
/// stray multi-gigabyte file is refused at once.
pub const MAX_FILE_BYTES: u64 = 10 * 1024 * 1024;

/// The UTF-8 byte-order mark, which `input::decode` drops.
const BOM: &[u8] = b"\xEF\xBB\xBF";

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

/// Reads a file of at most [`MAX_FILE_BYTES`], checking the size before reading.
fn read_limited(path: &Path) -> Result<Vec<u8>, (String, &'static str)> {
    let meta = std::fs::metadata(path).map_err(|e| (io_words(&e), "file-unreadable"))?;
    if !meta.is_file() {
        return Err(("it is not a file".to_string(), "file-unreadable"));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err((
            format!(
                "it is {} bytes, more than the {MAX_FILE_BYTES} accepted",
                meta.len()
            ),
            "file-too-large",
        ));
    }
    let file = std::fs::File::open(path).map_err(|e| (io_words(&e), "file-unreadable"))?;
    let mut bytes = Vec::new();
    // The file may grow between the size check and the read; never take more.
    file.take(MAX_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| (io_words(&e), "file-unreadable"))?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err((
            format!("it is more than the {MAX_FILE_BYTES} bytes accepted"),
            "file-too-large",
        ));
    }
    Ok(bytes)
}

fn io_words(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        _ => e.to_string(),
    }
}

/// Reads, parses and validates a deal file.
pub fn load_deal(path: &Path) -> Result<LoadedDeal, LoadFailure> {
    let shown = path.display().to_string();
    let fail = |d: Diagnostic, source: Option<String>| LoadFailure {
        diagnostics: vec![d.in_file(shown.clone())],
        source,
    };
    let source = match read_limited(path) {
        Ok(b) => b,
        Err((why, code)) => {
            let d = Diagnostic::error(code, format!("cannot read the deal file: {why}"));
            return Err(fail(d, None));
        }
    };
    let text = match crate::input::decode(&source) {
        Ok(t) => t.to_string(),
        Err(e) => {
            // Before a bad byte the lines are shown as they are, the byte itself as a
            // replacement character under the caret; a file in another encoding has no
            // lines worth showing.
            let lines = e.position().map(|_| {
                let body = source.strip_prefix(BOM).unwrap_or(&source);
                String::from_utf8_lossy(body).into_owned()
            });
            return Err(fail(e.diagnostic(), lines));
        }
    };
    let with_file = |diags: Vec<Diagnostic>| -> Vec<Diagnostic> {
        diags
            .into_iter()
            .map(|d| d.in_file(shown.clone()))
            .collect()
    };
    let raw = crate::input::parse(&text).map_err(|diags| LoadFailure {
        diagnostics: with_file(diags),
        source: Some(text.clone()),
    })?;

    let folder = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let mut companions: Vec<(String, Vec<u8>)> = Vec::new();
    let mut read = |name: &str| -> Result<String, String> {
        let full = folder.join(name);
        let bytes = read_limited(&full).map_err(|(why, _)| why)?;
        let text = crate::input::decode(&bytes)
            .map_err(|e| {
                let at = e
                    .position()
                    .map(|p| format!(" at line {}, column {}", p.line, p.column))
                    .unwrap_or_default();
                let what = e.message();
                let what = what.trim_start_matches("the file ");
                format!("it {what}{at}; {}", e.hint())
            })?
            .to_string();
        if !companions.iter().any(|(n, _)| n == name) {
            companions.push((name.to_string(), bytes));
        }
        Ok(text)
    };
    match crate::model::validate(&raw, &mut read) {
        Ok(deal) => Ok(LoadedDeal {
            deal,
            path: path.to_path_buf(),
            source,
            companions,
        }),
        Err(diags) => Err(LoadFailure {
            diagnostics: diags
                .into_iter()
                .map(|d| match d.file.clone() {
                    // A diagnostic about a CSV file names it relative to the deal file.
                    Some(f) => d.in_file(folder.join(f).display().to_string()),
                    None => d.in_file(shown.clone()),
                })
                .collect(),
            source: Some(text),
        }),
    }
}
