//! From the roots in `y` to the IRR report: annual and periodic rates, certified
//! intervals, the balance path at each root and the stance at the hurdle.

use super::analysis::{BalanceKind, Certificate, IrrReport, Root, SignBounds};
use super::flows::Flows;
use super::roots::{find_roots, RootSet};
use super::{figures, Decision, Stance};

/// Annual rates above this, or below -99%, describe no economic reality.
pub const EXTREME_HIGH: f64 = 10.0;
/// See [`EXTREME_HIGH`].
pub const EXTREME_LOW: f64 = -0.99;

/// Finds the roots of already normalised flows.
pub fn roots_of(flows: &Flows) -> RootSet {
    let amounts: Vec<_> = flows.points.iter().map(|p| p.amount).collect();
    let offsets: Vec<i64> = flows.points.iter().map(|p| p.offset).collect();
    find_roots(&amounts, &offsets, flows.units_per_year)
}

/// `expm1` that never returns inf: rates too large for a float become `None`.
fn rate_from_log(log_growth: f64) -> Option<f64> {
    let r = log_growth.exp_m1();
    r.is_finite().then_some(r)
}

/// Widens a float interval by a few units in the last place on each side, so that the
/// rounding of the conversion from `y` cannot move an end past the root.
fn widen(lo: f64, hi: f64) -> [f64; 2] {
    let down = lo - 8.0 * f64::EPSILON * lo.abs().max(f64::MIN_POSITIVE);
    let up = hi + 8.0 * f64::EPSILON * hi.abs().max(f64::MIN_POSITIVE);
    [down, up]
}

/// The annual-rate interval for an interval of annual log growth, when both ends
/// are finite binary floats.
fn annual_interval(log_lo: f64, log_hi: f64) -> Option<[f64; 2]> {
    let [lo, hi] = widen(log_lo.exp_m1(), log_hi.exp_m1());
    (lo.is_finite() && hi.is_finite()).then_some([lo.max(-1.0), hi])
}

/// Builds the IRR report for normalised flows at an annual hurdle (`None`: no hurdle,
/// so no stance or decision is read: they are left neutral). With
/// `with_paths` false the balance-path rows are left out (batch screening).
pub fn irr_report(flows: &Flows, hurdle: Option<f64>, with_paths: bool) -> IrrReport {
    let set = roots_of(flows);
    report_from_set(flows, &set, hurdle, with_paths)
}

/// Builds the IRR report from a root set.
pub fn report_from_set(
    flows: &Flows,
    set: &RootSet,
    hurdle: Option<f64>,
    with_paths: bool,
) -> IrrReport {
    let per_year = 1.0 / set.step_years;
    let npv_sign = match hurdle {
        Some(h) if !set.roots.is_empty() => figures::npv_sign(flows, h),
        _ => 0,
    };
    // Batch screening classifies the balance path without building its rows.
    let pts: Vec<(i64, f64)> = if with_paths || set.roots.is_empty() {
        Vec::new()
    } else if set.coefficients.len() == flows.points.len() {
        // (The root finder's floats of these same flows.)
        flows
            .points
            .iter()
            .zip(&set.coefficients)
            .map(|(p, &c)| (p.offset, c))
            .collect()
    } else {
        flows
            .points
            .iter()
            .map(|p| (p.offset, super::flows::amount_f64(p.amount)))
            .collect()
    };
    let roots = set
        .roots
        .iter()
        .map(|r| {
            let log_annual = r.y * per_year;
            let annual = rate_from_log(log_annual);
            let periodic = flows
                .periods_per_year
                .map(|_| (r.y / set.step_units as f64).exp_m1())
                .filter(|x| x.is_finite());
            let (log_lo, log_hi) = (r.lo * per_year, r.hi * per_year);
            let (path, balance_kind) = if with_paths {
                let path = figures::balance_path(flows, log_annual);
                let kind = figures::balance_kind(&path);
                (path, kind)
            } else {
                (
                    Vec::new(),
                    balance_kind_f64(&pts, flows.units_per_year, log_annual),
                )
            };
            let (stance, decision) = match hurdle {
                Some(h) => {
                    stance_and_decision(flows, h, npv_sign, log_annual, (log_lo, log_hi), annual)
                }
                None => (Stance::Neutral, Decision::Indifferent),
            };
            Root {
                annual_rate: annual,
                periodic_rate: periodic,
                log10_annual_growth: log_annual / std::f64::consts::LN_10,
                multiplicity: r.multiplicity,
                interval: annual_interval(log_lo, log_hi),
                log10_interval: widen(
                    log_lo / std::f64::consts::LN_10,
                    log_hi / std::f64::consts::LN_10,
                ),
                balance_kind,
                stance,
                decision,
                extreme: annual.is_none_or(|k| !(EXTREME_LOW..=EXTREME_HIGH).contains(&k)),
                balance_path: path,
            }
        })
        .collect();
    IrrReport {
        count: set.count(),
        upper_bound: set.descartes,
        certified: set.certified,
        bounds: SignBounds {
            descartes: set.descartes,
            above_zero: set.above_zero,
            below_zero: set.below_zero,
        },
        certificate: certificate(set),
        roots,
        unresolved: set
            .unresolved
            .iter()
            .map(|&(a, b)| annual_interval(a * per_year, b * per_year).unwrap_or([-1.0, f64::MAX]))
            .collect(),
        complex_reading: None,
    }
}

/// The stance at the hurdle `h` of the root with log growth `log_annual` (certified
/// within `log_bounds`) and the decision it gives.
///
/// Hazen (2003): at an IRR k, NPV(h) = (k - h) PV_h exactly, so the sign of the
/// capital stream's PV follows from the NPV at the hurdle whenever that is not zero
/// and the root's interval lies on one side of the hurdle. This stays exact at extreme
/// rates, where summing the stream in floats cannot.
fn stance_and_decision(
    flows: &Flows,
    h: f64,
    npv_sign: i8,
    log_annual: f64,
    (log_lo, log_hi): (f64, f64),
    annual: Option<f64>,
) -> (Stance, Decision) {
    let log_h = h.ln_1p();
    let side = if log_lo > log_h {
        1
    } else if log_hi < log_h {
        -1
    } else {
        0
    };
    let stance = if npv_sign != 0 && side != 0 {
        if npv_sign == side {
            Stance::Investment
        } else {
            Stance::Borrowing
        }
    } else {
        figures::stance(flows, log_annual, h)
    };
    let decision = match annual {
        Some(k) => figures::decision_for_root(k, h, stance),
        None => match stance {
            Stance::Investment => Decision::Accept,
            Stance::Borrowing => Decision::Reject,
            Stance::Neutral => Decision::Indifferent,
        },
    };
    (stance, decision)
}

/// The balance-path classification without building the rows (batch screening): the
/// rule of [`figures::balance_kind`] on binary-float balances, computed in the stable
/// direction as [`figures::balances_at_root`] does (backwards above 0%, forwards at or
/// below it). Times are integer clock offsets, so the growth factor of each distinct
/// gap is computed once.
/// [`balance_kind_f64`] above 0% for evenly spaced flows (`per_unit` the log growth a
/// clock unit), four steps at a time: the balance four steps back is the current one
/// (less the flow) shrunk four times, less the other three flows shrunk, and only that
/// short chain waits on the one before, so the steps overlap. `None` (use the step by
/// step reading, which clears the remainders of cancellation) when the spacing is not
/// even, the series is short, or a balance comes close to cancelling out.
fn balance_kind_even(pts: &[(i64, f64)], tol: f64, per_unit: f64) -> Option<BalanceKind> {
    let n = pts.len();
    if n < 8 {
        return None;
    }
    let gap = pts[1].0 - pts[0].0;
    let shrink = (-per_unit * gap as f64).exp();
    let even = if gap == 1 {
        // (Offsets strictly increase: steps of 1 all the way exactly when they span
        // n - 1.)
        pts[n - 1].0 - pts[0].0 == n as i64 - 1
    } else {
        pts.windows(2).all(|w| w[1].0 - w[0].0 == gap)
    };
    if !even {
        return None;
    }
    let c = |k: usize| pts[k].1;
    let (s1, s2) = (shrink, shrink * shrink);
    let (s3, s4) = (s2 * shrink, s2 * s2);
    let (mut positive, mut negative) = (false, false);
    // Flags a balance, or gives up when it is the near-cancellation of larger parts.
    let mut note = |b: f64, size: f64| -> Option<()> {
        if b.abs() <= 1e-7 * size {
            return None;
        }
        positive |= b > tol;
        negative |= b < -tol;
        Some(())
    };
    // Balance after flow k (k from n - 1 down); the one after the last flow is zero.
    let mut bal = 0.0f64;
    let mut k = n - 1;
    while k >= 4 {
        let a = bal - c(k);
        // The three flows before flow k, shrunk to the balances after k - 2, k - 3
        // and k - 4.
        let x1 = c(k - 1) * s1;
        let x2 = c(k - 1) * s2 + c(k - 2) * s1;
        let x3 = c(k - 1) * s3 + c(k - 2) * s2 + c(k - 3) * s1;
        let size = bal.abs() + c(k).abs();
        note(a * s1, size * s1)?;
        note(a * s2 - x1, size * s2 + x1.abs())?;
        note(
            a * s3 - x2,
            size * s3 + c(k - 1).abs() * s2 + c(k - 2).abs() * s1,
        )?;
        let b4 = a * s4 - x3;
        note(
            b4,
            size * s4 + c(k - 1).abs() * s3 + c(k - 2).abs() * s2 + c(k - 3).abs() * s1,
        )?;
        bal = b4;
        k -= 4;
    }
    while k >= 1 {
        let size = bal.abs() + c(k).abs();
        bal = (bal - c(k)) * s1;
        note(bal, size * s1)?;
        k -= 1;
    }
    Some(kind_of(positive, negative))
}

/// The kind of a balance path that has (or lacks) balances above and below the
/// tolerance.
fn kind_of(positive: bool, negative: bool) -> BalanceKind {
    match (positive, negative) {
        (false, _) => BalanceKind::PureInvestment,
        (true, false) => BalanceKind::PureBorrowing,
        (true, true) => BalanceKind::Mixed,
    }
}

fn balance_kind_f64(pts: &[(i64, f64)], units_per_year: u64, log_growth: f64) -> BalanceKind {
    let n = pts.len();
    if n == 0 {
        return BalanceKind::PureInvestment;
    }
    let scale = pts.iter().map(|p| p.1.abs()).fold(0.0, f64::max);
    let tol = scale * 1e-9;
    let per_unit = log_growth / units_per_year.max(1) as f64;
    let mut cached = (i64::MIN, 1.0f64);
    let mut factor = |gap: i64, sign: f64| {
        if cached.0 != gap {
            cached = (gap, (sign * per_unit * gap as f64).exp());
        }
        cached.1
    };
    // The balances before the last flow, classified as they are made (the one after
    // it is zero at a root): tiny remainders of cancellation count as zero.
    let (mut positive, mut negative) = (false, false);
    if log_growth.is_nan() || log_growth <= 0.0 {
        let mut bal = 0.0f64;
        for k in 0..n - 1 {
            let grown = if k > 0 && bal != 0.0 {
                bal * factor(pts[k].0 - pts[k - 1].0, 1.0)
            } else {
                0.0
            };
            bal = grown + pts[k].1;
            if bal.is_nan()
                || (bal.is_finite() && bal.abs() <= 1e-9 * (grown.abs() + pts[k].1.abs()))
            {
                bal = 0.0;
            }
            positive |= bal > tol;
            negative |= bal < -tol;
        }
    } else {
        if let Some(kind) = balance_kind_even(pts, tol, per_unit) {
            return kind;
        }
        // Backwards from the zero balance after the last flow: each step shrinks, so
        // rounding errors do not grow.
        let mut bal = 0.0f64;
        for k in (1..n).rev() {
            let shrink = factor(pts[k].0 - pts[k - 1].0, -1.0);
            let shrunk = (bal - pts[k].1) * shrink;
            bal = if shrunk.abs() <= 1e-9 * (bal.abs() + pts[k].1.abs()) * shrink {
                0.0
            } else {
                shrunk
            };
            positive |= bal > tol;
            negative |= bal < -tol;
        }
    }
    kind_of(positive, negative)
}

/// How the count was established.
fn certificate(set: &RootSet) -> Certificate {
    let count = set.count();
    if !set.certified {
        return Certificate::Uncertified {
            count,
            undecided: set.unresolved.len(),
            descartes: set.descartes,
        };
    }
    if set.descartes == 0 {
        return Certificate::NoSignChange;
    }
    if let Some(y) = set.proven_at {
        return Certificate::Laguerre {
            count,
            annual_rate: (y / set.step_years).exp_m1(),
            descartes: set.descartes,
        };
    }
    Certificate::Enclosures {
        count,
        descartes: set.descartes,
        cumulative: set.above_zero.zip(set.below_zero),
    }
}
