//! Every real root of the NPV, with a certified count.
//!
//! With flows `C_k` at integer clock offsets, the offsets shifted to start at zero and
//! divided by their greatest common divisor give integer exponents `n_k`, and
//! `f(y) = sum C_k exp(-y n_k)` with `y = ln(1 + rate per step)` has exactly the IRRs
//! as roots, over the whole real line (rates in (-100%, +inf)). The search works in `y`,
//! so rates near -100% and astronomically large rates are ordinary finite numbers.
//!
//! Certification. Every sign that decides a root is taken from an evaluation that
//! carries a rigorous floating-point error bound (terms are accumulated as separate
//! positive and negative sums, each term's relative error bounded by the number of
//! roundings that produced it). On an interval, each derivative of `f` is enclosed by
//! its decreasing positive and negative parts. An interval is settled when:
//! the enclosure of `f` excludes zero (no root); or that of `f'` does (monotone: one
//! root exactly when the end signs differ); or that of `f''` does (convex or concave:
//! the extremum decides 0, 1 double or 2 roots); or a multiple root is proven exactly
//! at a short decimal rate with big-integer arithmetic and the next derivative's
//! enclosure excludes zero (Rolle). Norstrom's cumulative-sum counts settle the half
//! lines above and below 0% outright when they are 0 or 1; the same counts on the flows
//! discounted to another point (Laguerre) prove a whole answer at once when they add
//! up to the roots found by Newton from the end signs, and end a subdivision early once
//! at most one root can be left above a point. The total is finally checked
//! against the Descartes/Laguerre bound and its parity.
//!
//! Exact settling ([`exact`]). A series left with a multiple root, an undecided piece or
//! intervals that touch is solved again in exact arithmetic: the integer polynomial,
//! its square-free chain, Descartes isolation in big integers; that answer replaces the
//! float one whenever it fits the work budget ([`exact::WORK_LIMIT`]). Past the budget
//! the float answer stands (a multiple root in it was proven exactly at a short decimal
//! rate, its interval rounded outwards from that exact rate), and anything left
//! undecided is reported as such: the count is then not certified.

pub mod exact;

use super::dd::Dd;
use num_bigint::BigInt;
use num_traits::{One, Zero};
use rust_decimal::prelude::*;

/// Derivative orders carried by every point evaluation (0 ..= 4).
const ORDERS: usize = 5;
/// Unit roundoff of f64.
const EPS: f64 = f64::EPSILON * 0.5;
/// Point evaluations allowed per series before giving up (keeps the search finite).
const EVAL_BUDGET: usize = 40_000;
/// Double-double point evaluations allowed per half-line for undecided pieces.
const DD_BUDGET: usize = 3_000;
/// Largest exponent for exact big-integer checks of multiple roots.
const EXACT_DEGREE_LIMIT: u64 = 2_000;

/// One real root of `f`, in `y = ln(1 + rate per step)`.
#[derive(Debug, Clone, PartialEq)]
pub struct FoundRoot {
    /// Lower end of an interval certified to contain the root.
    pub lo: f64,
    /// Upper end.
    pub hi: f64,
    /// Best estimate.
    pub y: f64,
    /// Multiplicity (1 simple, 2 double, ...).
    pub multiplicity: u32,
    /// The exact rate per step when the root was proven exactly (multiple roots, 0%).
    pub exact_rate: Option<Decimal>,
}

/// The outcome of the search for one series.
#[derive(Debug, Clone, PartialEq)]
pub struct RootSet {
    /// Roots from the lowest to the highest.
    pub roots: Vec<FoundRoot>,
    /// True when the count is proven complete.
    pub certified: bool,
    /// Intervals in `y` that could not be decided.
    pub unresolved: Vec<(f64, f64)>,
    /// Sign changes of the flows (Descartes/Laguerre bound).
    pub descartes: u32,
    /// Sign changes of forward cumulative sums (bound above 0%), when the sum is not zero.
    pub above_zero: Option<u32>,
    /// Sign changes of backward cumulative sums (bound below 0%), when the sum is not zero.
    pub below_zero: Option<u32>,
    /// Years in one step of `y` (the gcd of the offsets over units a year).
    pub step_years: f64,
    /// Clock units in one step (the gcd of the offsets).
    pub step_units: u64,
    /// Point evaluations used.
    pub evaluations: usize,
    /// When the count was proven by Laguerre's bounds at one point (the quick way, see
    /// [`find_roots`]): that point, in `y`.
    pub proven_at: Option<f64>,
    /// The amounts as binary floats, in the order given, all multiplied by one power
    /// of ten (see `small_integers`): for readings that need no exact arithmetic
    /// and do not depend on the amounts' scale, such as the balance classification of
    /// batch screening.
    pub coefficients: Vec<f64>,
    /// Whether the exact settling ran and what it gave (see [`exact`]).
    pub exact: ExactCheck,
    /// Word operations the exact settling spent (0 when it did not run).
    pub exact_work: u64,
}

/// What the exact settling of a series did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExactCheck {
    /// Not needed: the floating-point search certified every root as simple.
    NotNeeded,
    /// Every root, its multiplicity and its interval were proven in exact arithmetic.
    Settled,
    /// Needed, but the exact work did not fit its budget: the floating-point answer
    /// stands, and a multiple root or undecided interval in it leaves the count
    /// uncertified unless it was proven exactly at a short decimal rate.
    OverBudget,
}

impl RootSet {
    /// Number of roots counted with multiplicity.
    pub fn count(&self) -> u32 {
        self.roots.iter().map(|r| r.multiplicity).sum()
    }
}

/// The NPV as a sum of exponential terms in y = ln(1 + rate per step), prepared for
/// evaluation.
struct NpvTerms<'a> {
    /// True for the time-reversed series (variable u = -y), used for rates below 0%.
    reversed: bool,
    /// Coefficients as f64 (see `small_integers`: possibly all scaled by one power of
    /// ten, which changes no root).
    c: Vec<f64>,
    /// Exponents `n_k` as f64 (exact: integers below 2^53).
    n: Vec<f64>,
    /// The exact coefficients (turned into integers only for exact checks).
    amounts: std::borrow::Cow<'a, [Decimal]>,
    /// Index into `gap_vals` of the gap before term k (k >= 1); empty when every gap
    /// is the same.
    gap_idx: Vec<u32>,
    /// The distinct gaps between consecutive exponents.
    gap_vals: Vec<f64>,
    /// n_K^d for d in 0..ORDERS.
    npow_last: [f64; ORDERS],
    /// Sum of |c_k|.
    abs_sum: f64,
}

/// One point evaluation: the positive and negative parts of `f^(d)` scaled by a
/// positive factor (so signs are exact), with
/// error bounds.
#[derive(Debug, Clone, Copy)]
struct Point {
    y: f64,
    /// Orders computed (higher entries are not valid).
    orders: usize,
    /// Sum over positive coefficients of c_k n_k^d w_k.
    a: [f64; ORDERS],
    /// Sum over negative coefficients of |c_k| n_k^d w_k.
    b: [f64; ORDERS],
    /// The signed sums c_k n_k^d w_k (as summed, not as a - b).
    s: [f64; ORDERS],
    /// Error bounds of a and b together.
    err: [f64; ORDERS],
}

impl Point {
    /// Positive and negative parts of the d-th derivative (sign (-1)^d folded in).
    fn parts(&self, d: usize) -> (f64, f64) {
        if d.is_multiple_of(2) {
            (self.a[d], self.b[d])
        } else {
            (self.b[d], self.a[d])
        }
    }

    /// Certified sign of f^(d) at this point: Some(+1/-1), or None when within error.
    fn sign(&self, d: usize) -> Option<i8> {
        let (p, m) = self.parts(d);
        let v = self.value(d);
        if v.abs() > self.err[d] + 2.0 * EPS * (p + m) {
            Some(if v > 0.0 { 1 } else { -1 })
        } else {
            None
        }
    }

    /// Value of the scaled f^(d) (for Newton steps only).
    fn value(&self, d: usize) -> f64 {
        if d.is_multiple_of(2) {
            self.s[d]
        } else {
            -self.s[d]
        }
    }
}

struct Solver<'a> {
    s: &'a NpvTerms<'a>,
    /// True while subdividing: interval ends then need every order.
    in_search: bool,
    /// Double-double point evaluations spent on undecided pieces (bounded, so that a
    /// pathological series ends in "undecided" rather than a long wait).
    dd_spent: usize,
    evals: usize,
    cache: Vec<(u64, Point)>,
}

/// Adds `c w n^d` to the signed sums and `|c w| n^d` to the absolute sums, d < M
/// (n >= 0, so the absolute term of each order is the absolute value of the signed one).
#[inline(always)]
fn accumulate<const M: usize>(s: &mut [f64; M], t: &mut [f64; M], cw: f64, nk: f64) {
    let mut v = cw;
    for d in 0..M {
        s[d] += v;
        t[d] += v.abs();
        v *= nk;
    }
}

/// Sums of [`NpvTerms::sums`] for evenly spaced exponents (every period present), in
/// four interleaved chains of powers, w_k = w_(k-4) z^4, so that the multiplications
/// do not wait on one another and the compiler can keep the terms in vector registers.
/// Each w_k still takes at most one rounding per unit of exponent: z^4 = (z^2)^2
/// carries three for four units and the product one more; the first four powers
/// (1, z, z^2, z^3) carry at most two.
#[inline(always)]
fn sums_even<const M: usize>(c: &[f64], n: &[f64], z: f64) -> ([f64; M], [f64; M]) {
    let z2 = z * z;
    let z4 = z2 * z2;
    let mut w = [1.0f64, z, z2, z2 * z];
    let (mut s4, mut t4) = ([[0.0f64; 4]; M], [[0.0f64; 4]; M]);
    let mut quads = c.chunks_exact(4).zip(n.chunks_exact(4));
    for (cc, nn) in &mut quads {
        let mut v = [cc[0] * w[0], cc[1] * w[1], cc[2] * w[2], cc[3] * w[3]];
        for d in 0..M {
            for l in 0..4 {
                s4[d][l] += v[l];
                t4[d][l] += v[l].abs();
                v[l] *= nn[l];
            }
        }
        for wl in &mut w {
            *wl *= z4;
        }
    }
    let (mut s, mut t) = ([0.0f64; M], [0.0f64; M]);
    for d in 0..M {
        s[d] = (s4[d][0] + s4[d][1]) + (s4[d][2] + s4[d][3]);
        t[d] = (t4[d][0] + t4[d][1]) + (t4[d][2] + t4[d][3]);
    }
    let done = c.len() - c.len() % 4;
    for (l, k) in (done..c.len()).enumerate() {
        accumulate(&mut s, &mut t, c[k] * w[l], n[k]);
    }
    (s, t)
}

impl<'a> NpvTerms<'a> {
    fn new(
        amounts: std::borrow::Cow<'a, [Decimal]>,
        c: Vec<f64>,
        exps: &[u64],
        reversed: bool,
    ) -> NpvTerms<'a> {
        // (Exponents are below 2^53; the signed conversion is the cheaper one.)
        let n: Vec<f64> = exps.iter().map(|&e| e as i64 as f64).collect();
        let mut gap_vals: Vec<f64> = Vec::new();
        let mut gap_idx: Vec<u32> = Vec::new();
        // Evenly spaced exponents need no index (see `NpvTerms::gap_index`).
        let even = exps.len() >= 2 && {
            let g = exps[1] - exps[0];
            exps.windows(2).all(|w| w[1] - w[0] == g)
        };
        if even {
            gap_vals.push((exps[1] - exps[0]) as f64);
        } else {
            gap_idx = vec![0u32; exps.len()];
            let mut last_gap = (u64::MAX, 0u32);
            for k in 1..exps.len() {
                let g = exps[k] - exps[k - 1];
                let idx = if g == last_gap.0 {
                    last_gap.1
                } else {
                    let gf = g as f64;
                    let i = match gap_vals.iter().position(|&v| v == gf) {
                        Some(i) => i,
                        None => {
                            gap_vals.push(gf);
                            gap_vals.len() - 1
                        }
                    } as u32;
                    last_gap = (g, i);
                    i
                };
                gap_idx[k] = idx;
            }
        }
        let mut npow_last = [1.0; ORDERS];
        let last = n.last().copied().unwrap_or(0.0);
        for d in 1..ORDERS {
            npow_last[d] = npow_last[d - 1] * last;
        }
        let abs_sum = c.iter().map(|x| x.abs()).sum();
        NpvTerms {
            reversed,
            c,
            n,
            amounts,
            gap_idx,
            gap_vals,
            npow_last,
            abs_sum,
        }
    }

    /// The coefficients discounted to `a >= 0`, `c_k exp(-a n_k)`, and the relative
    /// error allowance of each (the error model of [`NpvTerms::eval`]: a fixed part plus
    /// `per_unit` a unit of exponent). With `reverse`, those of the time-reversed
    /// series instead (`c_k exp(-a (n_K - n_k))`, last term first), worked out from
    /// this one's coefficients and gaps: the same numbers the reversed series itself
    /// would give, in the same order of operations.
    fn discounted(&self, a: f64, reverse: bool) -> (Vec<f64>, f64, f64) {
        let fixed = 2.0 * EPS * (ORDERS + 6) as f64;
        let per_unit = 4.0 * EPS + 2.0 * EPS * a.abs();
        let mut z = [0.0f64; 64];
        let zs: Vec<f64>;
        let factors: &[f64] = if self.gap_vals.len() <= z.len() {
            for (slot, g) in z.iter_mut().zip(&self.gap_vals) {
                *slot = (-a * g).exp();
            }
            &z[..self.gap_vals.len()]
        } else {
            zs = self.gap_vals.iter().map(|g| (-a * g).exp()).collect();
            &zs
        };
        let mut w = 1.0f64;
        let last = self.c.len().saturating_sub(1);
        let terms = (0..self.c.len())
            .map(|t| {
                // Term k, and the gap between it and the one before it in this order.
                let (k, gap) = if reverse {
                    (last - t, last + 1 - t)
                } else {
                    (t, t)
                };
                if t > 0 {
                    w *= factors[self.gap_index(gap)];
                }
                self.c[k] * w
            })
            .collect();
        (terms, fixed, per_unit)
    }

    /// Laguerre's bound on the roots above `a >= 0`: the sign changes of the partial
    /// sums of the discounted coefficients `c_k exp(-a n_k)` (with `x = exp(a - y)`
    /// the roots above `a` are those of `sum (c_k exp(-a n_k)) x^(n_k)` in (0, 1)). At
    /// `a = 0` this is Norstrom's count. `None` when a partial sum is too close to
    /// zero for its sign to be certain (the last one is f(a) itself).
    fn tail_bound(&self, a: f64) -> Option<u32> {
        let (terms, fixed, per_unit) = self.discounted(a, false);
        self.partial_sum_changes(&terms, fixed, per_unit, false)
    }

    /// Laguerre's bounds at `a >= 0`: (roots above `a`, roots below `a`), from the
    /// partial sums of the discounted coefficients taken forwards and backwards (the
    /// roots below `a` are those of the same sum in `1/x`, whose exponents run the other
    /// way). Every partial sum must have a certain sign, f(a) included, so `a` is not a
    /// root; otherwise `None`. With `reverse`, the bounds of the time-reversed series
    /// at `a` (see [`NpvTerms::discounted`]).
    fn bounds_at(&self, a: f64, reverse: bool) -> Option<(u32, u32)> {
        let (terms, fixed, per_unit) = self.discounted(a, reverse);
        let above = self.partial_sum_changes(&terms, fixed, per_unit, false)?;
        let below = self.partial_sum_changes(&terms, fixed, per_unit, true)?;
        Some((above, below))
    }

    /// Sign changes of the partial sums of `terms` taken forwards (or `backwards`), each
    /// sum's sign certain under the error model of [`NpvTerms::discounted`]; `None`
    /// otherwise.
    fn partial_sum_changes(
        &self,
        terms: &[f64],
        fixed: f64,
        per_unit: f64,
        backwards: bool,
    ) -> Option<u32> {
        let floor = 1e-290 * self.abs_sum;
        let own = fixed + per_unit * self.last_n();
        let (mut sum, mut size) = (0.0f64, 0.0f64);
        let mut changes = SignCount::default();
        let mut step = |j: usize, t: f64| {
            sum += t;
            size += t.abs();
            // Each term's own error (up to the largest exponent's allowance) and two
            // roundings' worth of the running size per addition.
            let err = (own + (j as f64 + 2.0) * 2.0 * EPS) * size + floor;
            changes.push(sum);
            sum.abs() > err
        };
        let certain = if backwards {
            terms.iter().rev().enumerate().all(|(j, &t)| step(j, t))
        } else {
            terms.iter().enumerate().all(|(j, &t)| step(j, t))
        };
        certain.then_some(changes.changes)
    }

    /// The sign of f at the search's upper end and beyond, where the first term
    /// outweighs all the others (that is how the end is chosen in [`find_roots`]): no
    /// evaluation needed.
    fn sign_at_upper_end(&self) -> i8 {
        if self.c[0] > 0.0 {
            1
        } else {
            -1
        }
    }

    /// Index into `gap_vals` of the gap before term k >= 1 (0 when evenly spaced).
    #[inline(always)]
    fn gap_index(&self, k: usize) -> usize {
        if self.gap_idx.is_empty() {
            0
        } else {
            self.gap_idx[k] as usize
        }
    }

    fn last_n(&self) -> f64 {
        *self.n.last().unwrap_or(&0.0)
    }

    /// Signed sums `c_k w_k n_k^d` and absolute sums `|c_k| w_k n_k^d` for d < M, with
    /// w_k = exp(-y n_k) built from the gap factors.
    fn sums<const M: usize>(&self, factors: &[f64]) -> ([f64; M], [f64; M]) {
        let (c, n) = (&self.c[..], &self.n[..]);
        if factors.len() == 1 && c.len() >= 8 {
            return sums_even::<M>(c, n, factors[0]);
        }
        let (mut s, mut t) = ([0.0; M], [0.0; M]);
        let mut w = 1.0f64;
        for k in 0..c.len() {
            if k > 0 {
                w *= factors[self.gap_index(k)];
            }
            accumulate(&mut s, &mut t, c[k] * w, n[k]);
        }
        (s, t)
    }

    /// Evaluates derivative orders `0..orders` at `y >= 0`.
    fn eval(&self, y: f64, orders: usize) -> Point {
        let orders = orders.clamp(1, ORDERS);
        let k_len = self.c.len();
        // Factors exp(-y * gap), each <= 1 for y >= 0.
        let factor = |g: f64| (-y * g).exp();
        let mut z = [0.0f64; 64];
        let zs: Vec<f64>;
        let factors: &[f64] = if self.gap_vals.len() <= 64 {
            for (i, g) in self.gap_vals.iter().enumerate() {
                z[i] = factor(*g);
            }
            &z[..self.gap_vals.len()]
        } else {
            zs = self.gap_vals.iter().map(|g| factor(*g)).collect();
            &zs
        };
        // One order more than asked: it bounds the rounding error (below). The parts
        // are a = (t + s) / 2 and b = (t - s) / 2: one more rounding each, which the
        // summation allowance below covers with room to spare.
        let mut a = [0.0f64; ORDERS + 1];
        let mut b = [0.0f64; ORDERS + 1];
        let mut signed = [0.0f64; ORDERS];
        macro_rules! run {
            ($m:literal) => {{
                let (sv, tv) = self.sums::<$m>(factors);
                for d in 0..$m {
                    a[d] = 0.5 * (tv[d] + sv[d]).max(0.0);
                    b[d] = 0.5 * (tv[d] - sv[d]).max(0.0);
                    if d < ORDERS {
                        signed[d] = sv[d];
                    }
                }
            }};
        }
        match orders {
            1 => run!(2),
            2 => run!(3),
            3 => run!(4),
            4 => run!(5),
            _ => run!(6),
        }
        // Relative error of term k: one rounding per multiplication and per exp on the
        // way to it (at most one per unit of distance from the scaling end, since the
        // exponents grow by at least 1 a term), plus the rounding of the exponents
        // y*gap carried through, all with a 2x safety factor. Summed over the terms,
        // the distance-weighted part is the next order's sum.
        let fixed = 2.0 * EPS * (ORDERS + 6) as f64;
        let per_unit = 4.0 * EPS + 2.0 * EPS * y.abs();
        let mut err = [f64::INFINITY; ORDERS];
        for d in 0..orders {
            let total = a[d] + b[d];
            let weighted = a[d + 1] + b[d + 1];
            // Plus the summation error of two sums of non-negative terms, and a floor
            // for underflowed terms.
            err[d] = fixed * total
                + per_unit * weighted
                + (k_len as f64 + 2.0) * 2.0 * EPS * total
                + 1e-290 * self.abs_sum * self.npow_last[d];
        }
        let mut pa = [0.0; ORDERS];
        let mut pb = [0.0; ORDERS];
        pa.copy_from_slice(&a[..ORDERS]);
        pb.copy_from_slice(&b[..ORDERS]);
        Point {
            y,
            orders,
            a: pa,
            b: pb,
            s: signed,
            err,
        }
    }
}

impl<'a> Solver<'a> {
    /// The point evaluation at `y` with at least `orders` derivative orders.
    /// The point evaluation at `y` with at least `orders` orders, if already made.
    fn cached(&self, y: f64, orders: usize) -> Option<Point> {
        let key = y.to_bits();
        self.cache
            .iter()
            .rev()
            .take(64)
            .find(|(k, p)| *k == key && p.orders >= orders)
            .map(|(_, p)| *p)
    }

    fn point(&mut self, y: f64, orders: usize) -> Point {
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

    fn exhausted(&self) -> bool {
        self.evals > EVAL_BUDGET
    }

    /// Encloses f^(d) over [a, b] by its decreasing positive and negative parts.
    fn enclose(&mut self, a: f64, b: f64, d: usize) -> (f64, f64) {
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
    fn enclose_taylor(&mut self, a: f64, b: f64, d: usize) -> Option<(f64, f64)> {
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
    fn sign_over(&mut self, a: f64, b: f64, d: usize) -> Option<i8> {
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

    fn excludes_zero(&mut self, a: f64, b: f64, d: usize) -> bool {
        self.sign_over(a, b, d).is_some()
    }

    /// Narrows a bracket [lo, hi] of f^(d) with certified opposite end signs to a tight
    /// certified interval around its single root (safeguarded Newton plus bisection).
    fn refine(&mut self, d: usize, mut lo: f64, mut hi: f64, sign_lo: i8) -> (f64, f64, f64) {
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
    fn simple_root(&mut self, lo: f64, hi: f64, sign_lo: i8) -> FoundRoot {
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
    fn newton(&self, p: &Point, d: usize, lo: f64, hi: f64) -> f64 {
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
    fn slope_error(&self, p: &Point, d: usize) -> f64 {
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
    fn keeps_sign(&self, pa: &Point, pb: &Point, s: i8) -> bool {
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
    fn bracket_by_slope(
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
    fn tighten(
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
fn split_bracket(lo: f64, hi: f64) -> f64 {
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

/// Sign changes in a sequence, ignoring zeros.
fn sign_changes(values: impl Iterator<Item = Decimal>) -> u32 {
    let mut last = 0i8;
    let mut changes = 0;
    for v in values {
        let s = if v.is_sign_positive() && !v.is_zero() {
            1
        } else if v.is_zero() {
            0
        } else {
            -1
        };
        if s != 0 {
            if last != 0 && s != last {
                changes += 1;
            }
            last = s;
        }
    }
    changes
}

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// [`sign_bounds`] on the amounts as integers at one common scale (exact, and far
/// cheaper than decimal additions); `None` when an amount or a sum would leave `i128`.
fn sign_bounds_int(amounts: &[Decimal]) -> Option<(u32, Option<u32>, Option<u32>)> {
    let scale = amounts.iter().map(|a| a.scale()).max().unwrap_or(0);
    if amounts.len() < (1 << 30) && amounts.iter().all(|a| a.scale() == scale) {
        return Some(sign_bounds_same_scale(amounts));
    }
    let mut ints = Vec::with_capacity(amounts.len());
    for a in amounts {
        let m = a.mantissa();
        ints.push(if a.scale() == scale {
            m
        } else {
            m.checked_mul(10i128.checked_pow(scale - a.scale())?)?
        });
    }
    // One pass: the signs of the amounts and of the forward sums.
    let (mut v, mut f) = (SignCount::default(), SignCount::default());
    let mut acc = 0i128;
    for &x in &ints {
        v.push(x);
        acc = acc.checked_add(x)?;
        f.push(acc);
    }
    if acc == 0 {
        return Some((v.changes, None, None));
    }
    let mut b = SignCount::default();
    let mut acc = 0i128;
    for &x in ints.iter().rev() {
        acc = acc.checked_add(x)?;
        b.push(acc);
    }
    Some((v.changes, Some(f.changes), Some(b.changes)))
}

/// Counts sign changes of a stream of values, ignoring zeros.
#[derive(Default)]
struct SignCount {
    last: i8,
    changes: u32,
}

impl SignCount {
    #[inline(always)]
    fn push<T: PartialOrd + Default>(&mut self, v: T) {
        let zero = T::default();
        let s = i8::from(v > zero) - i8::from(v < zero);
        // (Branch-free: a zero neither counts nor replaces the last sign.)
        self.changes += u32::from(s * self.last < 0);
        self.last = if s != 0 { s } else { self.last };
    }
}

/// The amounts as integers at their common scale, when every amount has the same
/// scale and a mantissa below 2^40 in size and there are fewer than 2^22 of them (no
/// sum can then reach 2^62): the usual case, where the sign-change bounds need no
/// wider arithmetic and the integers themselves serve as the floats of the search
/// (the amounts times one power of ten, which changes no root and no reading made
/// relative to the amounts' size).
fn small_integers(amounts: &[Decimal]) -> Option<Vec<i64>> {
    let scale = amounts.first().map_or(0, |a| a.scale());
    if amounts.len() >= 1 << 22 {
        return None;
    }
    let mut ints = Vec::with_capacity(amounts.len());
    let small = amounts.iter().all(|a| {
        let m = a.mantissa();
        ints.push(m as i64);
        m.unsigned_abs() < 1 << 40 && a.scale() == scale
    });
    small.then_some(ints)
}

/// [`sign_bounds`] of integers whose sums cannot overflow (see [`small_integers`]):
/// cheaper again than sums in `i128`.
fn sign_bounds_of_integers(ints: Vec<i64>) -> (u32, Option<u32>, Option<u32>) {
    // Sign changes of a sequence without zeros: neighbours whose signs differ. Written
    // so that it needs no branches (the compiler vectorises it).
    fn changes(v: &[i64]) -> u32 {
        v.windows(2).map(|w| u32::from((w[0] ^ w[1]) < 0)).sum()
    }
    fn counted(v: &[i64]) -> u32 {
        if v.contains(&0) {
            let mut c = SignCount::default();
            v.iter().for_each(|&x| c.push(x));
            c.changes
        } else {
            changes(v)
        }
    }
    let descartes = counted(&ints);
    let mut sums = ints;
    let mut total = 0i64;
    for x in sums.iter_mut() {
        total += *x;
        *x = total;
    }
    if total == 0 {
        return (descartes, None, None);
    }
    let forward = counted(&sums);
    // The backward sums are the total, then the total less each forward sum but the
    // last (which is the total itself).
    for x in sums.iter_mut() {
        *x = total - *x;
    }
    sums.pop();
    sums.insert(0, total);
    let backward = counted(&sums);
    (descartes, Some(forward), Some(backward))
}

/// [`sign_bounds_int`] when every amount has the same scale: the mantissas are then
/// the integers themselves, below 2^96 each, so sums of fewer than 2^30 of them stay
/// far inside `i128` and need no overflow checks; the backward sums are the total
/// minus the forward sums, so nothing is stored.
fn sign_bounds_same_scale(amounts: &[Decimal]) -> (u32, Option<u32>, Option<u32>) {
    let (mut v, mut f) = (SignCount::default(), SignCount::default());
    let mut total = 0i128;
    for a in amounts {
        let m = a.mantissa();
        v.push(m);
        total += m;
        f.push(total);
    }
    if total == 0 {
        return (v.changes, None, None);
    }
    let mut b = SignCount::default();
    let mut before = 0i128;
    for a in amounts {
        b.push(total - before);
        before += a.mantissa();
    }
    (v.changes, Some(f.changes), Some(b.changes))
}

/// Sign-change bounds of a netted series: (Descartes, above 0%, below 0%).
pub fn sign_bounds(amounts: &[Decimal]) -> (u32, Option<u32>, Option<u32>) {
    match small_integers(amounts) {
        Some(ints) => sign_bounds_of_integers(ints),
        None => sign_bounds_wide(amounts),
    }
}

/// [`sign_bounds`] for amounts that [`small_integers`] does not take: in `i128` at one
/// scale where that suffices, otherwise in decimals.
fn sign_bounds_wide(amounts: &[Decimal]) -> (u32, Option<u32>, Option<u32>) {
    if let Some(bounds) = sign_bounds_int(amounts) {
        return bounds;
    }
    let v = sign_changes(amounts.iter().copied());
    let mut fwd = Vec::with_capacity(amounts.len());
    let mut acc = Decimal::ZERO;
    let mut overflow = false;
    for a in amounts {
        match acc.checked_add(*a) {
            Some(x) => acc = x,
            None => overflow = true,
        }
        fwd.push(acc);
    }
    if overflow || acc.is_zero() {
        return (v, None, None);
    }
    let mut bwd = Vec::with_capacity(amounts.len());
    let mut acc2 = Decimal::ZERO;
    for a in amounts.iter().rev() {
        acc2 += *a;
        bwd.push(acc2);
    }
    (
        v,
        Some(sign_changes(fwd.into_iter())),
        Some(sign_changes(bwd.into_iter())),
    )
}

/// Finds every real root of `sum amounts[k] * x^(-offsets[k] / units)` in `y = ln x`
/// per step (the gcd of the offsets). `offsets` must be strictly increasing and the
/// amounts non-zero (see [`crate::engine::Flows::normalised`]).
pub fn find_roots(amounts: &[Decimal], offsets: &[i64], units_per_year: u64) -> RootSet {
    let ints = small_integers(amounts);
    let c: Vec<f64> = match &ints {
        Some(ints) => ints.iter().map(|&m| m as f64).collect(),
        None => amounts
            .iter()
            .map(|a| super::flows::amount_f64(*a))
            .collect(),
    };
    let (descartes, above_zero, below_zero) = match ints {
        Some(ints) => sign_bounds_of_integers(ints),
        None => sign_bounds_wide(amounts),
    };
    let first = offsets.first().copied().unwrap_or(0);
    let rel: Vec<u64> = offsets.iter().map(|&o| (o - first).max(0) as u64).collect();
    // (Once the divisor is 1 it stays 1: no more divisions needed.)
    let mut g = 0u64;
    for &x in &rel {
        g = gcd(g, x);
        if g == 1 {
            break;
        }
    }
    let g = g.max(1);
    let exps: Vec<u64> = if g == 1 {
        rel
    } else {
        rel.iter().map(|&x| x / g).collect()
    };
    let mut out = RootSet {
        roots: Vec::new(),
        certified: true,
        unresolved: Vec::new(),
        descartes,
        above_zero,
        below_zero,
        step_years: g as f64 / units_per_year.max(1) as f64,
        step_units: g,
        evaluations: 0,
        proven_at: None,
        coefficients: Vec::new(),
        exact: ExactCheck::NotNeeded,
        exact_work: 0,
    };
    if descartes == 0 || amounts.len() < 2 {
        out.coefficients = c;
        return out;
    }
    // Rates above 0% are searched on the series itself, rates below 0% on the reversed
    // series (u = -y, exponents n_K - n_k): both are then sums of decreasing
    // exponentials in a non-negative variable, which the enclosures need.
    let last = *exps.last().unwrap_or(&0);
    // The reversed series is only needed when the Norstrom count below 0% does not
    // already say zero; otherwise an empty one stands in (never evaluated).
    let reversed = if below_zero == Some(0) {
        NpvTerms::new(std::borrow::Cow::Borrowed(&[]), Vec::new(), &[], true)
    } else {
        let rev_c: Vec<f64> = c.iter().rev().copied().collect();
        let rev_exps: Vec<u64> = exps.iter().rev().map(|&e| last - e).collect();
        NpvTerms::new(
            std::borrow::Cow::Owned(amounts.iter().rev().copied().collect()),
            rev_c,
            &rev_exps,
            true,
        )
    };
    let series = NpvTerms::new(std::borrow::Cow::Borrowed(amounts), c, &exps, false);
    let mut solvers = [
        Solver {
            s: &series,
            in_search: false,
            dd_spent: 0,
            evals: 0,
            cache: Vec::new(),
        },
        Solver {
            s: &reversed,
            in_search: false,
            dd_spent: 0,
            evals: 0,
            cache: Vec::new(),
        },
    ];

    // Bracket: beyond these the first (resp. last) term dominates all others.
    let bound = |s: &NpvTerms| {
        let c0 = s.c[0].abs();
        let rest = s.abs_sum - c0;
        let n1 = s.n[1];
        ((rest / c0).ln().max(0.0) / n1 + 1.0) * 1.01 + 1.0 / n1
    };
    let y_hi = bound(&series);
    let u_hi = if reversed.c.is_empty() {
        0.0
    } else {
        bound(&reversed)
    };

    // Norstrom's counts exist exactly when the total is not zero (or too large to sum).
    let zero_is_root = above_zero.is_none()
        && amounts
            .iter()
            .try_fold(Decimal::ZERO, |acc, a| acc.checked_add(*a))
            .is_some_and(|t| t.is_zero());
    let mut zero_root: Option<FoundRoot> = None;
    // Where to search on each side of 0 (index 0: rates above 0%, on the series;
    // index 1: rates below 0%, on the reversed series), and the count when a
    // Norstrom bound settles it.
    let mut starts = [0.0f64; 2];
    let mut known = [
        above_zero.filter(|&n| n <= 1),
        below_zero.filter(|&n| n <= 1),
    ];
    if zero_is_root {
        let m = exact_multiplicity(&series, &BigInt::one(), &BigInt::one()).unwrap_or(1);
        zero_root = Some(FoundRoot {
            lo: 0.0,
            hi: 0.0,
            y: 0.0,
            multiplicity: m,
            exact_rate: Some(Decimal::ZERO),
        });
        // Keep away from the multiple root at 0 by a neighbourhood where f^(m) has a
        // fixed sign on both sides (Rolle: no other root there).
        let mut delta = 1e-3 / series.last_n().max(1.0);
        let mut found = false;
        for _ in 0..60 {
            if m as usize >= ORDERS {
                break;
            }
            let ok = solvers.iter_mut().all(|sv| {
                sv.excludes_zero(0.0, delta, m as usize) && sv.point(delta, 1).sign(0).is_some()
            });
            if ok {
                found = true;
                break;
            }
            delta *= 0.5;
        }
        if !found {
            out.certified = false;
            out.unresolved.push((-delta, delta));
        }
        starts = [delta, delta];
        known = [None, None];
    }

    let mut roots: Vec<FoundRoot> = Vec::new();
    // When a cumulative count leaves more than one root possible on a side of 0%, try
    // the cheap way first: one root by Newton wherever the end signs differ, then a
    // global count at points beside the roots found (Laguerre's bounds on the roots
    // above and below a point, forwards and backwards partial sums of the discounted
    // flows). If the bounds add up to the roots found, each holds exactly one simple
    // root and there are no others; otherwise the full search below decides.
    let quick = if !zero_is_root && known.iter().any(|k| k.is_none_or(|n| n > 1)) {
        quick_certificate(&mut solvers, [y_hi, u_hi], [above_zero, below_zero])
    } else {
        None
    };
    let quick_done = quick.is_some();
    if let Some((found, at)) = quick {
        roots = found;
        out.proven_at = at;
    }
    for (i, solver) in solvers.iter_mut().enumerate() {
        let (lo, hi) = (starts[i], if i == 0 { y_hi } else { u_hi });
        if quick_done || lo >= hi || known[i] == Some(0) {
            continue;
        }
        let mut found: Vec<FoundRoot> = Vec::new();
        let unresolved_before = out.unresolved.len();
        let sl = solver.point(lo, 1).sign(0);
        let sh = Some(solver.s.sign_at_upper_end());
        match (known[i], sl, sh) {
            (Some(0), _, _) => {}
            (Some(1), Some(a), Some(b)) if a != b => {
                found.push(solver.simple_root(lo, hi, a));
            }
            _ => search(solver, lo, hi, &mut found, &mut out),
        }
        // Where binary floats left a simple root's interval wide, narrow it by
        // bisection on double-double signs.
        for r in &mut found {
            if r.multiplicity == 1 && r.exact_rate.is_none() {
                polish(solver.s, r);
            }
        }
        if i == 1 {
            // Back from u = -y to y.
            for iv in &mut out.unresolved[unresolved_before..] {
                *iv = (-iv.1, -iv.0);
            }
            found = found.into_iter().map(flipped).collect();
        }
        roots.extend(found);
    }
    if let Some(z) = zero_root {
        roots.push(z);
    }
    roots.sort_by(|a, b| a.y.total_cmp(&b.y));
    out.roots = roots;
    out.evaluations = solvers.iter().map(|s| s.evals).sum();
    let count = out.count();
    if solvers.iter().any(|s| s.exhausted())
        || count > descartes
        || !(descartes - count).is_multiple_of(2)
    {
        out.certified = false;
    }
    if !zero_is_root {
        let above = out
            .roots
            .iter()
            .filter(|r| r.y > 0.0)
            .map(|r| r.multiplicity)
            .sum::<u32>();
        let below = count - above;
        if above_zero.is_some_and(|b| above > b || (b - above) % 2 != 0)
            || below_zero.is_some_and(|b| below > b || !(b - below).is_multiple_of(2))
        {
            out.certified = false;
        }
    }
    drop(solvers);
    // Multiple roots, undecided pieces and intervals that touch are settled exactly.
    let overlap = out.roots.windows(2).any(|w| w[0].hi >= w[1].lo);
    if !out.certified || overlap || out.roots.iter().any(|r| r.multiplicity > 1) {
        settle_exactly(&mut out, amounts, &exps);
        if overlap && out.exact != ExactCheck::Settled {
            out.certified = false;
        }
    }
    out.coefficients = series.c;
    out
}

/// Replaces the roots of `out` by those proven in exact arithmetic (see [`exact`])
/// when that fits the work budget; records the outcome either way.
fn settle_exactly(out: &mut RootSet, amounts: &[Decimal], exps: &[u64]) {
    let mut work = exact::Work::new(exact::WORK_LIMIT);
    let degree = exps.last().copied().unwrap_or(0);
    // One modular gcd of a dense polynomial alone costs degree^2 word operations.
    let found = if degree.saturating_mul(degree) >= exact::WORK_LIMIT {
        Err(exact::OutOfBudget)
    } else {
        let p = exact::npv_polynomial(amounts, exps);
        exact::positive_roots(&p, &mut work)
    };
    out.exact_work = work.spent();
    let Ok(found) = found else {
        out.exact = ExactCheck::OverBudget;
        return;
    };
    let roots: Vec<FoundRoot> = found.iter().map(exact_found_root).collect();
    let count: u32 = roots.iter().map(|r| r.multiplicity).sum();
    let apart = roots.windows(2).all(|w| w[0].hi < w[1].lo);
    out.roots = roots;
    out.unresolved.clear();
    out.exact = ExactCheck::Settled;
    // Exact roots closer than floats can tell apart would leave intervals that touch.
    out.certified = apart && count <= out.descartes && (out.descartes - count).is_multiple_of(2);
}

/// A root proven exactly, as a root in y with outward-rounded bounds.
fn exact_found_root(r: &exact::ExactRoot) -> FoundRoot {
    let (lo, _) = exact::log_bounds(&r.lo_num, &r.lo_den);
    let (_, hi) = exact::log_bounds(&r.hi_num, &r.hi_den);
    let exact_rate = if r.exact {
        decimal_ratio(&r.lo_num, &r.lo_den).map(|x| x - Decimal::ONE)
    } else {
        None
    };
    FoundRoot {
        lo,
        hi,
        y: if lo == hi { lo } else { 0.5 * (lo + hi) },
        multiplicity: r.multiplicity,
        exact_rate,
    }
}

/// num / den as an exact decimal, when it is one that fits.
fn decimal_ratio(num: &BigInt, den: &BigInt) -> Option<Decimal> {
    use num_traits::ToPrimitive;
    let (n, d) = (num.to_i128()?, den.to_i128()?);
    let (n, d) = (Decimal::from_i128(n)?, Decimal::from_i128(d)?);
    let q = n.checked_div(d)?;
    (q.checked_mul(d)? == n).then_some(q)
}

/// A root in u = -y (the reversed series) as a root in y.
fn flipped(r: FoundRoot) -> FoundRoot {
    FoundRoot {
        lo: -r.hi,
        hi: -r.lo,
        y: -r.y,
        ..r
    }
}

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
fn quick_certificate(
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
enum Scan {
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
fn scan_side(sv: &mut Solver<'_>, hi: f64, s: i8, start: f64) -> Scan {
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
fn laguerre_point(solvers: &[Solver<'_>; 2], found: &[FoundRoot]) -> Option<f64> {
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

/// Subdivision search over [lo, hi] (within y >= 0).
fn search(
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
fn settles_tail(
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
fn split_point(solver: &mut Solver<'_>, a: f64, b: f64) -> Option<f64> {
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
fn convex_case(
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

/// f and f' at `y` in double-double (about 32 digits), each with an error bound: the
/// second precision level, for clusters of roots that binary floats cannot separate.
fn dd_eval(s: &NpvTerms, y: f64) -> [(f64, f64); 2] {
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
fn polish(s: &NpvTerms, r: &mut FoundRoot) {
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
fn dd_sign(s: &NpvTerms, y: f64) -> Option<i8> {
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
fn dd_brackets(s: &NpvTerms, a: f64, b: f64, sa: i8, sb: i8, m: usize) -> Option<Vec<(f64, f64)>> {
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
fn settle_cluster(
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

fn simple(lo: f64, hi: f64) -> FoundRoot {
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
fn settle_piece(
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
fn exact_root_near(
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
fn exact_multiplicity(s: &NpvTerms, p: &BigInt, q: &BigInt) -> Option<u32> {
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

#[cfg(test)]
mod tests {
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
    fn sign_bounds_decimal(amounts: &[Decimal]) -> (u32, Option<u32>, Option<u32>) {
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
            return (v, None, None);
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
        (
            v,
            Some(sign_changes(fwd.into_iter())),
            Some(sign_changes(bwd.into_iter())),
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
        assert_eq!(s.tail_bound(0.0), sign_bounds(&amounts).1);
    }

    #[test]
    fn zero_total_has_no_cumulative_bounds() {
        // Norstrom's counts need a non-zero total (common practice).
        let a = [dec!(-1.5), dec!(0.75), dec!(0.750)];
        assert_eq!(sign_bounds(&a), (1, None, None));
        assert_eq!(sign_bounds_decimal(&a), (1, None, None));
    }

    #[test]
    fn all_one_sign() {
        let rs = yearly(&[dec!(100), dec!(100)]);
        assert_eq!(rs.count(), 0);
        assert!(rs.certified);
    }
}
