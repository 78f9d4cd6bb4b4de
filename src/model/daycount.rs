//! Day-count conventions (ISDA 2006 Definitions, section 4.16), as exact fractions:
//! every year fraction is an integer number of units over a fixed denominator, so
//! that dated flows keep an exact integer clock.

use chrono::{Datelike, NaiveDate};
use serde::Serialize;

/// A day-count convention.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
pub enum DayCount {
    /// Actual/365 (Fixed): days / 365.
    #[serde(rename = "act/365f")]
    Act365F,
    /// Actual/360: days / 360.
    #[serde(rename = "act/360")]
    Act360,
    /// Actual/Actual (ISDA): days in leap years / 366 + days in other years / 365.
    #[serde(rename = "act/act-isda")]
    ActActIsda,
    /// 30/360 (bond basis).
    #[serde(rename = "30/360")]
    Thirty360,
    /// 30E/360 (Eurobond basis).
    #[serde(rename = "30e/360")]
    ThirtyE360,
    /// 30E/360 (ISDA).
    #[serde(rename = "30e/360-isda")]
    ThirtyE360Isda,
}

/// 365 * 366: the common denominator of Actual/Actual (ISDA).
const ACT_ACT_UNITS: u64 = 365 * 366;

impl DayCount {
    /// Every convention, in the order the deal-file reference lists them.
    pub(crate) const ALL: [DayCount; 6] = [
        DayCount::Act365F,
        DayCount::Act360,
        DayCount::ActActIsda,
        DayCount::Thirty360,
        DayCount::ThirtyE360,
        DayCount::ThirtyE360Isda,
    ];

    /// The name used in deal files.
    pub fn as_str(self) -> &'static str {
        match self {
            DayCount::Act365F => "act/365f",
            DayCount::Act360 => "act/360",
            DayCount::ActActIsda => "act/act-isda",
            DayCount::Thirty360 => "30/360",
            DayCount::ThirtyE360 => "30e/360",
            DayCount::ThirtyE360Isda => "30e/360-isda",
        }
    }

    /// Reads a name as used in deal files (case-insensitive).
    pub fn parse(name: &str) -> Option<DayCount> {
        let n = name.trim().to_ascii_lowercase();
        DayCount::ALL.into_iter().find(|d| d.as_str() == n)
    }

    /// The denominator: the year fraction is `units / units_per_year` exactly.
    pub fn units_per_year(self) -> u64 {
        match self {
            DayCount::Act365F => 365,
            DayCount::ActActIsda => ACT_ACT_UNITS,
            DayCount::Act360
            | DayCount::Thirty360
            | DayCount::ThirtyE360
            | DayCount::ThirtyE360Isda => 360,
        }
    }

    /// The numerator of the year fraction from `from` to `to` (negative when `to` is
    /// earlier). For 30E/360 (ISDA) `to` is taken not to be the termination date; use
    /// [`DayCount::units_in_series`] when it may be.
    pub fn units(self, from: NaiveDate, to: NaiveDate) -> i64 {
        self.units_in_series(from, to, None)
    }

    /// Like [`DayCount::units`], naming the series' termination date (its last flow),
    /// which 30E/360 (ISDA) treats differently at the end of February.
    pub(crate) fn units_in_series(
        self,
        from: NaiveDate,
        to: NaiveDate,
        termination: Option<NaiveDate>,
    ) -> i64 {
        if to < from
            && matches!(
                self,
                DayCount::Act365F | DayCount::Act360 | DayCount::ActActIsda
            )
        {
            return -self.units_in_series(to, from, termination);
        }
        let days = (to - from).num_days();
        match self {
            DayCount::Act365F | DayCount::Act360 => days,
            DayCount::ActActIsda => act_act_units(from, to),
            DayCount::Thirty360 => {
                let d1 = from.day().min(30);
                let d2 = if to.day() == 31 && d1 > 29 {
                    30
                } else {
                    to.day()
                };
                thirty(from, to, d1, d2)
            }
            DayCount::ThirtyE360 => thirty(from, to, from.day().min(30), to.day().min(30)),
            DayCount::ThirtyE360Isda => {
                let d1 = if is_last_of_february(from) {
                    30
                } else {
                    from.day().min(30)
                };
                let d2 = if is_last_of_february(to) && Some(to) != termination {
                    30
                } else {
                    to.day().min(30)
                };
                thirty(from, to, d1, d2)
            }
        }
    }

    #[cfg(test)]
    /// The year fraction as a float, for display and approximate work only.
    pub(crate) fn year_fraction(self, from: NaiveDate, to: NaiveDate) -> f64 {
        self.units(from, to) as f64 / self.units_per_year() as f64
    }
}

impl std::fmt::Display for DayCount {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

fn thirty(from: NaiveDate, to: NaiveDate, d1: u32, d2: u32) -> i64 {
    360 * i64::from(to.year() - from.year())
        + 30 * (i64::from(to.month()) - i64::from(from.month()))
        + (i64::from(d2) - i64::from(d1))
}

fn is_last_of_february(d: NaiveDate) -> bool {
    d.month() == 2 && d.succ_opt().is_some_and(|n| n.month() == 3)
}

fn is_leap(year: i32) -> bool {
    NaiveDate::from_ymd_opt(year, 2, 29).is_some()
}

/// Units of 1/(365*366) year: a day in a leap year is worth 365 units, a day in any
/// other year 366, so that 366 leap days or 365 ordinary days make one year each.
fn act_act_units(from: NaiveDate, to: NaiveDate) -> i64 {
    let mut units = 0i64;
    let mut cursor = from;
    while cursor < to {
        let next_year = NaiveDate::from_ymd_opt(cursor.year() + 1, 1, 1).unwrap_or(to);
        let end = next_year.min(to);
        let days = (end - cursor).num_days();
        units += days * if is_leap(cursor.year()) { 365 } else { 366 };
        if end <= cursor {
            break;
        }
        cursor = end;
    }
    units
}

#[cfg(test)]
mod tests {
    use super::*;

    fn date(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    #[test]
    fn act_act_isda_check_values() {
        // ISDA 2006 s4.16 examples as reproduced in QuantLib's test suite, values per
        // docs/methods.md, Check values (day counts) [computed].
        let f = DayCount::ActActIsda.year_fraction(date(2003, 11, 1), date(2004, 5, 1));
        assert!((f - 0.497724380567).abs() < 1e-12, "{f}");
        let f = DayCount::ActActIsda.year_fraction(date(1999, 7, 1), date(2000, 7, 1));
        // That reproduction prints this one to 12 places as ...8600; the exact value is
        // 184/365 + 182/366 = 1.00137734860394..., so compare within 1e-11 and check
        // the exact units below.
        assert!((f - 1.001377348600).abs() < 1e-11, "{f}");
        assert_eq!(
            DayCount::ActActIsda.units(date(1999, 7, 1), date(2000, 7, 1)),
            184 * 366 + 182 * 365
        );
        // Exactly: 61 days of 2003 and 121 days of 2004.
        assert_eq!(
            DayCount::ActActIsda.units(date(2003, 11, 1), date(2004, 5, 1)),
            61 * 366 + 121 * 365
        );
    }

    #[test]
    fn thirty_360_check_values() {
        // ISDA 2006 s4.16(f) and (g); day counts per docs/methods.md, Check values
        // [computed, matching the ISDA examples as reproduced in QuantLib's test suite].
        assert_eq!(
            DayCount::Thirty360.units(date(2007, 2, 28), date(2007, 8, 31)),
            183
        );
        assert_eq!(
            DayCount::ThirtyE360.units(date(2007, 2, 28), date(2007, 8, 31)),
            182
        );
    }

    #[test]
    fn thirty_e_360_isda_february_rule() {
        // ISDA 2006 s4.16(h): the last day of February counts as the 30th, except as D2
        // when it is the termination date. Worked by hand from the formula.
        let (feb, aug) = (date(2007, 2, 28), date(2007, 8, 31));
        assert_eq!(DayCount::ThirtyE360Isda.units(feb, aug), 180);
        let (aug6, feb8) = (date(2007, 8, 31), date(2008, 2, 29));
        assert_eq!(DayCount::ThirtyE360Isda.units(aug6, feb8), 180);
        assert_eq!(
            DayCount::ThirtyE360Isda.units_in_series(aug6, feb8, Some(feb8)),
            179
        );
        // A 28 February in a leap year is not the last day of the month.
        assert_eq!(
            DayCount::ThirtyE360Isda.units(date(2008, 1, 28), date(2008, 2, 28)),
            30
        );
    }

    #[test]
    fn bond_basis_d2_rule() {
        // 30/360 bond basis: D2 = 31 becomes 30 only when D1 > 29 (ISDA 2006 s4.16(f)).
        assert_eq!(
            DayCount::Thirty360.units(date(2027, 1, 30), date(2027, 3, 31)),
            60
        );
        assert_eq!(
            DayCount::Thirty360.units(date(2027, 1, 15), date(2027, 3, 31)),
            76
        );
        assert_eq!(
            DayCount::ThirtyE360.units(date(2027, 1, 15), date(2027, 3, 31)),
            75
        );
    }

    #[test]
    fn actual_counts_and_denominators() {
        let (a, b) = (date(2024, 1, 1), date(2025, 1, 1));
        assert_eq!(DayCount::Act365F.units(a, b), 366);
        assert_eq!(DayCount::Act360.units(a, b), 366);
        assert_eq!(DayCount::Act365F.units(b, a), -366);
        assert_eq!(DayCount::ActActIsda.units(a, b), 133590);
        assert_eq!(DayCount::ActActIsda.units(b, a), -133590);
        assert_eq!(DayCount::ActActIsda.units_per_year(), 133590);
        assert_eq!(DayCount::Act360.units_per_year(), 360);
    }

    #[test]
    fn names_round_trip() {
        for d in DayCount::ALL {
            assert_eq!(DayCount::parse(d.as_str()), Some(d));
        }
        assert_eq!(DayCount::parse("ACT/365F"), Some(DayCount::Act365F));
        assert_eq!(DayCount::parse("act/365"), None);
    }
}
