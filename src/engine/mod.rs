//! Pure numerics, no I/O: every real IRR with a certified count, balance paths, the
//! decision rule, MIRR, NPV and the other committee figures, and the cautions.

pub mod analysis;
pub mod cautions;
pub mod complex;
pub mod dd;
pub mod figures;
pub mod irr;
pub mod roots;
pub mod sensitivity;

pub use crate::model::flows::{self, FlowPoint, Flows};
pub use analysis::*;
pub use cautions::Caution;

use crate::model::{Deal, Rates, Scenario};
use rust_decimal::prelude::*;

/// Analyses the base case and every scenario of a validated deal, each at its own
/// rates. A deal of format version 2 also gets its units, basis, lines, peak exposure
/// and committed outflows, and the cautions that rest on them.
pub fn analyse(deal: &Deal) -> Analysis {
    let lines = deal.version >= 2;
    let options = sensitivity::SensitivityOptions::for_deal(&deal.sensitivity);
    Analysis {
        deal: deal.name.clone(),
        currency: deal.currency.clone(),
        units: lines.then_some(deal.units),
        basis: lines.then(|| deal.basis.unwrap_or_default()),
        scenarios: deal
            .scenarios
            .iter()
            .map(|s| {
                let mut a = analyse_scenario(&s.name, &s.flows, &s.rates);
                a.label = s.label.clone();
                if lines {
                    with_lines(&mut a, s, deal);
                }
                // The parts the sensitivity moves: a version-2 deal's lines, else the
                // inflows and outflows a version-1 scenario's factors scale.
                let components = if lines {
                    s.components
                        .iter()
                        .map(|c| sensitivity::Component {
                            key: c.key.clone(),
                            label: c.label.clone(),
                            flows: c.flows.clone(),
                        })
                        .collect()
                } else {
                    sensitivity::v1_components(&s.flows)
                };
                a.sensitivity = Some(sensitivity::sensitivity(&components, &s.rates, &options));
                a
            })
            .collect(),
    }
}

/// Adds a version-2 scenario's lines, peak exposure, committed outflows and the
/// cautions on its terminal values and basis.
fn with_lines(a: &mut ScenarioAnalysis, s: &Scenario, deal: &Deal) {
    let row = |flows: &Flows, i: usize| {
        let p = &flows.points[i];
        FlowRow {
            period: p.period,
            date: p.date.map(|d| d.to_string()),
            years: flows.years(i),
            amount: p.amount,
            note: p.note.clone(),
        }
    };
    a.lines = Some(
        s.components
            .iter()
            .map(|c| LineSummary {
                key: c.key.clone(),
                label: c.label.clone(),
                note: c.note.clone(),
                inflows: c.inflows(),
                outflows: c.outflows(),
                net: c.inflows() + c.outflows(),
                flows: (0..c.flows.points.len())
                    .map(|i| row(&c.flows, i))
                    .collect(),
            })
            .collect(),
    );
    let flows = s.flows.normalised();
    a.peak_exposure = Some(
        match crate::model::flows::peak_exposure(flows.points.iter().map(|p| p.amount)) {
            Some((amount, i)) => Exposure {
                amount,
                period: flows.points[i].period,
                date: flows.points[i].date.map(|d| d.to_string()),
                years: Some(flows.years(i)),
            },
            None => Exposure {
                amount: Decimal::ZERO,
                period: None,
                date: None,
                years: None,
            },
        },
    );
    a.committed_outflows = Some(s.components.iter().map(|c| c.outflows()).sum());
    for t in &s.narrow_terminals {
        a.cautions.push(Caution::TerminalSpread {
            label: t.label.clone(),
            discount: t.discount,
            growth: t.growth,
            value: t.value,
        });
    }
    if deal.basis.is_some_and(|b| b.real_amounts_nominal_rates()) {
        a.cautions.push(Caution::RealAmountsNominalRates);
    }
}

/// The NPV at a hurdle rate as deals and batch lines both report it: rounded to the
/// cent, or, beyond Decimal's range, `None` with its sign and size; both `None` when
/// it cannot be computed.
pub fn npv_at_hurdle(flows: &Flows, hurdle: Decimal) -> (Option<Decimal>, Option<ApproxAmount>) {
    match figures::npv_at(flows, hurdle) {
        Some(figures::NpvAt::Cents(c)) => (Some(c), None),
        Some(figures::NpvAt::Beyond(a)) => (None, Some(a)),
        None => (None, None),
    }
}

/// The rates a series is read at. A deal always has all three (its finance and
/// reinvestment rates default to the hurdle when the file leaves them out); a batch
/// line may give none, and then gets neither an NPV nor an MIRR.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct SeriesRates {
    /// Hurdle rate per year.
    pub hurdle: Option<Decimal>,
    /// Finance rate for the MIRR (the hurdle when absent).
    pub finance: Option<Decimal>,
    /// Reinvestment rate for the MIRR (the hurdle when absent).
    pub reinvestment: Option<Decimal>,
}

impl SeriesRates {
    /// A deal's rates.
    pub fn of(rates: &Rates) -> Self {
        Self {
            hurdle: Some(rates.hurdle),
            finance: Some(rates.finance),
            reinvestment: Some(rates.reinvestment),
        }
    }
}

/// What every series gets, whether it is a deal's scenario or a batch line: the one
/// entry into the engine for a series (see [`read_series`]).
#[derive(Debug, Clone)]
pub(crate) struct SeriesReading {
    /// The IRRs, their certificate and readings.
    pub report: IrrReport,
    /// With a hurdle: the NPV at it (see [`npv_at_hurdle`]).
    pub npv_at_hurdle: Option<(Option<Decimal>, Option<ApproxAmount>)>,
    /// With a hurdle: the MIRR, `None` inside when it does not exist.
    pub mirr: Option<Option<f64>>,
}

/// Reads one normalised series of flows (see [`Flows::normalised`]): its every real
/// IRR with the certified count, and with a hurdle the NPV at it and the MIRR.
/// `with_paths` adds the balance path at each root. Deals ([`analyse_scenario`]) and
/// batch lines (`rates --batch`) both come here, so they cannot answer differently.
pub(crate) fn read_series(flows: &Flows, rates: SeriesRates, with_paths: bool) -> SeriesReading {
    let hurdle = rates.hurdle.and_then(|h| h.to_f64());
    let report = irr::irr_report(flows, hurdle, with_paths);
    let Some(h) = rates.hurdle else {
        return SeriesReading {
            report,
            npv_at_hurdle: None,
            mirr: None,
        };
    };
    let finance = rates.finance.unwrap_or(h).to_f64();
    let reinvestment = rates.reinvestment.unwrap_or(h).to_f64();
    let mirr = match (finance, reinvestment) {
        (Some(f), Some(g)) => figures::mirr(flows, f, g),
        _ => None,
    };
    SeriesReading {
        report,
        npv_at_hurdle: Some(npv_at_hurdle(flows, h)),
        mirr: Some(mirr),
    }
}

/// Every figure for one series of flows at the deal's rates.
pub(crate) fn analyse_scenario(name: &str, flows: &Flows, rates: &Rates) -> ScenarioAnalysis {
    let flows = flows.normalised();
    let hurdle = rates.hurdle.to_f64().unwrap_or(0.0);
    let finance = rates.finance.to_f64().unwrap_or(hurdle);
    let reinvestment = rates.reinvestment.to_f64().unwrap_or(hurdle);
    let reading = read_series(&flows, SeriesRates::of(rates), true);
    let mut report = reading.report;
    if report.count == 0 && report.certified && report.upper_bound > 0 {
        report.complex_reading = complex::complex_reading(&flows, hurdle);
    }
    // Beyond Decimal's range the NPV keeps its sign and size, so the decision still
    // follows its true sign; only a value that cannot be computed at all stays undecided.
    let (npv_at_hurdle, npv_at_hurdle_approx) = reading.npv_at_hurdle.unwrap_or((None, None));
    let sign = match (npv_at_hurdle, npv_at_hurdle_approx) {
        (Some(c), _) if c > Decimal::ZERO => 1,
        (Some(c), _) if c < Decimal::ZERO => -1,
        (None, Some(a)) if a.negative => -1,
        (None, Some(_)) => 1,
        _ => 0,
    };
    let decision = match sign {
        1 => Decision::Accept,
        -1 => Decision::Reject,
        _ => Decision::Indifferent,
    };
    let marks: Vec<f64> = report.roots.iter().filter_map(|r| r.annual_rate).collect();
    let rows: Vec<FlowRow> = flows
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| FlowRow {
            period: p.period,
            date: p.date.map(|d| d.to_string()),
            years: flows.years(i),
            amount: p.amount,
            note: p.note.clone(),
        })
        .collect();
    let inflows: Decimal = flows
        .points
        .iter()
        .map(|p| p.amount)
        .filter(|a| a.is_sign_positive())
        .sum();
    let outflows: Decimal = flows
        .points
        .iter()
        .map(|p| p.amount)
        .filter(|a| a.is_sign_negative())
        .sum();
    let totals = Totals {
        inflows,
        outflows,
        net: inflows + outflows,
        horizon_years: if flows.points.is_empty() {
            0.0
        } else {
            flows.years(flows.points.len() - 1)
        },
    };
    let mirr = reading.mirr.flatten();
    let mut analysis = ScenarioAnalysis {
        name: name.to_string(),
        hurdle_rate: hurdle,
        finance_rate: finance,
        reinvestment_rate: reinvestment,
        periods_per_year: flows.periods_per_year,
        flows: rows,
        totals,
        npv_at_hurdle,
        npv_at_hurdle_approx,
        decision,
        mirr,
        return_on_invested_capital: figures::return_on_invested_capital(&flows, finance),
        money_multiple: figures::money_multiple(&flows),
        profitability_index: figures::profitability_index(&flows, hurdle),
        payback: figures::payback(&flows, hurdle),
        npv_profile: figures::npv_profile(&flows, &marks, hurdle),
        label: None,
        lines: None,
        peak_exposure: None,
        committed_outflows: None,
        irr: report,
        cautions: Vec::new(),
        sensitivity: None,
    };
    let one_sign = flows.points.iter().all(|p| p.amount.is_sign_positive())
        || flows.points.iter().all(|p| p.amount.is_sign_negative());
    let input = cautions::CautionInput {
        figures: cautions::CautionFigures::of(&analysis),
        mirr_reinvest_range: analysis.mirr.map(|_| {
            (
                figures::mirr(&flows, finance, reinvestment - 0.02),
                figures::mirr(&flows, finance, reinvestment + 0.02),
            )
        }),
        first_interval_years: (flows.points.len() >= 2).then(|| flows.years(1) - flows.years(0)),
        one_sign,
    };
    let found = cautions::cautions(&input);
    analysis.cautions = found;
    analysis
}
