//! The memo's view of a scenario's sensitivity (`s.sensitivity` in the templates,
//! drawn by `templates/sensitivity.typ.j2`): every figure and sentence from
//! `present::sensitivity`, in print style.

use crate::chart::{strip_file, tornado_file, ScenarioCharts};
use crate::engine::ScenarioAnalysis;
use crate::present::sensitivity::{
    band_sentence, bar_name, break_even_sentence, count_map_sentence, headline_sentences, step,
};
use crate::present::{self, Style};
use serde::Serialize;

const PRINT: Style = Style::Print;

/// A scenario's sensitivity as the templates read it.
#[derive(Debug, Serialize)]
pub(super) struct SensitivityView {
    /// The moves studied, e.g. `−20%`, joined with commas.
    steps: String,
    /// The NPV at the hurdle as the deal stands, with its currency.
    npv: String,
    /// Tornado rows, largest swing first.
    tornado: Vec<TornadoRow>,
    /// Path of the tornado chart.
    pub(super) tornado_chart: Option<String>,
    /// One sentence per component, capitalised, without a full stop.
    break_even: Vec<String>,
    /// The hurdle band, capitalised.
    band: String,
    /// The count map, one row per component.
    pub(super) count_maps: Vec<CountRow>,
    /// True when some count changes within the factors studied.
    count_changes: bool,
    /// When every map is drawn and certified and none changes: the one count they show.
    count_steady: Option<u32>,
    /// The two-way table.
    table: Option<TableView>,
    /// The findings a decision page leads with, as sentences.
    pub(crate) headlines: Vec<String>,
}

#[derive(Debug, Serialize)]
struct TornadoRow {
    name: String,
    low: String,
    high: String,
    swing: String,
}

#[derive(Debug, Serialize)]
pub(super) struct CountRow {
    name: String,
    sentence: String,
    /// Path of the strip chart, only where the count changes.
    pub(super) chart: Option<String>,
    /// True when the memo mentions the component: its count changes, or its map was
    /// not drawn or not certified.
    shown: bool,
}

#[derive(Debug, Serialize)]
struct TableView {
    name: String,
    factors: Vec<String>,
    rows: Vec<TableRow>,
}

#[derive(Debug, Serialize)]
struct TableRow {
    hurdle: String,
    cells: Vec<TableCell>,
    zero_at: String,
}

#[derive(Debug, Serialize)]
struct TableCell {
    npv: String,
    negative: bool,
}

fn capitalised(text: &str) -> String {
    let mut c = text.chars();
    match c.next() {
        Some(first) => first.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// The view of one scenario's sensitivity; `None` when it has none.
pub(super) fn view(
    index: usize,
    s: &ScenarioAnalysis,
    currency: &str,
    charts: Option<&ScenarioCharts>,
) -> Option<SensitivityView> {
    let sens = s.sensitivity.as_ref()?;
    let periodic = s.periods_per_year.is_some();
    let money = |d: Option<rust_decimal::Decimal>| {
        d.map_or("beyond range".to_string(), |v| present::money(v, PRINT))
    };
    let tornado = sens
        .tornado
        .iter()
        .map(|b| TornadoRow {
            name: bar_name(b, periodic),
            low: money(b.low),
            high: money(b.high),
            swing: money(b.swing),
        })
        .collect();
    let strip_of = |k: usize| {
        charts
            .filter(|c| c.sensitivity.strips.iter().any(|(i, _)| *i == k))
            .map(|_| strip_file(index, k))
    };
    let count_maps: Vec<CountRow> = sens
        .count_map
        .iter()
        .enumerate()
        .map(|(k, m)| CountRow {
            name: m.label.clone(),
            sentence: capitalised(&count_map_sentence(m, PRINT)),
            chart: if m.change_points.is_empty() {
                None
            } else {
                strip_of(k)
            },
            shown: !m.change_points.is_empty()
                || !m.certified
                || m.status != crate::engine::sensitivity::MapStatus::Mapped,
        })
        .collect();
    let table = sens.table.as_ref().map(|t| TableView {
        name: t.label.clone(),
        factors: t.factors.iter().map(|f| format!("{f:.2}")).collect(),
        rows: t
            .hurdle_rates
            .iter()
            .zip(&t.npv)
            .zip(&t.zero_at)
            .map(|((h, row), z)| TableRow {
                hurdle: present::percent(*h, 2, PRINT),
                cells: row
                    .iter()
                    .map(|v| TableCell {
                        npv: money(*v),
                        negative: v.is_some_and(|x| x.is_sign_negative() && !x.is_zero()),
                    })
                    .collect(),
                zero_at: z.map_or("none".to_string(), |f| format!("{f:.4}")),
            })
            .collect(),
    });
    Some(SensitivityView {
        steps: sens
            .steps
            .iter()
            .map(|x| step(*x, PRINT))
            .collect::<Vec<_>>()
            .join(", "),
        npv: money(sens.npv_at_hurdle),
        tornado,
        tornado_chart: charts
            .filter(|c| c.sensitivity.tornado.is_some())
            .map(|_| tornado_file(index)),
        break_even: sens
            .break_even
            .iter()
            .map(|b| capitalised(&break_even_sentence(b, s.hurdle_rate, PRINT)))
            .collect(),
        band: capitalised(&band_sentence(&sens.hurdle_band, PRINT)),
        count_changes: sens.count_map.iter().any(|m| !m.change_points.is_empty()),
        count_steady: steady(sens),
        count_maps,
        table,
        headlines: headline_sentences(sens, s.hurdle_rate, currency, periodic, PRINT),
    })
}

/// The count every map shows when each is drawn, certified and without a change.
fn steady(sens: &crate::engine::sensitivity::Sensitivity) -> Option<u32> {
    let mut counts = sens.count_map.iter().map(|m| match m.intervals.as_slice() {
        [one] if m.certified && one.certified && m.change_points.is_empty() => Some(one.count),
        _ => None,
    });
    let first = counts.next()??;
    counts.all(|c| c == Some(first)).then_some(first)
}
