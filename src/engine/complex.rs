//! The rate-based reading of a series with no real IRR (Hazen 2003): every complex
//! root of the NPV polynomial (Aberth–Ehrlich), the one closest to the real axis as an
//! annual complex rate, its complex balance path, and the stance and decision from the
//! real parts, which agree with the NPV at the hurdle.

use super::analysis::{ComplexReading, Decision, Stance};
use super::flows::Flows;
use num_integer::Integer;
use rust_decimal::prelude::ToPrimitive;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// Largest polynomial degree (offsets over their gcd) the reading is attempted for.
pub(crate) const MAX_DEGREE: usize = 2000;

/// A complex number in binary floats; just what the root finder needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Cx {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

impl Cx {
    /// `re + i im`.
    pub const fn new(re: f64, im: f64) -> Cx {
        Cx { re, im }
    }
    /// A real number.
    pub const fn real(re: f64) -> Cx {
        Cx { re, im: 0.0 }
    }
    /// Modulus, without overflow in the squares.
    pub fn abs(self) -> f64 {
        self.re.hypot(self.im)
    }
    /// e^z.
    pub fn exp(self) -> Cx {
        let m = self.re.exp();
        Cx::new(m * self.im.cos(), m * self.im.sin())
    }
    /// Principal logarithm.
    pub fn ln(self) -> Cx {
        Cx::new(self.abs().ln(), self.im.atan2(self.re))
    }
    fn recip(self) -> Cx {
        Cx::real(1.0) / self
    }
    fn is_finite(self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
}

impl Add for Cx {
    type Output = Cx;
    fn add(self, b: Cx) -> Cx {
        Cx::new(self.re + b.re, self.im + b.im)
    }
}
impl Sub for Cx {
    type Output = Cx;
    fn sub(self, b: Cx) -> Cx {
        Cx::new(self.re - b.re, self.im - b.im)
    }
}
impl Neg for Cx {
    type Output = Cx;
    fn neg(self) -> Cx {
        Cx::new(-self.re, -self.im)
    }
}
impl Mul for Cx {
    type Output = Cx;
    fn mul(self, b: Cx) -> Cx {
        Cx::new(
            self.re * b.re - self.im * b.im,
            self.re * b.im + self.im * b.re,
        )
    }
}
impl Div for Cx {
    type Output = Cx;
    fn div(self, b: Cx) -> Cx {
        // Smith's algorithm: no overflow from squaring large parts.
        if b.re.abs() >= b.im.abs() {
            let r = b.im / b.re;
            let d = b.re + b.im * r;
            Cx::new((self.re + self.im * r) / d, (self.im - self.re * r) / d)
        } else {
            let r = b.re / b.im;
            let d = b.re * r + b.im;
            Cx::new((self.re * r + self.im) / d, (self.im * r - self.re) / d)
        }
    }
}

/// Newton's correction `p(z) / p'(z)` for `p(z) = sum a_j z^j` (ascending). Outside the
/// unit circle the reversed polynomial in `1/z` is used, so high degrees never overflow.
fn newton_step(a: &[f64], z: Cx) -> Cx {
    let deg = a.len() - 1;
    if z.abs() <= 1.0 {
        let mut p = Cx::real(a[deg]);
        let mut dp = Cx::real(0.0);
        for &c in a[..deg].iter().rev() {
            dp = dp * z + p;
            p = p * z + Cx::real(c);
        }
        p / dp
    } else {
        // p(z) = z^D q(w), w = 1/z, q(w) = sum a_j w^(D-j); p/p' = z / (D - w q'(w)/q(w)).
        let w = z.recip();
        let mut q = Cx::real(a[0]);
        let mut dq = Cx::real(0.0);
        for &c in &a[1..] {
            dq = dq * w + q;
            q = q * w + Cx::real(c);
        }
        z / (Cx::real(deg as f64) - w * dq / q)
    }
}

/// Every complex root of `sum a_j z^j` (ascending coefficients, `a_0` and `a_D` non-zero)
/// by the Aberth–Ehrlich iteration from points on a circle of the roots' geometric-mean
/// radius.
pub(crate) fn polynomial_roots(a: &[f64]) -> Vec<Cx> {
    let deg = a.len().saturating_sub(1);
    if deg == 0 || a[0] == 0.0 || a[deg] == 0.0 {
        return Vec::new();
    }
    let radius = ((a[0].abs().ln() - a[deg].abs().ln()) / deg as f64).exp();
    let mut z: Vec<Cx> = (0..deg)
        .map(|j| {
            // An angle offset keeps starting points off the real axis, where conjugate
            // pairs would otherwise start symmetric and never separate.
            let th = std::f64::consts::TAU * j as f64 / deg as f64 + 0.4;
            Cx::new(radius * th.cos(), radius * th.sin())
        })
        .collect();
    let mut done = vec![false; deg];
    for _ in 0..500 {
        let mut all_done = true;
        for j in 0..deg {
            if done[j] {
                continue;
            }
            let w = newton_step(a, z[j]);
            if !w.is_finite() {
                done[j] = true;
                continue;
            }
            let mut s = Cx::real(0.0);
            for (i, zi) in z.iter().enumerate() {
                if i != j {
                    s = s + (z[j] - *zi).recip();
                }
            }
            let corr = w / (Cx::real(1.0) - w * s);
            if corr.is_finite() {
                z[j] = z[j] - corr;
            }
            if !corr.is_finite() || corr.abs() <= 1e-15 * z[j].abs() {
                done[j] = true;
            } else {
                all_done = false;
            }
        }
        if all_done {
            break;
        }
    }
    z
}

/// The complex reading for a series with no real IRR: the root of the NPV polynomial in
/// `z = (1 + r)^(-step)` (step = gcd of the offsets, in years) closest to the real axis
/// with `Re(1 + r) > 0`, as an annual rate `1 + r = z^(-1/step)` (principal branch), and
/// the stance from the real part of the complex capital stream's present value at the
/// hurdle (the same weights as [`super::figures::capital_pv`]). `None` when the degree
/// exceeds [`MAX_DEGREE`], the hurdle is -100% or lower, or no suitable root exists.
pub fn complex_reading(flows: &Flows, hurdle: f64) -> Option<ComplexReading> {
    if hurdle.is_nan() || hurdle <= -1.0 {
        return None;
    }
    let n = flows.normalised();
    let first = n.points.first()?.offset;
    let gcd = n
        .points
        .iter()
        .fold(0i64, |g, p| g.gcd(&(p.offset - first)));
    if gcd == 0 {
        return None;
    }
    let deg = ((n.points.last()?.offset - first) / gcd) as usize;
    if deg > MAX_DEGREE {
        return None;
    }
    let mut coeffs = vec![0.0; deg + 1];
    for p in &n.points {
        coeffs[((p.offset - first) / gcd) as usize] = p.amount.to_f64()?;
    }
    let step = gcd as f64 / n.units_per_year as f64;
    let roots = polynomial_roots(&coeffs);

    // ln(1 + k) for every usable root; a real z is either a real IRR or (negative) no
    // rate at all, so only roots off the real axis qualify.
    let candidate = roots
        .iter()
        .filter(|z| z.im.abs() > 1e-10 * z.abs())
        .map(|z| -z.ln() / Cx::real(step))
        .filter(|l| l.is_finite() && l.exp().re > 0.0)
        .map(|l| (l, l.exp() - Cx::real(1.0)))
        .min_by(|a, b| {
            (a.1.im.abs(), a.1.im < 0.0)
                .partial_cmp(&(b.1.im.abs(), b.1.im < 0.0))
                .unwrap_or(std::cmp::Ordering::Equal)
        })?;
    let (log_growth, k) = candidate;
    let pv = complex_capital_pv(&n, log_growth, hurdle)?;
    let stance = if pv.re > 0.0 {
        Stance::Investment
    } else if pv.re < 0.0 {
        Stance::Borrowing
    } else {
        Stance::Neutral
    };
    let diff = k.re - hurdle;
    let decision = match stance {
        Stance::Investment if diff > 0.0 => Decision::Accept,
        Stance::Investment if diff < 0.0 => Decision::Reject,
        Stance::Borrowing if diff < 0.0 => Decision::Accept,
        Stance::Borrowing if diff > 0.0 => Decision::Reject,
        _ => Decision::Indifferent,
    };
    Some(ComplexReading {
        real_rate: k.re,
        imaginary_rate: k.im.abs(),
        stance,
        decision,
    })
}

/// `sum_j x_j (1+h)^(-t_(j+1)) [(1+k)^dt_j - (1+h)^dt_j] / (k - h)` with the complex
/// balance path `x_j = -F_j` at `ln(1 + k) = log_growth`.
fn complex_capital_pv(flows: &Flows, log_growth: Cx, hurdle: f64) -> Option<Cx> {
    let k = log_growth.exp() - Cx::real(1.0);
    let kh = k - Cx::real(hurdle);
    let lh = hurdle.ln_1p();
    let mut bal = Cx::real(0.0);
    let mut pv = Cx::real(0.0);
    for (j, p) in flows.points.iter().enumerate() {
        let c = Cx::real(p.amount.to_f64()?);
        if j == 0 {
            bal = c;
            continue;
        }
        let (t0, t1) = (flows.years(j - 1), flows.years(j));
        let dt = t1 - t0;
        let grow_k = (log_growth * Cx::real(dt)).exp();
        let grow_h = Cx::real((lh * dt).exp());
        let w = (grow_k - grow_h) / kh;
        pv = pv + (-bal) * Cx::real((-lh * t1).exp()) * w;
        bal = bal * grow_k + c;
    }
    pv.is_finite().then_some(pv)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::figures::npv_f64;
    use crate::engine::figures::tests::{no_real_irr, periodic};

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn textbook_series_reads_accept() {
        // 1000, -3000, 2500: complex IRRs 50% +- 50i%, NPV > 0 at every rate, NPV@10% =
        // 338.84 (docs/methods.md, Check values: corporate-finance textbook example
        // [memory]; values computed).
        let r = complex_reading(&no_real_irr(), 0.1).unwrap();
        assert!(close(r.real_rate, 0.5, 1e-12), "{r:?}");
        assert!(close(r.imaginary_rate, 0.5, 1e-12), "{r:?}");
        assert_eq!(r.decision, Decision::Accept);
        assert!(npv_f64(&no_real_irr(), 0.1) > 0.0);
        assert_eq!(r.stance, Stance::Investment);
    }

    #[test]
    fn roots_of_a_product_of_quadratics() {
        // (z^2 - 1.2 z + 0.4)(z^2 - z + 0.5) = 0.2 - z + 2.1 z^2 - 2.2 z^3 + z^4 has the
        // roots 0.6 +- 0.2i and 0.5 +- 0.5i (quadratic formula, by hand).
        let z = polynomial_roots(&[0.2, -1.0, 2.1, -2.2, 1.0]);
        assert_eq!(z.len(), 4);
        for (re, im) in [(0.5, -0.5), (0.5, 0.5), (0.6, -0.2), (0.6, 0.2)] {
            let found = z
                .iter()
                .filter(|g| close(g.re, re, 1e-12) && close(g.im, im, 1e-12))
                .count();
            assert_eq!(found, 1, "{re} {im}: {z:?}");
        }
    }

    #[test]
    fn half_yearly_series_uses_the_annual_rate() {
        // Flows 200, -1000, 2100, -2200, 1000 a half-year apart are the coefficients of
        // the product above. At z = 0.6 -+ 0.2i, 1 + r = z^-2 = 2 +- 1.5i (annual 100% +-
        // 150i%); at z = 0.5 -+ 0.5i, z^-2 = +-2i has real part 0 and is not usable
        // (arithmetic by hand).
        let f = periodic(&["200", "-1000", "2100", "-2200", "1000"], 2);
        let r = complex_reading(&f, 0.1).unwrap();
        assert!(
            close(r.real_rate, 1.0, 1e-10) && close(r.imaginary_rate, 1.5, 1e-10),
            "{r:?}"
        );
    }

    #[test]
    fn decision_agrees_with_npv_at_every_hurdle() {
        // Hazen 2003: the real-part rule agrees with NPV(h), for investments and
        // borrowings alike; the negated series has NPV < 0 everywhere.
        let series = [
            no_real_irr(),
            periodic(&["-1000", "3000", "-2500"], 1),
            periodic(&["200", "-1000", "2100", "-2200", "1000"], 2),
            periodic(&["-200", "1000", "-2100", "2200", "-1000"], 4),
            periodic(&["200", "-1000", "2100", "-2200", "1000"], 1),
        ];
        for f in &series {
            for h in [-0.5, 0.0, 0.05, 0.1, 0.3, 0.9, 1.5, 4.0] {
                let npv = npv_f64(f, h);
                let r = complex_reading(f, h).unwrap_or_else(|| panic!("{f:?} at {h}"));
                let want = if npv > 0.0 {
                    Decision::Accept
                } else {
                    Decision::Reject
                };
                assert_eq!(r.decision, want, "h {h}: {r:?}, npv {npv}");
            }
        }
    }

    #[test]
    fn no_reading_when_every_annual_rate_has_negative_real_part() {
        // Monthly, the roots 0.6 +- 0.2i and 0.5 +- 0.5i give 1 + r = z^-12 with arguments
        // 12 * 0.3218 rad and 3 pi: both real parts are negative (arithmetic by hand).
        let f = periodic(&["-200", "1000", "-2100", "2200", "-1000"], 12);
        assert!(complex_reading(&f, 0.1).is_none());
    }

    #[test]
    fn degree_limit_and_one_flow() {
        let mut a = vec!["1000", "-3000"];
        a.extend(vec!["0"; MAX_DEGREE]);
        a.push("2500");
        assert!(complex_reading(&periodic(&a, 1), 0.1).is_none());
        assert!(complex_reading(&periodic(&["5"], 1), 0.1).is_none());
    }

    #[test]
    fn aberth_finds_roots_of_unity_at_higher_degree() {
        // z^60 - 2 = 0: sixty roots of modulus 2^(1/60) (common algebra).
        let mut a = vec![0.0; 61];
        a[0] = -2.0;
        a[60] = 1.0;
        let z = polynomial_roots(&a);
        assert_eq!(z.len(), 60);
        let m = 2f64.powf(1.0 / 60.0);
        assert!(z.iter().all(|w| close(w.abs(), m, 1e-12)));
        let mut args: Vec<f64> = z.iter().map(|w| w.im.atan2(w.re)).collect();
        args.sort_by(f64::total_cmp);
        assert!(args.windows(2).all(|p| p[1] - p[0] > 0.1));
    }
}
