//! Figures of the capital employed: MIRR, return on invested capital, money multiple
//! and profitability index.

use super::*;

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
pub(super) fn ric_final_balance(pts: &[(f64, f64)], y: f64, log_finance: f64) -> f64 {
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
