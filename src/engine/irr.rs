//! From the roots in `y` to the IRR report: annual and periodic rates, certified
//! intervals, the balance path at each root and the stance at the hurdle.

use super::analysis::{BalanceKind, BalanceRow, Certificate, IrrReport, Root, SignBounds};
use super::flows::Flows;
use super::roots::{find_roots, ExactCheck, RootSet};
use super::{figures, Decision, Stance};

/// Annual rates above this, or below -99%, describe no economic reality.
pub(crate) const EXTREME_HIGH: f64 = 10.0;
/// See [`EXTREME_HIGH`].
pub(crate) const EXTREME_LOW: f64 = -0.99;

/// Finds the roots of already normalised flows.
pub(crate) fn roots_of(flows: &Flows) -> RootSet {
    let amounts: Vec<_> = flows.points.iter().map(|p| p.amount).collect();
    let offsets: Vec<i64> = flows.points.iter().map(|p| p.offset).collect();
    find_roots(&amounts, &offsets, flows.units_per_year)
}

/// `expm1` that never returns inf: rates too large for a float become `None`.
fn rate_from_log(log_growth: f64) -> Option<f64> {
    let r = log_growth.exp_m1();
    r.is_finite().then_some(r)
}

/// Relative error allowed for the scaling of a log-growth bound to a year (the
/// clock's step in years and its reciprocal are each rounded once, the product
/// once more) and for the platform's `exp_m1` (not correctly rounded: glibc documents
/// 1 to 2 ulp): four ulp for each, to spare.
const SCALE_ULPS: f64 = 8.0 * f64::EPSILON;

fn next_toward(v: f64, up: bool) -> f64 {
    if v.is_nan() || v.is_infinite() {
        return v;
    }
    if v == 0.0 {
        let tiny = f64::from_bits(1);
        return if up { tiny } else { -tiny };
    }
    let b = v.to_bits();
    let away = (v > 0.0) == up;
    f64::from_bits(if away { b + 1 } else { b - 1 })
}

/// `v` moved down (`up` false) or up by the relative allowance `rel` and one more ulp.
fn pad(v: f64, rel: f64, up: bool) -> f64 {
    let d = rel * v.abs();
    next_toward(if up { v + d } else { v - d }, up)
}

/// An outward interval for a float interval computed with a relative error of at most
/// [`SCALE_ULPS`] at each end.
fn widen(lo: f64, hi: f64) -> [f64; 2] {
    [pad(lo, SCALE_ULPS, false), pad(hi, SCALE_ULPS, true)]
}

/// The annual-rate interval for an interval of annual log growth (each end computed
/// with a relative error of at most [`SCALE_ULPS`]), when both ends are finite binary
/// floats. The log ends are widened before `exp_m1`, whose slope 1 + r turns an
/// absolute error in the log into a relative error of the rate that grows with the
/// log itself (a root near 10^20 % carries 46 times the log's relative error).
fn annual_interval(log_lo: f64, log_hi: f64) -> Option<[f64; 2]> {
    let [l, h] = widen(log_lo, log_hi);
    let [lo, hi] = widen(l.exp_m1(), h.exp_m1());
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
pub(crate) fn report_from_set(
    flows: &Flows,
    set: &RootSet,
    hurdle: Option<f64>,
    with_paths: bool,
) -> IrrReport {
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
    report_with(
        set,
        flows.periods_per_year,
        |log_annual, log_bounds, annual| {
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
                Some(h) => stance_and_decision(flows, h, npv_sign, log_annual, log_bounds, annual),
                None => (Stance::Neutral, Decision::Indifferent),
            };
            (path, balance_kind, stance, decision)
        },
    )
}

/// The IRR report of periodic flows at periods 0, 1, ..., n - 1 (every amount non-zero,
/// so already normalised) without a hurdle or balance paths: what [`irr_report`] gives
/// for the same flows, from the amounts alone (batch screening's usual line, which
/// then needs no flow points).
pub(crate) fn periodic_report(amounts: &[rust_decimal::Decimal], per_year: u32) -> IrrReport {
    let offsets: Vec<i64> = (0..amounts.len() as i64).collect();
    let set = find_roots(amounts, &offsets, u64::from(per_year));
    let pts: Vec<(i64, f64)> = if set.roots.is_empty() {
        Vec::new()
    } else if set.coefficients.len() == amounts.len() {
        offsets
            .into_iter()
            .zip(set.coefficients.iter().copied())
            .collect()
    } else {
        offsets
            .into_iter()
            .zip(amounts.iter().map(|&a| super::flows::amount_f64(a)))
            .collect()
    };
    let units_per_year = u64::from(per_year);
    report_with(&set, Some(per_year), |log_annual, _, _| {
        let kind = balance_kind_f64(&pts, units_per_year, log_annual);
        (Vec::new(), kind, Stance::Neutral, Decision::Indifferent)
    })
}

/// A root's balance path (empty when not asked for), balance kind, stance and decision.
type RootReading = (Vec<BalanceRow>, BalanceKind, Stance, Decision);

/// The report of a root set; `reading(log_annual, (log_lo, log_hi), annual)` gives each
/// root's [`RootReading`]. `periods_per_year` is set for periodic flows.
fn report_with(
    set: &RootSet,
    periods_per_year: Option<u32>,
    mut reading: impl FnMut(f64, (f64, f64), Option<f64>) -> RootReading,
) -> IrrReport {
    let per_year = 1.0 / set.step_years;
    let roots = set
        .roots
        .iter()
        .map(|r| {
            let log_annual = r.y * per_year;
            let annual = rate_from_log(log_annual);
            let periodic = periods_per_year
                .map(|_| (r.y / set.step_units as f64).exp_m1())
                .filter(|x| x.is_finite());
            let (log_lo, log_hi) = (r.lo * per_year, r.hi * per_year);
            let (path, balance_kind, stance, decision) =
                reading(log_annual, (log_lo, log_hi), annual);
            Root {
                annual_rate: annual,
                periodic_rate: periodic,
                log10_annual_growth: log_annual / std::f64::consts::LN_10,
                multiplicity: r.multiplicity,
                interval: annual_interval(log_lo, log_hi),
                log10_interval: {
                    // The scaled log ends, then the division by the rounded ln 10.
                    let [l, h] = widen(log_lo, log_hi);
                    widen(l / std::f64::consts::LN_10, h / std::f64::consts::LN_10)
                },
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
        exact_check: match set.exact {
            ExactCheck::NotNeeded => None,
            ExactCheck::Settled => Some("settled"),
            ExactCheck::OverBudget => Some("over-budget"),
        },
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

/// Balances within this of zero count as zero: a billionth of the largest flow, the
/// tolerance of [`figures::balance_kind`].
fn tolerance(pts: &[(i64, f64)]) -> f64 {
    // The largest size, taken in four running maxima that do not wait on one another
    // (a maximum is exact, so the order does not change it).
    let mut top = [0.0f64; 4];
    let mut quads = pts.chunks_exact(4);
    for q in &mut quads {
        for (m, p) in top.iter_mut().zip(q) {
            *m = m.max(p.1.abs());
        }
    }
    for p in quads.remainder() {
        top[0] = top[0].max(p.1.abs());
    }
    top[0].max(top[1]).max(top[2].max(top[3])) * 1e-9
}

/// The balance-path classification without building the rows (batch screening): the
/// rule of [`figures::balance_kind`] on binary-float balances, computed in the stable
/// direction as [`figures::balances_at_root`] does (backwards above 0%, forwards at or
/// below it). Times are integer clock offsets, so the growth factor of each distinct
/// gap is computed once.
fn balance_kind_f64(pts: &[(i64, f64)], units_per_year: u64, log_growth: f64) -> BalanceKind {
    if pts.is_empty() {
        return BalanceKind::PureInvestment;
    }
    if log_growth > 0.0 {
        let per_unit = log_growth / units_per_year.max(1) as f64;
        if let Some(kind) = balance_kind_even(pts, tolerance(pts), per_unit) {
            return kind;
        }
    }
    balance_kind_steps(pts, units_per_year, log_growth)
}

/// [`balance_kind_f64`] one flow at a time, for any spacing (the reference of
/// [`balance_kind_even`]).
fn balance_kind_steps(pts: &[(i64, f64)], units_per_year: u64, log_growth: f64) -> BalanceKind {
    let n = pts.len();
    if n == 0 {
        return BalanceKind::PureInvestment;
    }
    let tol = tolerance(pts);
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
    if !set.certified && set.exact == ExactCheck::OverBudget {
        return Certificate::ExactOverBudget {
            count,
            undecided: set.unresolved.len(),
            descartes: set.descartes,
        };
    }
    if set.certified && set.exact == ExactCheck::Settled {
        return Certificate::Exact {
            count,
            descartes: set.descartes,
        };
    }
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::figures::tests::{lorie_savage, periodic};
    use crate::engine::flows::FlowPoint;
    use proptest::prelude::*;
    use rust_decimal::Decimal;

    fn annual_rates(report: &IrrReport) -> Vec<f64> {
        report
            .roots
            .iter()
            .map(|r| r.annual_rate.expect("a finite rate"))
            .collect()
    }

    /// Each rate within `tol` of the expected one, in order, and nothing else.
    fn assert_rates(report: &IrrReport, expected: &[f64], tol: f64) {
        let found = annual_rates(report);
        assert_eq!(
            found.len(),
            expected.len(),
            "{found:?} against {expected:?}"
        );
        for (f, e) in found.iter().zip(expected) {
            assert!((f - e).abs() <= tol, "{found:?} against {expected:?}");
        }
        assert_eq!(report.count as usize, expected.len());
    }

    /// The examples of the `irr` docstring of numpy-financial 1.0.0 (published rounded
    /// to five decimals), with every real root of each series computed independently
    /// with mpmath's `polyroots` at 40 digits in the growth factor `1 + r`. numpy-financial
    /// returns one root per series; the engine must return all of them, that one
    /// included.
    #[test]
    fn the_numpy_financial_examples_with_every_root() {
        let cases: [(&[&str], &[f64], f64); 5] = [
            (
                &["-100", "39", "59", "55", "20"],
                &[0.2809484211599611],
                0.28095,
            ),
            (&["-100", "0", "0", "74"], &[-0.09549583034897252], -0.0955),
            (
                &["-100", "100", "0", "-7"],
                &[-0.6788943736323865, -0.08329966618493269],
                -0.0833,
            ),
            (&["-100", "100", "0", "7"], &[0.06205848562992946], 0.06206),
            (
                &["-5", "10.5", "1", "-8", "1"],
                &[-0.8702012474847412, 0.08859833852775535, 0.7095595276861836],
                0.0886,
            ),
        ];
        for (amounts, roots, published) in cases {
            let report = irr_report(&periodic(amounts, 1), Some(0.1), true);
            assert_rates(&report, roots, 1e-12);
            assert!(report.certified, "{amounts:?}");
            assert!(
                annual_rates(&report)
                    .iter()
                    .any(|r| (r - published).abs() < 5e-5 + 1e-12),
                "{amounts:?}: the published {published} is not among the roots"
            );
        }
    }

    /// The pump of Lorie and Savage (1955): −1,600, +10,000, −10,000 a year apart have
    /// IRRs of exactly 25% and 400%. Their balance paths (Teichroew, Robichek and
    /// Montalbano 1965: F_0 = C_0, F_k = F_(k-1)(1 + r) + C_k) are −1,600, 8,000, 0 at
    /// 25% and −1,600, 2,000, 0 at 400% (worked by hand): both mixed. At a 10% hurdle
    /// the NPV is −1,600 + 10,000/1.1 − 10,000/1.21 = −773.55 < 0 (by hand), and by
    /// Hazen (2003), NPV(h) = (k − h) PV_h at a root k, so with k above h the capital's
    /// present value is negative at both roots: both are borrowing, both rejected.
    #[test]
    fn the_pump_of_lorie_and_savage() {
        let report = irr_report(&lorie_savage(), Some(0.10), true);
        assert_rates(&report, &[0.25, 4.0], 1e-13);
        assert!(report.certified);
        assert_eq!(report.upper_bound, 2);
        let balances: Vec<Vec<Decimal>> = report
            .roots
            .iter()
            .map(|r| r.balance_path.iter().map(|b| b.balance).collect())
            .collect();
        assert_eq!(
            balances,
            [
                [Decimal::from(-1600), Decimal::from(8000), Decimal::ZERO],
                [Decimal::from(-1600), Decimal::from(2000), Decimal::ZERO]
            ]
        );
        for r in &report.roots {
            assert_eq!(r.balance_kind, BalanceKind::Mixed);
            assert_eq!(r.stance, Stance::Borrowing);
            assert_eq!(r.decision, Decision::Reject);
            assert!(
                !r.extreme,
                "400% is within the range this module calls ordinary"
            );
            assert_eq!(r.multiplicity, 1);
            // The certified interval holds the exact root, in rates and in log10(1 + r).
            let [lo, hi] = r.interval.expect("finite interval");
            let k = r.annual_rate.expect("rate");
            let exact = if k < 1.0 { 0.25 } else { 4.0 };
            assert!(lo <= exact && exact <= hi, "{lo} {hi}");
            let log10 = (1.0f64 + exact).log10();
            assert!(r.log10_interval[0] <= log10 && log10 <= r.log10_interval[1]);
        }
        // Batch screening classifies without the rows, and agrees.
        let fast = irr_report(&lorie_savage(), Some(0.10), false);
        assert!(fast.roots.iter().all(|r| r.balance_path.is_empty()));
        assert_eq!(
            fast.roots
                .iter()
                .map(|r| r.balance_kind)
                .collect::<Vec<_>>(),
            [BalanceKind::Mixed, BalanceKind::Mixed]
        );
    }

    /// A single investment: −100 then +121 two years later has its IRR at exactly 10%
    /// (1.1² = 1.21, by hand); below the root an investment is accepted, above it
    /// rejected (common practice). A loan, +100 then −121, is the mirror: pure
    /// borrowing, accepted only when the hurdle is above its rate.
    #[test]
    fn an_investment_and_a_loan_at_ten_percent() {
        let invest = periodic(&["-100", "0", "121"], 1);
        let at_8 = irr_report(&invest, Some(0.08), true);
        assert_rates(&at_8, &[0.10], 1e-14);
        let r = &at_8.roots[0];
        assert_eq!(r.balance_kind, BalanceKind::PureInvestment);
        assert_eq!(
            (r.stance, r.decision),
            (Stance::Investment, Decision::Accept)
        );
        let at_12 = irr_report(&invest, Some(0.12), true);
        assert_eq!(at_12.roots[0].decision, Decision::Reject);

        let loan = periodic(&["100", "0", "-121"], 1);
        let at_12 = irr_report(&loan, Some(0.12), true);
        let r = &at_12.roots[0];
        assert_eq!(r.balance_kind, BalanceKind::PureBorrowing);
        assert_eq!(
            (r.stance, r.decision),
            (Stance::Borrowing, Decision::Accept)
        );
        assert_eq!(
            irr_report(&loan, Some(0.08), true).roots[0].decision,
            Decision::Reject
        );
        // Without a hurdle nothing is decided.
        let none = irr_report(&invest, None, true);
        assert_eq!(
            (none.roots[0].stance, none.roots[0].decision),
            (Stance::Neutral, Decision::Indifferent)
        );
    }

    /// A monthly series: −100 then +101 a month later earns 1% a month, which is
    /// 1.01¹² − 1 = 0.126825030131969720661201 a year (exact decimal expansion,
    /// computed by hand from the binomial expansion and checked with Python's
    /// `decimal` module).
    #[test]
    fn a_monthly_rate_and_its_annual_equivalent() {
        let report = irr_report(&periodic(&["-100", "101"], 12), Some(0.05), true);
        assert_rates(&report, &[0.12682503013196972], 1e-14);
        let periodic_rate = report.roots[0].periodic_rate.expect("a periodic rate");
        assert!((periodic_rate - 0.01).abs() < 1e-15, "{periodic_rate}");
        // Dated flows carry no periodic rate: the same flows 31 days apart on an
        // Act/365F clock grow by 1.01^(365/31) a year.
        let dated = flows_at(&[Decimal::from(-100), Decimal::from(101)], &[0, 31], 365);
        let report = irr_report(&dated, Some(0.05), true);
        let expected = 1.01f64.powf(365.0 / 31.0) - 1.0;
        assert_rates(&report, &[expected], 1e-13);
        assert_eq!(report.roots[0].periodic_rate, None);
    }

    /// A double root: −1, +2.2, −1.21 is −(1.1 − x)² in x = 1 + r, so 10% is a root of
    /// multiplicity two (by hand); Descartes' bound is two and the count, with
    /// multiplicity, is two.
    #[test]
    fn a_double_root_at_ten_percent() {
        let report = irr_report(&periodic(&["-1", "2.2", "-1.21"], 1), Some(0.05), true);
        assert_eq!(report.roots.len(), 1);
        let r = &report.roots[0];
        assert_eq!(r.multiplicity, 2);
        assert!((r.annual_rate.expect("rate") - 0.10).abs() < 1e-12);
        assert_eq!(report.count, 2);
    }

    /// Flows that never change sign have no IRR (Descartes' rule of signs), and
    /// 1,000, −3,000, 2,500 has none either: 1000x² − 3000x + 2500 has discriminant
    /// 9·10⁶ − 10⁷ < 0 (by hand), though its signs change twice.
    #[test]
    fn no_real_rate() {
        let same_sign = irr_report(&periodic(&["100", "50", "25"], 1), Some(0.1), true);
        assert_eq!((same_sign.count, same_sign.upper_bound), (0, 0));
        assert!(same_sign.certified && same_sign.roots.is_empty());
        let complex = irr_report(&periodic(&["1000", "-3000", "2500"], 1), Some(0.1), true);
        assert_eq!((complex.count, complex.upper_bound), (0, 2));
        assert!(complex.certified && complex.roots.is_empty());
    }

    /// −1 then +16 a year later is 1,500% (by hand): beyond [`EXTREME_HIGH`], so flagged;
    /// −100 then +0.5 is −99.5%, below [`EXTREME_LOW`].
    #[test]
    fn extreme_rates_are_flagged() {
        let high = irr_report(&periodic(&["-1", "16"], 1), None, true);
        assert_rates(&high, &[15.0], 1e-12);
        assert!(high.roots[0].extreme);
        let low = irr_report(&periodic(&["-100", "0.5"], 1), None, true);
        assert_rates(&low, &[-0.995], 1e-12);
        assert!(low.roots[0].extreme);
    }

    /// The conversions this module makes: `rate_from_log` is `e^y − 1` and gives up
    /// past binary floats; `widen` moves each end outwards.
    #[test]
    fn conversions() {
        assert_eq!(rate_from_log(0.0), Some(0.0));
        assert!((rate_from_log(2.0f64.ln()).expect("finite") - 1.0).abs() < 1e-15);
        assert_eq!(rate_from_log(1000.0), None);
        let [lo, hi] = widen(0.25, 0.25);
        assert!(lo < 0.25 && 0.25 < hi && hi - lo < 1e-14);
        let [lo, hi] = widen(-0.5, 0.0);
        assert!(lo < -0.5 && hi > 0.0);
        assert_eq!(annual_interval(-800.0, 0.0).expect("finite")[0], -1.0);
        assert_eq!(annual_interval(0.0, 1000.0), None);
    }

    /// Periodic amounts (cents) in `-200_000..200_000` as decimals with two places.
    fn cents(raw: &[i64]) -> Vec<Decimal> {
        raw.iter().map(|&c| Decimal::new(c, 2)).collect()
    }

    fn flows_at(amounts: &[Decimal], offsets: &[i64], units_per_year: u64) -> Flows {
        Flows {
            points: amounts
                .iter()
                .zip(offsets)
                .map(|(&amount, &offset)| FlowPoint {
                    offset,
                    amount,
                    date: None,
                    period: None,
                    note: None,
                })
                .collect(),
            units_per_year,
            periods_per_year: None,
        }
        .into_normalised()
    }

    /// A series that changes sign (so may have roots), with strictly increasing offsets.
    fn series() -> impl Strategy<Value = Flows> {
        (
            proptest::collection::vec((-200_000i64..200_000, 1i64..60), 2..40),
            prop_oneof![Just(1u64), Just(4), Just(12), Just(365)],
            proptest::bool::ANY,
        )
            .prop_map(|(raw, units, even)| {
                let amounts = cents(&raw.iter().map(|r| r.0).collect::<Vec<_>>());
                let mut t = 0;
                let offsets: Vec<i64> = raw
                    .iter()
                    .map(|&(_, gap)| {
                        let at = t;
                        t += if even { 1 } else { gap };
                        at
                    })
                    .collect();
                flows_at(&amounts, &offsets, units)
            })
    }

    /// The balance rows of a path, bar the last, are clear of both the
    /// classification's tolerance and the cent the rows are rounded to: there the
    /// float and the decimal readings cannot differ by rounding alone. A balance shown
    /// as zero before the last flow is a cancellation whose sign the cent hides (it
    /// may be a fraction of a cent either way, which the float reading still sees), so
    /// it is not clear.
    fn clear_of_the_tolerances(path: &[crate::engine::BalanceRow]) -> bool {
        let scale = path.iter().map(|r| r.flow.abs()).max().unwrap_or_default();
        let margin = (scale * Decimal::new(2, 9)).max(Decimal::new(2, 2));
        path[..path.len().saturating_sub(1)]
            .iter()
            .all(|r| r.balance.abs() > margin)
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        /// Batch screening (`with_paths` false) classifies each root's balance path in
        /// binary floats, by the even-spacing route where it applies and step by step
        /// otherwise; a deal builds the rows in cents and classifies them with
        /// [`figures::balance_kind`], the reference. They agree at every root whose
        /// balances are not within rounding of a tolerance.
        #[test]
        fn batch_balance_kinds_match_the_reference(flows in series(), hurdle in -0.5f64..2.0) {
            let deal = irr_report(&flows, Some(hurdle), true);
            let batch = irr_report(&flows, Some(hurdle), false);
            prop_assert_eq!(deal.roots.len(), batch.roots.len());
            for (d, b) in deal.roots.iter().zip(&batch.roots) {
                prop_assume!(clear_of_the_tolerances(&d.balance_path));
                prop_assert_eq!(d.balance_kind, figures::balance_kind(&d.balance_path));
                prop_assert_eq!(
                    b.balance_kind, d.balance_kind,
                    "root {:?}, path {:?}", d.annual_rate, d.balance_path
                );
                prop_assert_eq!((b.stance, b.decision), (d.stance, d.decision));
            }
        }

        /// The four-steps-at-a-time route gives the step-by-step classification at any
        /// rate above 0% for evenly spaced flows, whenever it answers (it declines near
        /// cancellation; the assumption makes proptest fail if it declines too often).
        #[test]
        fn four_steps_at_a_time_match_one_step_at_a_time(
            raw in proptest::collection::vec(-200_000i64..200_000, 8..80),
            gap in 1i64..4,
            units in prop_oneof![Just(1u64), Just(12), Just(365)],
            log_growth in 1e-6f64..3.0,
        ) {
            let pts: Vec<(i64, f64)> = raw
                .iter()
                .enumerate()
                .map(|(i, &c)| (i as i64 * gap, c as f64))
                .collect();
            prop_assume!(pts.iter().all(|p| p.1 != 0.0));
            let per_unit = log_growth / units as f64;
            let even = balance_kind_even(&pts, tolerance(&pts), per_unit);
            prop_assume!(even.is_some());
            prop_assert_eq!(even, Some(balance_kind_steps(&pts, units, log_growth)));
        }
    }

    /// The even route does answer for an ordinary evenly spaced series (so the property
    /// above compares something), and declines for uneven spacing and short series.
    #[test]
    fn the_even_route_applies_where_it_should() {
        let pts: Vec<(i64, f64)> = (0..12)
            .map(|i| (i, if i == 0 { -1000.0 } else { 150.0 }))
            .collect();
        let per_unit = 0.08f64.ln_1p();
        assert_eq!(
            balance_kind_even(&pts, tolerance(&pts), per_unit),
            Some(balance_kind_steps(&pts, 1, per_unit))
        );
        let mut uneven = pts.clone();
        uneven[11].0 = 12;
        assert_eq!(
            balance_kind_even(&uneven, tolerance(&uneven), per_unit),
            None
        );
        assert_eq!(
            balance_kind_even(&pts[..7], tolerance(&pts), per_unit),
            None
        );
    }
}
