//! Numbers as the reader sees them: money with thousands separators, rates in percent
//! with enough decimals to tell roots apart (one rule), ratios, years, dates and powers
//! of ten, each in a [`Style`].

use super::Style;
use crate::engine::{ApproxAmount, Root, ScenarioAnalysis};
use chrono::{Datelike, NaiveDate};
use rust_decimal::prelude::*;
use std::ops::RangeInclusive;

/// The minus sign used for negatives in print (U+2212): it cannot be mistaken for a
/// hyphen and lines up with the digits.
pub(crate) const MINUS: char = '\u{2212}';

/// At or beyond this size a binary float printed in full shows digits it does not
/// hold (about 16 significant digits, of which the last may already be noise), so
/// rates in percent and ratios switch to a power of ten.
pub(crate) const FULL_DIGITS_LIMIT: f64 = 1e12;

/// Digits grouped in threes with commas: `1234567` is `1,234,567`. Takes the integer
/// digits only (no sign, no fraction).
pub(crate) fn group_thousands(digits: &str) -> String {
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The sign a negative figure is printed with in `style`.
fn minus(style: Style) -> &'static str {
    match style {
        Style::Print => "\u{2212}",
        Style::Terminal | Style::Prose => "-",
    }
}

/// Prose written with hyphen-minus signs (as the terminal and JSON carry it) set for
/// print: a `-` that starts a number (at the start or after a space, an opening
/// bracket or a slash) becomes the minus sign; hyphens inside words stay.
pub fn print_minus(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    let mut before: Option<char> = None;
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        let starts_number = c == '-'
            && before.is_none_or(|b| b.is_whitespace() || matches!(b, '(' | '[' | '/'))
            && chars.peek().is_some_and(|n| n.is_ascii_digit());
        out.push(if starts_number { MINUS } else { c });
        before = Some(c);
    }
    out
}

/// Money with thousands separators and two decimals, e.g. `-1,234,567.80` (`−` in
/// print). Never `-0.00`.
pub fn money(amount: Decimal, style: Style) -> String {
    let rounded = amount.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
    let text = format!("{:.2}", rounded.abs());
    let (int, frac) = text.split_once('.').unwrap_or((&text, "00"));
    let sign = if rounded.is_sign_negative() && !rounded.is_zero() {
        minus(style)
    } else {
        ""
    };
    format!("{sign}{}.{frac}", group_thousands(int))
}

/// Money with its currency code, e.g. `EUR -1,234.50`.
pub(crate) fn money_in(amount: Decimal, currency: &str, style: Style) -> String {
    format!("{currency} {}", money(amount, style))
}

/// A float as `m × 10^e` with `decimals` decimals in the mantissa, e.g. `6.00 × 10^59`.
pub(crate) fn scientific(value: f64, decimals: usize) -> String {
    let text = format!("{:.*e}", decimals.min(12), value);
    match text.split_once('e') {
        Some((m, e)) => format!("{m} \u{00d7} 10^{e}"),
        None => text,
    }
}

/// A ratio with `decimals` places, or as a power of ten when it is too large to print
/// in full (see [`FULL_DIGITS_LIMIT`]). Print never shows a negative zero.
pub fn ratio(value: f64, decimals: usize, style: Style) -> String {
    let plain = |v: f64| {
        if !v.is_finite() {
            "not finite".to_string()
        } else if v.abs() >= FULL_DIGITS_LIMIT {
            scientific(v, decimals)
        } else {
            format!("{v:.decimals$}")
        }
    };
    match style {
        Style::Terminal | Style::Prose => plain(value),
        Style::Print => {
            if !value.is_finite() {
                return "not finite".to_string();
            }
            let text = plain(value.abs());
            let zero = text.chars().all(|c| c == '0' || c == '.');
            if value < 0.0 && !zero {
                format!("{MINUS}{text}")
            } else {
                text
            }
        }
    }
}

/// An exact ratio with two decimals (the money multiple in print).
pub(crate) fn decimal_ratio(d: Decimal, style: Style) -> String {
    let text = format!("{:.2}", d.round_dp(2).abs());
    if d.is_sign_negative() && !d.round_dp(2).is_zero() {
        format!("{}{text}", minus(style))
    } else {
        text
    }
}

/// An amount beyond Decimal's range in words and digits, e.g. `about 6.0 × 10^62`.
pub fn approx(amount: &ApproxAmount, style: Style) -> String {
    let (m, e) = amount.scientific(1);
    format!("about {m:.1} \u{00d7} 10^{e}").replacen('-', minus(style), 1)
}

/// The NPV at the hurdle as it can be stated: money to the cent, its size when it is
/// beyond an exact decimal's range, or `not computable`; with the currency code.
pub(crate) fn npv_in(
    npv: Option<Decimal>,
    beyond: Option<&ApproxAmount>,
    currency: &str,
    style: Style,
) -> String {
    match (npv, beyond) {
        (Some(c), _) => money_in(c, currency, style),
        (None, Some(a)) => {
            let (m, e) = a.scientific(1);
            format!("about {currency} {m:.1} \u{00d7} 10^{e}").replacen('-', minus(style), 1)
        }
        (None, None) => "not computable".to_string(),
    }
}

/// A scenario's NPV at the hurdle without the currency code.
pub fn scenario_npv(s: &ScenarioAnalysis, style: Style) -> String {
    match (s.npv_at_hurdle, &s.npv_at_hurdle_approx) {
        (Some(c), _) => money(c, style),
        (None, Some(a)) => approx(a, style),
        (None, None) => "not computable".to_string(),
    }
}

/// A scenario's NPV at the hurdle with the currency code: `EUR 1,234.00`,
/// `about EUR 6.0 × 10^62`.
pub(crate) fn scenario_npv_in(s: &ScenarioAnalysis, currency: &str, style: Style) -> String {
    npv_in(
        s.npv_at_hurdle,
        s.npv_at_hurdle_approx.as_ref(),
        currency,
        style,
    )
}

/// A rate (fraction) in percent with `decimals` places: `9.25%`, `-3.50%` (`−3.50%` in
/// print). A rate just above -100% gets the places that keep it above (`-99.9999%`);
/// `-0.00%` is never shown. Extreme values switch to powers of ten so that no figure is
/// ever `inf` or `NaN`: in the terminal as `1.000e+122%` from 10^9 %, in print and
/// prose as `7.37 × 10^71%` from [`FULL_DIGITS_LIMIT`], with thousands grouped below.
pub fn percent(rate: f64, decimals: usize, style: Style) -> String {
    match style {
        Style::Terminal => terminal_percent(rate, decimals),
        Style::Print | Style::Prose => grouped_percent(rate, decimals, minus(style)),
    }
}

fn terminal_percent(rate: f64, decimals: usize) -> String {
    if !rate.is_finite() {
        return "beyond 1e308%".to_string();
    }
    let pct = rate * 100.0;
    if pct.abs() >= 1e9 {
        return format!("{:.3e}%", pct)
            .replace("e", "e+")
            .replace("e+-", "e-");
    }
    let decimals = places_short_of_minus_100(rate, decimals);
    let text = format!("{pct:.decimals$}%");
    // "-0.00%" reads as a sign error.
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.' || c == '%') {
        return text[1..].to_string();
    }
    text
}

fn grouped_percent(rate: f64, decimals: usize, minus: &str) -> String {
    if !rate.is_finite() {
        return "not finite".to_string();
    }
    let decimals = places_short_of_minus_100(rate, decimals);
    let sign = |negative: bool| if negative { minus } else { "" };
    if (rate * 100.0).abs() >= FULL_DIGITS_LIMIT {
        return format!(
            "{}{}%",
            sign(rate < 0.0),
            scientific((rate * 100.0).abs(), decimals)
        );
    }
    let text = format!("{:.*}", decimals, (rate * 100.0).abs());
    let zero = text.chars().all(|c| c == '0' || c == '.');
    let (int, frac) = text.split_once('.').unwrap_or((&text, ""));
    let frac = if frac.is_empty() {
        String::new()
    } else {
        format!(".{frac}")
    };
    format!(
        "{}{}{frac}%",
        sign(rate < 0.0 && !zero),
        group_thousands(int)
    )
}

/// An exact rate (as the deal file states it) in percent, with no more digits than it
/// has: 0.0925 is `9.25%`, 0.09 is `9%`.
pub(crate) fn exact_percent(rate: Decimal) -> String {
    format!("{}%", (rate * Decimal::from(100)).normalize())
}

/// `decimals`, or more when a rate above -100% would round to -100% at `decimals`
/// places (a hurdle of -99.9999% is not a total loss): the fewest places, up to 15,
/// at which it prints above -100%.
pub(crate) fn places_short_of_minus_100(rate: f64, decimals: usize) -> usize {
    let mut places = decimals;
    let minus_100 = |p: usize| format!("{:.p$}", rate * 100.0) == format!("{:.p$}", -100.0);
    while rate > -1.0 && places < 15 && minus_100(places) {
        places += 1;
    }
    places
}

/// The one rule for the decimals of rates shown side by side: the fewest places in
/// `places` at which every two different (finite) rates print as different texts in
/// `style`, or the most places when none does. Rounding is not monotone in the places
/// (0.125 and 0.1249 differ at two places and not at three), so the search starts at
/// the smallest.
pub(crate) fn decimals_to_separate(
    rates: &[f64],
    style: Style,
    places: RangeInclusive<usize>,
) -> usize {
    let mut distinct: Vec<f64> = rates.iter().copied().filter(|r| r.is_finite()).collect();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let most = *places.end();
    places
        .into_iter()
        .find(|&d| {
            let texts: Vec<String> = distinct.iter().map(|&r| percent(r, d, style)).collect();
            (1..texts.len()).all(|i| !texts[..i].contains(&texts[i]))
        })
        .unwrap_or(most)
}

/// The decimals for every IRR of a scenario in print.
pub fn scenario_rate_decimals(scenario: &ScenarioAnalysis) -> usize {
    let rates: Vec<f64> = scenario
        .irr
        .roots
        .iter()
        .filter_map(|r| r.annual_rate)
        .collect();
    decimals_to_separate(&rates, Style::Print, 2..=10)
}

/// A root's annual rate with the decimals chosen for its scenario. Roots too large for
/// a float are stated as a power of ten.
pub fn root_rate(root: &Root, decimals: usize, style: Style) -> String {
    match root.annual_rate {
        Some(r) if r.is_finite() => percent(r, decimals, style),
        _ => format!(
            "about 10^{:.1} times the money a year",
            root.log10_annual_growth
        ),
    }
}

/// An interval of rates rounded outwards (the low end down, the high end up), so the
/// printed interval still contains the root: `24.99999% to 25.00001%`.
pub(crate) fn rate_interval(lo: f64, hi: f64, decimals: usize, style: Style) -> String {
    let outward = |rate: f64, up: bool| -> (f64, usize) {
        if !rate.is_finite() || (rate * 100.0).abs() >= FULL_DIGITS_LIMIT {
            return (rate, decimals);
        }
        let mut places = places_short_of_minus_100(rate, decimals);
        loop {
            let scale = 10f64.powi(places as i32);
            let p = rate * 100.0 * scale;
            let shown = if up {
                (p + p.abs() * 1e-15).ceil()
            } else {
                (p - p.abs() * 1e-15).floor()
            } / scale
                / 100.0;
            if shown > -1.0 || rate <= -1.0 || places >= 15 {
                return (shown, places);
            }
            places += 1;
        }
    };
    let (lo, lo_places) = outward(lo, false);
    let (hi, hi_places) = outward(hi, true);
    let places = lo_places.max(hi_places);
    format!(
        "{} to {}",
        percent(lo, places, style),
        percent(hi, places, style)
    )
}

/// Years with two decimals: `1.00 year`, `2.50 years`.
pub fn years(years: f64) -> String {
    if years == 1.0 {
        "1.00 year".to_string()
    } else {
        format!("{years:.2} years")
    }
}

/// A long date: `30 November 2026`.
pub(crate) fn date_long(date: NaiveDate) -> String {
    const MONTHS: [&str; 12] = [
        "January",
        "February",
        "March",
        "April",
        "May",
        "June",
        "July",
        "August",
        "September",
        "October",
        "November",
        "December",
    ];
    format!(
        "{} {} {}",
        date.day(),
        MONTHS[date.month0() as usize],
        date.year()
    )
}

#[cfg(test)]
mod tests {
    #[test]
    fn print_minus_sets_signs_not_hyphens() {
        assert_eq!(
            super::print_minus("IRRs -45.68% and 5.61%; GBP -1,101.58 (-3%) non-negative 2027-01-15 x-1"),
            "IRRs \u{2212}45.68% and 5.61%; GBP \u{2212}1,101.58 (\u{2212}3%) non-negative 2027-01-15 x-1"
        );
        assert_eq!(super::print_minus("-1 to -2"), "\u{2212}1 to \u{2212}2");
        assert_eq!(super::print_minus("a - b"), "a - b");
    }

    use super::*;
    use rust_decimal_macros::dec;
    use Style::{Print, Prose, Terminal};

    #[test]
    fn money_groups_thousands() {
        assert_eq!(money(dec!(-1234567.805), Terminal), "-1,234,567.81");
        assert_eq!(money(dec!(-1234567.805), Print), "\u{2212}1,234,567.81");
        assert_eq!(money(dec!(999.5), Terminal), "999.50");
        assert_eq!(money(dec!(-0.001), Print), "0.00");
        assert_eq!(money_in(dec!(2529.924), "EUR", Terminal), "EUR 2,529.92");
        assert_eq!(group_thousands("1234567"), "1,234,567");
        assert_eq!(group_thousands("999"), "999");
    }

    #[test]
    fn percent_separates_close_roots() {
        assert_eq!(percent(0.035030, 2, Terminal), "3.50%");
        assert_eq!(percent(-0.00001, 2, Terminal), "0.00%");
        assert_eq!(percent(-0.00001, 2, Print), "0.00%");
        let close = [0.1, 0.10001];
        assert_eq!(decimals_to_separate(&close, Terminal, 2..=10), 3);
        assert_eq!(decimals_to_separate(&close, Print, 2..=10), 3);
        // Equal rates cannot be told apart and do not ask for more places.
        assert_eq!(decimals_to_separate(&[0.1, 0.1], Print, 2..=10), 2);
        assert_eq!(percent(1e120, 2, Terminal), "1.000e+122%");
        assert_eq!(percent(12.3456, 2, Prose), "1,234.56%");
        assert_eq!(percent(-0.035, 2, Print), "\u{2212}3.50%");
        assert_eq!(percent(-0.035, 2, Prose), "-3.50%");
        assert_eq!(exact_percent(dec!(0.0925)), "9.25%");
        assert_eq!(exact_percent(dec!(0.09)), "9%");
    }

    #[test]
    fn a_rate_just_above_minus_100_is_not_shown_as_minus_100() {
        // -99.9999% keeps a millionth of the money: not a total loss (common practice:
        // a figure is never rounded onto a boundary it does not reach).
        assert_eq!(percent(-0.999999, 2, Terminal), "-99.9999%");
        assert_eq!(percent(-0.99995, 2, Terminal), "-99.995%");
        assert_eq!(percent(-0.9999, 2, Terminal), "-99.99%");
        assert_eq!(percent(-1.0, 2, Terminal), "-100.00%");
        assert_eq!(percent(-0.999999, 2, Print), "\u{2212}99.9999%");
    }

    #[test]
    fn huge_ratios_switch_to_powers_of_ten() {
        // 6.000006e59 printed in full would show float noise after 16 digits.
        assert_eq!(ratio(6.000006e59, 3, Terminal), "6.000 \u{00d7} 10^59");
        assert_eq!(ratio(-2.5e12, 2, Terminal), "-2.50 \u{00d7} 10^12");
        assert_eq!(ratio(-2.5e12, 2, Print), "\u{2212}2.50 \u{00d7} 10^12");
        assert_eq!(ratio(1.41, 2, Terminal), "1.41");
        assert_eq!(ratio(-0.001, 2, Print), "0.00");
    }

    #[test]
    fn amounts_beyond_decimal_range_are_stated_approximately() {
        let big = ApproxAmount {
            negative: false,
            log10_abs: (6.000006e62f64).log10(),
        };
        assert_eq!(approx(&big, Terminal), "about 6.0 \u{00d7} 10^62");
        assert_eq!(
            npv_in(None, Some(&big), "EUR", Terminal),
            "about EUR 6.0 \u{00d7} 10^62"
        );
        let small = ApproxAmount {
            negative: true,
            log10_abs: 28.999,
        };
        assert_eq!(
            npv_in(None, Some(&small), "EUR", Terminal),
            "about EUR -1.0 \u{00d7} 10^29"
        );
        assert_eq!(
            npv_in(None, Some(&small), "EUR", Print),
            "about EUR \u{2212}1.0 \u{00d7} 10^29"
        );
        assert_eq!(npv_in(Some(dec!(1.5)), None, "EUR", Terminal), "EUR 1.50");
    }

    proptest::proptest! {
        /// Whatever the rates and places, the interval shown contains the interval given
        /// (read back from the text: the lower end at or below, the upper at or above).
        #[test]
        fn a_shown_interval_contains_the_certified_one(
            lo in -0.999_999_9f64..50.0,
            width in 0.0f64..1e-3,
            decimals in 2usize..10,
        ) {
            let hi = lo + width * (1.0 + lo.abs());
            let shown = rate_interval(lo, hi, decimals, Print);
            let (a, b) = shown.split_once(" to ").expect("two ends");
            let read = |t: &str| -> f64 {
                t.trim_end_matches('%')
                    .replace(MINUS, "-")
                    .replace(',', "")
                    .parse()
                    .expect("a number")
            };
            proptest::prop_assert!(read(a) <= lo * 100.0, "{shown} for [{lo}, {hi}]");
            proptest::prop_assert!(read(b) >= hi * 100.0, "{shown} for [{lo}, {hi}]");
            proptest::prop_assert!(read(a) > -100.0, "{shown} for [{lo}, {hi}]");
        }
    }

    #[test]
    fn a_certified_interval_is_shown_rounded_outwards() {
        // Common practice for intervals that must contain a value: round the lower end
        // down and the upper end up. To the nearest, these ends would both show 12.34568%
        // and cut off a root at 12.345679%.
        let shown = rate_interval(0.123_456_789, 0.123_456_791, 5, Print);
        assert_eq!(shown, "12.34567% to 12.34568%");
        // Narrower than the last place: the ends still differ by one unit.
        let shown = rate_interval(0.074_107_504_1, 0.074_107_504_2, 5, Print);
        assert_eq!(shown, "7.41075% to 7.41076%");
        // Negative rates: down is away from zero.
        let shown = rate_interval(-0.456_842_11, -0.456_842_09, 5, Print);
        assert_eq!(shown, format!("{MINUS}45.68422% to {MINUS}45.68420%"));
        // Just above -100%: more places rather than a lower end of -100%.
        let shown = rate_interval(-0.999_999_999_95, -0.999_999_999_9, 5, Print);
        assert!(!shown.starts_with(&format!("{MINUS}100.0")), "{shown}");
        assert!(shown.starts_with(&format!("{MINUS}99.99999999")), "{shown}");
    }

    #[test]
    fn money_is_grouped_with_a_real_minus() {
        assert_eq!(money("1234567.891".parse().unwrap(), Print), "1,234,567.89");
        assert_eq!(
            money("-950000".parse().unwrap(), Print),
            "\u{2212}950,000.00"
        );
        assert_eq!(money("-0.001".parse().unwrap(), Print), "0.00");
        assert_eq!(money("999.995".parse().unwrap(), Print), "1,000.00");
        assert_eq!(money_in("12".parse().unwrap(), "EUR", Print), "EUR 12.00");
    }

    #[test]
    fn rates_are_percentages() {
        assert_eq!(percent(0.09, 2, Print), "9.00%");
        assert_eq!(percent(-0.035, 2, Print), "\u{2212}3.50%");
        assert_eq!(percent(-0.00001, 2, Print), "0.00%");
        assert_eq!(percent(40.0, 2, Print), "4,000.00%");
    }

    #[test]
    fn close_roots_get_more_decimals() {
        assert_eq!(decimals_to_separate(&[0.25, 4.0], Print, 2..=10), 2);
        // 10.001% and 10.004% print alike at two decimals, apart at three.
        assert_eq!(decimals_to_separate(&[0.10001, 0.10004], Print, 2..=10), 3);
        assert_eq!(decimals_to_separate(&[], Print, 2..=10), 2);
    }
}
