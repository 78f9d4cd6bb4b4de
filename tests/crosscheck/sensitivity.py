"""Check of the count map of `candor rates --json` (the `sensitivity` key).

For each generated deal the engine reports, per component (a format-1 deal has two:
its inflows and its outflows), the factors at which the number of real IRRs changes
and the count between them. This script counts the IRRs itself, independently of
candor, just below and just above every certified change point and at the middle of
every interval, and fails when a count differs:

* the deal at factor f has the periodic flows C_k(f) = (rest)_k + f (component)_k,
  with f an exact rational (a float is one), so the NPV is the polynomial
  P(v) = sum C_k v^k in v = 1 / (1 + rate per period), and the IRRs are its roots
  v > 0, counted with multiplicity;
* the roots are found with mpmath's polyroots at 60 significant digits and a root is
  taken as real when its imaginary part is below 10^-30 of its size (just beside a
  double root at distance d the pair is split by about sqrt(d), here far above that);
* the count is confirmed exactly by refroots.py (Descartes isolation of the integer
  polynomial in Python integers), so a disagreement between the two references is
  reported apart from a disagreement with candor.

"Just below" and "just above" are the ends of the point's certified interval moved out
by 10^-7 of the factor (and never past a neighbouring point). A hand-made deal whose
double root occurs at a known factor is checked first: -100, 200 f, -121 a year apart
has a double IRR of 10% at f = 1.1 exactly (the discriminant (200 f)^2 - 4 * 100 * 121
vanishes there; elementary algebra).

Usage: python3 tests/crosscheck/sensitivity.py BINARY [--seed N] [--count N] [--out DIR]
"""

from __future__ import annotations

import argparse
import json
import os
import random
import subprocess
import sys
import time
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor
from fractions import Fraction

import mpmath

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import refroots  # noqa: E402

mpmath.mp.dps = 60
EVERY = [("year", 1), ("half-year", 2), ("quarter", 4)]


def deal_yaml(name: str, every: str, amounts: list[int], hurdle: str) -> str:
    return (
        "candor: 1\n"
        "deal:\n"
        f"  name: {name}\n"
        "  currency: EUR\n"
        "  as_of: 2026-12-01\n"
        f"hurdle_rate: {hurdle}\n"
        "cash_flows:\n"
        f"  every: {every}\n"
        f"  amounts: [{', '.join(str(a) for a in amounts)}]\n"
    )


def generate(rng: random.Random) -> list[int]:
    """Deal-like flows with one to four sign changes: an outlay, income, sometimes an
    overhaul or a refund mid-way, sometimes a closing cost; small integers so that the
    double roots of the count map lie at ordinary factors."""
    n = rng.randint(3, 24)
    out = [-rng.randint(50, 400)]
    for k in range(1, n):
        if rng.random() < 0.15:
            out.append(-rng.randint(20, 500))
        else:
            out.append(rng.randint(0, 120))
    if rng.random() < 0.6:
        out[-1] = -rng.randint(50, 900)
    if rng.random() < 0.2:
        out[0] = rng.randint(50, 300)  # money received first (a prepaid deal)
    if all(a >= 0 for a in out) or all(a <= 0 for a in out):
        out[-1] = -out[-1] if out[-1] else -10
    return out


def split(amounts: list[int], key: str) -> tuple[list[int], list[int]]:
    """(rest, component) of the format-1 components: inflows or outflows."""
    inflow = [a if a > 0 else 0 for a in amounts]
    outflow = [a if a < 0 else 0 for a in amounts]
    return (outflow, inflow) if key == "inflows" else (inflow, outflow)


def integer_poly(rest: list[int], comp: list[int], f: Fraction) -> list[int]:
    """Coefficients (lowest power first) of P(v) = sum C_k v^k, scaled to integers,
    with the powers of v that only add roots at v = 0 removed."""
    c = [Fraction(r) + f * x for r, x in zip(rest, comp)]
    den = 1
    for x in c:
        den = den * x.denominator // __import__("math").gcd(den, x.denominator)
    ints = [int(x * den) for x in c]
    while ints and ints[-1] == 0:
        ints.pop()
    while ints and ints[0] == 0:
        ints.pop(0)
    return ints


def count_mpmath(ints: list[int]) -> int:
    if len(ints) < 2:
        return 0
    coeffs = [mpmath.mpf(x) for x in reversed(ints)]
    roots = mpmath.polyroots(coeffs, maxsteps=200, extraprec=120)
    n = 0
    for z in roots:
        size = abs(z)
        if abs(mpmath.im(z)) <= mpmath.mpf(10) ** -30 * max(size, 1) and mpmath.re(z) > 0:
            n += 1
    return n


def count_exact(ints: list[int]) -> int:
    if len(ints) < 2:
        return 0
    return sum(m for _, m, _ in refroots.positive_roots(ints))


def counts(amounts, key, f: Fraction) -> tuple[int, int]:
    rest, comp = split(amounts, key)
    ints = integer_poly(rest, comp, f)
    return count_mpmath(ints), count_exact(ints)


def run(binary: str, path: str) -> dict:
    proc = subprocess.run([binary, "rates", path, "--json"], capture_output=True, text=True)
    if proc.returncode != 0:
        raise RuntimeError(f"{path}: exit {proc.returncode}: {proc.stderr[-500:]}")
    return json.loads(proc.stdout)


def check_deal(amounts, got) -> tuple[list[str], dict]:
    problems: list[str] = []
    stats = {"points": 0, "certified_points": 0, "undecided_points": 0, "intervals": 0,
             "ref_disagree": 0, "maps_uncertified": 0}
    sens = got["scenarios"][0].get("sensitivity")
    if sens is None:
        return ["no sensitivity in the JSON"], stats
    for m in sens["count_map"]:
        key = m["key"]
        if m["status"] != "mapped":
            continue
        if not m["certified"]:
            stats["maps_uncertified"] += 1
        points = m["change_points"]
        for i, p in enumerate(points):
            stats["points"] += 1
            if not p["certified"]:
                stats["undecided_points"] += 1
                continue
            stats["certified_points"] += 1
            lo, hi = Fraction(p["interval"][0]), Fraction(p["interval"][1])
            d = Fraction(1, 10**7) * max(1, abs(lo))
            below, above = lo - d, hi + d
            if i > 0:
                below = max(below, (Fraction(points[i - 1]["interval"][1]) + lo) / 2)
            if i + 1 < len(points):
                above = min(above, (hi + Fraction(points[i + 1]["interval"][0])) / 2)
            for f, want, side in ((below, p["count_below"], "below"), (above, p["count_above"], "above")):
                mp_n, ex_n = counts(amounts, key, f)
                if mp_n != ex_n:
                    stats["ref_disagree"] += 1
                if ex_n != want:
                    problems.append(f"{key}: at factor {float(f)!r} ({side} {p['factor']}) "
                                    f"the engine says {want} IRRs, the references {ex_n} (mpmath {mp_n})")
        for iv in m["intervals"]:
            if not iv["certified"]:
                continue
            stats["intervals"] += 1
            mid = (Fraction(iv["from"]) + Fraction(iv["to"])) / 2
            mp_n, ex_n = counts(amounts, key, mid)
            if mp_n != ex_n:
                stats["ref_disagree"] += 1
            if ex_n != iv["count"]:
                problems.append(f"{key}: on [{iv['from']}, {iv['to']}] the engine says "
                                f"{iv['count']} IRRs, the references {ex_n} at {float(mid)!r}")
    return problems, stats


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("binary")
    ap.add_argument("--seed", type=int, default=20261214)
    ap.add_argument("--count", type=int, default=240, help="generated deals")
    ap.add_argument("--out", default="target/crosscheck")
    ap.add_argument("--jobs", type=int, default=os.cpu_count() or 2,
                    help="engine runs and reference worker processes")
    args = ap.parse_args()
    t0 = time.time()
    folder = os.path.join(args.out, "sensitivity")
    os.makedirs(folder, exist_ok=True)
    rng = random.Random(args.seed)
    deals = [("known-double-root", "year", [-100, 200, -121], "10%")]
    for i in range(args.count):
        every, _ = rng.choice(EVERY)
        deals.append((f"generated-{i:03d}", every, generate(rng), f"{rng.randint(0, 15)}%"))
    paths = []
    for name, every, amounts, hurdle in deals:
        path = os.path.join(folder, f"{name}.yaml")
        with open(path, "w") as fh:
            fh.write(deal_yaml(name, every, amounts, hurdle))
        paths.append(path)
    with ThreadPoolExecutor(args.jobs) as pool:
        outs = list(pool.map(lambda p: run(args.binary, p), paths))

    failed = 0
    totals: dict[str, int] = {}
    report = []
    # The hand-made deal: one change point of the inflows containing 1.1, 0 -> 2.
    known = outs[0]["scenarios"][0]["sensitivity"]["count_map"]
    inflows = next(m for m in known if m["key"] == "inflows")
    pts = inflows["change_points"]
    if not (len(pts) == 1 and pts[0]["certified"]
            and Fraction(pts[0]["interval"][0]) <= Fraction(11, 10) <= Fraction(pts[0]["interval"][1])
            and (pts[0]["count_below"], pts[0]["count_above"]) == (0, 2)):
        failed += 1
        report.append(f"--- known-double-root: expected one change at 1.1 (0 -> 2), got {pts}")
    with ProcessPoolExecutor(args.jobs) as pool:
        checked = list(pool.map(check_deal, [d[2] for d in deals], outs, chunksize=4))
    for (name, every, amounts, _), (problems, stats) in zip(deals, checked):
        for k, v in stats.items():
            totals[k] = totals.get(k, 0) + v
        if problems:
            failed += 1
            report.append(f"--- {name} ({every}: {amounts})")
            report += ["    " + x for x in problems]
    print("\n".join(report))
    print(f"summary: {len(deals)} deals, {totals.get('points', 0)} change points "
          f"({totals.get('certified_points', 0)} certified, {totals.get('undecided_points', 0)} undecided), "
          f"{totals.get('intervals', 0)} intervals checked, {totals.get('maps_uncertified', 0)} maps not certified, "
          f"{totals.get('ref_disagree', 0)} disagreements between the two references, "
          f"{time.time() - t0:.1f} s")
    print(f"sensitivity: {len(deals) - failed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
