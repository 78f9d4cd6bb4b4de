//! Payback and discounted payback: when the running total first turns non-negative.

use super::*;

/// The first time a cumulative sum that has been negative reaches zero or more,
/// interpolated linearly between the two flow times around it.
pub(super) fn first_recovery(times: &[f64], cum_before: &[f64], flows: &[f64]) -> Option<usize> {
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

pub(super) fn interpolate(times: &[f64], cum_before: &[f64], flows: &[f64], k: usize) -> f64 {
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
