//! The words for the engine's verdicts and the committee's sign-off: decisions,
//! stances, balance kinds, multiplicities and clock periods, each spelled once.

use crate::engine::{BalanceKind, Decision, Stance};
use crate::model::SignoffDecision;

/// What a figure that does not exist for a deal reads as (a MIRR without flows of
/// both signs, a multiple without outflows).
pub(crate) const NOT_DEFINED: &str = "not defined";

/// A scenario's name as a heading: the scenario called `base` is the `Base case`; a
/// scenario key is turned into words (`restoration_overrun` reads `Restoration
/// overrun`). A label given in the deal file is used as written instead
/// ([`scenario_title`]).
pub(crate) fn scenario_label(name: &str) -> String {
    if name == "base" {
        return "Base case".to_string();
    }
    let spaced: String = name
        .chars()
        .map(|c| if c == '_' || c == '-' { ' ' } else { c })
        .collect();
    let words: Vec<&str> = spaced.split_whitespace().collect();
    let joined = words.join(" ");
    let mut chars = joined.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => name.to_string(),
    }
}

/// A scenario's heading: its label from the deal file when it has one, else
/// [`scenario_label`] of its key.
pub(crate) fn scenario_title(label: Option<&str>, name: &str) -> String {
    match label {
        Some(l) if !l.trim().is_empty() => l.to_string(),
        _ => scenario_label(name),
    }
}

/// What the NPV rule says at the hurdle: `accept`, `reject`, `indifferent` (the JSON's
/// `decision`; the memo labels it "NPV rule", never "decision", which is the
/// committee's).
pub fn decision(d: Decision) -> &'static str {
    match d {
        Decision::Accept => "accept",
        Decision::Reject => "reject",
        Decision::Indifferent => "indifferent",
    }
}

/// The decision as a verb in a sentence: `accept`, `reject`, `neither accept nor reject`.
pub(crate) fn decision_verb(d: Decision) -> &'static str {
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
pub(crate) fn stance_word(s: Stance) -> &'static str {
    match s {
        Stance::Investment => "investment",
        Stance::Borrowing => "borrowing",
        Stance::Neutral => "neutral",
    }
}

/// A stance as a noun after "a net" in prose: `investment`, `break-even position`.
pub(crate) fn stance_noun(s: Stance) -> &'static str {
    match s {
        Stance::Neutral => "break-even position",
        other => stance_word(other),
    }
}

/// A stance with what it means for the decision (the memo).
pub(crate) fn stance_explained(s: Stance) -> &'static str {
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

/// A balance kind with what it means (the memo), in the balance table's sign
/// convention: a negative balance is money the project still owes the investor, a
/// positive one money the investor in effect owes the project.
pub(crate) fn balance_kind_explained(k: BalanceKind) -> &'static str {
    match k {
        BalanceKind::PureInvestment => {
            "pure investment: every balance before the last flow is zero or negative, so the \
             project owes the investor until the last flow clears the balance"
        }
        BalanceKind::Mixed => {
            "mixed: the balance changes sign, so at times the project owes the investor \
             (negative) and at others the investor owes the project (positive)"
        }
        BalanceKind::PureBorrowing => {
            "pure borrowing: every balance before the last flow is zero or positive, so the \
             investor owes the project until the last flow clears the balance"
        }
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
pub(crate) fn per_period(per_year: Option<u32>) -> Option<&'static str> {
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
pub(crate) fn signoff_status(d: Option<SignoffDecision>) -> &'static str {
    match d {
        Some(SignoffDecision::Approved) => "Approved",
        Some(SignoffDecision::Declined) => "DRAFT (declined by the committee)",
        Some(SignoffDecision::Deferred) => "DRAFT (decision deferred)",
        Some(SignoffDecision::Pending) | None => "DRAFT (decision pending)",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scenario_keys_become_words() {
        assert_eq!(scenario_label("base"), "Base case");
        assert_eq!(scenario_label("restoration_overrun"), "Restoration overrun");
        assert_eq!(
            scenario_label("downside-and_delayed"),
            "Downside and delayed"
        );
        assert_eq!(scenario_label("Ωmega"), "Ωmega");
        assert_eq!(
            scenario_title(Some("Dry years (15% less rain)"), "dry_years"),
            "Dry years (15% less rain)"
        );
        assert_eq!(scenario_title(None, "dry_years"), "Dry years");
    }
}
