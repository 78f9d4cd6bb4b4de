//! Number formatting shared by the terminal report, the cautions and the memo: money
//! with thousands separators, rates in percent with enough decimals to tell roots apart.

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
    let text = format!("{pct:.decimals$}%");
    // "-0.00%" reads as a sign error.
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.' || c == '%') {
        return text[1..].to_string();
    }
    text
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
}
