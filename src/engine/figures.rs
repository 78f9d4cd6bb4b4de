//! The committee figures other than the IRRs themselves: NPV (exact to the cent and
//! for drawing), MIRR, return on invested capital, money multiple, profitability index,
//! payback, the NPV profile, balance paths with their classification, and the
//! investment/borrowing stance at each IRR with the decision it gives.
//!
//! All rates are annual effective fractions; a flow at offset `o` sits
//! `o / units_per_year` years after the series' start, to which values are discounted.

use super::analysis::{
    ApproxAmount, BalanceKind, BalanceRow, Decision, Payback, ProfilePoint, Stance,
};
use super::dd::Dd;
use super::flows::Flows;
use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, Zero};
use rust_decimal::prelude::{FromPrimitive, ToPrimitive};
use rust_decimal::{Decimal, RoundingStrategy};

/// The netted flows as (years, amount) pairs in binary floats.
fn points_f64(flows: &Flows) -> Vec<(f64, f64)> {
    let n = flows.normalised();
    (0..n.points.len())
        .map(|i| (n.years(i), super::flows::amount_f64(n.points[i].amount)))
        .collect()
}

/// NPV at an annual rate in double-double, discounted to offset 0.
fn npv_dd(flows: &Flows, base: Dd) -> Dd {
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
pub fn npv_sign(flows: &Flows, annual_rate: f64) -> i8 {
    if annual_rate.is_nan() || annual_rate <= -1.0 {
        return 0;
    }
    let npv = npv_dd(flows, Dd::ONE + Dd::from_f64(annual_rate)).to_f64();
    let scale: f64 = flows
        .points
        .iter()
        .map(|p| super::flows::amount_f64(p.amount).abs())
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
fn cents(d: Decimal) -> Decimal {
    let r = d.round_dp_with_strategy(2, RoundingStrategy::MidpointAwayFromZero);
    if r.is_zero() {
        Decimal::ZERO
    } else {
        r
    }
}

/// A float as a Decimal rounded to the cent, clamped to Decimal's range; NaN becomes zero.
fn f64_to_cents(x: f64) -> Decimal {
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
pub enum NpvAt {
    /// Rounded to the cent, half away from zero.
    Cents(Decimal),
    /// Beyond Decimal's range (about 7.9e28): the sign and an approximate size.
    Beyond(ApproxAmount),
}

/// NPV at `annual_rate`, discounted to the series' start, each flow by
/// `(1 + rate)^(-offset / units_per_year)`, rounded to the cent half away from zero.
/// `None` when the rate is -100% or lower, or the value is beyond Decimal's range or
/// cannot be told from zero (see [`npv_at`]).
pub fn npv_exact(flows: &Flows, annual_rate: Decimal) -> Option<Decimal> {
    match npv_at(flows, annual_rate)? {
        NpvAt::Cents(c) => Some(c),
        NpvAt::Beyond(_) => None,
    }
}

/// Relative error allowed per discounted term of the double-double NPV, per unit of
/// `1 + |t ln(1 + rate)|`: the logarithm and the exponential are each good to a few
/// units in 2^-104 (about 5e-32), and `t ln(1 + rate)` carries the logarithm's error
/// multiplied by `t`; 1e-28 leaves a wide margin over both.
const DD_TERM_ERROR: f64 = 1e-28;

/// `Dd::to_decimal` keeps about 26 significant digits; this covers its rounding.
const DD_TO_DECIMAL_ERROR: f64 = 1e-25;

/// The exact rational NPV is skipped (and the double-double value kept) when its
/// integers would exceed this many bits; 2^25 bits is about ten million digits, which
/// num-bigint multiplies in well under a second, and no deal within the validator's
/// limits comes near it unless its hurdle has many decimals and it spans millennia.
const MAX_EXACT_BITS: u64 = 1 << 25;

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
pub fn npv_at(flows: &Flows, annual_rate: Decimal) -> Option<NpvAt> {
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
            let term = super::flows::amount_f64(p.amount).abs() * (-t * base.ln().to_f64()).exp();
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
fn npv_beyond(flows: &Flows, base: Dd) -> Option<ApproxAmount> {
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
fn npv_rational(flows: &Flows, annual_rate: Decimal) -> Option<(BigInt, BigInt)> {
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
fn split_sum(points: &[(i64, BigInt)], q: &BigInt, d: &BigInt) -> BigInt {
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
fn exact_figure(num: &BigInt, den: &BigInt) -> NpvAt {
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
fn log10_big(x: &BigInt) -> f64 {
    let bits = x.bits();
    let shift = bits.saturating_sub(60);
    let top = (x.abs() >> shift).to_f64().unwrap_or(f64::INFINITY);
    top.log10() + shift as f64 * std::f64::consts::LOG10_2
}

/// NPV at an annual rate in binary floats, for drawing and searching (NaN at or below -100%).
pub fn npv_f64(flows: &Flows, annual_rate: f64) -> f64 {
    if annual_rate.is_nan() || annual_rate <= -1.0 {
        return f64::NAN;
    }
    let lg = annual_rate.ln_1p();
    points_f64(flows)
        .iter()
        .map(|&(t, c)| c * (-lg * t).exp())
        .sum()
}

/// Modified IRR (annual): every outflow discounted to the start at `finance`, every
/// inflow compounded to the last flow's time `T` at `reinvest`, and
/// `MIRR = (FV inflows / PV outflows)^(1/T) - 1` (docs/methods.md, MIRR; Lin 1976).
/// `None` without an inflow and an outflow, when `T` is zero, or a rate is -100% or lower.
pub fn mirr(flows: &Flows, finance: f64, reinvest: f64) -> Option<f64> {
    if finance.is_nan() || reinvest.is_nan() || finance <= -1.0 || reinvest <= -1.0 {
        return None;
    }
    let pts = points_f64(flows);
    let horizon = pts.last()?.0;
    if horizon <= 0.0 {
        return None;
    }
    let (lf, lg) = (finance.ln_1p(), reinvest.ln_1p());
    let pv_out: f64 = pts
        .iter()
        .filter(|p| p.1 < 0.0)
        .map(|&(t, c)| -c * (-lf * t).exp())
        .sum();
    let fv_in: f64 = pts
        .iter()
        .filter(|p| p.1 > 0.0)
        .map(|&(t, c)| c * (lg * (horizon - t)).exp())
        .sum();
    if !(pv_out > 0.0 && fv_in > 0.0 && pv_out.is_finite() && fv_in.is_finite()) {
        return None;
    }
    let m = ((fv_in.ln() - pv_out.ln()) / horizon).exp_m1();
    m.is_finite().then_some(m)
}

/// Final balance of the return-on-invested-capital path at growth `y = ln(1 + r)`:
/// a negative balance (capital tied up) grows at `r`, a non-negative one at the finance rate.
fn ric_final_balance(pts: &[(f64, f64)], y: f64, log_finance: f64) -> f64 {
    let mut bal = pts[0].1;
    for w in pts.windows(2) {
        let dt = w[1].0 - w[0].0;
        let g = if bal < 0.0 { y } else { log_finance };
        if bal != 0.0 {
            bal *= (g * dt).exp();
        }
        bal += w[1].1;
    }
    bal
}

/// Return on invested capital (Teichroew, Robichek & Montalbano 1965): the rate `r`
/// at which the balance, growing at `r` while the project owes the investor and at
/// `finance` while the investor owes the project, ends at zero. It is unique, and
/// exceeds `finance` exactly when NPV at `finance` is positive. `None` when no such
/// rate exists (for example the balance is never negative before the last flow).
pub fn return_on_invested_capital(flows: &Flows, finance: f64) -> Option<f64> {
    if finance.is_nan() || finance <= -1.0 {
        return None;
    }
    let pts = points_f64(flows);
    if pts.len() < 2 {
        return None;
    }
    let lf = finance.ln_1p();
    let f = |y: f64| ric_final_balance(&pts, y, lf);
    // The final balance falls as y rises: bracket a sign change, then bisect in y.
    let (mut lo, mut hi) = (-1.0f64, 1.0f64);
    while f(lo) <= 0.0 && lo > -64.0 {
        lo *= 2.0;
    }
    while f(hi) >= 0.0 && hi < 64.0 {
        hi *= 2.0;
    }
    let (flo, fhi) = (f(lo), f(hi));
    if flo.is_nan() || fhi.is_nan() || flo <= 0.0 || fhi >= 0.0 {
        return None;
    }
    while hi - lo > 1e-12 {
        let mid = 0.5 * (lo + hi);
        let fm = f(mid);
        if fm.is_nan() {
            return None;
        }
        if fm > 0.0 {
            lo = mid;
        } else if fm < 0.0 {
            hi = mid;
        } else {
            return Some(mid.exp_m1());
        }
    }
    Some((0.5 * (lo + hi)).exp_m1())
}

/// Sum of inflows over the size of the sum of outflows (undiscounted), exact and rounded
/// to 4 decimals half away from zero; `None` without outflows.
pub fn money_multiple(flows: &Flows) -> Option<Decimal> {
    let (mut inflows, mut outflows) = (Decimal::ZERO, Decimal::ZERO);
    for p in &flows.points {
        if p.amount > Decimal::ZERO {
            inflows = inflows.checked_add(p.amount)?;
        } else {
            outflows = outflows.checked_sub(p.amount)?;
        }
    }
    if outflows.is_zero() {
        return None;
    }
    inflows
        .checked_div(outflows)
        .map(|m| m.round_dp_with_strategy(4, RoundingStrategy::MidpointAwayFromZero))
}

/// Present value of the inflows over the size of the present value of the outflows at
/// the hurdle; `None` without outflows or at a hurdle of -100% or lower.
pub fn profitability_index(flows: &Flows, hurdle: f64) -> Option<f64> {
    if hurdle.is_nan() || hurdle <= -1.0 {
        return None;
    }
    let lh = hurdle.ln_1p();
    let (mut pin, mut pout) = (0.0, 0.0);
    for (t, c) in points_f64(flows) {
        let pv = c * (-lh * t).exp();
        if c > 0.0 {
            pin += pv;
        } else {
            pout -= pv;
        }
    }
    let pi = pin / pout;
    (pout > 0.0 && pi.is_finite()).then_some(pi)
}

/// The first time a cumulative sum that has been negative reaches zero or more,
/// interpolated linearly between the two flow times around it.
fn first_recovery(times: &[f64], cum_before: &[f64], flows: &[f64]) -> Option<usize> {
    let mut been_negative = false;
    for k in 0..times.len() {
        let after = cum_before[k] + flows[k];
        if after < 0.0 {
            been_negative = true;
        } else if been_negative {
            return Some(k);
        }
    }
    None
}

fn interpolate(times: &[f64], cum_before: &[f64], flows: &[f64], k: usize) -> f64 {
    let t0 = if k == 0 { 0.0 } else { times[k - 1] };
    let frac = (-cum_before[k] / flows[k]).clamp(0.0, 1.0);
    t0 + frac * (times[k] - t0)
}

/// Simple payback (undiscounted, exact sums) and discounted payback (at the hurdle), in
/// years since the series' start: the first time the cumulative position, having been
/// negative, reaches zero, interpolated linearly between flow times. Also whether the
/// undiscounted position turns negative again afterwards (later outflows).
pub fn payback(flows: &Flows, hurdle: f64) -> Payback {
    let n = flows.normalised();
    let times: Vec<f64> = (0..n.points.len()).map(|i| n.years(i)).collect();
    // The sign decisions of the simple payback use exact sums: "reaches zero" must be exact.
    let mut exact = Decimal::ZERO;
    let mut simple_idx = None;
    let mut been_negative = false;
    let mut turns_negative_again = false;
    for (k, p) in n.points.iter().enumerate() {
        exact += p.amount;
        if exact < Decimal::ZERO {
            if simple_idx.is_some() {
                turns_negative_again = true;
            }
            been_negative = true;
        } else if been_negative && simple_idx.is_none() {
            simple_idx = Some(k);
        }
    }
    let amounts: Vec<f64> = n
        .points
        .iter()
        .map(|p| p.amount.to_f64().unwrap_or(0.0))
        .collect();
    let cum_before: Vec<f64> = {
        let mut acc = Decimal::ZERO;
        n.points
            .iter()
            .map(|p| {
                let before = acc;
                acc += p.amount;
                before.to_f64().unwrap_or(0.0)
            })
            .collect()
    };
    let simple_years = simple_idx.map(|k| interpolate(&times, &cum_before, &amounts, k));

    let discounted_years = if hurdle > -1.0 {
        let lh = hurdle.ln_1p();
        let disc: Vec<f64> = times
            .iter()
            .zip(&amounts)
            .map(|(&t, &c)| c * (-lh * t).exp())
            .collect();
        let mut acc = 0.0;
        let dcum: Vec<f64> = disc
            .iter()
            .map(|&c| {
                let before = acc;
                acc += c;
                before
            })
            .collect();
        first_recovery(&times, &dcum, &disc).map(|k| interpolate(&times, &dcum, &disc, k))
    } else {
        None
    };
    Payback {
        simple_years,
        discounted_years,
        turns_negative_again,
    }
}

/// Lowest and highest annual rates the profile may show.
const PROFILE_MIN: f64 = -0.99;
const PROFILE_MAX: f64 = 10.0;

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

/// The balance path in floats: `F_0 = C_0`, `F_k = F_(k-1) e^(y dt) + C_k`. A zero
/// balance stays zero whatever the growth, so an infinite factor never meets a zero (no
/// NaN). A balance that is a billionth or less of the two terms it was made from is
/// cancellation noise (the rate is known to a few ulps, and at large rates the terms
/// are large), and counts as exactly zero.
pub fn balances_f64(pts: &[(f64, f64)], log_growth: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(pts.len());
    let mut bal = 0.0f64;
    let mut prev_t: Option<f64> = None;
    for &(t, c) in pts {
        let mut grown = 0.0;
        if let Some(pt) = prev_t {
            if bal != 0.0 {
                grown = bal * (log_growth * (t - pt)).exp();
            }
        }
        bal = grown + c;
        if bal.is_nan() || (bal.is_finite() && bal.abs() <= 1e-9 * (grown.abs() + c.abs())) {
            bal = 0.0;
        }
        out.push(bal);
        prev_t = Some(t);
    }
    out
}

/// The balance path at an IRR, computed in the direction in which rounding errors
/// shrink: forwards from `F_0 = C_0` when the rate is at most 0% (each step multiplies
/// by a factor below one), backwards from `F_n = 0` when it is above 0%
/// (`F_(k-1) = (F_k - C_k) (1 + rate)^(-dt)`). Forwards at a large rate, an error of
/// one ulp in the rate grows by the growth factor at every step.
pub fn balances_at_root(pts: &[(f64, f64)], log_growth: f64) -> Vec<f64> {
    if log_growth.is_nan() || log_growth <= 0.0 || pts.is_empty() {
        return balances_f64(pts, log_growth);
    }
    let n = pts.len();
    let mut out = vec![0.0f64; n];
    for k in (1..n).rev() {
        let dt = pts[k].0 - pts[k - 1].0;
        let shrunk = (out[k] - pts[k].1) * (-log_growth * dt).exp();
        out[k - 1] =
            if shrunk.abs() <= 1e-9 * (out[k].abs() + pts[k].1.abs()) * (-log_growth * dt).exp() {
                0.0
            } else {
                shrunk
            };
    }
    out
}

/// The balance path at an IRR given as `log_growth = ln(1 + rate)` (Teichroew,
/// Robichek & Montalbano): `F_0 = C_0`, `F_k = F_(k-1) (1 + rate)^(dt) + C_k`, dt in
/// years, evaluated in the stable direction (see [`balances_at_root`]). Negative: the
/// project owes the investor. Balances are rounded to the cent and clamped to
/// Decimal's range, so extreme rates give large but valid numbers.
pub fn balance_path(flows: &Flows, log_growth: f64) -> Vec<BalanceRow> {
    let n = flows.normalised();
    let pts = points_f64(&n);
    let bals = balances_at_root(&pts, log_growth);
    n.points
        .iter()
        .zip(pts.iter().zip(bals))
        .map(|(p, (&(t, _), b))| BalanceRow {
            years: t,
            flow: p.amount,
            balance: f64_to_cents(b),
        })
        .collect()
}

/// Classifies a balance path, ignoring its last row (zero at an IRR): pure investment
/// when no balance is positive, pure borrowing when none is negative, mixed otherwise.
/// Balances within a billionth of the largest flow count as zero.
pub fn balance_kind(path: &[BalanceRow]) -> BalanceKind {
    let scale = path
        .iter()
        .map(|r| r.flow.abs())
        .max()
        .unwrap_or(Decimal::ZERO);
    let tol = scale * Decimal::new(1, 9);
    let body = &path[..path.len().saturating_sub(1)];
    if body.iter().all(|r| r.balance <= tol) {
        BalanceKind::PureInvestment
    } else if body.iter().all(|r| r.balance >= -tol) {
        BalanceKind::PureBorrowing
    } else {
        BalanceKind::Mixed
    }
}

/// `[(1+k)^dt - (1+h)^dt] / [(1+k) - (1+h)] / (1+h)^(dt-1)` written through `d = ln(1+k) -
/// ln(1+h)` so that it stays accurate when k is near h and finite when k is huge.
fn growth_ratio(d: f64, dt: f64) -> f64 {
    if d == 0.0 {
        dt
    } else if d > 30.0 {
        (d * (dt - 1.0)).exp() * ((-dt * d).exp_m1() / (-d).exp_m1())
    } else {
        (dt * d).exp_m1() / d.exp_m1()
    }
}

/// Present value at the hurdle of the capital stream `x_j = -F_j` (j < n) at the rate
/// `k = e^log_growth - 1`, weighted for uneven intervals (Hazen 2003, generalised):
/// `PV = sum_j x_j (1+h)^(-t_(j+1)) [(1+k)^dt_j - (1+h)^dt_j] / (k - h)`.
/// For every `k`, `NPV(h) = (k - h) PV + F_n (1+h)^(-t_n)`, so at an IRR `NPV(h) = (k - h) PV`.
pub fn capital_pv(flows: &Flows, log_growth: f64, hurdle: f64) -> f64 {
    capital_pv_terms(&points_f64(flows), log_growth, hurdle).0
}

/// The capital PV and the sum of the sizes of its terms (to judge cancellation).
fn capital_pv_terms(pts: &[(f64, f64)], log_growth: f64, hurdle: f64) -> (f64, f64) {
    if pts.is_empty() || (hurdle.is_nan() || hurdle <= -1.0) {
        return (f64::NAN, f64::NAN);
    }
    let lh = hurdle.ln_1p();
    let d = log_growth - lh;
    let bals = balances_f64(pts, log_growth);
    let (mut pv, mut size) = (0.0, 0.0);
    for j in 0..pts.len() - 1 {
        let x = -bals[j];
        if x == 0.0 {
            continue;
        }
        let dt = pts[j + 1].0 - pts[j].0;
        let term = x * (-lh * pts[j].0).exp() * growth_ratio(d, dt);
        pv += term;
        size += term.abs();
    }
    let scale = 1.0 / (1.0 + hurdle);
    (pv * scale, size * scale)
}

/// Net investment or net borrowing at the hurdle for the IRR `k = e^log_growth - 1`
/// (Hazen 2003): the sign of [`capital_pv`]. When that sum is swamped by rounding or
/// overflows (extreme rates), the sign follows from the exact identity
/// `NPV(h) = (k - h) PV` with the NPV in double-double.
pub fn stance(flows: &Flows, log_growth: f64, hurdle: f64) -> Stance {
    let pts = points_f64(flows);
    let (pv, size) = capital_pv_terms(&pts, log_growth, hurdle);
    if pv.is_finite() && size.is_finite() && pv.abs() > 1e-12 * size {
        return if pv > 0.0 {
            Stance::Investment
        } else {
            Stance::Borrowing
        };
    }
    if hurdle.is_nan() || hurdle <= -1.0 {
        return Stance::Neutral;
    }
    let d = log_growth - hurdle.ln_1p();
    let npv = npv_dd(&flows.normalised(), Dd::ONE + Dd::from_f64(hurdle));
    let scale: f64 = pts.iter().map(|p| p.1.abs()).sum();
    if d == 0.0 || d.is_nan() || npv.to_f64().abs() <= 1e-24 * scale {
        Stance::Neutral
    } else if (npv.hi > 0.0) == (d > 0.0) {
        Stance::Investment
    } else {
        Stance::Borrowing
    }
}

/// The decision an IRR `k` gives at the hurdle `h` with its stance (Hazen 2003): a net
/// investment is accepted when `k > h`, a net borrowing when `k < h`.
pub fn decision_for_root(k: f64, h: f64, stance: Stance) -> Decision {
    let sign = match stance {
        Stance::Investment => 1.0,
        Stance::Borrowing => -1.0,
        Stance::Neutral => return Decision::Indifferent,
    };
    let diff = sign * (k - h);
    if diff > 0.0 {
        Decision::Accept
    } else if diff < 0.0 {
        Decision::Reject
    } else {
        Decision::Indifferent
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::engine::flows::FlowPoint;
    use chrono::NaiveDate;
    use std::str::FromStr;

    fn dec(s: &str) -> Decimal {
        Decimal::from_str(s).unwrap()
    }

    /// Periodic flows, one amount a period, `m` periods a year.
    pub(crate) fn periodic(amounts: &[&str], m: u32) -> Flows {
        Flows::periodic(amounts.iter().map(|a| dec(a)), m).normalised()
    }

    /// Dated flows on an Act/365F clock.
    fn dated(items: &[(&str, &str)]) -> Flows {
        let d0 = NaiveDate::from_str(items[0].0).unwrap();
        Flows {
            points: items
                .iter()
                .map(|(d, a)| {
                    let date = NaiveDate::from_str(d).unwrap();
                    FlowPoint {
                        offset: (date - d0).num_days(),
                        amount: dec(a),
                        date: Some(date),
                        period: None,
                        note: None,
                    }
                })
                .collect(),
            units_per_year: 365,
            periods_per_year: None,
        }
    }

    pub(crate) fn lorie_savage() -> Flows {
        periodic(&["-1600", "10000", "-10000"], 1)
    }

    pub(crate) fn mine() -> Flows {
        let mut a = vec!["-30"];
        a.extend(["10"; 9]);
        a.push("-65");
        periodic(&a, 1)
    }

    pub(crate) fn no_real_irr() -> Flows {
        periodic(&["1000", "-3000", "2500"], 1)
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn npv_exact_check_values() {
        // Lorie & Savage 1955 [flows from memory; values computed]: NPV@10% = -773.5537
        assert_eq!(
            npv_exact(&lorie_savage(), dec("0.10")),
            Some(dec("-773.55"))
        );
        // corporate-finance textbook mine example [memory]; NPV@10% = 2.529924
        assert_eq!(npv_exact(&mine(), dec("0.10")), Some(dec("2.53")));
        // corporate-finance textbook example [memory]; NPV@10% = 338.8430
        assert_eq!(npv_exact(&no_real_irr(), dec("0.1")), Some(dec("338.84")));
        assert_eq!(npv_exact(&mine(), dec("-1")), None);
    }

    #[test]
    fn npv_exact_dated_and_monthly() {
        // Lorie & Savage flows dated 2024-01-01, 2025-01-01, 2026-01-01 on Act/365F
        // (offsets 0, 366, 731 days): -773.7694956119... [computed with mpmath 50 digits]
        let f = dated(&[
            ("2024-01-01", "-1600"),
            ("2025-01-01", "10000"),
            ("2026-01-01", "-10000"),
        ]);
        assert_eq!(npv_exact(&f, dec("0.1")), Some(dec("-773.77")));
        // Monthly flows at an annual 10% hurdle, discounted by 1.1^(-k/12):
        // 7357.3060954116... [computed with mpmath 50 digits; numpy-financial 1.0 npv at
        // the monthly rate 1.1^(1/12) - 1 gives 7357.306095411637]
        let m = periodic(
            &[
                "-12000", "1500", "1500", "1500", "-500", "2000", "2000", "2000", "2000", "2000",
                "2000", "2000", "2500",
            ],
            12,
        );
        assert_eq!(npv_exact(&m, dec("0.1")), Some(dec("7357.31")));
        assert!(close(npv_f64(&m, 0.1), 7357.306095411637, 1e-8));
    }

    #[test]
    fn npv_exact_rounds_half_away_from_zero() {
        // Undiscounted halves of a cent (common practice for money: half away from zero).
        assert_eq!(
            npv_exact(&periodic(&["0.005"], 1), dec("0.1")),
            Some(dec("0.01"))
        );
        assert_eq!(
            npv_exact(&periodic(&["-0.125"], 1), dec("0.1")),
            Some(dec("-0.13"))
        );
        // 110 a year out at 10% is exactly 100, which a binary float can miss by an ulp.
        assert_eq!(
            npv_exact(&periodic(&["0", "110.055"], 1), dec("0.1")),
            Some(dec("100.05"))
        );
    }

    #[test]
    fn npv_exactly_half_a_cent_is_settled_exactly() {
        // Exact construction: 1,050,000.00525 a year out at 5% is worth 1,000,000.005,
        // so the NPV is exactly 0.005; half away from zero gives 0.01 (common practice
        // for money). The double-double value lands just below the tie.
        let tie = periodic(&["-1000000", "1050000.00525"], 1);
        assert_eq!(npv_exact(&tie, dec("0.05")), Some(dec("0.01")));
        let negative = periodic(&["1000000", "-1050000.00525"], 1);
        assert_eq!(npv_exact(&negative, dec("0.05")), Some(dec("-0.01")));
        // The same flows twelve months apart on a monthly clock: still whole years.
        let mut monthly = vec!["-1000000"];
        monthly.extend(["0"; 11]);
        monthly.push("1050000.00525");
        assert_eq!(
            npv_exact(&periodic(&monthly, 12), dec("0.05")),
            Some(dec("0.01"))
        );
        // Exact construction over two years: 1.05^2 = 1.1025, and 1,102,500.0055125
        // discounts to 1,000,000.005; with 0.0025 more at year 1 (0.00238095...), the
        // NPV is 0.00738..., which is 0.01 and not a tie.
        let two = periodic(&["-1000000", "0.0025", "1102500.0055125"], 1);
        assert_eq!(npv_exact(&two, dec("0.05")), Some(dec("0.01")));
    }

    #[test]
    fn npv_rational_matches_exact_fractions() {
        // -100 + 121 / 1.1^2 = 0 exactly (exact construction).
        let (num, _) = npv_rational(&periodic(&["-100", "0", "121"], 1), dec("0.1")).unwrap();
        assert!(num.is_zero());
        // -1 + 2 / 1.25 + 3 / 1.25^3 = 0.6 + 1.536 = 2.136 (exact: 1.25 = 5/4).
        let (num, den) = npv_rational(&periodic(&["-1", "2", "0", "3"], 1), dec("0.25")).unwrap();
        assert_eq!(BigInt::from(2136) * &den, num * BigInt::from(1000));
        // A flow half a year out has an irrational discount factor: no fraction.
        assert!(npv_rational(&periodic(&["-1", "2"], 2), dec("0.25")).is_none());
    }

    #[test]
    fn npv_beyond_decimal_range_keeps_sign_and_size() {
        // At -99.9999% a year, year k multiplies by 10^(6k): 600 at year 10 is 6e62 now
        // (exact construction), beyond Decimal's 7.9e28.
        let mut amounts = vec!["-1000"];
        amounts.extend(["0"; 9]);
        amounts.push("600");
        let f = periodic(&amounts, 1);
        assert_eq!(npv_exact(&f, dec("-0.999999")), None);
        match npv_at(&f, dec("-0.999999")) {
            Some(NpvAt::Beyond(a)) => {
                assert!(!a.negative);
                // log10(6e62 - 1000) = 62.77815125038364 [log10 6 = 0.778151250383644,
                // Python math.log10].
                assert!(close(a.log10_abs, 62.77815125038364, 1e-12), "{a:?}");
            }
            other => panic!("{other:?}"),
        }
        // Half-yearly, so no exact fraction: the scaled double-double sum gives the size.
        let mut half = vec!["-1000"];
        half.extend(["0"; 18]);
        half.push("-600");
        match npv_at(&periodic(&half, 2), dec("-0.999999")) {
            Some(NpvAt::Beyond(a)) => {
                assert!(a.negative);
                // 600 at 9.5 years is 600 * 10^57 now: log10 = 59.77815125038364.
                assert!(close(a.log10_abs, 59.77815125038364, 1e-12), "{a:?}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn mirr_check_values() {
        // Lorie & Savage 1955 (docs/methods.md, Check values): MIRR(10%, 10%) = 5.598956%
        let m = mirr(&lorie_savage(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.05598956, 5e-9), "{m}");
        // mine example (docs/methods.md, Check values): MIRR(10%, 10%) = 10.495274%
        let m = mirr(&mine(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.10495274, 5e-9), "{m}");
        // 1000, -3000, 2500: 0.1663332857006754 [numpy-financial 1.0 mirr, computed]
        let m = mirr(&no_real_irr(), 0.1, 0.1).unwrap();
        assert!(close(m, 0.1663332857006754, 1e-12), "{m}");
        assert_eq!(mirr(&periodic(&["-5", "-6"], 1), 0.1, 0.1), None);
        assert_eq!(mirr(&periodic(&["5"], 1), 0.1, 0.1), None);
    }

    #[test]
    fn mirr_monthly_matches_numpy_financial() {
        // numpy-financial's mirr on the monthly rates 1.08^(1/12)-1 (finance) and
        // 1.12^(1/12)-1 (reinvestment) gives 0.04827535206868405 a month, i.e.
        // 0.7607775529642122 a year [numpy-financial 1.0 mirr, computed]
        let m = periodic(
            &[
                "-12000", "1500", "1500", "1500", "-500", "2000", "2000", "2000", "2000", "2000",
                "2000", "2000", "2500",
            ],
            12,
        );
        let got = mirr(&m, 0.08, 0.12).unwrap();
        assert!(close(got, 0.7607775529642122, 1e-11), "{got}");
    }

    /// The IRR of -a, b, c (one sign change) from the quadratic formula in v = 1/(1+r).
    fn quadratic_irr(a: f64, b: f64, c: f64) -> f64 {
        let v = (-b + (b * b + 4.0 * a * c).sqrt()) / (2.0 * c);
        1.0 / v - 1.0
    }

    #[test]
    fn ric_equals_irr_for_pure_investment() {
        // Teichroew et al. 1965: with the balance never positive, the finance rate never
        // applies and RIC is the IRR (here from the quadratic formula).
        let f = periodic(&["-100", "60", "60"], 1);
        let irr = quadratic_irr(100.0, 60.0, 60.0);
        for fin in [0.0, 0.05, 0.3] {
            let ric = return_on_invested_capital(&f, fin).unwrap();
            assert!(close(ric, irr, 1e-10), "{ric} vs {irr}");
        }
    }

    #[test]
    fn ric_above_finance_iff_npv_positive() {
        // Teichroew et al. 1965: RIC > k exactly when NPV(k) > 0.
        let series = [
            lorie_savage(),
            mine(),
            no_real_irr(),
            periodic(&["-100", "220", "-121"], 1),
        ];
        for f in &series {
            // At a 0% finance rate the Lorie & Savage balance can only reach zero at -100%.
            for fin in [0.01, 0.05, 0.1, 0.2, 0.5, 1.0] {
                let npv = npv_f64(f, fin);
                let ric = return_on_invested_capital(f, fin)
                    .unwrap_or_else(|| panic!("no RIC for {:?} at {fin}", points_f64(f)));
                if npv.abs() < 1e-9 {
                    // NPV(k) = 0 (the double root of -100, 220, -121 at 10%): RIC = k.
                    assert!(close(ric, fin, 1e-9), "finance {fin}, ric {ric}");
                } else {
                    assert_eq!(ric > fin, npv > 0.0, "finance {fin}, ric {ric}, npv {npv}");
                }
            }
        }
        // 1000, -3000, 2500 at 10%: 1100 - 3000 = -1900 tied up for a year, repaid by 2500.
        let ric = return_on_invested_capital(&no_real_irr(), 0.1).unwrap();
        assert!(close(ric, 2500.0 / 1900.0 - 1.0, 1e-10));
        assert_eq!(
            return_on_invested_capital(&periodic(&["5", "6"], 1), 0.1),
            None
        );
        // Financed at 300%, 1000 grows to 4000 and covers the 3000: no capital is ever
        // tied up, so there is no rate to find.
        assert_eq!(return_on_invested_capital(&no_real_irr(), 3.0), None);
    }

    #[test]
    fn multiple_index_and_payback() {
        // Common practice: inflows over outflows, undiscounted.
        assert_eq!(money_multiple(&mine()), Some(dec("0.9474")));
        assert_eq!(
            money_multiple(&periodic(&["-100", "60", "60"], 1)),
            Some(dec("1.2"))
        );
        assert_eq!(money_multiple(&periodic(&["100"], 1)), None);
        // PI at 10% for -100, 60, 60: (60/1.1 + 60/1.21) / 100
        let pi = profitability_index(&periodic(&["-100", "60", "60"], 1), 0.1).unwrap();
        assert!(close(pi, (60.0 / 1.1 + 60.0 / 1.21) / 100.0, 1e-14));
        // Payback of the mine: -30 recovered by 10 a year after 3 years, then the
        // closure cost of 65 at year 10 makes the position negative again.
        let p = payback(&mine(), 0.1);
        assert_eq!(p.simple_years, Some(3.0));
        assert!(p.turns_negative_again);
        // discounted at 10%: after 3 years 30 - 24.8685 = 5.1315 left, year 4 brings 6.8301
        let d = p.discounted_years.unwrap();
        let left = 30.0 - 10.0 * (1.0 / 1.1 + 1.0 / 1.21 + 1.0 / 1.331);
        assert!(close(d, 3.0 + left / (10.0 / 1.4641), 1e-12), "{d}");
        // -100 then 40 a half-year: half-way through the third half-year.
        let h = payback(&periodic(&["-100", "40", "40", "40"], 2), 0.0);
        assert_eq!(h.simple_years, Some(1.25));
        assert!(!h.turns_negative_again);
        assert_eq!(h.discounted_years, Some(1.25));
        assert_eq!(
            payback(&periodic(&["-100", "40"], 1), 0.1).simple_years,
            None
        );
    }

    #[test]
    fn profile_shows_roots_and_hurdle() {
        let f = lorie_savage();
        let p = npv_profile(&f, &[0.25, 4.0], 0.1);
        assert!(p.len() >= 300);
        assert!(p.windows(2).all(|w| w[0].rate < w[1].rate));
        let first = p.first().unwrap().rate;
        let last = p.last().unwrap().rate;
        assert!(first < 0.1 && last > 4.0 && last <= 10.0);
        for r in [0.25, 4.0, 0.1] {
            assert!(p.iter().any(|q| q.rate == r));
        }
        let at_hurdle = p.iter().find(|q| q.rate == 0.1).unwrap();
        assert!(close(at_hurdle.npv, -773.5537190082644, 1e-9));
        // A root beyond 1000% is left off instead of squashing the chart.
        let q = npv_profile(&f, &[1e6], 0.1);
        assert!(q.iter().all(|x| x.rate <= 10.0 && x.npv.is_finite()));
    }

    #[test]
    fn balance_path_lorie_savage() {
        // Lorie & Savage at 25% (docs/methods.md, Check values): -1600, 8000, 0 (mixed)
        let path = balance_path(&lorie_savage(), 1.25f64.ln());
        let bals: Vec<Decimal> = path.iter().map(|r| r.balance).collect();
        assert_eq!(bals, vec![dec("-1600"), dec("8000"), dec("0")]);
        assert_eq!(balance_kind(&path), BalanceKind::Mixed);
        let pure = balance_path(
            &periodic(&["-100", "60", "60"], 1),
            quadratic_irr(100.0, 60.0, 60.0).ln_1p(),
        );
        assert_eq!(balance_kind(&pure), BalanceKind::PureInvestment);
        assert_eq!(pure.last().unwrap().balance, Decimal::ZERO);
        // A loan taken: 100 received, 110 repaid a year later at 10%.
        let loan = balance_path(&periodic(&["100", "-110"], 1), 1.1f64.ln());
        assert_eq!(balance_kind(&loan), BalanceKind::PureBorrowing);
    }

    #[test]
    fn balance_path_survives_extreme_rates() {
        let f = mine();
        for g in [
            -1e6,
            -50.0,
            f64::NEG_INFINITY,
            50.0,
            230.0,
            1e6,
            f64::INFINITY,
        ] {
            let path = balance_path(&f, g);
            assert_eq!(path.len(), 11);
            // Decimal has no NaN; check the clamping kept every value in range.
            assert!(path.iter().all(|r| r.balance.abs() <= Decimal::MAX));
        }
        // Above 0% the path is computed backwards from a zero final balance (the
        // stable direction at an IRR), so at a huge rate that is no IRR the early
        // balances shrink towards zero instead of overflowing.
        let up = balance_path(&f, 230.0);
        assert_eq!(up[10].balance, Decimal::ZERO);
        assert!(up[0].balance.abs() < Decimal::ONE);
        let down = balance_path(&f, f64::NEG_INFINITY);
        // At -100% every earlier balance is wiped out: each row is its own flow.
        assert!(down.iter().all(|r| r.balance == r.flow));
    }

    /// Every check-value series with its IRRs from docs/methods.md (Check values).
    fn series_with_roots() -> Vec<(Flows, Vec<f64>)> {
        vec![
            (lorie_savage(), vec![0.25, 4.0]),
            (mine(), vec![0.03503024, 0.19542150]),
            (periodic(&["-100", "220", "-121"], 1), vec![0.10]),
            (
                periodic(&["-100", "60", "60"], 1),
                vec![quadratic_irr(100.0, 60.0, 60.0)],
            ),
        ]
    }

    #[test]
    fn hazen_identity_at_each_root() {
        // Hazen 2003: NPV(h) = (k - h) PV at every IRR k (periodic flows, so the
        // generalised weights reduce to Hazen's NPV(h) = (k - h)/(1 + h) PV_h(x)).
        for (f, roots) in series_with_roots() {
            for &k in &roots {
                for h in [0.0, 0.05, 0.1, 0.3, 2.0] {
                    let pv = capital_pv(&f, k.ln_1p(), h);
                    let npv = npv_f64(&f, h);
                    let scale = f
                        .points
                        .iter()
                        .map(|p| p.amount.to_f64().unwrap().abs())
                        .sum::<f64>();
                    assert!(
                        close(npv, (k - h) * pv, 1e-6 * scale),
                        "k {k} h {h}: npv {npv} vs {}",
                        (k - h) * pv
                    );
                }
            }
        }
    }

    #[test]
    fn balance_identity_holds_at_any_rate_for_uneven_intervals() {
        // Telescoping the balance recursion gives NPV(h) = (k-h) PV + F_n (1+h)^(-t_n)
        // for every k (Teichroew et al. 1965 balances; Hazen 2003 weights).
        let f = dated(&[
            ("2024-01-15", "-1000"),
            ("2024-02-01", "300"),
            ("2024-09-30", "-200"),
            ("2025-06-30", "800"),
            ("2027-03-01", "450"),
        ]);
        let pts = points_f64(&f);
        for k in [-0.5, 0.0, 0.07, 0.1, 0.35, 4.0] {
            for h in [0.0, 0.1, 0.25] {
                let fnl = *balances_f64(&pts, f64::ln_1p(k)).last().unwrap();
                let tn = pts.last().unwrap().0;
                let want = (k - h) * capital_pv(&f, f64::ln_1p(k), h) + fnl * (1.0 + h).powf(-tn);
                assert!(close(npv_f64(&f, h), want, 1e-9), "k {k} h {h}");
            }
        }
        // And the limit k -> h is continuous.
        let a = capital_pv(&f, 0.1f64.ln_1p(), 0.1);
        let b = capital_pv(&f, (0.1f64 + 1e-9).ln_1p(), 0.1);
        assert!(close(a, b, 1e-5));
    }

    #[test]
    fn every_root_agrees_with_npv() {
        // Hazen 2003: the decision from any IRR with its stance agrees with NPV(h).
        for (f, roots) in series_with_roots() {
            for &k in &roots {
                for h in [0.0, 0.02, 0.05, 0.1, 0.15, 0.3, 1.0, 5.0] {
                    let npv = npv_f64(&f, h);
                    if npv.abs() < 1e-6 {
                        continue;
                    }
                    let s = stance(&f, k.ln_1p(), h);
                    let d = decision_for_root(k, h, s);
                    let want = if npv > 0.0 {
                        Decision::Accept
                    } else {
                        Decision::Reject
                    };
                    assert_eq!(d, want, "k {k} h {h} npv {npv} stance {s:?}");
                }
            }
        }
        // Lorie & Savage at 10%: both roots lie above the hurdle and NPV = -773.55 < 0,
        // so both are net borrowings and both reject.
        let f = lorie_savage();
        assert_eq!(
            decision_for_root(0.25, 0.1, stance(&f, 1.25f64.ln(), 0.1)),
            Decision::Reject
        );
        assert_eq!(
            decision_for_root(4.0, 0.1, stance(&f, 5f64.ln(), 0.1)),
            Decision::Reject
        );
        assert_eq!(stance(&f, 5f64.ln(), 0.1), Stance::Borrowing);
    }

    #[test]
    fn stance_at_extreme_rates_is_decided() {
        // -1000 today, +2000 a day later, -1 ten years on: one IRR near 2^365 - 1 (the
        // last flow hardly moves it). The float balance path overflows there; the exact
        // identity NPV(h) = (k - h) PV (Hazen 2003) with NPV(10%) > 0 gives a net investment.
        let f = Flows {
            points: [(0, "-1000"), (1, "2000"), (3650, "-1")]
                .iter()
                .map(|&(o, a)| FlowPoint {
                    offset: o,
                    amount: dec(a),
                    date: None,
                    period: None,
                    note: None,
                })
                .collect(),
            units_per_year: 365,
            periods_per_year: None,
        };
        let g = 365.0 * 2f64.ln();
        assert!(npv_f64(&f, 0.1) > 0.0);
        assert_eq!(stance(&f, g, 0.1), Stance::Investment);
        assert_eq!(
            decision_for_root(f64::INFINITY, 0.1, Stance::Investment),
            Decision::Accept
        );
    }
}
