//! The NPV: exact to the cent (double-double, or big-integer rationals where that
//! cannot be certain), its sign at a rate, and in floats for drawing; the NPV profile.

use super::*;

/// The netted flows as (years, amount) pairs in binary floats.
pub(super) fn points_f64(flows: &Flows) -> Vec<(f64, f64)> {
    let n = flows.normalised();
    (0..n.points.len())
        .map(|i| {
            (
                n.years(i),
                crate::model::flows::amount_f64(n.points[i].amount),
            )
        })
        .collect()
}

/// NPV at an annual rate in double-double, discounted to offset 0.
pub(super) fn npv_dd(flows: &Flows, base: Dd) -> Dd {
    let log_base = base.ln();
    let mut sum = Dd::ZERO;
    for p in &flows.points {
        let t = Dd::ratio(p.offset, flows.units_per_year);
        sum = sum + Dd::from_decimal(p.amount) * (-(t * log_base)).exp();
    }
    sum
}

/// The sign of the NPV at an annual rate, from the double-double NPV: 0 when it is
/// within 1e-24 of the flows' size (indistinguishable from zero at that precision).
pub(crate) fn npv_sign(flows: &Flows, annual_rate: f64) -> i8 {
    if annual_rate.is_nan() || annual_rate <= -1.0 {
        return 0;
    }
    let npv = npv_dd(flows, Dd::ONE + Dd::from_f64(annual_rate)).to_f64();
    let scale: f64 = flows
        .points
        .iter()
        .map(|p| crate::model::flows::amount_f64(p.amount).abs())
        .sum();
    if !npv.is_finite() || npv.abs() <= 1e-24 * scale {
        0
    } else if npv > 0.0 {
        1
    } else {
        -1
    }
}

/// Rounds to the cent, half away from zero (what analysts expect), without a negative zero.
pub(super) fn cents(d: Decimal) -> Decimal {
    let r = d.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
    if r.is_zero() {
        Decimal::ZERO
    } else {
        r
    }
}

/// A float as a Decimal rounded to the cent, clamped to Decimal's range; NaN becomes zero.
pub(super) fn f64_to_cents(x: f64) -> Decimal {
    if x.is_nan() {
        return Decimal::ZERO;
    }
    if x >= 7.9e28 {
        return Decimal::MAX;
    }
    if x <= -7.9e28 {
        return Decimal::MIN;
    }
    cents(Decimal::from_f64(x).unwrap_or(Decimal::ZERO))
}

/// The NPV at a hurdle as far as the engine can state it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum NpvAt {
    /// Rounded to the cent, half away from zero.
    Cents(Decimal),
    /// Beyond Decimal's range (about 7.9e28): the sign and an approximate size.
    Beyond(ApproxAmount),
}

#[cfg(test)]
/// NPV at `annual_rate`, discounted to the series' start, each flow by
/// `(1 + rate)^(-offset / units_per_year)`, rounded to the cent half away from zero.
/// `None` when the rate is -100% or lower, or the value is beyond Decimal's range or
/// cannot be told from zero (see [`npv_at`]).
pub(crate) fn npv_exact(flows: &Flows, annual_rate: Decimal) -> Option<Decimal> {
    match npv_at(flows, annual_rate)? {
        NpvAt::Cents(c) => Some(c),
        NpvAt::Beyond(_) => None,
    }
}

/// Relative error allowed per discounted term of the double-double NPV, per unit of
/// `1 + |t ln(1 + rate)|`: the logarithm and the exponential are each good to a few
/// units in 2^-104 (about 5e-32), and `t ln(1 + rate)` carries the logarithm's error
/// multiplied by `t`; 1e-28 leaves a wide margin over both.
pub(super) const DD_TERM_ERROR: f64 = 1e-28;

/// `Dd::to_decimal` keeps about 26 significant digits; this covers its rounding.
pub(super) const DD_TO_DECIMAL_ERROR: f64 = 1e-25;

/// The exact rational NPV is skipped (and the double-double value kept) when its
/// integers would exceed this many bits; 2^25 bits is about ten million digits, which
/// num-bigint multiplies in well under a second, and no deal within the validator's
/// limits comes near it unless its hurdle has many decimals and it spans millennia.
pub(super) const MAX_EXACT_BITS: u64 = 1 << 25;

/// NPV at `annual_rate` as far as it can be stated: to the cent, or beyond Decimal's
/// range with its sign and size. `None` when the rate is -100% or lower, or when the
/// value is beyond Decimal's range and its sign cannot be told at 32 digits.
///
/// The value is computed in double-double with an error bound. When the bound leaves
/// the cent in doubt (the value lies within it of a half cent, as an exact tie of
/// half a cent always does, or the flows are so large that 32 digits do not reach the
/// cent), and every flow falls a whole number of years after the start, the NPV is a
/// rational number: `(1 + h)^(-t)` with `h = p / 10^s` is `(10^s / (10^s + p))^t`. It
/// is then computed exactly with big integers and rounded exactly. When some flow falls
/// a fraction of a year after the start, its discount factor is an irrational number
/// (a non-integer power of a rational that is not a perfect power), so the NPV cannot
/// be exactly half a cent and a value within the bound of a tie is the only doubt
/// left; the double-double rounding is kept there.
pub(crate) fn npv_at(flows: &Flows, annual_rate: Decimal) -> Option<NpvAt> {
    let base = Dd::ONE + Dd::from_decimal(annual_rate);
    if base.hi <= 0.0 {
        return None;
    }
    let value = npv_dd(flows, base);
    let log_base = base.ln().to_f64().abs();
    let bound: f64 = flows
        .points
        .iter()
        .map(|p| {
            let t = p.offset as f64 / flows.units_per_year as f64;
            let term =
                crate::model::flows::amount_f64(p.amount).abs() * (-t * base.ln().to_f64()).exp();
            term * (1.0 + t.abs() * log_base) * DD_TERM_ERROR
        })
        .sum::<f64>()
        + value.to_f64().abs() * DD_TO_DECIMAL_ERROR;
    if let Some(v) = value.to_decimal() {
        let spread = Decimal::from_f64(bound);
        if let Some(spread) = spread {
            if let (Some(lo), Some(hi)) = (v.checked_sub(spread), v.checked_add(spread)) {
                if cents(lo) == cents(hi) {
                    return Some(NpvAt::Cents(cents(v)));
                }
            }
        }
        // The cent is in doubt: settle it exactly where the value is rational.
        if let Some(exact) = npv_rational(flows, annual_rate) {
            return Some(exact_figure(&exact.0, &exact.1));
        }
        return Some(NpvAt::Cents(cents(v)));
    }
    if let Some(exact) = npv_rational(flows, annual_rate) {
        return Some(exact_figure(&exact.0, &exact.1));
    }
    npv_beyond(flows, base).map(NpvAt::Beyond)
}

/// The NPV of a value too large for Decimal (or for a binary float), from the terms
/// scaled by the largest discount factor: `NPV = e^E sum c_k e^(-t_k L - E)`. `None`
/// when the scaled sum is within its error bound of zero (its sign unknown).
pub(super) fn npv_beyond(flows: &Flows, base: Dd) -> Option<ApproxAmount> {
    let log_base = base.ln();
    let exponents: Vec<Dd> = flows
        .points
        .iter()
        .map(|p| -(Dd::ratio(p.offset, flows.units_per_year) * log_base))
        .collect();
    let top = exponents
        .iter()
        .map(|e| e.hi)
        .fold(f64::NEG_INFINITY, f64::max);
    if !top.is_finite() {
        return None;
    }
    let top = Dd::from_f64(top);
    let mut sum = Dd::ZERO;
    let mut bound = 0.0;
    for (p, e) in flows.points.iter().zip(&exponents) {
        let term = Dd::from_decimal(p.amount) * (*e - top).exp();
        let t = p.offset as f64 / flows.units_per_year as f64;
        bound += term.to_f64().abs() * (1.0 + t.abs() * log_base.to_f64().abs()) * DD_TERM_ERROR;
        sum = sum + term;
    }
    let s = sum.to_f64();
    if !s.is_finite() || s.abs() <= bound {
        return None;
    }
    Some(ApproxAmount {
        negative: s < 0.0,
        log10_abs: (s.abs().ln() + top.to_f64()) / std::f64::consts::LN_10,
    })
}

/// The NPV as an exact fraction `(numerator, denominator > 0)` when every flow falls a
/// whole number of years after the start (see [`npv_at`]); `None` otherwise, or when
/// the integers would be too large ([`MAX_EXACT_BITS`]).
///
/// With `1 + h = q / d` in lowest terms and flows `c_k` at whole years `t_0 <= ... <=
/// t_n`, `NPV = sum c_k d^(t_k) / q^(t_k) = V d^(t_0) / q^(t_n)`, where
/// `V = sum c_k d^(t_k - t_0) q^(t_n - t_k)` is a whole number once the amounts are
/// brought to a common decimal scale; `V` is built by halving the list (binary
/// splitting), so the big products are few and balanced.
pub(super) fn npv_rational(flows: &Flows, annual_rate: Decimal) -> Option<(BigInt, BigInt)> {
    let per_year = i64::try_from(flows.units_per_year).ok()?;
    if per_year == 0 {
        return None;
    }
    if flows.points.iter().any(|p| p.offset % per_year != 0) {
        return None;
    }
    let ten = BigInt::from(10u32);
    let d0 = ten.pow(annual_rate.scale());
    let q0 = &d0 + BigInt::from(annual_rate.mantissa());
    if !q0.is_positive() {
        return None;
    }
    let g = q0.gcd(&d0);
    let (q, d) = (q0 / &g, d0 / g);
    let scale = flows
        .points
        .iter()
        .map(|p| p.amount.scale())
        .max()
        .unwrap_or(0);
    let mut points: Vec<(i64, BigInt)> = flows
        .points
        .iter()
        .map(|p| {
            let c = BigInt::from(p.amount.mantissa()) * ten.pow(scale - p.amount.scale());
            (p.offset / per_year, c)
        })
        .collect();
    points.sort_by_key(|p| p.0);
    let (Some(first), Some(last)) = (points.first(), points.last()) else {
        return Some((BigInt::zero(), BigInt::one()));
    };
    let (t0, tn) = (first.0, last.0);
    let span = u64::try_from(tn - t0).ok()?;
    let reach = t0.unsigned_abs().max(tn.unsigned_abs());
    if (span + reach).saturating_mul(q.bits() + d.bits()) > MAX_EXACT_BITS {
        return None;
    }
    let v = split_sum(&points, &q, &d);
    let mut num = v;
    let mut den = ten.pow(scale);
    // d^(t_0) and q^(-t_n), each on whichever side its exponent's sign puts it.
    let power = |b: &BigInt, e: i64| b.pow(e.unsigned_abs() as u32);
    if t0 >= 0 {
        num *= power(&d, t0);
    } else {
        den *= power(&d, t0);
    }
    if tn >= 0 {
        den *= power(&q, tn);
    } else {
        num *= power(&q, tn);
    }
    Some((num, den))
}

/// `sum c_k d^(t_k - t_0) q^(t_n - t_k)` over points sorted by time (see [`npv_rational`]).
pub(super) fn split_sum(points: &[(i64, BigInt)], q: &BigInt, d: &BigInt) -> BigInt {
    match points {
        [] => BigInt::zero(),
        [one] => one.1.clone(),
        _ => {
            let m = points.len() / 2;
            let (left, right) = points.split_at(m);
            let n = points.len();
            let lift_left = q.pow((points[n - 1].0 - points[m - 1].0) as u32);
            let lift_right = d.pow((points[m].0 - points[0].0) as u32);
            split_sum(left, q, d) * lift_left + split_sum(right, q, d) * lift_right
        }
    }
}

/// An exact fraction rounded to the cent half away from zero, or its sign and size when
/// the cents do not fit a Decimal.
pub(super) fn exact_figure(num: &BigInt, den: &BigInt) -> NpvAt {
    let scaled = num * BigInt::from(100u32);
    let (whole, rest) = scaled.abs().div_rem(den);
    let whole = if rest * 2u32 >= *den {
        whole + 1u32
    } else {
        whole
    };
    let signed = if scaled.is_negative() { -whole } else { whole };
    if let Some(c) = i128::try_from(&signed)
        .ok()
        .and_then(|c| Decimal::try_from_i128_with_scale(c, 2).ok())
    {
        return NpvAt::Cents(cents(c));
    }
    NpvAt::Beyond(ApproxAmount {
        negative: num.is_negative(),
        log10_abs: log10_big(num) - log10_big(den),
    })
}

/// log10 of a non-zero big integer's absolute value, to about 15 digits.
pub(super) fn log10_big(x: &BigInt) -> f64 {
    let bits = x.bits();
    let shift = bits.saturating_sub(60);
    let top = (x.abs() >> shift).to_f64().unwrap_or(f64::INFINITY);
    top.log10() + shift as f64 * std::f64::consts::LOG10_2
}

/// NPV at an annual rate in binary floats, for drawing and searching (NaN at or below -100%).
pub(crate) fn npv_f64(flows: &Flows, annual_rate: f64) -> f64 {
    if annual_rate.is_nan() || annual_rate <= -1.0 {
        return f64::NAN;
    }
    let lg = annual_rate.ln_1p();
    points_f64(flows)
        .iter()
        .map(|&(t, c)| c * (-lg * t).exp())
        .sum()
}

/// Lowest and highest annual rates the profile may show.
pub(super) const PROFILE_MIN: f64 = -0.99;
pub(super) const PROFILE_MAX: f64 = 10.0;

/// NPV over a range of annual rates wide enough to show the hurdle and every rate in
/// `marks` (the IRRs) that lies between -99% and 1000%, with a margin: 301 evenly
/// spaced points plus the exact points at the marks and the hurdle, sorted by rate.
/// Points where the NPV is not finite are left out.
pub fn npv_profile(flows: &Flows, marks: &[f64], hurdle: f64) -> Vec<ProfilePoint> {
    let inside = |r: f64| r.is_finite() && (PROFILE_MIN..=PROFILE_MAX).contains(&r);
    let mut exact: Vec<f64> = marks.iter().copied().filter(|&r| inside(r)).collect();
    if inside(hurdle) {
        exact.push(hurdle);
    }
    let mut lo = exact.iter().copied().fold(0.0f64, f64::min);
    let mut hi = exact.iter().copied().fold(0.0f64, f64::max);
    // Always show some rates above the hurdle, where a profile usually bends.
    if inside(hurdle) {
        hi = hi.max(hurdle + 0.2);
    } else {
        hi = hi.max(0.2);
    }
    let span = hi - lo;
    lo = (lo - 0.15 * span).max(PROFILE_MIN);
    hi = (hi + 0.15 * span).min(PROFILE_MAX);
    const STEPS: usize = 300;
    let mut rates: Vec<f64> = (0..=STEPS)
        .map(|i| lo + (hi - lo) * i as f64 / STEPS as f64)
        .collect();
    rates.extend(exact);
    rates.sort_by(f64::total_cmp);
    rates.dedup();
    rates
        .into_iter()
        .filter_map(|rate| {
            let npv = npv_f64(flows, rate);
            npv.is_finite().then_some(ProfilePoint { rate, npv })
        })
        .collect()
}
