//! The floating-point solver on one side of 0%: evaluations within a budget, Newton
//! brackets certified by slope, interval enclosures of the derivatives (`Solver`).

use super::*;

pub(super) struct Solver<'a> {
    pub(super) s: &'a NpvTerms<'a>,
    /// True while subdividing: interval ends then need every order.
    pub(super) in_search: bool,
    /// Double-double point evaluations spent on undecided pieces (bounded, so that a
    /// pathological series ends in "undecided" rather than a long wait).
    pub(super) dd_spent: usize,
    pub(super) evals: usize,
    pub(super) cache: Vec<(u64, Point)>,
}

impl<'a> Solver<'a> {
    /// The point evaluation at `y` with at least `orders` derivative orders.
    /// The point evaluation at `y` with at least `orders` orders, if already made.
    pub(super) fn cached(&self, y: f64, orders: usize) -> Option<Point> {
        let key = y.to_bits();
        self.cache
            .iter()
            .rev()
            .take(64)
            .find(|(k, p)| *k == key && p.orders >= orders)
            .map(|(_, p)| *p)
    }

    pub(super) fn point(&mut self, y: f64, orders: usize) -> Point {
        if let Some(p) = self.cached(y, orders) {
            return p;
        }
        let key = y.to_bits();
        self.evals += 1;
        let p = self.s.eval(y, orders);
        self.cache.push((key, p));
        if self.cache.len() > 256 {
            self.cache.drain(..128);
        }
        p
    }

    pub(super) fn exhausted(&self) -> bool {
        self.evals > EVAL_BUDGET
    }

    /// Encloses f^(d) over [a, b] by its decreasing positive and negative parts.
    pub(super) fn enclose(&mut self, a: f64, b: f64, d: usize) -> (f64, f64) {
        let need = if self.in_search { ORDERS } else { d + 1 };
        let pa = self.point(a, need);
        let pb = self.point(b, need);
        let (pos_a, neg_a) = pa.parts(d);
        let (pos_b, neg_b) = pb.parts(d);
        let e = pa.err[d] + pb.err[d];
        let lo = pos_b - neg_a;
        let hi = pos_a - neg_b;
        let slack = 4.0 * EPS * (pos_a + neg_a + pos_b + neg_b);
        (lo - e - slack, hi + e + slack)
    }

    /// Encloses f^(d) over [a, b] by a Taylor form around the midpoint: the value and
    /// slope there (with their error bounds) and an enclosure of f^(d+2) (or the mean
    /// value form with f^(d+1)). Far tighter than [`Solver::enclose`] when the positive
    /// and negative parts nearly cancel.
    pub(super) fn enclose_taylor(&mut self, a: f64, b: f64, d: usize) -> Option<(f64, f64)> {
        if d + 1 >= ORDERS {
            return None;
        }
        let m = 0.5 * (a + b);
        let h = 0.5 * (b - a);
        // The midpoint is also where the interval is split next: take every order.
        let pm = self.point(m, ORDERS);
        let v = pm.value(d);
        let ev = pm.err[d] + 4.0 * EPS * (pm.a[d] + pm.b[d]);
        let (lo, hi) = if d + 2 < ORDERS {
            let sl = pm.value(d + 1);
            let es = pm.err[d + 1] + 4.0 * EPS * (pm.a[d + 1] + pm.b[d + 1]);
            let (clo, chi) = self.enclose(a, b, d + 2);
            let reach = (sl.abs() + es) * h;
            let lo = v - ev - reach + clo.min(0.0) * h * h * 0.5;
            let hi = v + ev + reach + chi.max(0.0) * h * h * 0.5;
            (lo, hi)
        } else {
            let (dlo, dhi) = self.enclose(a, b, d + 1);
            let reach = dlo.abs().max(dhi.abs()) * h;
            (v - ev - reach, v + ev + reach)
        };
        let slack = 4.0 * EPS * (lo.abs() + hi.abs());
        Some((lo - slack, hi + slack))
    }

    /// The sign f^(d) keeps over all of [a, b], when one of the enclosures proves it.
    pub(super) fn sign_over(&mut self, a: f64, b: f64, d: usize) -> Option<i8> {
        let decide = |lo: f64, hi: f64| {
            if lo > 0.0 {
                Some(1)
            } else if hi < 0.0 {
                Some(-1)
            } else {
                None
            }
        };
        let (lo, hi) = self.enclose(a, b, d);
        decide(lo, hi).or_else(|| {
            self.enclose_taylor(a, b, d)
                .and_then(|(lo, hi)| decide(lo, hi))
        })
    }

    pub(super) fn excludes_zero(&mut self, a: f64, b: f64, d: usize) -> bool {
        self.sign_over(a, b, d).is_some()
    }

    /// Narrows a bracket [lo, hi] of f^(d) with certified opposite end signs to a tight
    /// certified interval around its single root (safeguarded Newton plus bisection).
    pub(super) fn refine(
        &mut self,
        d: usize,
        mut lo: f64,
        mut hi: f64,
        sign_lo: i8,
    ) -> (f64, f64, f64) {
        // Newton steps need f^(d) and its slope: evaluations of order d + 1 carry both
        // (the slope's own error bound is not needed to steer).
        let orders = d + 1;
        // Start from the better Newton step taken from either end.
        let mut x = split_bracket(lo, hi);
        let mut best = f64::INFINITY;
        // (Only from ends already evaluated: a far end is rarely worth a new evaluation.)
        for end in [lo, hi] {
            let Some(p) = self.cached(end, orders) else {
                continue;
            };
            let n = self.newton(&p, d, lo, hi);
            if n > lo && n < hi && (n - end).abs() < best {
                best = (n - end).abs();
                x = n;
            }
        }
        let mut prev_step = f64::INFINITY;
        // Newton steps that did not halve the previous one, in a row. A few are allowed
        // (far from a root of a convex function Newton creeps, but safely inside the
        // bracket); halving a wide bracket instead would throw the iterate far away.
        let mut slow = 0;
        for _ in 0..300 {
            if self.exhausted() {
                break;
            }
            if hi - lo <= 4.0 * f64::EPSILON * lo.abs().max(hi.abs()).max(1e-300) {
                break;
            }
            if !(x > lo && x < hi) {
                x = split_bracket(lo, hi);
            }
            let p = self.point(x, orders);
            match p.sign(d) {
                Some(s) if s == sign_lo => lo = x,
                Some(_) => hi = x,
                None => {
                    if let Some(done) = self.bracket_by_slope(&p, d, lo, hi, sign_lo) {
                        return done;
                    }
                    // Inside the error band: tighten from both sides around it, and go
                    // on if that left the root on one side of the band.
                    let (l2, h2) = self.tighten(d, lo, hi, x, sign_lo, &p);
                    let stuck = l2 <= x && h2 >= x;
                    lo = l2;
                    hi = h2;
                    if stuck {
                        return (lo, hi, 0.5 * (lo + hi));
                    }
                    x = 0.5 * (lo + hi);
                    prev_step = f64::INFINITY;
                    continue;
                }
            }
            let newton = self.newton(&p, d, lo, hi);
            let step = (newton - x).abs();
            let inside = newton.is_finite() && newton > lo && newton < hi;
            if inside && step < 0.5 * prev_step {
                slow = 0;
            } else if inside && slow < 4 {
                slow += 1;
            } else {
                // Newton left the bracket or stalled: bisect once.
                prev_step = 0.5 * (hi - lo);
                x = split_bracket(lo, hi);
                slow = 0;
                continue;
            }
            // Convergence is quadratic: once a step is this small the next iterate is
            // as good as floats allow, so certify around it straight away, from this
            // evaluation alone when its slope allows.
            if step <= 1e-5 * newton.abs().max(1e-300) {
                if let Some(done) = self.bracket_by_slope(&p, d, lo, hi, sign_lo) {
                    return done;
                }
            }
            if step <= 1e-9 * newton.abs().max(1e-300) {
                let (l2, h2) = self.tighten(d, lo, hi, newton, sign_lo, &p);
                if l2 <= newton && h2 >= newton {
                    return (l2, h2, newton);
                }
                lo = l2;
                hi = h2;
                x = 0.5 * (lo + hi);
                prev_step = f64::INFINITY;
                continue;
            }
            prev_step = step;
            x = newton;
        }
        (lo, hi, 0.5 * (lo + hi))
    }

    /// The simple root in a bracket of f with certified opposite end signs (`sign_lo`
    /// at `lo`), refined to a tight certified interval.
    pub(super) fn simple_root(&mut self, lo: f64, hi: f64, sign_lo: i8) -> FoundRoot {
        let (lo, hi, y) = self.refine(0, lo, hi, sign_lo);
        FoundRoot {
            lo,
            hi,
            y,
            multiplicity: 1,
            exact_rate: None,
        }
    }

    /// The Newton step for f^(d) from a point; NaN where the slope is flat.
    ///
    /// Where f^(d) has both positive and negative parts, P and N, the step is taken on
    /// ln P - ln N instead, which has the same roots: each part is a sum of decaying
    /// exponentials, close to a single one, so its logarithm is close to a straight
    /// line and the step lands near the root from far away (on f itself Newton creeps
    /// towards the root of a convex sum). Near the root the two steps agree.
    /// The log step is used when it stays inside (lo, hi); otherwise the plain one.
    pub(super) fn newton(&self, p: &Point, d: usize, lo: f64, hi: f64) -> f64 {
        let (pos, neg) = p.parts(d);
        // The parts' slopes are minus the next order's parts, paired the same way.
        let (pos1, neg1) = if d.is_multiple_of(2) {
            (p.a[d + 1], p.b[d + 1])
        } else {
            (p.b[d + 1], p.a[d + 1])
        };
        if pos > 0.0 && neg > 0.0 {
            let slope = neg1 / neg - pos1 / pos;
            let x = p.y - (pos / neg).ln() / slope;
            if x > lo && x < hi {
                return x;
            }
        }
        let slope = p.value(d + 1);
        if slope != 0.0 && slope.is_finite() {
            p.y - p.value(d) / slope
        } else {
            f64::NAN
        }
    }

    /// An error bound of the slope `p.value(d + 1)`, as [`Point::sign`] allows for a
    /// value: also when `p` does not carry the order above the slope, whose sum the
    /// bound needs; that sum is then bounded by the largest exponent times the slope's
    /// absolute sum.
    pub(super) fn slope_error(&self, p: &Point, d: usize) -> f64 {
        let s = self.s;
        let total1 = p.a[d + 1] + p.b[d + 1];
        // (Computed sums are within a relative 1e-6 of the true ones, with room.)
        let true1 = total1 * (1.0 + 1e-6) + 1e-290 * s.abs_sum * s.npow_last[d + 1];
        let fixed = 2.0 * EPS * (ORDERS + 6) as f64;
        let per_unit = 4.0 * EPS + 2.0 * EPS * p.y.abs();
        let crude = (fixed + per_unit * s.last_n() + (s.c.len() as f64 + 4.0) * 2.0 * EPS) * true1
            + 1e-290 * s.abs_sum * s.npow_last[d + 1];
        p.err[d + 1].min(crude) + 2.0 * EPS * total1
    }

    /// Whether f keeps the sign `s` all over [pa.y, pb.y], shown from the values and
    /// slopes at the two ends alone (evaluations of order 1 suffice). f = P - N, where
    /// P and N are sums of decaying exponentials with positive weights, so both are
    /// convex and decreasing: the part that must stay the larger (P for s = +1, N for
    /// s = -1) is at least the larger of its tangents at the ends, and the other at
    /// most its chord. The difference of those lines is smallest at an end or where
    /// the tangents cross; it must be positive, with every error bound against it.
    pub(super) fn keeps_sign(&self, pa: &Point, pb: &Point, s: i8) -> bool {
        let (a, b) = (pa.y, pb.y);
        if b.partial_cmp(&a) != Some(std::cmp::Ordering::Greater) || pa.orders < 1 || pb.orders < 1
        {
            return false;
        }
        // (value and slope size of the larger part, value of the smaller part)
        let part = |p: &Point| {
            if s > 0 {
                (p.a[0], p.a[1], p.b[0])
            } else {
                (p.b[0], p.b[1], p.a[0])
            }
        };
        let (big_a, slope_a, small_a) = part(pa);
        let (big_b, slope_b, small_b) = part(pb);
        let e_a = pa.err[0] + 2.0 * EPS * (pa.a[0] + pa.b[0]);
        let e_b = pb.err[0] + 2.0 * EPS * (pb.a[0] + pb.b[0]);
        let (big_a, big_b) = (big_a - e_a, big_b - e_b);
        let slope_a = slope_a + self.slope_error(pa, 0);
        let slope_b = (slope_b - self.slope_error(pb, 0)).max(0.0);
        let (small_a, small_b) = (small_a + e_a, small_b + e_b);
        let w = b - a;
        let lower = |u: f64| {
            let from_a = big_a - slope_a * (u - a);
            let from_b = big_b + slope_b * (b - u);
            let t = (u - a) / w;
            from_a.max(from_b) - (small_a * (1.0 - t) + small_b * t)
        };
        let mut cross = a;
        if slope_a > slope_b {
            let u = a + (big_a - big_b - slope_b * w) / (slope_a - slope_b);
            if u > a && u < b {
                cross = u;
            }
        }
        let slack = 16.0 * EPS * (big_a.abs() + big_b.abs() + small_a + small_b + slope_a * w);
        [a, b, cross].iter().all(|&u| lower(u) > slack)
    }

    /// A certified bracket around the root of f^(d) next to `p`, from `p` alone: by
    /// Taylor's theorem f^(d)(x) = F + D h + R h^2 / 2 with h = x - p.y, F and D the
    /// value and slope at `p` (within their error bounds) and |R| at most a bound on
    /// f^(d+2) near `p`. Around the Newton point x* = p.y - F / D, points a few error
    /// widths away on either side then have certain, opposite signs: no further
    /// evaluation is needed. `None` when the step is too long for the quadratic term
    /// to be small, or a sign is not certain; the bracket is clipped to [lo, hi].
    pub(super) fn bracket_by_slope(
        &self,
        p: &Point,
        d: usize,
        lo: f64,
        hi: f64,
        sign_lo: i8,
    ) -> Option<(f64, f64, f64)> {
        if d + 2 >= ORDERS || p.orders < d + 1 {
            return None;
        }
        let s = self.s;
        let (f, slope) = (p.value(d), p.value(d + 1));
        if !(slope.is_finite() && slope != 0.0 && f.is_finite()) {
            return None;
        }
        // Error bounds of the value and the slope. The slope's own bound needs the
        // order above it, which this evaluation may not carry: bound that sum by the
        // largest exponent times the slope's absolute sum.
        let (pf, mf) = p.parts(d);
        let e_value = p.err[d] + 2.0 * EPS * (pf + mf);
        let n_max = s.last_n();
        let e_slope = self.slope_error(p, d);
        // (Computed sums are within a relative 1e-6 of the true ones, with room.)
        let true1 =
            (p.a[d + 1] + p.b[d + 1]) * (1.0 + 1e-6) + 1e-290 * s.abs_sum * s.npow_last[d + 1];
        let x_star = p.y - f / slope;
        let h_star = (x_star - p.y).abs();
        let width = (e_value + e_slope * h_star) / slope.abs();
        let eps = 1.5 * width + 8.0 * EPS * x_star.abs() + 1e-300;
        let (x_lo, x_hi) = (x_star - eps, x_star + eps);
        let reach = h_star + 2.0 * eps;
        if (n_max * reach).is_nan() || n_max * reach > 1.0 {
            return None;
        }
        // |f^(d+2)| over [p.y - reach, ...]: sum |c| n^(d+2) e^(-n xi) is at most
        // n_max e^(n_max reach) times the slope's absolute sum at p.y.
        let curvature = n_max * (n_max * reach).exp() * (true1 + e_slope) * 1.01;
        let certain = |x: f64, want: i8| {
            if x <= lo || x >= hi {
                // Outside the bracket: its end already carries the wanted sign.
                return true;
            }
            let h = x - p.y;
            let v = f + slope * h;
            let e = e_value
                + e_slope * h.abs()
                + 0.5 * curvature * h * h
                + 4.0 * EPS * (f.abs() + (slope * h).abs());
            v.abs() > e && (if v > 0.0 { 1 } else { -1 }) == want
        };
        if certain(x_lo, sign_lo) && certain(x_hi, -sign_lo) {
            Some((x_lo.max(lo), x_hi.min(hi), x_star))
        } else {
            None
        }
    }

    /// The sign at `mid` is uncertain: walk outwards from it to the nearest points on
    /// either side whose signs are certain, keeping inside [lo, hi].
    ///
    /// `near` is an evaluation at or next to `mid` (of order d + 1 at least): its error
    /// bound over its slope estimates the width of the band of uncertain signs.
    pub(super) fn tighten(
        &mut self,
        d: usize,
        lo: f64,
        hi: f64,
        mid: f64,
        sign_lo: i8,
        near: &Point,
    ) -> (f64, f64) {
        let mut new_lo = lo;
        let mut new_hi = hi;
        // First step: the width of the band where the error bound hides the sign, as
        // the value's error over the slope suggests.
        let p = near;
        let slope = p.value(d + 1);
        let off = if p.y == mid { p.value(d).abs() } else { 0.0 };
        let band = 1.5 * (p.err[d] + 2.0 * EPS * (p.a[d] + p.b[d]) + off) / slope.abs();
        let first = (8.0 * f64::EPSILON * mid.abs().max(1e-300)).max(if band.is_finite() {
            band
        } else {
            0.0
        });
        let mut step = first;
        while mid - step > lo {
            match self.point(mid - step, d + 1).sign(d) {
                Some(s) if s == sign_lo => {
                    new_lo = mid - step;
                    break;
                }
                Some(_) => {
                    new_hi = new_hi.min(mid - step);
                    break;
                }
                None => step *= 4.0,
            }
        }
        let mut step = first;
        while mid + step < new_hi {
            match self.point(mid + step, d + 1).sign(d) {
                Some(s) if s != sign_lo => {
                    new_hi = mid + step;
                    break;
                }
                Some(_) => {
                    new_lo = new_lo.max(mid + step);
                    break;
                }
                None => step *= 4.0,
            }
        }
        (new_lo, new_hi)
    }
}

/// Where to bisect a bracket [lo, hi] (0 <= lo < hi) when Newton cannot be trusted:
/// the middle, unless the bracket spans orders of magnitude (the first bracket runs
/// from 0% to beyond every root, and rates of real deals sit near its low end): then
/// the geometric middle, or hi / 64 from a bracket starting at 0.
pub(super) fn split_bracket(lo: f64, hi: f64) -> f64 {
    let x = if lo <= 0.0 && hi > 0.0 {
        hi / 64.0
    } else if lo > 0.0 && hi > 16.0 * lo {
        (lo * hi).sqrt()
    } else {
        0.5 * (lo + hi)
    };
    if x > lo && x < hi {
        x
    } else {
        0.5 * (lo + hi)
    }
}
