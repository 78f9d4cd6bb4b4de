//! The quick certificate: Newton from the end signs of each side of 0%, a scan of a
//! side whose ends agree, and the count proven by Norstrom or Laguerre bounds.

use super::*;

/// The quick way to every root (see its call in [`find_roots`]): the roots in y,
/// lowest first, and the point whose bounds prove the count when Laguerre's rule
/// proved it (`None` inside when the cumulative counts alone did); `None` sends the
/// series to the full search.
///
/// `bounds` are the cumulative (Norstrom) counts above and below 0%. On a side whose
/// end signs differ, one root is found by Newton; on a side whose end signs agree but
/// whose count allows two roots, a few rates are tried for the opposite sign, and the
/// two roots either side of it are found by Newton. Every root found so sits in a
/// bracket of its own where the NPV changes sign, so each bracket holds at least one
/// root; when the brackets on each side number as many as that side's count allows,
/// or Laguerre's bounds at a rate beside them add up to their number, each holds
/// exactly one simple root and there are no others.
pub(super) fn quick_certificate(
    solvers: &mut [Solver<'_>; 2],
    his: [f64; 2],
    bounds: [Option<u32>; 2],
) -> Option<(Vec<FoundRoot>, Option<f64>)> {
    // Roots per side, in that side's variable (y for i = 0, u = -y for i = 1).
    let mut sides: [Vec<FoundRoot>; 2] = [Vec::new(), Vec::new()];
    let mut ends = [0i8; 2];
    for (i, sv) in solvers.iter_mut().enumerate() {
        if bounds[i] == Some(0) || his[i] <= 0.0 {
            continue;
        }
        let s_lo = sv.point(0.0, 1).sign(0)?;
        ends[i] = s_lo;
        if s_lo != sv.s.sign_at_upper_end() {
            let mut r = sv.simple_root(0.0, his[i], s_lo);
            if sv.exhausted() {
                return None;
            }
            polish(sv.s, &mut r);
            sides[i].push(r);
        }
    }
    let collect = |sides: &[Vec<FoundRoot>; 2]| {
        let mut all: Vec<FoundRoot> = sides[0].clone();
        all.extend(sides[1].iter().cloned().map(flipped));
        all.sort_by(|a, b| a.y.total_cmp(&b.y));
        all
    };
    // A side is settled when its roots are as many as its cumulative count allows, or
    // when it was proven to have none.
    let mut empty = [false; 2];
    let settled = |sides: &[Vec<FoundRoot>; 2], empty: &[bool; 2]| {
        (0..2).all(|i| empty[i] || bounds[i].is_some_and(|b| b == sides[i].len() as u32))
    };
    if settled(&sides, &empty) {
        return Some((collect(&sides), None));
    }
    let found = collect(&sides);
    if let Some(at) = laguerre_point(solvers, &found) {
        return Some((found, Some(at)));
    }
    // Sides whose end signs agree and whose count allows two roots: scan them for
    // the opposite sign, or prove there is none.
    let scale = found.iter().map(|r| r.y.abs()).fold(0.0f64, f64::max);
    let mut scanned = false;
    for (i, sv) in solvers.iter_mut().enumerate() {
        if !sides[i].is_empty() || ends[i] == 0 || bounds[i].is_some_and(|b| b < 2) {
            continue;
        }
        let start = if scale > 0.0 {
            scale
        } else {
            1.0 / sv.s.last_n().max(1.0)
        };
        match scan_side(sv, his[i], ends[i], start) {
            Scan::Rootless => empty[i] = true,
            Scan::Pair(mut a, mut b) => {
                polish(sv.s, &mut a);
                polish(sv.s, &mut b);
                sides[i].push(a);
                sides[i].push(b);
            }
            Scan::Undecided => continue,
        }
        if sv.exhausted() {
            return None;
        }
        scanned = true;
    }
    if !scanned {
        return None;
    }
    if settled(&sides, &empty) {
        return Some((collect(&sides), None));
    }
    let found = collect(&sides);
    laguerre_point(solvers, &found).map(|at| (found, Some(at)))
}

/// What [`scan_side`] found.
pub(super) enum Scan {
    /// The side has no root.
    Rootless,
    /// A rate of the opposite sign, and the roots either side of it.
    Pair(FoundRoot, FoundRoot),
    /// Neither, within the evaluations allowed.
    Undecided,
}

/// Scans one side of 0% ([0, hi] in its own variable, with sign `s` at both ends)
/// for a rate where the NPV has the opposite sign: at rates growing threefold from
/// `start`, then by splitting the pieces between them that [`Solver::keeps_sign`]
/// cannot settle, a dozen times at most. The roots either side of the first such rate
/// are then found by Newton; when every piece is settled the side has no root.
pub(super) fn scan_side(sv: &mut Solver<'_>, hi: f64, s: i8, start: f64) -> Scan {
    let mut points = vec![0.0];
    let mut u = start;
    while u < hi && points.len() < 16 {
        points.push(u);
        u *= 3.0;
    }
    points.push(hi);
    let pair = |sv: &mut Solver<'_>, left: f64, at: f64| {
        Scan::Pair(sv.simple_root(left, at, s), sv.simple_root(at, hi, -s))
    };
    for k in 1..points.len() {
        match sv.point(points[k], 1).sign(0) {
            Some(x) if x == s => {}
            Some(_) => return pair(sv, points[k - 1], points[k]),
            None => return Scan::Undecided,
        }
    }
    let mut stack: Vec<(f64, f64)> = points.windows(2).map(|w| (w[0], w[1])).rev().collect();
    let mut splits = 12;
    while let Some((a, b)) = stack.pop() {
        let (pa, pb) = (sv.point(a, 1), sv.point(b, 1));
        if sv.keeps_sign(&pa, &pb, s) {
            continue;
        }
        if splits == 0 {
            return Scan::Undecided;
        }
        splits -= 1;
        let m = if a > 0.0 && b > 4.0 * a {
            (a * b).sqrt()
        } else {
            0.5 * (a + b)
        };
        match sv.point(m, 1).sign(0) {
            Some(x) if x == s => {
                stack.push((m, b));
                stack.push((a, m));
            }
            Some(_) => return pair(sv, a, m),
            None => return Scan::Undecided,
        }
    }
    Scan::Rootless
}

/// A rate beside the roots found (in y, lowest first) at which Laguerre's bounds on
/// the roots above and below add up to their number, if one of the rates tried is.
pub(super) fn laguerre_point(solvers: &[Solver<'_>; 2], found: &[FoundRoot]) -> Option<f64> {
    if found.is_empty() {
        return None;
    }
    let count = found.len() as u32;
    // Points beside the roots found: between neighbours, and halfway to and beyond
    // each root from 0%, where the bounds drop to what is really there; when all the
    // roots lie on one side of 0%, the mirror images of the outermost one (the bounds
    // on the empty side fall to zero some way out from 0%).
    let mut points: Vec<f64> = found
        .windows(2)
        .map(|w| 0.5 * (w[0].hi + w[1].lo))
        .collect();
    for r in found {
        points.push(1.5 * r.y);
        points.push(0.5 * r.y);
    }
    let (first, last) = (found[0].y, found[found.len() - 1].y);
    if first > 0.0 {
        points.push(-last);
        points.push(-3.0 * last);
    } else if last < 0.0 {
        points.push(-first);
        points.push(-3.0 * first);
    }
    for p in points {
        if !p.is_finite() || p == 0.0 || found.iter().any(|r| p >= r.lo && p <= r.hi) {
            continue;
        }
        // Bounds at p in y: on the series for p > 0, on the reversed one (at u = -p,
        // where above and below swap) for p < 0, worked out from the series itself
        // (the reversed one is not built when no root can lie below 0%).
        let bounds = if p > 0.0 {
            solvers[0].s.bounds_at(p, false)
        } else {
            solvers[0]
                .s
                .bounds_at(-p, true)
                .map(|(above, below)| (below, above))
        };
        if let Some((above, below)) = bounds {
            if above + below == count {
                return Some(p);
            }
        }
    }
    None
}
