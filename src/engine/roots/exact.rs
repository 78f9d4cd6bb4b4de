//! Exact settling of the roots: the NPV as an integer polynomial, its square-free
//! chain by integer gcds, and every positive root isolated by Descartes' rule of signs
//! in big integers.
//!
//! The amounts are exact decimals, so at a common decimal scale they are integers
//! `c_k`; with the integer exponents `n_k` of the series (see the parent module) and
//! `x = 1 + rate per step`, `x^N f(ln x) = P(x) = sum c_k x^(N - n_k)` with `N` the
//! last exponent. Periodic flows give a dense polynomial, dated flows a sparse one on
//! their common day step; either way the real IRRs are exactly the positive roots of
//! `P` (and `P(0) = c_last` is not zero).
//!
//! 1. Square-free chain. `G_0 = P`, `G_(j+1) = gcd(G_j, G_j')`, computed modulo
//!    62-bit primes, lifted by the Chinese remainder theorem and proven by exact
//!    division (a modular gcd never has a lower degree than the true one when the prime
//!    keeps the degrees, so a candidate that divides both is the gcd). `S_j = G_j /
//!    G_(j+1)` is square-free and holds the roots of multiplicity greater than `j`; a
//!    root's multiplicity is the number of `S_j` that vanish there (Yun's reading of
//!    the chain, without its further gcds).
//! 2. Isolation. The roots of `S = S_0` in (0, 1) and, through `t = 1/x`, in (1, inf)
//!    are isolated by Vincent-Collins-Akritas bisection: on a dyadic interval mapped
//!    to (0, 1), the sign changes of `(1 + t)^d A(1 / (1 + t))` bound the roots there
//!    and are exact when they are 0 or 1. `x = 1` and bisection points are tested
//!    exactly.
//! 3. Each isolating interval holds one simple root of `S`, so the sign of `S` (or of
//!    `S'` at an end that is itself a root) tells which half holds it: bisection
//!    narrows it to a relative width of 2^-56 in both the growth factor and the rate;
//!    `S_j` changes sign across it exactly when the root has multiplicity above `j`.
//! 4. Bounds on `y = ln x` are rounded outwards from the exact rational ends (see
//!    [`log_bounds`]).
//!
//! All of it runs within a work budget counted in machine-word operations, so the
//! outcome depends on the input only (never on the machine's speed); past the budget
//! the caller keeps the floating-point answer and says the count is not certified.

use num_bigint::{BigInt, Sign};
use num_integer::Integer;
use num_traits::{One, Signed, ToPrimitive, Zero};
use rust_decimal::Decimal;

/// Work allowed for one series, in word operations (see [`Work`]): about 100 ms on
/// the development machine in the test build (measured by `budget_table` below: the
/// work per millisecond varies with the size of the numbers, 0.1 to 0.25 million).
pub(crate) const WORK_LIMIT: u64 = 12_000_000;

/// A polynomial with integer coefficients, the coefficient of x^i at index i, with no
/// zero leading coefficient (the zero polynomial is empty).
pub(crate) type Poly = Vec<BigInt>;

/// The exact work spent, counted in 64-bit word operations of the big-integer
/// arithmetic (estimated per operation from the operands' sizes).
#[derive(Debug)]
pub(crate) struct Work {
    spent: u64,
    limit: u64,
}

/// The budget ran out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct OutOfBudget;

impl Work {
    /// A budget of `limit` word operations.
    pub fn new(limit: u64) -> Work {
        Work { spent: 0, limit }
    }

    /// Word operations spent so far.
    pub(crate) fn spent(&self) -> u64 {
        self.spent
    }

    fn charge(&mut self, units: u64) -> Result<(), OutOfBudget> {
        self.spent = self.spent.saturating_add(units);
        if self.spent > self.limit {
            Err(OutOfBudget)
        } else {
            Ok(())
        }
    }
}

/// Words of a big integer (at least one).
fn words(v: &BigInt) -> u64 {
    v.bits() / 64 + 1
}

/// Words of the largest coefficient.
fn max_words(p: &[BigInt]) -> u64 {
    p.iter().map(words).max().unwrap_or(1)
}

fn trim(p: &mut Poly) {
    while p.last().is_some_and(|c| c.is_zero()) {
        p.pop();
    }
}

fn degree(p: &[BigInt]) -> usize {
    p.len().saturating_sub(1)
}

/// The amounts at a common decimal scale, as integers.
pub(crate) fn integer_amounts(amounts: &[Decimal]) -> Vec<BigInt> {
    let scale = amounts.iter().map(|a| a.scale()).max().unwrap_or(0);
    amounts
        .iter()
        .map(|a| {
            let mut m = BigInt::from(a.mantissa());
            for _ in a.scale()..scale {
                m *= 10;
            }
            m
        })
        .collect()
}

/// `P(x) = sum c_k x^(N - n_k)` for exponents `n_k` increasing from 0 to N.
pub(crate) fn npv_polynomial(amounts: &[Decimal], exps: &[u64]) -> Poly {
    let big_n = exps.last().copied().unwrap_or(0) as usize;
    let mut p: Poly = vec![BigInt::zero(); big_n + 1];
    for (c, &e) in integer_amounts(amounts).into_iter().zip(exps) {
        p[big_n - e as usize] += c;
    }
    trim(&mut p);
    p
}

fn derivative(p: &[BigInt]) -> Poly {
    let mut d: Poly = p
        .iter()
        .enumerate()
        .skip(1)
        .map(|(i, c)| c * BigInt::from(i))
        .collect();
    trim(&mut d);
    d
}

/// The polynomial divided by the gcd of its coefficients, leading coefficient positive.
fn primitive(mut p: Poly, work: &mut Work) -> Result<Poly, OutOfBudget> {
    work.charge(p.len() as u64 * max_words(&p))?;
    let mut g = BigInt::zero();
    for c in &p {
        g = g.gcd(c);
        if g.is_one() {
            break;
        }
    }
    if p.last().is_some_and(|c| c.is_negative()) {
        g = -g;
    }
    if !g.is_zero() && !g.is_one() {
        for c in &mut p {
            *c /= &g;
        }
    }
    Ok(p)
}

/// `a / b` when `b` divides `a` exactly over the integers.
fn divide_exact(a: &[BigInt], b: &[BigInt], work: &mut Work) -> Result<Option<Poly>, OutOfBudget> {
    if b.is_empty() {
        return Ok(None);
    }
    if a.len() < b.len() {
        return Ok(if a.is_empty() { Some(Vec::new()) } else { None });
    }
    let (da, db) = (degree(a), degree(b));
    work.charge(((da - db + 1) * (db + 1)) as u64 * (max_words(a) + max_words(b)))?;
    let mut r: Poly = a.to_vec();
    let mut q: Poly = vec![BigInt::zero(); da - db + 1];
    let lb = &b[db];
    for i in (0..=da - db).rev() {
        let top = &r[i + db];
        if top.is_zero() {
            continue;
        }
        let (qi, rem) = top.div_rem(lb);
        if !rem.is_zero() {
            return Ok(None);
        }
        for (j, bj) in b.iter().enumerate() {
            r[i + j] -= &qi * bj;
        }
        q[i] = qi;
    }
    Ok(if r.iter().all(|c| c.is_zero()) {
        trim(&mut q);
        Some(q)
    } else {
        None
    })
}

// ------------------------------------------------------------ arithmetic modulo p

fn mul_mod(a: u64, b: u64, p: u64) -> u64 {
    ((a as u128 * b as u128) % p as u128) as u64
}

fn pow_mod(mut a: u64, mut e: u64, p: u64) -> u64 {
    let mut r = 1u64;
    a %= p;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, a, p);
        }
        a = mul_mod(a, a, p);
        e >>= 1;
    }
    r
}

/// Deterministic Miller-Rabin: the first twelve primes as bases decide every n below
/// 3.3 * 10^24 (Sorenson and Webster 2017), far above 2^64.
fn is_prime(n: u64) -> bool {
    const BASES: [u64; 12] = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37];
    if n < 2 {
        return false;
    }
    for &b in &BASES {
        if n.is_multiple_of(b) {
            return n == b;
        }
    }
    let (mut d, mut s) = (n - 1, 0);
    while d % 2 == 0 {
        d /= 2;
        s += 1;
    }
    'bases: for &b in &BASES {
        let mut x = pow_mod(b, d, n);
        if x == 1 || x == n - 1 {
            continue;
        }
        for _ in 1..s {
            x = mul_mod(x, x, n);
            if x == n - 1 {
                continue 'bases;
            }
        }
        return false;
    }
    true
}

/// Primes below 2^62, from the top down.
fn primes() -> impl Iterator<Item = u64> {
    ((1u64 << 61)..(1u64 << 62))
        .rev()
        .step_by(2)
        .filter(|&n| is_prime(n))
}

fn reduce(p: &[BigInt], m: u64) -> Vec<u64> {
    let mb = BigInt::from(m);
    p.iter()
        .map(|c| c.mod_floor(&mb).to_u64().unwrap_or(0))
        .collect()
}

fn trim_mod(p: &mut Vec<u64>) {
    while p.last() == Some(&0) {
        p.pop();
    }
}

/// Monic gcd of two polynomials modulo the prime `m` (Euclid).
fn gcd_mod(mut a: Vec<u64>, mut b: Vec<u64>, m: u64) -> Vec<u64> {
    trim_mod(&mut a);
    trim_mod(&mut b);
    while !b.is_empty() {
        // a <- a mod b
        let inv = pow_mod(b[b.len() - 1], m - 2, m);
        while a.len() >= b.len() {
            let shift = a.len() - b.len();
            let f = mul_mod(a[a.len() - 1], inv, m);
            for (j, &bj) in b.iter().enumerate() {
                let t = mul_mod(f, bj, m);
                let slot = &mut a[shift + j];
                *slot = if *slot >= t { *slot - t } else { *slot + m - t };
            }
            trim_mod(&mut a);
        }
        std::mem::swap(&mut a, &mut b);
    }
    if let Some(&lead) = a.last() {
        let inv = pow_mod(lead, m - 2, m);
        for c in &mut a {
            *c = mul_mod(*c, inv, m);
        }
    }
    a
}

/// The gcd of two integer polynomials (primitive, leading coefficient positive),
/// by modular images and exact-division proof.
fn gcd(a: &[BigInt], b: &[BigInt], work: &mut Work) -> Result<Poly, OutOfBudget> {
    if b.is_empty() {
        return primitive(a.to_vec(), work);
    }
    if a.is_empty() {
        return primitive(b.to_vec(), work);
    }
    // The gcd's leading coefficient divides both leading coefficients.
    let lead = a[a.len() - 1].gcd(&b[b.len() - 1]);
    let (da, db) = (degree(a), degree(b));
    let mut best: Option<(usize, Vec<BigInt>, BigInt)> = None;
    for (tries, m) in primes().enumerate() {
        if tries > 400 {
            return Err(OutOfBudget);
        }
        work.charge(((da + 1) * (db + 1)) as u64 + (a.len() as u64 * max_words(a)))?;
        let (ra, rb) = (reduce(a, m), reduce(b, m));
        if ra[da] == 0 || rb[db] == 0 {
            continue;
        }
        let g = gcd_mod(ra, rb, m);
        let dg = degree_mod(&g);
        if dg == 0 {
            return Ok(vec![BigInt::one()]);
        }
        let l = lead.mod_floor(&BigInt::from(m)).to_u64().unwrap_or(0);
        let image: Vec<u64> = g.iter().map(|&c| mul_mod(c, l, m)).collect();
        let mb = BigInt::from(m);
        match &mut best {
            Some((d, h, modulus)) if *d == dg => {
                // Chinese remainders: h mod modulus and image mod m.
                let inv = pow_mod(modulus.mod_floor(&mb).to_u64().unwrap_or(0), m - 2, m);
                let product = &*modulus * &mb;
                let half = &product >> 1u32;
                let mut changed = false;
                for (hc, &r) in h.iter_mut().zip(&image) {
                    let u = hc.mod_floor(modulus);
                    let um = u.mod_floor(&mb).to_u64().unwrap_or(0);
                    let t = mul_mod((r + m - um) % m, inv, m);
                    let mut v = &u + &*modulus * BigInt::from(t);
                    if v > half {
                        v -= &product;
                    }
                    if v != *hc {
                        changed = true;
                        *hc = v;
                    }
                }
                *modulus = product;
                work.charge(h.len() as u64 * max_words(h))?;
                if !changed {
                    let candidate = primitive(h.clone(), work)?;
                    if divide_exact(a, &candidate, work)?.is_some()
                        && divide_exact(b, &candidate, work)?.is_some()
                    {
                        return Ok(candidate);
                    }
                }
            }
            Some((d, _, _)) if *d < dg => {}
            _ => {
                let half = m / 2;
                let h = image
                    .iter()
                    .map(|&c| {
                        if c > half {
                            BigInt::from(c) - &mb
                        } else {
                            BigInt::from(c)
                        }
                    })
                    .collect();
                best = Some((dg, h, mb));
            }
        }
    }
    Err(OutOfBudget)
}

fn degree_mod(p: &[u64]) -> usize {
    p.len().saturating_sub(1)
}

// ------------------------------------------------------------ signs and isolation

/// `p(num / 2^k) * 2^(k deg p)`, whose sign is that of `p` at the dyadic point.
fn eval_dyadic(p: &[BigInt], num: &BigInt, k: u64, work: &mut Work) -> Result<BigInt, OutOfBudget> {
    if p.is_empty() {
        return Ok(BigInt::zero());
    }
    let n = degree(p);
    work.charge(n as u64 * (max_words(p) + (num.bits() + k) * n as u64 / 64 + 1))?;
    let mut v = p[n].clone();
    for i in (0..n).rev() {
        v = v * num + (&p[i] << (k * (n - i) as u64));
    }
    Ok(v)
}

/// `p(num / den) * den^(deg p)` for `den > 0`.
fn eval_rational(
    p: &[BigInt],
    num: &BigInt,
    den: &BigInt,
    work: &mut Work,
) -> Result<BigInt, OutOfBudget> {
    let n = degree(p);
    if p.is_empty() {
        return Ok(BigInt::zero());
    }
    work.charge(n as u64 * (max_words(p) + (num.bits() + den.bits()) * n as u64 / 64 + 1))?;
    let mut v = p[n].clone();
    let mut dpow = BigInt::one();
    for i in (0..n).rev() {
        dpow *= den;
        v = v * num + &p[i] * &dpow;
    }
    Ok(v)
}

fn sign(v: &BigInt) -> i8 {
    match v.sign() {
        Sign::Plus => 1,
        Sign::Minus => -1,
        Sign::NoSign => 0,
    }
}

/// Sign changes of a coefficient sequence (zeros skipped).
fn variations(p: &[BigInt]) -> u32 {
    let mut last = 0i8;
    let mut n = 0;
    for c in p {
        let s = sign(c);
        if s != 0 {
            if last != 0 && s != last {
                n += 1;
            }
            last = s;
        }
    }
    n
}

/// p(t) -> p(t + 1), in place.
fn taylor_shift(p: &mut [BigInt], work: &mut Work) -> Result<(), OutOfBudget> {
    let n = degree(p);
    work.charge((n * n / 2 + 1) as u64 * (max_words(p) + n as u64 / 64 + 1))?;
    for i in 0..n {
        for j in (i..n).rev() {
            let (lo, hi) = p.split_at_mut(j + 1);
            lo[j] += &hi[0];
        }
    }
    Ok(())
}

/// Descartes' bound on the roots of `a` in (0, 1): sign changes of
/// (1 + t)^d a(1 / (1 + t)).
fn roots_in_unit(a: &[BigInt], work: &mut Work) -> Result<u32, OutOfBudget> {
    let mut b: Poly = a.iter().rev().cloned().collect();
    // Leading zeros of the reversal (a's root at 0) are not roots in (0, 1).
    taylor_shift(&mut b, work)?;
    Ok(variations(&b))
}

/// A root of the square-free part, in the variable `t` of one half of the axis: `t = x`
/// on (0, 1), `t = 1/x` on (1, inf). Either the exact dyadic `num / 2^k` or the open
/// interval ((num) / 2^k, (num + 1) / 2^k) holding exactly one root.
#[derive(Debug, Clone)]
struct Isolated {
    num: BigInt,
    k: u64,
    exact: bool,
}

/// Isolates the roots of the square-free `a` in (0, 1).
fn isolate_unit(a: &[BigInt], work: &mut Work) -> Result<Vec<Isolated>, OutOfBudget> {
    let mut out = Vec::new();
    let mut stack: Vec<(Poly, BigInt, u64)> = vec![(a.to_vec(), BigInt::zero(), 0)];
    while let Some((p, c, k)) = stack.pop() {
        if k > 4000 {
            return Err(OutOfBudget);
        }
        match roots_in_unit(&p, work)? {
            0 => continue,
            1 => {
                out.push(Isolated {
                    num: c,
                    k,
                    exact: false,
                });
                continue;
            }
            _ => {}
        }
        // Halves: left 2^d p(t/2), right the same shifted by one.
        let d = degree(&p);
        let mut left: Poly = p
            .iter()
            .enumerate()
            .map(|(i, ci)| ci << (d - i) as u64)
            .collect();
        left = primitive(left, work)?;
        let mut right = left.clone();
        taylor_shift(&mut right, work)?;
        let c2: BigInt = &c << 1u32;
        if right[0].is_zero() {
            // The midpoint is a root: record it and divide it out of the right half.
            out.push(Isolated {
                num: &c2 + 1,
                k: k + 1,
                exact: true,
            });
            right.remove(0);
        }
        stack.push((right, &c2 + 1, k + 1));
        stack.push((left, c2, k + 1));
    }
    Ok(out)
}

/// Sign of `p` just inside the end `num / 2^k` of an interval, on the side `towards`
/// (+1: to the right, -1: to the left), for `p` square-free (so a root at the end is
/// simple and the derivative decides).
fn inner_sign(
    p: &[BigInt],
    num: &BigInt,
    k: u64,
    towards: i8,
    work: &mut Work,
) -> Result<i8, OutOfBudget> {
    let v = sign(&eval_dyadic(p, num, k, work)?);
    if v != 0 {
        return Ok(v);
    }
    let d = derivative(p);
    Ok(towards * sign(&eval_dyadic(&d, num, k, work)?))
}

/// One root of P found exactly: in `x = 1 + rate per step`, the rational interval
/// [lo_num / lo_den, hi_num / hi_den] (a point when the root is known exactly), with
/// its multiplicity.
#[derive(Debug, Clone)]
pub(crate) struct ExactRoot {
    /// Lower end in x, numerator.
    pub lo_num: BigInt,
    /// Lower end in x, denominator (positive).
    pub lo_den: BigInt,
    /// Upper end in x, numerator.
    pub hi_num: BigInt,
    /// Upper end in x, denominator (positive).
    pub hi_den: BigInt,
    /// Multiplicity.
    pub multiplicity: u32,
    /// True when the root is exactly lo (= hi).
    pub exact: bool,
}

/// Every positive root of `p` (not zero at 0), ascending, with multiplicities.
pub(crate) fn positive_roots(p: &[BigInt], work: &mut Work) -> Result<Vec<ExactRoot>, OutOfBudget> {
    // The square-free chain.
    let mut chain: Vec<Poly> = vec![primitive(p.to_vec(), work)?];
    loop {
        let g = chain.last().map(|q| q.as_slice()).unwrap_or(&[]);
        if degree(g) == 0 {
            break;
        }
        let next = gcd(g, &derivative(g), work)?;
        chain.push(next);
    }
    // S_j = G_j / G_(j+1), j = 0 .. len - 2.
    let mut parts: Vec<Poly> = Vec::new();
    for w in chain.windows(2) {
        let q = divide_exact(&w[0], &w[1], work)?.ok_or(OutOfBudget)?;
        parts.push(primitive(q, work)?);
    }
    let mut roots: Vec<ExactRoot> = Vec::new();
    let Some(sq) = parts.first() else {
        return Ok(roots);
    };
    // x = 1.
    let one = BigInt::one();
    let multiplicity_at =
        |num: &BigInt, den: &BigInt, work: &mut Work| -> Result<u32, OutOfBudget> {
            let mut m = 0;
            for s in &parts {
                if eval_rational(s, num, den, work)?.is_zero() {
                    m += 1;
                } else {
                    break;
                }
            }
            Ok(m)
        };
    // Both halves in t: (0, 1) on S itself, (1, inf) on its reversal.
    for rev in [false, true] {
        let a: Poly = if rev {
            sq.iter().rev().cloned().collect()
        } else {
            sq.clone()
        };
        let a_parts: Vec<Poly> = parts
            .iter()
            .map(|s| {
                if rev {
                    s.iter().rev().cloned().collect()
                } else {
                    s.clone()
                }
            })
            .collect();
        for iso in isolate_unit(&a, work)? {
            let root = if iso.exact {
                let (num, den) = (iso.num.clone(), BigInt::one() << iso.k);
                let m = multiplicity_at_t(&a_parts, &num, iso.k, work)?;
                let (xn, xd) = if rev { (den, num) } else { (num, den) };
                ExactRoot {
                    lo_num: xn.clone(),
                    lo_den: xd.clone(),
                    hi_num: xn,
                    hi_den: xd,
                    multiplicity: m,
                    exact: true,
                }
            } else {
                let r = refine(&a, &a_parts, iso, rev, work)?;
                match decimal_point(sq, &r, work)? {
                    Some((num, den)) => ExactRoot {
                        lo_num: num.clone(),
                        lo_den: den.clone(),
                        hi_num: num,
                        hi_den: den,
                        exact: true,
                        ..r
                    },
                    None => r,
                }
            };
            roots.push(root);
        }
    }
    let m1 = multiplicity_at(&one, &one, work)?;
    if m1 > 0 {
        roots.push(ExactRoot {
            lo_num: one.clone(),
            lo_den: one.clone(),
            hi_num: one.clone(),
            hi_den: one,
            multiplicity: m1,
            exact: true,
        });
    }
    roots.sort_by(|a, b| (&a.lo_num * &b.lo_den).cmp(&(&b.lo_num * &a.lo_den)));
    Ok(roots)
}

/// The growth factor of a short decimal rate (at most 12 places) inside the root's
/// interval at which the square-free `sq` vanishes exactly: then it is the root.
fn decimal_point(
    sq: &[BigInt],
    r: &ExactRoot,
    work: &mut Work,
) -> Result<Option<(BigInt, BigInt)>, OutOfBudget> {
    use rust_decimal::prelude::FromPrimitive;
    let (rate, _) = ratio_bounds(&(&r.lo_num - &r.lo_den), &r.lo_den);
    let Some(base) = Decimal::from_f64(rate) else {
        return Ok(None);
    };
    let mut tried: Vec<Decimal> = Vec::new();
    for digits in 0..=12u32 {
        let cand = base.round_dp(digits);
        if tried.contains(&cand) {
            continue;
        }
        tried.push(cand);
        let Some(growth) = Decimal::ONE.checked_add(cand) else {
            continue;
        };
        if growth <= Decimal::ZERO {
            continue;
        }
        let num = BigInt::from(growth.mantissa());
        let den = num_traits::pow(BigInt::from(10), growth.scale() as usize);
        let inside = &r.lo_num * &den <= &num * &r.lo_den && &num * &r.hi_den <= &r.hi_num * &den;
        if inside && eval_rational(sq, &num, &den, work)?.is_zero() {
            return Ok(Some((num, den)));
        }
    }
    Ok(None)
}

/// Multiplicity at the exact dyadic `num / 2^k` (in t): the parts vanishing there.
fn multiplicity_at_t(
    parts: &[Poly],
    num: &BigInt,
    k: u64,
    work: &mut Work,
) -> Result<u32, OutOfBudget> {
    let mut m = 0;
    for s in parts {
        if eval_dyadic(s, num, k, work)?.is_zero() {
            m += 1;
        } else {
            break;
        }
    }
    Ok(m)
}

/// Narrows an isolating interval of the square-free `a` (in t) and reads the
/// multiplicity from the chain's parts; the result in x.
fn refine(
    a: &[BigInt],
    parts: &[Poly],
    iso: Isolated,
    rev: bool,
    work: &mut Work,
) -> Result<ExactRoot, OutOfBudget> {
    let (mut lo, mut k) = (iso.num, iso.k);
    let mut hi: BigInt = &lo + 1;
    let s_lo = inner_sign(a, &lo, k, 1, work)?;
    // Until the width 2^-k is below 2^-56 of both ends' distances to 0 and to 1 (the
    // growth factor and the rate per step then both carry about 56 good bits).
    let mut exact = None;
    for _ in 0..20_000 {
        let one_k: BigInt = BigInt::one() << k;
        let to_one = &one_k - &hi;
        let small = if lo < to_one { &lo } else { &to_one };
        if small.bits() > 57 {
            break;
        }
        let mid: BigInt = (&lo << 1u32) + 1;
        k += 1;
        let s = sign(&eval_dyadic(a, &mid, k, work)?);
        if s == 0 {
            exact = Some(mid);
            break;
        }
        if s == s_lo {
            lo = mid;
            hi = &lo + 1;
        } else {
            hi = mid;
            lo = &hi - 1;
        }
    }
    let m = match &exact {
        Some(mid) => multiplicity_at_t(parts, mid, k, work)?,
        None => {
            let mut m = 0;
            for s in parts {
                let l = inner_sign(s, &lo, k, 1, work)?;
                let h = inner_sign(s, &hi, k, -1, work)?;
                if l != h {
                    m += 1;
                } else {
                    break;
                }
            }
            m
        }
    };
    let den = BigInt::one() << k;
    let is_exact = exact.is_some();
    let (lo, hi) = match exact {
        Some(mid) => (mid.clone(), mid),
        None => (lo, hi),
    };
    if rev && lo.is_zero() {
        // (Only when the refinement cap was reached next to t = 0: x unbounded.)
        return Err(OutOfBudget);
    }
    // t = x on (0, 1); t = 1/x on (1, inf), which reverses the ends.
    Ok(if rev {
        ExactRoot {
            lo_num: den.clone(),
            lo_den: hi,
            hi_num: den,
            hi_den: lo,
            multiplicity: m,
            exact: is_exact,
        }
    } else {
        ExactRoot {
            lo_num: lo,
            lo_den: den.clone(),
            hi_num: hi,
            hi_den: den,
            multiplicity: m,
            exact: is_exact,
        }
    })
}

// ------------------------------------------------------------ outward rounding

fn next_up(v: f64) -> f64 {
    if v.is_nan() || v == f64::INFINITY {
        return v;
    }
    if v == 0.0 {
        return f64::from_bits(1);
    }
    let b = v.to_bits();
    f64::from_bits(if v > 0.0 { b + 1 } else { b - 1 })
}

fn next_down(v: f64) -> f64 {
    -next_up(-v)
}

/// 2^e as a float multiplier, applied in steps that stay normal.
fn scale2(mut v: f64, mut e: i64) -> f64 {
    while e != 0 && v != 0.0 && v.is_finite() {
        let step = e.clamp(-1000, 1000);
        v *= f64::from_bits(((1023 + step) as u64) << 52);
        e -= step;
    }
    v
}

/// Floats `lo <= num / den <= hi` (den > 0).
pub(crate) fn ratio_bounds(num: &BigInt, den: &BigInt) -> (f64, f64) {
    if num.is_zero() {
        return (0.0, 0.0);
    }
    // Scale so that the integer quotient carries 64 to 66 bits.
    let s = 66 + den.bits() as i64 - num.bits() as i64;
    let q = if s >= 0 {
        (num << s as u64).div_floor(den)
    } else {
        num.div_floor(&(den << (-s) as u64))
    };
    // q <= num 2^s / den < q + 1, and the conversion is faithful (one of the two floats
    // beside q), so one step out each way (and one more above for the + 1, below an ulp
    // at this size) bounds the quotient.
    let qf = q.to_f64().unwrap_or(f64::NAN);
    let (lo, hi) = (next_down(qf), next_up(next_up(qf)));
    // Scaling by a power of two is exact unless it leaves the normal range; another step
    // out covers that rounding.
    (next_down(scale2(lo, -s)), next_up(scale2(hi, -s)))
}

/// Error allowance of the platform's `ln` and `ln_1p` (the C library's log and log1p,
/// which are not correctly rounded; glibc documents at most 1 to 2 ulp for them on
/// x86-64 and aarch64): four ulp, as a relative bound.
const LOG_ULPS: f64 = 4.0 * f64::EPSILON;

fn pad_down(v: f64) -> f64 {
    next_down(v - LOG_ULPS * v.abs())
}

fn pad_up(v: f64) -> f64 {
    next_up(v + LOG_ULPS * v.abs())
}

/// Floats `lo <= ln(num / den) <= hi` for a positive rational. Near 1 the logarithm is
/// taken as ln_1p of the exactly computed rate, so that the relative error stays
/// small however close to 0% the rate is; elsewhere as ln of the ratio. Both rest on
/// the monotonicity of the functions and [`LOG_ULPS`].
pub(crate) fn log_bounds(num: &BigInt, den: &BigInt) -> (f64, f64) {
    if num == den {
        return (0.0, 0.0);
    }
    let two_num: BigInt = num << 1u32;
    let two_den: BigInt = den << 1u32;
    if two_num >= *den && *num <= two_den {
        let (rlo, rhi) = ratio_bounds(&(num - den), den);
        (pad_down(rlo.ln_1p()), pad_up(rhi.ln_1p()))
    } else {
        let (xlo, xhi) = ratio_bounds(num, den);
        (pad_down(xlo.ln()), pad_up(xhi.ln()))
    }
}

/// Floats bounding ln(1 + rate) for an exact decimal rate above -100%.
pub(crate) fn log_growth_bounds(rate: Decimal) -> Option<(f64, f64)> {
    let growth = Decimal::ONE.checked_add(rate)?;
    if growth <= Decimal::ZERO {
        return None;
    }
    let num = BigInt::from(growth.mantissa());
    let den = num_traits::pow(BigInt::from(10), growth.scale() as usize);
    Some(log_bounds(&num, &den))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn poly(c: &[i64]) -> Poly {
        c.iter().map(|&v| BigInt::from(v)).collect()
    }

    /// Product of the linear factors (a_i x - b_i), expanded in integers.
    fn from_roots(factors: &[(i64, i64)]) -> Poly {
        let mut p = poly(&[1]);
        for &(a, b) in factors {
            let mut q = vec![BigInt::zero(); p.len() + 1];
            for (i, c) in p.iter().enumerate() {
                q[i + 1] += c * a;
                q[i] -= c * b;
            }
            p = q;
        }
        p
    }

    fn contains(r: &ExactRoot, num: i64, den: i64) -> bool {
        let (n, d) = (BigInt::from(num), BigInt::from(den));
        &r.lo_num * &d <= &n * &r.lo_den && &n * &r.hi_den <= &r.hi_num * &d
    }

    #[test]
    fn primes_are_prime() {
        // 2^61 - 1 is a Mersenne prime (common practice); 2^62 - 57 is the largest prime
        // below 2^62 (from memory; the test checks the generator agrees with the
        // primality test either way).
        assert!(is_prime((1 << 61) - 1));
        assert!(!is_prime((1 << 61) + 1));
        assert!(!is_prime(561)); // Carmichael number (common practice)
        let first = primes().next().unwrap();
        assert_eq!(first, (1u64 << 62) - 57);
    }

    #[test]
    fn gcd_of_constructed_polynomials() {
        // (2x - 3)^2 (x + 5) and its derivative share (2x - 3).
        let mut w = Work::new(u64::MAX);
        let p = from_roots(&[(2, 3), (2, 3), (1, -5)]);
        let g = gcd(&p, &derivative(&p), &mut w).unwrap();
        assert_eq!(g, poly(&[-3, 2]));
    }

    #[test]
    fn multiplicities_and_intervals_of_constructed_roots() {
        // (1000x - 1001)^2 (51x - 23)^3 (x - 1) (3x - 7): roots 1.001 (double), 23/51
        // (triple), 1 (simple, 0%) and 7/3, built by expanding the factors.
        let mut w = Work::new(u64::MAX);
        let p = from_roots(&[
            (1000, 1001),
            (1000, 1001),
            (51, 23),
            (51, 23),
            (51, 23),
            (1, 1),
            (3, 7),
        ]);
        let roots = positive_roots(&p, &mut w).unwrap();
        let got: Vec<u32> = roots.iter().map(|r| r.multiplicity).collect();
        assert_eq!(got, vec![3, 1, 2, 1]);
        assert!(contains(&roots[0], 23, 51));
        assert!(contains(&roots[1], 1, 1) && roots[1].exact);
        assert!(contains(&roots[2], 1001, 1000));
        assert!(contains(&roots[3], 7, 3));
    }

    #[test]
    fn log_bounds_hold_the_logarithm_of_short_rates() {
        // ln(1.001) = 9.995003330835331668...e-4 (series ln(1+r) = r - r^2/2 + r^3/3 -
        // ..., common practice): the float ln of the rounded 1.001 misses it.
        let (lo, hi) = log_bounds(&BigInt::from(1001), &BigInt::from(1000));
        assert!(lo <= 9.995003330835331e-4 && 9.995003330835332e-4 <= hi);
        assert!(hi - lo < 1e-17);
        // ln(10^-6) = -13.815510557964274104... (common practice: 6 ln 10).
        let (lo, hi) = log_bounds(&BigInt::from(1), &BigInt::from(1_000_000));
        assert!(lo <= -13.815510557964275 && -13.815510557964274 <= hi);
    }
}

/// The budget table of the closing note: `cargo test --lib budget_table -- --ignored
/// --nocapture` prints, for constructed series of growing degree and sign changes,
/// the work and time of the exact settling and whether it fits [`WORK_LIMIT`].
#[cfg(test)]
mod budget {
    use super::*;

    fn times(p: &[BigInt], a: i64, b: i64) -> Poly {
        let mut q = vec![BigInt::zero(); p.len() + 1];
        for (i, c) in p.iter().enumerate() {
            q[i + 1] += c * a;
            q[i] -= c * b;
        }
        q
    }

    #[test]
    #[ignore]
    fn budget_table() {
        for &roots in &[2usize, 4, 8, 12] {
            for &degree in &[10usize, 20, 40, 60, 80, 120, 160, 240, 320, 480] {
                if degree < roots + 2 {
                    continue;
                }
                // (1000x - 1001)^2 prod (100x - (90 + 5i)) times 1 + 2x + ... (positive).
                let mut p: Poly = (0..=degree - roots)
                    .map(|i| BigInt::from(1 + (i % 7) as i64))
                    .collect();
                p = times(&p, 1000, 1001);
                p = times(&p, 1000, 1001);
                for i in 0..roots - 2 {
                    p = times(&p, 100, 90 + 5 * i as i64);
                }
                let changes = variations(&p);
                let mut w = Work::new(u64::MAX);
                let t = std::time::Instant::now();
                let found = positive_roots(&p, &mut w).map(|r| r.len());
                let ms = t.elapsed().as_secs_f64() * 1e3;
                println!(
                    "degree {:4} sign changes {:3} roots {:?} work {:>12} ({}) {:8.1} ms",
                    degree,
                    changes,
                    found,
                    w.spent(),
                    if w.spent() <= WORK_LIMIT {
                        "fits"
                    } else {
                        "over"
                    },
                    ms
                );
            }
        }
    }
}
