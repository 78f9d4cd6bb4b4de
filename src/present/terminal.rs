//! The terminal report of `candor rates`: one block per scenario, in the terminal's
//! [`Style`].

use super::{
    caution_text_list, decimals_to_separate, percent, ratio, scenario_npv_in, words, Style,
};
use crate::diag::terminal_safe;
use crate::engine::{Analysis, ScenarioAnalysis};
use std::fmt::Write as _;

const T: Style = Style::Terminal;

/// The terminal report: one block per scenario.
pub fn report(a: &Analysis) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{} ({})", terminal_safe(&a.deal), a.currency);
    for s in &a.scenarios {
        scenario_block(&mut o, s, &a.currency);
    }
    o
}

fn scenario_block(o: &mut String, s: &ScenarioAnalysis, currency: &str) {
    let _ = writeln!(o);
    let title = format!("scenario: {}", terminal_safe(&s.name));
    let _ = writeln!(o, "{title}\n{}", "-".repeat(title.chars().count()));
    let _ = writeln!(
        o,
        "  rates       hurdle {}, finance {}, reinvestment {}",
        percent(s.hurdle_rate, 2, T),
        percent(s.finance_rate, 2, T),
        percent(s.reinvestment_rate, 2, T)
    );
    let irr = &s.irr;
    let certified = if irr.certified {
        "certified"
    } else {
        "NOT certified"
    };
    let _ = writeln!(
        o,
        "  IRRs        {} real, counted with multiplicity ({certified}; sign-change bound {})",
        irr.count, irr.upper_bound
    );
    let annual: Vec<f64> = irr.roots.iter().filter_map(|r| r.annual_rate).collect();
    let places = decimals_to_separate(&annual, T, 2..=10).max(4);
    for r in &irr.roots {
        let rate = match r.annual_rate {
            Some(x) => format!("{} a year", percent(x, places, T)),
            None => format!("growth of 10^{:.1} a year", r.log10_annual_growth),
        };
        let mult = if r.multiplicity > 1 {
            format!(" (multiplicity {})", r.multiplicity)
        } else {
            String::new()
        };
        let periodic = words::per_period(s.periods_per_year)
            .zip(r.periodic_rate)
            .map(|(word, p)| format!(" ({} {word})", percent(p, places, T)))
            .unwrap_or_default();
        let _ = writeln!(
            o,
            "    {rate:>19}{periodic}{mult}: {}, {} -> {}",
            words::balance_kind(r.balance_kind),
            words::stance(r.stance),
            words::decision(r.decision)
        );
    }
    for u in &irr.unresolved {
        let _ = writeln!(
            o,
            "    undecided between {} and {}",
            percent(u[0], places, T),
            percent(u[1], places, T)
        );
    }
    if let Some(c) = &irr.complex_reading {
        let _ = writeln!(
            o,
            "    no real IRR; complex rate {} {} {}i: {} -> {}",
            percent(c.real_rate, 2, T),
            if c.imaginary_rate < 0.0 { "-" } else { "+" },
            percent(c.imaginary_rate.abs(), 2, T),
            words::stance(c.stance),
            words::decision(c.decision)
        );
    }
    let _ = writeln!(
        o,
        "  NPV         {} at the hurdle -> NPV rule: {}",
        scenario_npv_in(s, currency, T),
        words::decision(s.decision)
    );
    let opt = |x: Option<f64>| x.map_or(words::NOT_DEFINED.to_string(), |v| percent(v, 2, T));
    let _ = writeln!(o, "  MIRR        {}", opt(s.mirr));
    let _ = writeln!(
        o,
        "  RIC         {} (return on invested capital)",
        opt(s.return_on_invested_capital)
    );
    let _ = writeln!(
        o,
        "  multiple    {}",
        s.money_multiple
            .map_or(words::NOT_DEFINED.to_string(), |m| format!("{m}x"))
    );
    let _ = writeln!(
        o,
        "  PI          {}",
        s.profitability_index
            .map_or(words::NOT_DEFINED.to_string(), |p| ratio(p, 3, T))
    );
    let _ = writeln!(
        o,
        "  payback     {} (discounted: {}){}",
        super::summary::payback_words(s, false),
        super::summary::payback_words(s, true),
        if s.payback.turns_negative_again {
            "; an earlier recovery did not last"
        } else {
            ""
        }
    );
    if !s.cautions.is_empty() {
        let _ = writeln!(o, "  cautions");
        for c in caution_text_list(s, currency) {
            let _ = writeln!(o, "    [{}] {}", c.code, c.title);
            for line in wrap(&c.text, 72) {
                let _ = writeln!(o, "      {line}");
            }
        }
    }
}

/// Greedy word wrap.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split_whitespace() {
        if !cur.is_empty() && cur.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut cur));
        }
        if !cur.is_empty() {
            cur.push(' ');
        }
        cur.push_str(word);
    }
    if !cur.is_empty() {
        lines.push(cur);
    }
    lines
}
