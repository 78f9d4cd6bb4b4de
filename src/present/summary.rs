//! The figures of the memo's decision page in words: amounts rounded to the deal's
//! scale, the set of IRRs, the hurdles at which the NPV is positive, peak exposure,
//! payback, what the NPV rule says, one plain sentence per caution, and the note that a
//! recommendation or a committee decision goes against the figures.

use super::{date_long, group_thousands, percent, root_rate, scenario_rate_decimals, Style};
use crate::engine::{Analysis, Decision, FlowRow, PaybackMethod, PaybackStatus, ScenarioAnalysis};
use crate::model::SignoffDecision;
use chrono::NaiveDate;
use rust_decimal::prelude::*;

/// The scale summary amounts are rounded to: the deal's own units when it states them,
/// else chosen from the size of its largest flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// Whole currency units.
    Ones,
    /// Thousands, one decimal.
    Thousands,
    /// Millions, two decimals.
    Millions,
}

impl Scale {
    /// The scale for amounts whose largest size is `largest`: millions from 1,000,000,
    /// thousands from 10,000, else whole units.
    pub(crate) fn for_largest(largest: Decimal) -> Scale {
        if largest >= Decimal::from(1_000_000) {
            Scale::Millions
        } else if largest >= Decimal::from(10_000) {
            Scale::Thousands
        } else {
            Scale::Ones
        }
    }

    /// The scale of a deal's summary: from the largest flow of any scenario.
    pub fn of(analysis: &Analysis) -> Scale {
        let largest = analysis
            .scenarios
            .iter()
            .flat_map(|s| s.flows.iter().map(|f| f.amount.abs()))
            .max()
            .unwrap_or_default();
        Scale::for_largest(largest)
    }

    fn divisor(self) -> Decimal {
        match self {
            Scale::Ones => Decimal::ONE,
            Scale::Thousands => Decimal::from(1_000),
            Scale::Millions => Decimal::from(1_000_000),
        }
    }

    fn decimals(self) -> u32 {
        match self {
            Scale::Ones => 0,
            Scale::Thousands => 1,
            Scale::Millions => 2,
        }
    }

    /// An amount rounded to this scale with its currency: `EUR −0.13 million`.
    pub(crate) fn amount_in(self, amount: Decimal, currency: &str, style: Style) -> String {
        let word = match self {
            Scale::Ones => "",
            Scale::Thousands => " thousand",
            Scale::Millions => " million",
        };
        format!("{currency} {}{word}", scaled(amount, self, style))
    }

    /// The unit a rounded amount is in: `GBP`, `GBP thousand`, `GBP million`.
    pub fn unit(self, currency: &str) -> String {
        match self {
            Scale::Ones => currency.to_string(),
            Scale::Thousands => format!("{currency} thousand"),
            Scale::Millions => format!("{currency} million"),
        }
    }
}

/// An amount rounded to `scale` (half away from zero), with thousands grouped: at
/// least two significant digits are kept, so a small amount in a large deal does not
/// read as zero. Never `-0`.
pub fn scaled(amount: Decimal, scale: Scale, style: Style) -> String {
    let value = amount / scale.divisor();
    let mut dp = scale.decimals();
    // Two significant digits at least: below 10^(1 - dp) one more decimal.
    while scale != Scale::Ones
        && dp < scale.decimals() + 4
        && !value.is_zero()
        && value.abs() < Decimal::new(1, dp - 1)
    {
        dp += 1;
    }
    let rounded = value.round_dp_with_strategy(dp, RoundingStrategy::MidpointAwayFromZero);
    let text = format!("{:.*}", dp as usize, rounded.abs());
    let (int, frac) = match text.split_once('.') {
        Some((i, f)) => (i.to_string(), format!(".{f}")),
        None => (text.clone(), String::new()),
    };
    let sign = if rounded.is_sign_negative() && !rounded.is_zero() {
        match style {
            Style::Print => "\u{2212}",
            Style::Terminal | Style::Prose => "-",
        }
    } else {
        ""
    };
    format!("{sign}{}{frac}", group_thousands(&int))
}

/// The peak exposure of a scenario's flows (see [`crate::model::flows::peak_exposure`]).
pub fn peak_exposure(flows: &[FlowRow]) -> Option<(Decimal, usize)> {
    crate::model::flows::peak_exposure(flows.iter().map(|f| f.amount))
}

/// When a flow falls: its date, else its period, else its time in years.
pub fn when(flow: &FlowRow) -> String {
    match (&flow.date, flow.period) {
        (Some(d), _) => NaiveDate::parse_from_str(d, "%Y-%m-%d")
            .map(date_long)
            .unwrap_or_else(|_| d.clone()),
        (None, Some(p)) => format!("period {p}"),
        (None, None) => format!("{:.2} years in", flow.years),
    }
}

/// A count in words: `none`, `one`, `two`, ... up to ten, then digits.
pub(crate) fn count_word(n: usize) -> String {
    const WORDS: [&str; 11] = [
        "none", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten",
    ];
    WORDS
        .get(n)
        .map_or_else(|| n.to_string(), |w| (*w).to_string())
}

/// The set of real IRRs in words: `none`, `one: 12.30%`, `two: 5.60% and 15.60%`; a
/// multiple root says so, and an uncertified count says it may be incomplete.
pub(crate) fn irr_set(s: &ScenarioAnalysis, style: Style) -> String {
    let decimals = scenario_rate_decimals(s);
    let rates: Vec<String> = s
        .irr
        .roots
        .iter()
        .map(|r| {
            let mut t = root_rate(r, decimals, style);
            if r.multiplicity > 1 {
                t.push_str(&format!(
                    " ({})",
                    super::words::multiplicity(r.multiplicity)
                ));
            }
            t
        })
        .collect();
    let mut out = if rates.is_empty() {
        "none".to_string()
    } else {
        format!("{}: {}", count_word(rates.len()), join_and(&rates))
    };
    if !s.irr.certified {
        out.push_str(" (the list may be incomplete)");
    }
    out
}

/// "a", "a and b", "a, b and c".
pub(crate) fn join_and(items: &[String]) -> String {
    match items.len() {
        0 => String::new(),
        1 => items[0].clone(),
        n => format!("{} and {}", items[..n - 1].join(", "), items[n - 1]),
    }
}

/// The hurdle rates at which the NPV is above zero, in words, from the certified IRRs
/// and the NPV's sign at the deal's hurdle: the NPV changes sign at each root of odd
/// multiplicity and keeps it at one of even multiplicity (common practice: a real
/// function's sign between consecutive roots).
pub fn hurdle_band(s: &ScenarioAnalysis, style: Style) -> String {
    if !s.irr.certified {
        return "not known: the count of IRRs is not certified".to_string();
    }
    let sign_at_hurdle: i32 = match s.decision {
        Decision::Accept => 1,
        Decision::Reject => -1,
        Decision::Indifferent => {
            return "not shown: the hurdle is itself an IRR".to_string();
        }
    };
    let decimals = scenario_rate_decimals(s);
    let rate = |r: &crate::engine::Root| r.annual_rate.unwrap_or(f64::INFINITY);
    let roots: Vec<&crate::engine::Root> = s.irr.roots.iter().collect();
    // Interval i lies between roots i - 1 and i (interval 0 below the first root).
    let below = roots.iter().filter(|r| rate(r) < s.hurdle_rate).count();
    let flips_between = |a: usize, b: usize| -> usize {
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        roots[lo..hi]
            .iter()
            .filter(|r| r.multiplicity % 2 == 1)
            .count()
    };
    let sign_of = |i: usize| {
        if flips_between(i, below) % 2 == 0 {
            sign_at_hurdle
        } else {
            -sign_at_hurdle
        }
    };
    // Merge neighbouring positive intervals (across even roots) into bands.
    let mut bands: Vec<(Option<usize>, Option<usize>)> = Vec::new();
    let mut open: Option<Option<usize>> = None;
    for i in 0..=roots.len() {
        let positive = sign_of(i) > 0;
        match (positive, open) {
            (true, None) => open = Some(if i == 0 { None } else { Some(i - 1) }),
            (false, Some(start)) => {
                bands.push((start, Some(i - 1)));
                open = None;
            }
            _ => {}
        }
    }
    if let Some(start) = open {
        bands.push((start, None));
    }
    let r = |i: usize| root_rate(roots[i], decimals, style);
    let parts: Vec<String> = bands
        .iter()
        .map(|band| match *band {
            (None, None) => "every hurdle".to_string(),
            (None, Some(hi)) => format!("hurdles below {}", r(hi)),
            (Some(lo), None) => format!("hurdles above {}", r(lo)),
            (Some(lo), Some(hi)) => format!("hurdles between {} and {}", r(lo), r(hi)),
        })
        .collect();
    if parts.is_empty() {
        "no hurdle: the NPV is below zero at every rate".to_string()
    } else {
        join_and(&parts)
    }
}

/// What the NPV rule says at the hurdle: `accept (NPV above zero)`.
pub(crate) fn npv_rule(d: Decision) -> &'static str {
    match d {
        Decision::Accept => "accept (NPV above zero)",
        Decision::Reject => "reject (NPV below zero)",
        Decision::Indifferent => "indifferent (NPV zero)",
    }
}

/// A payback in words: a time in years (periodic flows) or a date (dated flows), "does
/// not pay back within the forecast", or "not applicable" with the reason.
pub(crate) fn payback_words(s: &ScenarioAnalysis, discounted: bool) -> String {
    let p = &s.payback;
    let (status, years, date) = if discounted {
        (p.discounted_status, p.discounted_years, &p.discounted_date)
    } else {
        (p.status, p.simple_years, &p.simple_date)
    };
    match status {
        PaybackStatus::Reached => match (date, years) {
            (Some(d), _) => NaiveDate::parse_from_str(d, "%Y-%m-%d")
                .map(date_long)
                .unwrap_or_else(|_| d.clone()),
            (None, Some(y)) => super::years(y),
            (None, None) => "reached".to_string(),
        },
        PaybackStatus::NotReached => "does not pay back within the forecast".to_string(),
        PaybackStatus::NotApplicable => {
            if s.flows.first().is_some_and(|f| f.amount > Decimal::ZERO) {
                "not applicable: the investor is paid first".to_string()
            } else {
                "not applicable: the investor is never out of pocket".to_string()
            }
        }
    }
}

/// How a payback is placed in time, in words.
pub(crate) fn payback_method(m: PaybackMethod) -> &'static str {
    match m {
        PaybackMethod::WithinPeriod => {
            "when the running total of the flows turns non-negative for good; interpolated \
             within the period of the flow that gets it there"
        }
        PaybackMethod::FlowDate => {
            "the date of the flow after which the running total of the flows stays \
             non-negative; no interpolation between dates"
        }
    }
}

/// The point the NPV is discounted to: the series' start (period 0, or the earliest
/// date), as a date when the flows have dates.
pub(crate) fn valuation_point(s: &ScenarioAnalysis, periodic_start: Option<NaiveDate>) -> String {
    match (s.periods_per_year, periodic_start) {
        (Some(_), Some(start)) => format!("{} (period 0)", date_long(start)),
        (Some(_), None) => "period 0".to_string(),
        (None, _) => s
            .flows
            .iter()
            .find(|f| f.years == 0.0)
            .and_then(|f| f.date.as_deref())
            .and_then(|d| NaiveDate::parse_from_str(d, "%Y-%m-%d").ok())
            .map(|d| format!("{} (the first flow)", date_long(d)))
            .unwrap_or_else(|| "the date of the first flow".to_string()),
    }
}

/// One plain sentence per caution code, for the decision page; the full paragraph with
/// the deal's numbers follows in the detail.
pub fn caution_headline(code: &str) -> &'static str {
    match code {
        "uncertified" => "The list of IRRs may be incomplete; rely on the NPV, which does not depend on it.",
        "one-sign" => "Every flow has the same sign, so there is no rate of return; judge by the NPV.",
        "no-irr" => "No rate makes the NPV zero, so there is no IRR to quote; judge by the NPV.",
        "multiple-irr" => "The flows have several IRRs and none of them alone is the deal's return; judge by the NPV.",
        "double-root" => "The NPV touches zero without crossing it; a small change in the forecast can move the IRRs a lot.",
        "extreme-root" => "An IRR lies far outside any return anyone earns; leave it out of the discussion.",
        "short-first-interval" => "The first two flows are very close together, which inflates an annual rate; check their dates.",
        "net-borrowing" => "At an IRR the deal works as a net borrowing, so a higher rate counts against it, not for it.",
        "mixed-balance" => "At an IRR the balance changes sign, so that rate is not a pure return on capital tied up.",
        "irr-npv-conflict" => "An IRR compared with the hurdle points the other way from the NPV; follow the NPV.",
        "mirr-assumptions" => "The MIRR rests on two assumed rates; quote it only with them.",
        "short-horizon" => "The deal runs for less than a year, so its annual rates exaggerate; judge by the amounts.",
        _ => "See the full text.",
    }
}

/// Which way a recommendation leans, from its opening word: `Some(true)` for a word
/// that asks the committee to commit (approve, accept, invest, fund), `Some(false)` for
/// one that asks it not to (decline, reject, do not, abandon), `None` otherwise (defer,
/// proceed to a further step, a sentence that opens another way).
pub(crate) fn recommendation_leans(text: &str) -> Option<bool> {
    let lower = text.trim_start().to_lowercase();
    let first: String = lower
        .chars()
        .take_while(|c| c.is_alphabetic() || *c == '\'')
        .collect();
    match first.as_str() {
        "approve" | "accept" | "invest" | "fund" => Some(true),
        "decline" | "reject" | "abandon" | "don't" => Some(false),
        "do" if lower.starts_with("do not") => Some(false),
        _ => None,
    }
}

/// A note for the decision page when the recommendation or the committee's decision
/// goes against what the NPV rule says in the base case (the first scenario): its
/// title and its paragraph. The memo never blocks such a decision; it says so.
pub(crate) fn against_figures(
    recommendation: Option<&str>,
    signoff: Option<SignoffDecision>,
    analysis: &Analysis,
    style: Style,
) -> Vec<(String, String)> {
    let Some(base) = analysis.scenarios.first() else {
        return Vec::new();
    };
    let scale = Scale::of(analysis);
    let against_count = |favourable: bool| {
        analysis
            .scenarios
            .iter()
            .filter(|s| {
                if favourable {
                    s.decision == Decision::Reject
                } else {
                    s.decision == Decision::Accept
                }
            })
            .count()
    };
    let npv = |s: &ScenarioAnalysis| match s.npv_at_hurdle {
        Some(v) => scale.amount_in(v, &analysis.currency, style),
        None => super::scenario_npv_in(s, &analysis.currency, style),
    };
    let facts = |favourable: bool| {
        let n = against_count(favourable);
        let total = analysis.scenarios.len();
        let side = if favourable { "below" } else { "above" };
        let base_text = format!(
            "the NPV at the hurdle of {} is {side} zero in the base case ({})",
            percent(base.hurdle_rate, 2, style),
            npv(base)
        );
        let others = if total == 1 {
            String::new()
        } else if n == total {
            " and in every other scenario".to_string()
        } else {
            format!(
                ", and in {} of the {} other scenarios",
                count_word(n - 1),
                count_word(total - 1)
            )
        };
        format!("{base_text}{others}")
    };
    let base_says = match base.decision {
        Decision::Accept => Some(true),
        Decision::Reject => Some(false),
        Decision::Indifferent => None,
    };
    let mut out = Vec::new();
    if let (Some(text), Some(says)) = (recommendation, base_says) {
        if let Some(leans) = recommendation_leans(text) {
            if leans != says {
                let word: String = text
                    .trim_start()
                    .split(|c: char| !(c.is_alphabetic() || c == '\''))
                    .next()
                    .unwrap_or_default()
                    .to_string();
                out.push((
                    "The recommendation goes against the figures".to_string(),
                    format!(
                        "The recommendation opens with \u{201c}{word}\u{201d}, but {}. The memo \
                         prints the recommendation as written and does not block it; the \
                         committee should hear why the figures are set aside.",
                        facts(leans)
                    ),
                ));
            }
        }
    }
    let committee = match signoff {
        Some(SignoffDecision::Approved) => Some(true),
        Some(SignoffDecision::Declined) => Some(false),
        _ => None,
    };
    if let (Some(decided), Some(says)) = (committee, base_says) {
        if decided != says {
            out.push((
                "The committee's decision goes against the figures".to_string(),
                format!(
                    "The committee {} the deal, but {}. The memo records the decision as \
                     given and does not block it; the reasons belong in the minutes.",
                    if decided { "approved" } else { "declined" },
                    facts(decided)
                ),
            ));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{analyse_scenario, Flows};
    use crate::model::Rates;

    /// A scenario analysed by the engine at one hurdle (also the finance and
    /// reinvestment rate).
    fn analysed(amounts: &[&str], hurdle: &str) -> ScenarioAnalysis {
        let flows = Flows::periodic(amounts.iter().map(|a| d(a)), 1);
        let h = d(hurdle);
        let rates = Rates {
            hurdle: h,
            finance: h,
            reinvestment: h,
        };
        analyse_scenario("base", &flows, &rates)
    }

    fn deal_of(scenarios: Vec<ScenarioAnalysis>) -> Analysis {
        Analysis {
            deal: "test".to_string(),
            currency: "EUR".to_string(),
            units: None,
            basis: None,
            scenarios,
        }
    }

    #[test]
    fn hurdle_bands_follow_the_roots_and_the_npv() {
        let p = Style::Prose;
        // The mine (docs/methods.md, Check values): IRRs 3.50% and 19.54%, NPV at 10%
        // = 2.53 > 0, so the NPV is positive between the two IRRs only.
        let mut mine = vec!["-30"];
        mine.extend(["10"; 9]);
        mine.push("-65");
        let s = analysed(&mine, "0.1");
        assert_eq!(hurdle_band(&s, p), "hurdles between 3.50% and 19.54%");
        assert_eq!(irr_set(&s, p), "two: 3.50% and 19.54%");
        // The pump (Lorie and Savage 1955, flows from memory): NPV at 10% = -773.55, IRRs
        // 25% and 400%: positive only between them.
        let s = analysed(&["-1600", "10000", "-10000"], "0.1");
        assert_eq!(hurdle_band(&s, p), "hurdles between 25.00% and 400.00%");
        // No real IRR, NPV positive at every rate (docs/methods.md, Check values).
        let s = analysed(&["1000", "-3000", "2500"], "0.1");
        assert_eq!(hurdle_band(&s, p), "every hurdle");
        assert_eq!(irr_set(&s, p), "none");
        // A conventional deal: -100, then 60 twice, one IRR of 13.07% (the root of
        // 60x^2 + 60x - 100 with x = 1/(1 + r), by the quadratic formula).
        let s = analysed(&["-100", "60", "60"], "0.1");
        assert_eq!(hurdle_band(&s, p), "hurdles below 13.07%");
        // A double root: -100, 220, -121 has NPV = -(10 - 11v)^2 <= 0 everywhere.
        let s = analysed(&["-100", "220", "-121"], "0.05");
        assert_eq!(
            hurdle_band(&s, p),
            "no hurdle: the NPV is below zero at every rate"
        );
        assert_eq!(irr_set(&s, p), "one: 10.00% (double)");
    }

    #[test]
    fn a_decision_against_the_figures_is_noted_and_never_blocked() {
        let p = Style::Prose;
        // Every scenario's NPV at the hurdle below zero: the pump at 10% (-773.55).
        let a = deal_of(vec![analysed(&["-1600", "10000", "-10000"], "0.1")]);
        let notes = against_figures(Some("Approve."), Some(SignoffDecision::Approved), &a, p);
        let says = |notes: &[(String, String)], i: usize, needle: &str| {
            assert!(notes[i].1.contains(needle), "{needle:?} in {}", notes[i].1);
        };
        assert_eq!(notes.len(), 2, "{notes:?}");
        says(&notes, 0, "\u{201c}Approve\u{201d}");
        says(
            &notes,
            0,
            "below zero in the base case (EUR -0.77 thousand)",
        );
        says(&notes, 1, "The committee approved the deal");
        assert!(notes.iter().all(|(_, t)| t.contains("does not block it")));
        // Declining a deal whose NPV is negative agrees with the figures.
        let declined = against_figures(Some("Decline."), Some(SignoffDecision::Declined), &a, p);
        assert!(declined.is_empty());
        // A deferral or a pending decision takes no side.
        assert!(against_figures(Some("Defer."), Some(SignoffDecision::Deferred), &a, p).is_empty());
        // Declining a deal whose NPV is positive in every scenario goes against them.
        let good = deal_of(vec![
            analysed(&["-100", "60", "60"], "0.1"),
            analysed(&["-100", "61", "61"], "0.1"),
        ]);
        let notes = against_figures(None, Some(SignoffDecision::Declined), &good, p);
        assert_eq!(notes.len(), 1);
        says(&notes, 0, "above zero in the base case");
        says(&notes, 0, "and in every other scenario");
    }

    fn d(s: &str) -> Decimal {
        s.parse().expect("decimal")
    }

    #[test]
    fn amounts_round_to_the_scale() {
        assert_eq!(Scale::for_largest(d("8000000")), Scale::Millions);
        assert_eq!(Scale::for_largest(d("433750.80")), Scale::Thousands);
        assert_eq!(Scale::for_largest(d("2500")), Scale::Ones);
        let p = Style::Print;
        assert_eq!(scaled(d("-1184273.51"), Scale::Millions, p), "\u{2212}1.18");
        assert_eq!(scaled(d("433750.80"), Scale::Thousands, p), "433.8");
        assert_eq!(scaled(d("1234567"), Scale::Ones, p), "1,234,567");
        // A small amount in a large deal keeps two significant digits.
        assert_eq!(scaled(d("3456"), Scale::Millions, p), "0.0035");
        assert_eq!(scaled(d("0"), Scale::Millions, p), "0.00");
        assert_eq!(scaled(d("-0.001"), Scale::Ones, p), "0");
        assert_eq!(scaled(d("-0.4"), Scale::Ones, p), "0");
        assert_eq!(
            Scale::Millions.amount_in(d("-126068.74"), "EUR", p),
            "EUR \u{2212}0.13 million"
        );
    }

    #[test]
    fn recommendations_lean_by_their_first_word() {
        assert_eq!(recommendation_leans("Approve."), Some(true));
        assert_eq!(recommendation_leans("Proceed to detailed design"), None);
        assert_eq!(
            recommendation_leans("Accept, with the deposit held"),
            Some(true)
        );
        assert_eq!(recommendation_leans("Do not proceed"), Some(false));
        assert_eq!(recommendation_leans("Decline, sadly"), Some(false));
        assert_eq!(recommendation_leans("Defer until the cost is known"), None);
        assert_eq!(recommendation_leans("Approval is asked"), None);
    }

    #[test]
    fn counts_in_words() {
        assert_eq!(count_word(0), "none");
        assert_eq!(count_word(2), "two");
        assert_eq!(count_word(11), "11");
    }
}
