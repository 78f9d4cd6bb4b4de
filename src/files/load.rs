//! Reading a deal file (and any CSV it names) from disk, then parsing and validating it.
//! Every subcommand that takes a deal file goes through [`load_deal`].

use crate::diag::{Diagnostic, Failure, FailureClass};
use crate::input::DecodeError;
use crate::model::values::grouped;
use crate::model::Deal;
use std::io::Read;
use std::path::{Path, PathBuf};

pub use crate::limits::MAX_FILE_BYTES;

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

impl LoadedDeal {
    /// Every file the deal was read from: the deal file, then its CSV files.
    pub fn files(&self) -> Vec<PathBuf> {
        let folder = self
            .path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let mut out = vec![self.path.clone()];
        out.extend(self.companions.iter().map(|(n, _)| folder.join(n)));
        out
    }
}

/// Reads a file of at most [`MAX_FILE_BYTES`], checking the size before reading.
fn read_limited(path: &Path) -> Result<Vec<u8>, (String, &'static str)> {
    let meta = std::fs::metadata(path).map_err(|e| (io_words(&e), "file-unreadable"))?;
    if !meta.is_file() {
        return Err((
            "it is not a regular file (a folder, device or pipe)".to_string(),
            "file-unreadable",
        ));
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err((
            format!(
                "it is {} bytes, more than the {} (10 MiB) accepted",
                grouped(meta.len()),
                grouped(MAX_FILE_BYTES)
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
            format!(
                "it is more than the {} bytes (10 MiB) accepted",
                grouped(MAX_FILE_BYTES)
            ),
            "file-too-large",
        ));
    }
    Ok(bytes)
}

/// Reads `name`, a file a deal file or a house style names, relative to `folder`: it
/// must lie in `folder` or below it once symbolic links are resolved (so neither
/// `../x`, `/etc/passwd` nor a link out of the folder is followed), be a regular file
/// (not a FIFO or a device such as `/dev/zero`) and hold at most [`MAX_FILE_BYTES`].
/// Nothing is read from a file refused, so no diagnostic can show its contents.
pub(crate) fn read_companion(folder: &Path, name: &str) -> Result<Vec<u8>, (String, &'static str)> {
    let folder = if folder.as_os_str().is_empty() {
        Path::new(".")
    } else {
        folder
    };
    let inside = folder
        .canonicalize()
        .map_err(|e| (io_words(&e), "file-unreadable"))?;
    let real = folder
        .join(name)
        .canonicalize()
        .map_err(|e| (io_words(&e), "file-unreadable"))?;
    if !real.starts_with(&inside) {
        return Err((
            format!(
                "it lies outside the folder `{}`; candor reads only files in that folder or \
                 below it",
                folder.display()
            ),
            "file-outside",
        ));
    }
    read_limited(&real)
}

/// One diagnostic for each text in the deal file (every scalar and key but the CSV
/// file's name, which the memo does not print) holding characters the memo's fonts
/// cannot show (see [`crate::pdf::can_show`]), naming the field and the characters'
/// places in it: `check` refuses what `memo` could not typeset.
fn unshowable_text(
    node: &crate::input::Node,
    path: &str,
    fonts: &crate::pdf::HouseFonts,
    out: &mut Vec<Diagnostic>,
) {
    use crate::input::Value;
    match &node.value {
        Value::Scalar { text, .. } => report_unshowable(text, node, path, "this value", fonts, out),
        Value::Sequence(items) => {
            for (i, item) in items.iter().enumerate() {
                unshowable_text(item, &format!("{path}[{i}]"), fonts, out);
            }
        }
        Value::Mapping(entries) => {
            for (key, value) in entries {
                let name = key.scalar().unwrap_or_default();
                let field = if path.is_empty() {
                    name.to_string()
                } else {
                    format!("{path}.{name}")
                };
                report_unshowable(name, key, &field, "this key", fonts, out);
                if name != "csv" {
                    unshowable_text(value, &field, fonts, out);
                }
            }
        }
    }
}

fn report_unshowable(
    text: &str,
    at: &crate::input::Node,
    field: &str,
    what: &str,
    fonts: &crate::pdf::HouseFonts,
    out: &mut Vec<Diagnostic>,
) {
    let found = fonts.unshowable(text);
    if let Some((first, _)) = found.first() {
        // A plain scalar is written as read, so the caret can point at the character;
        // a quoted one may hold escapes, so it points at the value's start.
        let plain = matches!(at.value, crate::input::Value::Scalar { quoted: false, .. });
        let column = if plain {
            at.position.column + first - 1
        } else {
            at.position.column
        };
        out.push(
            Diagnostic::error(
                "unshowable-character",
                format!(
                    "{what} holds characters the memo's fonts cannot show: {}",
                    crate::pdf::describe_unshowable(&found)
                ),
            )
            .at_field(field.to_string())
            .at(at.position.line, column)
            .with_hint(FONT_HINT),
        );
    }
}

const FONT_HINT: &str =
    "the memo's fonts (Libertinus Serif, New Computer Modern, DejaVu Sans Mono) \
     cover Latin, Greek and Cyrillic; emoji, CJK, Thai, Korean and private or unassigned \
     characters have no glyph; a house style (`--templates DIR`) can add font files that \
     have them";

/// A file's bytes as lines to show under a diagnostic: invalid UTF-8 as replacement
/// characters, a leading byte-order mark dropped (positions count from after it), and
/// control characters as their visible pictures (U+2400 on), one character for one,
/// so that columns stay where they were.
pub(crate) fn shown_text(bytes: &[u8]) -> String {
    let body = bytes.strip_prefix(BOM).unwrap_or(bytes);
    String::from_utf8_lossy(body)
        .chars()
        .map(|c| match c {
            '\t' | '\n' | '\r' => c,
            '\0'..='\u{1f}' => char::from_u32(0x2400 + u32::from(c)).unwrap_or('\u{fffd}'),
            '\u{7f}' => '\u{2421}',
            '\u{80}'..='\u{9f}' if c != '\u{85}' => '\u{fffd}',
            _ => c,
        })
        .collect()
}

fn io_words(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        _ => e.to_string(),
    }
}

/// Reads, parses and validates a deal file.
///
/// A failure carries the text of the deal file and of every CSV file it read, so that
/// each diagnostic shows a line of the file it is about.
pub fn load_deal(path: &Path) -> Result<LoadedDeal, Failure> {
    load_deal_with_fonts(path, &crate::pdf::HouseFonts::default())
}

/// [`load_deal`] for a memo in a house style that adds fonts: a text is refused only
/// when neither the bundled fonts nor `fonts` can show it.
pub(crate) fn load_deal_with_fonts(
    path: &Path,
    fonts: &crate::pdf::HouseFonts,
) -> Result<LoadedDeal, Failure> {
    let shown = path.display().to_string();
    let fail = |d: Diagnostic, source: Option<String>| {
        let failure = Failure::invalid(d.in_file(shown.clone()));
        match source {
            Some(text) => failure.with_source(shown.clone(), text),
            None => failure,
        }
    };
    let source = match read_limited(path) {
        Ok(b) => b,
        Err((why, code)) => {
            let mut d = Diagnostic::error(code, format!("cannot read the deal file: {why}"));
            if code == "file-too-large" {
                d.hint = Some(
                    "a deal file is a few kilobytes, and 100,000 flows fit in about 1 MB: check that this is the file meant".to_string(),
                );
            }
            return Err(fail(d, None));
        }
    };
    let text = match crate::input::decode(&source) {
        Ok(t) => t.to_string(),
        Err(e) => {
            // Before a bad byte the lines are shown as they are, the byte itself as a
            // replacement character under the caret; a file in another encoding has no
            // lines worth showing.
            let lines = e.position().map(|_| shown_text(&source));
            return Err(fail(e.diagnostic(), lines));
        }
    };
    let with_file = |diags: Vec<Diagnostic>| -> Vec<Diagnostic> {
        diags
            .into_iter()
            .map(|d| d.in_file(shown.clone()))
            .collect()
    };
    let raw = crate::input::parse(&text).map_err(|diags| {
        Failure::many(with_file(diags), FailureClass::Invalid)
            .with_source(shown.clone(), shown_text(text.as_bytes()))
    })?;

    let folder = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let mut companions: Vec<(String, Vec<u8>)> = Vec::new();
    // CSV files that are not UTF-8: reported in the CSV file itself, at the bad byte.
    let mut undecodable: Vec<(String, DecodeError)> = Vec::new();
    // The shown text of the CSV files that could not be decoded, by the name their
    // diagnostics carry (those read whole are shown from `companions` on failure).
    let mut csv_texts: Vec<(String, String)> = Vec::new();
    let mut read = |name: &str| -> Result<String, String> {
        let full = folder.join(name);
        let bytes = read_companion(&folder, name).map_err(|(why, _)| why)?;
        let text = match crate::input::decode(&bytes) {
            Ok(t) => t.to_string(),
            Err(e) => {
                let why = e.message().replacen("the file ", "it ", 1);
                if e.position().is_some() {
                    csv_texts.push((full.display().to_string(), shown_text(&bytes)));
                }
                undecodable.push((name.to_string(), e));
                return Err(why);
            }
        };
        if !companions.iter().any(|(n, _)| n == name) {
            companions.push((name.to_string(), bytes));
        }
        Ok(text)
    };
    let mut unshowable = Vec::new();
    if let Some(root) = &raw.root {
        unshowable_text(root, "", fonts, &mut unshowable);
    }
    // The memo prints the deal file's name too.
    let file_name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let found = fonts.unshowable(&file_name);
    if !found.is_empty() {
        unshowable.push(
            Diagnostic::error(
                "unshowable-character",
                format!(
                    "the deal file's name holds characters the memo's fonts cannot show: {}",
                    crate::pdf::describe_unshowable(&found)
                ),
            )
            .with_hint("rename the file with letters the memo can show (Latin, Greek, Cyrillic)"),
        );
    }
    let validated = crate::model::validate(&raw, &mut read).and_then(|deal| {
        if unshowable.is_empty() {
            Ok(deal)
        } else {
            Err(Vec::new())
        }
    });
    match validated {
        Ok(deal) => Ok(LoadedDeal {
            deal,
            path: path.to_path_buf(),
            source,
            companions,
        }),
        Err(diags) => {
            let diagnostics = diags
                .into_iter()
                .chain(unshowable)
                .map(|d| {
                    let bad_csv = undecodable.iter().find(|(name, _)| {
                        d.code == "csv-missing"
                            && d.message
                                .starts_with(&format!("cannot read the CSV file `{name}`:"))
                    });
                    match (bad_csv, d.file.clone()) {
                        (Some((name, e)), _) => {
                            let mut csv = e
                                .diagnostic()
                                .in_file(folder.join(name).display().to_string());
                            csv.field = d.field;
                            csv
                        }
                        // A diagnostic about a CSV file names it relative to the deal file.
                        (None, Some(f)) => d.in_file(folder.join(f).display().to_string()),
                        (None, None) => d.in_file(shown.clone()),
                    }
                })
                .collect();
            let mut failure = Failure::many(diagnostics, FailureClass::Invalid)
                .with_source(shown.clone(), shown_text(text.as_bytes()));
            // The lines of the CSV files that were read whole, made only now that a
            // diagnostic may point into them.
            let read_whole = companions
                .iter()
                .map(|(name, bytes)| (folder.join(name).display().to_string(), shown_text(bytes)));
            for (file, text) in csv_texts.into_iter().chain(read_whole) {
                failure = failure.with_source(file, text);
            }
            Err(failure)
        }
    }
}
