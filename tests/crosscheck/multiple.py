"""Exact check of multiple and near-multiple roots in `candor rates --batch`.

Families of series are built from chosen roots: double, triple and quadruple roots at
short decimal rates and at rationals off the decimal grid, beside simple roots and
positive factors, and near-doubles (the last flow moved by one unit, which splits a
double root in two or removes it). Each family is written as periodic flows (year,
quarter, month) and as dated flows on a 30/360 count one, three and twelve months
apart, some with gaps (zero coefficients of the positive factor).

The oracle is sympy (a general-purpose computer algebra library from PyPI): its
`Poly.intervals` isolates every real root of the integer polynomial exactly
(square-free decomposition, then continued-fraction isolation over the rationals), with
its multiplicity, and `Poly.refine_root` narrows an interval exactly. Nothing here uses
floating-point root finding: an engine interval [L, H] of annual rates holds the root
xi (growth a period or a step) exactly when 1 + L <= xi^e <= 1 + H, with e the steps a
year, decided in rationals (a float is an exact rational) by refining xi's interval.

A line the engine calls certified must then have the oracle's count, the same
multiplicities in order, every interval holding its root, and intervals of distinct
roots apart: otherwise it is "certified but wrong", and the run fails. Lines the engine
leaves uncertified are counted and reported (with the engine's `exact_check`), not
failed.

Usage: python3 tests/crosscheck/multiple.py BINARY [--seed N] [--count N] [--out DIR]
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import os
import random
import subprocess
import sys
import time
from fractions import Fraction

import mpmath
import sympy

X = sympy.Symbol("x")
AMOUNT_LIMIT = 10**15  # the engine's documented amount limit (src/model/values.rs)
PERIODIC = [("year", 1), ("quarter", 4), ("month", 12)]
DATED_STEPS = [1, 3, 12]  # months between dated flows (30/360: years = months / 12)


def expand(factors, q):
    """Coefficients, highest power first, of prod (a x - b)^m * q."""
    p = list(q)
    for a, b, m in factors:
        for _ in range(m):
            nxt = [0] * (len(p) + 1)
            for i, c in enumerate(p):
                nxt[i] += c * a
                nxt[i + 1] -= c * b
            p = nxt
    return p


def chosen_root(rng: random.Random):
    """(a, b): a growth factor b / a a period, short decimal or off the grid."""
    kind = rng.random()
    if kind < 0.45:
        return 100, rng.choice([k for k in range(60, 180) if k != 100])
    if kind < 0.75:
        return 1000, rng.choice([k for k in range(700, 1400) if k != 1000])
    if kind < 0.85:
        return 1, 1  # 0%
    a = rng.randint(3, 60)
    return a, rng.randint(a // 2 + 1, 2 * a)


def positive_factor(rng: random.Random, sparse: bool):
    # Mostly short; one in six long (degree 40 to 160), as monthly deals over years.
    n = rng.randint(40, 160) if rng.random() < 1 / 6 else rng.randint(0, 8)
    q = [rng.randint(1, 9)]
    for _ in range(n):
        q.append(0 if sparse and rng.random() < 0.5 else rng.randint(1, 9))
    q[-1] = q[-1] or 1
    return q


def family(rng: random.Random, kind: str, sparse: bool):
    """(coefficients, chosen factors) for one series of the given kind."""
    for _ in range(200):
        m = {"double": 2, "triple": 3, "quadruple": 4, "near-double": 2}[kind]
        factors = [(*chosen_root(rng), m)]
        if rng.random() < 0.5:
            a, b = chosen_root(rng)
            if b * factors[0][0] != a * factors[0][1]:
                factors.append((a, b, 1))
        p = expand(factors, positive_factor(rng, sparse))
        if kind == "near-double":
            p[-1] += rng.choice([-1, 1])
        if max(abs(c) for c in p) < AMOUNT_LIMIT and p[-1] != 0:
            return p, factors
    raise RuntimeError("no series within the amount limit")


def line_for(ident, p, layout):
    if layout[0] == "periodic":
        return {"id": ident, "every": layout[1], "amounts": p}
    months = layout[1]
    rows = []
    for j, c in enumerate(p):
        if c == 0:
            continue
        tot = j * months
        rows.append({"date": dt.date(2025 + tot // 12, tot % 12 + 1, 15).isoformat(), "amount": c})
    return {"id": ident, "day_count": "30/360", "dated": rows}


def corpus(seed: int, count: int):
    rng = random.Random(seed)
    layouts = [("periodic", name, per) for name, per in PERIODIC] + [("dated", s, 12 // s) for s in DATED_STEPS]
    out = []
    for kind in ["double", "triple", "quadruple", "near-double"]:
        for layout in layouts:
            for i in range(count):
                p, factors = family(rng, kind, sparse=layout[0] == "dated" and i % 2 == 1)
                ident = f"{kind}-{layout[0]}-{layout[1]}-{i:03d}"
                out.append((line_for(ident, p, layout), p, layout[-1], kind))
    return out


# ------------------------------------------------------------------ the oracle


def oracle(p):
    """Every positive real root of sum p_k x^(n-k): [((lo, hi), multiplicity)], exact."""
    poly = sympy.Poly(p, X, domain="ZZ")
    sqf = sympy.Poly(poly.sqf_part(), X)
    roots = []
    for (lo, hi), mult in poly.intervals():
        lo, hi = Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q))
        if hi <= 0:
            continue
        while lo < 0 < hi:
            lo, hi = refine(sqf, lo, hi, 8)
        if lo >= 0:
            roots.append(((lo, hi), mult, sqf))
    return roots


def refine(sqf, lo, hi, bits):
    """The isolating interval of a simple root of the square-free `sqf` narrowed by
    exact bisection (signs of sqf in integers) to 2^-bits of its size."""
    coeffs = [int(c) for c in sqf.all_coeffs()]
    deg = len(coeffs) - 1
    slope = [int(c) for c in sqf.diff(X).all_coeffs()]

    def exact_sign(x: Fraction, coeffs=coeffs, deg=deg) -> int:
        n, d = x.numerator, x.denominator
        total = 0
        npow = 1
        dpows = [1] * (deg + 1)
        for i in range(1, deg + 1):
            dpows[i] = dpows[i - 1] * d
        for i, c in enumerate(reversed(coeffs)):  # c is the coefficient of x^i
            total += c * npow * dpows[deg - i]
            npow *= n
        return (total > 0) - (total < 0)

    if lo == hi:
        return lo, hi
    # An end may be the neighbouring root (sympy's intervals can share an end with
    # it): the sign just inside is then the slope's there (sqf is square-free).
    s_lo = exact_sign(lo) or exact_sign(lo, slope, deg - 1)
    target = (hi - lo) / 2**bits
    while hi - lo > target:
        mid = (lo + hi) / 2
        s = exact_sign(mid)
        if s == 0:
            return mid, mid
        if s == s_lo:
            lo = mid
        else:
            hi = mid
    return lo, hi


def holds(root, e, interval, log10_interval):
    """True when the exact root xi (per period) has xi^e - 1 in [L, H] (or, without a
    finite interval, log10(xi^e) in the log10 interval); False when it surely does not;
    None when eight more refinements could not tell (an exact tie of an irrational root)."""
    (lo, hi), _, sqf = root
    # Straight to about 70 bits below the root's size (the engine's intervals are
    # about 2^-50 wide), then 64 bits more at a time.
    size = max(abs(lo), abs(hi), Fraction(1, 2**60))
    if hi - lo > size / 2**70:
        bits = max(8, (hi - lo).numerator.bit_length() - (hi - lo).denominator.bit_length()
                   - (size.numerator.bit_length() - size.denominator.bit_length()) + 72)
        lo, hi = refine(sqf, lo, hi, bits)
    for _ in range(8):
        if interval is not None:
            L, H = 1 + Fraction(interval[0]), 1 + Fraction(interval[1])
            if lo == hi:
                return L <= lo**e <= H
            if hi**e < L or lo**e > H:
                return False
            if lo**e >= L and hi**e <= H:
                return True
        else:
            with mpmath.workdps(80):
                a = e * mpmath.log10(mpmath.mpf(lo.numerator) / lo.denominator)
                b = e * mpmath.log10(mpmath.mpf(hi.numerator) / hi.denominator)
                L, H = mpmath.mpf(log10_interval[0]), mpmath.mpf(log10_interval[1])
                if b < L or a > H:
                    return False
                if a >= L and b <= H:
                    return True
        lo, hi = refine(sqf, lo, hi, 64)
    return None


def check(line, p, e, got):
    """Problems of a certified answer (empty list: right)."""
    want = oracle(p)
    probs = []
    if got.get("count") != sum(m for _, m, _ in want):
        probs.append(f"count {got.get('count')} but the exact count is {sum(m for _, m, _ in want)}")
    roots = got.get("roots", [])
    if [r["multiplicity"] for r in roots] != [m for _, m, _ in want]:
        probs.append(f"multiplicities {[r['multiplicity'] for r in roots]} but exact {[m for _, m, _ in want]}")
    else:
        for r, w in zip(roots, want):
            ok = holds(w, e, r.get("interval"), r["log10_interval"])
            if ok is False:
                probs.append(f"root near {float(w[0][0]):.17g}^{e} outside {r.get('interval')} / {r['log10_interval']}")
            elif ok is None:
                probs.append(f"oracle could not place the root near {float(w[0][0])} against {r.get('interval')}")
    for x, y in zip(roots, roots[1:]):
        if x["log10_interval"][1] >= y["log10_interval"][0]:
            probs.append(f"intervals of distinct roots overlap: {x['log10_interval']} {y['log10_interval']}")
    return probs


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("binary")
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--count", type=int, default=16, help="series per kind and layout")
    ap.add_argument("--out", default="target/crosscheck")
    args = ap.parse_args()
    t0 = time.time()
    lines = corpus(args.seed, args.count)
    os.makedirs(args.out, exist_ok=True)
    path = os.path.join(args.out, "multiple.jsonl")
    with open(path, "w") as f:
        for line, *_ in lines:
            f.write(json.dumps(line) + "\n")
    t = time.time()
    proc = subprocess.run([args.binary, "rates", "--batch", path], capture_output=True, text=True)
    engine_s = time.time() - t
    outs = [json.loads(x) for x in proc.stdout.splitlines()]
    if len(outs) != len(lines):
        print(f"FAIL: {len(lines)} lines in, {len(outs)} out; stderr: {proc.stderr[-2000:]}")
        return 1
    certified = wrong = undecided = 0
    by_kind: dict[str, list[int]] = {}
    report = []
    for (line, p, e, kind), got in zip(lines, outs):
        stats = by_kind.setdefault(kind, [0, 0, 0])
        stats[0] += 1
        if "error" in got:
            report.append(f"--- {line['id']}: error {got['error']}")
            wrong += 1
            continue
        if not got.get("certified"):
            undecided += 1
            stats[2] += 1
            report.append(f"    undecided: {line['id']} ({got.get('exact_check')})")
            continue
        certified += 1
        probs = check(line, p, e, got)
        if probs:
            wrong += 1
            stats[1] += 1
            report.append(f"--- {line['id']}: CERTIFIED BUT WRONG")
            report += ["    " + x for x in probs]
    print("\n".join(report))
    for kind, (n, w, u) in by_kind.items():
        print(f"{kind}: {n} series, {w} certified but wrong, {u} undecided")
    print(f"summary: {len(lines)} series (engine {engine_s:.1f} s), {certified} certified, "
          f"{wrong} certified but wrong, {undecided} undecided, {time.time() - t0:.1f} s in all")
    print(f"multiple-roots: {len(lines) - wrong} passed, {wrong} failed")
    return 1 if wrong else 0


if __name__ == "__main__":
    sys.exit(main())
