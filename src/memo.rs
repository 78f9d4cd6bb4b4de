//! Building a memo: draw the charts of an analysed deal, render the markup and typeset
//! the PDF with the deal file attached. No file system access except where a function
//! says so (reading a house-style folder, writing the PDF atomically).

use crate::diag::{Diagnostic, Failure};
use crate::engine::Analysis;
use crate::files::output;
use crate::model::Deal;
use crate::{chart, pdf, report, worker};
use chrono::NaiveDateTime;
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// A finished memo: the markup and the PDF typeset from it.
#[derive(Debug, Clone)]
pub struct MemoOutput {
    /// The generated Typst markup.
    pub markup: String,
    /// The PDF/A-3b bytes.
    pub pdf: Vec<u8>,
}

/// The inputs of a memo besides the analysis and the deal.
#[derive(Debug, Clone)]
pub struct MemoInputs<'a> {
    /// The exact bytes of the deal file, attached to the PDF.
    pub source: &'a [u8],
    /// The deal file's name (without folders).
    pub source_name: &'a str,
    /// The other files the deal file reads (CSV flows), as (path relative to the deal
    /// file, bytes): attached to the PDF and covered by the input hash.
    pub companions: &'a [(String, Vec<u8>)],
    /// Templates replacing built-in ones, by name.
    pub templates: BTreeMap<String, String>,
    /// Font files of the house style, beside the bundled fonts.
    pub fonts: pdf::HouseFonts,
    /// Creation time written into the PDF.
    pub created: NaiveDateTime,
}

/// SHA-256 of bytes as lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Builds the memo of an analysed deal: charts, markup, PDF. No file system access.
pub fn build_memo(
    analysis: &Analysis,
    deal: &Deal,
    inputs: MemoInputs<'_>,
) -> Result<MemoOutput, Failure> {
    build_memo_with_changes(analysis, deal, inputs, None, None)
}

/// Builds the memo of a filed version, with its section on what changed since the
/// previous version (`None` for a first version, which has no such section) and the
/// version it is filed as, which its title block shows.
pub fn build_memo_with_changes(
    analysis: &Analysis,
    deal: &Deal,
    inputs: MemoInputs<'_>,
    changes: Option<report::ChangesSince>,
    filed_version: Option<&str>,
) -> Result<MemoOutput, Failure> {
    let charts = draw_charts(analysis)?;
    let markup = render_markup(analysis, deal, &inputs, &charts, changes, filed_version)?;
    let pdf = typeset_markup(&markup, &charts, &inputs)?;
    Ok(MemoOutput { markup, pdf })
}

/// A failure to render or typeset: the house style's fault when one is in use, else
/// candor's.
fn blame(d: Diagnostic, house_style: bool) -> Failure {
    // Text no bundled font can show came from the input (the deal or the house style).
    if house_style || d.code == "unshowable-character" {
        Failure::invalid(d)
    } else {
        Failure::internal(d)
    }
}

/// Draws the charts of every scenario.
pub(crate) fn draw_charts(analysis: &Analysis) -> Result<Vec<chart::ScenarioCharts>, Failure> {
    chart::render_all(analysis).map_err(Failure::internal)
}

/// Renders the memo's Typst markup (the house style's templates where given).
pub(crate) fn render_markup(
    analysis: &Analysis,
    deal: &Deal,
    inputs: &MemoInputs<'_>,
    charts: &[chart::ScenarioCharts],
    changes: Option<report::ChangesSince>,
    filed_version: Option<&str>,
) -> Result<String, Failure> {
    let house_style = !inputs.templates.is_empty();
    let ctx = report::MemoContext {
        source_name: inputs.source_name.to_string(),
        source_sha256: sha256_hex(inputs.source),
        companions: inputs
            .companions
            .iter()
            .map(|(name, bytes)| (name.clone(), sha256_hex(bytes)))
            .collect(),
        created: inputs.created,
        charts: charts.to_vec(),
        templates: inputs.templates.clone(),
        changes,
        filed_version: filed_version.map(str::to_string),
    };
    report::render(analysis, deal, &ctx).map_err(|d| blame(d, house_style))
}

/// Typesets markup into the PDF/A-3b memo, with the charts and the deal file attached.
pub(crate) fn typeset_markup(
    markup: &str,
    charts: &[chart::ScenarioCharts],
    inputs: &MemoInputs<'_>,
) -> Result<Vec<u8>, Failure> {
    let house_style = !inputs.templates.is_empty() || !inputs.fonts.is_empty();
    let mut files: Vec<(String, Vec<u8>)> = charts
        .iter()
        .enumerate()
        .flat_map(|(i, c)| c.files(i))
        .collect();
    files.push((report::SOURCE_FILE.to_string(), inputs.source.to_vec()));
    for (i, (_, bytes)) in inputs.companions.iter().enumerate() {
        files.push((report::companion_file(i), bytes.clone()));
    }
    let hashes: Vec<(String, String)> = inputs
        .companions
        .iter()
        .map(|(name, bytes)| (name.clone(), sha256_hex(bytes)))
        .collect();
    let options = pdf::TypesetOptions {
        created: inputs.created,
        ident: report::input_hash(inputs.source_name, &sha256_hex(inputs.source), &hashes),
    };
    if house_style {
        // A house style is typeset by a child process of this program, within a budget
        // of time and memory (see `worker`).
        let program = std::env::current_exe().map_err(|e| {
            Failure::internal(Diagnostic::error(
                "typeset",
                format!("cannot find the candor program to typeset with: {e}"),
            ))
        })?;
        let names: Vec<String> = inputs.templates.keys().cloned().collect();
        worker::typeset_within(
            &program,
            markup,
            &files,
            &inputs.fonts,
            &options,
            worker::Budget::HOUSE_STYLE,
            &names,
        )
        .map_err(|d| blame(d, true))
    } else {
        pdf::typeset(markup, &files, &options).map_err(|d| blame(d, false))
    }
}

/// A file-name-safe slug of a deal's name: ASCII letters and digits, words joined by
/// dashes, at most 80 characters; `memo` when nothing is left.
pub fn slug(name: &str) -> String {
    let mut out = String::new();
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.is_empty() && !out.ends_with('-') {
            out.push('-');
        }
    }
    let mut out: String = out.trim_end_matches('-').chars().take(80).collect();
    while out.ends_with('-') {
        out.pop();
    }
    if out.is_empty() {
        "memo".to_string()
    } else {
        out
    }
}

/// The default output path: the deal file's own name with `.pdf` for its extension,
/// next to the deal (`brannock-mill-hydro.yaml` gives `brannock-mill-hydro.pdf`), so two
/// deal files in one folder never write the same memo. The slug of the deal's name
/// stands in only when the file has no name to use.
pub(crate) fn default_output(deal_path: &Path, deal_name: &str) -> PathBuf {
    let folder = deal_path.parent().unwrap_or_else(|| Path::new(""));
    let stem = deal_path
        .file_stem()
        .map(|s| s.to_string_lossy().to_string())
        .filter(|s| !s.is_empty() && !s.starts_with('.'));
    match stem {
        Some(stem) => folder.join(format!("{stem}.pdf")),
        None => folder.join(format!("{}.pdf", slug(deal_name))),
    }
}

/// A house style: templates that replace built-in ones, and font files added to the
/// bundled fonts.
#[derive(Debug, Clone, Default)]
pub(crate) struct HouseStyle {
    /// Templates by name (see [`report::BUILTIN_TEMPLATES`]).
    pub templates: BTreeMap<String, String>,
    /// Font files (`*.ttf`, `*.otf`, `*.ttc`, `*.otc`).
    pub fonts: pdf::HouseFonts,
}

impl HouseStyle {
    /// The names of every file read, relative to the folder, in order.
    pub(crate) fn file_names(&self) -> Vec<String> {
        let mut names: Vec<String> = self.templates.keys().cloned().collect();
        names.extend(self.fonts.names().map(str::to_string));
        names
    }
}

/// True when a file name ends like a font file's.
fn is_font_file(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    [".ttf", ".otf", ".ttc", ".otc"]
        .iter()
        .any(|end| lower.ends_with(end))
}

/// Reads a house-style folder: every `*.j2` file must be named as a built-in template
/// ([`report::BUILTIN_TEMPLATES`]), and every font file (`*.ttf`, `*.otf`, `*.ttc`,
/// `*.otc`, at most [`crate::limits::MAX_HOUSE_FONTS`]) must hold a face typst can read.
/// Each is read by the rules of [`crate::files::load::read_companion`] (a regular file in
/// the folder or below it, at most 10 MiB). Every problem is reported at once.
pub(crate) fn read_house_style(dir: &Path) -> Result<HouseStyle, Failure> {
    let shown = dir.display().to_string();
    let folder_error = |e: std::io::Error| {
        Failure::invalid(
            Diagnostic::error("templates", format!("cannot read the template folder: {e}"))
                .in_file(shown.clone()),
        )
    };
    let accepted = report::BUILTIN_TEMPLATES
        .iter()
        .map(|(n, _)| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let mut names = Vec::new();
    let mut font_names = Vec::new();
    for entry in std::fs::read_dir(dir).map_err(folder_error)? {
        let name = entry
            .map_err(folder_error)?
            .file_name()
            .to_string_lossy()
            .to_string();
        if name.ends_with(".j2") {
            names.push(name);
        } else if is_font_file(&name) {
            font_names.push(name);
        }
    }
    // The folder's listing order is the file system's; the messages' order is not.
    names.sort();
    font_names.sort();
    let mut style = HouseStyle::default();
    let mut problems = Vec::new();
    for name in names {
        let file = dir.join(&name).display().to_string();
        if !report::BUILTIN_TEMPLATES.iter().any(|(n, _)| *n == name) {
            problems.push(
                Diagnostic::error(
                    "templates",
                    format!("`{name}` is not the name of a template candor uses"),
                )
                .in_file(file)
                .with_hint(format!(
                    "the templates a house style can replace are {accepted}"
                )),
            );
            continue;
        }
        let text = crate::files::load::read_companion(dir, &name)
            .map_err(|(why, _)| why)
            .and_then(|bytes| {
                String::from_utf8(bytes).map_err(|_| "it is not UTF-8 text".to_string())
            });
        match text {
            Ok(text) => {
                style.templates.insert(name, text);
            }
            Err(why) => problems.push(
                Diagnostic::error("templates", format!("cannot read the template: {why}"))
                    .in_file(file),
            ),
        }
    }
    let limit = crate::limits::MAX_HOUSE_FONTS;
    if font_names.len() > limit {
        problems.push(
            Diagnostic::error(
                "templates",
                format!(
                    "the folder holds {} font files; a house style may add at most {limit}",
                    font_names.len()
                ),
            )
            .in_file(shown.clone())
            .with_hint("keep the faces the house style names, and move the others away"),
        );
        font_names.clear();
    }
    for name in font_names {
        let file = dir.join(&name).display().to_string();
        let added = crate::files::load::read_companion(dir, &name)
            .map_err(|(why, _)| why)
            .and_then(|bytes| style.fonts.add(&name, bytes));
        if let Err(why) = added {
            problems.push(
                Diagnostic::error("templates", format!("cannot use the font file: {why}"))
                    .in_file(file),
            );
        }
    }
    if !problems.is_empty() {
        return Err(Failure::many(problems, crate::diag::FailureClass::Invalid));
    }
    if style.templates.is_empty() && style.fonts.is_empty() {
        return Err(Failure::invalid(
            Diagnostic::error(
                "templates",
                "the template folder holds no templates (files ending in `.j2`) and no fonts",
            )
            .in_file(shown)
            .with_hint(format!("the built-in templates are named {accepted}")),
        ));
    }
    Ok(style)
}

/// Writes a memo's PDF at `path` through `sink` (the disk, or in tests one that fails
/// on purpose), with the message the user sees when that fails.
pub fn write_memo(path: &Path, pdf: &[u8], sink: &mut dyn output::Sink) -> Result<(), Failure> {
    output::write_output(path, pdf, "memo", "-o FILE.pdf", sink)
}
