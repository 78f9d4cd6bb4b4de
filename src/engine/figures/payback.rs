//! Payback and discounted payback: the first time the running total of the flows turns
//! non-negative and stays so until the end of the forecast (docs/methods.md, "Other
//! figures").

use super::*;

/// Where a running total pays back: the index of the flow after which it stays
/// non-negative, or why there is none. `totals[k]` is the running total after flow `k`;
/// `first_positive` says the investor is paid first.
fn payback_index(totals_negative: &[bool], first_positive: bool) -> (PaybackStatus, Option<usize>) {
    if first_positive || totals_negative.is_empty() {
        return (PaybackStatus::NotApplicable, None);
    }
    if !totals_negative.iter().any(|n| *n) {
        // Never out of pocket: nothing to pay back.
        return (PaybackStatus::NotApplicable, None);
    }
    if *totals_negative.last().unwrap_or(&true) {
        return (PaybackStatus::NotReached, None);
    }
    // The last negative running total; the flow after it pays back for good.
    let last_negative = totals_negative.iter().rposition(|n| *n).unwrap_or_default();
    (PaybackStatus::Reached, Some(last_negative + 1))
}

/// The time at which flow `k` brings the running total from `before` (< 0) to zero:
/// for periodic flows, linearly within the flow's own period, as if that period's flow
/// arrived evenly over it (so periods without flows are not spread over); for dated
/// flows, the flow's own time (no interpolation between dates).
fn payback_time(times: &[f64], k: usize, before: f64, flow: f64, period: Option<f64>) -> f64 {
    match period {
        Some(step) => {
            let previous = if k == 0 { 0.0 } else { times[k - 1] };
            let start = previous.max(times[k] - step);
            let frac = if flow > 0.0 {
                (-before / flow).clamp(0.0, 1.0)
            } else {
                1.0
            };
            start + frac * (times[k] - start)
        }
        None => times[k],
    }
}

/// Simple payback (undiscounted; its sign tests in exact decimals) and discounted
/// payback (flows discounted to the start at the hurdle), each with its status: paid
/// back (the running total, once negative, turns non-negative and stays so to the last
/// flow), not paid back within the forecast, or not applicable (the investor is paid
/// first, or is never out of pocket). Dated flows give the date of the flow that pays
/// back; periodic flows a time in years interpolated within that flow's period. Also
/// whether an earlier recovery of the undiscounted total did not last.
pub fn payback(flows: &Flows, hurdle: f64) -> Payback {
    let n = flows.normalised();
    let times: Vec<f64> = (0..n.points.len()).map(|i| n.years(i)).collect();
    let period = n.periods_per_year.map(|m| 1.0 / f64::from(m));
    let method = if period.is_some() {
        PaybackMethod::WithinPeriod
    } else {
        PaybackMethod::FlowDate
    };
    let first_positive = n.points.first().is_some_and(|p| p.amount > Decimal::ZERO);

    // Undiscounted, exact.
    let mut exact = Decimal::ZERO;
    let mut before_exact = Vec::with_capacity(n.points.len());
    let mut negative = Vec::with_capacity(n.points.len());
    for p in &n.points {
        before_exact.push(exact);
        exact += p.amount;
        negative.push(exact < Decimal::ZERO);
    }
    let (status, simple_idx) = payback_index(&negative, first_positive);
    // An earlier recovery that did not last: non-negative after having been negative,
    // then negative again.
    let mut been_negative = false;
    let mut recovered = false;
    let mut turns_negative_again = false;
    for &neg in &negative {
        if neg {
            if recovered {
                turns_negative_again = true;
            }
            been_negative = true;
        } else if been_negative {
            recovered = true;
        }
    }
    let amount = |k: usize| n.points[k].amount.to_f64().unwrap_or(0.0);
    let simple_years = simple_idx.map(|k| {
        payback_time(
            &times,
            k,
            before_exact[k].to_f64().unwrap_or(0.0),
            amount(k),
            period,
        )
    });

    // Discounted at the hurdle, in binary floating point.
    let (discounted_status, discounted_idx, dbefore, dflows) = if hurdle > -1.0 {
        let lh = hurdle.ln_1p();
        let disc: Vec<f64> = times
            .iter()
            .enumerate()
            .map(|(k, &t)| amount(k) * (-lh * t).exp())
            .collect();
        let mut acc = 0.0;
        let mut before = Vec::with_capacity(disc.len());
        let mut neg = Vec::with_capacity(disc.len());
        for &c in &disc {
            before.push(acc);
            acc += c;
            neg.push(acc < 0.0);
        }
        let (st, idx) = payback_index(&neg, first_positive);
        (st, idx, before, disc)
    } else {
        (PaybackStatus::NotReached, None, Vec::new(), Vec::new())
    };
    let discounted_years =
        discounted_idx.map(|k| payback_time(&times, k, dbefore[k], dflows[k], period));
    let date_of = |idx: Option<usize>| {
        idx.filter(|_| period.is_none())
            .and_then(|k| n.points[k].date)
            .map(|d| d.to_string())
    };
    Payback {
        simple_years,
        discounted_years,
        turns_negative_again,
        status,
        discounted_status,
        method,
        simple_date: date_of(simple_idx),
        discounted_date: date_of(discounted_idx),
    }
}
