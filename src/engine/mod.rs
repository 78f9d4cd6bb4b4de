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

use crate::model::{Deal, Rates};
use rust_decimal::prelude::*;

/// Analyses the base case and every scenario of a validated deal.
pub fn analyse(deal: &Deal) -> Analysis {
    Analysis {
        deal: deal.name.clone(),
        currency: deal.currency.clone(),
        scenarios: deal
            .scenarios
            .iter()
            .map(|s| {
                let mut a = analyse_scenario(&s.name, &s.flows, &deal.rates);
                a.sensitivity = Some(sensitivity::sensitivity(
                    &sensitivity::v1_components(&s.flows),
                    &deal.rates,
                    &sensitivity::SensitivityOptions::default(),
                ));
                a
            })
            .collect(),
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

/// Every figure for one series of flows at the deal's rates.
pub fn analyse_scenario(name: &str, flows: &Flows, rates: &Rates) -> ScenarioAnalysis {
    let flows = flows.normalised();
    let hurdle = rates.hurdle.to_f64().unwrap_or(0.0);
    let finance = rates.finance.to_f64().unwrap_or(hurdle);
    let reinvestment = rates.reinvestment.to_f64().unwrap_or(hurdle);
    let set = irr::roots_of(&flows);
    let mut report = irr::report_from_set(&flows, &set, Some(hurdle), true);
    if report.count == 0 && report.certified && report.upper_bound > 0 {
        report.complex_reading = complex::complex_reading(&flows, hurdle);
    }
    // Beyond Decimal's range the NPV keeps its sign and size, so the decision still
    // follows its true sign; only a value that cannot be computed at all stays undecided.
    let (npv_at_hurdle, npv_at_hurdle_approx) = npv_at_hurdle(&flows, rates.hurdle);
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
    let mirr = figures::mirr(&flows, finance, reinvestment);
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
