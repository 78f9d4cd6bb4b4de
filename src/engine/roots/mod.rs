//! Every real root of the NPV, with a certified count.
//!
//! With flows `C_k` at integer clock offsets, the offsets shifted to start at zero and
//! divided by their greatest common divisor give integer exponents `n_k`, and
//! `f(y) = sum C_k exp(-y n_k)` with `y = ln(1 + rate per step)` has exactly the IRRs
//! as roots, over the whole real line (rates in (-100%, +inf)). The search works in `y`,
//! so rates near -100% and astronomically large rates are ordinary finite numbers.
//!
//! Certification. Every sign that decides a root is taken from an evaluation that
//! carries a rigorous floating-point error bound (terms are accumulated as separate
//! positive and negative sums, each term's relative error bounded by the number of
//! roundings that produced it). On an interval, each derivative of `f` is enclosed by
//! its decreasing positive and negative parts. An interval is settled when:
//! the enclosure of `f` excludes zero (no root); or that of `f'` does (monotone: one
//! root exactly when the end signs differ); or that of `f''` does (convex or concave:
//! the extremum decides 0, 1 double or 2 roots); or a multiple root is proven exactly
//! at a short decimal rate with big-integer arithmetic and the next derivative's
//! enclosure excludes zero (Rolle). Norstrom's cumulative-sum counts settle the half
//! lines above and below 0% outright when they are 0 or 1; the same counts on the flows
//! discounted to another point (Laguerre) prove a whole answer at once when they add
//! up to the roots found by Newton from the end signs, and end a subdivision early once
//! at most one root can be left above a point. The total is finally checked
//! against the Descartes/Laguerre bound and its parity.
//!
//! Exact settling ([`exact`]). A series left with a multiple root, an undecided piece or
//! intervals that touch is solved again in exact arithmetic: the integer polynomial,
//! its square-free chain, Descartes isolation in big integers; that answer replaces the
//! float one whenever it fits the work budget ([`exact::WORK_LIMIT`]). Past the budget
//! the float answer stands (a multiple root in it was proven exactly at a short decimal
//! rate, its interval rounded outwards from that exact rate), and anything left
//! undecided is reported as such: the count is then not certified.

mod bounds;
pub mod exact;
mod quick;
mod search;
mod series;
mod settle;
mod solver;
#[cfg(test)]
mod tests;

use super::analysis::SignBounds;
use super::dd::Dd;
use num_bigint::BigInt;
use num_traits::{One, Zero};
use rust_decimal::prelude::*;

use bounds::*;
use quick::*;
use search::*;
use series::*;
use settle::*;
use solver::*;

/// Derivative orders carried by every point evaluation (0 ..= 4).
const ORDERS: usize = 5;
/// Unit roundoff of f64.
const EPS: f64 = f64::EPSILON * 0.5;
/// Point evaluations allowed per series before giving up (keeps the search finite).
const EVAL_BUDGET: usize = 40_000;
/// Double-double point evaluations allowed per half-line for undecided pieces.
const DD_BUDGET: usize = 3_000;
/// Largest exponent for exact big-integer checks of multiple roots.
const EXACT_DEGREE_LIMIT: u64 = 2_000;

/// One real root of `f`, in `y = ln(1 + rate per step)`.
#[derive(Debug, Clone, PartialEq)]
pub struct FoundRoot {
    /// Lower end of an interval certified to contain the root.
    pub lo: f64,
    /// Upper end.
    pub hi: f64,
    /// Best estimate.
    pub y: f64,
    /// Multiplicity (1 simple, 2 double, ...).
    pub multiplicity: u32,
    /// The exact rate per step when the root was proven exactly (multiple roots, 0%).
    pub exact_rate: Option<Decimal>,
}

/// The outcome of the search for one series.
#[derive(Debug, Clone, PartialEq)]
pub struct RootSet {
    /// Roots from the lowest to the highest.
    pub roots: Vec<FoundRoot>,
    /// True when the count is proven complete.
    pub certified: bool,
    /// Intervals in `y` that could not be decided.
    pub unresolved: Vec<(f64, f64)>,
    /// Sign changes of the flows (Descartes/Laguerre bound).
    pub descartes: u32,
    /// Sign changes of forward cumulative sums (bound above 0%), when the sum is not zero.
    pub above_zero: Option<u32>,
    /// Sign changes of backward cumulative sums (bound below 0%), when the sum is not zero.
    pub below_zero: Option<u32>,
    /// Years in one step of `y` (the gcd of the offsets over units a year).
    pub step_years: f64,
    /// Clock units in one step (the gcd of the offsets).
    pub step_units: u64,
    /// Point evaluations used.
    pub evaluations: usize,
    /// When the count was proven by Laguerre's bounds at one point (the quick way, see
    /// [`find_roots`]): that point, in `y`.
    pub proven_at: Option<f64>,
    /// The amounts as binary floats, in the order given, all multiplied by one power
    /// of ten (see `small_integers`): for readings that need no exact arithmetic
    /// and do not depend on the amounts' scale, such as the balance classification of
    /// batch screening.
    pub coefficients: Vec<f64>,
    /// Whether the exact settling ran and what it gave (see [`exact`]).
    pub exact: ExactCheck,
    /// Word operations the exact settling spent (0 when it did not run).
    pub exact_work: u64,
}

/// What the exact settling of a series did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExactCheck {
    /// Not needed: the floating-point search certified every root as simple.
    NotNeeded,
    /// Every root, its multiplicity and its interval were proven in exact arithmetic.
    Settled,
    /// Needed, but the exact work did not fit its budget: the floating-point answer
    /// stands, and a multiple root or undecided interval in it leaves the count
    /// uncertified unless it was proven exactly at a short decimal rate.
    OverBudget,
}

impl RootSet {
    /// Number of roots counted with multiplicity.
    pub fn count(&self) -> u32 {
        self.roots.iter().map(|r| r.multiplicity).sum()
    }
}

/// Finds every real root of `sum amounts[k] * x^(-offsets[k] / units)` in `y = ln x`
/// per step (the gcd of the offsets). `offsets` must be strictly increasing and the
/// amounts non-zero (see [`crate::engine::Flows::normalised`]).
pub fn find_roots(amounts: &[Decimal], offsets: &[i64], units_per_year: u64) -> RootSet {
    let ints = small_integers(amounts);
    let c: Vec<f64> = match &ints {
        Some(ints) => ints.iter().map(|&m| m as f64).collect(),
        None => amounts
            .iter()
            .map(|a| super::flows::amount_f64(*a))
            .collect(),
    };
    let SignBounds {
        descartes,
        above_zero,
        below_zero,
    } = match ints {
        Some(ints) => sign_bounds_of_integers(ints),
        None => sign_bounds_wide(amounts),
    };
    let first = offsets.first().copied().unwrap_or(0);
    let rel: Vec<u64> = offsets.iter().map(|&o| (o - first).max(0) as u64).collect();
    // (Once the divisor is 1 it stays 1: no more divisions needed.)
    let mut g = 0u64;
    for &x in &rel {
        g = gcd(g, x);
        if g == 1 {
            break;
        }
    }
    let g = g.max(1);
    let exps: Vec<u64> = if g == 1 {
        rel
    } else {
        rel.iter().map(|&x| x / g).collect()
    };
    let mut out = RootSet {
        roots: Vec::new(),
        certified: true,
        unresolved: Vec::new(),
        descartes,
        above_zero,
        below_zero,
        step_years: g as f64 / units_per_year.max(1) as f64,
        step_units: g,
        evaluations: 0,
        proven_at: None,
        coefficients: Vec::new(),
        exact: ExactCheck::NotNeeded,
        exact_work: 0,
    };
    if descartes == 0 || amounts.len() < 2 {
        out.coefficients = c;
        return out;
    }
    // Rates above 0% are searched on the series itself, rates below 0% on the reversed
    // series (u = -y, exponents n_K - n_k): both are then sums of decreasing
    // exponentials in a non-negative variable, which the enclosures need.
    let last = *exps.last().unwrap_or(&0);
    // The reversed series is only needed when the Norstrom count below 0% does not
    // already say zero; otherwise an empty one stands in (never evaluated).
    let reversed = if below_zero == Some(0) {
        NpvTerms::new(std::borrow::Cow::Borrowed(&[]), Vec::new(), &[], true)
    } else {
        let rev_c: Vec<f64> = c.iter().rev().copied().collect();
        let rev_exps: Vec<u64> = exps.iter().rev().map(|&e| last - e).collect();
        NpvTerms::new(
            std::borrow::Cow::Owned(amounts.iter().rev().copied().collect()),
            rev_c,
            &rev_exps,
            true,
        )
    };
    let series = NpvTerms::new(std::borrow::Cow::Borrowed(amounts), c, &exps, false);
    let mut solvers = [
        Solver {
            s: &series,
            in_search: false,
            dd_spent: 0,
            evals: 0,
            cache: Vec::new(),
        },
        Solver {
            s: &reversed,
            in_search: false,
            dd_spent: 0,
            evals: 0,
            cache: Vec::new(),
        },
    ];

    // Bracket: beyond these the first (resp. last) term dominates all others.
    let bound = |s: &NpvTerms| {
        let c0 = s.c[0].abs();
        let rest = s.abs_sum - c0;
        let n1 = s.n[1];
        ((rest / c0).ln().max(0.0) / n1 + 1.0) * 1.01 + 1.0 / n1
    };
    let y_hi = bound(&series);
    let u_hi = if reversed.c.is_empty() {
        0.0
    } else {
        bound(&reversed)
    };

    // Norstrom's counts exist exactly when the total is not zero (or too large to sum).
    let zero_is_root = above_zero.is_none()
        && amounts
            .iter()
            .try_fold(Decimal::ZERO, |acc, a| acc.checked_add(*a))
            .is_some_and(|t| t.is_zero());
    let mut zero_root: Option<FoundRoot> = None;
    // Where to search on each side of 0 (index 0: rates above 0%, on the series;
    // index 1: rates below 0%, on the reversed series), and the count when a
    // Norstrom bound settles it.
    let mut starts = [0.0f64; 2];
    let mut known = [
        above_zero.filter(|&n| n <= 1),
        below_zero.filter(|&n| n <= 1),
    ];
    if zero_is_root {
        let m = exact_multiplicity(&series, &BigInt::one(), &BigInt::one()).unwrap_or(1);
        zero_root = Some(FoundRoot {
            lo: 0.0,
            hi: 0.0,
            y: 0.0,
            multiplicity: m,
            exact_rate: Some(Decimal::ZERO),
        });
        // Keep away from the multiple root at 0 by a neighbourhood where f^(m) has a
        // fixed sign on both sides (Rolle: no other root there).
        let mut delta = 1e-3 / series.last_n().max(1.0);
        let mut found = false;
        for _ in 0..60 {
            if m as usize >= ORDERS {
                break;
            }
            let ok = solvers.iter_mut().all(|sv| {
                sv.excludes_zero(0.0, delta, m as usize) && sv.point(delta, 1).sign(0).is_some()
            });
            if ok {
                found = true;
                break;
            }
            delta *= 0.5;
        }
        if !found {
            out.certified = false;
            out.unresolved.push((-delta, delta));
        }
        starts = [delta, delta];
        known = [None, None];
    }

    let mut roots: Vec<FoundRoot> = Vec::new();
    // When a cumulative count leaves more than one root possible on a side of 0%, try
    // the cheap way first: one root by Newton wherever the end signs differ, then a
    // global count at points beside the roots found (Laguerre's bounds on the roots
    // above and below a point, forwards and backwards partial sums of the discounted
    // flows). If the bounds add up to the roots found, each holds exactly one simple
    // root and there are no others; otherwise the full search below decides.
    let quick = if !zero_is_root && known.iter().any(|k| k.is_none_or(|n| n > 1)) {
        quick_certificate(&mut solvers, [y_hi, u_hi], [above_zero, below_zero])
    } else {
        None
    };
    let quick_done = quick.is_some();
    if let Some((found, at)) = quick {
        roots = found;
        out.proven_at = at;
    }
    for (i, solver) in solvers.iter_mut().enumerate() {
        let (lo, hi) = (starts[i], if i == 0 { y_hi } else { u_hi });
        if quick_done || lo >= hi || known[i] == Some(0) {
            continue;
        }
        let mut found: Vec<FoundRoot> = Vec::new();
        let unresolved_before = out.unresolved.len();
        let sl = solver.point(lo, 1).sign(0);
        let sh = Some(solver.s.sign_at_upper_end());
        match (known[i], sl, sh) {
            (Some(0), _, _) => {}
            (Some(1), Some(a), Some(b)) if a != b => {
                found.push(solver.simple_root(lo, hi, a));
            }
            _ => search(solver, lo, hi, &mut found, &mut out),
        }
        // Where binary floats left a simple root's interval wide, narrow it by
        // bisection on double-double signs.
        for r in &mut found {
            if r.multiplicity == 1 && r.exact_rate.is_none() {
                polish(solver.s, r);
            }
        }
        if i == 1 {
            // Back from u = -y to y.
            for iv in &mut out.unresolved[unresolved_before..] {
                *iv = (-iv.1, -iv.0);
            }
            found = found.into_iter().map(flipped).collect();
        }
        roots.extend(found);
    }
    if let Some(z) = zero_root {
        roots.push(z);
    }
    roots.sort_by(|a, b| a.y.total_cmp(&b.y));
    out.roots = roots;
    out.evaluations = solvers.iter().map(|s| s.evals).sum();
    let count = out.count();
    if solvers.iter().any(|s| s.exhausted())
        || count > descartes
        || !(descartes - count).is_multiple_of(2)
    {
        out.certified = false;
    }
    if !zero_is_root {
        let above = out
            .roots
            .iter()
            .filter(|r| r.y > 0.0)
            .map(|r| r.multiplicity)
            .sum::<u32>();
        let below = count - above;
        if above_zero.is_some_and(|b| above > b || (b - above) % 2 != 0)
            || below_zero.is_some_and(|b| below > b || !(b - below).is_multiple_of(2))
        {
            out.certified = false;
        }
    }
    drop(solvers);
    // Multiple roots, undecided pieces and intervals that touch are settled exactly.
    let overlap = out.roots.windows(2).any(|w| w[0].hi >= w[1].lo);
    if !out.certified || overlap || out.roots.iter().any(|r| r.multiplicity > 1) {
        settle_exactly(&mut out, amounts, &exps);
        if overlap && out.exact != ExactCheck::Settled {
            out.certified = false;
        }
    }
    out.coefficients = series.c;
    out
}

/// Replaces the roots of `out` by those proven in exact arithmetic (see [`exact`])
/// when that fits the work budget; records the outcome either way.
fn settle_exactly(out: &mut RootSet, amounts: &[Decimal], exps: &[u64]) {
    let mut work = exact::Work::new(exact::WORK_LIMIT);
    let degree = exps.last().copied().unwrap_or(0);
    // One modular gcd of a dense polynomial alone costs degree^2 word operations.
    let found = if degree.saturating_mul(degree) >= exact::WORK_LIMIT {
        Err(exact::OutOfBudget)
    } else {
        let p = exact::npv_polynomial(amounts, exps);
        exact::positive_roots(&p, &mut work)
    };
    out.exact_work = work.spent();
    let Ok(found) = found else {
        out.exact = ExactCheck::OverBudget;
        return;
    };
    let roots: Vec<FoundRoot> = found.iter().map(exact_found_root).collect();
    let count: u32 = roots.iter().map(|r| r.multiplicity).sum();
    let apart = roots.windows(2).all(|w| w[0].hi < w[1].lo);
    out.roots = roots;
    out.unresolved.clear();
    out.exact = ExactCheck::Settled;
    // Exact roots closer than floats can tell apart would leave intervals that touch.
    out.certified = apart && count <= out.descartes && (out.descartes - count).is_multiple_of(2);
}

/// A root proven exactly, as a root in y with outward-rounded bounds.
fn exact_found_root(r: &exact::ExactRoot) -> FoundRoot {
    let (lo, _) = exact::log_bounds(&r.lo_num, &r.lo_den);
    let (_, hi) = exact::log_bounds(&r.hi_num, &r.hi_den);
    let exact_rate = if r.exact {
        decimal_ratio(&r.lo_num, &r.lo_den).map(|x| x - Decimal::ONE)
    } else {
        None
    };
    FoundRoot {
        lo,
        hi,
        y: if lo == hi { lo } else { 0.5 * (lo + hi) },
        multiplicity: r.multiplicity,
        exact_rate,
    }
}

/// num / den as an exact decimal, when it is one that fits.
fn decimal_ratio(num: &BigInt, den: &BigInt) -> Option<Decimal> {
    use num_traits::ToPrimitive;
    let (n, d) = (num.to_i128()?, den.to_i128()?);
    let (n, d) = (Decimal::from_i128(n)?, Decimal::from_i128(d)?);
    let q = n.checked_div(d)?;
    (q.checked_mul(d)? == n).then_some(q)
}

/// A root in u = -y (the reversed series) as a root in y.
fn flipped(r: FoundRoot) -> FoundRoot {
    FoundRoot {
        lo: -r.hi,
        hi: -r.lo,
        y: -r.y,
        ..r
    }
}
