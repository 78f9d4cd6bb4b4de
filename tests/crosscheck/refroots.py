"""Exact reference for the positive real roots of an integer polynomial.

This is the independent side of the cross-check: it shares no code with candor.
Given P(v) = sum c_i v^i with integer c_i, it returns every real root v > 0 with
its multiplicity, each refined to about 60 significant digits, and proves the
count exactly:

* multiplicities come from a square-free decomposition (Yun's algorithm over the
  rationals); a cheap test modulo a large prime shows most polynomials are already
  square-free, so the exact decomposition runs only where it is needed;
* each square-free factor is isolated with Descartes' rule of signs on intervals
  (Vincent-Collins-Akritas bisection, all in Python integers): an interval whose
  transformed polynomial shows 0 sign changes holds no root, one with exactly 1
  holds exactly one root, so the number of roots is proven, not estimated;
* float candidates (numpy.roots, or mpmath.polyroots at 60 digits for low degree)
  only choose the split points, so a candidate that numpy misses or invents cannot
  change the answer, only the time it takes;
* each isolated root is refined in mpmath by safeguarded Newton steps inside its
  proven bracket.

Sources for the method: Descartes' rule of signs and its interval form through the
Moebius map x = (a + b t)/(1 + t) [standard; Collins & Akritas, SYMSAC 1976, memory];
Yun's square-free factorisation [Yun, SYMSAC 1976, memory].
"""

from __future__ import annotations

import math
from fractions import Fraction

import os

# One BLAS thread: numpy's eigenvalue solver is several times slower when its
# threads compete with the worker processes of check.py.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import mpmath  # noqa: E402
import numpy as np  # noqa: E402

mpmath.mp.dps = 60

# A Mersenne prime for the modular square-free test.
_P = (1 << 61) - 1


class ReferenceError_(Exception):
    """The reference could not prove its own answer (reported, never ignored)."""


# ---------------------------------------------------------------- integer polys


def variations(seq) -> int:
    """Sign changes in a sequence, zeros skipped."""
    count = 0
    last = 0
    for x in seq:
        if x == 0:
            continue
        s = 1 if x > 0 else -1
        if last and s != last:
            count += 1
        last = s
    return count


def taylor_shift(c: list[int], a: int) -> list[int]:
    """Coefficients of p(x + a) from those of p(x) (c[i] multiplies x^i)."""
    b = list(c)
    if a == 0:
        return b
    n = len(b) - 1
    for i in range(n):
        for j in range(n - 1, i - 1, -1):
            b[j] += a * b[j + 1]
    return b


def eval_sign(c: list[int], x: Fraction) -> int:
    """Exact sign of p(x) at a rational x."""
    num, den = x.numerator, x.denominator
    # den^n p(num/den) = sum c_i num^i den^(n-i), by Horner in integers.
    acc = 0
    dpow = 1
    for i in range(len(c) - 1, -1, -1):
        acc = acc * num + c[i] * dpow
        dpow *= den
    return (acc > 0) - (acc < 0)


def _scaled(c: list[int], den: int) -> list[int]:
    """den^n p(z / den) as an integer polynomial in z."""
    out = [0] * len(c)
    dpow = 1
    for i in range(len(c) - 1, -1, -1):
        out[i] = c[i] * dpow
        dpow *= den
    return out


def descartes_interval(c: list[int], lo: Fraction, hi: Fraction | None) -> int:
    """Sign changes bounding the roots of p in the open interval (lo, hi).

    hi=None means +infinity. The result exceeds the number of roots there by an
    even number; 0 and 1 are therefore exact.
    """
    if hi is None:
        den = lo.denominator
        shifted = taylor_shift(_scaled(c, den), lo.numerator)
        return variations(shifted)
    den = lo.denominator * hi.denominator // _gcd(lo.denominator, hi.denominator)
    a = lo.numerator * (den // lo.denominator)
    w = hi.numerator * (den // hi.denominator) - a
    # q(y) = den^n p((a + w y)/den) for y in (0, 1) ...
    q = taylor_shift(_scaled(c, den), a)
    q = [qj * pow(w, j) for j, qj in enumerate(q)]
    # ... then (1+t)^n q(1/(1+t)) for t in (0, inf): reverse, shift by one.
    r = taylor_shift(q[::-1], 1)
    return variations(r)


def _gcd(a: int, b: int) -> int:
    while b:
        a, b = b, a % b
    return abs(a)


def positive_root_bound(c: list[int]) -> Fraction:
    """A power of two above every root's modulus (Fujiwara's bound,
    2 max |c_(n-k)/c_n|^(1/k), with the last term halved) [Fujiwara 1916, memory].

    Logs of the integers keep it finite for any size; the power of two is then
    raised by one as a margin against rounding in those logs.
    """
    n = len(c) - 1
    ln_lead = math.log(abs(c[-1]))
    best = -math.inf
    for k in range(1, n + 1):
        a = c[n - k]
        if a == 0:
            continue
        t = (math.log(abs(a)) - ln_lead - (math.log(2) if k == n else 0.0)) / k
        best = max(best, t)
    if best == -math.inf:
        return Fraction(1)
    e = math.ceil((best + math.log(2)) / math.log(2)) + 1
    return Fraction(2) ** e if e >= 0 else Fraction(1, 2 ** (-e))


# --------------------------------------------------------- square-free splitting


def _trim(p: list) -> list:
    while len(p) > 1 and p[-1] == 0:
        p = p[:-1]
    return p


def _mod_trim(p: list[int]) -> list[int]:
    while p and p[-1] == 0:
        p = p[:-1]
    return p


def _mod_rem(a: list[int], b: list[int]) -> list[int]:
    a = list(a)
    inv = pow(b[-1], _P - 2, _P)
    while len(a) >= len(b) and a:
        f = a[-1] * inv % _P
        off = len(a) - len(b)
        for i, bi in enumerate(b):
            a[off + i] = (a[off + i] - f * bi) % _P
        a = _mod_trim(a)
    return a


def squarefree_mod_p(c: list[int]) -> bool:
    """True when gcd(p, p') = 1 modulo a large prime, which proves p square-free."""
    a = [x % _P for x in c]
    if a[-1] == 0:
        return False
    d = _mod_trim([(i * c[i]) % _P for i in range(1, len(c))])
    if len(d) != len(c) - 1:
        return False
    a = _mod_trim(a)
    while d:
        a, d = d, _mod_rem(a, d)
    return len(a) == 1


def _q_divmod(a: list[Fraction], b: list[Fraction]):
    a = list(a)
    q = [Fraction(0)] * max(1, len(a) - len(b) + 1)
    while len(a) >= len(b) and any(a):
        f = a[-1] / b[-1]
        off = len(a) - len(b)
        q[off] = f
        for i, bi in enumerate(b):
            a[off + i] -= f * bi
        a = a[:-1]
        a = _trim(a) if a else [Fraction(0)]
        if len(a) < len(b):
            break
    return _trim(q), _trim(a) if a else [Fraction(0)]


def _q_gcd(a, b):
    a, b = _trim(a), _trim(b)
    while not (len(b) == 1 and b[0] == 0):
        _, r = _q_divmod(a, b)
        a, b = b, r
    return [x / a[-1] for x in a]


def _q_deriv(a):
    return _trim([i * a[i] for i in range(1, len(a))]) if len(a) > 1 else [Fraction(0)]


def _to_int_poly(a: list[Fraction]) -> list[int]:
    den = 1
    for x in a:
        den = den * x.denominator // _gcd(den, x.denominator)
    ints = [int(x * den) for x in a]
    g = 0
    for x in ints:
        g = _gcd(g, x)
    return [x // g for x in ints]


def squarefree_parts(c: list[int], max_degree: int = 400) -> list[tuple[list[int], int]]:
    """[(factor, multiplicity)] with square-free, pairwise coprime integer factors."""
    if squarefree_mod_p(c):
        return [(c, 1)]
    if len(c) - 1 > max_degree:
        raise ReferenceError_(f"degree {len(c) - 1} is not square-free mod p; too large for exact Yun")
    f = [Fraction(x) for x in c]
    fp = _q_deriv(f)
    a0 = _q_gcd(f, fp)
    b, _ = _q_divmod(f, a0)
    cc, _ = _q_divmod(fp, a0)
    d = [x - y for x, y in zip(_pad(cc, b), _pad(_q_deriv(b), cc))]
    d = _trim(d)
    out = []
    i = 1
    while len(b) > 1:
        a = _q_gcd(b, d)
        b, _ = _q_divmod(b, a)
        cc, _ = _q_divmod(d, a)
        d = _trim([x - y for x, y in zip(_pad(cc, b), _pad(_q_deriv(b), cc))])
        if len(a) > 1:
            out.append((_to_int_poly(a), i))
        i += 1
    return out


def _pad(a, b):
    n = max(len(a), len(b))
    return list(a) + [Fraction(0)] * (n - len(a))


# ------------------------------------------------------------------ isolation


def _grid_brackets(c: list[int], points: int = 4000) -> list[tuple[float, float]]:
    """Sign changes of p on a geometric grid of v, in floats with a log scale.

    Each term is c_i v^i = sign * exp(log|c_i| + i log v); dividing by the largest
    keeps every sum finite for any degree.
    """
    idx = np.array([i for i, x in enumerate(c) if x != 0], dtype=float)
    sg = np.array([1.0 if c[int(i)] > 0 else -1.0 for i in idx])
    lc = np.array([math.log(abs(c[int(i)])) for i in idx])
    hi = float(positive_root_bound(c))
    lo = 1.0 / float(positive_root_bound(c[::-1]))
    lv = np.linspace(math.log(lo), math.log(hi), points)
    expo = lc[None, :] + idx[None, :] * lv[:, None]
    mx = expo.max(axis=1, keepdims=True)
    vals = (sg[None, :] * np.exp(expo - mx)).sum(axis=1)
    out = []
    for k in range(points - 1):
        if vals[k] * vals[k + 1] < 0:
            out.append((math.exp(lv[k]), math.exp(lv[k + 1])))
    return out


def _candidates(c: list[int]) -> list[float]:
    """Float guesses for positive real roots, used only to pick split points."""
    n = len(c) - 1
    if n < 1:
        return []
    if n > 60:
        return [math.sqrt(a * b) for a, b in _grid_brackets(c)]
    if n <= 12:
        coeffs = [mpmath.mpf(x) for x in c[::-1]]
        try:
            roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=200)
        except mpmath.libmp.NoConvergence:
            roots = []
        out = []
        for z in roots:
            z = mpmath.mpc(z)
            if z.real > 0 and abs(z.imag) <= 1e-3 * abs(z):
                out.append(float(z.real))
        if out or not roots:
            return sorted(out)
    big = max(abs(x) for x in c)
    # Scale by a power of two so that huge integers convert to floats safely.
    shift = max(0, big.bit_length() - 900)
    fl = np.array([float(x >> shift) if shift else float(x) for x in c[::-1]])
    roots = np.roots(fl)
    out = [float(z.real) for z in roots if z.real > 0 and abs(z.imag) <= 1e-3 * abs(z)]
    return sorted(out)


def _proven_brackets(c: list[int], hints: list[float]) -> list[tuple[Fraction, Fraction]] | None:
    """Shortcut: when exact sign changes around the hints already number as many as
    Descartes' bound, each bracket holds exactly one root and there are no others."""
    bound = variations(c)
    if len(hints) != bound or bound == 0:
        return None
    out = []
    prev_hi = Fraction(0)
    for h in hints:
        for rel in (1e-12, 1e-9, 1e-6):
            lo, hi = Fraction(h * (1 - rel)), Fraction(h * (1 + rel))
            if lo > prev_hi and eval_sign(c, lo) * eval_sign(c, hi) < 0:
                out.append((lo, hi))
                prev_hi = hi
                break
        else:
            return None
    return out


def _dyadic_between(x: float, y: float, lo: Fraction, hi: Fraction) -> Fraction:
    """A short dyadic rational strictly inside (lo, hi), near (x + y) / 2."""
    target = Fraction((x + y) / 2)
    k = 4
    while True:
        s = Fraction(round(target * 2**k), 2**k)
        if lo < s < hi and (s - Fraction(x)) * (Fraction(y) - s) > 0:
            return s
        if k > 200:
            return (lo + hi) / 2
        k += 4


def isolate(c: list[int], hints: list[float], max_splits: int = 4000) -> list[tuple[Fraction, Fraction]]:
    """Isolating intervals (lo, hi) with exactly one root each, endpoints not roots.

    c must be square-free with c[0] != 0.
    """
    bound = positive_root_bound(c)
    stack = [(Fraction(0), bound)]
    intervals: list[tuple[Fraction, Fraction]] = []
    splits = 0
    while stack:
        lo, hi = stack.pop()
        v = descartes_interval(c, lo, hi)
        if v == 0:
            continue
        if v == 1:
            intervals.append((lo, hi))
            continue
        splits += 1
        if splits > max_splits:
            raise ReferenceError_("root isolation did not finish")
        inside = [h for h in hints if lo < h < hi]
        if len(inside) >= 2:
            j = len(inside) // 2
            mid = _dyadic_between(inside[j - 1], inside[j], lo, hi)
        else:
            mid = (lo + hi) / 2
        nudge = 1
        while eval_sign(c, mid) == 0:
            # A split point must not be a root, or both halves would miss it.
            mid = (lo + hi) / 2 + (hi - lo) / (2 ** (10 + nudge))
            nudge += 1
        stack.append((lo, mid))
        stack.append((mid, hi))
    return intervals


def _mpf_to_fraction(x) -> Fraction:
    man, exp = mpmath.mpf(x).man_exp
    return Fraction(man) * Fraction(2) ** exp


def _refine(c: list[int], lo: Fraction, hi: Fraction, hint: float | None) -> mpmath.mpf:
    """The one root inside (lo, hi), by safeguarded Newton at 90 digits, then proven.

    The proof: p changes sign between x(1 - 1e-45) and x(1 + 1e-45), evaluated
    exactly in rationals, and (lo, hi) holds exactly one root, so that root lies
    within 1e-45 (relative) of the returned value.
    """
    if eval_sign(c, lo) * eval_sign(c, hi) >= 0:
        raise ReferenceError_("isolating interval without a sign change")
    with mpmath.workdps(90):
        coeffs = [mpmath.mpf(x) for x in c[::-1]]
        n = len(c) - 1
        dcoeffs = [mpmath.mpf(x * (n - i)) for i, x in enumerate(c[::-1])][:-1]
        a = mpmath.mpf(lo.numerator) / lo.denominator
        b = mpmath.mpf(hi.numerator) / hi.denominator
        fa = mpmath.polyval(coeffs, a)
        x = mpmath.mpf(hint) if hint is not None and lo < Fraction(hint) < hi else (a + b) / 2
        tol = mpmath.mpf(10) ** -65
        for _ in range(3000):
            fx = mpmath.polyval(coeffs, x)
            if fx == 0:
                break
            if (fx > 0) == (fa > 0):
                a, fa = x, fx
            else:
                b = x
            if b - a <= tol * abs(b):
                x = (a + b) / 2
                break
            dx = mpmath.polyval(dcoeffs, x)
            nx = x - fx / dx if dx != 0 else None
            if nx is not None and abs(nx - x) <= tol * abs(x):
                x = nx
                break
            if nx is None or not (a < nx < b):
                nx = (a + b) / 2
            x = nx
        else:
            raise ReferenceError_("refinement did not converge")
        eps = mpmath.mpf(10) ** -45
        plo = max(_mpf_to_fraction(x * (1 - eps)), lo)
        phi = min(_mpf_to_fraction(x * (1 + eps)), hi)
    if not (eval_sign(c, plo) * eval_sign(c, phi) < 0 or eval_sign(c, _mpf_to_fraction(x)) == 0):
        raise ReferenceError_("refined root failed its exact sign check")
    return +x


def positive_roots(coeffs: list[int]) -> list[tuple[mpmath.mpf, int, tuple[Fraction, Fraction]]]:
    """Every real root v > 0 of sum coeffs[i] v^i, ascending, as
    (value to ~60 digits, multiplicity, proven isolating interval)."""
    c = _trim(list(coeffs))
    while c and c[0] == 0:
        c = c[1:]  # a factor v^s has its root at v = 0, outside (0, inf)
    if len(c) <= 1:
        return []
    out = []
    for factor, mult in squarefree_parts(c):
        f = list(factor)
        while f[0] == 0:
            f = f[1:]
        if len(f) <= 1:
            continue
        hints = _candidates(f)
        intervals = _proven_brackets(f, hints) or isolate(f, hints)
        for lo, hi in intervals:
            inside = [h for h in hints if lo < h < hi]
            out.append((_refine(f, lo, hi, inside[0] if inside else None), mult, (lo, hi)))
    out.sort(key=lambda t: t[0])
    return out
