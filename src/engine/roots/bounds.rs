//! Bounds on the number of roots from sign changes: Descartes/Laguerre on the flows,
//! Norstrom on their forward and backward cumulative sums, exactly in integers or
//! decimals.

use super::*;

/// Sign changes in a sequence, ignoring zeros.
pub(super) fn sign_changes(values: impl Iterator<Item = Decimal>) -> u32 {
    let mut last = 0i8;
    let mut changes = 0;
    for v in values {
        let s = if v.is_sign_positive() && !v.is_zero() {
            1
        } else if v.is_zero() {
            0
        } else {
            -1
        };
        if s != 0 {
            if last != 0 && s != last {
                changes += 1;
            }
            last = s;
        }
    }
    changes
}

pub(super) fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// [`sign_bounds`] on the amounts as integers at one common scale (exact, and far
/// cheaper than decimal additions); `None` when an amount or a sum would leave `i128`.
pub(super) fn sign_bounds_int(amounts: &[Decimal]) -> Option<SignBounds> {
    let scale = amounts.iter().map(|a| a.scale()).max().unwrap_or(0);
    if amounts.len() < (1 << 30) && amounts.iter().all(|a| a.scale() == scale) {
        return Some(sign_bounds_same_scale(amounts));
    }
    let mut ints = Vec::with_capacity(amounts.len());
    for a in amounts {
        let m = a.mantissa();
        ints.push(if a.scale() == scale {
            m
        } else {
            m.checked_mul(10i128.checked_pow(scale - a.scale())?)?
        });
    }
    // One pass: the signs of the amounts and of the forward sums.
    let (mut v, mut f) = (SignCount::default(), SignCount::default());
    let mut acc = 0i128;
    for &x in &ints {
        v.push(x);
        acc = acc.checked_add(x)?;
        f.push(acc);
    }
    if acc == 0 {
        return Some(SignBounds::without_sums(v.changes));
    }
    let mut b = SignCount::default();
    let mut acc = 0i128;
    for &x in ints.iter().rev() {
        acc = acc.checked_add(x)?;
        b.push(acc);
    }
    Some(SignBounds::new(v.changes, f.changes, b.changes))
}

/// Counts sign changes of a stream of values, ignoring zeros.
#[derive(Default)]
pub(super) struct SignCount {
    pub(super) last: i8,
    pub(super) changes: u32,
}

impl SignCount {
    #[inline(always)]
    pub(super) fn push<T: PartialOrd + Default>(&mut self, v: T) {
        let zero = T::default();
        let s = i8::from(v > zero) - i8::from(v < zero);
        // (Branch-free: a zero neither counts nor replaces the last sign.)
        self.changes += u32::from(s * self.last < 0);
        self.last = if s != 0 { s } else { self.last };
    }
}

/// The amounts as integers at their common scale, when every amount has the same
/// scale and a mantissa below 2^40 in size and there are fewer than 2^22 of them (no
/// sum can then reach 2^62): the usual case, where the sign-change bounds need no
/// wider arithmetic and the integers themselves serve as the floats of the search
/// (the amounts times one power of ten, which changes no root and no reading made
/// relative to the amounts' size).
pub(super) fn small_integers(amounts: &[Decimal]) -> Option<Vec<i64>> {
    let scale = amounts.first().map_or(0, |a| a.scale());
    if amounts.len() >= 1 << 22 {
        return None;
    }
    let mut ints = Vec::with_capacity(amounts.len());
    let small = amounts.iter().all(|a| {
        let m = a.mantissa();
        ints.push(m as i64);
        m.unsigned_abs() < 1 << 40 && a.scale() == scale
    });
    small.then_some(ints)
}

/// [`sign_bounds`] of integers whose sums cannot overflow (see [`small_integers`]):
/// cheaper again than sums in `i128`.
pub(super) fn sign_bounds_of_integers(ints: Vec<i64>) -> SignBounds {
    // Sign changes of a sequence without zeros: neighbours whose signs differ. Written
    // so that it needs no branches (the compiler vectorises it).
    fn changes(v: &[i64]) -> u32 {
        v.windows(2).map(|w| u32::from((w[0] ^ w[1]) < 0)).sum()
    }
    fn counted(v: &[i64]) -> u32 {
        if v.contains(&0) {
            let mut c = SignCount::default();
            v.iter().for_each(|&x| c.push(x));
            c.changes
        } else {
            changes(v)
        }
    }
    let descartes = counted(&ints);
    let mut sums = ints;
    let mut total = 0i64;
    for x in sums.iter_mut() {
        total += *x;
        *x = total;
    }
    if total == 0 {
        return SignBounds::without_sums(descartes);
    }
    let forward = counted(&sums);
    // The backward sums are the total, then the total less each forward sum but the
    // last (which is the total itself).
    for x in sums.iter_mut() {
        *x = total - *x;
    }
    sums.pop();
    sums.insert(0, total);
    let backward = counted(&sums);
    SignBounds::new(descartes, forward, backward)
}

/// [`sign_bounds_int`] when every amount has the same scale: the mantissas are then
/// the integers themselves, below 2^96 each, so sums of fewer than 2^30 of them stay
/// far inside `i128` and need no overflow checks; the backward sums are the total
/// minus the forward sums, so nothing is stored.
pub(super) fn sign_bounds_same_scale(amounts: &[Decimal]) -> SignBounds {
    let (mut v, mut f) = (SignCount::default(), SignCount::default());
    let mut total = 0i128;
    for a in amounts {
        let m = a.mantissa();
        v.push(m);
        total += m;
        f.push(total);
    }
    if total == 0 {
        return SignBounds::without_sums(v.changes);
    }
    let mut b = SignCount::default();
    let mut before = 0i128;
    for a in amounts {
        b.push(total - before);
        before += a.mantissa();
    }
    SignBounds::new(v.changes, f.changes, b.changes)
}

#[cfg(test)]
/// Sign-change bounds of a netted series: Descartes, above 0%, below 0%.
pub(crate) fn sign_bounds(amounts: &[Decimal]) -> SignBounds {
    match small_integers(amounts) {
        Some(ints) => sign_bounds_of_integers(ints),
        None => sign_bounds_wide(amounts),
    }
}

/// [`sign_bounds`] for amounts that [`small_integers`] does not take: in `i128` at one
/// scale where that suffices, otherwise in decimals.
pub(super) fn sign_bounds_wide(amounts: &[Decimal]) -> SignBounds {
    if let Some(bounds) = sign_bounds_int(amounts) {
        return bounds;
    }
    let v = sign_changes(amounts.iter().copied());
    let mut fwd = Vec::with_capacity(amounts.len());
    let mut acc = Decimal::ZERO;
    let mut overflow = false;
    for a in amounts {
        match acc.checked_add(*a) {
            Some(x) => acc = x,
            None => overflow = true,
        }
        fwd.push(acc);
    }
    if overflow || acc.is_zero() {
        return SignBounds::without_sums(v);
    }
    let mut bwd = Vec::with_capacity(amounts.len());
    let mut acc2 = Decimal::ZERO;
    for a in amounts.iter().rev() {
        acc2 += *a;
        bwd.push(acc2);
    }
    SignBounds::new(
        v,
        sign_changes(fwd.into_iter()),
        sign_changes(bwd.into_iter()),
    )
}
