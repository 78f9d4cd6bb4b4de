//! The committee figures other than the IRRs themselves: NPV (exact to the cent and
//! for drawing), MIRR, return on invested capital, money multiple, profitability index,
//! payback, the NPV profile, balance paths with their classification, and the
//! investment/borrowing stance at each IRR with the decision it gives.
//!
//! All rates are annual effective fractions; a flow at offset `o` sits
//! `o / units_per_year` years after the series' start, to which values are discounted.

mod balance;
mod capital;
mod npv;
mod payback;

pub use balance::*;
pub use capital::*;
pub use npv::*;
pub use payback::*;

use super::analysis::{
    ApproxAmount, BalanceKind, BalanceRow, Decision, Payback, PaybackMethod, PaybackStatus,
    ProfilePoint, Stance,
};
use super::dd::Dd;
use super::flows::Flows;
use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, Zero};
use rust_decimal::prelude::{FromPrimitive, ToPrimitive};
use rust_decimal::{Decimal, RoundingStrategy};

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::engine::flows::FlowPoint;
    use chrono::NaiveDate;
    use std::str::FromStr;

    fn dec(s: &str) -> Decimal {
        Decimal::from_str(s).unwrap()
    }

    /// Periodic flows, one amount a period, `m` periods a year.
    pub(crate) fn periodic(amounts: &[&str], m: u32) -> Flows {
        Flows::periodic(amounts.iter().map(|a| dec(a)), m).normalised()
    }

    /// Dated flows on an Act/365F clock.
    fn dated(items: &[(&str, &str)]) -> Flows {
        let d0 = NaiveDate::from_str(items[0].0).unwrap();
        Flows {
            points: items
                .iter()
                .map(|(d, a)| {
                    let date = NaiveDate::from_str(d).unwrap();
                    FlowPoint {
                        offset: (date - d0).num_days(),
                        amount: dec(a),
                        date: Some(date),
                        period: None,
                        note: None,
                    }
                })
                .collect(),
            units_per_year: 365,
            periods_per_year: None,
        }
    }

    pub(crate) fn lorie_savage() -> Flows {
        periodic(&["-1600", "10000", "-10000"], 1)
    }

    pub(crate) fn mine() -> Flows {
        let mut a = vec!["-30"];
        a.extend(["10"; 9]);
        a.push("-65");
        periodic(&a, 1)
    }

    pub(crate) fn no_real_irr() -> Flows {
        periodic(&["1000", "-3000", "2500"], 1)
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn npv_exact_check_values() {
        // Lorie & Savage 1955 [flows from memory; values computed]: NPV@10% = -773.5537
        assert_eq!(
            npv_exact(&lorie_savage(), dec("0.10")),
            Some(dec("-773.55"))
        );
        // corporate-finance textbook mine example [memory]; NPV@10% = 2.529924
        assert_eq!(npv_exact(&mine(), dec("0.10")), Some(dec("2.53")));
        // corporate-finance textbook example [memory]; NPV@10% = 338.8430
        assert_eq!(npv_exact(&no_real_irr(), dec("0.1")), Some(dec("338.84")));
        assert_eq!(npv_exact(&mine(), dec("-1")), None);
    }

    #[test]
    fn npv_exact_dated_and_monthly() {
        // Lorie & Savage flows dated 2024-01-01, 2025-01-01, 2026-01-01 on Act/365F
        // (offsets 0, 366, 731 days): -773.7694956119... [computed with mpmath 50 digits]
        let f = dated(&[
            ("2024-01-01", "-1600"),
            ("2025-01-01", "10000"),
            ("2026-01-01", "-10000"),
        ]);
        assert_eq!(npv_exact(&f, dec("0.1")), Some(dec("-773.77")));
        // Monthly flows at an annual 10% hurdle, discounted by 1.1^(-k/12):
        // 7357.3060954116... [computed with mpmath 50 digits; numpy-financial 1.0 npv at
        // the monthly rate 1.1^(1/12) - 1 gives 7357.306095411637]
        let m = periodic(
            &[
                "-12000", "1500", "1500", "1500", "-500", "2000", "2000", "2000", "2000", "2000",
                "2000", "2000", "2500",
            ],
            12,
        );
        assert_eq!(npv_exact(&m, dec("0.1")), Some(dec("7357.31")));
        assert!(close(npv_f64(&m, 0.1), 7357.306095411637, 1e-8));
    }

    #[test]
    fn npv_exact_rounds_half_away_from_zero() {
        // Undiscounted halves of a cent (common practice for money: half away from zero).
        assert_eq!(
            npv_exact(&periodic(&["0.005"], 1), dec("0.1")),
            Some(dec("0.01"))
        );
        assert_eq!(
            npv_exact(&periodic(&["-0.125"], 1), dec("0.1")),
            Some(dec("-0.13"))
        );
        // 110 a year out at 10% is exactly 100, which a binary float can miss by an ulp.
        assert_eq!(
            npv_exact(&periodic(&["0", "110.055"], 1), dec("0.1")),
            Some(dec("100.05"))
        );
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(300))]
        /// Differential: the fast NPV (double-double with an error bound, settled
        /// exactly only when the cent is in doubt) against the exact rational NPV
        /// rounded to the cent, on periodic flows, where the value is rational.
        #[test]
        fn fast_npv_to_the_cent_matches_the_exact_fraction(
            cents_list in proptest::collection::vec(-10_000_000_000i64..10_000_000_000, 2..60),
            bp in -9_900i64..50_000,
            m in proptest::sample::select(vec![1u32, 2, 4, 12]),
        ) {
            let amounts: Vec<String> = cents_list
                .iter()
                .map(|c| Decimal::new(*c, 2).to_string())
                .collect();
            let refs: Vec<&str> = amounts.iter().map(String::as_str).collect();
            let flows = periodic(&refs, m);
            proptest::prop_assume!(!flows.points.is_empty());
            let rate = Decimal::new(bp, 4);
            let Some((num, den)) = npv_rational(&flows, rate) else {
                return Ok(());
            };
            let want = exact_figure(&num, &den);
            let got = npv_at(&flows, rate);
            match (want, got) {
                (NpvAt::Cents(a), Some(NpvAt::Cents(b))) => proptest::prop_assert_eq!(a, b),
                (NpvAt::Beyond(a), Some(NpvAt::Beyond(b))) => {
                    proptest::prop_assert_eq!(a.negative, b.negative)
                }
                (w, g) => proptest::prop_assert!(false, "exact {w:?}, fast {g:?}"),
            }
        }
    }

    #[test]
    fn npv_exactly_half_a_cent_is_settled_exactly() {
        // Exact construction: 1,050,000.00525 a year out at 5% is worth 1,000,000.005,
        // so the NPV is exactly 0.005; half away from zero gives 0.01 (common practice
        // for money). The double-double value lands just below the tie.
        let tie = periodic(&["-1000000", "1050000.00525"], 1);
        assert_eq!(npv_exact(&tie, dec("0.05")), Some(dec("0.01")));
        let negative = periodic(&["1000000", "-1050000.00525"], 1);
        assert_eq!(npv_exact(&negative, dec("0.05")), Some(dec("-0.01")));
        // The same flows twelve months apart on a monthly clock: still whole years.
        let mut monthly = vec!["-1000000"];
        monthly.extend(["0"; 11]);
        monthly.push("1050000.00525");
        assert_eq!(
            npv_exact(&periodic(&monthly, 12), dec("0.05")),
            Some(dec("0.01"))
        );
        // Exact construction over two years: 1.05^2 = 1.1025, and 1,102,500.0055125
        // discounts to 1,000,000.005; with 0.0025 more at year 1 (0.00238095...), the
        // NPV is 0.00738..., which is 0.01 and not a tie.
        let two = periodic(&["-1000000", "0.0025", "1102500.0055125"], 1);
        assert_eq!(npv_exact(&two, dec("0.05")), Some(dec("0.01")));
    }

    #[test]
    fn npv_rational_matches_exact_fractions() {
        // -100 + 121 / 1.1^2 = 0 exactly (exact construction).
        let (num, _) = npv_rational(&periodic(&["-100", "0", "121"], 1), dec("0.1")).unwrap();
        assert!(num.is_zero());
        // -1 + 2 / 1.25 + 3 / 1.25^3 = 0.6 + 1.536 = 2.136 (exact: 1.25 = 5/4).
        let (num, den) = npv_rational(&periodic(&["-1", "2", "0", "3"], 1), dec("0.25")).unwrap();
        assert_eq!(BigInt::from(2136) * &den, num * BigInt::from(1000));
        // A flow half a year out has an irrational discount factor: no fraction.
        assert!(npv_rational(&periodic(&["-1", "2"], 2), dec("0.25")).is_none());
    }

    #[test]
    fn npv_beyond_decimal_range_keeps_sign_and_size() {
        // At -99.9999% a year, year k multiplies by 10^(6k): 600 at year 10 is 6e62 now
        // (exact construction), beyond Decimal's 7.9e28.
        let mut amounts = vec!["-1000"];
        amounts.extend(["0"; 9]);
        amounts.push("600");
        let f = periodic(&amounts, 1);
        assert_eq!(npv_exact(&f, dec("-0.999999")), None);
        match npv_at(&f, dec("-0.999999")) {
            Some(NpvAt::Beyond(a)) => {
                assert!(!a.negative);
                // log10(6e62 - 1000) = 62.77815125038364 [log10 6 = 0.778151250383644,
                // Python math.log10].
                assert!(close(a.log10_abs, 62.77815125038364, 1e-12), "{a:?}");
            }
            other => panic!("{other:?}"),
        }
        // Half-yearly, so no exact fraction: the scaled double-double sum gives the size.
        let mut half = vec!["-1000"];
        half.extend(["0"; 18]);
        half.push("-600");
        match npv_at(&periodic(&half, 2), dec("-0.999999")) {
            Some(NpvAt::Beyond(a)) => {
                assert!(a.negative);
                // 600 at 9.5 years is 600 * 10^57 now: log10 = 59.77815125038364.
                assert!(close(a.log10_abs, 59.77815125038364, 1e-12), "{a:?}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn mirr_check_values() {
        // Lorie & Savage 1955 (docs/methods.md, Check values): MIRR(10%, 10%) = 5.598956%
        let m = mirr(&lorie_savage(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.05598956, 5e-9), "{m}");
        // mine example (docs/methods.md, Check values): MIRR(10%, 10%) = 10.495274%
        let m = mirr(&mine(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.10495274, 5e-9), "{m}");
        // 1000, -3000, 2500: 0.1663332857006754 [numpy-financial 1.0 mirr, computed]
        let m = mirr(&no_real_irr(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.1663332857006754, 1e-12), "{m}");
        assert_eq!(mirr(&periodic(&["-5", "-6"], 1), 0.1, 0.1), None);
        assert_eq!(mirr(&periodic(&["5"], 1), 0.1, 0.1), None);
    }

    #[test]
    fn mirr_monthly_matches_numpy_financial() {
        // numpy-financial's mirr on the monthly rates 1.08^(1/12)-1 (finance) and
        // 1.12^(1/12)-1 (reinvestment) gives 0.04827535206868405 a month, i.e.
        // 0.7607775529642122 a year [numpy-financial 1.0 mirr, computed]
        let m = periodic(
            &[
                "-12000", "1500", "1500", "1500", "-500", "2000", "2000", "2000", "2000", "2000",
                "2000", "2000", "2500",
            ],
            12,
        );
        let got = mirr(&m, 0.08, 0.12).unwrap();
        assert!(close(got, 0.7607775529642122, 1e-11), "{got}");
    }

    /// The IRR of -a, b, c (one sign change) from the quadratic formula in v = 1/(1+r).
    fn quadratic_irr(a: f64, b: f64, c: f64) -> f64 {
        let v = (-b + (b * b + 4.0 * a * c).sqrt()) / (2.0 * c);
        1.0 / v - 1.0
    }

    #[test]
    fn ric_equals_irr_for_pure_investment() {
        // Teichroew et al. 1965: with the balance never positive, the finance rate never
        // applies and RIC is the IRR (here from the quadratic formula).
        let f = periodic(&["-100", "60", "60"], 1);
        let irr = quadratic_irr(100.0, 60.0, 60.0);
        for fin in [0.0, 0.05, 0.3] {
            let ric = return_on_invested_capital(&f, fin).unwrap();
            assert!(close(ric, irr, 1e-10), "{ric} vs {irr}");
        }
    }

    #[test]
    fn ric_above_finance_iff_npv_positive() {
        // Teichroew et al. 1965: RIC > k exactly when NPV(k) > 0.
        let series = [
            lorie_savage(),
            mine(),
            no_real_irr(),
            periodic(&["-100", "220", "-121"], 1),
        ];
        for f in &series {
            // At a 0% finance rate the Lorie & Savage balance can only reach zero at -100%.
            for fin in [0.01, 0.05, 0.1, 0.2, 0.5, 1.0] {
                let npv = npv_f64(f, fin);
                let ric = return_on_invested_capital(f, fin)
                    .unwrap_or_else(|| panic!("no RIC for {:?} at {fin}", points_f64(f)));
                if npv.abs() < 1e-9 {
                    // NPV(k) = 0 (the double root of -100, 220, -121 at 10%): RIC = k.
                    assert!(close(ric, fin, 1e-9), "finance {fin}, ric {ric}");
                } else {
                    assert_eq!(ric > fin, npv > 0.0, "finance {fin}, ric {ric}, npv {npv}");
                }
            }
        }
        // 1000, -3000, 2500 at 10%: 1100 - 3000 = -1900 tied up for a year, repaid by 2500.
        let ric = return_on_invested_capital(&no_real_irr(), 0.1).unwrap();
        assert!(close(ric, 2500.0 / 1900.0 - 1.0, 1e-10));
        assert_eq!(
            return_on_invested_capital(&periodic(&["5", "6"], 1), 0.1),
            None
        );
        // Financed at 300%, 1000 grows to 4000 and covers the 3000: no capital is ever
        // tied up, so there is no rate to find.
        assert_eq!(return_on_invested_capital(&no_real_irr(), 3.0), None);
    }

    #[test]
    fn multiple_index_and_payback() {
        // Common practice: inflows over outflows, undiscounted.
        assert_eq!(money_multiple(&mine()), Some(dec("0.9474")));
        assert_eq!(
            money_multiple(&periodic(&["-100", "60", "60"], 1)),
            Some(dec("1.2"))
        );
        assert_eq!(money_multiple(&periodic(&["100"], 1)), None);
        // PI at 10% for -100, 60, 60: (60/1.1 + 60/1.21) / 100
        let pi = profitability_index(&periodic(&["-100", "60", "60"], 1), 0.1).unwrap();
        assert!(close(pi, (60.0 / 1.1 + 60.0 / 1.21) / 100.0, 1e-14));
        // -100 then 40 a half-year: half-way through the third half-year.
        let h = payback(&periodic(&["-100", "40", "40", "40"], 2), 0.0);
        assert_eq!(h.simple_years, Some(1.25));
        assert_eq!(h.status, PaybackStatus::Reached);
        assert_eq!(h.method, PaybackMethod::WithinPeriod);
        assert!(!h.turns_negative_again);
        assert_eq!(h.discounted_years, Some(1.25));
        let short = payback(&periodic(&["-100", "40"], 1), 0.1);
        assert_eq!(short.simple_years, None);
        assert_eq!(short.status, PaybackStatus::NotReached);
    }

    /// Payback is the first time the running total turns non-negative and stays so
    /// (common practice: the undiscounted payback period, interpolated within the
    /// period in which it falls).
    #[test]
    fn payback_counts_periods_without_flows() {
        // -1,000,000, nine empty years, then 5,000,000: the money comes back in year 10,
        // a fifth of the way into that year's period: 9.2 years, not 2.
        let mut a = vec!["-1000000"];
        a.extend(["0"; 9]);
        a.push("5000000");
        let p = payback(&periodic(&a, 1), 0.0);
        assert_eq!(p.status, PaybackStatus::Reached);
        assert!(close(p.simple_years.unwrap(), 9.2, 1e-12), "{p:?}");
    }

    #[test]
    fn payback_of_a_deal_that_ends_below_zero_is_not_reached() {
        // The mine: -30, then 10 a year for nine years (back to +60), then -65: the
        // running total ends at -5, so the money is not paid back within the forecast,
        // although it was recovered for a while (after year 3).
        let p = payback(&mine(), 0.1);
        assert_eq!(p.status, PaybackStatus::NotReached);
        assert_eq!(p.simple_years, None);
        assert!(p.turns_negative_again);
        // Discounted at 10% the closure cost weighs less: the NPV at 10% is 2.53
        // (docs/methods.md, Check values), so the discounted total recovers in year 4
        // (after 3 years 30 - 24.8685 = 5.1315 is left; year 4 brings 6.8301) and stays
        // above zero.
        assert_eq!(p.discounted_status, PaybackStatus::Reached);
        let d = p.discounted_years.unwrap();
        let left = 30.0 - 10.0 * (1.0 / 1.1 + 1.0 / 1.21 + 1.0 / 1.331);
        assert!(close(d, 3.0 + left / (10.0 / 1.4641), 1e-12), "{d}");
        // A later recovery that lasts is the payback: -100, 60, 60, -50, 100 has the
        // running totals -100, -40, 20, -30, 70: paid back with the last flow, 0.3 of the
        // way through its period (30 / 100).
        let q = payback(&periodic(&["-100", "60", "60", "-50", "100"], 1), 0.0);
        assert_eq!(q.status, PaybackStatus::Reached);
        assert!(close(q.simple_years.unwrap(), 3.3, 1e-12), "{q:?}");
        assert!(q.turns_negative_again);
    }

    #[test]
    fn payback_does_not_apply_when_the_investor_is_paid_first() {
        // 1000, -3000, 2500: the investor receives money first.
        let p = payback(&no_real_irr(), 0.1);
        assert_eq!(p.status, PaybackStatus::NotApplicable);
        assert_eq!(p.discounted_status, PaybackStatus::NotApplicable);
        assert_eq!(p.simple_years, None);
        assert_eq!(p.discounted_years, None);
        // Only inflows: never out of pocket.
        let q = payback(&periodic(&["100", "50"], 1), 0.1);
        assert_eq!(q.status, PaybackStatus::NotApplicable);
    }

    #[test]
    fn payback_of_dated_flows_is_the_date_of_the_flow() {
        // A five-year bullet loan: 1,000 lent on 2024-01-01, 50 of interest each year,
        // 1,050 at maturity on 2029-01-01. The running total is negative until
        // maturity, so the payback is the maturity date, not a time between two dates.
        let p = payback(
            &dated(&[
                ("2024-01-01", "-1000"),
                ("2025-01-01", "50"),
                ("2026-01-01", "50"),
                ("2027-01-01", "50"),
                ("2028-01-01", "50"),
                ("2029-01-01", "1050"),
            ]),
            0.05,
        );
        assert_eq!(p.status, PaybackStatus::Reached);
        assert_eq!(p.method, PaybackMethod::FlowDate);
        assert_eq!(p.simple_date.as_deref(), Some("2029-01-01"));
        assert_eq!(p.simple_years, Some(1827.0 / 365.0));
        // Discounted at its own coupon rate (5%) the loan's NPV is about zero, a hair
        // either side by day counting; the discounted payback, when reached, is at
        // maturity too.
        if p.discounted_status == PaybackStatus::Reached {
            assert_eq!(p.discounted_date.as_deref(), Some("2029-01-01"));
        }
    }

    #[test]
    fn profile_shows_roots_and_hurdle() {
        let f = lorie_savage();
        let p = npv_profile(&f, &[0.25, 4.0], 0.1);
        assert!(p.len() >= 300);
        assert!(p.windows(2).all(|w| w[0].rate < w[1].rate));
        let first = p.first().unwrap().rate;
        let last = p.last().unwrap().rate;
        assert!(first < 0.1 && last > 4.0 && last <= 10.0);
        for r in [0.25, 4.0, 0.1] {
            assert!(p.iter().any(|q| q.rate == r));
        }
        let at_hurdle = p.iter().find(|q| q.rate == 0.1).unwrap();
        assert!(close(at_hurdle.npv, -773.5537190082644, 1e-9));
        // A root beyond 1000% is left off instead of squashing the chart.
        let q = npv_profile(&f, &[1e6], 0.1);
        assert!(q.iter().all(|x| x.rate <= 10.0 && x.npv.is_finite()));
    }

    #[test]
    fn balance_path_lorie_savage() {
        // Lorie & Savage at 25% (docs/methods.md, Check values): -1600, 8000, 0 (mixed)
        let path = balance_path(&lorie_savage(), 1.25f64.ln());
        let bals: Vec<Decimal> = path.iter().map(|r| r.balance).collect();
        assert_eq!(bals, vec![dec("-1600"), dec("8000"), dec("0")]);
        assert_eq!(balance_kind(&path), BalanceKind::Mixed);
        let pure = balance_path(
            &periodic(&["-100", "60", "60"], 1),
            quadratic_irr(100.0, 60.0, 60.0).ln_1p(),
        );
        assert_eq!(balance_kind(&pure), BalanceKind::PureInvestment);
        assert_eq!(pure.last().unwrap().balance, Decimal::ZERO);
        // A loan taken: 100 received, 110 repaid a year later at 10%.
        let loan = balance_path(&periodic(&["100", "-110"], 1), 1.1f64.ln());
        assert_eq!(balance_kind(&loan), BalanceKind::PureBorrowing);
    }

    #[test]
    fn balance_path_survives_extreme_rates() {
        let f = mine();
        for g in [
            -1e6,
            -50.0,
            f64::NEG_INFINITY,
            50.0,
            230.0,
            1e6,
            f64::INFINITY,
        ] {
            let path = balance_path(&f, g);
            assert_eq!(path.len(), 11);
            // Decimal has no NaN; check the clamping kept every value in range.
            assert!(path.iter().all(|r| r.balance.abs() <= Decimal::MAX));
        }
        // Above 0% the path is computed backwards from a zero final balance (the
        // stable direction at an IRR), so at a huge rate that is no IRR the early
        // balances shrink towards zero instead of overflowing.
        let up = balance_path(&f, 230.0);
        assert_eq!(up[10].balance, Decimal::ZERO);
        assert!(up[0].balance.abs() < Decimal::ONE);
        let down = balance_path(&f, f64::NEG_INFINITY);
        // At -100% every earlier balance is wiped out: each row is its own flow.
        assert!(down.iter().all(|r| r.balance == r.flow));
    }

    /// Every check-value series with its IRRs from docs/methods.md (Check values).
    fn series_with_roots() -> Vec<(Flows, Vec<f64>)> {
        vec![
            (lorie_savage(), vec![0.25, 4.0]),
            (mine(), vec![0.03503024, 0.19542150]),
            (periodic(&["-100", "220", "-121"], 1), vec![0.10]),
            (
                periodic(&["-100", "60", "60"], 1),
                vec![quadratic_irr(100.0, 60.0, 60.0)],
            ),
        ]
    }

    #[test]
    fn hazen_identity_at_each_root() {
        // Hazen 2003: NPV(h) = (k - h) PV at every IRR k (periodic flows, so the
        // generalised weights reduce to Hazen's NPV(h) = (k - h)/(1 + h) PV_h(x)).
        for (f, roots) in series_with_roots() {
            for &k in &roots {
                for h in [0.0, 0.05, 0.1, 0.3, 2.0] {
                    let pv = capital_pv(&f, k.ln_1p(), h);
                    let npv = npv_f64(&f, h);
                    let scale = f
                        .points
                        .iter()
                        .map(|p| p.amount.to_f64().unwrap().abs())
                        .sum::<f64>();
                    assert!(
                        close(npv, (k - h) * pv, 1e-6 * scale),
                        "k {k} h {h}: npv {npv} vs {}",
                        (k - h) * pv
                    );
                }
            }
        }
    }

    #[test]
    fn balance_identity_holds_at_any_rate_for_uneven_intervals() {
        // Telescoping the balance recursion gives NPV(h) = (k-h) PV + F_n (1+h)^(-t_n)
        // for every k (Teichroew et al. 1965 balances; Hazen 2003 weights).
        let f = dated(&[
            ("2024-01-15", "-1000"),
            ("2024-02-01", "300"),
            ("2024-09-30", "-200"),
            ("2025-06-30", "800"),
            ("2027-03-01", "450"),
        ]);
        let pts = points_f64(&f);
        for k in [-0.5, 0.0, 0.07, 0.1, 0.35, 4.0] {
            for h in [0.0, 0.1, 0.25] {
                let fnl = *balances_f64(&pts, f64::ln_1p(k)).last().unwrap();
                let tn = pts.last().unwrap().0;
                let want = (k - h) * capital_pv(&f, f64::ln_1p(k), h) + fnl * (1.0 + h).powf(-tn);
                assert!(close(npv_f64(&f, h), want, 1e-9), "k {k} h {h}");
            }
        }
        // And the limit k -> h is continuous.
        let a = capital_pv(&f, 0.1f64.ln_1p(), 0.1);
        let b = capital_pv(&f, (0.1f64 + 1e-9).ln_1p(), 0.1);
        assert!(close(a, b, 1e-5));
    }

    #[test]
    fn every_root_agrees_with_npv() {
        // Hazen 2003: the decision from any IRR with its stance agrees with NPV(h).
        for (f, roots) in series_with_roots() {
            for &k in &roots {
                for h in [0.0, 0.02, 0.05, 0.1, 0.15, 0.3, 1.0, 5.0] {
                    let npv = npv_f64(&f, h);
                    if npv.abs() < 1e-6 {
                        continue;
                    }
                    let s = stance(&f, k.ln_1p(), h);
                    let d = decision_for_root(k, h, s);
                    let want = if npv > 0.0 {
                        Decision::Accept
                    } else {
                        Decision::Reject
                    };
                    assert_eq!(d, want, "k {k} h {h} npv {npv} stance {s:?}");
                }
            }
        }
        // Lorie & Savage at 10%: both roots lie above the hurdle and NPV = -773.55 < 0,
        // so both are net borrowings and both reject.
        let f = lorie_savage();
        assert_eq!(
            decision_for_root(0.25, 0.1, stance(&f, 1.25f64.ln(), 0.1)),
            Decision::Reject
        );
        assert_eq!(
            decision_for_root(4.0, 0.1, stance(&f, 5f64.ln(), 0.1)),
            Decision::Reject
        );
        assert_eq!(stance(&f, 5f64.ln(), 0.1), Stance::Borrowing);
    }

    #[test]
    fn stance_at_extreme_rates_is_decided() {
        // -1000 today, +2000 a day later, -1 ten years on: one IRR near 2^365 - 1 (the
        // last flow hardly moves it). The float balance path overflows there; the exact
        // identity NPV(h) = (k - h) PV (Hazen 2003) with NPV(10%) > 0 gives a net investment.
        let f = Flows {
            points: [(0, "-1000"), (1, "2000"), (3650, "-1")]
                .iter()
                .map(|&(o, a)| FlowPoint {
                    offset: o,
                    amount: dec(a),
                    date: None,
                    period: None,
                    note: None,
                })
                .collect(),
            units_per_year: 365,
            periods_per_year: None,
        };
        let g = 365.0 * 2f64.ln();
        assert!(npv_f64(&f, 0.1) > 0.0);
        assert_eq!(stance(&f, g, 0.1), Stance::Investment);
        assert_eq!(
            decision_for_root(f64::INFINITY, 0.1, Stance::Investment),
            Decision::Accept
        );
    }
}
