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
use std::collections::BTreeMap;
use std::path::PathBuf;

/// The pack's cover and summary template.
pub(crate) const PACK_TEMPLATE: (&str, &str) =
    ("pack.typ.j2", include_str!("../templates/pack.typ.j2"));

/// One deal ready to be typeset into the pack.
#[derive(Debug, Clone)]
pub(crate) struct PackedDeal {
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
    /// Currency and the unit of the rounded amounts, with the valuation date.
    basis: String,
    hurdle: String,
    peak_exposure: String,
    /// One line per scenario: label, NPV at the hurdle and what the NPV rule says.
    scenarios: Vec<ScenarioLine>,
    recommendation: String,
    committee: String,
    /// The titles of the cautions raised in any scenario, each once.
    cautions: Vec<String>,
}

#[derive(Debug, Serialize)]
struct ScenarioLine {
    label: String,
    npv: String,
    rule: String,
}

fn summary_row(number: usize, d: &PackedDeal) -> RowView {
    let deal = &d.loaded.deal;
    let a = &d.analysis;
    let scale = present::summary::Scale::of(a);
    let base = a.scenarios.first();
    let periodic_start = match deal.clock {
        crate::model::Clock::Periodic { start, .. } => start,
        _ => None,
    };
    let mut cautions: Vec<String> = Vec::new();
    for s in &a.scenarios {
        for c in present::caution_text_list(s, &a.currency) {
            if !cautions.iter().any(|t| t == c.title) {
                cautions.push(c.title.to_string());
            }
        }
    }
    let signoff = deal.signoff.as_ref();
    let decision = signoff.map(|s| s.decision);
    RowView {
        number,
        deal: deal.name.clone(),
        basis: format!(
            "{}; NPVs as at {}",
            scale.unit(&a.currency),
            base.map(|b| present::summary::valuation_point(b, periodic_start))
                .unwrap_or_default()
        ),
        hurdle: base
            .map(|b| present::percent(b.hurdle_rate, 2, Style::Print))
            .unwrap_or_default(),
        peak_exposure: base
            .and_then(|b| present::summary::peak_exposure(&b.flows))
            .map(|(v, _)| present::summary::scaled(v.abs(), scale, Style::Print))
            .unwrap_or_else(|| "none".to_string()),
        scenarios: a
            .scenarios
            .iter()
            .map(|s| {
                let label = deal
                    .scenarios
                    .iter()
                    .find(|m| m.name == s.name)
                    .and_then(|m| m.label.as_deref());
                ScenarioLine {
                    label: words::scenario_title(label, &s.name),
                    npv: match s.npv_at_hurdle {
                        Some(v) => present::summary::scaled(v, scale, Style::Print),
                        None => present::scenario_npv(s, Style::Print),
                    },
                    rule: words::decision(s.decision).to_string(),
                }
            })
            .collect(),
        recommendation: deal
            .memo
            .recommendation
            .clone()
            .unwrap_or_else(|| "none given".to_string()),
        committee: match signoff.and_then(|s| s.date) {
            Some(date) => format!("{}, {}", words::signoff(decision), present::date_long(date)),
            None => words::signoff(decision).to_string(),
        },
        cautions,
    }
}

/// Files the typesetter can read, as (virtual path, bytes).
pub type Files = Vec<(String, Vec<u8>)>;

/// Builds the pack's markup and the files it reads. No file system access.
pub(crate) fn pack_markup(
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
            .map(|(i, d)| summary_row(i + 1, d))
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
                filed_version: None,
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
