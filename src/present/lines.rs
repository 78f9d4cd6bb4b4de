//! The words for a deal of format version 2: the unit its amounts were entered in,
//! its basis, a scenario's peak exposure, and each line's totals. Terminal, memo and
//! diff take them from here.

use super::{money_in, Style};
use crate::engine::{Exposure, LineSummary};
use crate::model::lines::{Basis, Units};

/// How the amounts were entered and how they are shown, e.g. "entered in thousands
/// of GBP; every amount shown here in GBP".
pub(crate) fn units_words(units: Units, currency: &str) -> String {
    match units {
        Units::Ones => format!("entered and shown in {currency}"),
        other => format!(
            "entered in {} of {currency}; every amount shown here in {currency}",
            other.as_str()
        ),
    }
}

/// The basis in words, e.g. "nominal amounts, after tax; rates nominal"; the parts the
/// deal does not state are said to be not stated.
pub(crate) fn basis_words(b: &Basis) -> String {
    let prices = b.prices.map_or("prices not stated".to_string(), |p| {
        format!("{} amounts", p.as_str())
    });
    let tax = b.tax.map_or("tax not stated".to_string(), |t| {
        format!("{} tax", t.as_str())
    });
    let rates = b
        .rates
        .map_or("rates not stated as nominal or real".to_string(), |r| {
            format!("rates {}", r.as_str())
        });
    format!("{prices}, {tax}; {rates}")
}

/// The peak exposure, e.g. "GBP -3,600,000.00 in period 0 (2027-04-01)", or "the
/// running total never goes below zero".
pub(crate) fn exposure_words(e: &Exposure, currency: &str, style: Style) -> String {
    if e.years.is_none() {
        return "the running total never goes below zero".to_string();
    }
    let when = match (e.period, &e.date) {
        (Some(p), Some(d)) => format!("in period {p} ({d})"),
        (Some(p), None) => format!("in period {p}"),
        (None, Some(d)) => format!("on {d}"),
        (None, None) => String::new(),
    };
    format!("{} {when}", money_in(e.amount, currency, style))
        .trim_end()
        .to_string()
}

/// One line's totals: "net GBP 10,000,000.00 (in 10,000,000.00, out 0.00)".
pub(crate) fn line_totals(l: &LineSummary, currency: &str, style: Style) -> String {
    format!(
        "net {} over {} amount{}",
        money_in(l.net, currency, style),
        l.flows.len(),
        if l.flows.len() == 1 { "" } else { "s" }
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::lines::{Prices, Tax};
    use rust_decimal::Decimal;

    #[test]
    fn words_for_units_basis_and_exposure() {
        assert_eq!(
            units_words(Units::Thousands, "GBP"),
            "entered in thousands of GBP; every amount shown here in GBP"
        );
        let b = Basis {
            prices: Some(Prices::Real),
            tax: Some(Tax::Before),
            rates: None,
        };
        assert_eq!(
            basis_words(&b),
            "real amounts, before tax; rates not stated as nominal or real"
        );
        let e = Exposure {
            amount: Decimal::new(-36_000_000, 1),
            period: Some(0),
            date: Some("2027-04-01".to_string()),
            years: Some(0.0),
        };
        assert_eq!(
            exposure_words(&e, "GBP", Style::Terminal),
            "GBP -3,600,000.00 in period 0 (2027-04-01)"
        );
    }
}
