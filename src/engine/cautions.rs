//! The cautions: a catalogue of stable codes and the rule that raises each from the
//! figures of one scenario. The engine states which cautions apply and the numbers
//! each rests on ([`Caution`]); the paragraphs a committee member reads are written by
//! the presentation module (`present::cautions`), one function per code.

use super::analysis::{ApproxAmount, BalanceKind, ComplexReading, Root, ScenarioAnalysis, Stance};
use rust_decimal::Decimal;
use serde::Serialize;

/// Every caution code, in the order cautions are listed.
pub(crate) const CODES: [&str; 14] = [
    "uncertified",
    "one-sign",
    "no-irr",
    "multiple-irr",
    "double-root",
    "extreme-root",
    "short-first-interval",
    "net-borrowing",
    "mixed-balance",
    "irr-npv-conflict",
    "mirr-assumptions",
    "short-horizon",
    "terminal-spread",
    "real-amounts-nominal-rates",
];

/// A caution raised for one scenario: its code and the facts its paragraph states
/// beyond the scenario's own figures ([`CautionFigures`]). Roots are named by their
/// index in the scenario's list of IRRs (lowest first).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "code", rename_all = "kebab-case")]
pub enum Caution {
    /// The count of IRRs is not proven complete.
    Uncertified,
    /// Every flow has one sign: no rate of return exists.
    OneSign,
    /// Flows of both signs but no real IRR.
    NoIrr,
    /// Two or more distinct IRRs.
    MultipleIrr,
    /// One IRR of multiplicity two or more.
    DoubleRoot {
        /// The root.
        root: usize,
    },
    /// IRRs outside the economically meaningful range.
    ExtremeRoot {
        /// The extreme roots.
        roots: Vec<usize>,
    },
    /// A very short first interval next to an implausibly high IRR.
    ShortFirstInterval {
        /// Years between the first two flows.
        first_interval_years: f64,
        /// The implausibly high roots.
        roots: Vec<usize>,
    },
    /// IRRs at which the deal is a net borrowing at the hurdle.
    NetBorrowing {
        /// The roots (of economic meaning) at which the deal borrows.
        roots: Vec<usize>,
        /// Those of them above the hurdle (they count against the deal).
        above_hurdle: Vec<usize>,
    },
    /// IRRs whose balance path changes sign.
    MixedBalance {
        /// The roots (of economic meaning) with a mixed balance path.
        roots: Vec<usize>,
    },
    /// IRRs on the side of the hurdle opposite to what the NPV says.
    IrrNpvConflict {
        /// The conflicting roots.
        roots: Vec<usize>,
    },
    /// The MIRR rests on the finance and reinvestment rates.
    MirrAssumptions {
        /// The MIRR with the reinvestment rate two points lower and two points higher,
        /// when both are defined.
        reinvestment_range: Option<(f64, f64)>,
    },
    /// The deal runs for less than a year.
    ShortHorizon,
    /// A terminal value whose discount rate is within two points of its growth rate
    /// (deal format version 2).
    TerminalSpread {
        /// The line's label.
        label: String,
        /// The discount rate (fraction).
        discount: Decimal,
        /// The growth rate (fraction).
        growth: Decimal,
        /// The terminal value, in currency units.
        value: Decimal,
    },
    /// The deal states real amounts but does not say its rates are real (deal format
    /// version 2).
    RealAmountsNominalRates,
}

impl Caution {
    /// The stable code, one of [`CODES`].
    pub fn code(&self) -> &'static str {
        CODES[match self {
            Caution::Uncertified => 0,
            Caution::OneSign => 1,
            Caution::NoIrr => 2,
            Caution::MultipleIrr => 3,
            Caution::DoubleRoot { .. } => 4,
            Caution::ExtremeRoot { .. } => 5,
            Caution::ShortFirstInterval { .. } => 6,
            Caution::NetBorrowing { .. } => 7,
            Caution::MixedBalance { .. } => 8,
            Caution::IrrNpvConflict { .. } => 9,
            Caution::MirrAssumptions { .. } => 10,
            Caution::ShortHorizon => 11,
            Caution::TerminalSpread { .. } => 12,
            Caution::RealAmountsNominalRates => 13,
        }]
    }
}

/// The figures of one scenario that cautions are raised from and that their
/// paragraphs state.
#[derive(Debug, Clone)]
pub struct CautionFigures<'a> {
    /// Annual hurdle rate.
    pub hurdle: f64,
    /// Annual finance rate (MIRR).
    pub finance: f64,
    /// Annual reinvestment rate (MIRR).
    pub reinvestment: f64,
    /// The real IRRs, lowest first, with balance kind, stance and extreme flag filled in.
    pub roots: &'a [Root],
    /// True when the count of IRRs is proven complete.
    pub certified: bool,
    /// Annual-rate intervals the engine could not decide.
    pub unresolved: &'a [[f64; 2]],
    /// NPV at the hurdle, rounded to the cent; `None` beyond Decimal's range (then
    /// `npv_at_hurdle_approx` gives its sign and size) or when it cannot be computed.
    pub npv_at_hurdle: Option<Decimal>,
    /// The NPV's sign and size when it is beyond Decimal's range.
    pub npv_at_hurdle_approx: Option<ApproxAmount>,
    /// MIRR at the finance and reinvestment rates.
    pub mirr: Option<f64>,
    /// Years from the series' start to the last flow.
    pub horizon_years: f64,
    /// Sum of all flows (used when every flow has one sign).
    pub net: Decimal,
    /// The complex-rate reading, for a series without a real IRR.
    pub complex_reading: Option<&'a ComplexReading>,
}

impl<'a> CautionFigures<'a> {
    /// The figures of an analysed scenario.
    pub fn of(s: &'a ScenarioAnalysis) -> CautionFigures<'a> {
        CautionFigures {
            hurdle: s.hurdle_rate,
            finance: s.finance_rate,
            reinvestment: s.reinvestment_rate,
            roots: &s.irr.roots,
            certified: s.irr.certified,
            unresolved: &s.irr.unresolved,
            npv_at_hurdle: s.npv_at_hurdle,
            npv_at_hurdle_approx: s.npv_at_hurdle_approx,
            mirr: s.mirr,
            horizon_years: s.totals.horizon_years,
            net: s.totals.net,
            complex_reading: s.irr.complex_reading.as_ref(),
        }
    }

    /// The NPV's true sign (1, -1 or 0 when zero or not computable), also when it is
    /// too large for an exact decimal.
    pub(crate) fn npv_sign(&self) -> i8 {
        match (self.npv_at_hurdle, self.npv_at_hurdle_approx) {
            (Some(c), _) if c > Decimal::ZERO => 1,
            (Some(c), _) if c < Decimal::ZERO => -1,
            (None, Some(a)) if a.negative => -1,
            (None, Some(_)) => 1,
            _ => 0,
        }
    }
}

/// What the cautions are raised from: the figures of one scenario and the few facts
/// of its flows that only the rules need.
#[derive(Debug, Clone)]
pub struct CautionInput<'a> {
    /// The scenario's figures.
    pub figures: CautionFigures<'a>,
    /// MIRR with the reinvestment rate two percentage points lower and higher, when
    /// computed (for example with `figures::mirr(flows, finance, reinvestment -+ 0.02)`).
    pub mirr_reinvest_range: Option<(Option<f64>, Option<f64>)>,
    /// Years between the first two flows, when there are two.
    pub first_interval_years: Option<f64>,
    /// True when every flow has the same sign.
    pub one_sign: bool,
}

/// A first interval shorter than this (about one month) can inflate an annual rate.
const SHORT_INTERVAL_YEARS: f64 = 1.0 / 12.0;
/// Rates above this (1000% a year) count as implausibly high for the short-interval note.
const HIGH_RATE: f64 = 10.0;

/// The cautions that apply to one scenario, in the order of [`CODES`].
pub fn cautions(input: &CautionInput) -> Vec<Caution> {
    let f = &input.figures;
    let mut out = Vec::new();
    let indices = |keep: &dyn Fn(&Root) -> bool| -> Vec<usize> {
        (0..f.roots.len()).filter(|&i| keep(&f.roots[i])).collect()
    };
    if !f.certified {
        out.push(Caution::Uncertified);
    }
    if input.one_sign {
        out.push(Caution::OneSign);
    } else if f.roots.is_empty() {
        out.push(Caution::NoIrr);
    }
    if f.roots.len() >= 2 {
        out.push(Caution::MultipleIrr);
    }
    for root in indices(&|r| r.multiplicity >= 2) {
        out.push(Caution::DoubleRoot { root });
    }
    let extreme = indices(&|r| r.extreme);
    if !extreme.is_empty() {
        out.push(Caution::ExtremeRoot { roots: extreme });
    }
    if let Some(first) = input.first_interval_years {
        let high = indices(&is_high);
        if first < SHORT_INTERVAL_YEARS && first > 0.0 && !high.is_empty() {
            out.push(Caution::ShortFirstInterval {
                first_interval_years: first,
                roots: high,
            });
        }
    }
    let borrowing = indices(&|r| !r.extreme && r.stance == Stance::Borrowing);
    if !borrowing.is_empty() {
        let above_hurdle = borrowing
            .iter()
            .copied()
            .filter(|&i| rate_of(&f.roots[i]) > f.hurdle)
            .collect();
        out.push(Caution::NetBorrowing {
            roots: borrowing,
            above_hurdle,
        });
    }
    let mixed = indices(&|r| !r.extreme && r.balance_kind == BalanceKind::Mixed);
    if !mixed.is_empty() {
        out.push(Caution::MixedBalance { roots: mixed });
    }
    let npv_sign = f.npv_sign();
    if npv_sign != 0 {
        let npv_positive = npv_sign > 0;
        let conflicting = indices(&|r| {
            let k = rate_of(r);
            !r.extreme && ((k > f.hurdle && !npv_positive) || (k < f.hurdle && npv_positive))
        });
        if !conflicting.is_empty() {
            out.push(Caution::IrrNpvConflict { roots: conflicting });
        }
    }
    if f.mirr.is_some() && !is_plain(f) {
        let reinvestment_range = match input.mirr_reinvest_range {
            Some((Some(lo), Some(hi))) => Some((lo, hi)),
            _ => None,
        };
        out.push(Caution::MirrAssumptions { reinvestment_range });
    }
    if f.horizon_years > 0.0 && f.horizon_years < 1.0 {
        out.push(Caution::ShortHorizon);
    }
    out
}

/// A conventional deal: one certified, simple, plausible IRR on a pure-investment path.
fn is_plain(f: &CautionFigures) -> bool {
    f.certified
        && f.roots.len() == 1
        && f.roots[0].multiplicity == 1
        && !f.roots[0].extreme
        && f.roots[0].balance_kind == BalanceKind::PureInvestment
}

/// The annual rate of a root, infinite when too large for a float.
fn rate_of(r: &Root) -> f64 {
    r.annual_rate.unwrap_or(f64::INFINITY)
}

fn is_high(r: &Root) -> bool {
    match r.annual_rate {
        Some(k) => k > HIGH_RATE,
        None => r.log10_annual_growth > (1.0 + HIGH_RATE).log10(),
    }
}
