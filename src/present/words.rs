//! The words for the engine's verdicts and the committee's sign-off: decisions,
//! stances, balance kinds, multiplicities and clock periods, each spelled once.

use crate::engine::{BalanceKind, Decision, Stance};
use crate::model::SignoffDecision;

/// What a figure that does not exist for a deal reads as (a MIRR without flows of
/// both signs, a multiple without outflows).
pub const NOT_DEFINED: &str = "not defined";

/// A scenario's name as a heading: the scenario called `base` is the `Base case`.
pub fn scenario_label(name: &str) -> String {
    if name == "base" {
        "Base case".to_string()
    } else {
        name.to_string()
    }
}

/// The decision at the hurdle: `accept`, `reject`, `indifferent`.
pub fn decision(d: Decision) -> &'static str {
    match d {
        Decision::Accept => "accept",
        Decision::Reject => "reject",
        Decision::Indifferent => "indifferent",
    }
}

/// The decision as a verb in a sentence: `accept`, `reject`, `neither accept nor reject`.
pub fn decision_verb(d: Decision) -> &'static str {
    match d {
        Decision::Indifferent => "neither accept nor reject",
        other => decision(other),
    }
}

/// A stance for the terminal report: `net investment at the hurdle`.
pub fn stance(s: Stance) -> &'static str {
    match s {
        Stance::Investment => "net investment at the hurdle",
        Stance::Borrowing => "net borrowing at the hurdle",
        Stance::Neutral => "neutral at the hurdle",
    }
}

/// A stance in one word (the pack's summary table): `investment`, `borrowing`, `neutral`.
pub fn stance_word(s: Stance) -> &'static str {
    match s {
        Stance::Investment => "investment",
        Stance::Borrowing => "borrowing",
        Stance::Neutral => "neutral",
    }
}

/// A stance as a noun after "a net" in prose: `investment`, `break-even position`.
pub fn stance_noun(s: Stance) -> &'static str {
    match s {
        Stance::Neutral => "break-even position",
        other => stance_word(other),
    }
}

/// A stance with what it means for the decision (the memo).
pub fn stance_explained(s: Stance) -> &'static str {
    match s {
        Stance::Investment => "net investment at the hurdle, so a rate above the hurdle adds value",
        Stance::Borrowing => "net borrowing at the hurdle, so a rate below the hurdle adds value",
        Stance::Neutral => "neither net investment nor net borrowing at the hurdle",
    }
}

/// A balance kind for the terminal report: `pure investment`.
pub fn balance_kind(k: BalanceKind) -> &'static str {
    match k {
        BalanceKind::PureInvestment => "pure investment",
        BalanceKind::Mixed => "mixed balance",
        BalanceKind::PureBorrowing => "pure borrowing",
    }
}

/// A balance kind with what it means (the memo).
pub fn balance_kind_explained(k: BalanceKind) -> &'static str {
    match k {
        BalanceKind::PureInvestment => "pure investment: the project never owes the investor",
        BalanceKind::Mixed => "mixed: the balance changes sign along the way",
        BalanceKind::PureBorrowing => "pure borrowing: the investor is the borrower throughout",
    }
}

/// A root's multiplicity as an adjective: `simple`, `double`, `of multiplicity 4`.
pub fn multiplicity(m: u32) -> String {
    match m {
        1 => "simple".to_string(),
        2 => "double".to_string(),
        3 => "triple".to_string(),
        n => format!("of multiplicity {n}"),
    }
}

/// The period of a periodic clock with `per_year` periods a year, as it follows a rate:
/// "a month" for 12. `None` for a yearly clock (the annual rate says it all) and for
/// dated flows.
pub fn per_period(per_year: Option<u32>) -> Option<&'static str> {
    Some(match per_year? {
        1 => return None,
        2 => "a half-year",
        4 => "a quarter",
        12 => "a month",
        52 => "a week",
        365 => "a day",
        _ => "a period",
    })
}

/// The committee's sign-off decision: `pending`, `approved`, `declined`, `deferred`
/// (no sign-off yet reads as pending).
pub fn signoff(d: Option<SignoffDecision>) -> &'static str {
    match d {
        Some(SignoffDecision::Approved) => "approved",
        Some(SignoffDecision::Declined) => "declined",
        Some(SignoffDecision::Deferred) => "deferred",
        Some(SignoffDecision::Pending) | None => "pending",
    }
}

/// The memo's status line for a sign-off: `Approved`, or a draft with the reason.
pub fn signoff_status(d: Option<SignoffDecision>) -> &'static str {
    match d {
        Some(SignoffDecision::Approved) => "Approved",
        Some(SignoffDecision::Declined) => "DRAFT (declined by the committee)",
        Some(SignoffDecision::Deferred) => "DRAFT (decision deferred)",
        Some(SignoffDecision::Pending) | None => "DRAFT (decision pending)",
    }
}
