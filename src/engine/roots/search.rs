//! The subdivision search for series the quick certificate leaves open, with the
//! convex-case settlement of an interval.

use super::*;

/// Subdivision search over [lo, hi] (within y >= 0).
pub(super) fn search(
    solver: &mut Solver<'_>,
    lo: f64,
    hi: f64,
    roots: &mut Vec<FoundRoot>,
    out: &mut RootSet,
) {
    solver.in_search = true;
    let mut stack: Vec<(f64, f64)> = vec![(lo, hi)];
    // Pieces no test could settle, with the signs at their ends.
    let mut pending: Vec<(f64, f64, i8, i8)> = Vec::new();
    let s_hi = solver.point(hi, 1).sign(0);
    let mut roots_seen = roots.len();
    while let Some((a, b)) = stack.pop() {
        // The stack is worked from left to right, so [a, right] is all that is left to
        // search: when Laguerre's bound leaves at most one root above `a` besides
        // those found, the end signs settle all of it at once. The bound drops as the
        // search passes roots, so it is worth computing just after one was found.
        if roots.len() > roots_seen {
            roots_seen = roots.len();
            if settles_tail(solver, a, hi, s_hi, roots).is_some() {
                stack.clear();
                break;
            }
        }
        if solver.exhausted() {
            out.certified = false;
            out.unresolved.push((a, b));
            continue;
        }
        if solver.excludes_zero(a, b, 0) {
            continue;
        }
        let sa = solver.point(a, 1).sign(0);
        let sb = solver.point(b, 1).sign(0);
        let (Some(sa), Some(sb)) = (sa, sb) else {
            // Interval ends always carry certain signs (chosen so); be safe anyway.
            out.certified = false;
            out.unresolved.push((a, b));
            continue;
        };
        if solver.excludes_zero(a, b, 1) {
            if sa != sb {
                roots.push(solver.simple_root(a, b, sa));
            }
            continue;
        }
        if solver.excludes_zero(a, b, 2) && convex_case(solver, a, b, sa, sb, roots, out) {
            continue;
        }
        let width = b - a;
        let tiny = width <= 1e-12 * a.abs().max(b.abs()).max(1e-3);
        if tiny {
            if !settle_cluster(solver, a, b, (sa, sb), roots) {
                pending.push((a, b, sa, sb));
            }
            continue;
        }
        match split_point(solver, a, b) {
            Some(m) => {
                // When at most one root lies above m, all of [m, hi] is settled now
                // and only [a, m] is left to search.
                stack.push((m, b));
                stack.push((a, m));
            }
            None => {
                if !settle_cluster(solver, a, b, (sa, sb), roots) {
                    pending.push((a, b, sa, sb));
                }
            }
        }
    }
    // Neighbouring pieces may each hold part of one cluster (a multiple root whose
    // band of undecidable signs was cut by a split): settle them together.
    pending.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut merged: Vec<(f64, f64, i8, i8)> = Vec::new();
    for piece in pending {
        match merged.last_mut() {
            Some(last) if piece.0 <= last.1 => {
                last.1 = last.1.max(piece.1);
                last.3 = piece.3;
            }
            _ => merged.push(piece),
        }
    }
    for (a, b, sa, sb) in merged {
        if !settle_cluster(solver, a, b, (sa, sb), roots) {
            out.certified = false;
            out.unresolved.push((a, b));
        }
    }
}

/// Settles (a, right) at once when Laguerre's bound on the roots above `a` is 0 or 1
/// (`right` lies beyond every root): then there is a root in (a, right) exactly when
/// the (certain) signs at its ends differ. Pushes that root and returns the sign at
/// `a`; `None` when the piece is not settled so.
pub(super) fn settles_tail(
    solver: &mut Solver<'_>,
    a: f64,
    right: f64,
    s_right: Option<i8>,
    roots: &mut Vec<FoundRoot>,
) -> Option<i8> {
    let s_right = s_right?;
    let bound = solver.s.tail_bound(a)?;
    if bound > 1 {
        return None;
    }
    let s_a = solver.point(a, 1).sign(0)?;
    if bound == 1 && s_a != s_right {
        roots.push(solver.simple_root(a, right, s_a));
    }
    Some(s_a)
}

/// A point inside (a, b) where the sign of f is certain, near the middle; on a
/// piece spanning orders of magnitude, near its geometric middle (IRRs of real deals
/// sit near the low end of the first, very wide, piece).
pub(super) fn split_point(solver: &mut Solver<'_>, a: f64, b: f64) -> Option<f64> {
    let w = b - a;
    let preferred = if a <= 0.0 {
        a + w / 16.0
    } else if b > 16.0 * a {
        (a * b).sqrt()
    } else {
        a + 0.5 * w
    };
    let fractions = [0.5, 0.375, 0.625, 0.25, 0.75, 0.125, 0.875, 0.0625, 0.9375];
    std::iter::once(preferred)
        .chain(fractions.iter().map(|f| a + w * f))
        .find(|&m| m > a && m < b && solver.point(m, ORDERS).sign(0).is_some())
}

/// f'' has one sign on [a, b]: f' is monotone, so f has a single extremum. Returns
/// false when the interval must be subdivided further.
#[allow(clippy::too_many_arguments)]
pub(super) fn convex_case(
    solver: &mut Solver<'_>,
    a: f64,
    b: f64,
    sa: i8,
    sb: i8,
    roots: &mut Vec<FoundRoot>,
    out: &mut RootSet,
) -> bool {
    let da = solver.point(a, 2).sign(1);
    let db = solver.point(b, 2).sign(1);
    let (Some(da), Some(db)) = (da, db) else {
        return false;
    };
    if da == db {
        // f' keeps its sign at both ends and is monotone: f is monotone.
        if sa != sb {
            roots.push(solver.simple_root(a, b, sa));
        }
        return true;
    }
    let (p, q, ystar) = solver.refine(1, a, b, da);
    // f on [p, q] contains the extremum.
    if let Some(s_ext) = solver.sign_over(p, q, 0) {
        for (x0, x1, s0) in [(a, p, sa), (q, b, s_ext)] {
            let s1 = if x1 == b { sb } else { s_ext };
            if s0 != s1 && x0 < x1 {
                roots.push(solver.simple_root(x0, x1, s0));
            }
        }
        return true;
    }
    // The extremum value is within rounding of zero: a double root, or two roots (or
    // none) closer than binary floats can tell apart. Try to prove a double root exactly.
    if let Some((rate, m, y0, (lo, hi))) = exact_root_near(solver.s, ystar, p.min(a), q.max(b)) {
        if m == 2 && y0 >= a && y0 <= b {
            roots.push(FoundRoot {
                lo,
                hi,
                y: y0,
                multiplicity: 2,
                exact_rate: Some(rate),
            });
            return true;
        }
    }
    // Second precision level: f and f' at the extremum estimate in double-double.
    // On a convex f (f'' > 0), f(y) >= f(y*) + f'(y*)(y - y*) everywhere, so
    // f(y*) - |f'(y*)| (q - p) bounds f below on [p, q]; and f(y*) < 0 with a convex f
    // means one root on each side where the end is positive (mirror for concave f).
    if let Some(s2) = solver.sign_over(a, b, 2) {
        let [(v0, e0), (v1, e1)] = dd_eval(solver.s, ystar);
        let reach = (v1.abs() + e1) * (q - p);
        let (lower, upper) = (v0 - e0 - reach, v0 + e0 + reach);
        let extremum_sign = if s2 > 0 && lower > 0.0 {
            Some(1)
        } else if s2 < 0 && upper < 0.0 {
            Some(-1)
        } else {
            None
        };
        let at_star = if v0 > e0 {
            Some(1)
        } else if v0 < -e0 {
            Some(-1)
        } else {
            None
        };
        let pieces = match (extremum_sign, at_star) {
            (Some(se), _) => Some([(a, p, sa, se), (q, b, se, sb)]),
            (None, Some(ss)) if ss == -s2 => Some([(a, ystar, sa, ss), (ystar, b, ss, sb)]),
            _ => None,
        };
        if let Some(pieces) = pieces {
            for (x0, x1, s0, s1) in pieces {
                if s0 != s1 && x0 < x1 {
                    roots.push(solver.simple_root(x0, x1, s0));
                }
            }
            return true;
        }
    }
    out.certified = false;
    out.unresolved.push((p, q));
    // The parts of [a, b] outside [p, q] are monotone: settle them.
    for (x0, x1, s0, s1) in [
        (a, p, Some(sa), solver.point(p, 1).sign(0)),
        (q, b, solver.point(q, 1).sign(0), Some(sb)),
    ] {
        if let (Some(s0), Some(s1)) = (s0, s1) {
            if s0 != s1 && x0 < x1 {
                roots.push(solver.simple_root(x0, x1, s0));
            }
        }
    }
    true
}
