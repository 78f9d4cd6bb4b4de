//! The validated deal. A [`Deal`] can only be built by [`validate`], so an invalid deal
//! cannot exist: money is exact, rates are checked, flows are resolved per scenario.

use chrono::NaiveDate;
pub use flows::{FlowPoint, Flows};
use rust_decimal::Decimal;
use serde::Serialize;

pub mod daycount;
pub mod flows;
pub mod lines;
mod validate;
pub mod values;

pub(crate) use daycount::DayCount;
pub(crate) use lines::NarrowTerminal;
pub use lines::{Basis, Component, Units};
pub use validate::{validate, MAX_FLOWS};

/// How the deal wants its sensitivity studied (the optional `sensitivity` block of a
/// deal file); each setting left out takes the engine's default.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize)]
pub struct SensitivitySettings {
    /// Relative moves of each line and of the hurdle rate (-0.2 is 20% less).
    pub steps: Option<Vec<Decimal>>,
    /// The factors over which the count of IRRs is mapped (lowest, highest).
    pub factor_range: Option<(Decimal, Decimal)>,
    /// The line of the two-way table (`inflows` or `outflows` in format version 1).
    pub table_line: Option<String>,
}

/// A validated deal.
#[derive(Debug, Clone, Serialize)]
pub struct Deal {
    /// The deal file's format version (1 or 2).
    pub version: u32,
    /// The unit the deal file's amounts are written in (always ones in version 1);
    /// every amount here is already in currency units.
    pub units: Units,
    /// The basis of the amounts and rates, when the deal states it (version 2).
    pub basis: Option<Basis>,
    /// Deal name.
    pub name: String,
    /// The deal's stable name for its archive folder (`deal.id`), when given.
    pub id: Option<String>,
    /// ISO 4217 code.
    pub currency: String,
    /// As-of date.
    pub as_of: NaiveDate,
    /// Annual effective rates.
    pub rates: Rates,
    /// How the flows are timed.
    pub clock: Clock,
    /// The base case first (named `base`), then each scenario in file order.
    pub scenarios: Vec<Scenario>,
    /// Narrative for the memo.
    pub memo: Memo,
    /// Sign-off block.
    pub signoff: Option<Signoff>,
    /// How the sensitivity is studied.
    pub sensitivity: SensitivitySettings,
}

/// Annual effective rates, exact.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Rates {
    /// Hurdle rate.
    pub hurdle: Decimal,
    /// Finance rate (defaults to the hurdle).
    pub finance: Decimal,
    /// Reinvestment rate (defaults to the hurdle).
    pub reinvestment: Decimal,
}

/// How the flows are timed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Clock {
    /// Equal periods.
    Periodic {
        /// Period length.
        every: Frequency,
        /// Date of period 0, if given.
        start: Option<NaiveDate>,
    },
    /// Dated flows with a day count.
    Dated {
        /// Day-count convention.
        day_count: DayCount,
    },
}

/// Period length for periodic flows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Frequency {
    /// 1 a year.
    Year,
    /// 2 a year.
    HalfYear,
    /// 4 a year.
    Quarter,
    /// 12 a year.
    Month,
    /// 52 a year (common practice).
    Week,
    /// 365 a year (common practice).
    Day,
}

impl Frequency {
    /// Every frequency, from the longest period to the shortest.
    pub(crate) const ALL: [Frequency; 6] = [
        Frequency::Year,
        Frequency::HalfYear,
        Frequency::Quarter,
        Frequency::Month,
        Frequency::Week,
        Frequency::Day,
    ];

    /// Periods a year.
    pub fn per_year(self) -> u32 {
        match self {
            Frequency::Year => 1,
            Frequency::HalfYear => 2,
            Frequency::Quarter => 4,
            Frequency::Month => 12,
            Frequency::Week => 52,
            Frequency::Day => 365,
        }
    }

    /// The word used in deal files.
    pub fn as_str(self) -> &'static str {
        match self {
            Frequency::Year => "year",
            Frequency::HalfYear => "half-year",
            Frequency::Quarter => "quarter",
            Frequency::Month => "month",
            Frequency::Week => "week",
            Frequency::Day => "day",
        }
    }
}

/// One scenario: a name and its resolved flows.
#[derive(Debug, Clone, Serialize)]
pub struct Scenario {
    /// `base`, or the scenario's key in the deal file.
    pub name: String,
    /// The scenario's label for print, when the deal gives one.
    pub label: Option<String>,
    /// What was changed, in words (empty for the base case).
    pub description: String,
    /// The rates this scenario is analysed at (the deal's, or the scenario's own).
    pub rates: Rates,
    /// The flows, netted by date, on the deal's clock.
    pub flows: Flows,
    /// The lines whose sum, time by time, is [`Scenario::flows`]: the deal's lines
    /// (version 2), or `inflows` and `outflows` (version 1).
    pub components: Vec<Component>,
    /// Terminal values of this scenario whose discount rate is within two points of
    /// their growth rate.
    pub narrow_terminals: Vec<NarrowTerminal>,
}

/// Narrative passed through to the memo.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Memo {
    /// Recommendation.
    pub recommendation: Option<String>,
    /// Summary.
    pub summary: Option<String>,
    /// Risks, one per item.
    pub risks: Vec<String>,
    /// Further narrative sections, in file order.
    pub sections: Vec<MemoSection>,
}

/// One narrative section of the memo.
#[derive(Debug, Clone, Default, Serialize)]
pub struct MemoSection {
    /// Heading.
    pub title: String,
    /// Body text.
    pub text: String,
}

/// Sign-off block.
#[derive(Debug, Clone, Serialize)]
pub struct Signoff {
    /// Who prepared the memo.
    pub prepared_by: Option<String>,
    /// Who reviewed it.
    pub reviewed_by: Option<String>,
    /// The committee's decision (`pending` when not given).
    pub decision: SignoffDecision,
    /// The date of the decision, if given.
    pub date: Option<NaiveDate>,
}

/// The committee's decision.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum SignoffDecision {
    /// Not decided yet.
    Pending,
    /// Approved.
    Approved,
    /// Declined.
    Declined,
    /// Deferred.
    Deferred,
}

#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_lines;
