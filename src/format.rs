//! Number formatting shared by the terminal report, the cautions and the memo: money
//! with thousands separators, rates in percent with enough decimals to tell roots apart.

use crate::engine::ApproxAmount;
use rust_decimal::prelude::*;

/// Money with thousands separators and two decimals, e.g. `-1,234,567.80`.
pub fn money(amount: Decimal) -> String {
    let rounded = amount.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
    let text = format!("{:.2}", rounded.abs());
    let (int, frac) = text.split_once('.').unwrap_or((&text, "00"));
    let mut grouped = String::with_capacity(int.len() + int.len() / 3);
    for (i, ch) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            grouped.push(',');
        }
        grouped.push(ch);
    }
    let sign = if rounded.is_sign_negative() && !rounded.is_zero() {
        "-"
    } else {
        ""
    };
    format!("{sign}{grouped}.{frac}")
}

/// Money with its currency code, e.g. `EUR -1,234.50`.
pub fn money_in(amount: Decimal, currency: &str) -> String {
    format!("{currency} {}", money(amount))
}

/// At or beyond this size a binary float printed in full shows digits it does not
/// hold (about 16 significant digits, of which the last may already be noise), so
/// rates in percent and ratios switch to a power of ten.
pub const FULL_DIGITS_LIMIT: f64 = 1e12;

/// A float as `m × 10^e` with `decimals` decimals in the mantissa, e.g. `6.00 × 10^59`.
pub fn scientific(value: f64, decimals: usize) -> String {
    let text = format!("{:.*e}", decimals.min(12), value);
    match text.split_once('e') {
        Some((m, e)) => format!("{m} \u{00d7} 10^{e}"),
        None => text,
    }
}

/// A ratio with `decimals` places, or as a power of ten when it is too large to print
/// in full (see [`FULL_DIGITS_LIMIT`]).
pub fn ratio(value: f64, decimals: usize) -> String {
    if !value.is_finite() {
        "not finite".to_string()
    } else if value.abs() >= FULL_DIGITS_LIMIT {
        scientific(value, decimals)
    } else {
        format!("{value:.decimals$}")
    }
}

/// An amount beyond Decimal's range in words and digits, e.g. `about 6.0 × 10^62`.
pub fn approx(amount: &ApproxAmount) -> String {
    let (m, e) = amount.scientific(1);
    format!("about {m:.1} \u{00d7} 10^{e}")
}

/// The NPV at the hurdle as it can be stated: money to the cent, its size when it is
/// beyond an exact decimal's range, or `not computable`; with the currency code.
pub fn npv_in(npv: Option<Decimal>, beyond: Option<&ApproxAmount>, currency: &str) -> String {
    match (npv, beyond) {
        (Some(c), _) => money_in(c, currency),
        (None, Some(a)) => {
            let (m, e) = a.scientific(1);
            format!("about {currency} {m:.1} \u{00d7} 10^{e}")
        }
        (None, None) => "not computable".to_string(),
    }
}

/// A rate (fraction) in percent with `decimals` places, e.g. `9.25%`. Extreme values
/// switch to powers of ten so that no figure is ever `inf` or `NaN`.
pub fn percent(rate: f64, decimals: usize) -> String {
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

/// `decimals`, or more when a rate above -100% would round to -100% at `decimals`
/// places (a hurdle of -99.9999% is not a total loss): the fewest places, up to 15,
/// at which it prints above -100%.
pub fn places_short_of_minus_100(rate: f64, decimals: usize) -> usize {
    let mut places = decimals;
    let minus_100 = |p: usize| format!("{:.p$}", rate * 100.0) == format!("{:.p$}", -100.0);
    while rate > -1.0 && places < 15 && minus_100(places) {
        places += 1;
    }
    places
}

/// Decimals (at least 2, at most 10) needed so that every pair of distinct rates in
/// `rates` prints differently in percent.
pub fn decimals_to_separate(rates: &[f64]) -> usize {
    let mut decimals = 2;
    while decimals < 10 {
        let texts: Vec<String> = rates.iter().map(|r| percent(*r, decimals)).collect();
        let clash = texts.iter().enumerate().any(|(i, a)| {
            texts[i + 1..]
                .iter()
                .enumerate()
                .any(|(j, b)| a == b && rates[i] != rates[i + 1 + j])
        });
        if !clash {
            break;
        }
        decimals += 1;
    }
    decimals
}

#[cfg(test)]
mod tests {
    use super::*;
    use rust_decimal_macros::dec;

    #[test]
    fn money_groups_thousands() {
        assert_eq!(money(dec!(-1234567.805)), "-1,234,567.81");
        assert_eq!(money(dec!(999.5)), "999.50");
        assert_eq!(money(dec!(-0.001)), "0.00");
        assert_eq!(money_in(dec!(2529.924), "EUR"), "EUR 2,529.92");
    }

    #[test]
    fn percent_separates_close_roots() {
        assert_eq!(percent(0.035030, 2), "3.50%");
        assert_eq!(percent(-0.00001, 2), "0.00%");
        let close = [0.1, 0.10001];
        assert_eq!(decimals_to_separate(&close), 3);
        assert_eq!(percent(1e120, 2), "1.000e+122%");
    }

    #[test]
    fn a_rate_just_above_minus_100_is_not_shown_as_minus_100() {
        // -99.9999% keeps a millionth of the money: not a total loss (common practice:
        // a figure is never rounded onto a boundary it does not reach).
        assert_eq!(percent(-0.999999, 2), "-99.9999%");
        assert_eq!(percent(-0.99995, 2), "-99.995%");
        assert_eq!(percent(-0.9999, 2), "-99.99%");
        assert_eq!(percent(-1.0, 2), "-100.00%");
    }

    #[test]
    fn huge_ratios_switch_to_powers_of_ten() {
        // 6.000006e59 printed in full would show float noise after 16 digits.
        assert_eq!(ratio(6.000006e59, 3), "6.000 \u{00d7} 10^59");
        assert_eq!(ratio(-2.5e12, 2), "-2.50 \u{00d7} 10^12");
        assert_eq!(ratio(1.41, 2), "1.41");
    }

    #[test]
    fn amounts_beyond_decimal_range_are_stated_approximately() {
        let big = ApproxAmount {
            negative: false,
            log10_abs: (6.000006e62f64).log10(),
        };
        assert_eq!(approx(&big), "about 6.0 \u{00d7} 10^62");
        assert_eq!(
            npv_in(None, Some(&big), "EUR"),
            "about EUR 6.0 \u{00d7} 10^62"
        );
        let small = ApproxAmount {
            negative: true,
            log10_abs: 28.999,
        };
        assert_eq!(
            npv_in(None, Some(&small), "EUR"),
            "about EUR -1.0 \u{00d7} 10^29"
        );
        assert_eq!(npv_in(Some(dec!(1.5)), None, "EUR"), "EUR 1.50");
    }
}
