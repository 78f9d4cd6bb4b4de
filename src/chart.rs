//! The memo's charts, drawn with plotters into SVG strings: the NPV profile with every
//! IRR and the hurdle marked, the balance path at each IRR, and the cash flows as bars.
//!
//! This is the only place where money becomes a binary float, and only for drawing.
//! Lines differ by dash pattern and marker as well as by colour, so that a black and
//! white print stays readable; the colours are the Okabe–Ito palette, which was
//! designed to stay distinct under the common colour-vision deficiencies.

use crate::diag::Diagnostic;
use crate::engine::{Analysis, FlowRow, ScenarioAnalysis};
use crate::present::{percent, scenario_rate_decimals, Style, MINUS};
use chrono::{Datelike, NaiveDate};
use plotters::coord::Shift;
use plotters::prelude::*;
use std::ops::Range;

pub mod sensitivity;

/// Canvas size in SVG pixels; the memo sets two charts side by side, each about 8 cm
/// wide, so about 0.15 mm a pixel on A4.
const SIZE: (u32, u32) = (520, 350);
/// The face chart text asks for; the typesetter has it bundled.
const FONT: &str = "Libertinus Serif";
/// About 7 pt once the chart is set at half the text width.
const FONT_SIZE: i32 = 22;
/// The narrowest a cash-flow bar is drawn, in pixels, and the least height of a bar
/// for a flow that is not zero: every flow stays visible.
const MIN_BAR_PX: f64 = 2.5;
const MIN_BAR_HEIGHT_PX: f64 = 2.0;
/// IRRs inside this band of annual rates set the NPV profile's range; others are
/// listed beside the chart.
const MEANINGFUL_RATES: (f64, f64) = (-0.25, 1.0);
/// Points of the NPV profile as drawn.
const PROFILE_POINTS: usize = 241;

/// Okabe–Ito colours (Okabe and Ito, "Color Universal Design", 2008).
const BLACK: RGBColor = RGBColor(0, 0, 0);
const ORANGE: RGBColor = RGBColor(0xE6, 0x9F, 0x00);
const SKY_BLUE: RGBColor = RGBColor(0x56, 0xB4, 0xE9);
const GREEN: RGBColor = RGBColor(0x00, 0x9E, 0x73);
const BLUE: RGBColor = RGBColor(0x00, 0x72, 0xB2);
const VERMILLION: RGBColor = RGBColor(0xD5, 0x5E, 0x00);
const PURPLE: RGBColor = RGBColor(0xCC, 0x79, 0xA7);
const GREY: RGBColor = RGBColor(0xBB, 0xBB, 0xBB);

/// One line style per series: colour, dash (length, gap; none for solid) and marker.
const LINE_STYLES: [LineStyle; 6] = [
    (BLUE, None, Marker::Circle),
    (VERMILLION, Some((12, 6)), Marker::Triangle),
    (GREEN, Some((3, 4)), Marker::Square),
    (PURPLE, Some((18, 5)), Marker::Cross),
    (ORANGE, Some((7, 3)), Marker::Circle),
    (SKY_BLUE, Some((2, 8)), Marker::Triangle),
];

/// Colour, dash (length, gap; `None` for solid) and marker of one series.
type LineStyle = (RGBColor, Option<(i32, i32)>, Marker);

#[derive(Debug, Clone, Copy)]
enum Marker {
    Circle,
    Triangle,
    Square,
    Cross,
}

/// The charts of the memo.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ChartKind {
    /// NPV against the discount rate.
    NpvProfile,
    /// The balance path at each IRR.
    BalancePaths,
    /// The cash flows as bars.
    CashFlows,
}

impl ChartKind {
    fn slug(self) -> &'static str {
        match self {
            ChartKind::NpvProfile => "npv-profile",
            ChartKind::BalancePaths => "balance-paths",
            ChartKind::CashFlows => "cash-flows",
        }
    }
}

/// The charts of one scenario. A chart is `None` when there is nothing to draw (no
/// profile points, no IRR with a finite rate, no flows).
#[derive(Debug, Clone, Default)]
pub struct ScenarioCharts {
    /// NPV profile SVG.
    pub npv_profile: Option<String>,
    /// Balance paths SVG.
    pub balance_paths: Option<String>,
    /// Cash flows SVG.
    pub cash_flows: Option<String>,
    /// The annual rates the profile spans (lowest, highest); IRRs outside it are not
    /// on the chart and the memo lists them beside it.
    pub profile_range: Option<(f64, f64)>,
    /// The tornado and the count strips ([`sensitivity`]).
    pub sensitivity: sensitivity::SensitivityCharts,
}

impl ScenarioCharts {
    /// The SVG of one chart.
    pub fn get(&self, kind: ChartKind) -> Option<&str> {
        match kind {
            ChartKind::NpvProfile => self.npv_profile.as_deref(),
            ChartKind::BalancePaths => self.balance_paths.as_deref(),
            ChartKind::CashFlows => self.cash_flows.as_deref(),
        }
    }

    /// The charts as files for the typesetter, named by [`file_name`].
    pub fn files(&self, index: usize) -> Vec<(String, Vec<u8>)> {
        [
            ChartKind::NpvProfile,
            ChartKind::BalancePaths,
            ChartKind::CashFlows,
        ]
        .into_iter()
        .filter_map(|k| {
            self.get(k)
                .map(|svg| (file_name(index, k), svg.as_bytes().to_vec()))
        })
        .chain(
            self.sensitivity
                .tornado
                .iter()
                .map(|svg| (tornado_file(index), svg.as_bytes().to_vec())),
        )
        .chain(
            self.sensitivity
                .strips
                .iter()
                .map(|(k, svg)| (strip_file(index, *k), svg.as_bytes().to_vec())),
        )
        .collect()
    }
}

/// The path of a scenario's tornado chart.
pub(crate) fn tornado_file(index: usize) -> String {
    format!("/charts/s{index}-tornado.svg")
}

/// The path of the count strip of a scenario's component `k` (its place in the count map).
pub(crate) fn strip_file(index: usize, k: usize) -> String {
    format!("/charts/s{index}-count-{k}.svg")
}

/// The path under which the typesetter finds a chart of the scenario at `index`.
pub fn file_name(index: usize, kind: ChartKind) -> String {
    format!("/charts/s{index}-{}.svg", kind.slug())
}

/// Draws the charts of every scenario, in order.
pub fn render_all(analysis: &Analysis) -> Result<Vec<ScenarioCharts>, Diagnostic> {
    analysis
        .scenarios
        .iter()
        .map(|s| render(s, &analysis.currency))
        .collect()
}

/// Draws the charts of one scenario.
pub fn render(scenario: &ScenarioAnalysis, currency: &str) -> Result<ScenarioCharts, Diagnostic> {
    let profile = profile_points(scenario);
    let profile_range = match (profile.first(), profile.last()) {
        (Some(a), Some(b)) if b.0 > a.0 => Some((a.0, b.0)),
        _ => None,
    };
    let npv_profile = match profile_range {
        Some(range) => Some(draw(|area| {
            npv_profile(area, scenario, currency, &profile, range)
        })?),
        None => None,
    };
    let has_paths = scenario
        .irr
        .roots
        .iter()
        .any(|r| drawable_root(r) && !r.balance_path.is_empty());
    let balance_paths = if has_paths {
        Some(draw(|area| balance_paths(area, scenario, currency))?)
    } else {
        None
    };
    let cash_flows = if scenario.flows.is_empty() {
        None
    } else {
        Some(draw(|area| cash_flows(area, &scenario.flows, currency))?)
    };
    Ok(ScenarioCharts {
        npv_profile,
        balance_paths,
        cash_flows,
        profile_range,
        sensitivity: sensitivity::render(scenario, currency)?,
    })
}

/// The range of annual rates the NPV profile spans: 0%, the hurdle and every IRR within
/// [`MEANINGFUL_RATES`], at least 20 percentage points wide, widened by 15% of its span
/// on each side and kept above -99%.
pub fn profile_span(s: &ScenarioAnalysis) -> (f64, f64) {
    let mut lo = 0.0f64.min(s.hurdle_rate);
    let mut hi = 0.0f64.max(s.hurdle_rate);
    for r in s.irr.roots.iter().filter_map(|r| r.annual_rate) {
        if r.is_finite() && r >= MEANINGFUL_RATES.0 && r <= MEANINGFUL_RATES.1 {
            lo = lo.min(r);
            hi = hi.max(r);
        }
    }
    if hi - lo < 0.2 {
        hi = lo + 0.2;
    }
    let pad = (hi - lo) * 0.15;
    ((lo - pad).max(-0.99), hi + pad)
}

/// The NPV at evenly spaced rates over [`profile_span`], for drawing: every flow as a
/// binary float discounted by (1 + r)^(-t).
fn profile_points(s: &ScenarioAnalysis) -> Vec<(f64, f64)> {
    if s.flows.is_empty() {
        return Vec::new();
    }
    let (lo, hi) = profile_span(s);
    let flows: Vec<(f64, f64)> = s
        .flows
        .iter()
        .map(|f| (f.years, to_f64(f.amount)))
        .collect();
    (0..PROFILE_POINTS)
        .map(|i| {
            let r = lo + (hi - lo) * i as f64 / (PROFILE_POINTS - 1) as f64;
            let l = r.ln_1p();
            let npv: f64 = flows.iter().map(|(t, a)| a * (-l * t).exp()).sum();
            (r, npv)
        })
        .filter(|p| p.1.is_finite())
        .collect()
}

fn to_f64(d: rust_decimal::Decimal) -> f64 {
    crate::model::flows::amount_f64(d)
}

fn drawable_root(root: &crate::engine::Root) -> bool {
    !root.extreme && root.annual_rate.is_some_and(f64::is_finite)
}

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
type DrawResult = Result<(), Box<dyn std::error::Error + 'static>>;

fn draw(f: impl FnOnce(&Area<'_>) -> DrawResult) -> Result<String, Diagnostic> {
    draw_sized(SIZE, f)
}

fn draw_sized(
    size: (u32, u32),
    f: impl FnOnce(&Area<'_>) -> DrawResult,
) -> Result<String, Diagnostic> {
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        let drawn = area
            .fill(&WHITE)
            .map_err(|e| e.to_string())
            .and_then(|_| f(&area).map_err(|e| e.to_string()))
            .and_then(|_| area.present().map_err(|e| e.to_string()));
        drawn
            .map_err(|e| Diagnostic::error("chart", format!("a chart could not be drawn: {e}")))?;
    }
    Ok(svg)
}

fn font(size: i32) -> TextStyle<'static> {
    (FONT, size).into_font().color(&BLACK)
}

/// Money on an axis, compact: `1.2M`, `−350k`.
fn compact_money(v: f64) -> String {
    let a = v.abs();
    let sign = if v < 0.0 && a >= 0.005 {
        MINUS.to_string()
    } else {
        String::new()
    };
    let body = if a >= 1e9 {
        format!("{:.1}bn", a / 1e9)
    } else if a >= 1e6 {
        format!("{:.1}M", a / 1e6)
    } else if a >= 1e3 {
        format!("{:.0}k", a / 1e3)
    } else {
        format!("{a:.0}")
    };
    format!("{sign}{body}")
}

/// A value range with some room around the data and zero always inside.
fn padded(lo: f64, hi: f64) -> Range<f64> {
    let lo = lo.min(0.0);
    let hi = hi.max(0.0);
    let span = (hi - lo).max(1.0);
    (lo - span * 0.08)..(hi + span * 0.08)
}

fn marker_series<'a, DB: DrawingBackend + 'a>(
    chart: &mut ChartContext<
        'a,
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    marker: Marker,
    points: Vec<(f64, f64)>,
    style: ShapeStyle,
) -> DrawResult
where
    DB::ErrorType: 'static,
{
    match marker {
        Marker::Circle => {
            chart.draw_series(points.into_iter().map(|p| Circle::new(p, 4, style)))?;
        }
        Marker::Triangle => {
            chart.draw_series(points.into_iter().map(|p| TriangleMarker::new(p, 5, style)))?;
        }
        Marker::Square => {
            chart.draw_series(
                points
                    .into_iter()
                    .map(|p| EmptyElement::at(p) + Rectangle::new([(-4, -4), (4, 4)], style)),
            )?;
        }
        Marker::Cross => {
            chart.draw_series(points.into_iter().map(|p| Cross::new(p, 5, style)))?;
        }
    }
    Ok(())
}

fn npv_profile(
    area: &Area<'_>,
    s: &ScenarioAnalysis,
    currency: &str,
    profile: &[(f64, f64)],
    (lo, hi): (f64, f64),
) -> DrawResult {
    let (ymin, ymax) = profile
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.1), b.max(p.1))
        });
    let x = (lo * 100.0)..(hi * 100.0);
    let hurdle = s.hurdle_rate * 100.0;
    let decimals = scenario_rate_decimals(s);
    let inside: Vec<(usize, f64)> = s
        .irr
        .roots
        .iter()
        .enumerate()
        .filter_map(|(i, r)| r.annual_rate.map(|a| (i, a)))
        .filter(|(_, a)| a.is_finite() && *a >= lo && *a <= hi)
        .collect();
    // The key sits above the plot, so no label can cover the curve, the frame or the
    // hurdle line: the hurdle, then each IRR by its number, two entries a row.
    let mut entries: Vec<String> = Vec::new();
    if x.contains(&hurdle) {
        entries.push(format!(
            "hurdle {}",
            percent(s.hurdle_rate, 2, Style::Print)
        ));
    }
    for (i, rate) in &inside {
        entries.push(format!(
            "IRR {}: {}",
            i + 1,
            percent(*rate, decimals, Style::Print)
        ));
    }
    let rows = entries.len().div_ceil(2).max(1) as u32;
    let (key_area, plot_area) = area.split_vertically(10 + 28 * rows);
    let mut chart = ChartBuilder::on(&plot_area)
        .margin(10)
        .margin_right(24)
        .x_label_area_size(52)
        .y_label_area_size(84)
        .build_cartesian_2d(x.clone(), padded(ymin, ymax))?;
    chart
        .configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GREY.mix(0.5))
        .label_style(font(FONT_SIZE))
        .axis_desc_style(font(FONT_SIZE))
        .x_desc("discount rate, annual")
        .y_desc(format!("NPV ({currency})"))
        .x_labels(6)
        .y_labels(6)
        .x_label_formatter(&|v| crate::present::print_minus(&format!("{v:.0}%")))
        .y_label_formatter(&|v| compact_money(*v))
        .draw()?;
    // Zero line: the IRRs are where the curve crosses it.
    chart.draw_series(LineSeries::new(
        [(x.start, 0.0), (x.end, 0.0)],
        BLACK.stroke_width(1),
    ))?;
    chart.draw_series(LineSeries::new(
        profile.iter().map(|&(r, v)| (r * 100.0, v)),
        BLUE.stroke_width(3),
    ))?;
    let (ylo, yhi) = {
        let r = padded(ymin, ymax);
        (r.start, r.end)
    };
    let mut k: i32 = 0;
    let mut key_entry = |text: String, sample: &dyn Fn(i32, i32) -> DrawResult| -> DrawResult {
        let lx = 20 + 250 * (k % 2);
        let ly = 18 + 28 * (k / 2);
        sample(lx, ly)?;
        key_area.draw(&Text::new(text, (lx + 42, ly - 11), font(FONT_SIZE)))?;
        k += 1;
        Ok(())
    };
    if x.contains(&hurdle) {
        chart.draw_series(DashedLineSeries::new(
            [(hurdle, ylo), (hurdle, yhi)],
            10,
            6,
            VERMILLION.stroke_width(2),
        ))?;
        key_entry(entries[0].clone(), &|lx, ly| {
            key_area.draw(&legend_sample(
                lx,
                ly,
                Some((10, 6)),
                VERMILLION.stroke_width(2),
            ))?;
            Ok(())
        })?;
    }
    for (n, (i, rate)) in inside.iter().enumerate() {
        let p = (rate * 100.0, 0.0);
        chart.draw_series(std::iter::once(Circle::new(p, 6, BLACK.stroke_width(2))))?;
        chart.draw_series(std::iter::once(Circle::new(p, 2, BLACK.filled())))?;
        // The root's number beside its circle, alternately above and below the axis so
        // that close roots stay apart.
        let above = n % 2 == 0;
        let (vpos, dy) = if above {
            (plotters::style::text_anchor::VPos::Bottom, -10)
        } else {
            (plotters::style::text_anchor::VPos::Top, 10)
        };
        // Next to the hurdle line, the number moves to the side away from it.
        let gap = chart.backend_coord(&p).0 - chart.backend_coord(&(hurdle, 0.0)).0;
        let (hpos, dx) = if !x.contains(&hurdle) || gap.abs() >= 14 {
            (plotters::style::text_anchor::HPos::Center, 0)
        } else if gap >= 0 {
            (plotters::style::text_anchor::HPos::Left, 6)
        } else {
            (plotters::style::text_anchor::HPos::Right, -6)
        };
        chart.draw_series(std::iter::once(
            EmptyElement::at(p)
                + Text::new(
                    format!("{}", i + 1),
                    (dx, dy),
                    font(FONT_SIZE).pos(plotters::style::text_anchor::Pos::new(hpos, vpos)),
                ),
        ))?;
        let text = entries[usize::from(x.contains(&hurdle)) + n].clone();
        key_entry(text, &|lx, ly| {
            key_area.draw(&Circle::new((lx + 18, ly), 6, BLACK.stroke_width(2)))?;
            key_area.draw(&Text::new(
                format!("{}", i + 1),
                (lx + 28, ly - 11),
                font(FONT_SIZE - 4),
            ))?;
            Ok(())
        })?;
    }
    Ok(())
}

fn balance_paths(area: &Area<'_>, s: &ScenarioAnalysis, currency: &str) -> DrawResult {
    let roots: Vec<(usize, &crate::engine::Root)> = s
        .irr
        .roots
        .iter()
        .enumerate()
        .filter(|(_, r)| drawable_root(r) && !r.balance_path.is_empty())
        .collect();
    let to_f = to_f64;
    let series: Vec<Vec<(f64, f64)>> = roots
        .iter()
        .map(|(_, r)| {
            r.balance_path
                .iter()
                .map(|b| (b.years, to_f(b.balance)))
                .collect()
        })
        .collect();
    let all = series.iter().flatten();
    let (xmin, xmax, ymin, ymax) = all.fold(
        (
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        ),
        |(a, b, c, d), p| (a.min(p.0), b.max(p.0), c.min(p.1), d.max(p.1)),
    );
    let xspan = (xmax - xmin).max(1.0);
    // The legend sits above the plot, two entries a row, so it never hides a line.
    let legend_rows = roots.len().div_ceil(2) as u32;
    let (legend_area, plot_area) = area.split_vertically(10 + 28 * legend_rows);
    let mut chart = ChartBuilder::on(&plot_area)
        .margin(10)
        .margin_right(24)
        .x_label_area_size(52)
        .y_label_area_size(84)
        .build_cartesian_2d(
            (xmin - xspan * 0.03)..(xmax + xspan * 0.03),
            padded(ymin, ymax),
        )?;
    chart
        .configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GREY.mix(0.5))
        .label_style(font(FONT_SIZE))
        .axis_desc_style(font(FONT_SIZE))
        .x_desc("years from the start")
        .y_desc(format!("balance ({currency})"))
        .x_labels(6)
        .y_labels(6)
        .y_label_formatter(&|v| compact_money(*v))
        .draw()?;
    chart.draw_series(LineSeries::new(
        [(xmin - xspan, 0.0), (xmax + xspan, 0.0)],
        BLACK.stroke_width(1),
    ))?;
    let decimals = scenario_rate_decimals(s);
    let show_markers = series.iter().all(|p| p.len() <= 60);
    for (k, ((i, root), points)) in roots.iter().zip(series).enumerate() {
        let (colour, dash, marker) = LINE_STYLES[k % LINE_STYLES.len()];
        let style = colour.stroke_width(2);
        let label = format!(
            "at IRR {}: {}",
            i + 1,
            root.annual_rate
                .map(|r| percent(r, decimals, Style::Print))
                .unwrap_or_default()
        );
        match dash {
            None => chart.draw_series(LineSeries::new(points.clone(), style))?,
            Some((len, gap)) => {
                chart.draw_series(DashedLineSeries::new(points.clone(), len, gap, style))?
            }
        };

        let lx = 20 + 250 * (k % 2) as i32;
        let ly = 18 + 28 * (k / 2) as i32;
        legend_area.draw(&legend_sample(lx, ly, dash, style))?;
        legend_area.draw(&Text::new(label, (lx + 44, ly - 11), font(FONT_SIZE)))?;
        draw_pixel_marker(&legend_area, marker, (lx + 18, ly), style)?;
        if show_markers {
            marker_series(&mut chart, marker, points, style)?;
        }
    }
    Ok(())
}

fn draw_pixel_marker(
    area: &Area<'_>,
    marker: Marker,
    at: (i32, i32),
    style: ShapeStyle,
) -> DrawResult {
    match marker {
        Marker::Circle => area.draw(&Circle::new(at, 4, style))?,
        Marker::Triangle => area.draw(&TriangleMarker::new(at, 5, style))?,
        Marker::Square => area.draw(&Rectangle::new(
            [(at.0 - 4, at.1 - 4), (at.0 + 4, at.1 + 4)],
            style,
        ))?,
        Marker::Cross => area.draw(&Cross::new(at, 5, style))?,
    }
    Ok(())
}

/// The legend sample of a series: its line, dashed like the series (a solid line is
/// one dash longer than the sample).
fn legend_sample(
    x: i32,
    y: i32,
    dash: Option<(i32, i32)>,
    style: ShapeStyle,
) -> plotters::element::DashedPathElement<std::vec::IntoIter<(i32, i32)>, i32> {
    let (len, gap) = dash.unwrap_or((100, 1));
    plotters::element::DashedPathElement::new(vec![(x, y), (x + 36, y)], len, gap, style)
}

fn parse_date(row: &FlowRow) -> Option<NaiveDate> {
    row.date
        .as_deref()
        .and_then(|d| NaiveDate::parse_from_str(d, "%Y-%m-%d").ok())
}

/// Axis ticks for a span of years: at whole years, every 1, 2, 5, 10, ... years so
/// that about six fit.
fn year_ticks(first: f64, last: f64) -> Vec<f64> {
    let span = (last - first).max(1.0);
    let step = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0]
        .into_iter()
        .find(|s| span / s <= 7.0)
        .unwrap_or(100.0);
    let mut t = (first / step).ceil() * step;
    let mut out = Vec::new();
    while t <= last + 1e-9 {
        out.push(t);
        t += step;
    }
    out
}

fn cash_flows(area: &Area<'_>, flows: &[FlowRow], currency: &str) -> DrawResult {
    let dates: Option<Vec<NaiveDate>> = flows.iter().map(parse_date).collect();
    // Dated flows go on a calendar axis (days since the first date), ticked at the
    // starts of years; periodic flows on years since the start, ticked at whole years.
    let (xs, origin): (Vec<f64>, Option<NaiveDate>) = match &dates {
        Some(ds) if !ds.is_empty() => {
            let first = ds[0];
            (
                ds.iter().map(|d| (*d - first).num_days() as f64).collect(),
                Some(first),
            )
        }
        _ => (flows.iter().map(|f| f.years).collect(), None),
    };
    let amounts: Vec<f64> = flows.iter().map(|f| to_f64(f.amount)).collect();
    let xmin = xs.iter().copied().fold(f64::INFINITY, f64::min);
    let xmax = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let min_gap = xs
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|g| *g > 0.0)
        .fold(f64::INFINITY, f64::min);
    let unit = if origin.is_some() { 365.0 } else { 1.0 };
    let (ymin, ymax) = amounts
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        });
    let span = (xmax - xmin).max(unit);
    // Pixels of the plot, roughly: the canvas less the label areas and margins.
    let plot_w = f64::from(SIZE.0) - 84.0 - 34.0;
    let plot_h = f64::from(SIZE.1) - 52.0 - 20.0;
    let natural = if min_gap.is_finite() {
        min_gap * 0.6
    } else {
        unit * 0.6
    };
    let width = natural.max(MIN_BAR_PX * span * 1.2 / plot_w);
    // Room for half a bar and a little more on each side, so no bar meets the frame.
    let pad = span * 0.04 + width / 2.0;
    let xrange = (xmin - pad)..(xmax + pad);
    let yrange = padded(ymin, ymax);
    let per_px_x = (xrange.end - xrange.start) / plot_w;
    let per_px_y = (yrange.end - yrange.start) / plot_h;
    let width = width.max(MIN_BAR_PX * per_px_x);
    let min_height = MIN_BAR_HEIGHT_PX * per_px_y;
    let ticks: Vec<f64> = match origin {
        Some(first) => {
            let last = first + chrono::Duration::days(xmax.round() as i64);
            let years = year_ticks(f64::from(first.year()) + 1.0, f64::from(last.year()));
            years
                .into_iter()
                .filter_map(|y| NaiveDate::from_ymd_opt(y as i32, 1, 1))
                .map(|d| (d - first).num_days() as f64)
                .collect()
        }
        None => year_ticks(xmin.ceil(), xmax.floor()),
    };
    let label_of = |v: &f64| match origin {
        Some(first) => {
            let d = first + chrono::Duration::days(v.round() as i64);
            d.format("%Y").to_string()
        }
        None => format!("{v:.0}"),
    };
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .margin_right(24)
        .x_label_area_size(52)
        .y_label_area_size(84)
        .build_cartesian_2d(xrange.clone(), yrange.clone())?;
    chart
        .configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GREY.mix(0.5))
        .label_style(font(FONT_SIZE))
        .axis_desc_style(font(FONT_SIZE))
        .x_desc(if origin.is_some() {
            "year (ticks at 1 January)"
        } else {
            "years from the start"
        })
        .y_desc(format!("cash flow ({currency})"))
        .x_labels(0)
        .y_labels(6)
        .y_label_formatter(&|v| compact_money(*v))
        .draw()?;
    // The x ticks by hand, at the chosen years: a short mark below the axis and its
    // label under it, with a faint grid line.
    let ybottom = yrange.start;
    for &t in ticks.iter().filter(|t| xrange.contains(t)) {
        chart.draw_series(LineSeries::new(
            [(t, yrange.start), (t, yrange.end)],
            GREY.mix(0.5).stroke_width(1),
        ))?;
        let (px, py) = chart.backend_coord(&(t, ybottom));
        area.draw(&PathElement::new(
            vec![(px, py), (px, py + 6)],
            BLACK.stroke_width(1),
        ))?;
        area.draw(&Text::new(
            label_of(&t),
            (px, py + 8),
            font(FONT_SIZE).pos(plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Center,
                plotters::style::text_anchor::VPos::Top,
            )),
        ))?;
    }
    chart.draw_series(LineSeries::new(
        [(xrange.start, 0.0), (xrange.end, 0.0)],
        BLACK.stroke_width(1),
    ))?;
    // Inflows solid green, outflows vermillion with a black outline: the sign shows
    // by position too, so the chart reads without colour. Every bar is at least
    // MIN_BAR_PX wide and MIN_BAR_HEIGHT_PX tall, so no flow disappears between pixels.
    let bar = |x: f64, a: f64| {
        let h = if a.abs() < min_height {
            min_height.copysign(a)
        } else {
            a
        };
        [(x - width / 2.0, 0.0), (x + width / 2.0, h)]
    };
    chart.draw_series(xs.iter().zip(&amounts).map(|(&x, &a)| {
        let style = if a >= 0.0 {
            GREEN.filled()
        } else {
            VERMILLION.filled()
        };
        Rectangle::new(bar(x, a), style)
    }))?;
    // Outlines only where bars stand apart; on a dense axis an outline would cover
    // the neighbouring bars.
    if natural >= MIN_BAR_PX * per_px_x * 2.0 {
        chart.draw_series(
            xs.iter()
                .zip(&amounts)
                .filter(|(_, a)| **a < 0.0)
                .map(|(&x, &a)| Rectangle::new(bar(x, a), BLACK.stroke_width(1))),
        )?;
    }
    Ok(())
}
