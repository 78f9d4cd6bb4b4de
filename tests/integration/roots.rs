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
