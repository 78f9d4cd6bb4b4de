//! Exact readers for the scalar values of a deal file: decimals, rates, dates and
//! currency codes. Every reader takes the scalar's original text, so no number ever
//! passes through binary floating point.

use chrono::NaiveDate;
use rust_decimal::Decimal;

pub use crate::limits::MAX_AMOUNT;
pub(crate) use crate::limits::{MAX_RATE, MAX_SCALE, MAX_YEAR, MIN_YEAR};

/// Why a scalar could not be read, in words for the user.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct ValueError {
    /// What is wrong.
    pub message: String,
    /// How to fix it, where that helps.
    pub hint: Option<String>,
}

impl ValueError {
    fn new(message: impl Into<String>, hint: Option<&str>) -> Self {
        Self {
            message: message.into(),
            hint: hint.map(str::to_string),
        }
    }
}

/// Reads a plain decimal: optional sign, digits, optional fraction. No exponent,
/// no thousands separators, no hexadecimal: what the analyst wrote is what is used.
pub(crate) fn parse_decimal(text: &str) -> Result<Decimal, ValueError> {
    let t = text.trim();
    let lower = t.to_ascii_lowercase();
    if matches!(
        lower.trim_start_matches(['+', '-']),
        ".nan" | "nan" | ".inf" | "inf" | "infinity"
    ) {
        return Err(ValueError::new(
            format!("`{t}` is not a finite number"),
            Some("write the amount as a plain decimal such as 1150000 or -4200000.50"),
        ));
    }
    let body = t.strip_prefix(['+', '-']).unwrap_or(t);
    let (int, frac) = match body.split_once('.') {
        Some((i, f)) => (i, Some(f)),
        None => (body, None),
    };
    let digits_ok = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    let well_formed =
        !int.is_empty() && digits_ok(int) && frac.is_none_or(|f| !f.is_empty() && digits_ok(f));
    if !well_formed {
        let hint = if t.contains(['e', 'E']) && t.bytes().any(|b| b.is_ascii_digit()) {
            "write the number out in full, without an exponent"
        } else if t.contains([',', '_', ' '])
            && t.chars()
                .all(|c| c.is_ascii_digit() || ",_ .+-".contains(c))
        {
            "write the number without thousands separators, such as 1150000.50"
        } else {
            "write a plain decimal such as 1150000 or -4200000.50"
        };
        return Err(ValueError::new(
            format!("`{t}` is not a number"),
            Some(hint),
        ));
    }
    if int.len() > 1 && int.starts_with('0') {
        // `[-1,000,000, 600]` is the list -1, 0, 0, 600 in YAML: the zeros give it away.
        return Err(ValueError::new(
            format!("`{t}` starts with a zero"),
            Some("write the number without leading zeros; in a list, a comma used as a thousands separator splits one number into several (write 1000000, not 1,000,000)"),
        ));
    }
    let scale = frac.map_or(0, str::len);
    if scale > MAX_SCALE as usize {
        return Err(ValueError::new(
            format!("`{t}` has {scale} decimal places; at most {MAX_SCALE} are accepted"),
            None,
        ));
    }
    // Bound the digit count before handing the text to Decimal, which refuses more
    // than 28 significant digits in its own words.
    if int.trim_start_matches('0').len() > 16 {
        return Err(out_of_range(t));
    }
    let value: Decimal = t
        .trim_start_matches('+')
        .parse()
        .map_err(|_| ValueError::new(format!("`{t}` is not a number"), None))?;
    if value.abs() > Decimal::from(MAX_AMOUNT) {
        return Err(out_of_range(t));
    }
    Ok(value.normalize())
}

/// Reads an amount or a factor as deal files and batch lines both write it
/// ([`parse_decimal`]); a refusal comes with its code: `number-range` for a number
/// beyond the limits (too large, too many decimal places), `bad-number` otherwise.
pub(crate) fn read_amount(text: &str) -> Result<Decimal, (&'static str, ValueError)> {
    parse_decimal(text).map_err(|e| {
        let code = if e.message.contains("out of range") || e.message.contains("decimal places") {
            "number-range"
        } else {
            "bad-number"
        };
        (code, e)
    })
}

/// Reads an annual rate as deal files and batch lines both write it: [`parse_rate`],
/// then [`check_rate_form`] and [`check_rate`]; a refusal comes with its code,
/// `bad-number` for text that is not a rate, `rate-range` for a rate out of bounds.
pub(crate) fn read_rate(text: &str) -> Result<Decimal, (&'static str, ValueError)> {
    let rate = parse_rate(text).map_err(|e| ("bad-number", e))?;
    check_rate_form(text, rate)
        .and_then(|()| check_rate(rate))
        .map_err(|e| ("rate-range", e))?;
    Ok(rate)
}

fn out_of_range(t: &str) -> ValueError {
    ValueError::new(
        format!("`{t}` is out of range"),
        Some("amounts and factors must lie within plus or minus 10^15"),
    )
}

/// Reads a rate: `8%`, `8.25%` or `0.08`, giving the fraction (0.08) exactly.
/// Range checks are left to [`check_rate`], so a caller can tell "not a rate" from
/// "a rate, but absurd".
pub(crate) fn parse_rate(text: &str) -> Result<Decimal, ValueError> {
    let t = text.trim();
    let (number, percent) = match t.strip_suffix('%') {
        Some(n) => (n.trim_end(), true),
        None => (t, false),
    };
    let value = parse_decimal(number).map_err(|e| {
        ValueError::new(
            format!("`{t}` is not a rate"),
            Some(
                e.hint
                    .as_deref()
                    .filter(|h| h.contains("exponent") || h.contains("separators"))
                    .unwrap_or("write a rate as 8%, \"8.25%\" or 0.08"),
            ),
        )
    })?;
    Ok(if percent {
        (value / Decimal::ONE_HUNDRED).normalize()
    } else {
        value
    })
}

/// Refuses a rate of 100% or more written without a percent sign: `hurdle_rate: 9`
/// reads as 900%, and is almost always meant as 9%.
pub(crate) fn check_rate_form(text: &str, rate: Decimal) -> Result<(), ValueError> {
    let t = text.trim();
    if t.ends_with('%') || rate.abs() < Decimal::ONE {
        return Ok(());
    }
    Err(ValueError::new(
        format!(
            "`{t}` without a percent sign is a fraction, so it means {}%",
            percent(rate)
        ),
        Some(&format!(
            "write `{t}%` for {t} percent; a rate of 100% or more needs the percent sign, such as `{}%`",
            percent(rate)
        )),
    ))
}

/// Checks that an annual rate lies in (-100%, 1,000,000%].
pub(crate) fn check_rate(rate: Decimal) -> Result<(), ValueError> {
    if rate <= -Decimal::ONE {
        return Err(ValueError::new(
            format!("a rate of {}% is not above -100%", percent(rate)),
            Some("an annual rate must be greater than -100%"),
        ));
    }
    if rate > Decimal::from(MAX_RATE) {
        return Err(ValueError::new(
            format!("a rate of {}% is beyond any deal", percent(rate)),
            Some("rates above 1000000% are refused; write 8% or 0.08 for eight percent"),
        ));
    }
    Ok(())
}

fn percent(rate: Decimal) -> String {
    (rate * Decimal::ONE_HUNDRED).normalize().to_string()
}

pub(crate) use crate::diag::grouped;

/// Reads a calendar date written `YYYY-MM-DD`.
pub(crate) fn parse_date(text: &str) -> Result<NaiveDate, ValueError> {
    let t = text.trim();
    let b = t.as_bytes();
    let shape_ok = b.len() == 10
        && b[4] == b'-'
        && b[7] == b'-'
        && b.iter()
            .enumerate()
            .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit());
    if !shape_ok {
        return Err(ValueError::new(
            format!("`{t}` is not a date"),
            Some("write dates as YYYY-MM-DD, such as 2027-01-15"),
        ));
    }
    let field = |r: std::ops::Range<usize>| t[r].parse::<u32>().unwrap_or(0);
    let (y, m, d) = (field(0..4), field(5..7), field(8..10));
    let date = NaiveDate::from_ymd_opt(y as i32, m, d).ok_or_else(|| {
        ValueError::new(
            format!("{t} is not a day of the calendar"),
            Some("check the month (01-12) and the day of that month"),
        )
    })?;
    if !(MIN_YEAR..=MAX_YEAR).contains(&(y as i32)) {
        return Err(ValueError::new(
            format!("{t} lies outside the years {MIN_YEAR} to {MAX_YEAR} that candor accepts"),
            Some("check the year"),
        ));
    }
    Ok(date)
}

/// ISO 4217 codes in current use, including funds and precious-metal codes, but not
/// the testing (XTS) and "no currency" (XXX) codes. List written from memory of the
/// ISO 4217 amendments up to 2025 (XCG replacing ANG, ZWG replacing ZWL, SLE
/// replacing SLL); extend it when ISO publishes an amendment.
pub(crate) const CURRENCIES: &[&str] = &[
    "AED", "AFN", "ALL", "AMD", "AOA", "ARS", "AUD", "AWG", "AZN", "BAM", "BBD", "BDT", "BGN",
    "BHD", "BIF", "BMD", "BND", "BOB", "BOV", "BRL", "BSD", "BTN", "BWP", "BYN", "BZD", "CAD",
    "CDF", "CHE", "CHF", "CHW", "CLF", "CLP", "CNY", "COP", "COU", "CRC", "CUP", "CVE", "CZK",
    "DJF", "DKK", "DOP", "DZD", "EGP", "ERN", "ETB", "EUR", "FJD", "FKP", "GBP", "GEL", "GHS",
    "GIP", "GMD", "GNF", "GTQ", "GYD", "HKD", "HNL", "HTG", "HUF", "IDR", "ILS", "INR", "IQD",
    "IRR", "ISK", "JMD", "JOD", "JPY", "KES", "KGS", "KHR", "KMF", "KPW", "KRW", "KWD", "KYD",
    "KZT", "LAK", "LBP", "LKR", "LRD", "LSL", "LYD", "MAD", "MDL", "MGA", "MKD", "MMK", "MNT",
    "MOP", "MRU", "MUR", "MVR", "MWK", "MXN", "MXV", "MYR", "MZN", "NAD", "NGN", "NIO", "NOK",
    "NPR", "NZD", "OMR", "PAB", "PEN", "PGK", "PHP", "PKR", "PLN", "PYG", "QAR", "RON", "RSD",
    "RUB", "RWF", "SAR", "SBD", "SCR", "SDG", "SEK", "SGD", "SHP", "SLE", "SOS", "SRD", "SSP",
    "STN", "SVC", "SYP", "SZL", "THB", "TJS", "TMT", "TND", "TOP", "TRY", "TTD", "TWD", "TZS",
    "UAH", "UGX", "USD", "USN", "UYI", "UYU", "UYW", "UZS", "VED", "VES", "VND", "VUV", "WST",
    "XAF", "XAG", "XAU", "XBA", "XBB", "XBC", "XBD", "XCD", "XCG", "XDR", "XOF", "XPD", "XPF",
    "XPT", "XSU", "XUA", "YER", "ZAR", "ZMW", "ZWG",
];

/// Checks a currency code: three upper-case letters naming a current ISO 4217 currency.
pub(crate) fn check_currency(text: &str) -> Result<String, ValueError> {
    let t = text.trim();
    if CURRENCIES.binary_search(&t).is_ok() {
        return Ok(t.to_string());
    }
    let upper = t.to_ascii_uppercase();
    if CURRENCIES.binary_search(&upper.as_str()).is_ok() {
        return Err(ValueError::new(
            format!("`{t}` is not an ISO 4217 code as written"),
            Some(&format!("write it in capitals: {upper}")),
        ));
    }
    Err(ValueError::new(
        format!("`{t}` is not a current ISO 4217 currency code"),
        Some("use the three-letter code, such as EUR, USD, GBP or CHF"),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::str::FromStr;

    fn d(s: &str) -> Decimal {
        Decimal::from_str(s).unwrap()
    }

    #[test]
    fn decimals_are_read_exactly() {
        assert_eq!(parse_decimal("1150000.50").unwrap(), d("1150000.5"));
        assert_eq!(parse_decimal("-4200000").unwrap(), d("-4200000"));
        assert_eq!(parse_decimal("+12").unwrap(), d("12"));
        // 0.1 has no exact binary form; read through text it stays exactly 0.1.
        assert_eq!(parse_decimal("0.1").unwrap() * d("3"), d("0.3"));
        assert_eq!(parse_decimal("0.000001").unwrap(), d("0.000001"));
    }

    #[test]
    fn malformed_decimals_are_refused() {
        for bad in [
            "", "-", "1.", ".5", "1e6", "1,000", "1_000", "0x10", "abc", ".nan", "-.inf", "NaN",
            "1.2.3", "1 000",
        ] {
            assert!(parse_decimal(bad).is_err(), "{bad:?} was accepted");
        }
        assert!(parse_decimal("0.0000001").is_err(), "seven places accepted");
        assert!(parse_decimal("1000000000000001").is_err());
        assert!(parse_decimal("99999999999999999999999999999999").is_err());
        assert!(parse_decimal("1000000000000000").is_ok());
    }

    #[test]
    fn rates_in_every_accepted_form() {
        assert_eq!(parse_rate("8%").unwrap(), d("0.08"));
        assert_eq!(parse_rate("8.25%").unwrap(), d("0.0825"));
        assert_eq!(parse_rate("0.08").unwrap(), d("0.08"));
        assert_eq!(parse_rate("-2.5 %").unwrap(), d("-0.025"));
        assert!(parse_rate("eight percent").is_err());
        assert!(parse_rate("8%%").is_err());
        assert!(parse_rate("%").is_err());
    }

    #[test]
    fn rate_range() {
        assert!(check_rate(d("-1")).is_err());
        assert!(check_rate(d("-0.999999")).is_ok());
        assert!(check_rate(d("10000")).is_ok());
        assert!(check_rate(d("10000.01")).is_err());
    }

    #[test]
    fn dates_must_exist() {
        assert_eq!(
            parse_date("2028-02-29").unwrap(),
            NaiveDate::from_ymd_opt(2028, 2, 29).unwrap()
        );
        assert!(parse_date("2027-02-29").is_err());
        assert!(parse_date("2027-02-30").is_err());
        assert!(parse_date("2027-13-01").is_err());
        assert!(parse_date("2027-1-01").is_err());
        assert!(parse_date("15/01/2027").is_err());
        // Outside the accepted years: typing slips, refused with their own words.
        let e = parse_date("0207-01-15").unwrap_err();
        assert!(e.message.contains("1900 to 2399"), "{}", e.message);
        assert!(parse_date("2400-01-01").is_err());
        assert!(parse_date("1900-01-01").is_ok());
        assert!(parse_date("2399-12-31").is_ok());
    }

    #[test]
    fn counts_are_grouped_by_thousands() {
        assert_eq!(grouped(0), "0");
        assert_eq!(grouped(999), "999");
        assert_eq!(grouped(100_000), "100,000");
        assert_eq!(grouped(50_000_026), "50,000,026");
    }

    #[test]
    fn leading_zeros_are_refused() {
        // `[-1,000, 600]` reaches the reader as `-1`, `000`, `600`.
        let e = parse_decimal("000").unwrap_err();
        assert!(e.hint.unwrap().contains("1,000,000"));
        assert!(parse_decimal("-0600").is_err());
        assert!(parse_decimal("00.5").is_err());
        assert_eq!(parse_decimal("0").unwrap(), Decimal::ZERO);
        assert_eq!(parse_decimal("-0.25").unwrap(), d("-0.25"));
    }

    #[test]
    fn a_rate_of_100_percent_or_more_needs_the_sign() {
        assert!(check_rate_form("0.09", d("0.09")).is_ok());
        assert!(check_rate_form("-0.5", d("-0.5")).is_ok());
        assert!(check_rate_form("900%", d("9")).is_ok());
        let e = check_rate_form("9", d("9")).unwrap_err();
        assert_eq!(
            e.message,
            "`9` without a percent sign is a fraction, so it means 900%"
        );
        assert!(check_rate_form("1", d("1")).is_err());
        assert!(check_rate_form("-1.5", d("-1.5")).is_err());
    }

    #[test]
    fn currency_list_is_sorted_and_checked() {
        assert!(
            CURRENCIES.windows(2).all(|w| w[0] < w[1]),
            "list must stay sorted"
        );
        assert_eq!(check_currency("EUR").unwrap(), "EUR");
        assert!(check_currency("eur")
            .unwrap_err()
            .hint
            .unwrap()
            .contains("EUR"));
        assert!(check_currency("EUROS").is_err());
        assert!(check_currency("XXX").is_err());
    }
}
