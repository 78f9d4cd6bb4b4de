//! Double-double arithmetic (an unevaluated sum of two `f64`, about 32 significant
//! digits), so that NPVs of exact decimal flows can be rounded to the cent without the
//! rounding noise of a single binary float deciding the last digit.

use rust_decimal::Decimal;
use std::cmp::Ordering;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// A double-double number `hi + lo` with `|lo| <= ulp(hi) / 2`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Dd {
    /// Leading part: the value rounded to the nearest `f64`.
    pub hi: f64,
    /// Trailing part: the rounding error of `hi`.
    pub lo: f64,
}

/// ln 2 split into two floats [computed with mpmath 50 digits].
const LN2: Dd = Dd {
    hi: std::f64::consts::LN_2,
    lo: 2.3190468138462996e-17,
};

/// `a + b` exactly, as the rounded sum and its error (Knuth).
#[inline]
pub(crate) fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    let err = (a - (s - bb)) + (b - bb);
    (s, err)
}

/// `a + b` exactly when `|a| >= |b|` (Dekker).
#[inline]
fn quick_two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    (s, b - (s - a))
}

/// `a * b` exactly, as the rounded product and its error (one fused multiply-add).
#[inline]
pub(crate) fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    (p, a.mul_add(b, -p))
}

impl Dd {
    /// Zero.
    pub const ZERO: Dd = Dd { hi: 0.0, lo: 0.0 };
    /// One.
    pub const ONE: Dd = Dd { hi: 1.0, lo: 0.0 };

    /// A double-double holding exactly `x`.
    pub const fn from_f64(x: f64) -> Dd {
        Dd { hi: x, lo: 0.0 }
    }

    /// The nearest double-double to the integer `n` (exact up to 2^106).
    pub(crate) fn from_i128(n: i128) -> Dd {
        let hi = n as f64;
        // `hi` is an integer-valued float, so the cast back is exact unless it saturates
        // at the very edge of i128, which callers never reach (|n| < 2^100).
        let rest = n.saturating_sub(hi as i128);
        let (h, l) = quick_two_sum(hi, rest as f64);
        Dd { hi: h, lo: l }
    }

    /// A decimal amount, to about 32 significant digits: the 96-bit mantissa is exact in
    /// double-double and one division by `10^scale` rounds once.
    pub(crate) fn from_decimal(d: Decimal) -> Dd {
        let m = Dd::from_i128(d.mantissa());
        let scale = d.scale();
        if scale == 0 {
            m
        } else {
            m / Dd::from_i128(10i128.pow(scale))
        }
    }

    /// The exact ratio `num / den` of two integers, to about 32 digits.
    pub fn ratio(num: i64, den: u64) -> Dd {
        Dd::from_i128(num as i128) / Dd::from_i128(den as i128)
    }

    /// The value rounded to one `f64`.
    pub fn to_f64(self) -> f64 {
        self.hi + self.lo
    }

    /// True when both parts are finite.
    pub(crate) fn is_finite(self) -> bool {
        self.hi.is_finite() && self.lo.is_finite()
    }

    /// Multiplies by the power of two `2^k`, exactly unless the result leaves the
    /// normal range of `f64`.
    fn scale2(self, k: i32) -> Dd {
        // Two steps so that 2^k itself never overflows or flushes to zero.
        let half = k / 2;
        let f1 = 2f64.powi(half);
        let f2 = 2f64.powi(k - half);
        Dd {
            hi: self.hi * f1 * f2,
            lo: self.lo * f1 * f2,
        }
    }

    /// The integer nearest to the value, half away from zero, as a double-double.
    pub fn round(self) -> Dd {
        let hi = self.hi.round();
        if hi == self.hi {
            // `hi` was already an integer: the fraction, if any, sits in `lo`.
            let lo = self.lo.round();
            let (h, l) = quick_two_sum(hi, lo);
            // lo.round() takes a half away from zero by lo's sign; the sum's sign decides.
            let frac = self.lo - lo;
            let mut out = Dd { hi: h, lo: l };
            if frac == 0.5 && h > 0.0 {
                out = out + Dd::ONE;
            } else if frac == -0.5 && h < 0.0 {
                out = out - Dd::ONE;
            }
            out
        } else if (hi - self.hi).abs() == 0.5 {
            // Exactly halfway in `hi`: `lo` decides, a tie stays away from zero.
            if self.lo == 0.0 || (self.lo > 0.0) == (hi > self.hi) {
                Dd::from_f64(hi)
            } else {
                Dd::from_f64(hi + if hi > self.hi { -1.0 } else { 1.0 })
            }
        } else {
            Dd::from_f64(hi)
        }
    }

    /// e^x, accurate to about 1e-30 relative over the range of `f64`; overflows to
    /// infinity and underflows to zero like `f64::exp`.
    pub fn exp(self) -> Dd {
        if self.hi.is_nan() {
            return Dd::from_f64(f64::NAN);
        }
        if self.hi > 709.8 {
            return Dd::from_f64(f64::INFINITY);
        }
        if self.hi < -745.2 {
            return Dd::ZERO;
        }
        // x = k ln2 + r with |r| <= ln2 / 2, then r / 2^SQ is small enough for a short
        // Taylor series; squaring back is done on e^s - 1 to keep relative accuracy.
        const SQ: i32 = 8;
        let k = (self.hi / LN2.hi).round();
        let r = self - LN2 * Dd::from_f64(k);
        let s = r.scale2(-SQ);
        // Taylor series of e^s - 1; |s| < 1.4e-3 so 12 terms reach below 1e-34.
        let mut term = s;
        let mut sum = s;
        for n in 2..=12 {
            term = term * s / Dd::from_f64(n as f64);
            sum = sum + term;
            if term.hi.abs() < 1e-36 {
                break;
            }
        }
        let mut em1 = sum;
        for _ in 0..SQ {
            // e^(2s) - 1 = (e^s - 1)(e^s - 1 + 2)
            em1 = em1 * (em1 + Dd::from_f64(2.0));
        }
        (em1 + Dd::ONE).scale2(k as i32)
    }

    /// Natural logarithm, accurate to about 1e-30 relative; NaN for negative input,
    /// negative infinity at zero.
    pub fn ln(self) -> Dd {
        if self.hi.is_nan() || self.hi < 0.0 {
            return Dd::from_f64(f64::NAN);
        }
        if self.hi == 0.0 {
            return Dd::from_f64(f64::NEG_INFINITY);
        }
        if self.hi.is_infinite() {
            return self;
        }
        // Newton on e^y = x: y <- y + x e^(-y) - 1 doubles the correct digits, so two
        // steps from a float guess reach double-double precision.
        let mut y = Dd::from_f64(self.hi.ln());
        for _ in 0..2 {
            y = y + self * (-y).exp() - Dd::ONE;
        }
        y
    }

    /// The nearest decimal with about 26 significant digits (at most 28 decimal places);
    /// `None` when not finite or beyond Decimal's range (about 7.9e28).
    pub(crate) fn to_decimal(self) -> Option<Decimal> {
        if !self.is_finite() {
            return None;
        }
        let v = self.to_f64();
        if v == 0.0 {
            return Some(Decimal::ZERO);
        }
        let mag = v.abs().log10().floor() as i32;
        if mag > 28 {
            return None;
        }
        let scale = (25 - mag).clamp(0, 28) as u32;
        let n = (self * Dd::from_i128(10i128.pow(scale))).round();
        let int = (n.hi as i128).checked_add(n.lo as i128)?;
        Decimal::try_from_i128_with_scale(int, scale).ok()
    }

    #[cfg(test)]
    /// `self^t` for a positive base: e^(t ln self).
    pub(crate) fn powf(self, t: Dd) -> Dd {
        if self.hi == 1.0 && self.lo == 0.0 {
            return Dd::ONE;
        }
        (t * self.ln()).exp()
    }
}

impl Add for Dd {
    type Output = Dd;
    fn add(self, b: Dd) -> Dd {
        // Both parts summed with error terms (the accurate variant), so cancellation in
        // NPV sums keeps its digits.
        let (s1, s2) = two_sum(self.hi, b.hi);
        if !s1.is_finite() {
            return Dd::from_f64(s1);
        }
        let (t1, t2) = two_sum(self.lo, b.lo);
        let s2 = s2 + t1;
        let (s1, s2) = quick_two_sum(s1, s2);
        let s2 = s2 + t2;
        let (hi, lo) = quick_two_sum(s1, s2);
        Dd { hi, lo }
    }
}

impl Neg for Dd {
    type Output = Dd;
    fn neg(self) -> Dd {
        Dd {
            hi: -self.hi,
            lo: -self.lo,
        }
    }
}

impl Sub for Dd {
    type Output = Dd;
    fn sub(self, b: Dd) -> Dd {
        self + (-b)
    }
}

impl Mul for Dd {
    type Output = Dd;
    fn mul(self, b: Dd) -> Dd {
        let (p1, p2) = two_prod(self.hi, b.hi);
        if !p1.is_finite() {
            return Dd::from_f64(p1);
        }
        let p2 = p2 + (self.hi * b.lo + self.lo * b.hi);
        let (hi, lo) = quick_two_sum(p1, p2);
        Dd { hi, lo }
    }
}

impl Div for Dd {
    type Output = Dd;
    fn div(self, b: Dd) -> Dd {
        // Long division in three float quotients.
        let q1 = self.hi / b.hi;
        if !q1.is_finite() || b.hi.is_infinite() {
            return Dd::from_f64(q1);
        }
        let r = self - b * Dd::from_f64(q1);
        let q2 = r.hi / b.hi;
        let r = r - b * Dd::from_f64(q2);
        let q3 = r.hi / b.hi;
        let (q1, q2) = quick_two_sum(q1, q2);
        Dd { hi: q1, lo: q2 } + Dd::from_f64(q3)
    }
}

impl PartialOrd for Dd {
    fn partial_cmp(&self, other: &Dd) -> Option<Ordering> {
        match self.hi.partial_cmp(&other.hi) {
            Some(Ordering::Equal) => self.lo.partial_cmp(&other.lo),
            o => o,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::str::FromStr;

    /// Parses a decimal string such as "4.13e+53" into a double-double (for reference
    /// values; each digit step rounds at 1e-32, far below the tolerances used here).
    fn parse(s: &str) -> Dd {
        let (mant, exp) = match s.split_once('e') {
            Some((m, e)) => (m, e.parse::<i32>().unwrap()),
            None => (s, 0),
        };
        let neg = mant.starts_with('-');
        let mant = mant.trim_start_matches('-');
        let mut v = Dd::ZERO;
        let mut frac = 0;
        let mut seen_dot = false;
        for c in mant.chars() {
            if c == '.' {
                seen_dot = true;
                continue;
            }
            v = v * Dd::from_f64(10.0) + Dd::from_f64(c.to_digit(10).unwrap() as f64);
            if seen_dot {
                frac += 1;
            }
        }
        let e = exp - frac;
        let ten = Dd::from_f64(10.0);
        for _ in 0..e.abs() {
            v = if e > 0 { v * ten } else { v / ten };
        }
        if neg {
            -v
        } else {
            v
        }
    }

    fn rel_err(a: Dd, b: Dd) -> f64 {
        ((a - b) / b).to_f64().abs()
    }

    #[test]
    fn two_prod_is_exact() {
        // (1 + 2^-30)^2 = 1 + 2^-29 + 2^-60: the last term is the rounding error.
        let a = 1.0 + 2f64.powi(-30);
        let (p, e) = two_prod(a, a);
        assert_eq!(p, 1.0 + 2f64.powi(-29));
        assert_eq!(e, 2f64.powi(-60));
    }

    #[test]
    fn decimal_conversion_to_32_digits() {
        // 0.1 is not a binary fraction; 10 * 0.1 must still be 1 to double-double precision.
        let tenth = Dd::from_decimal(Decimal::from_str("0.1").unwrap());
        assert!(rel_err(tenth * Dd::from_f64(10.0), Dd::ONE) < 1e-31);
        // The largest Decimal mantissa survives with its low digits.
        let big = Decimal::from_str("79228162514264337593543950335").unwrap();
        let d = Dd::from_decimal(big);
        let back = Dd::from_i128(79228162514264337593543950335);
        assert_eq!(d, back);
        let third = Dd::from_decimal(Decimal::from_str("0.3333333333333333333333333333").unwrap());
        assert!(rel_err(third * Dd::from_f64(3.0), Dd::ONE) < 1e-27);
    }

    #[test]
    fn exp_matches_mpmath() {
        // [computed with mpmath 50 digits]
        let cases = [
            ("0.5", "1.648721270700128146848650787814163571654"),
            ("1.1", "3.004166023946433112058407953588672393283"),
            ("123.456", "4.132944352778093449576854412273431466146e+53"),
            ("1e-10", "1.000000000100000000005000000000166666667"),
            ("-700", "9.859676543759770856705372947849465105116e-305"),
        ];
        for (x, want) in cases {
            let got = parse(x).exp();
            let err = rel_err(got, parse(want));
            assert!(err < 1e-29, "exp({x}): relative error {err:e}");
        }
    }

    #[test]
    fn ln_matches_mpmath() {
        // [computed with mpmath 50 digits]
        let cases = [
            ("1.1", "0.09531017980432486004395212328076509222061"),
            ("0.001", "-6.907755278982137052053974364053092622803"),
            ("12345.678", "9.421061321291831976526783991071446048942"),
        ];
        for (x, want) in cases {
            let got = parse(x).ln();
            let err = rel_err(got, parse(want));
            assert!(err < 1e-29, "ln({x}): relative error {err:e}");
        }
        assert_eq!(Dd::ONE.ln(), Dd::ZERO);
    }

    #[test]
    fn powf_matches_mpmath() {
        // 1.1^(7/12) and 1.25^(-1) [computed with mpmath 50 digits]
        let got = parse("1.1").powf(Dd::ratio(7, 12));
        assert!(rel_err(got, parse("1.057172197208537117891713728325402124151")) < 1e-29);
        let got = parse("1.25").powf(Dd::ratio(-365, 365));
        assert!(rel_err(got, parse("0.8")) < 1e-30);
    }

    #[test]
    fn division_and_rounding() {
        let third = Dd::ONE / Dd::from_f64(3.0);
        assert!(rel_err(third * Dd::from_f64(3.0), Dd::ONE) < 1e-31);
        // Half away from zero, also when the half sits in the trailing part.
        assert_eq!(Dd::from_f64(2.5).round().to_f64(), 3.0);
        assert_eq!(Dd::from_f64(-2.5).round().to_f64(), -3.0);
        let just_below = Dd::from_f64(2.5) - Dd::from_f64(1e-20);
        assert_eq!(just_below.round().to_f64(), 2.0);
        let big_half = Dd { hi: 1e20, lo: 0.5 };
        assert_eq!(big_half.round(), Dd { hi: 1e20, lo: 1.0 });
        let big_minus_half = Dd { hi: 1e20, lo: -0.5 };
        assert_eq!(big_minus_half.round(), Dd { hi: 1e20, lo: 0.0 });
        assert_eq!((-big_minus_half).round(), Dd { hi: -1e20, lo: 0.0 });
    }

    #[test]
    fn overflow_is_infinite_not_nan() {
        assert_eq!(Dd::from_f64(1000.0).exp().hi, f64::INFINITY);
        assert_eq!(Dd::from_f64(-1000.0).exp(), Dd::ZERO);
        assert!(Dd::from_f64(-1.0).ln().hi.is_nan());
    }
}
