//! Sensitivity of a deal (docs/methods.md, "Sensitivity"): which assumption moves the
//! NPV at the hurdle most (the tornado), how far each part of the flows can move before
//! that NPV changes sign (break-even factors), the hurdle rates at which the deal adds
//! value (the hurdle band, from the certified roots), where the number of IRRs changes
//! as one part is scaled (the count map, [`count_map`]), and a grid of NPVs over hurdle
//! rates and one part's factor (the two-way table).
//!
//! The deal is taken as a sum of named components: its net flows are the sum of the
//! components' flows. The NPV is linear in each component's factor, so every moved
//! NPV is a sum of the components' present values, each computed once per rate in
//! double-double with an error bound; where that bound leaves the cent in doubt, the
//! moved deal is built and its NPV taken from the engine's exact NPV
//! ([`crate::engine::npv_at_hurdle`]), so every figure is the engine's to the cent.

mod count_map;

pub(crate) use count_map::{CountMap, MapStatus};

use super::dd::Dd;
use super::flows::{FlowPoint, Flows};
use super::irr;
use crate::model::Rates;
use rust_decimal::prelude::*;
use serde::Serialize;

/// One named part of a deal's flows; the deal's net flows are the sum of its components.
#[derive(Debug, Clone, PartialEq)]
pub struct Component {
    /// A stable key (scripts read it from the JSON).
    pub key: String,
    /// The component's name as the deal gives it.
    pub label: String,
    /// Its flows, on the deal's clock.
    pub flows: Flows,
}

/// The components of a format-1 deal: its inflows (the positive net flows) and its
/// outflows (the negative ones), the two parts a scenario's factors scale. A part with
/// no flow is left out.
pub(crate) fn v1_components(flows: &Flows) -> Vec<Component> {
    let net = flows.normalised();
    [("inflows", true), ("outflows", false)]
        .into_iter()
        .filter_map(|(key, positive)| {
            let points: Vec<FlowPoint> = net
                .points
                .iter()
                .filter(|p| p.amount.is_sign_positive() == positive)
                .cloned()
                .collect();
            (!points.is_empty()).then(|| Component {
                key: key.to_string(),
                label: key.to_string(),
                flows: Flows {
                    points,
                    units_per_year: net.units_per_year,
                    periods_per_year: net.periods_per_year,
                },
            })
        })
        .collect()
}

/// What the sensitivity studies, with the defaults of [`SensitivityOptions::default`].
#[derive(Debug, Clone, PartialEq)]
pub struct SensitivityOptions {
    /// Relative moves of each component and of the hurdle rate (-0.2 is 20% less).
    pub steps: Vec<Decimal>,
    /// The factors over which the count map is drawn (lowest, highest).
    pub factor_range: (Decimal, Decimal),
    /// The component of the two-way table; `None`: the one with the largest swing.
    pub table_component: Option<String>,
    /// The hurdle rates of the two-way table, as differences from the hurdle.
    pub table_hurdle_offsets: Vec<Decimal>,
    /// The count map of a component is skipped when the flows of the component times
    /// the flows of the rest of the deal exceed this (its cost grows with that product).
    pub max_pairs: usize,
}

/// The largest product of flow counts the count map takes ([`SensitivityOptions::max_pairs`]):
/// two series of 1,000 flows (a 481-flow monthly deal needs at most 231,361).
pub(crate) const MAX_PAIRS: usize = 1_000_000;

impl SensitivityOptions {
    /// The options a deal file states, the defaults for what it leaves out.
    pub fn for_deal(settings: &crate::model::SensitivitySettings) -> Self {
        let default = Self::default();
        SensitivityOptions {
            steps: settings.steps.clone().unwrap_or(default.steps),
            factor_range: settings.factor_range.unwrap_or(default.factor_range),
            table_component: settings.table_line.clone(),
            ..default
        }
    }
}

impl Default for SensitivityOptions {
    fn default() -> Self {
        SensitivityOptions {
            steps: [-2, -1, 1, 2].iter().map(|&s| Decimal::new(s, 1)).collect(),
            factor_range: (Decimal::ZERO, Decimal::from(3)),
            table_component: None,
            table_hurdle_offsets: [-4, -2, 0, 2, 4]
                .iter()
                .map(|&s| Decimal::new(s, 2))
                .collect(),
            max_pairs: MAX_PAIRS,
        }
    }
}

/// The sensitivity of one scenario.
#[derive(Debug, Clone, Serialize)]
pub struct Sensitivity {
    /// The relative moves studied (fractions: -0.2 is 20% less).
    pub steps: Vec<f64>,
    /// The NPV at the hurdle as the deal stands, to the cent.
    pub npv_at_hurdle: Option<Decimal>,
    /// One bar per component, the hurdle rate and the delay of the inflows, the
    /// largest swing first.
    pub tornado: Vec<TornadoBar>,
    /// The break-even factor of each component, in the components' order.
    pub break_even: Vec<BreakEven>,
    /// The hurdle rates at which the NPV is above zero.
    pub hurdle_band: HurdleBand,
    /// Where the number of IRRs changes as each component is scaled.
    pub count_map: Vec<CountMap>,
    /// NPV over hurdle rates and one component's factor.
    pub table: Option<TwoWayTable>,
    /// The few findings a decision page leads with.
    pub headlines: Vec<Headline>,
}

/// What a tornado bar moves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MoveKind {
    /// A component, multiplied by 1 + step.
    Component,
    /// The hurdle rate, multiplied by 1 + step.
    HurdleRate,
    /// Every inflow moved later by one period (one year for dated flows).
    InflowDelay,
}

/// One bar of the tornado.
#[derive(Debug, Clone, Serialize)]
pub struct TornadoBar {
    /// The component's key, `hurdle_rate` or `inflow_delay`.
    pub key: String,
    /// The component's name (empty for the hurdle rate and the delay).
    pub label: String,
    /// What moves.
    pub kind: MoveKind,
    /// The NPV at the hurdle after each move.
    pub moves: Vec<TornadoMove>,
    /// The lowest NPV over the moves and the deal as it stands.
    pub low: Option<Decimal>,
    /// The highest.
    pub high: Option<Decimal>,
    /// `high - low`: what the bars are ranked by.
    pub swing: Option<Decimal>,
}

/// One move of a tornado bar.
#[derive(Debug, Clone, Serialize)]
pub struct TornadoMove {
    /// The relative move (a component or the hurdle), or the delay in years.
    pub step: f64,
    /// The hurdle rate the NPV is taken at (the moved one for the hurdle's bar).
    pub hurdle_rate: f64,
    /// The NPV of the moved deal at that rate, to the cent; `None` beyond Decimal's range.
    pub npv: Option<Decimal>,
}

/// A sign.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Sign {
    /// Above zero.
    Positive,
    /// Below zero.
    Negative,
    /// Zero.
    Zero,
}

impl Sign {
    fn of(v: f64) -> Sign {
        if v > 0.0 {
            Sign::Positive
        } else if v < 0.0 {
            Sign::Negative
        } else {
            Sign::Zero
        }
    }
}

/// The break-even factor of one component.
#[derive(Debug, Clone, Serialize)]
pub struct BreakEven {
    /// The component's key.
    pub key: String,
    /// Its name.
    pub label: String,
    /// What was found.
    #[serde(flatten)]
    pub outcome: BreakEvenOutcome,
}

/// Whether and where the NPV at the hurdle turns zero as one component is scaled.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "status", rename_all = "kebab-case")]
pub enum BreakEvenOutcome {
    /// The NPV is zero at `factor` (0 or more): the component times `factor`.
    At {
        /// The factor, to about 26 significant digits (a decimal string in JSON).
        factor: Decimal,
        /// `factor - 1`: the move from the deal as it stands.
        change: Decimal,
        /// The NPV's sign at factors below `factor`.
        below: Sign,
        /// Its sign above.
        above: Sign,
    },
    /// No factor of 0 or more makes the NPV zero: it keeps this sign.
    None {
        /// The sign the NPV keeps.
        keeps: Sign,
    },
    /// The component's present value at the hurdle is zero (to 32 digits): scaling it
    /// does not move the NPV.
    Independent,
    /// The NPV is zero only at a factor beyond Decimal's range (about 7.9e28): it
    /// keeps this sign for every factor up to there.
    Beyond {
        /// The sign the NPV keeps.
        keeps: Sign,
    },
}

/// The hurdle rates at which the NPV is above zero, between the deal's IRRs.
#[derive(Debug, Clone, Serialize)]
pub struct HurdleBand {
    /// True when the IRRs it rests on are certified; `ranges` is empty otherwise.
    pub certified: bool,
    /// Ranges of annual hurdle rates with NPV > 0, lowest first.
    pub ranges: Vec<BandRange>,
    /// True when the deal's own hurdle lies in one of them.
    pub hurdle_inside: bool,
}

/// One range of hurdle rates with NPV > 0; its ends are IRRs (excluded).
#[derive(Debug, Clone, Serialize)]
pub struct BandRange {
    /// The lower end; `None`: from -100%.
    pub from: Option<BandEnd>,
    /// The upper end; `None`: without bound.
    pub to: Option<BandEnd>,
}

/// An end of a hurdle range: an IRR.
#[derive(Debug, Clone, Serialize)]
pub struct BandEnd {
    /// The IRR (annual), as in `irr.roots`.
    pub annual_rate: Option<f64>,
    /// Its certified interval.
    pub interval: Option<[f64; 2]>,
    /// log10(1 + annual rate).
    pub log10_annual_growth: f64,
}

/// NPV at the hurdle over a grid of hurdle rates (rows) and one component's factor
/// (columns).
#[derive(Debug, Clone, Serialize)]
pub struct TwoWayTable {
    /// The component's key.
    pub key: String,
    /// Its name.
    pub label: String,
    /// The factors, one a column.
    pub factors: Vec<f64>,
    /// The annual hurdle rates, one a row.
    pub hurdle_rates: Vec<f64>,
    /// `npv[row][column]`, to the cent.
    pub npv: Vec<Vec<Option<Decimal>>>,
    /// Per row, the factor of 0 or more at which the NPV is zero (the zero boundary),
    /// `None` when there is none.
    pub zero_at: Vec<Option<f64>>,
}

/// A finding for the decision page.
#[derive(Debug, Clone, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Headline {
    /// The bar of the tornado with the largest swing.
    LargestSwing {
        /// Its key.
        key: String,
        /// Its name.
        label: String,
        /// Its swing.
        swing: Decimal,
    },
    /// The component whose break-even is the smallest move away.
    NearestBreakEven {
        /// Its key.
        key: String,
        /// Its name.
        label: String,
        /// Its break-even factor.
        factor: Decimal,
        /// `factor - 1`.
        change: Decimal,
    },
    /// The number of IRRs changes within the factors studied.
    CountChanges {
        /// The component's key.
        key: String,
        /// Its name.
        label: String,
        /// The change point nearest the deal as it stands (factor 1).
        factor: f64,
        /// The count just below it.
        below: u32,
        /// The count just above it.
        above: u32,
    },
}

/// Relative error allowed per discounted term of a double-double present value, per
/// unit of `1 + |t ln(1 + rate)|`, as for the engine's exact NPV (docs/methods.md, "NPV").
const TERM_ERROR: f64 = 1e-28;

/// The present values at one rate of each component's inflows and outflows.
struct Parts {
    rate: Decimal,
    /// `ln(1 + rate)`.
    log_base: Dd,
    /// Per component: (inflows, outflows, error bound of both).
    pv: Vec<(Dd, Dd, f64)>,
}

/// The components' flows prepared once for [`Parts::at`]: the distinct times (in
/// years, double-double) and each flow's amount with the index of its time.
struct Prepared {
    times: Vec<Dd>,
    /// Per component: (index into `times`, amount, inflow?).
    flows: Vec<Vec<(usize, Dd, bool)>>,
}

impl Prepared {
    fn new(components: &[Component]) -> Prepared {
        let mut offsets: Vec<(i64, u64)> = components
            .iter()
            .flat_map(|c| {
                c.flows
                    .points
                    .iter()
                    .map(|p| (p.offset, c.flows.units_per_year))
            })
            .collect();
        offsets.sort_unstable();
        offsets.dedup();
        let times = offsets.iter().map(|&(o, u)| Dd::ratio(o, u)).collect();
        let flows = components
            .iter()
            .map(|c| {
                c.flows
                    .points
                    .iter()
                    .map(|p| {
                        let i = offsets
                            .binary_search(&(p.offset, c.flows.units_per_year))
                            .unwrap_or(0);
                        (i, Dd::from_decimal(p.amount), p.amount.is_sign_positive())
                    })
                    .collect()
            })
            .collect();
        Prepared { times, flows }
    }
}

impl Parts {
    fn at(prepared: &Prepared, rate: Decimal) -> Option<Parts> {
        let base = Dd::ONE + Dd::from_decimal(rate);
        if base.hi <= 0.0 {
            return None;
        }
        let log_base = base.ln();
        let lb = log_base.to_f64().abs();
        // Each distinct time's discount factor once, with its error allowance.
        let discount: Vec<(Dd, f64)> = prepared
            .times
            .iter()
            .map(|t| ((-(*t * log_base)).exp(), 1.0 + t.to_f64().abs() * lb))
            .collect();
        let pv = prepared
            .flows
            .iter()
            .map(|flows| {
                let (mut pos, mut neg, mut err) = (Dd::ZERO, Dd::ZERO, 0.0);
                for &(i, amount, inflow) in flows {
                    let (d, allowance) = discount[i];
                    let term = amount * d;
                    err += term.to_f64().abs() * allowance * TERM_ERROR;
                    if inflow {
                        pos = pos + term;
                    } else {
                        neg = neg + term;
                    }
                }
                (pos, neg, err)
            })
            .collect();
        Some(Parts { rate, log_base, pv })
    }

    /// The present value of component `i`.
    fn of(&self, i: usize) -> Dd {
        self.pv[i].0 + self.pv[i].1
    }

    /// The NPV with each component times its multiplier and every inflow discounted
    /// further by `delay` (a factor below 1, or 1), with its error bound.
    fn value(&self, multipliers: &[Decimal], delay: Dd) -> (Dd, f64) {
        let mut sum = Dd::ZERO;
        let mut err = 0.0;
        for ((pos, neg, e), m) in self.pv.iter().zip(multipliers) {
            let md = Dd::from_decimal(*m);
            let part = (*pos * delay + *neg) * md;
            sum = sum + part;
            let size = (pos.to_f64().abs() + neg.to_f64().abs()) * m.to_f64().unwrap_or(0.0).abs();
            err += e * m.to_f64().unwrap_or(0.0).abs() * 2.0 + size * TERM_ERROR;
        }
        (sum, err)
    }
}

/// Rounds to the cent, half away from zero, without a negative zero.
fn cents(d: Decimal) -> Decimal {
    let r = d.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
    if r.is_zero() {
        Decimal::ZERO
    } else {
        r
    }
}

/// The value to the cent when its error bound leaves the cent in no doubt.
fn sure_cents(v: Dd, err: f64) -> Option<Decimal> {
    let d = v.to_decimal()?;
    let spread = Decimal::from_f64(err + v.to_f64().abs() * 1e-25)?;
    let (lo, hi) = (d.checked_sub(spread)?, d.checked_add(spread)?);
    (cents(lo) == cents(hi)).then(|| cents(d))
}

/// The deal with component `i` times `multipliers[i]` and every inflow moved `delay`
/// clock units later, netted; `None` when an amount leaves Decimal's range.
pub(crate) fn moved_deal(
    components: &[Component],
    multipliers: &[Decimal],
    delay: i64,
) -> Option<Flows> {
    let first = components.first()?;
    let mut points = Vec::new();
    for (c, m) in components.iter().zip(multipliers) {
        for p in &c.flows.points {
            let amount = p.amount.checked_mul(*m)?;
            let offset = if p.amount.is_sign_positive() {
                p.offset + delay
            } else {
                p.offset
            };
            points.push(FlowPoint {
                offset,
                amount,
                date: None,
                period: None,
                note: None,
            });
        }
    }
    Some(
        Flows {
            points,
            units_per_year: first.flows.units_per_year,
            periods_per_year: first.flows.periods_per_year,
        }
        .into_normalised(),
    )
}

/// The NPV to the cent of the moved deal at `parts.rate`: from the parts when their
/// bound allows, else from the moved deal itself through the engine's exact NPV.
fn moved_npv(
    components: &[Component],
    parts: &Parts,
    multipliers: &[Decimal],
    delay_units: i64,
) -> Option<Decimal> {
    let delay = if delay_units == 0 {
        Dd::ONE
    } else {
        let units = components.first()?.flows.units_per_year;
        (-(Dd::ratio(delay_units, units) * parts.log_base)).exp()
    };
    let (v, err) = parts.value(multipliers, delay);
    if let Some(c) = sure_cents(v, err) {
        return Some(c);
    }
    let deal = moved_deal(components, multipliers, delay_units)?;
    super::npv_at_hurdle(&deal, parts.rate).0
}

/// The full sensitivity of a deal given as components, at its rates.
pub fn sensitivity(
    components: &[Component],
    rates: &Rates,
    options: &SensitivityOptions,
) -> Sensitivity {
    let ones = vec![Decimal::ONE; components.len()];
    let hurdle = rates.hurdle;
    let prepared = Prepared::new(components);
    let base_parts = Parts::at(&prepared, hurdle);
    let base_npv = base_parts
        .as_ref()
        .and_then(|p| moved_npv(components, p, &ones, 0));
    let mut tornado = Vec::new();
    // Components.
    for (i, c) in components.iter().enumerate() {
        let moves = options
            .steps
            .iter()
            .map(|s| {
                let mut m = ones.clone();
                m[i] = Decimal::ONE + *s;
                TornadoMove {
                    step: s.to_f64().unwrap_or(0.0),
                    hurdle_rate: hurdle.to_f64().unwrap_or(0.0),
                    npv: base_parts
                        .as_ref()
                        .and_then(|p| moved_npv(components, p, &m, 0)),
                }
            })
            .collect();
        tornado.push(bar(&c.key, &c.label, MoveKind::Component, moves, base_npv));
    }
    // The hurdle rate.
    let moves = options
        .steps
        .iter()
        .map(|s| {
            let rate = hurdle * (Decimal::ONE + *s);
            TornadoMove {
                step: s.to_f64().unwrap_or(0.0),
                hurdle_rate: rate.to_f64().unwrap_or(0.0),
                npv: Parts::at(&prepared, rate).and_then(|p| moved_npv(components, &p, &ones, 0)),
            }
        })
        .collect();
    tornado.push(bar(
        "hurdle_rate",
        "",
        MoveKind::HurdleRate,
        moves,
        base_npv,
    ));
    // The inflows one period later (one year for dated flows).
    if let Some(first) = components.first() {
        let delay = match first.flows.periods_per_year {
            Some(_) => 1,
            None => first.flows.units_per_year as i64,
        };
        let npv = base_parts
            .as_ref()
            .and_then(|p| moved_npv(components, p, &ones, delay));
        let moves = vec![TornadoMove {
            step: delay as f64 / first.flows.units_per_year as f64,
            hurdle_rate: hurdle.to_f64().unwrap_or(0.0),
            npv,
        }];
        tornado.push(bar(
            "inflow_delay",
            "",
            MoveKind::InflowDelay,
            moves,
            base_npv,
        ));
    }
    // Largest swing first; an unknown swing last; ties keep their order.
    tornado.sort_by(|a, b| match (a.swing, b.swing) {
        (Some(x), Some(y)) => y.cmp(&x),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });

    let break_even: Vec<BreakEven> = components
        .iter()
        .enumerate()
        .map(|(i, c)| BreakEven {
            key: c.key.clone(),
            label: c.label.clone(),
            outcome: base_parts
                .as_ref()
                .map_or(BreakEvenOutcome::Independent, |p| break_even_of(p, i).0),
        })
        .collect();

    let net = moved_deal(components, &ones, 0).unwrap_or(Flows {
        points: Vec::new(),
        units_per_year: 1,
        periods_per_year: Some(1),
    });
    let hurdle_band = hurdle_band(&net, hurdle.to_f64().unwrap_or(0.0));

    let count_map = (0..components.len())
        .map(|i| count_map::count_map(components, i, options))
        .collect::<Vec<_>>();

    // The deal's chosen line, or (when it names none, or a scenario dropped it) the
    // one with the largest swing.
    let largest = || {
        tornado
            .iter()
            .find(|b| b.kind == MoveKind::Component)
            .and_then(|b| components.iter().position(|c| c.key == b.key))
    };
    let table_index = options
        .table_component
        .as_ref()
        .and_then(|key| components.iter().position(|c| &c.key == key))
        .or_else(largest);
    let table = table_index.map(|i| two_way_table(components, &prepared, i, hurdle, options));

    let headlines = headlines(&tornado, &break_even, &count_map);
    Sensitivity {
        steps: options
            .steps
            .iter()
            .map(|s| s.to_f64().unwrap_or(0.0))
            .collect(),
        npv_at_hurdle: base_npv,
        tornado,
        break_even,
        hurdle_band,
        count_map,
        table,
        headlines,
    }
}

fn bar(
    key: &str,
    label: &str,
    kind: MoveKind,
    moves: Vec<TornadoMove>,
    base: Option<Decimal>,
) -> TornadoBar {
    let values: Option<Vec<Decimal>> = moves
        .iter()
        .map(|m| m.npv)
        .chain(std::iter::once(base))
        .collect();
    let (low, high) = match &values {
        Some(v) => (v.iter().min().copied(), v.iter().max().copied()),
        None => (None, None),
    };
    TornadoBar {
        key: key.to_string(),
        label: label.to_string(),
        kind,
        moves,
        low,
        high,
        swing: low.zip(high).and_then(|(l, h)| h.checked_sub(l)),
    }
}

/// The break-even of component `i` at the parts' rate, and the factor as a float
/// (for the two-way table's boundary).
fn break_even_of(parts: &Parts, i: usize) -> (BreakEvenOutcome, Option<f64>) {
    let own = parts.of(i);
    let own_err = parts.pv[i].2;
    let mut rest = Dd::ZERO;
    for j in (0..parts.pv.len()).filter(|&j| j != i) {
        rest = rest + parts.of(j);
    }
    if own.to_f64().abs() <= own_err || own.to_f64() == 0.0 {
        return (BreakEvenOutcome::Independent, None);
    }
    // NPV(f) = rest + f own, zero at f = -rest / own.
    let f = -(rest / own);
    let now = Sign::of((rest + own).to_f64());
    match f.to_decimal() {
        Some(factor) if factor >= Decimal::ZERO => {
            let up = Sign::of(own.to_f64());
            let down = if up == Sign::Positive {
                Sign::Negative
            } else {
                Sign::Positive
            };
            (
                BreakEvenOutcome::At {
                    factor: factor.normalize(),
                    change: (factor - Decimal::ONE).normalize(),
                    below: down,
                    above: up,
                },
                Some(f.to_f64()),
            )
        }
        None if f.to_f64() > 0.0 => (BreakEvenOutcome::Beyond { keeps: now }, None),
        _ => (BreakEvenOutcome::None { keeps: now }, None),
    }
}

/// The hurdle band of netted flows from their certified roots: the sign of the NPV
/// above every root is that of the earliest flow, and it flips at each root of odd
/// multiplicity; a root of even multiplicity touches zero, so it ends a range too.
pub fn hurdle_band(net: &Flows, hurdle: f64) -> HurdleBand {
    let report = irr::irr_report(net, Some(hurdle), false);
    if !report.certified || net.points.is_empty() {
        return HurdleBand {
            certified: false,
            ranges: Vec::new(),
            hurdle_inside: false,
        };
    }
    let end = |r: &super::Root| BandEnd {
        annual_rate: r.annual_rate,
        interval: r.interval,
        log10_annual_growth: r.log10_annual_growth,
    };
    // Walk down from the top: the sign above the highest root first.
    let mut sign = net.points[0].amount.is_sign_positive();
    let mut ranges = Vec::new();
    let mut upper: Option<&super::Root> = None;
    for r in report.roots.iter().rev() {
        if sign {
            ranges.push(BandRange {
                from: Some(end(r)),
                to: upper.map(end),
            });
        }
        if r.multiplicity % 2 == 1 {
            sign = !sign;
        }
        upper = Some(r);
    }
    if sign {
        ranges.push(BandRange {
            from: None,
            to: upper.map(end),
        });
    }
    ranges.reverse();
    // The NPV just above -100% has the sign of the last flow: a check on the walk.
    let last_positive = net.points[net.points.len() - 1].amount.is_sign_positive();
    let consistent = sign == last_positive;
    let inside = |b: &BandRange| {
        let above = b
            .from
            .as_ref()
            .is_none_or(|e| e.interval.is_some_and(|[_, hi]| hurdle > hi));
        let below =
            b.to.as_ref()
                .is_none_or(|e| e.interval.is_none_or(|[lo, _]| hurdle < lo));
        above && below
    };
    let hurdle_inside = consistent && ranges.iter().any(inside);
    HurdleBand {
        certified: consistent,
        ranges: if consistent { ranges } else { Vec::new() },
        hurdle_inside,
    }
}

fn two_way_table(
    components: &[Component],
    prepared: &Prepared,
    index: usize,
    hurdle: Decimal,
    options: &SensitivityOptions,
) -> TwoWayTable {
    let mut factors: Vec<Decimal> = options
        .steps
        .iter()
        .map(|s| Decimal::ONE + *s)
        .filter(|f| *f >= Decimal::ZERO)
        .chain(std::iter::once(Decimal::ONE))
        .collect();
    factors.sort();
    factors.dedup();
    let rates: Vec<Decimal> = options
        .table_hurdle_offsets
        .iter()
        .map(|d| hurdle + *d)
        .filter(|r| *r > Decimal::new(-99, 2))
        .collect();
    let mut npv = Vec::new();
    let mut zero_at = Vec::new();
    for rate in &rates {
        let parts = Parts::at(prepared, *rate);
        npv.push(
            factors
                .iter()
                .map(|f| {
                    let mut m = vec![Decimal::ONE; components.len()];
                    m[index] = *f;
                    parts.as_ref().and_then(|p| moved_npv(components, p, &m, 0))
                })
                .collect(),
        );
        zero_at.push(parts.as_ref().and_then(|p| break_even_of(p, index).1));
    }
    TwoWayTable {
        key: components[index].key.clone(),
        label: components[index].label.clone(),
        factors: factors.iter().map(|f| f.to_f64().unwrap_or(0.0)).collect(),
        hurdle_rates: rates.iter().map(|r| r.to_f64().unwrap_or(0.0)).collect(),
        npv,
        zero_at,
    }
}

fn headlines(tornado: &[TornadoBar], break_even: &[BreakEven], maps: &[CountMap]) -> Vec<Headline> {
    let mut out = Vec::new();
    if let Some(b) = tornado.first() {
        if let Some(swing) = b.swing.filter(|s| !s.is_zero()) {
            out.push(Headline::LargestSwing {
                key: b.key.clone(),
                label: b.label.clone(),
                swing,
            });
        }
    }
    let nearest = break_even
        .iter()
        .filter_map(|b| match &b.outcome {
            BreakEvenOutcome::At { factor, change, .. } => Some((b, *factor, *change)),
            _ => None,
        })
        .min_by_key(|(_, _, change)| change.abs());
    if let Some((b, factor, change)) = nearest {
        out.push(Headline::NearestBreakEven {
            key: b.key.clone(),
            label: b.label.clone(),
            factor,
            change,
        });
    }
    let nearest_change = maps
        .iter()
        .flat_map(|m| m.change_points.iter().map(move |p| (m, p)))
        .min_by(|(_, a), (_, b)| (a.factor - 1.0).abs().total_cmp(&(b.factor - 1.0).abs()));
    if let Some((m, p)) = nearest_change {
        out.push(Headline::CountChanges {
            key: m.key.clone(),
            label: m.label.clone(),
            factor: p.factor,
            below: p.count_below,
            above: p.count_above,
        });
    }
    out
}

#[cfg(test)]
mod tests;
