//! `candor memo`: load the deal, analyse it, draw the charts, render the markup and
//! typeset the PDF with the deal file attached; write it atomically.

// Every stage reports through the one `Diagnostic` type (docs/design.md, Pipeline);
// errors are the cold path, so their size does not matter.
#![allow(clippy::result_large_err)]

use super::output::{self, WriteFailure};
use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::cli::MemoArgs;
use crate::commands::load::load_deal;
use crate::diag::Diagnostic;
use crate::engine::{self, Analysis};
use crate::model::Deal;
use crate::{chart, pdf, report};
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

/// Why a memo could not be made, and whose fault it is.
#[derive(Debug, Clone)]
pub struct MemoFailure {
    /// What went wrong.
    pub diagnostic: Diagnostic,
    /// True when the user's input (a house style, the environment) is at fault rather
    /// than candor itself.
    pub invalid_input: bool,
}

/// The inputs of a memo besides the analysis and the deal.
#[derive(Debug, Clone)]
pub struct MemoInputs<'a> {
    /// The exact bytes of the deal file, attached to the PDF.
    pub source: &'a [u8],
    /// The deal file's name (without folders).
    pub source_name: &'a str,
    /// Templates replacing built-in ones, by name.
    pub templates: BTreeMap<String, String>,
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
) -> Result<MemoOutput, MemoFailure> {
    build_memo_with_changes(analysis, deal, inputs, None)
}

/// Builds the memo of a filed version, with its section on what changed since the
/// previous version (`None` for a first version, which has no such section).
pub fn build_memo_with_changes(
    analysis: &Analysis,
    deal: &Deal,
    inputs: MemoInputs<'_>,
    changes: Option<report::ChangesSince>,
) -> Result<MemoOutput, MemoFailure> {
    let charts = draw_charts(analysis)?;
    let markup = render_markup(analysis, deal, &inputs, &charts, changes)?;
    let pdf = typeset_markup(&markup, &charts, &inputs)?;
    Ok(MemoOutput { markup, pdf })
}

fn draw_charts(analysis: &Analysis) -> Result<Vec<chart::ScenarioCharts>, MemoFailure> {
    chart::render_all(analysis).map_err(|diagnostic| MemoFailure {
        diagnostic,
        invalid_input: false,
    })
}

fn render_markup(
    analysis: &Analysis,
    deal: &Deal,
    inputs: &MemoInputs<'_>,
    charts: &[chart::ScenarioCharts],
    changes: Option<report::ChangesSince>,
) -> Result<String, MemoFailure> {
    let house_style = !inputs.templates.is_empty();
    let ctx = report::MemoContext {
        source_name: inputs.source_name.to_string(),
        source_sha256: sha256_hex(inputs.source),
        created: inputs.created,
        charts: charts.to_vec(),
        templates: inputs.templates.clone(),
        changes,
    };
    report::render(analysis, deal, &ctx).map_err(|diagnostic| MemoFailure {
        diagnostic,
        invalid_input: house_style,
    })
}

fn typeset_markup(
    markup: &str,
    charts: &[chart::ScenarioCharts],
    inputs: &MemoInputs<'_>,
) -> Result<Vec<u8>, MemoFailure> {
    let house_style = !inputs.templates.is_empty();
    let mut files: Vec<(String, Vec<u8>)> = charts
        .iter()
        .enumerate()
        .flat_map(|(i, c)| c.files(i))
        .collect();
    files.push((report::SOURCE_FILE.to_string(), inputs.source.to_vec()));
    let options = pdf::TypesetOptions {
        created: inputs.created,
        ident: sha256_hex(inputs.source),
    };
    pdf::typeset(markup, &files, &options).map_err(|diagnostic| MemoFailure {
        diagnostic,
        invalid_input: house_style,
    })
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

/// The default output path: the slug of the deal's name with `.pdf`, next to the deal.
pub fn default_output(deal_path: &Path, deal_name: &str) -> PathBuf {
    let folder = deal_path.parent().unwrap_or_else(|| Path::new(""));
    folder.join(format!("{}.pdf", slug(deal_name)))
}

/// Writes bytes to `path` through a temporary file in the same folder, so the file
/// appears only when complete (see [`super::output::write_atomically_with`]).
pub fn write_atomically(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    output::write_atomically_with(path, bytes, &mut output::Disk)
}

/// Reads every `*.j2` file of a house-style folder, by file name.
fn read_templates(dir: &Path) -> Result<BTreeMap<String, String>, Diagnostic> {
    let shown = dir.display().to_string();
    let entries = std::fs::read_dir(dir).map_err(|e| {
        Diagnostic::error("templates", format!("cannot read the template folder: {e}"))
            .in_file(shown.clone())
    })?;
    let mut out = BTreeMap::new();
    for entry in entries {
        let entry = entry.map_err(|e| {
            Diagnostic::error("templates", format!("cannot read the template folder: {e}"))
                .in_file(shown.clone())
        })?;
        let name = entry.file_name().to_string_lossy().to_string();
        if !name.ends_with(".j2") {
            continue;
        }
        let text = std::fs::read_to_string(entry.path()).map_err(|e| {
            Diagnostic::error("templates", format!("cannot read the template: {e}"))
                .in_file(entry.path().display().to_string())
        })?;
        out.insert(name, text);
    }
    if out.is_empty() {
        return Err(Diagnostic::error(
            "templates",
            "the template folder holds no templates (files ending in `.j2`)",
        )
        .in_file(shown)
        .with_hint(format!(
            "the built-in templates are named {}",
            report::BUILTIN_TEMPLATES
                .iter()
                .map(|(n, _)| *n)
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    Ok(out)
}

fn fail(diag: &Diagnostic, code: u8) -> u8 {
    eprintln!("{}", diag.render(None));
    code
}

/// Runs the command.
pub fn run(args: &MemoArgs) -> u8 {
    // Ctrl-C removes the unfinished files instead of leaving them behind.
    output::clean_up_on_interrupt();
    if args.watch {
        return super::watch::run(args);
    }
    let emit_typst = match args.emit.as_deref() {
        None => None,
        Some([kind, file]) if kind == "typst" => Some(PathBuf::from(file)),
        Some(other) => {
            let kind = other.first().map(String::as_str).unwrap_or("");
            let d = Diagnostic::error("emit", format!("`--emit {kind}` is not a known form"))
                .with_hint("the one form is `--emit typst FILE`");
            return fail(&d, EXIT_INVALID);
        }
    };
    let templates = match &args.templates {
        Some(dir) => match read_templates(dir) {
            Ok(t) => t,
            Err(d) => return fail(&d, EXIT_INVALID),
        },
        None => BTreeMap::new(),
    };
    let loaded = match load_deal(&args.file) {
        Ok(l) => l,
        Err(failure) => {
            for d in &failure.diagnostics {
                eprintln!("{}", d.render(failure.source.as_deref()));
            }
            return EXIT_INVALID;
        }
    };
    // Every destination is checked before the memo is made, which takes a while.
    let out = match (&args.output, &args.archive) {
        (Some(o), _) => Some(o.clone()),
        (None, None) => Some(default_output(&args.file, &loaded.deal.name)),
        (None, Some(_)) => None,
    };
    let mut destinations: Vec<(&Path, &str, &str)> = Vec::new();
    if let Some(o) = &out {
        destinations.push((o, "memo", "-o FILE.pdf"));
    }
    if let Some(e) = &emit_typst {
        destinations.push((e, "markup", "--emit typst FILE"));
    }
    for (path, what, option) in destinations {
        if let Err(f) = output::check_destination(path, what, option) {
            return fail(&f.diagnostic, f.code);
        }
        for note in output::sweep_leftovers(&output::folder_of(path)) {
            eprintln!("note: {note}");
        }
    }
    if let Some(dir) = &args.archive {
        match super::verify::prepare_archive(dir) {
            Ok(Some(note)) => eprintln!("{note}"),
            Ok(None) => {}
            Err(f) => return fail(&f.diagnostic, f.code),
        }
    }
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let created = match pdf::creation_time(loaded.deal.as_of, epoch.as_deref()) {
        Ok(c) => c,
        Err(d) => return fail(&d, EXIT_INVALID),
    };
    let analysis = engine::analyse(&loaded.deal);
    let source_name = args
        .file
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "deal.yaml".to_string());
    let inputs = MemoInputs {
        source: &loaded.source,
        source_name: &source_name,
        templates,
        created,
    };
    let code_of = |f: &MemoFailure| {
        if f.invalid_input {
            EXIT_INVALID
        } else {
            EXIT_INTERNAL
        }
    };
    let charts = match draw_charts(&analysis) {
        Ok(c) => c,
        Err(f) => return fail(&f.diagnostic, code_of(&f)),
    };
    // The memo is made once, or under `--archive` once per filing attempt, since its
    // section on changes depends on the version it will follow.
    let make_pdf = |changes: Option<report::ChangesSince>| -> Result<Vec<u8>, u8> {
        let markup = render_markup(&analysis, &loaded.deal, &inputs, &charts, changes)
            .map_err(|f| fail(&f.diagnostic, code_of(&f)))?;
        // The markup is written before typesetting so that a failing house style can be
        // inspected.
        if let Some(path) = &emit_typst {
            let written = output::write_output(
                path,
                markup.as_bytes(),
                "markup",
                "--emit typst FILE",
                &mut output::Disk,
            );
            if let Err(f) = written {
                return Err(fail(&f.diagnostic, f.code));
            }
        }
        typeset_markup(&markup, &charts, &inputs).map_err(|f| fail(&f.diagnostic, code_of(&f)))
    };
    // With `--archive` the memo goes into the archive, and next to the deal only when
    // `--output` asks for a copy.
    let pdf = match &args.archive {
        Some(dir) => match super::verify::file_memo(dir, &loaded, &analysis, &inputs, &make_pdf) {
            Ok(pdf) if args.output.is_some() => pdf,
            Ok(_) => return EXIT_OK,
            Err(code) => return code,
        },
        None => match make_pdf(None) {
            Ok(pdf) => pdf,
            Err(code) => return code,
        },
    };
    let Some(out) = out else {
        return EXIT_OK;
    };
    if let Err(f) = write_memo(&out, &pdf, &mut output::Disk) {
        return fail(&f.diagnostic, f.code);
    }
    eprintln!("wrote {}", out.display());
    EXIT_OK
}

/// Writes a memo's PDF at `path` through `sink` (the disk, or in tests one that fails
/// on purpose), with the message the user sees when that fails.
pub fn write_memo(
    path: &Path,
    pdf: &[u8],
    sink: &mut dyn output::Sink,
) -> Result<(), WriteFailure> {
    output::write_output(path, pdf, "memo", "-o FILE.pdf", sink)
}
