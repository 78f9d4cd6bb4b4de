//! The cautions: a catalogue of stable codes, each turned into a short paragraph with
//! the deal's own numbers, written for a committee member rather than a mathematician.
//! Each says what is wrong with quoting a single yield and what to rely on instead.

use super::analysis::{ApproxAmount, BalanceKind, Caution, ComplexReading, Decision, Root, Stance};
use rust_decimal::{Decimal, RoundingStrategy};

/// Every caution code, in the order cautions are listed.
pub const CODES: [&str; 12] = [
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
];

/// What the cautions are generated from: the figures of one scenario.
#[derive(Debug, Clone)]
pub struct CautionInput<'a> {
    /// ISO 4217 currency code, printed before amounts.
    pub currency: &'a str,
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
    /// MIRR with the reinvestment rate two percentage points lower and higher, when
    /// computed (for example with `figures::mirr(flows, finance, reinvestment -+ 0.02)`).
    pub mirr_reinvest_range: Option<(Option<f64>, Option<f64>)>,
    /// Years from the series' start to the last flow.
    pub horizon_years: f64,
    /// Years between the first two flows, when there are two.
    pub first_interval_years: Option<f64>,
    /// True when every flow has the same sign.
    pub one_sign: bool,
    /// Sum of all flows (used when every flow has one sign).
    pub net: Decimal,
    /// The complex-rate reading, for a series without a real IRR.
    pub complex_reading: Option<&'a ComplexReading>,
}

/// A first interval shorter than this (about one month) can inflate an annual rate.
const SHORT_INTERVAL_YEARS: f64 = 1.0 / 12.0;
/// Rates above this (1000% a year) count as implausibly high for the short-interval note.
const HIGH_RATE: f64 = 10.0;

/// The cautions that apply to one scenario, in the order of [`CODES`].
pub fn cautions(ctx: &CautionInput) -> Vec<Caution> {
    let fmt = Fmt::new(ctx);
    let mut out = Vec::new();
    let mut push = |code: &str, title: &str, text: String| {
        out.push(Caution {
            code: code.to_string(),
            title: title.to_string(),
            text,
        })
    };
    let npv = match ctx.npv_at_hurdle {
        Some(c) => fmt.money(c),
        None => crate::format::npv_in(None, ctx.npv_at_hurdle_approx.as_ref(), ctx.currency),
    };
    let h = fmt.rate(ctx.hurdle);
    // The NPV's true sign, also when it is too large for an exact decimal.
    let npv_sign = match (ctx.npv_at_hurdle, ctx.npv_at_hurdle_approx) {
        (Some(c), _) if c > Decimal::ZERO => 1,
        (Some(c), _) if c < Decimal::ZERO => -1,
        (None, Some(a)) if a.negative => -1,
        (None, Some(_)) => 1,
        _ => 0,
    };
    let npv_says = if npv_sign > 0 {
        "adds value"
    } else if npv_sign < 0 {
        "destroys value"
    } else {
        "breaks even"
    };
    let sensible: Vec<&Root> = ctx.roots.iter().filter(|r| !r.extreme).collect();

    if !ctx.certified {
        let where_ = if ctx.unresolved.is_empty() {
            "somewhere in the range of rates it searched".to_string()
        } else {
            let parts: Vec<String> = ctx
                .unresolved
                .iter()
                .map(|iv| format!("between {} and {}", fmt.rate(iv[0]), fmt.rate(iv[1])))
                .collect();
            join_and(&parts)
        };
        push(
            "uncertified",
            "The list of IRRs may be incomplete",
            format!(
                "The engine could not prove that it found every IRR of this deal. It could not \
                 rule out further IRRs {where_}. Treat the IRRs shown as possibly incomplete. \
                 The NPV at the hurdle rate of {h} is {npv}; it does not depend on finding \
                 every IRR, so rely on it."
            ),
        );
    }

    if ctx.one_sign {
        let (kind, direction) = if ctx.net > Decimal::ZERO {
            ("inflow", "receives")
        } else {
            ("outflow", "pays")
        };
        push(
            "one-sign",
            "No rate of return exists",
            format!(
                "Every cash flow of this deal is an {kind}: the investor only {direction} \
                 money, {} in all. A rate of return needs money going out and coming back, so \
                 there is no IRR and no MIRR to quote. Judge the deal by its NPV at the hurdle \
                 rate of {h}, which is {npv}.",
                fmt.money(ctx.net.abs())
            ),
        );
    } else if ctx.roots.is_empty() {
        let everywhere = if ctx.certified && npv_sign != 0 {
            format!(
                " Because no rate makes it zero, the NPV is {} at every discount rate, not \
                 only at the hurdle.",
                if npv_sign > 0 { "positive" } else { "negative" }
            )
        } else {
            String::new()
        };
        let complex = match ctx.complex_reading {
            Some(c) => format!(
                " A reading through complex rates (Hazen's method) gives a rate whose real \
                 part is {}, and at the hurdle the deal acts as a net {}. That reading also \
                 says {}, in line with the NPV.",
                fmt.rate(c.real_rate),
                stance_noun(c.stance),
                decision_word(c.decision)
            ),
            None => String::new(),
        };
        push(
            "no-irr",
            "This deal has no IRR",
            format!(
                "No discount rate makes the NPV of this deal zero, so it has no IRR. Do not \
                 quote one. The NPV at the hurdle rate of {h} is {npv}: the deal {npv_says} at \
                 that hurdle.{everywhere}{complex}"
            ),
        );
    }

    let distinct = ctx.roots.len();
    let counted: u32 = ctx.roots.iter().map(|r| r.multiplicity).sum();
    if distinct >= 2 {
        let list: Vec<String> = ctx.roots.iter().map(|r| fmt.root(r)).collect();
        push(
            "multiple-irr",
            "Several IRRs",
            format!(
                "This deal has {counted} IRRs: {}. Each of them makes the NPV zero, and none \
                 of them is the return of the deal. Do not quote any one of them on its own or \
                 compare it with the hurdle by itself. Rely on the NPV at the hurdle rate of \
                 {h}, which is {npv}, and on whether the deal is a net investment or a net \
                 borrowing at each rate (shown with the IRRs).",
                join_and(&list)
            ),
        );
    }

    for r in ctx.roots.iter().filter(|r| r.multiplicity >= 2) {
        let x = fmt.root(r);
        let m = r.multiplicity;
        let counts = if m == 2 {
            "a double IRR".to_string()
        } else {
            format!("{m} equal IRRs")
        };
        let text = if m % 2 == 0 {
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
        push("double-root", "The NPV touches zero without crossing", text);
    }

    let extreme: Vec<&Root> = ctx.roots.iter().filter(|r| r.extreme).collect();
    if !extreme.is_empty() {
        let list: Vec<String> = extreme
            .iter()
            .map(|r| {
                let kind = if r.log10_annual_growth < 0.0 {
                    "close to -100%, the loss of everything"
                } else {
                    "astronomically large"
                };
                format!("{} ({kind})", fmt.root(r))
            })
            .collect();
        let (of, them) = if extreme.len() == 1 {
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
        push(
            "extreme-root",
            "An IRR with no economic meaning",
            format!(
                "{of} {} {them} out of the discussion and use the NPV at the hurdle rate of \
                 {h}, which is {npv}{}.",
                join_and(&list),
                if sensible.is_empty() {
                    ""
                } else {
                    ", together with the other IRRs"
                }
            ),
        );
    }

    if let Some(first) = ctx.first_interval_years {
        let high: Vec<&Root> = ctx.roots.iter().filter(|r| is_high(r)).collect();
        if first < SHORT_INTERVAL_YEARS && first > 0.0 && !high.is_empty() {
            let days = first * 365.0;
            let gap = if days < 1.5 {
                "one day".to_string()
            } else {
                format!("about {} days", days.round() as i64)
            };
            let list: Vec<String> = high.iter().map(|r| fmt.root(r)).collect();
            push(
                "short-first-interval",
                "A very short first interval",
                format!(
                    "The first two cash flows are only {gap} apart. An annual rate compounds \
                     what happens in that short time as if it repeated all year, which is why \
                     an IRR of {} appears. Check the dates of the first flows. If they are \
                     right, do not read that rate as a return.",
                    join_and(&list)
                ),
            );
        }
    }

    let borrowing: Vec<&&Root> = sensible
        .iter()
        .filter(|r| r.stance == Stance::Borrowing)
        .collect();
    if !borrowing.is_empty() {
        let list: Vec<String> = borrowing.iter().map(|r| fmt.root(r)).collect();
        let above: Vec<String> = borrowing
            .iter()
            .filter(|r| rate_of(r) > ctx.hurdle)
            .map(|r| fmt.root(r))
            .collect();
        let tail = if above.is_empty() {
            format!(
                "Here {} below the hurdle of {h}, which counts in the deal's favour.",
                if list.len() == 1 {
                    "the IRR is"
                } else {
                    "the IRRs are"
                }
            )
        } else if above.len() == 1 {
            format!(
                "So an IRR of {} above the hurdle of {h} counts against the deal, not for it.",
                above[0]
            )
        } else {
            format!(
                "So IRRs of {} above the hurdle of {h} count against the deal, not for it.",
                join_and(&above)
            )
        };
        push(
            "net-borrowing",
            "The deal is a net borrowing",
            format!(
                "At the {} of {}, the deal works as a net borrowing at the hurdle rate: \
                 overall the investor takes in money first and pays it back later. For a \
                 borrower a higher rate is worse, not better. {tail}",
                if list.len() == 1 { "IRR" } else { "IRRs" },
                join_and(&list)
            ),
        );
    }

    let mixed: Vec<String> = sensible
        .iter()
        .filter(|r| r.balance_kind == BalanceKind::Mixed)
        .map(|r| fmt.root(r))
        .collect();
    if !mixed.is_empty() {
        push(
            "mixed-balance",
            "The balance changes sign",
            format!(
                "At {}, the running balance of the deal changes sign. At some times the \
                 investor has money tied up in the project; at others the project has in \
                 effect lent money to the investor. The rate is therefore not a pure return \
                 on capital tied up. Read it with the balance table, and rely on the NPV at \
                 the hurdle rate of {h}, which is {npv}.",
                join_and(&mixed)
            ),
        );
    }

    if npv_sign != 0 {
        let npv_positive = npv_sign > 0;
        let conflicting: Vec<&&Root> = sensible
            .iter()
            .filter(|r| {
                let k = rate_of(r);
                (k > ctx.hurdle && !npv_positive) || (k < ctx.hurdle && npv_positive)
            })
            .collect();
        if !conflicting.is_empty() {
            // All conflicting IRRs lie on one side of the hurdle: the side opposite the NPV.
            let list: Vec<String> = conflicting.iter().map(|r| fmt.root(r)).collect();
            let side = if npv_positive { "below" } else { "above" };
            let subject = if list.len() == 1 {
                format!("The IRR of {} is {side}", list[0])
            } else {
                format!("The IRRs of {} are {side}", join_and(&list))
            };
            push(
                "irr-npv-conflict",
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
            );
        }
    }

    if let Some(m) = ctx.mirr {
        if !is_plain(ctx) {
            let range = match ctx.mirr_reinvest_range {
                Some((Some(lo), Some(hi))) => format!(
                    " With the reinvestment rate two points lower ({}) the MIRR would be {}; \
                     two points higher ({}), {}.",
                    fmt.rate(ctx.reinvestment - 0.02),
                    fmt.rate(lo),
                    fmt.rate(ctx.reinvestment + 0.02),
                    fmt.rate(hi)
                ),
                _ => String::new(),
            };
            push(
                "mirr-assumptions",
                "The MIRR rests on two assumed rates",
                format!(
                    "The MIRR of {} assumes that money paid out is financed at {} and that \
                     money received is reinvested at {} until the last flow, {} from the \
                     start of the deal. Those two rates are choices, not forecasts of this deal.{range} \
                     Quote the MIRR only together with the two rates it assumes.",
                    fmt.rate(m),
                    fmt.rate(ctx.finance),
                    fmt.rate(ctx.reinvestment),
                    years_phrase(ctx.horizon_years)
                ),
            );
        }
    }

    if ctx.horizon_years > 0.0 && ctx.horizon_years < 1.0 {
        let span = years_phrase(ctx.horizon_years);
        push(
            "short-horizon",
            "A horizon under one year",
            format!(
                "The deal runs for {span}. Its rates are annual: a gain or loss over so \
                 short a time is compounded as if it went on all year, so the IRR and MIRR look far \
                 larger (or worse) than the money involved. Judge it by the amounts and by \
                 the NPV at the hurdle rate of {h}, which is {npv}."
            ),
        );
    }

    out
}

/// A conventional deal: one certified, simple, plausible IRR on a pure-investment path.
fn is_plain(ctx: &CautionInput) -> bool {
    ctx.certified
        && ctx.roots.len() == 1
        && ctx.roots[0].multiplicity == 1
        && !ctx.roots[0].extreme
        && ctx.roots[0].balance_kind == BalanceKind::PureInvestment
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

fn stance_noun(s: Stance) -> &'static str {
    match s {
        Stance::Investment => "investment",
        Stance::Borrowing => "borrowing",
        Stance::Neutral => "break-even position",
    }
}

fn decision_word(d: Decision) -> &'static str {
    match d {
        Decision::Accept => "accept",
        Decision::Reject => "reject",
        Decision::Indifferent => "neither accept nor reject",
    }
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
fn years_phrase(y: f64) -> String {
    let days = (y * 365.0).round() as i64;
    if y < 1.0 / 12.0 - 1e-9 {
        if days <= 1 {
            "one day".to_string()
        } else {
            format!("about {days} days")
        }
    } else if y < 1.0 - 1e-9 {
        let months = format_trimmed(y * 12.0, 1);
        if months == "1" {
            "about one month".to_string()
        } else {
            format!("about {months} months")
        }
    } else if (y - 1.0).abs() < 1e-9 {
        "one year".to_string()
    } else {
        format!("{} years", format_trimmed(y, 2))
    }
}

/// A number with at most `dec` decimals, trailing zeros dropped.
fn format_trimmed(x: f64, dec: usize) -> String {
    let s = format!("{x:.dec$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Groups the integer digits of a plain decimal string in threes.
fn group_thousands(s: &str) -> String {
    let (sign, rest) = match s.strip_prefix('-') {
        Some(r) => ("-", r),
        None => ("", s),
    };
    let (int, frac) = match rest.split_once('.') {
        Some((i, f)) => (i, Some(f)),
        None => (rest, None),
    };
    let mut grouped = String::new();
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            grouped.push(',');
        }
        grouped.push(c);
    }
    match frac {
        Some(f) => format!("{sign}{grouped}.{f}"),
        None => format!("{sign}{grouped}"),
    }
}

/// Number formatting for one scenario: rates get two decimals, or more when two
/// different rates (roots or the hurdle) would otherwise print the same.
struct Fmt<'a> {
    currency: &'a str,
    decimals: usize,
}

impl<'a> Fmt<'a> {
    fn new(ctx: &'a CautionInput) -> Fmt<'a> {
        let mut rates: Vec<f64> = ctx
            .roots
            .iter()
            .filter_map(|r| r.annual_rate)
            .filter(|r| r.abs() < 1e4)
            .collect();
        rates.push(ctx.hurdle);
        rates.sort_by(f64::total_cmp);
        rates.dedup();
        let mut decimals = 2;
        while decimals < 6 {
            let shown: Vec<String> = rates.iter().map(|r| pct(*r, decimals)).collect();
            let clash = shown.windows(2).any(|w| w[0] == w[1]);
            if !clash {
                break;
            }
            decimals += 1;
        }
        Fmt {
            currency: ctx.currency,
            decimals,
        }
    }

    fn rate(&self, r: f64) -> String {
        if r.is_finite() && r.abs() < 1e4 {
            pct(r, self.decimals)
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
                    while d < 12 && pct(k, d).starts_with("-100.") {
                        d += 1;
                    }
                    if d < 12 {
                        pct(k, d)
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

    fn money(&self, d: Decimal) -> String {
        let d = d.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
        let mut s = format!("{d:.2}");
        if s == "-0.00" {
            s = "0.00".to_string();
        }
        format!("{} {}", self.currency, group_thousands(&s))
    }
}

/// A fraction as a percentage with `dec` decimals and grouped thousands.
fn pct(r: f64, dec: usize) -> String {
    let dec = crate::format::places_short_of_minus_100(r, dec);
    let s = format!("{:.dec$}", r * 100.0);
    let s = if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    };
    format!("{}%", group_thousands(&s))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::complex::complex_reading;
    use crate::engine::figures::tests::{lorie_savage, mine, no_real_irr, periodic};
    use crate::engine::figures::{
        balance_kind, balance_path, decision_for_root, mirr, npv_exact, stance,
    };
    use crate::engine::flows::Flows;
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

        fn run(&self) -> Vec<Caution> {
            let f = &self.flows;
            let h = self.hurdle;
            let pos = f.points.iter().any(|p| p.amount > Decimal::ZERO);
            let neg = f.points.iter().any(|p| p.amount < Decimal::ZERO);
            let n = f.points.len();
            let ctx = CautionInput {
                currency: "EUR",
                hurdle: h,
                finance: h,
                reinvestment: h,
                roots: &self.roots,
                certified: self.certified,
                unresolved: &self.unresolved,
                npv_at_hurdle: npv_exact(f, Decimal::from_f64(h).unwrap()),
                npv_at_hurdle_approx: None,
                mirr: mirr(f, h, h),
                mirr_reinvest_range: Some((mirr(f, h, h - 0.02), mirr(f, h, h + 0.02))),
                horizon_years: f.years(n - 1),
                first_interval_years: (n >= 2).then(|| f.years(1) - f.years(0)),
                one_sign: !(pos && neg),
                net: f.points.iter().map(|p| p.amount).sum(),
                complex_reading: self.reading.as_ref(),
            };
            cautions(&ctx)
        }
    }

    fn codes(c: &[Caution]) -> Vec<&str> {
        c.iter().map(|x| x.code.as_str()).collect()
    }

    fn render(c: &[Caution]) -> String {
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
        assert_eq!(group_thousands("-1234567.89"), "-1,234,567.89");
        assert_eq!(group_thousands("999"), "999");
        assert_eq!(pct(-0.0000001, 2), "0.00%");
        assert_eq!(pct(12.3456, 2), "1,234.56%");
        let ctx_roots: Vec<Root> = Vec::new();
        let ctx = CautionInput {
            currency: "CHF",
            hurdle: 0.1,
            finance: 0.1,
            reinvestment: 0.1,
            roots: &ctx_roots,
            certified: true,
            unresolved: &[],
            npv_at_hurdle: Some(Decimal::ZERO),
            npv_at_hurdle_approx: None,
            mirr: None,
            mirr_reinvest_range: None,
            horizon_years: 2.0,
            first_interval_years: Some(1.0),
            one_sign: false,
            net: Decimal::ZERO,
            complex_reading: None,
        };
        let f = Fmt::new(&ctx);
        assert_eq!(f.money(Decimal::new(-123456789, 2)), "CHF -1,234,567.89");
        assert_eq!(f.money(Decimal::new(-1, 3)), "CHF 0.00");
    }
}
