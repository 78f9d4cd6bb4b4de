//! Settling what floats cannot: double-double evaluation and polishing of clusters
//! of roots, and exact big-integer checks of multiple roots at short decimal rates.

use super::*;

/// f and f' at `y` in double-double (about 32 digits), each with an error bound: the
/// second precision level, for clusters of roots that binary floats cannot separate.
pub(super) fn dd_eval(s: &NpvTerms, y: f64) -> [(f64, f64); 2] {
    let my = Dd::from_f64(-y);
    let (mut f0, mut f1) = (Dd::ZERO, Dd::ZERO);
    let (mut size0, mut size1) = (0.0f64, 0.0f64);
    for (k, amount) in s.amounts.iter().enumerate() {
        let nk = s.n[k];
        let t = Dd::from_decimal(*amount) * (my * Dd::from_f64(nk)).exp();
        let t1 = t * Dd::from_f64(-nk);
        f0 = f0 + t;
        f1 = f1 + t1;
        size0 += t.to_f64().abs();
        size1 += t1.to_f64().abs();
    }
    // exp is good to ~1e-30 relative and each addition adds ~1e-32 of the running
    // size: 1e-27 of the summed sizes bounds both with a wide margin.
    let bound = |size: f64| 1e-27 * size * (1.0 + s.amounts.len() as f64 * 1e-3) + 1e-300;
    [(f0.to_f64(), bound(size0)), (f1.to_f64(), bound(size1))]
}

/// Narrows a simple root's bracket wider than 1e-9 relative by bisection on
/// double-double signs, down to about 1e-13 or while the signs can be told.
pub(super) fn polish(s: &NpvTerms, r: &mut FoundRoot) {
    let width = |lo: f64, hi: f64| (hi - lo) / lo.abs().max(hi.abs()).max(1e-300);
    let tight = |lo: f64, hi: f64| width(lo, hi) <= 1e-13;
    // Binary floats usually leave 1e-13 to 1e-10 of relative width: only clearly wide
    // intervals are worth the (slower) second precision level.
    if width(r.lo, r.hi) <= 1e-9 {
        return;
    }
    let (Some(sl), Some(sh)) = (dd_sign(s, r.lo), dd_sign(s, r.hi)) else {
        return;
    };
    if sl == sh {
        return;
    }
    for _ in 0..60 {
        if tight(r.lo, r.hi) {
            break;
        }
        let mid = 0.5 * (r.lo + r.hi);
        match dd_sign(s, mid) {
            Some(sg) if sg == sl => r.lo = mid,
            Some(_) => r.hi = mid,
            None => break,
        }
    }
    r.y = 0.5 * (r.lo + r.hi);
}

/// Certified sign of f at `y` in double-double.
pub(super) fn dd_sign(s: &NpvTerms, y: f64) -> Option<i8> {
    let [(v, e), _] = dd_eval(s, y);
    if v > e {
        Some(1)
    } else if v < -e {
        Some(-1)
    } else {
        None
    }
}

/// Brackets of the sign changes of f on [a, b] seen on a grid of double-double
/// evaluations, when there are exactly `m` of them (so that, with at most `m` roots
/// in [a, b] by Rolle, each bracket holds exactly one simple root).
pub(super) fn dd_brackets(
    s: &NpvTerms,
    a: f64,
    b: f64,
    sa: i8,
    sb: i8,
    m: usize,
) -> Option<Vec<(f64, f64)>> {
    const GRID: usize = 64;
    let mut brackets = Vec::new();
    let mut prev = (a, sa);
    for i in 1..=GRID {
        let (y, sign) = if i == GRID {
            (b, Some(sb))
        } else {
            let y = a + (b - a) * i as f64 / GRID as f64;
            (y, dd_sign(s, y))
        };
        if let Some(sg) = sign {
            if sg != prev.1 {
                brackets.push((prev.0, y));
            }
            prev = (y, sg);
        }
    }
    (brackets.len() == m).then_some(brackets)
}

/// A piece that subdivision in binary floats cannot settle: settle it with the
/// second precision level, proven multiple roots and Rolle's bound. True when settled
/// (its roots pushed), false when the piece stays undecided.
pub(super) fn settle_cluster(
    solver: &mut Solver<'_>,
    a: f64,
    b: f64,
    signs: (i8, i8),
    roots: &mut Vec<FoundRoot>,
) -> bool {
    match settle_piece(solver, a, b, signs.0, signs.1, 0) {
        Some(found) => {
            roots.extend(found);
            true
        }
        None => false,
    }
}

pub(super) fn simple(lo: f64, hi: f64) -> FoundRoot {
    FoundRoot {
        lo,
        hi,
        y: 0.5 * (lo + hi),
        multiplicity: 1,
        exact_rate: None,
    }
}

/// The roots in [a, b] (end signs `sa`, `sb` certified, in either precision), or None.
/// Rolle: where f^(m) keeps one sign there are at most m roots, so m sign changes on a
/// double-double grid settle a piece, and so does m = 1 (monotone) with the end signs.
/// A multiple root proven exactly at a short decimal rate is cut out with a
/// neighbourhood where the derivative of its order keeps one sign; the rest is halved.
pub(super) fn settle_piece(
    solver: &mut Solver<'_>,
    a: f64,
    b: f64,
    sa: i8,
    sb: i8,
    depth: u32,
) -> Option<Vec<FoundRoot>> {
    if depth > 10 || a.is_nan() || b.is_nan() || a >= b || solver.dd_spent > DD_BUDGET {
        return None;
    }
    // Each visit may run a grid and a few single evaluations.
    solver.dd_spent += 70;
    let bound = (1..ORDERS).find(|&d| solver.excludes_zero(a, b, d));
    if let Some(m) = bound {
        if m == 1 {
            return Some(if sa != sb {
                vec![simple(a, b)]
            } else {
                Vec::new()
            });
        }
        if let Some(brackets) = dd_brackets(solver.s, a, b, sa, sb, m) {
            return Some(
                brackets
                    .into_iter()
                    .map(|(lo, hi)| simple(lo, hi))
                    .collect(),
            );
        }
    }
    let mid = 0.5 * (a + b);
    let exact = exact_root_near(solver.s, mid, a, b);
    if let (Some((rate, m0, y0, (lo, hi))), Some(m)) = (exact, bound) {
        let m0u = m0 as usize;
        if m0u <= m {
            // The proven root accounts for m0 of the at most m roots; the rest must
            // show up as sign changes on the grid (the proven root itself changes
            // sign only when its multiplicity is odd).
            let expected = (m - m0u) + m0u % 2;
            let brackets = if m0u == m {
                Some(Vec::new())
            } else {
                dd_brackets(solver.s, a, b, sa, sb, expected)
            };
            if let Some(brackets) = brackets {
                let mut found = vec![FoundRoot {
                    lo,
                    hi,
                    y: y0,
                    multiplicity: m0,
                    exact_rate: Some(rate),
                }];
                found.extend(
                    brackets
                        .into_iter()
                        .filter(|&(blo, bhi)| !(m0 % 2 == 1 && blo <= y0 && y0 <= bhi))
                        .map(|(blo, bhi)| simple(blo, bhi)),
                );
                return Some(found);
            }
        }
    }
    if let Some((rate, m0, y0, (lo, hi))) = exact {
        if (m0 as usize) < ORDERS && y0 > a && y0 < b {
            let mut delta = 0.5 * (b - a);
            for _ in 0..40 {
                let (jl, jh) = ((y0 - delta).max(a), (y0 + delta).min(b));
                if solver.excludes_zero(jl, jh, m0 as usize) {
                    let sl = if jl == a {
                        Some(sa)
                    } else {
                        dd_sign(solver.s, jl)
                    };
                    let sh = if jh == b {
                        Some(sb)
                    } else {
                        dd_sign(solver.s, jh)
                    };
                    if let (Some(sl), Some(sh)) = (sl, sh) {
                        let mut found = Vec::new();
                        if jl > a {
                            found.extend(settle_piece(solver, a, jl, sa, sl, depth + 1)?);
                        }
                        found.push(FoundRoot {
                            lo,
                            hi,
                            y: y0,
                            multiplicity: m0,
                            exact_rate: Some(rate),
                        });
                        if jh < b {
                            found.extend(settle_piece(solver, jh, b, sh, sb, depth + 1)?);
                        }
                        return Some(found);
                    }
                }
                delta *= 0.5;
            }
        }
    }
    let split = [0.5, 0.4, 0.6, 0.3, 0.7]
        .into_iter()
        .map(|f| a + (b - a) * f)
        .find_map(|m| dd_sign(solver.s, m).map(|sg| (m, sg)))?;
    let mut found = settle_piece(solver, a, split.0, sa, split.1, depth + 1)?;
    found.extend(settle_piece(solver, split.0, b, split.1, sb, depth + 1)?);
    Some(found)
}

/// Looks for a short decimal rate per step near `y` (within [lo, hi]) at which f and
/// its first derivatives vanish exactly. Returns (rate, multiplicity, y of the rate,
/// an interval of floats certain to hold that y).
///
/// The interval comes from the exact rate (see [`exact::log_growth_bounds`]), not
/// from the float `y`: `1 + rate` rounded to binary is off by up to 1.1e-16 absolute,
/// which is a relative error of 1.1e-16 / |y| in y = ln(1 + rate), far more than a few
/// ulps of y for a rate near 0% (1e-13 at 0.1%) or near -100%.
#[allow(clippy::type_complexity)]
pub(super) fn exact_root_near(
    s: &NpvTerms,
    y: f64,
    lo: f64,
    hi: f64,
) -> Option<(Decimal, u32, f64, (f64, f64))> {
    if s.last_n() as u64 > EXACT_DEGREE_LIMIT {
        return None;
    }
    // The decimal candidates are rates of the original series; the reversed series'
    // variable is u = -y, whose growth factor is the reciprocal.
    let rate = if s.reversed {
        (-y).exp_m1()
    } else {
        y.exp_m1()
    };
    if !rate.is_finite() || rate <= -1.0 || rate.abs() > 1e12 {
        return None;
    }
    let base = Decimal::from_f64(rate)?;
    let mut tried: Vec<Decimal> = Vec::new();
    for digits in 0..=12u32 {
        let cand = base.round_dp_with_strategy(digits, RoundingStrategy::MidpointAwayFromZero);
        if tried.contains(&cand) || cand <= Decimal::NEGATIVE_ONE {
            continue;
        }
        tried.push(cand);
        let yc = cand.to_f64()?.ln_1p() * if s.reversed { -1.0 } else { 1.0 };
        let margin = 1e-9 * (hi - lo).abs().max(1e-12) + 4.0 * f64::EPSILON * yc.abs();
        if yc < lo - margin || yc > hi + margin {
            continue;
        }
        let growth = Decimal::ONE + cand;
        let mut p = BigInt::from(growth.mantissa());
        let mut q = num_traits::pow(BigInt::from(10), growth.scale() as usize);
        if s.reversed {
            std::mem::swap(&mut p, &mut q);
        }
        if let Some(m) = exact_multiplicity(s, &p, &q) {
            let (glo, ghi) = exact::log_growth_bounds(cand)?;
            let bounds = if s.reversed { (-ghi, -glo) } else { (glo, ghi) };
            let y0 = 0.5 * (bounds.0 + bounds.1);
            return Some((cand, m, y0, bounds));
        }
    }
    None
}

/// If x = p/q (as 1 + rate per step) is a root of f, its multiplicity (1..=ORDERS-1),
/// proven with exact integer arithmetic; None when it is not a root.
pub(super) fn exact_multiplicity(s: &NpvTerms, p: &BigInt, q: &BigInt) -> Option<u32> {
    let big_n = *s.n.last()? as u64;
    if big_n > EXACT_DEGREE_LIMIT {
        return None;
    }
    // f^(j)(ln x) * p^N = sum c_k (-n_k)^j q^(n_k) p^(N - n_k).
    // Integer coefficients at a common decimal scale.
    let scale = s.amounts.iter().map(|a| a.scale()).max().unwrap_or(0);
    let exact = s.amounts.iter().map(|a| {
        let mut m = BigInt::from(a.mantissa());
        for _ in a.scale()..scale {
            m *= 10;
        }
        m
    });
    let mut sums: Vec<BigInt> = vec![BigInt::zero(); ORDERS];
    for (k, ck) in exact.enumerate() {
        let nk = s.n[k] as u64;
        let term = ck
            * num_traits::pow(q.clone(), nk as usize)
            * num_traits::pow(p.clone(), (big_n - nk) as usize);
        let mut mult = BigInt::one();
        for (j, sum) in sums.iter_mut().enumerate() {
            if j > 0 {
                mult *= -(nk as i64);
            }
            *sum += &term * &mult;
        }
    }
    if !sums[0].is_zero() {
        return None;
    }
    // ORDERS itself stands for "at least ORDERS": too high to settle here.
    let m = sums.iter().position(|v| !v.is_zero()).unwrap_or(ORDERS);
    Some(m as u32)
}
