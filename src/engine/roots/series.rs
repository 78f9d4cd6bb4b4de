//! The NPV as a sum of exponential terms in `y`, and its point evaluations with
//! rigorous error bounds for every derivative order (`NpvTerms`, `Point`).

use super::*;

/// The NPV as a sum of exponential terms in y = ln(1 + rate per step), prepared for
/// evaluation.
pub(super) struct NpvTerms<'a> {
    /// True for the time-reversed series (variable u = -y), used for rates below 0%.
    pub(super) reversed: bool,
    /// Coefficients as f64 (see `small_integers`: possibly all scaled by one power of
    /// ten, which changes no root).
    pub(super) c: Vec<f64>,
    /// Exponents `n_k` as f64 (exact: integers below 2^53).
    pub(super) n: Vec<f64>,
    /// The exact coefficients (turned into integers only for exact checks).
    pub(super) amounts: std::borrow::Cow<'a, [Decimal]>,
    /// Index into `gap_vals` of the gap before term k (k >= 1); empty when every gap
    /// is the same.
    pub(super) gap_idx: Vec<u32>,
    /// The distinct gaps between consecutive exponents.
    pub(super) gap_vals: Vec<f64>,
    /// n_K^d for d in 0..ORDERS.
    pub(super) npow_last: [f64; ORDERS],
    /// Sum of |c_k|.
    pub(super) abs_sum: f64,
}

/// One point evaluation: the positive and negative parts of `f^(d)` scaled by a
/// positive factor (so signs are exact), with
/// error bounds.
#[derive(Debug, Clone, Copy)]
pub(super) struct Point {
    pub(super) y: f64,
    /// Orders computed (higher entries are not valid).
    pub(super) orders: usize,
    /// Sum over positive coefficients of c_k n_k^d w_k.
    pub(super) a: [f64; ORDERS],
    /// Sum over negative coefficients of |c_k| n_k^d w_k.
    pub(super) b: [f64; ORDERS],
    /// The signed sums c_k n_k^d w_k (as summed, not as a - b).
    pub(super) s: [f64; ORDERS],
    /// Error bounds of a and b together.
    pub(super) err: [f64; ORDERS],
}

impl Point {
    /// Positive and negative parts of the d-th derivative (sign (-1)^d folded in).
    pub(super) fn parts(&self, d: usize) -> (f64, f64) {
        if d.is_multiple_of(2) {
            (self.a[d], self.b[d])
        } else {
            (self.b[d], self.a[d])
        }
    }

    /// Certified sign of f^(d) at this point: Some(+1/-1), or None when within error.
    pub(super) fn sign(&self, d: usize) -> Option<i8> {
        let (p, m) = self.parts(d);
        let v = self.value(d);
        if v.abs() > self.err[d] + 2.0 * EPS * (p + m) {
            Some(if v > 0.0 { 1 } else { -1 })
        } else {
            None
        }
    }

    /// Value of the scaled f^(d) (for Newton steps only).
    pub(super) fn value(&self, d: usize) -> f64 {
        if d.is_multiple_of(2) {
            self.s[d]
        } else {
            -self.s[d]
        }
    }
}

/// Adds `c w n^d` to the signed sums and `|c w| n^d` to the absolute sums, d < M
/// (n >= 0, so the absolute term of each order is the absolute value of the signed one).
#[inline(always)]
pub(super) fn accumulate<const M: usize>(s: &mut [f64; M], t: &mut [f64; M], cw: f64, nk: f64) {
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
pub(super) fn sums_even<const M: usize>(c: &[f64], n: &[f64], z: f64) -> ([f64; M], [f64; M]) {
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
    pub(super) fn new(
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
    pub(super) fn discounted(&self, a: f64, reverse: bool) -> (Vec<f64>, f64, f64) {
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
        let last = self.c.len().saturating_sub(1);
        if self.gap_idx.is_empty() && factors.len() == 1 {
            // Evenly spaced: term t (in this order) is its coefficient times z^t, the
            // powers made in four interleaved chains as in [`sums_even`] (at most one
            // rounding per unit of exponent, as one chain; the same for both orders).
            let mut terms: Vec<f64> = if reverse {
                self.c.iter().rev().copied().collect()
            } else {
                self.c.clone()
            };
            let z = factors[0];
            let z2 = z * z;
            let z4 = z2 * z2;
            let mut w = [1.0f64, z, z2, z2 * z];
            let mut quads = terms.chunks_exact_mut(4);
            for q in &mut quads {
                for l in 0..4 {
                    q[l] *= w[l];
                    w[l] *= z4;
                }
            }
            for (t, wl) in quads.into_remainder().iter_mut().zip(w) {
                *t *= wl;
            }
            return (terms, fixed, per_unit);
        }
        let mut w = 1.0f64;
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
    pub(super) fn tail_bound(&self, a: f64) -> Option<u32> {
        let (terms, fixed, per_unit) = self.discounted(a, false);
        self.partial_sum_changes(&terms, fixed, per_unit, false)
    }

    /// Laguerre's bounds at `a >= 0`: (roots above `a`, roots below `a`), from the
    /// partial sums of the discounted coefficients taken forwards and backwards (the
    /// roots below `a` are those of the same sum in `1/x`, whose exponents run the other
    /// way). Every partial sum must have a certain sign, f(a) included, so `a` is not a
    /// root; otherwise `None`. With `reverse`, the bounds of the time-reversed series
    /// at `a` (see [`NpvTerms::discounted`]).
    pub(super) fn bounds_at(&self, a: f64, reverse: bool) -> Option<(u32, u32)> {
        let (terms, fixed, per_unit) = self.discounted(a, reverse);
        self.partial_sum_changes_both(&terms, fixed, per_unit)
    }

    /// [`NpvTerms::partial_sum_changes`] forwards and backwards at once: (forwards,
    /// backwards). The two running sums are the same numbers, added in the same order,
    /// as two separate passes would make; taken in one loop, neither waits on the other.
    pub(super) fn partial_sum_changes_both(
        &self,
        terms: &[f64],
        fixed: f64,
        per_unit: f64,
    ) -> Option<(u32, u32)> {
        let floor = 1e-290 * self.abs_sum;
        let own = fixed + per_unit * self.last_n();
        let (Some(&head), Some(&tail)) = (terms.first(), terms.last()) else {
            return Some((0, 0));
        };
        let (mut fwd, mut fwd_size, mut bwd, mut bwd_size) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        // Every sum is certain, so none is zero, when the counts are returned: a sign
        // change is then a change of the sign bit (the first sums are the end terms).
        let (mut fwd_sign, mut bwd_sign) = ((0.0 + head).to_bits(), (0.0 + tail).to_bits());
        let (mut fwd_changes, mut bwd_changes) = (0u32, 0u32);
        for (j, (&t, &u)) in terms.iter().zip(terms.iter().rev()).enumerate() {
            fwd += t;
            fwd_size += t.abs();
            bwd += u;
            bwd_size += u.abs();
            // As in `partial_sum_changes`, for each direction.
            let allowance = own + (j as f64 + 2.0) * 2.0 * EPS;
            fwd_changes += ((fwd.to_bits() ^ fwd_sign) >> 63) as u32;
            bwd_changes += ((bwd.to_bits() ^ bwd_sign) >> 63) as u32;
            (fwd_sign, bwd_sign) = (fwd.to_bits(), bwd.to_bits());
            if !(fwd.abs() > allowance * fwd_size + floor
                && bwd.abs() > allowance * bwd_size + floor)
            {
                return None;
            }
        }
        Some((fwd_changes, bwd_changes))
    }

    /// Sign changes of the partial sums of `terms` taken forwards (or `backwards`), each
    /// sum's sign certain under the error model of [`NpvTerms::discounted`]; `None`
    /// otherwise.
    pub(super) fn partial_sum_changes(
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
    pub(super) fn sign_at_upper_end(&self) -> i8 {
        if self.c[0] > 0.0 {
            1
        } else {
            -1
        }
    }

    /// Index into `gap_vals` of the gap before term k >= 1 (0 when evenly spaced).
    #[inline(always)]
    pub(super) fn gap_index(&self, k: usize) -> usize {
        if self.gap_idx.is_empty() {
            0
        } else {
            self.gap_idx[k] as usize
        }
    }

    pub(super) fn last_n(&self) -> f64 {
        *self.n.last().unwrap_or(&0.0)
    }

    /// Signed sums `c_k w_k n_k^d` and absolute sums `|c_k| w_k n_k^d` for d < M, with
    /// w_k = exp(-y n_k) built from the gap factors.
    pub(super) fn sums<const M: usize>(&self, factors: &[f64]) -> ([f64; M], [f64; M]) {
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
    pub(super) fn eval(&self, y: f64, orders: usize) -> Point {
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
