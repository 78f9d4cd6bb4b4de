//! The caution paragraphs: for each code of the catalogue
//! ([`CODES`](crate::engine::cautions::CODES)) one function that writes its title and
//! paragraph from the facts the engine raised and the
//! scenario's own numbers, for a committee member rather than a mathematician. Each
//! says what is wrong with quoting a single yield and what to rely on instead.
//!
//! The paragraphs are the same text in the terminal, the JSON contract and the memo,
//! so they are written in [`Style::Prose`].

use super::{decimals_to_separate, money_in, npv_in, percent, words, Style};
use crate::engine::cautions::{Caution, CautionFigures};
use crate::engine::{Root, ScenarioAnalysis};
use rust_decimal::Decimal;
use serde::Serialize;

/// A caution as the reader sees it (and as the JSON contract states it).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct CautionText {
    /// Stable code, one of [`CODES`](crate::engine::cautions::CODES).
    pub code: &'static str,
    /// A short title for the caution box.
    pub title: &'static str,
    /// The paragraph, with the deal's own numbers.
    pub text: String,
}

/// The cautions of an analysed scenario, as text.
pub fn scenario_cautions(s: &ScenarioAnalysis, currency: &str) -> Vec<CautionText> {
    let figures = CautionFigures::of(s);
    s.cautions
        .iter()
        .map(|c| caution_text(c, &figures, currency))
        .collect()
}

/// One caution's title and paragraph.
pub(crate) fn caution_text(c: &Caution, f: &CautionFigures, currency: &str) -> CautionText {
    let w = Wording::new(f, currency);
    let (title, text) = match c {
        Caution::Uncertified => uncertified(&w, f),
        Caution::OneSign => one_sign(&w, f),
        Caution::NoIrr => no_irr(&w, f),
        Caution::MultipleIrr => multiple_irr(&w, f),
        Caution::DoubleRoot { root } => double_root(&w, &f.roots[*root]),
        Caution::ExtremeRoot { roots } => extreme_root(&w, f, roots),
        Caution::ShortFirstInterval {
            first_interval_years,
            roots,
        } => short_first_interval(&w, *first_interval_years, roots),
        Caution::NetBorrowing {
            roots,
            above_hurdle,
        } => net_borrowing(&w, roots, above_hurdle),
        Caution::MixedBalance { roots } => mixed_balance(&w, roots),
        Caution::IrrNpvConflict { roots } => irr_npv_conflict(&w, roots),
        Caution::MirrAssumptions { reinvestment_range } => {
            mirr_assumptions(&w, f, *reinvestment_range)
        }
        Caution::ShortHorizon => short_horizon(&w, f),
        Caution::TerminalSpread {
            label,
            discount,
            growth,
            value,
        } => terminal_spread(&w, label, (*discount, *growth), *value),
        Caution::RealAmountsNominalRates => real_amounts_nominal_rates(&w),
    };
    // A later release words its paragraphs differently (see `crate::release`).
    let text = if crate::release::simulating_next_release() {
        format!("In other words: {text}")
    } else {
        text
    };
    CautionText {
        code: c.code(),
        title,
        text,
    }
}

fn uncertified(w: &Wording, f: &CautionFigures) -> (&'static str, String) {
    let where_ = if f.unresolved.is_empty() {
        "somewhere in the range of rates it searched".to_string()
    } else {
        let parts: Vec<String> = f
            .unresolved
            .iter()
            .map(|iv| format!("between {} and {}", w.rate(iv[0]), w.rate(iv[1])))
            .collect();
        join_and(&parts)
    };
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "The list of IRRs may be incomplete",
        format!(
            "The engine could not prove that it found every IRR of this deal. It could not \
             rule out further IRRs {where_}. Treat the IRRs shown as possibly incomplete. \
             The NPV at the hurdle rate of {h} is {npv}; it does not depend on finding \
             every IRR, so rely on it."
        ),
    )
}

fn one_sign(w: &Wording, f: &CautionFigures) -> (&'static str, String) {
    let (kind, direction) = if f.net > Decimal::ZERO {
        ("inflow", "receives")
    } else {
        ("outflow", "pays")
    };
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "No rate of return exists",
        format!(
            "Every cash flow of this deal is an {kind}: the investor only {direction} \
             money, {} in all. A rate of return needs money going out and coming back, so \
             there is no IRR and no MIRR to quote. Judge the deal by its NPV at the hurdle \
             rate of {h}, which is {npv}.",
            w.money(f.net.abs())
        ),
    )
}

fn no_irr(w: &Wording, f: &CautionFigures) -> (&'static str, String) {
    let npv_sign = f.npv_sign();
    let everywhere = if f.certified && npv_sign != 0 {
        format!(
            " Because no rate makes it zero, the NPV is {} at every discount rate, not \
             only at the hurdle.",
            if npv_sign > 0 { "positive" } else { "negative" }
        )
    } else {
        String::new()
    };
    let complex = match f.complex_reading {
        Some(c) => format!(
            " A reading through complex rates (Hazen's method) gives a rate whose real \
             part is {}, and at the hurdle the deal acts as a net {}. That reading also \
             says {}, in line with the NPV.",
            w.rate(c.real_rate),
            words::stance_noun(c.stance),
            words::decision_verb(c.decision)
        ),
        None => String::new(),
    };
    let (h, npv, npv_says) = (&w.hurdle, &w.npv, w.npv_says);
    (
        "This deal has no IRR",
        format!(
            "No discount rate makes the NPV of this deal zero, so it has no IRR. Do not \
             quote one. The NPV at the hurdle rate of {h} is {npv}: the deal {npv_says} at \
             that hurdle.{everywhere}{complex}"
        ),
    )
}

fn multiple_irr(w: &Wording, f: &CautionFigures) -> (&'static str, String) {
    let counted: u32 = f.roots.iter().map(|r| r.multiplicity).sum();
    let list: Vec<String> = f.roots.iter().map(|r| w.root(r)).collect();
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "Several IRRs",
        format!(
            "This deal has {counted} IRRs: {}. Each of them makes the NPV zero, and none \
             of them is the return of the deal. Do not quote any one of them on its own or \
             compare it with the hurdle by itself. Rely on the NPV at the hurdle rate of \
             {h}, which is {npv}, and on whether the deal is a net investment or a net \
             borrowing at each rate (shown with the IRRs).",
            join_and(&list)
        ),
    )
}

fn double_root(w: &Wording, r: &Root) -> (&'static str, String) {
    let x = w.root(r);
    let m = r.multiplicity;
    let counts = if m == 2 {
        "a double IRR".to_string()
    } else {
        format!("{m} equal IRRs")
    };
    let (h, npv, npv_says) = (&w.hurdle, &w.npv, w.npv_says);
    let text = if m.is_multiple_of(2) {
        format!(
            "At {x} the NPV falls to zero and turns back without changing sign; the rate \
             counts as {counts}. On both sides of {x} the NPV has the same sign, so \
             this rate does not separate acceptable hurdles from unacceptable ones. A \
             small change in the forecast can turn it into two IRRs or into none. The NPV \
             at the hurdle rate of {h} is {npv}: the deal {npv_says} at that hurdle."
        )
    } else {
        format!(
            "At {x} the NPV flattens out as it crosses zero; the rate counts as \
             {counts}. A small change in the forecast can split it into several IRRs. The NPV \
             at the hurdle rate of {h} is {npv}: the deal {npv_says} at that hurdle."
        )
    };
    ("The NPV touches zero without crossing", text)
}

fn extreme_root(w: &Wording, f: &CautionFigures, roots: &[usize]) -> (&'static str, String) {
    let list: Vec<String> = roots
        .iter()
        .map(|&i| {
            let r = &f.roots[i];
            let kind = if r.log10_annual_growth < 0.0 {
                "close to -100%, the loss of everything"
            } else {
                "astronomically large"
            };
            format!("{} ({kind})", w.root(r))
        })
        .collect();
    let (of, them) = if roots.len() == 1 {
        (
            "The IRR of",
            "is a solution of the arithmetic, not a return anyone could earn. Leave it",
        )
    } else {
        (
            "The IRRs of",
            "are solutions of the arithmetic, not returns anyone could earn. Leave them",
        )
    };
    let others = f.roots.iter().any(|r| !r.extreme);
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "An IRR with no economic meaning",
        format!(
            "{of} {} {them} out of the discussion and use the NPV at the hurdle rate of \
             {h}, which is {npv}{}.",
            join_and(&list),
            if others {
                ", together with the other IRRs"
            } else {
                ""
            }
        ),
    )
}

fn short_first_interval(w: &Wording, first: f64, roots: &[usize]) -> (&'static str, String) {
    let days = first * 365.0;
    let gap = if days < 1.5 {
        "one day".to_string()
    } else {
        format!("about {} days", days.round() as i64)
    };
    (
        "A very short first interval",
        format!(
            "The first two cash flows are only {gap} apart. An annual rate compounds \
             what happens in that short time as if it repeated all year, which is why \
             an IRR of {} appears. Check the dates of the first flows. If they are \
             right, do not read that rate as a return.",
            w.roots(roots)
        ),
    )
}

fn net_borrowing(w: &Wording, roots: &[usize], above: &[usize]) -> (&'static str, String) {
    let h = &w.hurdle;
    let tail = match above {
        [] => format!(
            "Here {} below the hurdle of {h}, which counts in the deal's favour.",
            if roots.len() == 1 {
                "the IRR is"
            } else {
                "the IRRs are"
            }
        ),
        [one] => format!(
            "So an IRR of {} above the hurdle of {h} counts against the deal, not for it.",
            w.root(&w.all[*one])
        ),
        several => format!(
            "So IRRs of {} above the hurdle of {h} count against the deal, not for it.",
            w.roots(several)
        ),
    };
    // The balance table's sign convention: a negative balance is money the project
    // still owes the investor, a positive one money the investor in effect owes the
    // project (docs/methods.md, "Balance paths").
    let first_flow = roots
        .first()
        .and_then(|&i| w.all[i].balance_path.first())
        .map(|row| row.flow);
    let who_first = match first_flow {
        Some(f) if f > Decimal::ZERO => {
            "The investor takes in money first and pays it back later.".to_string()
        }
        _ => "This holds even though the investor pays the first flow: money received \
              before the later outlays is, in effect, held on credit until they are paid."
            .to_string(),
    };
    (
        "The deal is a net borrowing",
        format!(
            "At the {} of {}, the deal works as a net borrowing at the hurdle rate: in the \
             balance table at {}, the positive balances (money the investor in effect \
             owes the project) outweigh the negative ones (money the project owes the \
             investor) once discounted at the hurdle. {who_first} For a borrower a higher \
             rate is worse, not better. {tail}",
            if roots.len() == 1 { "IRR" } else { "IRRs" },
            w.roots(roots),
            if roots.len() == 1 {
                "that rate"
            } else {
                "each of those rates"
            }
        ),
    )
}

fn mixed_balance(w: &Wording, roots: &[usize]) -> (&'static str, String) {
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "The balance changes sign",
        format!(
            "At {}, the running balance of the deal changes sign. At some times the \
             investor has money tied up in the project; at others the project has in \
             effect lent money to the investor. The rate is therefore not a pure return \
             on capital tied up. Read it with the balance table, and rely on the NPV at \
             the hurdle rate of {h}, which is {npv}.",
            w.roots(roots)
        ),
    )
}

fn irr_npv_conflict(w: &Wording, roots: &[usize]) -> (&'static str, String) {
    // All conflicting IRRs lie on one side of the hurdle: the side opposite the NPV.
    let npv_positive = w.npv_sign > 0;
    let side = if npv_positive { "below" } else { "above" };
    let subject = match roots {
        [one] => format!("The IRR of {} is {side}", w.root(&w.all[*one])),
        several => format!("The IRRs of {} are {side}", w.roots(several)),
    };
    let (h, npv, npv_says) = (&w.hurdle, &w.npv, w.npv_says);
    (
        "IRR and NPV point different ways",
        format!(
            "{subject} the hurdle rate of {h}, which on the usual reading would mean \
             {}. But the NPV at the hurdle is {npv}: the deal {npv_says}. When the two \
             disagree, follow the NPV. Such an IRR does not measure a return on money \
             invested.",
            if npv_positive {
                "rejecting the deal"
            } else {
                "accepting the deal"
            }
        ),
    )
}

fn mirr_assumptions(
    w: &Wording,
    f: &CautionFigures,
    range: Option<(f64, f64)>,
) -> (&'static str, String) {
    let range = match range {
        Some((lo, hi)) => format!(
            " With the reinvestment rate two points lower ({}) the MIRR would be {}; \
             two points higher ({}), {}.",
            w.rate(f.reinvestment - 0.02),
            w.rate(lo),
            w.rate(f.reinvestment + 0.02),
            w.rate(hi)
        ),
        None => String::new(),
    };
    (
        "The MIRR rests on two assumed rates",
        format!(
            "The MIRR of {} assumes that money paid out is financed at {} and that \
             money received is reinvested at {} until the last flow, {} from the \
             start of the deal. Those two rates are choices, not forecasts of this deal.{range} \
             Quote the MIRR only together with the two rates it assumes.",
            f.mirr.map_or_else(String::new, |m| w.rate(m)),
            w.rate(f.finance),
            w.rate(f.reinvestment),
            years_phrase(f.horizon_years)
        ),
    )
}

fn short_horizon(w: &Wording, f: &CautionFigures) -> (&'static str, String) {
    let span = years_phrase(f.horizon_years);
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "A horizon under one year",
        format!(
            "The deal runs for {span}. Its rates are annual: a gain or loss over so \
             short a time is compounded as if it went on all year, so the IRR and MIRR look far \
             larger (or worse) than the money involved. Judge it by the amounts and by \
             the NPV at the hurdle rate of {h}, which is {npv}."
        ),
    )
}

fn terminal_spread(
    w: &Wording,
    label: &str,
    (discount, growth): (Decimal, Decimal),
    value: Decimal,
) -> (&'static str, String) {
    use rust_decimal::prelude::ToPrimitive;
    let spread = discount - growth;
    let point = Decimal::new(1, 2);
    // The growing perpetuity C / (r - g): one point more on r scales it by
    // (r - g) / (r - g + 0.01).
    let higher = (value * spread / (spread + point)).round_dp(2);
    let rate = |r: Decimal| w.rate(r.to_f64().unwrap_or(0.0));
    (
        "A terminal value close to its growth rate",
        format!(
            "The line {label} ends in a terminal value of {}: a flow growing for ever at {} \
             a year, discounted at {}, only {} apart. So close, a small change in either rate \
             moves the value a great deal: with the discount rate one point higher it would \
             be {}. Test the growth and the discount rate in scenarios before relying on \
             this value.",
            w.money(value),
            rate(growth),
            rate(discount),
            rate(spread),
            w.money(higher)
        ),
    )
}

fn real_amounts_nominal_rates(w: &Wording) -> (&'static str, String) {
    let (h, npv) = (&w.hurdle, &w.npv);
    (
        "Real amounts, rates not said to be real",
        format!(
            "The deal states its amounts in real terms (inflation removed) but does not \
             say that its hurdle rate of {h} is a real rate. Discounting real amounts at a \
             rate that includes inflation understates their value, and the NPV of {npv} \
             and the decision rest on that rate. If the rates are real, say so in the deal \
             (`basis: {{ rates: real }}`); if not, state the hurdle rate without inflation."
        ),
    )
}

/// "a", "a and b", "a, b and c".
fn join_and(items: &[String]) -> String {
    match items.len() {
        0 => String::new(),
        1 => items[0].clone(),
        n => format!("{} and {}", items[..n - 1].join(", "), items[n - 1]),
    }
}

/// A span of time in words: days under a month, months under a year, else years.
pub(crate) fn years_phrase(y: f64) -> String {
    let days = (y * 365.0).round() as i64;
    if y < 1.0 / 12.0 - 1e-9 {
        if days <= 1 {
            "one day".to_string()
        } else {
            format!("about {days} days")
        }
    } else if y < 1.0 - 1e-9 {
        let months = trimmed(y * 12.0, 1);
        if months == "1" {
            "about one month".to_string()
        } else {
            format!("about {months} months")
        }
    } else if (y - 1.0).abs() < 1e-9 {
        "one year".to_string()
    } else {
        format!("{} years", trimmed(y, 2))
    }
}

/// A number with at most `dec` decimals, trailing zeros dropped.
fn trimmed(x: f64, dec: usize) -> String {
    let s = format!("{x:.dec$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// How one scenario's cautions state their numbers: rates with two decimals, or more
/// when two different rates (roots or the hurdle) would otherwise read the same; the
/// phrases every paragraph repeats (the hurdle, the NPV and what it says).
struct Wording<'a> {
    currency: &'a str,
    decimals: usize,
    all: &'a [Root],
    hurdle: String,
    npv: String,
    npv_sign: i8,
    npv_says: &'static str,
}

impl<'a> Wording<'a> {
    fn new(f: &'a CautionFigures, currency: &'a str) -> Wording<'a> {
        let mut rates: Vec<f64> = f
            .roots
            .iter()
            .filter_map(|r| r.annual_rate)
            .filter(|r| r.abs() < 1e4)
            .collect();
        rates.push(f.hurdle);
        let npv_sign = f.npv_sign();
        let mut w = Wording {
            currency,
            decimals: decimals_to_separate(&rates, Style::Prose, 2..=6),
            all: f.roots,
            hurdle: String::new(),
            npv: match f.npv_at_hurdle {
                Some(c) => money_in(c, currency, Style::Prose),
                None => npv_in(
                    None,
                    f.npv_at_hurdle_approx.as_ref(),
                    currency,
                    Style::Prose,
                ),
            },
            npv_sign,
            npv_says: match npv_sign {
                1 => "adds value",
                -1 => "destroys value",
                _ => "breaks even",
            },
        };
        w.hurdle = w.rate(f.hurdle);
        w
    }

    fn rate(&self, r: f64) -> String {
        if r.is_finite() && r.abs() < 1e4 {
            percent(r, self.decimals, Style::Prose)
        } else if r.is_finite() && r > 0.0 {
            format!("about 10^{}%", (r.log10() + 2.0).floor() as i64)
        } else if r == f64::INFINITY {
            "an unboundedly large rate".to_string()
        } else {
            "no meaningful rate".to_string()
        }
    }

    /// A root's rate, with words where digits would mislead.
    fn root(&self, r: &Root) -> String {
        match r.annual_rate {
            Some(k) if k.abs() < 1e4 => {
                let s = self.rate(k);
                if k > -1.0 && s.starts_with("-100.") {
                    // Digits would round a rate just above -100% to -100% itself.
                    let mut d = self.decimals;
                    while d < 12 && percent(k, d, Style::Prose).starts_with("-100.") {
                        d += 1;
                    }
                    if d < 12 {
                        percent(k, d, Style::Prose)
                    } else {
                        "a rate just above -100%".to_string()
                    }
                } else {
                    s
                }
            }
            _ => {
                // 1 + r = 10^L, so r is about 10^L and r in percent about 10^(L + 2).
                let e = (r.log10_annual_growth + 2.0).floor() as i64;
                format!("about 10^{e}%")
            }
        }
    }

    /// The rates of the roots with these indices, joined with "and".
    fn roots(&self, indices: &[usize]) -> String {
        let list: Vec<String> = indices.iter().map(|&i| self.root(&self.all[i])).collect();
        join_and(&list)
    }

    fn money(&self, d: Decimal) -> String {
        money_in(d, self.currency, Style::Prose)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::cautions::{cautions, CautionInput, CODES};
    use crate::engine::complex::complex_reading;
    use crate::engine::figures::tests::{lorie_savage, mine, no_real_irr, periodic};
    use crate::engine::figures::{
        balance_kind, balance_path, decision_for_root, mirr, npv_exact, stance,
    };
    use crate::engine::flows::Flows;
    use crate::engine::ComplexReading;
    use rust_decimal::prelude::FromPrimitive;

    /// A root of `flows` at annual rate `k`, classified by the figures module.
    fn root(flows: &Flows, k: f64, multiplicity: u32, hurdle: f64) -> Root {
        root_at_growth(flows, k.ln_1p(), multiplicity, hurdle)
    }

    /// The same from `g = ln(1 + k)`, which stays finite for astronomically large rates.
    fn root_at_growth(flows: &Flows, g: f64, multiplicity: u32, hurdle: f64) -> Root {
        let k = g.exp_m1();
        let path = balance_path(flows, g);
        let s = stance(flows, g, hurdle);
        Root {
            annual_rate: k.is_finite().then_some(k),
            periodic_rate: k.is_finite().then_some(k),
            log10_annual_growth: g / std::f64::consts::LN_10,
            multiplicity,
            interval: k.is_finite().then_some([k, k]),
            log10_interval: [g / std::f64::consts::LN_10; 2],
            balance_kind: balance_kind(&path),
            stance: s,
            decision: decision_for_root(k, hurdle, s),
            extreme: false,
            balance_path: path,
        }
    }

    /// Everything the cautions need for a series, with the figures computed here and the
    /// IRRs supplied from the check values of docs/methods.md.
    struct Case {
        flows: Flows,
        roots: Vec<Root>,
        hurdle: f64,
        reading: Option<ComplexReading>,
        certified: bool,
        unresolved: Vec<[f64; 2]>,
    }

    impl Case {
        fn new(flows: Flows, roots: &[(f64, u32)], hurdle: f64) -> Case {
            let rs = roots
                .iter()
                .map(|&(k, m)| root(&flows, k, m, hurdle))
                .collect::<Vec<_>>();
            let reading = if rs.is_empty() {
                complex_reading(&flows, hurdle)
            } else {
                None
            };
            Case {
                flows,
                roots: rs,
                hurdle,
                reading,
                certified: true,
                unresolved: Vec::new(),
            }
        }

        fn run(&self) -> Vec<CautionText> {
            let f = &self.flows;
            let h = self.hurdle;
            let pos = f.points.iter().any(|p| p.amount > Decimal::ZERO);
            let neg = f.points.iter().any(|p| p.amount < Decimal::ZERO);
            let n = f.points.len();
            let input = CautionInput {
                figures: CautionFigures {
                    hurdle: h,
                    finance: h,
                    reinvestment: h,
                    roots: &self.roots,
                    certified: self.certified,
                    unresolved: &self.unresolved,
                    npv_at_hurdle: npv_exact(f, Decimal::from_f64(h).unwrap()),
                    npv_at_hurdle_approx: None,
                    mirr: mirr(f, h, h),
                    horizon_years: f.years(n - 1),
                    net: f.points.iter().map(|p| p.amount).sum(),
                    complex_reading: self.reading.as_ref(),
                },
                mirr_reinvest_range: Some((mirr(f, h, h - 0.02), mirr(f, h, h + 0.02))),
                first_interval_years: (n >= 2).then(|| f.years(1) - f.years(0)),
                one_sign: !(pos && neg),
            };
            cautions(&input)
                .iter()
                .map(|c| caution_text(c, &input.figures, "EUR"))
                .collect()
        }
    }

    fn codes(c: &[CautionText]) -> Vec<&str> {
        c.iter().map(|x| x.code).collect()
    }

    fn render(c: &[CautionText]) -> String {
        c.iter()
            .map(|x| format!("[{}] {}\n{}\n", x.code, x.title, x.text))
            .collect::<Vec<_>>()
            .join("\n")
    }

    /// A conventional deal: -1000 then 300 a year for five years; one IRR, pure
    /// investment (its IRR 15.2382% solved here by bisection on the NPV).
    fn plain() -> Case {
        let f = periodic(&["-1000", "300", "300", "300", "300", "300"], 1);
        let (mut lo, mut hi) = (0.0f64, 1.0f64);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if crate::engine::figures::npv_f64(&f, mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Case::new(f, &[(lo, 1)], 0.1)
    }

    #[test]
    fn plain_deal_has_no_cautions() {
        let c = plain().run();
        assert!(c.is_empty(), "{}", render(&c));
    }

    /// Each definition the memo prints beside a balance table agrees with the table's
    /// sign convention (a negative balance is money the project still owes the
    /// investor), checked on paths whose signs can be read from the numbers.
    #[test]
    fn balance_definitions_agree_with_the_tables() {
        use crate::engine::BalanceKind;
        // -1000, then 300 a year for five years, at its IRR: every balance before the
        // last is negative (the project owes the investor).
        let case = plain();
        let r = &case.roots[0];
        assert_eq!(r.balance_kind, BalanceKind::PureInvestment);
        let before_last = &r.balance_path[..r.balance_path.len() - 1];
        assert!(before_last.iter().all(|b| b.balance < Decimal::ZERO));
        let text = words::balance_kind_explained(r.balance_kind);
        assert!(text.contains("zero or negative"), "{text}");
        assert!(text.contains("the project owes the investor"), "{text}");
        assert!(!text.contains("never owes the investor"), "{text}");
        // 1000 received, 1100 paid a year later, at its IRR of 10%: the balance of 1000
        // before the last flow is positive (the investor owes the project).
        let f = periodic(&["1000", "-1100"], 1);
        let b = root(&f, 0.1, 1, 0.05);
        assert_eq!(b.balance_kind, BalanceKind::PureBorrowing);
        assert!(b.balance_path[0].balance > Decimal::ZERO);
        let text = words::balance_kind_explained(b.balance_kind);
        assert!(text.contains("zero or positive"), "{text}");
        assert!(text.contains("the investor owes the project"), "{text}");
        // The pump at 25%: -1600, then +8000, then 0: both signs.
        let p = root(&lorie_savage(), 0.25, 1, 0.1);
        assert_eq!(p.balance_kind, BalanceKind::Mixed);
        let text = words::balance_kind_explained(p.balance_kind);
        assert!(text.contains("changes sign"), "{text}");
    }

    /// The mixed-balance caution's claim (the balance is at times owed by the project,
    /// at others by the investor) holds in the balance path it names, and the
    /// IRR-NPV conflict names the side of the hurdle the IRRs are on.
    #[test]
    fn mixed_balance_and_conflict_claims_hold_in_the_numbers() {
        // The mine (docs/methods.md, Check values): IRRs 3.50% and 19.54%, NPV at 10%
        // = 2.53 > 0.
        let case = Case::new(mine(), &[(0.03503024, 1), (0.19542150, 1)], 0.1);
        let c = case.run();
        let mixed = c
            .iter()
            .find(|x| x.code == "mixed-balance")
            .expect("raised");
        let named: Vec<&Root> = case
            .roots
            .iter()
            .filter(|r| {
                mixed
                    .text
                    .contains(&percent(r.annual_rate.unwrap(), 2, Style::Prose))
            })
            .collect();
        assert!(!named.is_empty(), "{}", mixed.text);
        for r in named {
            let path = &r.balance_path[..r.balance_path.len() - 1];
            assert!(
                path.iter().any(|b| b.balance < Decimal::ZERO),
                "{}",
                mixed.text
            );
            assert!(
                path.iter().any(|b| b.balance > Decimal::ZERO),
                "{}",
                mixed.text
            );
        }
        let conflict = c
            .iter()
            .find(|x| x.code == "irr-npv-conflict")
            .expect("raised");
        // 3.50% is below the 10% hurdle while the NPV is positive.
        assert!(
            conflict.text.contains("The IRR of 3.50% is below"),
            "{}",
            conflict.text
        );
        assert!(conflict.text.contains("EUR 2.53"), "{}", conflict.text);
        assert!(conflict.text.contains("adds value"), "{}", conflict.text);
    }

    /// The net-borrowing caution says who pays first as the deal's own flows do.
    #[test]
    fn net_borrowing_says_who_pays_first_as_the_flows_do() {
        // The pump (Lorie and Savage 1955, flows from memory) opens with an outlay of
        // 1,600 by the investor.
        let c = Case::new(lorie_savage(), &[(0.25, 1), (4.0, 1)], 0.1).run();
        let nb = c
            .iter()
            .find(|x| x.code == "net-borrowing")
            .expect("raised");
        assert!(!nb.text.contains("takes in money first"), "{}", nb.text);
        assert!(nb.text.contains("pays the first flow"), "{}", nb.text);
        assert!(nb.text.contains("positive balances"), "{}", nb.text);
        // 1000 received, then 1100 paid: the investor takes in money first; at a 5%
        // hurdle the IRR of 10% is a borrowing rate above the hurdle.
        let c = Case::new(periodic(&["1000", "-1100"], 1), &[(0.1, 1)], 0.05).run();
        let nb = c
            .iter()
            .find(|x| x.code == "net-borrowing")
            .expect("raised");
        assert!(nb.text.contains("takes in money first"), "{}", nb.text);
        assert!(!nb.text.contains("pays the first flow"), "{}", nb.text);
    }

    #[test]
    fn lorie_savage_cautions() {
        // Lorie & Savage 1955 [flows from memory; values computed]: IRRs 25% and 400%.
        let c = Case::new(lorie_savage(), &[(0.25, 1), (4.0, 1)], 0.1).run();
        let k = codes(&c);
        for code in [
            "multiple-irr",
            "net-borrowing",
            "mixed-balance",
            "irr-npv-conflict",
            "mirr-assumptions",
        ] {
            assert!(k.contains(&code), "{code} missing: {k:?}");
        }
        assert!(!k.contains(&"no-irr") && !k.contains(&"double-root"));
        let text = render(&c);
        assert!(text.contains("25.00% and 400.00%"));
        assert!(text.contains("EUR -773.55"));
        insta::assert_snapshot!("lorie_savage", text);
    }

    #[test]
    fn mine_cautions() {
        // corporate-finance textbook mine example [memory]: IRRs 3.503024% and 19.542150%.
        let c = Case::new(mine(), &[(0.03503024, 1), (0.19542150, 1)], 0.1).run();
        let k = codes(&c);
        assert!(
            k.contains(&"multiple-irr") && k.contains(&"irr-npv-conflict"),
            "{k:?}"
        );
        let text = render(&c);
        assert!(text.contains("3.50% and 19.54%"));
        insta::assert_snapshot!("mine", text);
    }

    #[test]
    fn no_irr_cautions() {
        // corporate-finance textbook example [memory]: no real IRR, NPV > 0 everywhere.
        let c = Case::new(no_real_irr(), &[], 0.1).run();
        assert_eq!(codes(&c), vec!["no-irr", "mirr-assumptions"]);
        assert!(c[0].text.contains("EUR 338.84"));
        assert!(c[0].text.contains("positive at every discount rate"));
        assert!(c[0].text.contains("50.00%"));
        insta::assert_snapshot!("no_irr", render(&c));
    }

    #[test]
    fn double_root_cautions() {
        // -100, 220, -121: one IRR, 10%, multiplicity 2 (docs/methods.md, Check values;
        // computed).
        let c = Case::new(periodic(&["-100", "220", "-121"], 1), &[(0.1, 2)], 0.08).run();
        assert!(codes(&c).contains(&"double-root"));
        assert!(!codes(&c).contains(&"multiple-irr"));
        insta::assert_snapshot!("double_root", render(&c));
    }

    #[test]
    fn one_sign_caution() {
        let c = Case::new(periodic(&["100", "250.5"], 1), &[], 0.1).run();
        assert_eq!(codes(&c)[0], "one-sign");
        assert!(!codes(&c).contains(&"no-irr"));
        assert!(c[0].text.contains("EUR 350.50"));
    }

    #[test]
    fn extreme_and_short_interval() {
        // -1000 today and +2000 a day later: the one IRR is 2^365 - 1 a year (arithmetic).
        let f = Flows {
            points: vec![
                crate::engine::flows::FlowPoint {
                    offset: 0,
                    amount: Decimal::from(-1000),
                    date: None,
                    period: None,
                    note: None,
                },
                crate::engine::flows::FlowPoint {
                    offset: 1,
                    amount: Decimal::from(2000),
                    date: None,
                    period: None,
                    note: None,
                },
            ],
            units_per_year: 365,
            periods_per_year: None,
        };
        let mut case = Case::new(f, &[], 0.1);
        let g = 365.0 * 2f64.ln();
        let mut r = root_at_growth(&case.flows, g, 1, 0.1);
        r.extreme = true;
        case.roots = vec![r];
        case.reading = None;
        let c = case.run();
        let k = codes(&c);
        assert!(
            k.contains(&"extreme-root") && k.contains(&"short-first-interval"),
            "{k:?}"
        );
        assert!(k.contains(&"short-horizon"));
        let text = render(&c);
        assert!(text.contains("10^111%"), "{text}");
        assert!(text.contains("one day"));
        insta::assert_snapshot!("extreme_short", text);
    }

    #[test]
    fn uncertified_names_the_interval() {
        let mut case = plain();
        case.certified = false;
        case.unresolved = vec![[0.5, 0.75]];
        let c = case.run();
        assert_eq!(codes(&c)[0], "uncertified");
        assert!(c[0].text.contains("between 50.00% and 75.00%"));
        // An uncertified deal is not plain, so the MIRR caution joins it.
        assert!(codes(&c).contains(&"mirr-assumptions"));
    }

    #[test]
    fn short_horizon_on_its_own() {
        // Monthly: -1000 then 1030 three months later.
        let f = periodic(&["-1000", "0", "0", "1030"], 12);
        let k = 1.03f64.powi(4) - 1.0;
        let c = Case::new(f, &[(k, 1)], 0.1).run();
        assert_eq!(codes(&c), vec!["short-horizon"]);
        assert!(c[0].text.contains("about 3 months"));
        assert_eq!(years_phrase(1.0 / 365.0), "one day");
        assert_eq!(years_phrase(10.0 / 365.0), "about 10 days");
        assert_eq!(years_phrase(2.5), "2.5 years");
    }

    #[test]
    fn more_decimals_when_roots_would_collide() {
        let f = periodic(&["-100", "220", "-121"], 1);
        let case = Case::new(f, &[(0.100001, 1), (0.100004, 1)], 0.05);
        let c = case.run();
        let text = render(&c);
        assert!(text.contains("10.0001% and 10.0004%"), "{text}");
    }

    #[test]
    fn number_formats() {
        let roots: Vec<Root> = Vec::new();
        let figures = CautionFigures {
            hurdle: 0.1,
            finance: 0.1,
            reinvestment: 0.1,
            roots: &roots,
            certified: true,
            unresolved: &[],
            npv_at_hurdle: Some(Decimal::ZERO),
            npv_at_hurdle_approx: None,
            mirr: None,
            horizon_years: 2.0,
            net: Decimal::ZERO,
            complex_reading: None,
        };
        let w = Wording::new(&figures, "CHF");
        assert_eq!(w.money(Decimal::new(-123456789, 2)), "CHF -1,234,567.89");
        assert_eq!(w.money(Decimal::new(-1, 3)), "CHF 0.00");
        assert_eq!(w.rate(12.3456), "1,234.56%");
        assert_eq!(w.rate(-0.0000001), "0.00%");
    }

    #[test]
    fn every_code_of_the_catalogue_is_written_in_order() {
        // The catalogue's order is the order cautions are listed (docs/design.md).
        let all = [
            Caution::Uncertified,
            Caution::OneSign,
            Caution::NoIrr,
            Caution::MultipleIrr,
            Caution::DoubleRoot { root: 0 },
            Caution::ExtremeRoot { roots: vec![0] },
            Caution::ShortFirstInterval {
                first_interval_years: 0.01,
                roots: vec![0],
            },
            Caution::NetBorrowing {
                roots: vec![0],
                above_hurdle: vec![],
            },
            Caution::MixedBalance { roots: vec![0] },
            Caution::IrrNpvConflict { roots: vec![0] },
            Caution::MirrAssumptions {
                reinvestment_range: None,
            },
            Caution::ShortHorizon,
            Caution::TerminalSpread {
                label: "Residual value".to_string(),
                discount: Decimal::new(8, 2),
                growth: Decimal::new(65, 3),
                value: Decimal::from(100_000_000),
            },
            Caution::RealAmountsNominalRates,
        ];
        let case = plain();
        let f = &case.flows;
        let figures = CautionFigures {
            hurdle: 0.1,
            finance: 0.1,
            reinvestment: 0.1,
            roots: &case.roots,
            certified: true,
            unresolved: &[],
            npv_at_hurdle: npv_exact(f, Decimal::new(1, 1)),
            npv_at_hurdle_approx: None,
            mirr: mirr(f, 0.1, 0.1),
            horizon_years: 5.0,
            net: Decimal::from(500),
            complex_reading: None,
        };
        let texts: Vec<CautionText> = all
            .iter()
            .map(|c| caution_text(c, &figures, "EUR"))
            .collect();
        assert_eq!(codes(&texts), CODES.to_vec());
        assert!(texts
            .iter()
            .all(|t| !t.title.is_empty() && t.text.ends_with('.')));
    }
}
