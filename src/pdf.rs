//! Typst markup to an archival PDF (PDF/A-3b).
//!
//! Only the fonts bundled in the binary (and a house style's own font files) are used,
//! never the machine's, and the creation date is fixed by the caller, so the same
//! markup and files give the same bytes on any machine. Typst's errors come back as candor diagnostics with the code `typeset`.
//!
//! The typesetter sees the world through [`MemoWorld`]: the markup, the files given
//! with it, and the fonts. The bundled fonts and typst's standard library are built once
//! per process ([`BUNDLED`], [`LIBRARY`]) and shared by every typeset, so a watch that
//! rebuilds, or a pack of many memos, parses the fonts once. Typst memoises its work
//! (the comemo cache); after each typeset the results not used by the last
//! two typesets are dropped ([`CACHE_GENERATIONS`]), so a rebuild of a memo that changed a
//! little reuses the layout of what did not change, and memory stays bounded.

use crate::diag::Diagnostic;
use chrono::{Datelike, NaiveDate, NaiveDateTime, Timelike};
use std::collections::HashMap;
use std::sync::LazyLock;
use typst::diag::{FileError, FileResult, SourceDiagnostic};
use typst::foundations::{Bytes, Datetime, Smart};
use typst::syntax::{FileId, RootedPath, Source, VirtualPath, VirtualRoot};
use typst::text::{Font, FontBook};
use typst::utils::LazyHash;
use typst::{Library, LibraryExt, World};
use typst_layout::PagedDocument;
use typst_pdf::{PdfOptions, PdfStandard, PdfStandards, Timestamp};

/// The virtual path of the main markup file; diagnostics name it.
pub(crate) const MAIN_FILE: &str = "/memo.typ";

/// How to typeset.
#[derive(Debug, Clone)]
pub struct TypesetOptions {
    /// Creation time written into the PDF metadata (UTC) when the markup leaves
    /// `document(date: ..)` to `auto`.
    pub created: NaiveDateTime,
    /// A stable identifier of the document (such as the input's hash); the PDF's
    /// document ID is derived from it.
    pub ident: String,
}

/// The creation time of a memo: the `SOURCE_DATE_EPOCH` value when one is given (seconds
/// since 1970, the reproducible-builds convention), else midnight UTC of the as-of date.
pub fn creation_time(
    as_of: NaiveDate,
    source_date_epoch: Option<&str>,
) -> Result<NaiveDateTime, Diagnostic> {
    match source_date_epoch.map(str::trim) {
        None | Some("") => Ok(as_of.and_hms_opt(0, 0, 0).unwrap_or_default()),
        Some(text) => {
            let fail = |why: &str| {
                Diagnostic::error(
                    "source-date-epoch",
                    format!("the environment variable SOURCE_DATE_EPOCH is `{text}`, {why}"),
                )
                .with_hint("unset it, or give a value such as 1798675200")
            };
            // Only ASCII digits: `i64::from_str` would also take a sign.
            if !text.bytes().all(|b| b.is_ascii_digit()) {
                return Err(fail("not a whole number of seconds since 1970"));
            }
            text.parse::<i64>()
                .ok()
                .filter(|secs| *secs <= MAX_SOURCE_DATE_EPOCH)
                .and_then(|secs| chrono::DateTime::from_timestamp(secs, 0))
                .map(|t| t.naive_utc())
                .ok_or_else(|| {
                    fail(&format!(
                        "past {MAX_SOURCE_DATE_EPOCH} (9999-12-31 23:59:59 UTC), the last time a \
                         PDF date can hold"
                    ))
                })
        }
    }
}

/// The largest `SOURCE_DATE_EPOCH` accepted: 9999-12-31T23:59:59Z, the end of the
/// four-digit years a PDF date string (ISO 32000-1, 7.9.4) can carry. Negative values
/// (before 1970) are refused as well: the convention counts seconds since 1970.
pub(crate) const MAX_SOURCE_DATE_EPOCH: i64 = 253_402_300_799;

/// Fonts with the book typst picks them from, in the order typst numbers them.
struct FontSet {
    book: LazyHash<FontBook>,
    fonts: Vec<Font>,
}

impl FontSet {
    fn new(fonts: Vec<Font>) -> Self {
        let mut book = FontBook::new();
        for font in &fonts {
            book.push(font.info().clone());
        }
        FontSet {
            book: LazyHash::new(book),
            fonts,
        }
    }
}

/// The fonts candor typesets with: the ones typst bundles (Libertinus Serif, New
/// Computer Modern, New Computer Modern Math, DejaVu Sans Mono), embedded in the binary
/// and parsed once per process. Between them they cover Latin, Greek and Cyrillic.
static BUNDLED: LazyLock<FontSet> = LazyLock::new(|| {
    FontSet::new(
        typst_assets::fonts()
            .flat_map(|data| Font::iter(Bytes::new(data)))
            .collect(),
    )
});

/// Typst's standard library, built once per process.
static LIBRARY: LazyLock<LazyHash<Library>> =
    LazyLock::new(|| LazyHash::new(Library::builder().build()));

/// The age at which a memoised result of typst is dropped, counted in typesets that
/// did not use it (see the module comment): a result survives one typeset unused, so
/// a rebuild in `memo --watch` finds the layout of the build before it.
pub(crate) const CACHE_GENERATIONS: usize = 2;

/// What the typesetter can see: the markup, the files given with it (by virtual path)
/// and the fonts. Nothing on the machine.
struct MemoWorld<'a> {
    main: Source,
    files: HashMap<FileId, Bytes>,
    fonts: &'a FontSet,
    today: Option<Datetime>,
}

fn file_id(path: &str) -> Option<FileId> {
    VirtualPath::new(path)
        .ok()
        .map(|v| RootedPath::new(VirtualRoot::Project, v).intern())
}

impl World for MemoWorld<'_> {
    fn library(&self) -> &LazyHash<Library> {
        &LIBRARY
    }

    fn book(&self) -> &LazyHash<FontBook> {
        &self.fonts.book
    }

    fn main(&self) -> FileId {
        self.main.id()
    }

    fn source(&self, id: FileId) -> FileResult<Source> {
        if id == self.main.id() {
            Ok(self.main.clone())
        } else {
            Err(FileError::NotFound(id.vpath().get_without_slash().into()))
        }
    }

    fn file(&self, id: FileId) -> FileResult<Bytes> {
        self.files
            .get(&id)
            .cloned()
            .ok_or_else(|| FileError::NotFound(id.vpath().get_without_slash().into()))
    }

    fn font(&self, index: usize) -> Option<Font> {
        self.fonts.fonts.get(index).cloned()
    }

    /// The creation date, never the clock: the same inputs give the same memo.
    fn today(&self, _offset: Option<typst::foundations::Duration>) -> Option<Datetime> {
        self.today
    }
}

/// True when the memo can show `c`: some bundled font has a glyph for it (typst falls
/// back from the style's font to any other that has one), or it is a control character,
/// which the markup drops or turns into a space.
pub(crate) fn can_show(c: char) -> bool {
    c.is_control()
        || BUNDLED
            .fonts
            .iter()
            .any(|font| font.info().coverage.contains(u32::from(c)))
}

/// The characters of `text` the memo cannot show with the bundled fonts, with their
/// positions in `text` (counted in characters, from 1).
pub fn unshowable(text: &str) -> Vec<(usize, char)> {
    HouseFonts::default().unshowable(text)
}

/// Font files a house style adds to the bundled fonts (`memo --templates DIR`): typst
/// prefers them where a template names their family and falls back to them for
/// characters the bundled fonts lack.
#[derive(Debug, Clone, Default)]
pub struct HouseFonts {
    /// Each file's name and bytes, in the order of their names.
    files: Vec<(String, Vec<u8>)>,
    /// The characters each face of those files covers.
    coverages: Vec<typst::text::Coverage>,
}

impl HouseFonts {
    /// Adds a font file (TrueType, OpenType or a collection of them); `Err` with the
    /// reason when it holds no face typst can read.
    pub fn add(&mut self, name: &str, bytes: Vec<u8>) -> Result<(), String> {
        let data = typst::foundations::Bytes::new(bytes.clone());
        let faces: Vec<typst::text::Coverage> = typst::text::Font::iter(data)
            .map(|font| font.info().coverage.clone())
            .collect();
        if faces.is_empty() {
            return Err("it is not a font file typst can read (TrueType or OpenType)".into());
        }
        self.coverages.extend(faces);
        self.files.push((name.to_string(), bytes));
        Ok(())
    }

    /// True when no font is added.
    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// The names of the font files, in order.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.files.iter().map(|(n, _)| n.as_str())
    }

    /// Each font file's name and bytes, in order.
    pub fn files(&self) -> impl Iterator<Item = (&str, &[u8])> {
        self.files.iter().map(|(n, b)| (n.as_str(), b.as_slice()))
    }

    /// True when the memo can show `c` with the bundled fonts or these.
    pub(crate) fn can_show(&self, c: char) -> bool {
        can_show(c) || self.coverages.iter().any(|cov| cov.contains(u32::from(c)))
    }

    /// The characters of `text` that neither the bundled fonts nor these can show, with
    /// their positions in `text` (counted in characters, from 1).
    pub fn unshowable(&self, text: &str) -> Vec<(usize, char)> {
        text.chars()
            .enumerate()
            .filter(|(_, c)| !self.can_show(*c))
            .map(|(i, c)| (i + 1, c))
            .collect()
    }
}

/// A list of unshowable characters in words: "U+1F600 at character 5, ...", the first
/// five and how many more.
pub(crate) fn describe_unshowable(found: &[(usize, char)]) -> String {
    let mut words: Vec<String> = found
        .iter()
        .take(5)
        .map(|(i, c)| format!("U+{:04X} at character {i}", u32::from(*c)))
        .collect();
    if found.len() > 5 {
        words.push(format!("and {} more", found.len() - 5));
    }
    words.join(", ")
}

fn typst_datetime(t: NaiveDateTime) -> Option<Datetime> {
    Datetime::from_ymd_hms(
        t.year(),
        u8::try_from(t.month()).ok()?,
        u8::try_from(t.day()).ok()?,
        u8::try_from(t.hour()).ok()?,
        u8::try_from(t.minute()).ok()?,
        u8::try_from(t.second()).ok()?,
    )
}

/// Typesets Typst markup into PDF/A-3b bytes. `files` are the only files the markup
/// can read (charts, the attached deal file), by virtual path such as `/charts/a.svg`.
pub fn typeset(
    markup: &str,
    files: &[(String, Vec<u8>)],
    options: &TypesetOptions,
) -> Result<Vec<u8>, Diagnostic> {
    typeset_with_fonts(markup, files, &HouseFonts::default(), options)
}

/// [`typeset`] with a house style's fonts beside the bundled ones.
pub(crate) fn typeset_with_fonts(
    markup: &str,
    files: &[(String, Vec<u8>)],
    fonts: &HouseFonts,
    options: &TypesetOptions,
) -> Result<Vec<u8>, Diagnostic> {
    typeset_as(markup, files, fonts, options, Some(true)).map(|(pdf, _)| pdf)
}

/// The number of pages `markup` typesets to (with the bundled fonts), without making
/// the PDF.
pub(crate) fn page_count(
    markup: &str,
    files: &[(String, Vec<u8>)],
    options: &TypesetOptions,
) -> Result<usize, Diagnostic> {
    typeset_as(markup, files, &HouseFonts::default(), options, None).map(|(_, pages)| pages)
}

/// [`typeset`] for one part of a joined PDF (see `join`): untagged, so that no
/// structure tree has to be merged; also gives the number of pages.
pub(crate) fn typeset_part(
    markup: &str,
    files: &[(String, Vec<u8>)],
    options: &TypesetOptions,
) -> Result<(Vec<u8>, usize), Diagnostic> {
    typeset_as(markup, files, &HouseFonts::default(), options, Some(false))
}

/// Typesets, then makes the PDF (tagged or not) when `pdf` says so, and gives the PDF
/// (empty when not made) and the number of pages. Drops typst's memoised results that
/// the last typesets did not use, whatever the outcome.
fn typeset_as(
    markup: &str,
    files: &[(String, Vec<u8>)],
    fonts: &HouseFonts,
    options: &TypesetOptions,
    pdf: Option<bool>,
) -> Result<(Vec<u8>, usize), Diagnostic> {
    let result = compile(markup, files, fonts, options).and_then(|document| {
        let bytes = match pdf {
            Some(tagged) => export(&document, options, tagged)?,
            None => Vec::new(),
        };
        Ok((bytes, document.pages().len()))
    });
    comemo::evict(CACHE_GENERATIONS);
    result
}

fn compile(
    markup: &str,
    files: &[(String, Vec<u8>)],
    fonts: &HouseFonts,
    options: &TypesetOptions,
) -> Result<PagedDocument, Diagnostic> {
    for (name, _) in files {
        if typst::syntax::VirtualPath::new(name).is_err() {
            return Err(Diagnostic::error(
                "typeset",
                format!("`{name}` cannot be given to the typesetter as a file name"),
            ));
        }
    }
    let house;
    let fonts: &FontSet = if fonts.is_empty() {
        &BUNDLED
    } else {
        // A house style's faces come first, as typst numbers them, then the bundled ones.
        house = FontSet::new(
            fonts
                .files
                .iter()
                .flat_map(|(_, bytes)| Font::iter(Bytes::new(bytes.clone())))
                .chain(BUNDLED.fonts.iter().cloned())
                .collect(),
        );
        &house
    };
    let main = file_id(MAIN_FILE).ok_or_else(|| {
        Diagnostic::error("typeset", format!("`{MAIN_FILE}` is not a virtual path"))
    })?;
    let world = MemoWorld {
        main: Source::new(main, markup.to_string()),
        files: files
            .iter()
            .filter_map(|(n, b)| Some((file_id(n)?, Bytes::new(b.clone()))))
            .collect(),
        fonts,
        today: Datetime::from_ymd(
            options.created.year(),
            u8::try_from(options.created.month()).unwrap_or(1),
            u8::try_from(options.created.day()).unwrap_or(1),
        ),
    };
    typst::compile::<PagedDocument>(&world)
        .output
        .map_err(|diags| from_diagnostics(&diags))
}

fn export(
    document: &PagedDocument,
    options: &TypesetOptions,
    tagged: bool,
) -> Result<Vec<u8>, Diagnostic> {
    let standards = PdfStandards::new(&[PdfStandard::A_3b]).map_err(|e| {
        Diagnostic::error(
            "typeset",
            format!("PDF/A-3b is not available: {}", e.message()),
        )
    })?;
    let timestamp = typst_datetime(options.created).ok_or_else(|| {
        Diagnostic::error(
            "typeset",
            format!(
                "the creation time {} cannot be written into a PDF",
                options.created
            ),
        )
    })?;
    let pdf_options = PdfOptions {
        ident: Smart::Custom(options.ident.clone()),
        creator: Smart::Custom(Some(format!("candor {}", crate::release::version()))),
        timestamp: Some(Timestamp::new_utc(timestamp)),
        standards,
        tagged,
        ..PdfOptions::default()
    };
    typst_pdf::pdf(document, &pdf_options).map_err(|diags| from_diagnostics(&diags))
}

fn from_diagnostics(diags: &[SourceDiagnostic]) -> Diagnostic {
    let errors: Vec<&SourceDiagnostic> = diags
        .iter()
        .filter(|d| d.severity == typst::diag::Severity::Error)
        .collect();
    let shown = if errors.is_empty() {
        diags.iter().collect()
    } else {
        errors
    };
    // PDF/A refuses a glyph no font has, one message per piece of text: said once.
    const NO_GLYPH: &str = "could not be displayed with";
    if !shown.is_empty() && shown.iter().all(|d| d.message.contains(NO_GLYPH)) {
        let texts: Vec<String> = shown
            .iter()
            .filter_map(|d| d.message.split('`').nth(1))
            .map(|t| {
                t.chars()
                    .filter(|c| !can_show(*c))
                    .map(|c| format!("U+{:04X}", u32::from(c)))
                    .collect::<Vec<_>>()
                    .join(" ")
            })
            .filter(|t| !t.is_empty())
            .collect();
        let mut unique = texts.clone();
        unique.sort();
        unique.dedup();
        return Diagnostic::error(
            "unshowable-character",
            format!(
                "the memo holds characters its fonts cannot show: {}",
                if unique.is_empty() {
                    format!("{} pieces of text", shown.len())
                } else {
                    unique.join(", ")
                }
            ),
        )
        .in_file(MAIN_FILE)
        .with_hint("`candor check` names the field that holds them; the fonts cover Latin, Greek and Cyrillic");
    }
    let message = shown
        .iter()
        .map(|d| d.message.to_string())
        .collect::<Vec<_>>()
        .join("; ");
    let mut d =
        Diagnostic::error("typeset", format!("typesetting failed: {message}")).in_file(MAIN_FILE);
    let hints: Vec<String> = shown
        .iter()
        .flat_map(|d| d.hints.iter().map(|h| h.v.to_string()))
        .collect();
    if !hints.is_empty() {
        d = d.with_hint(hints.join("; "));
    }
    d
}

#[cfg(test)]
mod tests {
    use super::*;

    fn as_of() -> NaiveDate {
        NaiveDate::from_ymd_opt(2027, 1, 15).unwrap()
    }

    /// Text no bundled font can show fails once, as the user's input (the code the
    /// memo command treats as an input error), not once per glyph.
    #[test]
    fn unshowable_text_is_one_input_diagnostic() {
        let options = TypesetOptions {
            created: as_of().and_hms_opt(0, 0, 0).unwrap(),
            ident: "glyphs".to_string(),
        };
        let d = typeset("Pier \u{1F600} and 倉庫 and \u{1F680}", &[], &options).unwrap_err();
        assert_eq!(d.code, "unshowable-character", "{}", d.message);
        assert!(d.message.contains("U+1F600"), "{}", d.message);
        assert!(can_show('Ω') && can_show('Ж') && can_show('é'));
        assert!(!can_show('\u{1F600}') && !can_show('\u{FFFF}'));
    }

    /// Unix time: 0 is 1970-01-01T00:00:00Z and 253402300799 is 9999-12-31T23:59:59Z
    /// (`date -u -d @253402300799`, common practice).
    #[test]
    fn source_date_epoch_is_bounded_and_named() {
        let last = creation_time(as_of(), Some("253402300799")).unwrap();
        assert_eq!(last.to_string(), "9999-12-31 23:59:59");
        assert_eq!(
            creation_time(as_of(), Some("0")).unwrap().to_string(),
            "1970-01-01 00:00:00"
        );
        for bad in ["253402300800", "-99999999999", "-1", "+5", "1e9", "x"] {
            let d = creation_time(as_of(), Some(bad)).unwrap_err();
            assert_eq!(d.code, "source-date-epoch", "{bad}");
            assert!(d.message.contains("SOURCE_DATE_EPOCH"), "{}", d.message);
            assert!(d.message.contains(bad), "{}", d.message);
        }
    }
}
