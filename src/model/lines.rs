//! Cash-flow lines (deal format version 2, docs/design.md): the assumptions as an
//! analyst keeps them. A deal of version 2 names its lines (sales, operating costs,
//! a loan, a terminal value, ...), each with its amounts given as a list, as dated
//! amounts, as a CSV column or generated from a few drivers; the net flow at each time
//! is the sum of the lines. This module holds the lines' types and the generators'
//! arithmetic; reading them from a deal file is `validate::v2`.
//!
//! Amounts as entered are in the deal's `units` (ones, thousands, millions) and are
//! scaled to currency units exactly. Generated amounts are rounded to the cent (half
//! away from zero), each on its own, after scaling.

use super::flows::{FlowPoint, Flows};
use rust_decimal::{Decimal, RoundingStrategy};
use serde::Serialize;

/// The unit the amounts of a deal file are written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Units {
    /// Currency units as written.
    #[default]
    Ones,
    /// Thousands of currency units.
    Thousands,
    /// Millions of currency units.
    Millions,
}

impl Units {
    /// The words accepted in a deal file, in the order of [`Units::from_word`].
    pub(crate) const WORDS: [&'static str; 3] = ["ones", "thousands", "millions"];

    /// The unit named by one of [`Units::WORDS`].
    pub(crate) fn from_word(word: &str) -> Option<Units> {
        match word {
            "ones" => Some(Units::Ones),
            "thousands" => Some(Units::Thousands),
            "millions" => Some(Units::Millions),
            _ => None,
        }
    }

    /// What an amount as entered is multiplied by to give currency units.
    pub fn factor(self) -> Decimal {
        match self {
            Units::Ones => Decimal::ONE,
            Units::Thousands => Decimal::from(1_000),
            Units::Millions => Decimal::from(1_000_000),
        }
    }

    /// The word used in deal files.
    pub fn as_str(self) -> &'static str {
        Units::WORDS[self as usize]
    }
}

/// Whether amounts are in money of the day or of one date's purchasing power.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Prices {
    /// Money of the day, inflation included.
    Nominal,
    /// Constant purchasing power, inflation removed.
    Real,
}

impl Prices {
    /// The words accepted in a deal file.
    pub(crate) const WORDS: [&'static str; 2] = ["nominal", "real"];

    /// The word used in deal files.
    pub fn as_str(self) -> &'static str {
        Prices::WORDS[self as usize]
    }
}

/// Whether amounts are before or after tax.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Tax {
    /// Before tax.
    Before,
    /// After tax.
    After,
}

impl Tax {
    /// The words accepted in a deal file.
    pub(crate) const WORDS: [&'static str; 2] = ["before", "after"];

    /// The word used in deal files.
    pub fn as_str(self) -> &'static str {
        Tax::WORDS[self as usize]
    }
}

/// The basis the deal's amounts and rates are stated on; each part optional.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
pub struct Basis {
    /// Nominal or real amounts.
    pub prices: Option<Prices>,
    /// Amounts before or after tax.
    pub tax: Option<Tax>,
    /// Whether the hurdle, finance and reinvestment rates are nominal or real.
    pub rates: Option<Prices>,
}

impl Basis {
    /// True when the amounts are real but the rates are not said to be: discounting
    /// real amounts at a nominal rate understates the value (common practice).
    pub(crate) fn real_amounts_nominal_rates(&self) -> bool {
        self.prices == Some(Prices::Real) && self.rates != Some(Prices::Real)
    }
}

/// How a generated stream grows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum GrowthStep {
    /// The amount steps up once a year, at each anniversary of the stream's first
    /// amount: exact on every clock.
    Year,
    /// The amount grows at every period.
    Period,
}

impl GrowthStep {
    /// The words accepted in a deal file.
    pub(crate) const WORDS: [&'static str; 2] = ["year", "period"];
}

/// A stream generated from its drivers: `count` amounts, one a period, the k-th
/// (from 0) being `first × ramp[k] × (1 + growth)^steps(k)`, where `steps(k)` is
/// `k` when growth is per period and `k / periods_per_year` (whole years since the
/// first amount) when it is per year, and `ramp[k]` is 1 past the ramp's end.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Stream {
    /// The first amount, as entered (before the ramp).
    pub first: Decimal,
    /// How many amounts.
    pub count: u32,
    /// Growth per step, as a fraction (-1 < growth).
    pub growth: Decimal,
    /// When the growth applies.
    pub step: GrowthStep,
    /// Periods a year of the stream's own period.
    pub periods_per_year: u32,
    /// Multipliers of the first amounts, as fractions (0.5 = half the amount).
    pub ramp: Vec<Decimal>,
}

/// Why a stream or terminal value cannot be generated.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum GenerateError {
    /// An amount is beyond the amounts a deal accepts (or beyond exact arithmetic).
    TooLarge {
        /// Its index in the stream.
        index: u32,
    },
    /// The discount rate of a terminal value is not above its growth rate.
    DiscountNotAboveGrowth,
}

fn cents(x: Decimal) -> Decimal {
    x.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero)
}

fn within_limit(x: Decimal) -> bool {
    x.abs() <= Decimal::from(crate::limits::MAX_AMOUNT)
}

impl Stream {
    /// The amounts in currency units (as entered times `scale`), each rounded to the
    /// cent. The growth factor is carried at full decimal precision (28 significant
    /// digits) from one step to the next, so over 100,000 steps its relative error
    /// stays below 10^-22, far below a cent of any amount accepted.
    pub fn amounts(&self, scale: Decimal) -> Result<Vec<Decimal>, GenerateError> {
        let base = self
            .first
            .checked_mul(scale)
            .ok_or(GenerateError::TooLarge { index: 0 })?;
        let factor = Decimal::ONE + self.growth;
        let per_step = match self.step {
            GrowthStep::Period => 1,
            GrowthStep::Year => self.periods_per_year.max(1),
        };
        let mut out = Vec::with_capacity(self.count as usize);
        let mut grown = Decimal::ONE;
        for k in 0..self.count {
            if k > 0 && k % per_step == 0 {
                grown = grown
                    .checked_mul(factor)
                    .ok_or(GenerateError::TooLarge { index: k })?;
            }
            let ramp = self.ramp.get(k as usize).copied().unwrap_or(Decimal::ONE);
            let amount = base
                .checked_mul(ramp)
                .and_then(|a| a.checked_mul(grown))
                .map(cents)
                .filter(|a| within_limit(*a))
                .ok_or(GenerateError::TooLarge { index: k })?;
            out.push(amount);
        }
        Ok(out)
    }
}

/// A terminal value: at the last period modelled, the value of a flow that starts one
/// year later at `next_flow` and grows for ever at `growth` a year, discounted at
/// `discount` a year: `next_flow / (discount - growth)`, the growing perpetuity
/// (Brealey, Myers and Allen, Principles of Corporate Finance, chapter 2, from
/// memory; docs/methods.md, "Terminal value and generated lines").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Terminal {
    /// The first flow after the modelled periods, a year after the value's date, as entered.
    pub next_flow: Decimal,
    /// Its growth a year, for ever.
    pub growth: Decimal,
    /// The annual discount rate.
    pub discount: Decimal,
}

impl Terminal {
    /// Within this spread (two points) of the discount rate over the growth rate the
    /// value is very sensitive to both, and a caution is raised.
    pub(crate) fn narrow_spread() -> Decimal {
        Decimal::new(2, 2)
    }

    /// The value in currency units (as entered times `scale`), rounded to the cent.
    pub fn value(&self, scale: Decimal) -> Result<Decimal, GenerateError> {
        let spread = self.discount - self.growth;
        if spread <= Decimal::ZERO {
            return Err(GenerateError::DiscountNotAboveGrowth);
        }
        self.next_flow
            .checked_mul(scale)
            .and_then(|n| n.checked_div(spread))
            .map(cents)
            .filter(|v| within_limit(*v))
            .ok_or(GenerateError::TooLarge { index: 0 })
    }

    /// True when the discount rate is less than two points above the growth rate.
    pub(crate) fn spread_is_narrow(&self) -> bool {
        self.discount - self.growth < Terminal::narrow_spread()
    }
}

/// A terminal value of a scenario whose spread is narrow, for its caution.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct NarrowTerminal {
    /// The line's key.
    pub line: String,
    /// The line's label.
    pub label: String,
    /// The discount rate (fraction).
    pub discount: Decimal,
    /// The growth rate (fraction).
    pub growth: Decimal,
    /// The value, in currency units.
    pub value: Decimal,
}

/// One line of a scenario, resolved on the deal's clock: the part of the scenario's
/// flows it contributes. A scenario's components sum, time by time, to its flows.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Component {
    /// The line's key (`inflows` and `outflows` for a deal of version 1).
    pub key: String,
    /// The line's label for print.
    pub label: String,
    /// The line's note, if any.
    pub note: Option<String>,
    /// The line's fields as written (`stream.growth` -> `2%`), scalars and short
    /// lists of scalars only; empty for a version-1 deal.
    pub fields: Vec<(String, String)>,
    /// The line's flows, on the scenario's clock (offsets from the scenario's start),
    /// in time order; zero amounts kept where the line states them.
    pub flows: Flows,
}

impl Component {
    /// The sum of the line's positive amounts.
    pub fn inflows(&self) -> Decimal {
        self.flows
            .points
            .iter()
            .map(|p| p.amount)
            .filter(|a| a.is_sign_positive())
            .sum()
    }

    /// The sum of the line's negative amounts.
    pub fn outflows(&self) -> Decimal {
        self.flows
            .points
            .iter()
            .map(|p| p.amount)
            .filter(|a| a.is_sign_negative())
            .sum()
    }
}

/// A version-1 scenario's flows as two components: `inflows` (the positive flows) and
/// `outflows` (the negative ones).
pub fn split_by_sign(flows: &Flows) -> Vec<Component> {
    let part = |key: &str, label: &str, keep: fn(&FlowPoint) -> bool| Component {
        key: key.to_string(),
        label: label.to_string(),
        note: None,
        fields: Vec::new(),
        flows: Flows {
            points: flows.points.iter().filter(|p| keep(p)).cloned().collect(),
            units_per_year: flows.units_per_year,
            periods_per_year: flows.periods_per_year,
        },
    };
    vec![
        part("inflows", "Inflows", |p| p.amount > Decimal::ZERO),
        part("outflows", "Outflows", |p| p.amount < Decimal::ZERO),
    ]
}

/// The components added time by time: the scenario's net flows, netted and with zero
/// flows dropped ([`Flows::normalised`]).
pub fn sum(components: &[Component], units_per_year: u64, periods_per_year: Option<u32>) -> Flows {
    Flows {
        points: components
            .iter()
            .flat_map(|c| c.flows.points.iter().cloned())
            .collect(),
        units_per_year,
        periods_per_year,
    }
    .into_normalised()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::str::FromStr;

    fn d(s: &str) -> Decimal {
        Decimal::from_str(s).unwrap()
    }

    #[test]
    fn a_stream_growing_once_a_year_on_a_quarterly_clock() {
        // Hand computation: 250 a quarter, 4% a year, stepping up at each anniversary
        // of the first amount. Quarters 0-3: 250; quarters 4-7: 250 × 1.04 = 260;
        // quarter 8: 250 × 1.04^2 = 250 × 1.0816 = 270.40.
        let s = Stream {
            first: d("250"),
            count: 9,
            growth: d("0.04"),
            step: GrowthStep::Year,
            periods_per_year: 4,
            ramp: vec![],
        };
        let a = s.amounts(Decimal::ONE).unwrap();
        let want = [
            "250", "250", "250", "250", "260", "260", "260", "260", "270.40",
        ];
        assert_eq!(a, want.map(d).to_vec());
    }

    #[test]
    fn a_stream_growing_every_period_with_a_ramp_in_thousands() {
        // Hand computation, amounts in thousands (× 1,000): first 1.2, growth 2.5% a
        // period, ramp 50% then 80%.
        //   k=0: 1.2 × 1000 × 0.5 × 1             =   600.00
        //   k=1: 1.2 × 1000 × 0.8 × 1.025          =   984.00
        //   k=2: 1.2 × 1000 × 1.025^2 = 1200 × 1.050625     = 1260.75
        //   k=3: 1200 × 1.025^3 = 1200 × 1.076890625        = 1292.26875 -> 1292.27
        let s = Stream {
            first: d("1.2"),
            count: 4,
            growth: d("0.025"),
            step: GrowthStep::Period,
            periods_per_year: 1,
            ramp: vec![d("0.5"), d("0.8")],
        };
        let a = s.amounts(Units::Thousands.factor()).unwrap();
        assert_eq!(a, ["600", "984", "1260.75", "1292.27"].map(d).to_vec());
    }

    #[test]
    fn a_declining_stream_and_rounding_half_away_from_zero() {
        // Hand computation, × 1: k=0: -100.005 rounds to -100.01 (half away from
        // zero); k=1: -100.005 × 0.9 = -90.0045 -> -90.00.
        let s = Stream {
            first: d("-100.005"),
            count: 2,
            growth: d("-0.1"),
            step: GrowthStep::Period,
            periods_per_year: 12,
            ramp: vec![],
        };
        assert_eq!(
            s.amounts(Decimal::ONE).unwrap(),
            vec![d("-100.01"), d("-90.00")]
        );
    }

    #[test]
    fn a_stream_beyond_the_amount_limit_is_refused() {
        let s = Stream {
            first: d("1000000"),
            count: 400,
            growth: d("1"),
            step: GrowthStep::Period,
            periods_per_year: 1,
            ramp: vec![],
        };
        // 10^6 × 2^k passes 10^15 at k = 30 (2^30 = 1,073,741,824).
        assert_eq!(
            s.amounts(Decimal::ONE),
            Err(GenerateError::TooLarge { index: 30 })
        );
    }

    #[test]
    fn terminal_value_is_the_growing_perpetuity() {
        // Growing perpetuity PV = C1 / (r - g) (Brealey, Myers and Allen, Principles
        // of Corporate Finance, ch. 2, from memory): C1 = 1,000, r = 9%, g = 2%:
        // 1000 / 0.07 = 14,285.714285... -> 14,285.71.
        let t = Terminal {
            next_flow: d("1000"),
            growth: d("0.02"),
            discount: d("0.09"),
        };
        assert_eq!(t.value(Decimal::ONE).unwrap(), d("14285.71"));
        assert!(!t.spread_is_narrow());
        // In millions: 1.5 × 10^6 / (0.08 - 0.065) = 1.5e6 / 0.015 = 100,000,000 exactly.
        let t = Terminal {
            next_flow: d("1.5"),
            growth: d("0.065"),
            discount: d("0.08"),
        };
        assert_eq!(t.value(Units::Millions.factor()).unwrap(), d("100000000"));
        assert!(t.spread_is_narrow(), "1.5 points is within two");
        let t = Terminal {
            next_flow: d("1"),
            growth: d("0.09"),
            discount: d("0.09"),
        };
        assert_eq!(
            t.value(Decimal::ONE),
            Err(GenerateError::DiscountNotAboveGrowth)
        );
    }

    #[test]
    fn units_scale_exactly() {
        // 15,533.123456 thousands is exactly 15,533,123.456 currency units.
        assert_eq!(
            d("-15533.123456") * Units::Thousands.factor(),
            d("-15533123.456")
        );
        assert_eq!(d("0.000001") * Units::Millions.factor(), d("1"));
        assert_eq!(Units::from_word("millions"), Some(Units::Millions));
        assert_eq!(Units::Thousands.as_str(), "thousands");
    }

    #[test]
    fn version_one_components_sum_to_the_flows() {
        let f = Flows::periodic(["-100", "60", "0", "-5", "70"].map(d), 1).normalised();
        let parts = split_by_sign(&f);
        assert_eq!(parts[0].inflows(), d("130"));
        assert_eq!(parts[1].outflows(), d("-105"));
        assert_eq!(sum(&parts, 1, Some(1)), f);
    }

    #[test]
    fn peak_exposure_is_the_lowest_running_total() {
        use crate::model::flows::peak_exposure;
        // Running totals: -100, -40, -140, -70: the lowest is -140 at flow 2.
        let f = Flows::periodic(["-100", "60", "-100", "70"].map(d), 1);
        let amounts = |f: &Flows| f.points.iter().map(|p| p.amount).collect::<Vec<_>>();
        assert_eq!(peak_exposure(amounts(&f)), Some((d("-140"), 2)));
        let f = Flows::periodic(["100", "-60"].map(d), 1);
        assert_eq!(peak_exposure(amounts(&f)), None);
    }

    #[test]
    fn basis_mismatch() {
        let b = Basis {
            prices: Some(Prices::Real),
            tax: Some(Tax::After),
            rates: None,
        };
        assert!(b.real_amounts_nominal_rates());
        let b = Basis {
            rates: Some(Prices::Real),
            ..b
        };
        assert!(!b.real_amounts_nominal_rates());
    }
}
