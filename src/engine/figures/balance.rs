//! Balance paths at a rate and their classification, the capital's present value, the
//! investment/borrowing stance at each IRR and the decision it gives.

use super::*;

/// The balance path in floats: `F_0 = C_0`, `F_k = F_(k-1) e^(y dt) + C_k`. A zero
/// balance stays zero whatever the growth, so an infinite factor never meets a zero (no
/// NaN). A balance that is a billionth or less of the two terms it was made from is
/// cancellation noise (the rate is known to a few ulps, and at large rates the terms
/// are large), and counts as exactly zero.
pub(crate) fn balances_f64(pts: &[(f64, f64)], log_growth: f64) -> Vec<f64> {
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
pub(crate) fn balances_at_root(pts: &[(f64, f64)], log_growth: f64) -> Vec<f64> {
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
pub(super) fn growth_ratio(d: f64, dt: f64) -> f64 {
    if d == 0.0 {
        dt
    } else if d > 30.0 {
        (d * (dt - 1.0)).exp() * ((-dt * d).exp_m1() / (-d).exp_m1())
    } else {
        (dt * d).exp_m1() / d.exp_m1()
    }
}

#[cfg(test)]
/// Present value at the hurdle of the capital stream `x_j = -F_j` (j < n) at the rate
/// `k = e^log_growth - 1`, weighted for uneven intervals (Hazen 2003, generalised):
/// `PV = sum_j x_j (1+h)^(-t_(j+1)) [(1+k)^dt_j - (1+h)^dt_j] / (k - h)`.
/// For every `k`, `NPV(h) = (k - h) PV + F_n (1+h)^(-t_n)`, so at an IRR `NPV(h) = (k - h) PV`.
pub(crate) fn capital_pv(flows: &Flows, log_growth: f64, hurdle: f64) -> f64 {
    capital_pv_terms(&points_f64(flows), log_growth, hurdle).0
}

/// The capital PV and the sum of the sizes of its terms (to judge cancellation).
pub(super) fn capital_pv_terms(pts: &[(f64, f64)], log_growth: f64, hurdle: f64) -> (f64, f64) {
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
pub(crate) fn decision_for_root(k: f64, h: f64, stance: Stance) -> Decision {
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
