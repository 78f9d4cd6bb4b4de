//! Tests of the root finder.

use super::*;
use rust_decimal_macros::dec;

fn yearly(amounts: &[Decimal]) -> RootSet {
    let offsets: Vec<i64> = (0..amounts.len() as i64).collect();
    find_roots(amounts, &offsets, 1)
}

fn rates(rs: &RootSet) -> Vec<f64> {
    rs.roots.iter().map(|r| r.y.exp_m1()).collect()
}

/// An outlay of 1,000, then 120 payments of 15 with an overhaul costing `cost`
/// taken from the payment `from_end` periods before the last (invented shapes
/// whose backward sums change sign twice: up to two roots below 0%).
fn overhauled(cost: i64, from_end: usize) -> Vec<Decimal> {
    let mut flows = vec![Decimal::from(-1000)];
    flows.extend(std::iter::repeat_n(Decimal::from(15), 120));
    flows[120 - from_end] -= Decimal::from(cost);
    flows
}

#[test]
fn a_side_whose_count_allows_two_roots_is_scanned() {
    // Rootless below 0%: proven by the end values and slopes of the scanned
    // pieces, without the subdivision search. (Roots located by a sign scan of
    // these flows at steps of 5e-5 in y over [-0.2, 0.2], in a throwaway script.)
    for (cost, from_end, below) in [(200, 5, 0), (400, 20, 0), (400, 5, 2)] {
        let amounts = overhauled(cost, from_end);
        let rs = yearly(&amounts);
        assert_eq!((rs.above_zero, rs.below_zero), (Some(1), Some(2)));
        assert!(rs.certified, "{cost} {from_end}: {rs:?}");
        assert_eq!(rs.count(), 1 + below, "{cost} {from_end}: {rs:?}");
        let negative = rs.roots.iter().filter(|r| r.y < 0.0).count() as u32;
        assert_eq!(negative, below);
        // (The subdivision search took 32 evaluations for the first shape.)
        assert!(
            rs.evaluations <= 24,
            "{cost} {from_end}: {} evaluations",
            rs.evaluations
        );
        // Every root brackets a sign change of the exact NPV.
        for r in &rs.roots {
            let at = |y: f64| {
                amounts
                    .iter()
                    .enumerate()
                    .map(|(k, a)| a.to_f64().unwrap() * (-y * k as f64).exp())
                    .sum::<f64>()
            };
            assert!(at(r.lo - 1e-9) * at(r.hi + 1e-9) < 0.0, "{r:?}");
        }
    }
}

#[test]
fn lorie_savage_two_roots() {
    // Lorie & Savage, Journal of Business 28 (1955) [flows from memory; values per docs/methods.md, check values]
    let rs = yearly(&[dec!(-1600), dec!(10000), dec!(-10000)]);
    assert!(rs.certified);
    assert_eq!(rs.count(), 2);
    let r = rates(&rs);
    assert!(
        (r[0] - 0.25).abs() < 1e-12 && (r[1] - 4.0).abs() < 1e-11,
        "{r:?}"
    );
    for root in &rs.roots {
        assert!(root.lo <= root.y && root.y <= root.hi);
    }
}

#[test]
fn mine_two_roots() {
    // Corporate-finance textbook mine example [memory]; roots per docs/methods.md [computed]
    let mut a = vec![dec!(-30)];
    a.extend(std::iter::repeat_n(dec!(10), 9));
    a.push(dec!(-65));
    let rs = yearly(&a);
    assert!(rs.certified);
    let r = rates(&rs);
    assert_eq!(r.len(), 2);
    assert!((r[0] - 0.03503024).abs() < 1e-8, "{r:?}");
    assert!((r[1] - 0.19542150).abs() < 1e-8, "{r:?}");
}

#[test]
fn no_real_root() {
    // docs/methods.md: 1000, -3000, 2500 has complex roots 50% +- 50i% only [computed]
    let rs = yearly(&[dec!(1000), dec!(-3000), dec!(2500)]);
    assert!(rs.certified);
    assert_eq!(rs.count(), 0);
    assert_eq!(rs.descartes, 2);
}

#[test]
fn double_root_found() {
    // docs/methods.md: -100, 220, -121 = -(10 - 11v)^2: one IRR 10% of multiplicity 2 [computed]
    let rs = yearly(&[dec!(-100), dec!(220), dec!(-121)]);
    assert!(rs.certified, "{rs:?}");
    assert_eq!(rs.roots.len(), 1);
    assert_eq!(rs.roots[0].multiplicity, 2);
    assert_eq!(rs.roots[0].exact_rate, Some(dec!(0.1)));
}

#[test]
fn one_sign_change_is_one_root() {
    // Descartes' rule: one sign change, exactly one IRR (common practice)
    let rs = yearly(&[dec!(-100), dec!(60), dec!(60)]);
    assert!(rs.certified);
    assert_eq!(rs.count(), 1);
    // -100 + 60v + 60v^2 = 0 -> v = (-60 + sqrt(3600 + 24000)) / 120
    let v = (-60.0 + (3600.0f64 + 24000.0).sqrt()) / 120.0;
    assert!((rates(&rs)[0] - (1.0 / v - 1.0)).abs() < 1e-13);
}

#[test]
fn root_at_zero_and_double_root_at_zero() {
    // Flows summing to zero have 0% as a root (common practice).
    let rs = yearly(&[dec!(-100), dec!(50), dec!(50)]);
    assert!(rs.certified, "{rs:?}");
    assert_eq!(rs.count(), 1);
    assert_eq!(rs.roots[0].exact_rate, Some(Decimal::ZERO));
    // (1 - v)^2 = 1 - 2v + v^2: a double root at 0% [computed]
    let rs = yearly(&[dec!(1), dec!(-2), dec!(1)]);
    assert!(rs.certified, "{rs:?}");
    assert_eq!(rs.roots[0].multiplicity, 2);
}

/// The decimal sums, the reference for the integer fast path.
fn sign_bounds_decimal(amounts: &[Decimal]) -> SignBounds {
    let v = sign_changes(amounts.iter().copied());
    let mut acc = Decimal::ZERO;
    let fwd: Vec<Decimal> = amounts
        .iter()
        .map(|a| {
            acc += *a;
            acc
        })
        .collect();
    if acc.is_zero() {
        return SignBounds::without_sums(v);
    }
    let mut acc = Decimal::ZERO;
    let bwd: Vec<Decimal> = amounts
        .iter()
        .rev()
        .map(|a| {
            acc += *a;
            acc
        })
        .collect();
    SignBounds::new(
        v,
        sign_changes(fwd.into_iter()),
        sign_changes(bwd.into_iter()),
    )
}

proptest::proptest! {
    #[test]
    fn integer_sign_bounds_match_decimal_sums(
        raw in proptest::collection::vec((-10_000_000i64..10_000_000, 0u32..7), 1..40)
    ) {
        // Mixed scales (0 to 6 places), as deal files allow; the decimal sums are
        // exact, so both paths must agree to the count.
        let amounts: Vec<Decimal> = raw.iter().map(|&(m, s)| Decimal::new(m, s)).collect();
        proptest::prop_assert_eq!(sign_bounds(&amounts), sign_bounds_decimal(&amounts));
    }

    #[test]
    fn same_scale_sign_bounds_match_decimal_sums(
        raw in proptest::collection::vec(-(1i64 << 41)..(1i64 << 41), 1..40),
        scale in 0u32..7,
        zero_total in proptest::bool::ANY,
    ) {
        // One scale, mantissas on both sides of the 64-bit path's limit of 2^40;
        // with a zero total the cumulative bounds must be absent.
        let mut amounts: Vec<Decimal> = raw.iter().map(|&m| Decimal::new(m, scale)).collect();
        if zero_total {
            let rest: Decimal = amounts[1..].iter().sum();
            amounts[0] = -rest;
        }
        proptest::prop_assert_eq!(sign_bounds(&amounts), sign_bounds_decimal(&amounts));
    }
}

/// A series from (amount in tenths, gap) pairs, on exponents from 0.
fn series_of(raw: &[(i64, u64)]) -> (Vec<Decimal>, Vec<u64>) {
    let amounts: Vec<Decimal> = raw.iter().map(|&(m, _)| Decimal::new(m, 1)).collect();
    let mut exps = vec![0u64];
    for &(_, gap) in &raw[1..] {
        exps.push(exps.last().unwrap() + gap);
    }
    (amounts, exps)
}

proptest::proptest! {
    /// Whenever the tangent-and-chord test says f keeps its sign over [a, b], no
    /// point of a fine grid there has the other sign in double-double arithmetic.
    #[test]
    fn kept_signs_are_kept(
        raw in proptest::collection::vec((-1000i64..1000, 1u64..4), 2..30),
        a in 0.0f64..1.0,
        w in 0.001f64..1.0,
    ) {
        let (amounts, exps) = series_of(&raw);
        proptest::prop_assume!(amounts.iter().all(|x| !x.is_zero()));
        let c: Vec<f64> = amounts.iter().map(|x| super::super::flows::amount_f64(*x)).collect();
        let s = NpvTerms::new(std::borrow::Cow::Borrowed(&amounts[..]), c, &exps, false);
        let mut sv = Solver { s: &s, in_search: false, dd_spent: 0, evals: 0, cache: Vec::new() };
        let (pa, pb) = (sv.point(a, 1), sv.point(a + w, 1));
        if let (Some(sa), Some(sb)) = (pa.sign(0), pb.sign(0)) {
            if sa == sb && sv.keeps_sign(&pa, &pb, sa) {
                for k in 0..=64 {
                    let x = a + w * k as f64 / 64.0;
                    proptest::prop_assert_ne!(dd_sign(&s, x), Some(-sa), "at {}", x);
                }
            }
        }
    }

    /// Between two close roots f dips to the other sign although both ends of the
    /// piece have the same sign: the tangent-and-chord test must never call that
    /// piece settled. (x^2 - (g1 + g2) x + g1 g2 in x = e^y has its roots at
    /// exactly ln g1 and ln g2 [exact construction].)
    #[test]
    fn a_dip_between_two_roots_is_not_called_kept(
        k1 in 1i64..100,
        k2 in 1i64..300,
        left in 0.0f64..0.5,
        right in 0.0f64..0.5,
    ) {
        let g1 = Decimal::new(100 + k1, 2);
        let g2 = g1 + Decimal::new(k2, 4);
        let amounts = [Decimal::ONE, -(g1 + g2), g1 * g2];
        let exps = [0u64, 1, 2];
        let c: Vec<f64> = amounts.iter().map(|x| super::super::flows::amount_f64(*x)).collect();
        let s = NpvTerms::new(std::borrow::Cow::Borrowed(&amounts[..]), c, &exps, false);
        let mut sv = Solver { s: &s, in_search: false, dd_spent: 0, evals: 0, cache: Vec::new() };
        let (y1, y2) = (g1.to_f64().unwrap().ln(), g2.to_f64().unwrap().ln());
        let a = y1 * (1.0 - left);
        let b = y2 + (y2 - y1) + right;
        let (pa, pb) = (sv.point(a, 1), sv.point(b, 1));
        if let (Some(sa), Some(sb)) = (pa.sign(0), pb.sign(0)) {
            proptest::prop_assert_eq!(sa, sb);
            proptest::prop_assert!(!sv.keeps_sign(&pa, &pb, sa));
        }
    }

    /// Every simple root's interval, however it was certified (by the slope of the
    /// last Newton evaluation, as most are, or otherwise), has ends of opposite
    /// signs in double-double arithmetic wherever those signs can be told.
    #[test]
    fn simple_root_intervals_hold_a_sign_change(
        raw in proptest::collection::vec((-1000i64..1000, 1u64..4), 2..30),
    ) {
        let (amounts, exps) = series_of(&raw);
        let kept: Vec<(Decimal, u64)> =
            amounts.iter().zip(&exps).filter(|(x, _)| !x.is_zero()).map(|(x, &e)| (*x, e)).collect();
        proptest::prop_assume!(kept.len() >= 2);
        let amounts: Vec<Decimal> = kept.iter().map(|k| k.0).collect();
        let offsets: Vec<i64> = kept.iter().map(|k| k.1 as i64 - kept[0].1 as i64).collect();
        let rs = find_roots(&amounts, &offsets, 1);
        let exps: Vec<u64> = offsets.iter().map(|&o| o as u64 / rs.step_units).collect();
        let c: Vec<f64> = amounts.iter().map(|x| super::super::flows::amount_f64(*x)).collect();
        let s = NpvTerms::new(std::borrow::Cow::Borrowed(&amounts[..]), c, &exps, false);
        for r in rs.roots.iter().filter(|r| r.multiplicity == 1 && r.y.abs() < 5.0) {
            if let (Some(lo), Some(hi)) = (dd_sign(&s, r.lo), dd_sign(&s, r.hi)) {
                proptest::prop_assert_ne!(lo, hi, "{:?}", r);
            }
        }
    }

    /// Laguerre's bounds of the time-reversed series, worked out from the series
    /// itself, are exactly those the reversed series gives (uneven gaps included).
    #[test]
    fn reversed_bounds_from_the_series_itself(
        raw in proptest::collection::vec((-1000i64..1000, 1u64..4), 2..30),
        a in 0.0f64..2.0,
    ) {
        let amounts: Vec<Decimal> = raw.iter().map(|&(m, _)| Decimal::new(m, 1)).collect();
        let mut exps = vec![0u64];
        for &(_, gap) in &raw[1..] {
            exps.push(exps.last().unwrap() + gap);
        }
        let c: Vec<f64> = amounts.iter().map(|a| super::super::flows::amount_f64(*a)).collect();
        let last = *exps.last().unwrap();
        let rev_c: Vec<f64> = c.iter().rev().copied().collect();
        let rev_exps: Vec<u64> = exps.iter().rev().map(|&e| last - e).collect();
        let rev_amounts: Vec<Decimal> = amounts.iter().rev().copied().collect();
        let s = NpvTerms::new(std::borrow::Cow::Borrowed(&amounts[..]), c, &exps, false);
        let r = NpvTerms::new(std::borrow::Cow::Borrowed(&rev_amounts[..]), rev_c, &rev_exps, true);
        proptest::prop_assert_eq!(s.bounds_at(a, true), r.bounds_at(a, false));
        proptest::prop_assert_eq!(s.discounted(a, true).0, r.discounted(a, false).0);
    }
}

#[test]
fn tail_bound_covers_the_roots_above_a_point() {
    // (1 - 1.05v)(1 - 1.2v)(1 - 1.6v), v = 1/(1 + r): IRRs of exactly 5%, 20% and 60%
    // [exact construction]. Laguerre's bound on the roots above a point is never
    // below the true count there and has its parity (common practice for sign rules).
    let amounts = [dec!(1), dec!(-3.85), dec!(4.86), dec!(-2.016)];
    let exps = [0u64, 1, 2, 3];
    let c: Vec<f64> = amounts
        .iter()
        .map(|a| super::super::flows::amount_f64(*a))
        .collect();
    let s = NpvTerms::new(std::borrow::Cow::Borrowed(&amounts[..]), c, &exps, false);
    let roots = [1.05f64.ln(), 1.2f64.ln(), 1.6f64.ln()];
    for a in [0.0, 0.03, 0.1, 0.3, 0.5, 1.0, 3.0] {
        let above = roots.iter().filter(|&&r| r > a).count() as u32;
        let bound = s
            .tail_bound(a)
            .expect("signs are clear away from the roots");
        assert!(
            bound >= above && (bound - above).is_multiple_of(2),
            "a = {a}: {bound} vs {above}"
        );
    }
    // At 0% it is Norstrom's count of the cumulative sums.
    assert_eq!(s.tail_bound(0.0), sign_bounds(&amounts).above_zero);
}

#[test]
fn zero_total_has_no_cumulative_bounds() {
    // Norstrom's counts need a non-zero total (common practice).
    let a = [dec!(-1.5), dec!(0.75), dec!(0.750)];
    assert_eq!(sign_bounds(&a), SignBounds::without_sums(1));
    assert_eq!(sign_bounds_decimal(&a), SignBounds::without_sums(1));
}

#[test]
fn all_one_sign() {
    let rs = yearly(&[dec!(100), dec!(100)]);
    assert_eq!(rs.count(), 0);
    assert!(rs.certified);
}
