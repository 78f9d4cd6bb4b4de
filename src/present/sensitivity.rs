//! The sensitivity in words (docs/methods.md, "Sensitivity"): the names of the
//! tornado's bars, each break-even as a sentence, the hurdle band, the count map and
//! the headlines, and the short block of the terminal report.
//!
//! Every sentence stays true of the exact figure: a move that "can" be made is rounded
//! towards zero, one that "would have to" be made is rounded away from zero.

use super::{money_in, percent, Style};
use crate::engine::sensitivity::{
    BandEnd, BreakEven, BreakEvenOutcome, CountMap, Headline, HurdleBand, MapStatus, MoveKind,
    Sensitivity, Sign, TornadoBar,
};
use crate::engine::ScenarioAnalysis;
use rust_decimal::prelude::*;
use std::fmt::Write as _;

/// The name of a tornado bar.
pub(crate) fn bar_name(bar: &TornadoBar, periodic: bool) -> String {
    match bar.kind {
        MoveKind::Component => bar.label.clone(),
        MoveKind::HurdleRate => "hurdle rate".to_string(),
        MoveKind::InflowDelay if periodic => "inflows one period later".to_string(),
        MoveKind::InflowDelay => "inflows one year later".to_string(),
    }
}

/// A relative step as a signed percentage: `-20%`, `+10%` (`−` in print).
pub fn step(step: f64, style: Style) -> String {
    let text = percent(step, 0, style);
    if step > 0.0 {
        format!("+{text}")
    } else {
        text
    }
}

/// `|change|` as a percentage with one decimal (more when that shows zero), rounded
/// towards zero (`down`) or away from it.
fn share(change: Decimal, down: bool, style: Style) -> String {
    let pct = change.abs() * Decimal::ONE_HUNDRED;
    let strategy = if down {
        RoundingStrategy::ToZero
    } else {
        RoundingStrategy::AwayFromZero
    };
    let mut places = 1;
    let mut r = pct.round_dp_with_strategy(places, strategy);
    while r.is_zero() && places < 6 && !pct.is_zero() {
        places += 1;
        r = pct.round_dp_with_strategy(places, strategy);
    }
    let text = format!("{:.*}", places as usize, r);
    if style == Style::Terminal {
        return format!("{text}%");
    }
    let (int, frac) = text.split_once('.').unwrap_or((&text, ""));
    format!("{}.{frac}%", super::group_thousands(int))
}

fn sign_word(s: Sign) -> &'static str {
    match s {
        Sign::Positive => "positive",
        Sign::Negative => "negative",
        Sign::Zero => "zero",
    }
}

/// One break-even as a sentence, e.g. "inflows can fall 18.4% before the NPV at 9.00%
/// turns negative".
pub(crate) fn break_even_sentence(b: &BreakEven, hurdle: f64, style: Style) -> String {
    let h = percent(hurdle, 2, style);
    let name = &b.label;
    match &b.outcome {
        BreakEvenOutcome::At {
            factor,
            change,
            below,
            above,
        } => {
            if change.is_zero() {
                return format!(
                    "the NPV at {h} is zero with {name} as they stand: any fall makes it {}, any rise {}",
                    sign_word(*below),
                    sign_word(*above)
                );
            }
            let falls = *factor < Decimal::ONE;
            // The sign now, and the sign past the break-even.
            let (now, past) = if falls {
                (*above, *below)
            } else {
                (*below, *above)
            };
            let verb = if falls { "fall" } else { "rise" };
            if now == Sign::Positive {
                format!(
                    "{name} can {verb} {} before the NPV at {h} turns {}",
                    share(*change, true, style),
                    sign_word(past)
                )
            } else {
                format!(
                    "{name} would have to {verb} {} for the NPV at {h} to turn {}",
                    share(*change, false, style),
                    sign_word(past)
                )
            }
        }
        BreakEvenOutcome::None { keeps } => format!(
            "no break-even for {name}: the NPV at {h} stays {} for any factor of 0 or more",
            sign_word(*keeps)
        ),
        BreakEvenOutcome::Beyond { keeps } => format!(
            "no break-even for {name} within reach: the NPV at {h} stays {} for any factor up to 10^28",
            sign_word(*keeps)
        ),
        BreakEvenOutcome::Independent => {
            format!("no break-even for {name}: scaling {name} leaves the NPV at {h} unchanged")
        }
    }
}

/// An end of a hurdle range, rounded inwards (a lower end up, an upper end down, from
/// the ends of its certified interval) so that every hurdle the words cover adds value.
fn band_end(e: &BandEnd, lower: bool, style: Style) -> String {
    match e.interval {
        Some([lo, hi]) => {
            let r = if lower {
                (hi * 1e4).ceil() / 1e4
            } else {
                (lo * 1e4).floor() / 1e4
            };
            percent(r, 2, style)
        }
        None => format!("a growth of 10^{:.1} a year", e.log10_annual_growth),
    }
}

/// The hurdle band as a sentence, e.g. "this deal adds value for any hurdle between
/// 5.60% and 15.65% a year".
pub(crate) fn band_sentence(band: &HurdleBand, style: Style) -> String {
    if !band.certified {
        return "the hurdle rates at which this deal adds value cannot be stated, since its count of IRRs is not certified".to_string();
    }
    if band.ranges.is_empty() {
        return "this deal adds value at no hurdle rate: its NPV is zero or below at every rate"
            .to_string();
    }
    let parts: Vec<String> = band
        .ranges
        .iter()
        .map(|r| match (&r.from, &r.to) {
            (None, None) => "any hurdle rate".to_string(),
            (None, Some(t)) => format!("any hurdle below {}", band_end(t, false, style)),
            (Some(f), None) => format!("any hurdle above {}", band_end(f, true, style)),
            (Some(f), Some(t)) => format!(
                "any hurdle between {} and {}",
                band_end(f, true, style),
                band_end(t, false, style)
            ),
        })
        .collect();
    let mut text = format!("this deal adds value for {}", parts.join(", or for "));
    if band
        .ranges
        .iter()
        .any(|r| r.from.is_some() || r.to.is_some())
    {
        text.push_str(" a year");
    }
    text
}

/// A factor as printed: four decimals.
pub fn factor(f: f64) -> String {
    format!("{f:.4}")
}

/// What the count map of one component shows, in a sentence.
pub(crate) fn count_map_sentence(m: &CountMap, style: Style) -> String {
    let range = format!(
        "{} and {}",
        factor_short(m.range[0]),
        factor_short(m.range[1])
    );
    let name = &m.label;
    match m.status {
        MapStatus::TooManyFlows => {
            return format!(
                "the count map of {name} was not drawn: the deal has too many flows for it"
            )
        }
        MapStatus::TooLarge => {
            return format!(
                "the count map of {name} was not drawn: its exact coefficients are too large"
            )
        }
        MapStatus::Mapped => {}
    }
    let mut text = if m.change_points.is_empty() {
        match m.intervals.as_slice() {
            [one] => format!(
                "with {name} times any factor between {range}, the deal has {} real {}",
                one.count,
                irrs(one.count)
            ),
            _ => format!(
                "with {name} times a factor between {range}, the count of IRRs could not be read"
            ),
        }
    } else {
        let points: Vec<String> = m
            .change_points
            .iter()
            .map(|p| {
                let mut t = format!(
                    "at {} (from {} to {}",
                    factor(p.factor),
                    p.count_below,
                    p.count_above
                );
                if let Some(r) = p.annual_rate {
                    let _ = write!(t, "; a double IRR at {}", percent(r, 2, style));
                }
                if !p.certified {
                    t.push_str("; not certified");
                }
                t.push(')');
                t
            })
            .collect();
        format!(
            "with {name} times a factor between {range}, the number of real IRRs changes {}",
            points.join(", ")
        )
    };
    if !m.certified {
        text.push_str("; the map is not certified, so other changes may be missed");
    }
    text
}

fn irrs(n: u32) -> &'static str {
    if n == 1 {
        "IRR"
    } else {
        "IRRs"
    }
}

fn factor_short(f: f64) -> String {
    let t = format!("{f:.2}");
    t.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The headlines as sentences, for the decision page.
pub(crate) fn headline_sentences(
    s: &Sensitivity,
    hurdle: f64,
    currency: &str,
    periodic: bool,
    style: Style,
) -> Vec<String> {
    s.headlines
        .iter()
        .map(|h| match h {
            Headline::LargestSwing { key, swing, .. } => {
                let name = s
                    .tornado
                    .iter()
                    .find(|b| &b.key == key)
                    .map(|b| bar_name(b, periodic))
                    .unwrap_or_default();
                format!(
                    "The NPV at the hurdle moves most with {name}: by {} over the moves studied.",
                    money_in(*swing, currency, style)
                )
            }
            Headline::NearestBreakEven { key, .. } => {
                let b = s.break_even.iter().find(|b| &b.key == key);
                let text = b
                    .map(|b| break_even_sentence(b, hurdle, style))
                    .unwrap_or_default();
                format!("Nearest break-even: {text}.")
            }
            Headline::CountChanges {
                label,
                factor: f,
                below,
                above,
                ..
            } => format!(
                "The number of real IRRs changes from {below} to {above} with {label} times {}.",
                factor(*f)
            ),
        })
        .collect()
}

/// The short sensitivity block of the terminal report.
pub(crate) fn terminal_block(o: &mut String, s: &ScenarioAnalysis, currency: &str) {
    let Some(sens) = &s.sensitivity else { return };
    let t = Style::Terminal;
    let periodic = s.periods_per_year.is_some();
    let steps: Vec<String> = sens.steps.iter().map(|x| step(*x, t)).collect();
    let _ = writeln!(
        o,
        "  sensitivity NPV at the hurdle after each move ({}), largest swing first",
        steps.join(", ")
    );
    for bar in &sens.tornado {
        let name = bar_name(bar, periodic);
        let name = crate::diag::terminal_safe(&name);
        let range = match (bar.low, bar.high) {
            (Some(l), Some(h)) => format!("{} to {}", super::money(l, t), super::money(h, t)),
            _ => "beyond range".to_string(),
        };
        let swing = bar
            .swing
            .map_or("unknown".to_string(), |x| money_in(x, currency, t));
        let _ = writeln!(o, "    {name:<26} swing {swing} ({range})");
    }
    let _ = writeln!(o, "  break-even");
    for b in &sens.break_even {
        let line = break_even_sentence(b, s.hurdle_rate, t);
        let line = crate::diag::terminal_safe(&line);
        let _ = writeln!(o, "    {line}");
    }
    let _ = writeln!(o, "  hurdle band {}", band_sentence(&sens.hurdle_band, t));
    let _ = writeln!(o, "  IRR count");
    for m in &sens.count_map {
        let line = count_map_sentence(m, t);
        let line = crate::diag::terminal_safe(&line);
        let _ = writeln!(o, "    {line}");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(factor: &str, below: Sign, above: Sign) -> BreakEven {
        let factor: Decimal = factor.parse().expect("factor");
        BreakEven {
            key: "sales".into(),
            label: "sales".into(),
            outcome: BreakEvenOutcome::At {
                factor,
                change: factor - Decimal::ONE,
                below,
                above,
            },
        }
    }

    #[test]
    fn break_even_words_round_so_that_they_stay_true() {
        // A fall of 18.49% that can be taken is said as 18.4% (taking 18.4% keeps the
        // NPV positive); a rise of 10.71% that would have to be made as 10.8%.
        let can = at("0.8151", Sign::Negative, Sign::Positive);
        assert_eq!(
            break_even_sentence(&can, 0.09, Style::Print),
            "sales can fall 18.4% before the NPV at 9.00% turns negative"
        );
        let must = at("1.1071", Sign::Negative, Sign::Positive);
        assert_eq!(
            break_even_sentence(&must, 0.09, Style::Terminal),
            "sales would have to rise 10.8% for the NPV at 9.00% to turn positive"
        );
        let tiny = at("0.99999", Sign::Negative, Sign::Positive);
        assert!(break_even_sentence(&tiny, 0.09, Style::Print).contains("fall 0.001%"));
        let far = at("25000", Sign::Positive, Sign::Negative);
        assert!(break_even_sentence(&far, 0.09, Style::Print).contains("rise 2,499,900.0%"));
    }
}
