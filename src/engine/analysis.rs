//! The engine's output: plain data, serialised as the JSON contract of `candor rates --json`
//! (docs/design.md, JSON contract) and handed to the chart and report stages.
//!
//! Rates are fractions (0.09 = 9%). Money is an exact decimal, serialised as a string.

use super::cautions::Caution;
use rust_decimal::Decimal;
use serde::Serialize;

/// The analysis of one deal: the base case and every scenario.
#[derive(Debug, Clone, Serialize)]
pub struct Analysis {
    /// Deal name.
    pub deal: String,
    /// ISO 4217 currency code.
    pub currency: String,
    /// The unit the deal file's amounts are written in (deal format version 2 only;
    /// every amount here is in currency units).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub units: Option<crate::model::Units>,
    /// The basis of the amounts and rates (deal format version 2 only; each part null
    /// when the deal does not state it).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub basis: Option<crate::model::Basis>,
    /// Base case first, then scenarios in file order.
    pub scenarios: Vec<ScenarioAnalysis>,
}

/// Every figure for one scenario.
#[derive(Debug, Clone, Serialize)]
pub struct ScenarioAnalysis {
    /// `base` or the scenario's name.
    pub name: String,
    /// The scenario's label for print, when the deal gives one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    /// Annual effective hurdle rate.
    pub hurdle_rate: f64,
    /// Annual effective finance rate (MIRR, return on invested capital).
    pub finance_rate: f64,
    /// Annual effective reinvestment rate (MIRR).
    pub reinvestment_rate: f64,
    /// Periods a year for periodic flows, `None` for dated flows.
    pub periods_per_year: Option<u32>,
    /// The netted flows the figures were computed from.
    pub flows: Vec<FlowRow>,
    /// Totals of the flows.
    pub totals: Totals,
    /// Every real IRR with its certification.
    pub irr: IrrReport,
    /// NPV at the hurdle rate, discounted to the series' start, rounded to the cent;
    /// `None` (JSON null) when it is beyond Decimal's range (about 7.9e28), when
    /// [`ScenarioAnalysis::npv_at_hurdle_approx`] gives its size, or cannot be computed.
    pub npv_at_hurdle: Option<Decimal>,
    /// The NPV's sign and size when it is beyond Decimal's range, in JSON a string in
    /// scientific form such as `"6.00e62"`; absent from the JSON otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub npv_at_hurdle_approx: Option<ApproxAmount>,
    /// The decision the NPV at the hurdle gives.
    pub decision: Decision,
    /// MIRR (annual), when defined (needs at least one inflow and one outflow).
    pub mirr: Option<f64>,
    /// Return on invested capital (annual), financing positive balances at the finance rate.
    pub return_on_invested_capital: Option<f64>,
    /// Inflows over outflows (undiscounted), when there are outflows.
    pub money_multiple: Option<Decimal>,
    /// Present value of inflows over present value of outflows at the hurdle.
    pub profitability_index: Option<f64>,
    /// Simple and discounted payback.
    pub payback: Payback,
    /// NPV over a range of annual rates, for the profile chart.
    pub npv_profile: Vec<ProfilePoint>,
    /// The deal's lines in this scenario (deal format version 2 only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lines: Option<Vec<LineSummary>>,
    /// The most negative running total of the flows, and when (version 2 only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_exposure: Option<Exposure>,
    /// The sum of every negative amount of every line, before lines are netted
    /// (version 2 only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub committed_outflows: Option<Decimal>,
    /// The cautions that apply, with the facts each states (the JSON contract and the
    /// reports give each its title and paragraph through `present::cautions`).
    pub cautions: Vec<Caution>,
    /// Sensitivity of the NPV at the hurdle and of the count of IRRs (docs/design.md,
    /// `sensitivity`); set by [`crate::engine::analyse`] for a deal's scenarios, absent
    /// for a series analysed alone.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sensitivity: Option<super::sensitivity::Sensitivity>,
}

/// An amount too large for an exact decimal: its sign and the base-10 logarithm of its
/// size (good to about 15 digits, so its first few digits are right).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ApproxAmount {
    /// True for a negative amount.
    pub negative: bool,
    /// log10 of the amount's absolute value.
    pub log10_abs: f64,
}

impl ApproxAmount {
    /// The signed mantissa (at least 1, below 10 in size) rounded to `digits` decimals,
    /// and the power of ten, e.g. `(6.0, 62)` for 6.000006e62 with one decimal.
    pub(crate) fn scientific(&self, digits: i32) -> (f64, i64) {
        let mut exponent = self.log10_abs.floor();
        let step = 10f64.powi(digits);
        let mut mantissa = (10f64.powf(self.log10_abs - exponent) * step).round() / step;
        if mantissa >= 10.0 {
            mantissa /= 10.0;
            exponent += 1.0;
        }
        let sign = if self.negative { -1.0 } else { 1.0 };
        (sign * mantissa, exponent as i64)
    }

    /// E.g. `6.00e62` or `-1.23e4512` (three significant digits).
    pub fn to_scientific(&self) -> String {
        let (m, e) = self.scientific(2);
        format!("{m:.2}e{e}")
    }
}

impl Serialize for ApproxAmount {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(&self.to_scientific())
    }
}

/// One line of a scenario (deal format version 2): its totals and its amounts.
#[derive(Debug, Clone, Serialize)]
pub struct LineSummary {
    /// The line's key.
    pub key: String,
    /// The line's label.
    pub label: String,
    /// The line's note.
    pub note: Option<String>,
    /// Sum of the line's positive amounts.
    pub inflows: Decimal,
    /// Sum of the line's negative amounts.
    pub outflows: Decimal,
    /// Sum of all its amounts.
    pub net: Decimal,
    /// The line's amounts in time order.
    pub flows: Vec<FlowRow>,
}

/// The most negative running total of a scenario's flows (undiscounted).
#[derive(Debug, Clone, Serialize)]
pub struct Exposure {
    /// The running total, zero or negative (zero when it never goes below zero).
    pub amount: Decimal,
    /// The period where it is first reached (periodic flows), else null.
    pub period: Option<u32>,
    /// The date where it is first reached, when the flows have dates.
    pub date: Option<String>,
    /// Years from the series' start to that flow; null when the total never goes
    /// below zero.
    pub years: Option<f64>,
}

/// One netted cash flow.
#[derive(Debug, Clone, Serialize)]
pub struct FlowRow {
    /// Period number (periodic flows).
    pub period: Option<u32>,
    /// Date (dated flows, or periodic flows with a start date), ISO 8601.
    pub date: Option<String>,
    /// Years since the series' start.
    pub years: f64,
    /// Exact amount.
    pub amount: Decimal,
    /// Note from the deal file.
    pub note: Option<String>,
}

/// Sums of the flows.
#[derive(Debug, Clone, Serialize)]
pub struct Totals {
    /// Sum of positive flows.
    pub inflows: Decimal,
    /// Sum of negative flows (a negative number).
    pub outflows: Decimal,
    /// Sum of all flows.
    pub net: Decimal,
    /// Years from the series' start to the last flow.
    pub horizon_years: f64,
}

/// The real IRRs of one series and the certificate of their count.
#[derive(Debug, Clone, Serialize)]
pub struct IrrReport {
    /// Real roots in (-100%, +inf), counted with multiplicity.
    pub count: u32,
    /// The sign-change bound (Descartes; Laguerre for real exponents) the count was
    /// checked against: `count <= upper_bound` and they differ by an even number.
    pub upper_bound: u32,
    /// True when the count is proven complete; false means the engine could not decide
    /// some interval and says so in `unresolved`.
    pub certified: bool,
    /// The individual sign-change bounds.
    pub bounds: SignBounds,
    /// How the count was certified (serialised under `method`; the JSON contract
    /// states it as a sentence, written by `present::certificate`).
    #[serde(rename = "method")]
    pub certificate: Certificate,
    /// The roots, from the lowest rate to the highest.
    pub roots: Vec<Root>,
    /// Annual-rate intervals that could not be decided (empty when certified).
    pub unresolved: Vec<[f64; 2]>,
    /// Present when the exact check ran (for multiple roots, undecided intervals or
    /// roots too close for floats): "settled" when it proved the whole answer,
    /// "over-budget" when the work did not fit its budget and the float answer stands.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exact_check: Option<&'static str>,
    /// For a series with no real IRR: the rate-based reading from a complex root.
    pub complex_reading: Option<ComplexReading>,
}

/// Sign-change bounds on the number of IRRs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct SignBounds {
    /// Sign changes of the flows: bounds all IRRs in (-100%, +inf).
    pub descartes: u32,
    /// Sign changes of the forward cumulative sums (Norstrom): bounds IRRs above 0%,
    /// `None` when the flows sum to zero (0% is then a root and the criterion is silent).
    pub above_zero: Option<u32>,
    /// Sign changes of the backward cumulative sums: bounds IRRs in (-100%, 0%).
    pub below_zero: Option<u32>,
}

impl SignBounds {
    /// Bounds when the flows do not sum to zero, so both cumulative-sum counts apply.
    pub fn new(descartes: u32, above_zero: u32, below_zero: u32) -> Self {
        Self {
            descartes,
            above_zero: Some(above_zero),
            below_zero: Some(below_zero),
        }
    }

    /// Bounds when the flows sum to zero: only the Descartes/Laguerre count applies.
    pub(crate) fn without_sums(descartes: u32) -> Self {
        Self {
            descartes,
            above_zero: None,
            below_zero: None,
        }
    }
}

/// One real IRR.
#[derive(Debug, Clone, Serialize)]
pub struct Root {
    /// Annual effective rate; `None` only when it is too large for a binary float
    /// (see `log10_annual_growth`).
    pub annual_rate: Option<f64>,
    /// Rate per period for periodic flows.
    pub periodic_rate: Option<f64>,
    /// log10(1 + annual rate): finite for every root, however extreme.
    pub log10_annual_growth: f64,
    /// 1 for a simple root, 2 for a double root, ...
    pub multiplicity: u32,
    /// Certified to contain the root (annual rate); `None` when an end is too large
    /// for a binary float (then `log10_interval` still holds it).
    pub interval: Option<[f64; 2]>,
    /// Certified to contain log10(1 + annual rate), finite for every root.
    pub log10_interval: [f64; 2],
    /// Balance-path classification at this rate.
    pub balance_kind: BalanceKind,
    /// Net investment or net borrowing at the hurdle (Hazen).
    pub stance: Stance,
    /// Accept or reject by this root and its stance; agrees with the NPV at the hurdle.
    pub decision: Decision,
    /// True when the root describes no economic reality (near -100% or astronomically large).
    pub extreme: bool,
    /// The balance path at this rate, one row per flow.
    pub balance_path: Vec<BalanceRow>,
}

/// One step of a balance path.
#[derive(Debug, Clone, Serialize)]
pub struct BalanceRow {
    /// Years since the series' start.
    pub years: f64,
    /// The flow at this time.
    pub flow: Decimal,
    /// Balance after the flow, rounded to the cent (negative: the project owes the investor).
    pub balance: Decimal,
}

/// Balance-path classification (Teichroew, Robichek and Montalbano).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum BalanceKind {
    /// The project never owes the investor: a return on capital tied up.
    PureInvestment,
    /// The balance changes sign.
    Mixed,
    /// The investor is the borrower throughout.
    PureBorrowing,
}

/// Net investment or net borrowing at the hurdle rate for a given IRR (Hazen).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Stance {
    /// The capital stream has positive present value: accept when IRR > hurdle.
    Investment,
    /// Negative present value: the investor borrows; accept when IRR < hurdle.
    Borrowing,
    /// The stream's present value is zero (the IRR equals the hurdle).
    Neutral,
}

/// Accept or reject.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Decision {
    /// Adds value at the hurdle.
    Accept,
    /// Destroys value at the hurdle.
    Reject,
    /// Exactly break-even at the hurdle.
    Indifferent,
}

/// The reading from a complex IRR when there is no real one (Hazen).
#[derive(Debug, Clone, Serialize)]
pub struct ComplexReading {
    /// Real part of the complex rate per year.
    pub real_rate: f64,
    /// Imaginary part.
    pub imaginary_rate: f64,
    /// Stance from the real part of the capital stream's present value.
    pub stance: Stance,
    /// Accept when (investment and real part > hurdle) or (borrowing and real part < hurdle).
    pub decision: Decision,
}

/// Payback figures, in years since the series' start (docs/methods.md, "Other figures").
#[derive(Debug, Clone, Serialize)]
pub struct Payback {
    /// The first time after which the cumulative undiscounted flows stay at zero or
    /// more, interpolated within the period for periodic flows, the flow's own time for
    /// dated flows; `None` when not reached or not applicable (see `status`).
    pub simple_years: Option<f64>,
    /// The same with flows discounted at the hurdle.
    pub discounted_years: Option<f64>,
    /// True when an earlier recovery of the undiscounted total did not last: it turned
    /// non-negative after being negative, then negative again.
    pub turns_negative_again: bool,
    /// Whether the simple payback is reached within the forecast.
    pub status: PaybackStatus,
    /// Whether the discounted payback is reached within the forecast.
    pub discounted_status: PaybackStatus,
    /// How the time is placed: within the paying flow's period, or at its date.
    pub method: PaybackMethod,
    /// For dated flows, the date of the flow that pays back (`YYYY-MM-DD`).
    pub simple_date: Option<String>,
    /// For dated flows, the date of the flow that pays back the discounted total.
    pub discounted_date: Option<String>,
}

/// Whether a payback is reached.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PaybackStatus {
    /// The running total, once negative, turns non-negative and stays so.
    Reached,
    /// The running total is still negative at the last flow.
    NotReached,
    /// The investor is paid first (or never out of pocket): nothing to pay back.
    NotApplicable,
}

/// How the payback time is placed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PaybackMethod {
    /// Periodic flows: linear within the period of the flow that pays back, as if that
    /// flow arrived evenly over its period.
    WithinPeriod,
    /// Dated flows: the date of the flow that pays back; no interpolation between dates.
    FlowDate,
}

/// One point of the NPV profile.
#[derive(Debug, Clone, Serialize)]
pub struct ProfilePoint {
    /// Annual rate.
    pub rate: f64,
    /// NPV at that rate (currency units, binary float; for drawing only).
    pub npv: f64,
}

/// How the count of IRRs was established: the certificate's facts.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Certificate {
    /// Not certified: some intervals could not be decided in binary floating point.
    Uncertified {
        /// Roots found, with multiplicity.
        count: u32,
        /// Intervals left undecided.
        undecided: usize,
        /// The sign-change bound of the flows.
        descartes: u32,
    },
    /// Not certified: the float methods left intervals undecided or roots too close to
    /// tell apart, and the exact check ran out of its work budget.
    ExactOverBudget {
        /// Roots found, with multiplicity.
        count: u32,
        /// Intervals left undecided.
        undecided: usize,
        /// The sign-change bound of the flows.
        descartes: u32,
    },
    /// The count and each multiplicity proven in exact integer arithmetic: the NPV as
    /// an integer polynomial, its square-free split, Descartes isolation.
    Exact {
        /// Roots, with multiplicity.
        count: u32,
        /// The sign-change bound of the flows.
        descartes: u32,
    },
    /// The flows never change sign, so no rate of return exists (Descartes).
    NoSignChange,
    /// Every root isolated where the NPV changes sign, and the count bounded above and
    /// below `annual_rate` by the sign changes of the discounted partial sums (Laguerre).
    Laguerre {
        /// Roots, with multiplicity.
        count: u32,
        /// The annual rate at which the flows were discounted.
        annual_rate: f64,
        /// The sign-change bound of the flows.
        descartes: u32,
    },
    /// Every interval settled by enclosures, the count within the sign-change bound
    /// with the same parity.
    Enclosures {
        /// Roots, with multiplicity.
        count: u32,
        /// The sign-change bound of the flows.
        descartes: u32,
        /// Sign changes of the cumulative sums (bound above 0%) and of the backward
        /// sums (bound below 0%); `None` when the flows sum to zero.
        cumulative: Option<(u32, u32)>,
    },
}
