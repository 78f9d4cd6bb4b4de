//! `candor rates`: every real IRR and the committee figures, per scenario, as a
//! terminal report, as JSON, or as batch screening of many series.

use super::load::load_deal;
use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::cli::RatesArgs;
use crate::diag::terminal_safe;
use crate::engine::{self, Analysis, ScenarioAnalysis};
use crate::format::{decimals_to_separate, npv_in, per_period, percent, ratio};
use std::fmt::Write as _;
use std::io::Write as _;

/// Runs the command.
pub fn run(args: &RatesArgs) -> u8 {
    if let Some(batch) = &args.batch {
        return run_batch(batch);
    }
    let Some(path) = &args.file else {
        eprintln!("error: name a deal file or --batch FILE.jsonl");
        return EXIT_INVALID;
    };
    let loaded = match load_deal(path) {
        Ok(l) => l,
        Err(failure) => {
            for d in &failure.diagnostics {
                eprintln!("{}\n", d.render(failure.source.as_deref()));
            }
            return EXIT_INVALID;
        }
    };
    let analysis = engine::analyse(&loaded.deal);
    let text = if args.json {
        match serde_json::to_string_pretty(&analysis) {
            Ok(t) => t + "\n",
            Err(e) => {
                eprintln!("error[internal]: could not write the analysis as JSON: {e}");
                return EXIT_INTERNAL;
            }
        }
    } else {
        terminal_report(&analysis)
    };
    let mut out = std::io::stdout().lock();
    if out.write_all(text.as_bytes()).is_err() {
        return EXIT_INTERNAL;
    }
    EXIT_OK
}

fn run_batch(path: &std::path::Path) -> u8 {
    let mut input = match std::fs::File::open(path) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("error[read-failed]: cannot read {}: {e}", path.display());
            return EXIT_INVALID;
        }
    };
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    match crate::screen::screen_stream(&mut input, &mut out) {
        Ok(()) => {}
        Err(crate::screen::StreamError::Read(e)) => {
            let _ = out.flush();
            eprintln!("error[read-failed]: cannot read {}: {e}", path.display());
            return EXIT_INVALID;
        }
        Err(crate::screen::StreamError::Write(_)) => return EXIT_INTERNAL,
    }
    if out.flush().is_err() {
        return EXIT_INTERNAL;
    }
    EXIT_OK
}

/// The terminal report: one block per scenario.
pub fn terminal_report(a: &Analysis) -> String {
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
        percent(s.hurdle_rate, 2),
        percent(s.finance_rate, 2),
        percent(s.reinvestment_rate, 2)
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
    let places = decimals_to_separate(&annual).max(4);
    for r in &irr.roots {
        let rate = match r.annual_rate {
            Some(x) => format!("{} a year", percent(x, places)),
            None => format!("growth of 10^{:.1} a year", r.log10_annual_growth),
        };
        let mult = if r.multiplicity > 1 {
            format!(" (multiplicity {})", r.multiplicity)
        } else {
            String::new()
        };
        let periodic = per_period(s.periods_per_year)
            .zip(r.periodic_rate)
            .map(|(word, p)| format!(" ({} {word})", percent(p, places)))
            .unwrap_or_default();
        let _ = writeln!(
            o,
            "    {rate:>19}{periodic}{mult}: {}, {} -> {}",
            r.balance_kind.label(),
            r.stance.label(),
            r.decision.label()
        );
    }
    for u in &irr.unresolved {
        let _ = writeln!(
            o,
            "    undecided between {} and {}",
            percent(u[0], places),
            percent(u[1], places)
        );
    }
    if let Some(c) = &irr.complex_reading {
        let _ = writeln!(
            o,
            "    no real IRR; complex rate {} {} {}i: {} -> {}",
            percent(c.real_rate, 2),
            if c.imaginary_rate < 0.0 { "-" } else { "+" },
            percent(c.imaginary_rate.abs(), 2),
            c.stance.label(),
            c.decision.label()
        );
    }
    let _ = writeln!(
        o,
        "  NPV         {} at the hurdle -> {}",
        npv_in(s.npv_at_hurdle, s.npv_at_hurdle_approx.as_ref(), currency),
        s.decision.label()
    );
    let opt = |x: Option<f64>| x.map_or("not defined".to_string(), |v| percent(v, 2));
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
            .map_or("not defined".to_string(), |m| format!("{m}x"))
    );
    let _ = writeln!(
        o,
        "  PI          {}",
        s.profitability_index
            .map_or("not defined".to_string(), |p| ratio(p, 3))
    );
    let years = |y: Option<f64>| y.map_or("never".to_string(), |v| format!("{v:.2} years"));
    let _ = writeln!(
        o,
        "  payback     {} (discounted: {}){}",
        years(s.payback.simple_years),
        years(s.payback.discounted_years),
        if s.payback.turns_negative_again {
            "; the cumulative position turns negative again later"
        } else {
            ""
        }
    );
    if !s.cautions.is_empty() {
        let _ = writeln!(o, "  cautions");
        for c in &s.cautions {
            let _ = writeln!(o, "    [{}] {}", c.code, terminal_safe(&c.title));
            for line in wrap(&terminal_safe(&c.text), 72) {
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
