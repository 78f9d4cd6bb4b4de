//! The root finder against series whose roots are known by construction, and its
//! invariants as property tests.
//!
//! Construction: NPV(r) * (1+r)^n = sum C_k x^(n-k) with x = 1 + r, so multiplying out
//! prod (x - x_i) with exact decimals gives flows whose IRRs are exactly x_i - 1
//! (common practice; the identity is elementary algebra). Quadratic factors without
//! real roots hide extra sign changes.

use candor::engine::irr::irr_report;
use candor::engine::roots::{find_roots, RootSet};
use candor::engine::Flows;
use proptest::prelude::*;
use rust_decimal::prelude::*;
use rust_decimal_macros::dec;

/// Coefficients (highest power first) of prod (x - r_i) * prod (x^2 - 2 a x + a^2 + b^2).
fn poly(real: &[Decimal], complex: &[(Decimal, Decimal)]) -> Vec<Decimal> {
    let mut c = vec![Decimal::ONE];
    let mul = |c: &Vec<Decimal>, f: &[Decimal]| {
        let mut out = vec![Decimal::ZERO; c.len() + f.len() - 1];
        for (i, a) in c.iter().enumerate() {
            for (j, b) in f.iter().enumerate() {
                out[i + j] += *a * *b;
            }
        }
        out
    };
    for x in real {
        c = mul(&c, &[Decimal::ONE, -*x]);
    }
    for (a, b) in complex {
        c = mul(&c, &[Decimal::ONE, -dec!(2) * *a, *a * *a + *b * *b]);
    }
    c
}

fn yearly(amounts: &[Decimal]) -> RootSet {
    let offsets: Vec<i64> = (0..amounts.len() as i64).collect();
    find_roots(amounts, &offsets, 1)
}

/// Checks that the set holds exactly the growth factors given (with multiplicity).
fn assert_roots(rs: &RootSet, growth: &[Decimal]) {
    assert!(rs.certified, "not certified: {rs:?}");
    let mut want: Vec<f64> = growth.iter().map(|g| g.to_f64().unwrap().ln()).collect();
    want.sort_by(f64::total_cmp);
    let mut got: Vec<f64> = Vec::new();
    for r in &rs.roots {
        for _ in 0..r.multiplicity {
            got.push(r.y);
        }
    }
    assert_eq!(got.len(), want.len(), "count: got {got:?}, want {want:?}");
    // Every known root lies in the certified interval of the root matched to it (a
    // few ulps of slack for the float conversion of the chosen decimal).
    let intervals: Vec<(f64, f64)> = rs
        .roots
        .iter()
        .flat_map(|r| std::iter::repeat_n((r.lo, r.hi), r.multiplicity as usize))
        .collect();
    for ((g, w), (lo, hi)) in got.iter().zip(&want).zip(&intervals) {
        let slack = 1e-14 * w.abs().max(1.0);
        assert!(
            *lo - slack <= *w && *w <= *hi + slack,
            "root {w} not in [{lo}, {hi}] (estimate {g}): {rs:?}"
        );
        // Clusters of roots widen the band where binary floats cannot tell the sign.
        assert!(
            hi - lo <= 1e-5 * w.abs().max(1.0),
            "interval too wide: [{lo}, {hi}]"
        );
    }
    for r in &rs.roots {
        assert!(r.lo <= r.y && r.y <= r.hi);
    }
}

#[test]
fn two_to_six_sign_changes_from_chosen_roots() {
    // Roots chosen at decimal growth factors; the answer is exact by construction.
    let cases: Vec<Vec<Decimal>> = vec![
        vec![dec!(1.05), dec!(1.3)],
        vec![dec!(0.9), dec!(1.1), dec!(1.4)],
        vec![dec!(0.5), dec!(1.02), dec!(1.25), dec!(2)],
        vec![dec!(0.8), dec!(0.95), dec!(1.08), dec!(1.2), dec!(1.6)],
        vec![
            dec!(0.7),
            dec!(0.9),
            dec!(1.05),
            dec!(1.15),
            dec!(1.3),
            dec!(1.9),
        ],
    ];
    for growth in cases {
        let c = poly(&growth, &[]);
        assert_roots(&yearly(&c), &growth);
    }
}

#[test]
fn hidden_complex_pairs() {
    // Two real roots and a complex pair 1.2 +- 0.5i that adds sign changes but no IRR.
    let growth = [dec!(1.1), dec!(1.5)];
    let c = poly(&growth, &[(dec!(1.2), dec!(0.5))]);
    let rs = yearly(&c);
    assert_roots(&rs, &growth);
}

#[test]
fn double_and_triple_roots() {
    let growth = [dec!(1.1), dec!(1.1), dec!(1.3)];
    let rs = yearly(&poly(&growth, &[]));
    assert_roots(&rs, &growth);
    assert_eq!(rs.roots.len(), 2);
    assert_eq!(rs.roots[0].multiplicity, 2);
    let growth = [dec!(1.07), dec!(1.07), dec!(1.07)];
    let rs = yearly(&poly(&growth, &[]));
    assert_roots(&rs, &growth);
    assert_eq!(rs.roots[0].multiplicity, 3);
}

#[test]
fn clustered_roots() {
    let growth = [dec!(1.1), dec!(1.1001), dec!(1.3)];
    assert_roots(&yearly(&poly(&growth, &[])), &growth);
    let growth = [dec!(1.1), dec!(1.100001)];
    assert_roots(&yearly(&poly(&growth, &[])), &growth);
}

#[test]
fn roots_near_minus_100_and_huge() {
    // -99.5% and +150,000%: both far from economic reality, both must be found.
    let growth = [dec!(0.005), dec!(1.2), dec!(1501)];
    assert_roots(&yearly(&poly(&growth, &[])), &growth);
}

#[test]
fn one_day_first_interval_gives_astronomical_rate() {
    // -1000 then +1100 one day later (act/365f): 10% a day is 1.1^365 - 1 a year,
    // about 1.3e15 (common practice: compounding a daily rate over a year).
    let rs = find_roots(&[dec!(-1000), dec!(1100), dec!(-50)], &[0, 1, 730], 365);
    assert!(rs.certified);
    let top = rs.roots.last().unwrap();
    let annual_log10 = top.y / rs.step_years / std::f64::consts::LN_10;
    assert!(
        (annual_log10 - 365.0 * 1.1f64.log10()).abs() < 0.01,
        "{rs:?}"
    );
}

#[test]
fn dated_flows_with_uneven_steps() {
    // Weekly-step polynomial with exact roots: offsets in days, 7-day step, act/365f.
    let growth = [dec!(1.001), dec!(1.004)];
    let c = poly(&growth, &[]);
    let offsets: Vec<i64> = (0..c.len() as i64).map(|k| 7 * k).collect();
    let rs = find_roots(&c, &offsets, 365);
    assert_eq!(rs.step_units, 7);
    assert_roots(&rs, &growth);
}

#[test]
fn long_monthly_series() {
    // 40 years of monthly flows: outlay, inflows, a closure cost; one certified set.
    let mut c = vec![dec!(-5000000)];
    c.extend(std::iter::repeat_n(dec!(45000), 479));
    c.push(dec!(-2000000));
    let offsets: Vec<i64> = (0..c.len() as i64).collect();
    let rs = find_roots(&c, &offsets, 12);
    assert!(rs.certified, "{rs:?}");
    assert_eq!(rs.descartes, 2);
    assert!(rs.count() == 2 || rs.count() == 0);
}

fn arb_flows() -> impl Strategy<Value = Vec<Decimal>> {
    prop::collection::vec(-1_000_000i64..1_000_000, 2..40)
        .prop_map(|v| {
            v.into_iter()
                .map(|x| Decimal::new(x, 2))
                .collect::<Vec<_>>()
        })
        .prop_filter("needs two non-zero flows", |v| {
            v.iter().filter(|x| !x.is_zero()).count() >= 2
        })
}

fn normalise(amounts: &[Decimal]) -> (Vec<Decimal>, Vec<i64>) {
    let mut a = Vec::new();
    let mut o = Vec::new();
    for (i, x) in amounts.iter().enumerate() {
        if !x.is_zero() {
            a.push(*x);
            o.push(i as i64);
        }
    }
    (a, o)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// Count within the Descartes bound with its parity; NPV changes sign across each
    /// odd-multiplicity root's interval (so each interval holds a root).
    #[test]
    fn count_and_intervals(amounts in arb_flows()) {
        let (a, o) = normalise(&amounts);
        let rs = find_roots(&a, &o, 1);
        prop_assume!(rs.certified);
        prop_assert!(rs.count() <= rs.descartes);
        prop_assert_eq!((rs.descartes - rs.count()) % 2, 0);
        let f = |y: f64| -> f64 {
            a.iter().zip(&o).map(|(c, &n)| c.to_f64().unwrap() * (-(y) * n as f64).exp()).sum()
        };
        for r in &rs.roots {
            prop_assert!(r.lo <= r.hi);
            if r.multiplicity % 2 == 1 && r.hi - r.lo > 1e-9 * r.y.abs().max(1.0) {
                prop_assert!(f(r.lo) * f(r.hi) <= 0.0, "{:?}", r);
            }
        }
    }

    /// Scaling every flow by a constant (even a negative one) leaves the roots alone,
    /// and so does moving the whole series later in time.
    #[test]
    fn scale_and_shift_invariance(amounts in arb_flows(), k in 1i64..50, shift in 0i64..1000, neg in any::<bool>()) {
        let (a, o) = normalise(&amounts);
        let base = find_roots(&a, &o, 1);
        let factor = Decimal::from(if neg { -k } else { k });
        let scaled: Vec<Decimal> = a.iter().map(|x| *x * factor).collect();
        let moved: Vec<i64> = o.iter().map(|x| x + shift).collect();
        for other in [find_roots(&scaled, &o, 1), find_roots(&a, &moved, 1)] {
            prop_assert_eq!(other.count(), base.count());
            prop_assert_eq!(other.certified, base.certified);
            for (x, y) in other.roots.iter().zip(&base.roots) {
                prop_assert!((x.y - y.y).abs() <= 1e-9 * y.y.abs().max(1.0));
            }
        }
    }

    /// Batch screening classifies each root's balance path in binary floats without
    /// building it; the memo builds the path in exact decimals. Both must read the
    /// same kind (pure investment, mixed, pure borrowing) at every root, on random
    /// flows and on flows built from chosen roots (whose balances can be exactly 0).
    #[test]
    fn balance_kinds_agree_with_the_exact_path(
        amounts in arb_flows(),
        raw in prop::collection::btree_set(50i64..400, 1..5),
        per_year in prop::sample::select(vec![1u32, 4, 12]),
    ) {
        let chosen = poly(&raw.iter().map(|x| Decimal::new(*x, 2)).collect::<Vec<_>>(), &[]);
        for flows in [amounts, chosen] {
            let flows = Flows::periodic(flows, per_year).normalised();
            let quick = irr_report(&flows, None, false);
            let exact = irr_report(&flows, None, true);
            prop_assert_eq!(quick.roots.len(), exact.roots.len());
            for (q, e) in quick.roots.iter().zip(&exact.roots) {
                prop_assert_eq!(q.balance_kind, e.balance_kind, "{:?} at {:?}", flows.points.len(), q.annual_rate);
            }
        }
    }

    /// Series built from random chosen roots give back exactly those roots.
    #[test]
    fn chosen_roots_come_back(raw in prop::collection::btree_set(50i64..400, 1..6)) {
        let growth: Vec<Decimal> = raw.iter().map(|x| Decimal::new(*x, 2)).collect();
        let c = poly(&growth, &[]);
        let rs = yearly(&c);
        assert_roots(&rs, &growth);
    }
}

// ------------------------------------------------------------------------------------
// Multiple roots and roots at short decimal rates (issue 18): each printed interval is
// checked against the exact root in big-integer rational arithmetic, not in floats.
//
// Construction: the flows are the coefficients, highest power first, of
// P(x) = prod (a_i x - b_i)^(m_i) * Q(x) expanded in integers, so x_i = b_i / a_i is
// a root of P of multiplicity m_i, i.e. an IRR of b_i / a_i - 1 a period (common
// practice: NPV(r) (1 + r)^n = P(1 + r) is elementary algebra). Q has positive
// coefficients and so no positive root (Descartes' rule of signs).

use num_bigint::BigInt;
use num_traits::{One, Signed, Zero};

/// Coefficients of prod (a x - b)^m * q, highest power first.
fn expand(factors: &[(i64, i64, u32)], q: &[i64]) -> Vec<BigInt> {
    let mut p: Vec<BigInt> = q.iter().map(|&v| BigInt::from(v)).collect();
    for &(a, b, m) in factors {
        for _ in 0..m {
            let mut next = vec![BigInt::zero(); p.len() + 1];
            for (i, c) in p.iter().enumerate() {
                next[i] += c * a;
                next[i + 1] -= c * b;
            }
            p = next;
        }
    }
    p
}

fn decimals(p: &[BigInt]) -> Vec<Decimal> {
    p.iter()
        .map(|c| Decimal::from_str(&c.to_string()).expect("coefficient fits a decimal"))
        .collect()
}

/// The exact value of a binary float as a fraction (numerator, positive denominator).
fn float_ratio(v: f64) -> (BigInt, BigInt) {
    let bits = v.to_bits();
    let biased = ((bits >> 52) & 0x7ff) as i64;
    let mut mant = (bits & ((1u64 << 52) - 1)) as i64;
    let e = if biased == 0 {
        -1074
    } else {
        mant |= 1 << 52;
        biased - 1075
    };
    let mut num = BigInt::from(mant);
    if v < 0.0 {
        num = -num;
    }
    if e >= 0 {
        (num << e as u64, BigInt::one())
    } else {
        (num, BigInt::one() << (-e) as u64)
    }
}

/// `1 + lo <= (b / a)^m <= 1 + hi`, exactly.
fn growth_in(interval: [f64; 2], (a, b): (i64, i64), m: u32) -> bool {
    let pa = num_traits::pow(BigInt::from(a), m as usize);
    let pb = num_traits::pow(BigInt::from(b), m as usize);
    let (ln, ld) = float_ratio(interval[0]);
    let (hn, hd) = float_ratio(interval[1]);
    (&ln + &ld) * &pa <= &pb * &ld && &pb * &hd <= (&hn + &hd) * &pa
}

/// Checks an IRR report against the chosen roots (a, b, multiplicity): certified, the
/// count, each multiplicity, each annual interval holding (b / a)^per_year - 1 exactly,
/// and the intervals of distinct roots apart.
fn assert_exact_roots(
    report: &candor::engine::IrrReport,
    chosen: &[(i64, i64, u32)],
    per_year: u32,
) {
    assert!(report.certified, "not certified: {report:?}");
    let mut want: Vec<(i64, i64, u32)> = chosen.to_vec();
    want.sort_by(|x, y| (x.1 * y.0).cmp(&(y.1 * x.0)));
    assert_eq!(report.roots.len(), want.len(), "{report:?}");
    assert_eq!(
        report.count,
        want.iter().map(|w| w.2).sum::<u32>(),
        "{report:?}"
    );
    for (r, &(a, b, m)) in report.roots.iter().zip(&want) {
        assert_eq!(r.multiplicity, m, "{report:?}");
        let iv = r.interval.expect("finite interval");
        assert!(
            growth_in(iv, (a, b), per_year),
            "({b}/{a})^{per_year} - 1 not in {iv:?}: {report:?}"
        );
    }
    for w in report.roots.windows(2) {
        let (x, y) = (w[0].interval.unwrap(), w[1].interval.unwrap());
        assert!(x[1] < y[0], "intervals overlap: {x:?} {y:?}");
        assert!(w[0].log10_interval[1] < w[1].log10_interval[0]);
    }
}

fn periodic_report(p: &[BigInt], per_year: u32) -> candor::engine::IrrReport {
    irr_report(
        &Flows::periodic(decimals(p), per_year).normalised(),
        None,
        false,
    )
}

#[test]
fn double_root_at_a_tenth_of_a_percent() {
    // Issue 18, series a: 1000000 - 2002000 x + 1002001 x^2... read highest power
    // first: (1000x - 1001)^2 = 1000000 x^2 - 2002000 x + 1002001, a double root at
    // 0.1% a year. The engine printed [0.0009999999999998864, 0.0009999999999998933].
    let p = expand(&[(1000, 1001, 2)], &[1]);
    assert_eq!(
        decimals(&p),
        vec![dec!(1000000), dec!(-2002000), dec!(1002001)]
    );
    let report = periodic_report(&p, 1);
    assert_exact_roots(&report, &[(1000, 1001, 2)], 1);
    assert_eq!(report.exact_check, Some("settled"));
}

#[test]
fn double_root_near_minus_100_percent_monthly() {
    // Issue 18, series b: (10^6 x - 1)^2 monthly: x = 10^-6 a month, annual growth
    // exactly 10^-72, so log10 of annual growth is -72.
    let p = expand(&[(1_000_000, 1, 2)], &[1]);
    let report = periodic_report(&p, 12);
    assert!(report.certified, "{report:?}");
    assert_eq!(report.roots.len(), 1);
    assert_eq!(report.roots[0].multiplicity, 2);
    let [lo, hi] = report.roots[0].log10_interval;
    assert!(lo <= -72.0 && -72.0 <= hi, "[{lo}, {hi}]");
}

#[test]
fn double_roots_off_the_decimal_grid() {
    // Issue 18: [529, -2346, 2601] quarterly is (23x - 51)^2 and [9, -24, 16] monthly
    // is (3x - 4)^2 (expanded by hand and by `expand`); both were "0 roots, undecided".
    let p = expand(&[(23, 51, 2)], &[1]);
    assert_eq!(decimals(&p), vec![dec!(529), dec!(-2346), dec!(2601)]);
    assert_exact_roots(&periodic_report(&p, 4), &[(23, 51, 2)], 4);
    let p = expand(&[(3, 4, 2)], &[1]);
    assert_eq!(decimals(&p), vec![dec!(9), dec!(-24), dec!(16)]);
    assert_exact_roots(&periodic_report(&p, 12), &[(3, 4, 2)], 12);
}

#[test]
fn six_fold_root_at_zero() {
    // (x - 1)^6 = x^6 - 6x^5 + 15x^4 - 20x^3 + 15x^2 - 6x + 1 (binomial theorem):
    // one root at 0% of multiplicity 6 (was reported as 5).
    let p = expand(&[(1, 1, 6)], &[1]);
    let report = periodic_report(&p, 1);
    assert_exact_roots(&report, &[(1, 1, 6)], 1);
    assert_eq!(report.roots[0].annual_rate, Some(0.0));
}

#[test]
fn simple_root_at_a_short_rate_in_a_long_monthly_series() {
    // 481 monthly flows with an exact simple root at 0.3% a month: P(x) =
    // (1000x - 1003) Q(x), Q = 4000 x^479 + 30 (x^478 + ... + 1), positive
    // coefficients; then the same times (1000x - 1010)^2, a double root at 1% a month.
    let mut q = vec![4000i64];
    q.extend(std::iter::repeat_n(30, 479));
    let p = expand(&[(1000, 1003, 1)], &q);
    assert_eq!(p.len(), 481);
    assert_exact_roots(&periodic_report(&p, 12), &[(1000, 1003, 1)], 12);
    let p = expand(&[(1000, 1003, 1), (1000, 1010, 2)], &q[..400]);
    assert_exact_roots(
        &periodic_report(&p, 12),
        &[(1000, 1003, 1), (1000, 1010, 2)],
        12,
    );
}

#[test]
fn simple_root_beside_a_double_root() {
    // (100x - 101)^2 (10^7 x - 10100001): a double root at 1% and a simple one at
    // 1.00000010% (1e-9 relative away); each gets its own interval.
    let chosen = [(100, 101, 2), (10_000_000, 10_100_001, 1)];
    let p = expand(&chosen, &[1]);
    assert_exact_roots(&periodic_report(&p, 1), &chosen, 1);
    // The same beside a triple root, with a positive cubic factor.
    let chosen = [(100, 101, 3), (10_000_000, 10_100_001, 1)];
    let p = expand(&chosen, &[2, 3, 5, 7]);
    assert_exact_roots(&periodic_report(&p, 4), &chosen, 4);
}

#[test]
fn triple_and_quadruple_roots() {
    // (1000x - 1026)^3 (x + 1) and (20x - 21)^4 (x^2 + 1) (x + 3): roots 2.6% triple
    // and 5% quadruple per period.
    let chosen = [(1000, 1026, 3)];
    assert_exact_roots(&periodic_report(&expand(&chosen, &[1, 1]), 2), &chosen, 2);
    let chosen = [(20, 21, 4)];
    let p = expand(&chosen, &[1, 3, 1, 3]);
    assert_exact_roots(&periodic_report(&p, 12), &chosen, 12);
}

#[test]
fn near_double_roots_one_unit_apart() {
    // (1000x - 1001)^2 with the constant moved by one unit: 1000000 x^2 - 2002000 x +
    // 1002000 = (1000x - 1000)(1000x - 1002): simple roots at 0% and 0.2%; and
    // + 1002002 has discriminant 2002000^2 - 4 * 1000000 * 1002002 < 0: no root.
    let report = periodic_report(&decimals_to_big(&[1000000, -2002000, 1002000]), 1);
    assert_exact_roots(&report, &[(1, 1, 1), (500, 501, 1)], 1);
    let report = periodic_report(&decimals_to_big(&[1000000, -2002000, 1002002]), 1);
    assert!(report.certified && report.count == 0, "{report:?}");
}

fn decimals_to_big(v: &[i64]) -> Vec<BigInt> {
    v.iter().map(|&x| BigInt::from(x)).collect()
}

/// Dated flows under a 30/360 count: offsets in 30/360 days, 360 a year.
fn dated_report(p: &[BigInt], step_days: i64) -> candor::engine::IrrReport {
    let amounts = decimals(p);
    let flows = Flows {
        points: amounts
            .into_iter()
            .enumerate()
            .map(|(i, amount)| candor::engine::FlowPoint {
                offset: i as i64 * step_days,
                amount,
                date: None,
                period: None,
                note: None,
            })
            .collect(),
        units_per_year: 360,
        periods_per_year: None,
    };
    irr_report(&flows.normalised(), None, false)
}

#[test]
fn dated_double_roots_on_month_and_year_steps() {
    // The series of issue 18 on 30/360 dates one, three and twelve months apart: the
    // growth factor x is per step, so the annual growth is x^(12 / months).
    let chosen = [(1000, 1001, 2)];
    let p = expand(&chosen, &[1]);
    for (days, per_year) in [(30, 12), (90, 4), (360, 1)] {
        assert_exact_roots(&dated_report(&p, days), &chosen, per_year);
    }
    // A sparse one: (1000x - 1025)^2 (x^6 + 2), flows at 0, 6, 7, 8, 12, 13, 14 months.
    let chosen = [(1000, 1025, 2)];
    assert_exact_roots(
        &dated_report(&expand(&chosen, &[1, 0, 0, 0, 0, 0, 2]), 30),
        &chosen,
        12,
    );
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Random constructed multiple roots (with a random simple root and a positive
    /// factor): every printed interval holds its exact root, checked in rationals.
    #[test]
    fn printed_intervals_hold_constructed_multiple_roots(
        k in -600i64..900,
        m in 2u32..5,
        other in prop::option::of(-700i64..2000),
        q in prop::collection::vec(1i64..50, 1..6),
        per_year in prop::sample::select(vec![1u32, 4, 12]),
    ) {
        prop_assume!(k != 0);
        let mut chosen = vec![(1000i64, 1000 + k, m)];
        if let Some(o) = other {
            prop_assume!(o != k);
            chosen.push((1000, 1000 + o, 1));
        }
        let p = expand(&chosen, &q);
        let report = periodic_report(&p, per_year);
        assert_exact_roots(&report, &chosen, per_year);
    }
}
