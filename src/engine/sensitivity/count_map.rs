//! The count map (docs/methods.md, "Sensitivity"): for one
//! component scaled by a factor f, the factors at which the number of real IRRs
//! changes, and the certified count between them.
//!
//! With the rest of the deal `N0(l) = sum a_j e^(-l t_j)` and the component
//! `N1(l) = sum b_k e^(-l t_k)` (l the log growth per clock unit), the deal at factor f
//! is `N0 + f N1`. A root can appear, vanish or change multiplicity only where the NPV
//! and its derivative vanish together, and eliminating f from `N0 + f N1 = 0`,
//! `N0' + f N1' = 0` leaves
//!
//! ```text
//! W(l) = N0'(l) N1(l) - N0(l) N1'(l) = sum_(j,k) a_j b_k (t_k - t_j) e^(-l (t_j + t_k)),
//! ```
//!
//! an exponential sum with integer exponents `t_j + t_k` and exact integer coefficients,
//! whose roots [`find_roots`] isolates and certifies like any deal's. At a root `l*` of
//! W the factor is `F(l*) = -N0(l*) / N1(l*)`, the critical value of `F = -N0 / N1`
//! (`F' = -W / N1^2`). Roots can also leave through -100% or infinitely large rates,
//! which happens where the last or the first net flow changes sign: `f = -a / b` for
//! the amounts of the rest and the component at the last (first) time.
//!
//! Each candidate's factor is enclosed rigorously: for any l in the root's certified
//! interval of width w, `|F(l) - F(mid)| <= sup|F'| w / 2` and, W vanishing inside,
//! `sup|F'| <= sup|W'| w / min N1^2`, with `sup|W'|` bounded by separable sums of the
//! terms at the interval's lower end. The count on each gap between candidates is the
//! engine's certified count of the deal at a short decimal factor inside the gap, and
//! a candidate with the same count on both sides is not a change point.

use super::super::flows::{amount_f64, Flows};
use super::super::irr;
use super::super::roots::find_roots;
use super::{moved_deal, Component, SensitivityOptions};
use num_integer::Integer;
use rust_decimal::prelude::*;
use serde::Serialize;

/// The count map of one component.
#[derive(Debug, Clone, Serialize)]
pub struct CountMap {
    /// The component's key.
    pub key: String,
    /// Its name.
    pub label: String,
    /// The factors studied (lowest, highest).
    pub range: [f64; 2],
    /// Whether the map could be drawn.
    pub status: MapStatus,
    /// True when every candidate was isolated and every count certified: then every
    /// change of the count within the range is listed, each in its interval.
    pub certified: bool,
    /// The factors at which the count changes, lowest first.
    pub change_points: Vec<ChangePoint>,
    /// The count between change points, lowest factor first.
    pub intervals: Vec<CountInterval>,
    /// Annual rates at which the search for double roots was left undecided.
    pub undecided: Vec<[f64; 2]>,
}

/// Whether a count map was drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MapStatus {
    /// Drawn.
    Mapped,
    /// Not drawn: the component's flows times the rest's exceed the work allowed
    /// ([`SensitivityOptions::max_pairs`]).
    TooManyFlows,
    /// Not drawn: the exact coefficients of the double-root equation exceed 96 bits.
    TooLarge,
}

/// Why the count may change at a factor.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ChangeCause {
    /// The NPV has a multiple root there.
    DoubleRoot,
    /// The earliest net flow is zero there (a root leaves through infinitely large rates).
    FirstFlow,
    /// The last net flow is zero there (a root leaves through -100%).
    LastFlow,
}

/// A factor at which the number of IRRs changes.
#[derive(Debug, Clone, Serialize)]
pub struct ChangePoint {
    /// The factor (best estimate).
    pub factor: f64,
    /// Proven to contain it.
    pub interval: [f64; 2],
    /// What happens there.
    pub causes: Vec<ChangeCause>,
    /// The annual rate of the multiple root, for a double root.
    pub annual_rate: Option<f64>,
    /// True when the point was isolated and both counts beside it are certified.
    pub certified: bool,
    /// The count just below the factor.
    pub count_below: u32,
    /// The count just above.
    pub count_above: u32,
}

/// The count over a range of factors.
#[derive(Debug, Clone, Serialize)]
pub struct CountInterval {
    /// Lowest factor.
    pub from: f64,
    /// Highest factor.
    pub to: f64,
    /// Real IRRs, with multiplicity, at every factor strictly inside.
    pub count: u32,
    /// True when the count was certified.
    pub certified: bool,
}

/// A factor at which the count may change, with its enclosure.
#[derive(Debug, Clone)]
struct Candidate {
    lo: f64,
    hi: f64,
    mid: f64,
    cause: ChangeCause,
    rate: Option<f64>,
    certified: bool,
}

const EPS: f64 = f64::EPSILON;

/// The count map of component `index`.
pub(super) fn count_map(
    components: &[Component],
    index: usize,
    options: &SensitivityOptions,
) -> CountMap {
    let (r0, r1) = options.factor_range;
    let (f0, f1) = (r0.to_f64().unwrap_or(0.0), r1.to_f64().unwrap_or(3.0));
    let comp = &components[index];
    let mut map = CountMap {
        key: comp.key.clone(),
        label: comp.label.clone(),
        range: [f0, f1],
        status: MapStatus::Mapped,
        certified: true,
        change_points: Vec::new(),
        intervals: Vec::new(),
        undecided: Vec::new(),
    };
    let mut zero = vec![Decimal::ONE; components.len()];
    zero[index] = Decimal::ZERO;
    let (Some(rest), Some(own)) = (
        moved_deal(components, &zero, 0),
        moved_deal(std::slice::from_ref(comp), &[Decimal::ONE], 0),
    ) else {
        map.status = MapStatus::TooLarge;
        map.certified = false;
        return map;
    };
    if rest.points.len().saturating_mul(own.points.len()) > options.max_pairs {
        map.status = MapStatus::TooManyFlows;
        map.certified = false;
        return map;
    }
    let mut candidates = end_candidates(&rest, &own);
    match wronskian(&rest, &own) {
        None => {
            map.status = MapStatus::TooLarge;
            map.certified = false;
            return map;
        }
        Some((coefs, offsets)) if coefs.len() >= 2 => {
            let set = find_roots(&coefs, &offsets, own.units_per_year);
            let g = set.step_units.max(1) as f64;
            let units = own.units_per_year as f64;
            if !set.certified {
                map.certified = false;
            }
            for (lo, hi) in &set.unresolved {
                map.undecided
                    .push([(lo / g * units).exp_m1(), (hi / g * units).exp_m1()]);
            }
            let a = terms(&rest);
            let b = terms(&own);
            for r in &set.roots {
                let pad = |x: f64, up: bool| {
                    let d = x.abs() * 4.0 * EPS + f64::MIN_POSITIVE;
                    if up {
                        x / g + d
                    } else {
                        x / g - d
                    }
                };
                let (lo, hi, mid) = (pad(r.lo, false), pad(r.hi, true), r.y / g);
                let rate = (mid * units).exp_m1();
                match enclose(&a, &b, lo, hi, mid.clamp(lo, hi)) {
                    Some((flo, fhi, fmid)) => candidates.push(Candidate {
                        lo: flo,
                        hi: fhi,
                        mid: fmid,
                        cause: ChangeCause::DoubleRoot,
                        rate: rate.is_finite().then_some(rate),
                        certified: true,
                    }),
                    // No factor can be told for this root: it may lie anywhere.
                    None => {
                        map.certified = false;
                        map.undecided
                            .push([(lo * units).exp_m1(), (hi * units).exp_m1()]);
                    }
                }
            }
        }
        Some(_) => {}
    }
    // (A candidate exactly at an end of the range changes nothing inside it.)
    candidates.retain(|c| c.hi > f0 && c.lo < f1 && c.mid != f0 && c.mid != f1);
    candidates.sort_by(|x, y| x.lo.total_cmp(&y.lo));
    // Clusters of overlapping candidates.
    let mut clusters: Vec<Vec<Candidate>> = Vec::new();
    for c in candidates {
        match clusters.last_mut() {
            Some(last) if last.iter().any(|x| x.hi >= c.lo) => last.push(c),
            _ => clusters.push(vec![c]),
        }
    }
    // The count in each gap, sampled at a short decimal inside it.
    let mut edges = vec![f0];
    for cl in &clusters {
        edges.push(
            cl.iter()
                .map(|c| c.lo)
                .fold(f64::INFINITY, f64::min)
                .max(f0),
        );
        edges.push(
            cl.iter()
                .map(|c| c.hi)
                .fold(f64::NEG_INFINITY, f64::max)
                .min(f1),
        );
    }
    edges.push(f1);
    let mut gaps: Vec<Option<(u32, bool)>> = Vec::new();
    for pair in edges.chunks(2) {
        let (lo, hi) = (pair[0], pair[1]);
        let count = if lo < hi {
            count_at(components, index, lo, hi)
        } else {
            None
        };
        if lo < hi && !count.is_some_and(|c| c.1) {
            map.certified = false;
        }
        gaps.push(count);
    }
    // A cluster across an end of the range leaves the factors it covers inside the
    // range without a count: the map is then incomplete unless that part is negligible.
    if let (Some(first), Some(last)) = (clusters.first(), clusters.last()) {
        let reach = |cl: &[Candidate], lower: bool| {
            if lower {
                cl.iter().map(|c| c.hi).fold(f64::NEG_INFINITY, f64::max) - f0
            } else {
                f1 - cl.iter().map(|c| c.lo).fold(f64::INFINITY, f64::min)
            }
        };
        let tiny = 1e-9 * (f1 - f0).abs().max(1.0);
        let straddles_low = first.iter().any(|c| c.lo <= f0) && reach(first, true) > tiny;
        let straddles_high = last.iter().any(|c| c.hi >= f1) && reach(last, false) > tiny;
        if straddles_low || straddles_high {
            map.certified = false;
        }
    }
    // Walk the gaps and clusters: a cluster is a change point when the counts beside
    // it differ; an empty gap (a cluster at an end of the range) carries no count.
    let mut from = f0;
    let mut current = gaps[0];
    for (k, cl) in clusters.iter().enumerate() {
        let next = gaps[k + 1];
        let lo = edges[2 * k + 1];
        let hi = edges[2 * k + 2];
        let same = matches!((current, next), (Some(a), Some(b)) if a.0 == b.0);
        if same {
            // Not a change: merge the certificates.
            current = current.zip(next).map(|(a, b)| (a.0, a.1 && b.1));
            continue;
        }
        if let Some((count, certified)) = current {
            map.intervals.push(CountInterval {
                from,
                to: lo,
                count,
                certified,
            });
        }
        if let (Some(below), Some(above)) = (current, next) {
            let mut causes: Vec<ChangeCause> = cl.iter().map(|c| c.cause).collect();
            causes.sort();
            causes.dedup();
            let factor = cl.iter().map(|c| c.mid).sum::<f64>() / cl.len() as f64;
            map.change_points.push(ChangePoint {
                factor: factor.clamp(lo, hi),
                interval: [lo, hi],
                causes,
                annual_rate: cl.iter().find_map(|c| c.rate),
                certified: below.1 && above.1 && cl.iter().all(|c| c.certified),
                count_below: below.0,
                count_above: above.0,
            });
        }
        from = hi;
        current = next;
    }
    if let Some((count, certified)) = current {
        map.intervals.push(CountInterval {
            from,
            to: f1,
            count,
            certified,
        });
    }
    map
}

/// Where the first or the last net flow is zero: `f = -a / b` for the amounts of the
/// rest (a) and the component (b) at the earliest (latest) time of either.
fn end_candidates(rest: &Flows, own: &Flows) -> Vec<Candidate> {
    let mut out = Vec::new();
    let at = |f: &Flows, t: i64| {
        f.points
            .iter()
            .find(|p| p.offset == t)
            .map_or(Decimal::ZERO, |p| p.amount)
    };
    let firsts = [rest.points.first(), own.points.first()];
    let lasts = [rest.points.last(), own.points.last()];
    let first = firsts.iter().flatten().map(|p| p.offset).min();
    let last = lasts.iter().flatten().map(|p| p.offset).max();
    for (t, cause) in [
        (first, ChangeCause::FirstFlow),
        (last, ChangeCause::LastFlow),
    ] {
        let Some(t) = t else { continue };
        let (a, b) = (at(rest, t), at(own, t));
        if b.is_zero() {
            continue;
        }
        if let Some(f) = (-a).checked_div(b) {
            let v = f.to_f64().unwrap_or(f64::NAN);
            if v.is_finite() {
                // The quotient is rounded to Decimal's last digit: an ulp either side.
                let d = v.abs() * 4.0 * EPS + 1e-27;
                out.push(Candidate {
                    lo: v - d,
                    hi: v + d,
                    mid: v,
                    cause,
                    rate: None,
                    certified: true,
                });
            }
        }
    }
    out
}

/// The exact coefficients of `W` over its exponents `t_j + t_k`, zero terms dropped,
/// divided by their greatest common divisor; `None` when a coefficient leaves 96 bits.
fn wronskian(rest: &Flows, own: &Flows) -> Option<(Vec<Decimal>, Vec<i64>)> {
    let ints = |f: &Flows| -> Option<Vec<(i64, i128)>> {
        let scale = f.points.iter().map(|p| p.amount.scale()).max().unwrap_or(0);
        f.points
            .iter()
            .map(|p| {
                let m = p
                    .amount
                    .mantissa()
                    .checked_mul(10i128.checked_pow(scale - p.amount.scale())?)?;
                Some((p.offset, m))
            })
            .collect()
    };
    let (a, b) = (ints(rest)?, ints(own)?);
    if a.is_empty() || b.is_empty() {
        return Some((Vec::new(), Vec::new()));
    }
    let lo = a[0].0 + b[0].0;
    let hi = a[a.len() - 1].0 + b[b.len() - 1].0;
    let span = usize::try_from(hi - lo).ok()? + 1;
    // Sums on a sparse clock (dated flows) go to a map keyed by exponent, whose size is
    // the number of distinct sums rather than of pairs.
    let mut sparse: std::collections::BTreeMap<i64, i128> = std::collections::BTreeMap::new();
    let mut add = |s: i64, v: i128, dense: &mut Vec<i128>| -> Option<()> {
        let slot = if dense.is_empty() {
            sparse.entry(s).or_insert(0)
        } else {
            &mut dense[(s - lo) as usize]
        };
        *slot = slot.checked_add(v)?;
        Some(())
    };
    let mut dense: Vec<i128> = if span <= 1 << 18 {
        vec![0; span]
    } else {
        Vec::new()
    };
    // When no product or sum can leave i128 (bounded up front: every coefficient is at
    // most max|a| max|b| max|t_k - t_j| times the number of pairs), the dense sums run
    // without overflow checks; otherwise every step is checked.
    let max_a = a.iter().map(|x| x.1.unsigned_abs()).max().unwrap_or(0) as f64;
    let max_b = b.iter().map(|x| x.1.unsigned_abs()).max().unwrap_or(0) as f64;
    let reach = (hi - lo) as f64;
    let pairs = a.len() as f64 * b.len() as f64;
    if !dense.is_empty() && max_a * max_b * reach * pairs < 2f64.powi(125) {
        for &(tj, aj) in &a {
            for &(tk, bk) in &b {
                let slot = &mut dense[(tj + tk - lo) as usize];
                *slot = slot.wrapping_add(aj.wrapping_mul(bk).wrapping_mul(i128::from(tk - tj)));
            }
        }
    } else {
        for &(tj, aj) in &a {
            for &(tk, bk) in &b {
                if tj == tk {
                    continue;
                }
                let v = aj.checked_mul(bk)?.checked_mul(i128::from(tk - tj))?;
                add(tj + tk, v, &mut dense)?;
            }
        }
    }
    let mut terms: Vec<(i64, i128)> = if dense.is_empty() {
        sparse.into_iter().collect()
    } else {
        dense
            .iter()
            .enumerate()
            .map(|(i, &v)| (lo + i as i64, v))
            .collect()
    };
    terms.retain(|t| t.1 != 0);
    let g = terms.iter().fold(0i128, |g, t| g.gcd(&t.1)).max(1);
    let mut coefs = Vec::with_capacity(terms.len());
    let mut offsets = Vec::with_capacity(terms.len());
    for (s, v) in terms {
        coefs.push(Decimal::try_from_i128_with_scale(v / g, 0).ok()?);
        offsets.push(s);
    }
    Some((coefs, offsets))
}

/// A series as (offset, amount) floats.
fn terms(f: &Flows) -> Vec<(f64, f64)> {
    f.points
        .iter()
        .map(|p| (p.offset as f64, amount_f64(p.amount)))
        .collect()
}

/// Sums of a series at log growth `l` per clock unit, each term scaled by `e^(-shift)`:
/// the value, and `sum |c| t^d e^(-l t - shift)` for d = 0, 1, 2.
fn sums(s: &[(f64, f64)], l: f64, shift: f64) -> (f64, [f64; 3]) {
    let mut v = 0.0;
    let mut m = [0.0; 3];
    for &(t, c) in s {
        let w = (-l * t - shift).exp();
        let term = c * w;
        v += term;
        let a = term.abs();
        m[0] += a;
        m[1] += a * t;
        m[2] += a * t * t;
    }
    (v, m)
}

/// An enclosure `(lo, hi, estimate)` of `F(l*) = -N0(l*) / N1(l*)` for a root `l*` of
/// W in `[lo, hi]`; `None` when N1 may vanish there or the sums leave the float range.
fn enclose(
    a: &[(f64, f64)],
    b: &[(f64, f64)],
    lo: f64,
    hi: f64,
    mid: f64,
) -> Option<(f64, f64, f64)> {
    let t_max = a.iter().chain(b).map(|x| x.0).fold(0.0f64, f64::max);
    // One scale for every sum: the largest term weight over the interval is at `lo`.
    let shift = (-lo * t_max).max(0.0);
    let n = (a.len() + b.len()) as f64;
    let (v0, m0) = sums(a, mid, shift);
    let (v1, m1) = sums(b, mid, shift);
    let (_, a_lo) = sums(a, lo, shift);
    let (_, b_lo) = sums(b, lo, shift);
    let w = hi - lo;
    // Rounding of each sum: the amounts (2 ulp), the exponent's argument and exp (a few
    // ulp of |l t| + shift), and the additions (n ulp), all relative to the sum of |terms|.
    let rel = EPS * (n + 8.0 + 4.0 * (mid.abs() * t_max + shift));
    let (e0, e1) = (m0[0] * rel, m1[0] * rel);
    // |N1'| <= sum |b| t e^(-l t), largest at `lo`; |l - mid| <= w.
    let min_n1 = v1.abs() - e1 - b_lo[1] * w;
    if min_n1.is_nan() || min_n1 <= 0.0 || !v0.is_finite() || !v1.is_finite() {
        return None;
    }
    let f = -v0 / v1;
    let ef = (e0 + f.abs() * e1) / (v1.abs() - e1);
    let sup_w1 = a_lo[2] * b_lo[0] + 2.0 * a_lo[1] * b_lo[1] + a_lo[0] * b_lo[2];
    let delta = sup_w1 * w * w / (2.0 * min_n1 * min_n1);
    let spread = (ef + delta) * (1.0 + 1e-9) + f.abs() * 1e-12;
    if !spread.is_finite() || !f.is_finite() {
        return None;
    }
    Some((f - spread, f + spread, f))
}

/// The certified count (and whether it is certified) of the deal with component
/// `index` at a short decimal factor strictly between `lo` and `hi`.
fn count_at(components: &[Component], index: usize, lo: f64, hi: f64) -> Option<(u32, bool)> {
    let mid = (lo + hi) / 2.0;
    let factor = (0..=12).find_map(|dp| {
        let d = Decimal::from_f64(mid)?.round_dp(dp);
        let v = d.to_f64()?;
        (v > lo && v < hi).then_some(d)
    })?;
    let mut m = vec![Decimal::ONE; components.len()];
    m[index] = factor;
    let deal = moved_deal(components, &m, 0)?;
    if deal.points.is_empty() {
        return Some((0, true));
    }
    let set = irr::roots_of(&deal);
    Some((set.count(), set.certified))
}
