//! `candor pack`: the memos of several deals in one PDF for a committee meeting: a
//! cover with a summary table of every deal, a linked table of contents, then each
//! deal's memo, with continuous page numbers and every deal file attached.
//!
//! The deals are loaded, analysed and charted in parallel; the one document is then
//! typeset once, so that page numbers and the contents run across all memos.

use crate::diag::{Diagnostic, Failure, FailureClass};
use crate::engine::{self, Analysis};
use crate::files::load::{load_deal, LoadedDeal};
use crate::memo::sha256_hex;
use crate::present::{self, words, Style};
use crate::{chart, pdf, report};
use chrono::NaiveDateTime;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;

/// The pack's cover and summary template.
pub const PACK_TEMPLATE: (&str, &str) = ("pack.typ.j2", include_str!("../templates/pack.typ.j2"));

/// One deal ready to be typeset into the pack.
#[derive(Debug, Clone)]
pub struct PackedDeal {
    /// The deal as loaded.
    pub loaded: LoadedDeal,
    /// Its analysis.
    pub analysis: Analysis,
    /// Its charts, in the analysis' order.
    pub charts: Vec<chart::ScenarioCharts>,
    /// The deal file's name as the pack shows and attaches it.
    pub source_name: String,
}

#[derive(Debug, Serialize)]
struct PackView {
    title: String,
    date: String,
    created: report::CreatedView,
    deal_count: usize,
    skipped: Vec<String>,
    rows: Vec<RowView>,
    version: String,
}

#[derive(Debug, Serialize)]
struct RowView {
    number: usize,
    deal: String,
    first: bool,
    scenario: String,
    irrs: String,
    npv: String,
    mirr: String,
    decision: String,
    stance: String,
    cautions: String,
}

fn summary_rows(number: usize, d: &PackedDeal) -> Vec<RowView> {
    d.analysis
        .scenarios
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let decimals = present::scenario_rate_decimals(s);
            let irrs = if s.irr.roots.is_empty() {
                "none".to_string()
            } else {
                s.irr
                    .roots
                    .iter()
                    .map(|r| present::root_rate(r, decimals, Style::Print))
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            let irrs = if s.irr.certified {
                irrs
            } else {
                format!("{irrs} (count not certified)")
            };
            let stances: BTreeSet<&str> = s
                .irr
                .roots
                .iter()
                .map(|r| words::stance_word(r.stance))
                .collect();
            let stance = match (&s.irr.complex_reading, stances.is_empty()) {
                (Some(c), true) => words::stance_word(c.stance).to_string(),
                (None, true) => "none".to_string(),
                _ => stances.into_iter().collect::<Vec<_>>().join("; "),
            };
            let codes: Vec<&str> = s.cautions.iter().map(|c| c.code()).collect();
            RowView {
                number,
                deal: d.loaded.deal.name.clone(),
                first: i == 0,
                scenario: words::scenario_label(&s.name),
                irrs,
                npv: present::scenario_npv_in(s, &d.analysis.currency, Style::Print),
                mirr: s
                    .mirr
                    .map(|m| present::percent(m, 2, Style::Print))
                    .unwrap_or_else(|| words::NOT_DEFINED.to_string()),
                decision: words::decision(s.decision).to_string(),
                stance,
                cautions: if codes.is_empty() {
                    "none".to_string()
                } else {
                    codes.join(", ")
                },
            }
        })
        .collect()
}

/// Files the typesetter can read, as (virtual path, bytes).
pub type Files = Vec<(String, Vec<u8>)>;

/// Builds the pack's markup and the files it reads. No file system access.
pub fn pack_markup(
    title: &str,
    created: NaiveDateTime,
    deals: &[PackedDeal],
    skipped: &[String],
) -> Result<(String, Files), Diagnostic> {
    let view = PackView {
        title: title.to_string(),
        date: present::date_long(created.date()),
        created: report::CreatedView::of(created),
        deal_count: deals.len(),
        skipped: skipped.to_vec(),
        rows: deals
            .iter()
            .enumerate()
            .flat_map(|(i, d)| summary_rows(i + 1, d))
            .collect(),
        version: crate::release::version(),
    };
    let mut markup = report::render_template(PACK_TEMPLATE.0, PACK_TEMPLATE.1, &view)?;
    let mut files: Files = Vec::new();
    let bodies: Vec<Result<String, Diagnostic>> = deals
        .par_iter()
        .enumerate()
        .map(|(i, d)| {
            // Two deal files of one name (from different folders) must still be told
            // apart in the attachment list.
            let name = if deals[..i].iter().any(|e| {
                report::attachment_name(&e.source_name) == report::attachment_name(&d.source_name)
            }) {
                format!("{}-{}", i + 1, d.source_name)
            } else {
                d.source_name.clone()
            };
            let ctx = report::MemoContext {
                source_name: name,
                source_sha256: sha256_hex(&d.loaded.source),
                companions: pack_companions(deals, i),
                created,
                charts: d.charts.clone(),
                templates: BTreeMap::new(),
                changes: None,
            };
            report::render_body(&d.analysis, &d.loaded.deal, &ctx, &prefix(i))
        })
        .collect();
    for (i, (d, body)) in deals.iter().zip(bodies).enumerate() {
        let body = body?;
        let p = prefix(i);
        files.extend(
            d.charts
                .iter()
                .enumerate()
                .flat_map(|(k, c)| c.files(k))
                .map(|(n, b)| (format!("{p}{n}"), b)),
        );
        files.push((
            format!("{p}{}", report::SOURCE_FILE),
            d.loaded.source.clone(),
        ));
        for (k, (_, bytes)) in d.loaded.companions.iter().enumerate() {
            files.push((format!("{p}{}", report::companion_file(k)), bytes.clone()));
        }
        // Each memo's settings (page style, helpers) stay inside its own content block.
        markup.push_str(&format!("\n#pagebreak(weak: true)\n#[\n{body}\n]\n"));
    }
    Ok((markup, files))
}

/// The CSV files of the `i`-th deal as its memo names and attaches them: a name an
/// earlier deal of the pack already attached gets the deal's number in front.
fn pack_companions(deals: &[PackedDeal], i: usize) -> Vec<(String, String)> {
    let taken = |name: &str| {
        let attached = report::attachment_name(name);
        deals[..i].iter().any(|e| {
            report::attachment_name(&e.source_name) == attached
                || e.loaded
                    .companions
                    .iter()
                    .any(|(m, _)| report::attachment_name(m) == attached)
        })
    };
    deals[i]
        .loaded
        .companions
        .iter()
        .map(|(name, bytes)| {
            let shown = if taken(name) {
                format!("{}-{name}", i + 1)
            } else {
                name.clone()
            };
            (shown, sha256_hex(bytes))
        })
        .collect()
}

fn prefix(i: usize) -> String {
    format!("/deals/{}", i + 1)
}

fn analyse(loaded: LoadedDeal, source_name: String) -> Result<PackedDeal, Diagnostic> {
    let analysis = engine::analyse(&loaded.deal);
    let charts = chart::render_all(&analysis)?;
    Ok(PackedDeal {
        loaded,
        analysis,
        charts,
        source_name,
    })
}

/// A typeset pack.
#[derive(Debug, Clone)]
pub struct Pack {
    /// The PDF/A-3b bytes.
    pub pdf: Vec<u8>,
    /// How many deals it holds.
    pub deals: usize,
    /// The deal files left out because they are invalid, each with why.
    pub skipped: Vec<(String, Failure)>,
    /// Every file read for the packed deals (deal files and their CSV files).
    pub inputs: Vec<PathBuf>,
}

/// Loads, analyses and charts every deal (in parallel), then typesets them as one
/// pack. Invalid deal files are left out when `skip_invalid` holds; otherwise any
/// invalid file fails the pack, with every diagnostic of every invalid file.
pub fn build(
    paths: &[PathBuf],
    title: &str,
    created: NaiveDateTime,
    skip_invalid: bool,
) -> Result<Pack, Failure> {
    type Loaded = Result<Result<PackedDeal, Diagnostic>, Failure>;
    let results: Vec<(PathBuf, Loaded)> = paths
        .par_iter()
        .map(|path| {
            let name = path
                .file_name()
                .map(|n| n.to_string_lossy().to_string())
                .unwrap_or_else(|| "deal.yaml".to_string());
            (path.clone(), load_deal(path).map(|l| analyse(l, name)))
        })
        .collect();
    let mut deals = Vec::new();
    let mut skipped = Vec::new();
    for (path, result) in results {
        match result {
            Ok(Ok(d)) => deals.push(d),
            Ok(Err(d)) => return Err(Failure::internal(d)),
            Err(failure) => skipped.push((path.display().to_string(), failure)),
        }
    }
    if !skipped.is_empty() && !skip_invalid {
        let mut all = Failure::many(Vec::new(), FailureClass::Invalid);
        for (_, f) in &skipped {
            all.diagnostics.extend(f.diagnostics.iter().cloned());
            for (file, text) in &f.sources {
                all = all.with_source(file.clone(), text.clone());
            }
        }
        all.diagnostics.push(
            Diagnostic::error(
                "pack",
                format!(
                    "nothing written: {} of {} deal files are invalid",
                    skipped.len(),
                    paths.len()
                ),
            )
            .with_hint("fix them, or leave them out with `--skip-invalid`"),
        );
        return Err(all);
    }
    if deals.is_empty() {
        return Err(Failure::invalid(Diagnostic::error(
            "pack",
            "nothing written: no valid deal file to pack",
        )));
    }
    let names: Vec<String> = skipped.iter().map(|(n, _)| n.clone()).collect();
    let (markup, files) = pack_markup(title, created, &deals, &names).map_err(Failure::internal)?;
    let ident = sha256_hex(
        deals
            .iter()
            .map(|d| sha256_hex(&d.loaded.source))
            .collect::<Vec<_>>()
            .join(" ")
            .as_bytes(),
    );
    let pdf = pdf::typeset(&markup, &files, &pdf::TypesetOptions { created, ident })
        .map_err(Failure::internal)?;
    Ok(Pack {
        pdf,
        deals: deals.len(),
        skipped,
        inputs: deals.iter().flat_map(|d| d.loaded.files()).collect(),
    })
}
