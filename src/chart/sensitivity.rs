//! The sensitivity charts: the tornado (the NPV at the hurdle after each move, one
//! horizontal bar per component, the hurdle rate and the delay of the inflows, the
//! largest swing on top) and one strip per component whose count of IRRs changes
//! within the factors studied (factor against count).

use super::{
    compact_money, draw_sized, font, Area, DrawResult, BLACK, BLUE, FONT_SIZE, GREY, VERMILLION,
};
use crate::diag::Diagnostic;
use crate::engine::sensitivity::{CountMap, Sensitivity};
use crate::engine::ScenarioAnalysis;
use crate::present::sensitivity::bar_name;
use plotters::prelude::*;

/// Canvas of a strip chart: as wide as the other charts, a third of their height.
const STRIP_SIZE: (u32, u32) = (640, 186);
/// The width a character of a bar's name takes at the chart's font size, in canvas
/// pixels (a generous average for the serif face, so names are not clipped).
const LABEL_CHAR_PX: u32 = 11;
/// Bar names longer than this are shortened in the chart.
const MAX_LABEL_CHARS: usize = 28;

/// The sensitivity charts of one scenario.
#[derive(Debug, Clone, Default)]
pub struct SensitivityCharts {
    /// The tornado, when there is a bar with a known swing.
    pub tornado: Option<String>,
    /// Per component whose count changes: (index of the component in the count map, SVG).
    pub strips: Vec<(usize, String)>,
}

/// Draws the sensitivity charts of a scenario (none when it has no sensitivity).
pub fn render(s: &ScenarioAnalysis, currency: &str) -> Result<SensitivityCharts, Diagnostic> {
    let Some(sens) = &s.sensitivity else {
        return Ok(SensitivityCharts::default());
    };
    let periodic = s.periods_per_year.is_some();
    let tornado = if sens.tornado.iter().any(|b| b.low.is_some()) {
        let rows = (sens.tornado.len() as u32).max(1);
        Some(draw_sized((640, 60 + 44 * rows), |area| {
            tornado(area, sens, currency, periodic)
        })?)
    } else {
        None
    };
    let mut strips = Vec::new();
    for (i, m) in sens.count_map.iter().enumerate() {
        if !m.change_points.is_empty() {
            strips.push((i, draw_sized(STRIP_SIZE, |area| strip(area, m))?));
        }
    }
    Ok(SensitivityCharts { tornado, strips })
}

fn money_f64(d: rust_decimal::Decimal) -> f64 {
    d.to_string().parse().unwrap_or(0.0)
}

fn tornado(area: &Area<'_>, s: &Sensitivity, currency: &str, periodic: bool) -> DrawResult {
    let base = s.npv_at_hurdle.map(money_f64).unwrap_or(0.0);
    let bars: Vec<(String, f64, f64)> = s
        .tornado
        .iter()
        .filter_map(|b| Some((bar_name(b, periodic), money_f64(b.low?), money_f64(b.high?))))
        .collect();
    let lo = bars.iter().map(|b| b.1).fold(base.min(0.0), f64::min);
    let hi = bars.iter().map(|b| b.2).fold(base.max(0.0), f64::max);
    let span = (hi - lo).max(1.0);
    let n = bars.len() as f64;
    // The label area fits the longest name, up to about half the canvas; a longer
    // name is shortened here (the table under the chart gives it whole).
    let fit = |name: &str| -> String {
        if name.chars().count() <= MAX_LABEL_CHARS {
            name.to_string()
        } else {
            let kept: String = name.chars().take(MAX_LABEL_CHARS - 1).collect();
            format!("{}\u{2026}", kept.trim_end())
        }
    };
    let names: Vec<String> = bars.iter().map(|b| fit(&b.0)).collect();
    let longest = names.iter().map(|n| n.chars().count()).max().unwrap_or(0) as u32;
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .margin_right(34)
        .x_label_area_size(48)
        .y_label_area_size((longest * LABEL_CHAR_PX + 24).max(120))
        .build_cartesian_2d((lo - span * 0.05)..(hi + span * 0.05), -0.5..(n - 0.5))?;
    // The largest swing on top: bar k is drawn at n - 1 - k.
    let label = |v: &f64| {
        let k = (n - 1.0 - v.round()) as isize;
        if (v - v.round()).abs() < 1e-9 && k >= 0 && (k as usize) < names.len() {
            names[k as usize].clone()
        } else {
            String::new()
        }
    };
    chart
        .configure_mesh()
        .disable_y_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GREY.mix(0.5))
        .label_style(font(FONT_SIZE))
        .axis_desc_style(font(FONT_SIZE))
        .x_desc(format!("NPV at the hurdle ({currency})"))
        .x_labels(7)
        .y_labels(bars.len() * 2 + 1)
        .x_label_formatter(&|v| compact_money(*v))
        .y_label_formatter(&label)
        .draw()?;
    for (k, (_, low, high)) in bars.iter().enumerate() {
        let y = n - 1.0 - k as f64;
        // Below the deal as it stands vermillion, above it blue, each outlined in
        // black so that the two sides read without colour too.
        if *low < base {
            chart.draw_series([Rectangle::new(
                [(*low, y - 0.3), (base, y + 0.3)],
                VERMILLION.filled(),
            )])?;
            chart.draw_series([Rectangle::new(
                [(*low, y - 0.3), (base, y + 0.3)],
                BLACK.stroke_width(1),
            )])?;
        }
        if *high > base {
            chart.draw_series([Rectangle::new(
                [(base, y - 0.3), (*high, y + 0.3)],
                BLUE.filled(),
            )])?;
            chart.draw_series([Rectangle::new(
                [(base, y - 0.3), (*high, y + 0.3)],
                BLACK.stroke_width(1),
            )])?;
        }
    }
    // Zero solid, the deal as it stands dashed.
    chart.draw_series(LineSeries::new(
        [(0.0, -0.5), (0.0, n - 0.5)],
        BLACK.stroke_width(2),
    ))?;
    chart.draw_series(DashedLineSeries::new(
        [(base, -0.5), (base, n - 0.5)],
        8,
        5,
        BLACK.stroke_width(1),
    ))?;
    Ok(())
}

fn strip(area: &Area<'_>, m: &CountMap) -> DrawResult {
    let top = m.intervals.iter().map(|i| i.count).max().unwrap_or(0) as f64;
    let mut chart = ChartBuilder::on(area)
        .margin(8)
        .margin_right(34)
        .x_label_area_size(56)
        .y_label_area_size(72)
        .build_cartesian_2d(m.range[0]..m.range[1], -0.5..(top + 0.5))?;
    chart
        .configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GREY.mix(0.5))
        .label_style(font(FONT_SIZE))
        .axis_desc_style(font(FONT_SIZE))
        .x_desc(format!("factor on {}", m.label))
        .y_desc("IRRs")
        .x_labels(7)
        .y_labels(top as usize + 1)
        .y_label_formatter(&|v| format!("{v:.0}"))
        .draw()?;
    for i in &m.intervals {
        chart.draw_series(LineSeries::new(
            [(i.from, i.count as f64), (i.to, i.count as f64)],
            BLUE.stroke_width(4),
        ))?;
    }
    for p in &m.change_points {
        chart.draw_series(DashedLineSeries::new(
            [(p.factor, -0.5), (p.factor, top + 0.5)],
            5,
            4,
            VERMILLION.stroke_width(2),
        ))?;
    }
    // The deal as it stands.
    chart.draw_series(DashedLineSeries::new(
        [(1.0, -0.5), (1.0, top + 0.5)],
        2,
        4,
        BLACK.stroke_width(1),
    ))?;
    Ok(())
}
