"""Time `candor rates --batch` against pyxirr's irr on 1,000 monthly 40-year deals.

Generates 1,000 seeded deal-like series of 481 monthly flows (an outlay, income
that varies, an occasional overhaul, sometimes a closing cost), writes them as
JSON lines in the batch contract, then

  (a) runs `candor rates --batch` on the file as one whole process, best of N
      wall-clock runs (parsing, every root certified, JSON out: all included);
  (b) calls pyxirr's `irr` (one root per series, no certification) on the same
      series in a Python loop, best of N (the float lists are prepared beforehand
      and not timed);

prints both totals, the time per series and the ratio candor / pyxirr, and checks
that every root pyxirr returns is among candor's roots.

Usage: python3 bench/compare.py [BINARY] [--series 1000] [--runs 5] [--out bench/out]
"""

from __future__ import annotations

import argparse
import json
import os
import random
import subprocess
import sys
import time

import pyxirr

MONTHS = 480  # 40 years; 481 flows with period 0


def deal(rng: random.Random) -> list[int]:
    """Cents. Outlay (phased over up to two years), monthly income with seasonality
    and noise, an overhaul every few years with some chance, closing cost sometimes."""
    size = rng.randint(10**6, 10**8) * 100
    flows = [0] * (MONTHS + 1)
    flows[0] = -size // 2
    build = rng.randint(0, 24)
    for k in range(1, build + 1):
        flows[k] = -size // (2 * max(build, 1))
    yearly = size * rng.uniform(0.05, 0.25)
    for k in range(build + 1, MONTHS + 1):
        season = 1 + 0.2 * ((k % 12) in (5, 6, 7))
        flows[k] = int(yearly / 12 * season * rng.uniform(0.6, 1.4))
        if rng.random() < 0.008:
            flows[k] -= int(yearly * rng.uniform(0.5, 3.0))  # overhaul
    if rng.random() < 0.4:
        flows[MONTHS] -= int(size * rng.uniform(0.2, 2.0))  # closure / decommissioning
    return flows


def cents(units: int) -> str:
    s = str(abs(units)).rjust(3, "0")
    return ("-" if units < 0 else "") + s[:-2] + "." + s[-2:]


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("binary", nargs="?", default="target/release/candor")
    ap.add_argument("--series", type=int, default=1000)
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--seed", type=int, default=481)
    ap.add_argument("--out", default="bench/out")
    ap.add_argument("--hurdle", default=None, help='also ask candor for NPV and MIRR at this rate, e.g. "9%%"')
    a = ap.parse_args()

    rng = random.Random(a.seed)
    series = [deal(rng) for _ in range(a.series)]
    os.makedirs(a.out, exist_ok=True)
    path = os.path.join(a.out, "monthly-481.jsonl")
    with open(path, "w") as f:
        for i, fl in enumerate(series):
            hurdle = f', "hurdle_rate": {json.dumps(a.hurdle)}' if a.hurdle else ""
            f.write(f'{{"id": "m{i:04d}", "every": "month", "amounts": [{", ".join(cents(x) for x in fl)}]{hurdle}}}\n')
    floats = [[x / 100 for x in fl] for fl in series]

    if not os.path.exists(a.binary):
        print(f"error: no binary at {a.binary} (cargo build --release)", file=sys.stderr)
        return 2
    best_c = float("inf")
    out = ""
    for _ in range(a.runs):
        t = time.perf_counter()
        proc = subprocess.run([a.binary, "rates", "--batch", path], capture_output=True, text=True)
        best_c = min(best_c, time.perf_counter() - t)
        out = proc.stdout
        got_lines = out.count("\n")
        if proc.returncode != 0 or got_lines != a.series:
            print(f"candor run failed: exit {proc.returncode}, {got_lines} lines for {a.series} series: "
                  f"{proc.stderr[-1000:]}", file=sys.stderr)
            return 1

    best_p = float("inf")
    roots_p: list = []
    for _ in range(a.runs):
        t = time.perf_counter()
        got = [pyxirr.irr(fl, silent=True) for fl in floats]
        best_p = min(best_p, time.perf_counter() - t)
        roots_p = got

    results = [json.loads(line) for line in out.splitlines()]
    problems = []
    if len(results) != a.series:
        problems.append(f"{len(results)} output lines for {a.series} series")
    multi = none_p = matched = errors = uncertified = 0
    for i, (res, p) in enumerate(zip(results, roots_p)):
        if "error" in res:
            errors += 1
            problems.append(f"m{i:04d}: engine error {res['error']}")
            continue
        if res.get("certified") is not True:
            uncertified += 1
        if (res.get("count") or 0) > 1:
            multi += 1
        if p is None or p != p:
            none_p += 1
            continue
        annual = (1 + p) ** 12 - 1
        ok = False
        for r in res.get("roots", []):
            lo, hi = (r.get("interval") or [None, None])
            a_c = r.get("annual_rate")
            # pyxirr stops its iteration near 1e-9 in the monthly rate; allow for that.
            tol = 1e-7 * max(1.0, abs(annual))
            if lo is not None and hi is not None and lo - tol <= annual <= hi + tol:
                ok = True
            elif a_c is not None and abs(a_c - annual) <= tol:
                ok = True
        if ok:
            matched += 1
        else:
            problems.append(f"m{i:04d}: pyxirr root {annual!r} (annual) is not among candor's "
                            f"{[r.get('annual_rate') for r in res.get('roots', [])]}")

    n = a.series
    print(f"series: {n} monthly, {MONTHS + 1} flows each ({path})")
    print(f"candor rates --batch : best of {a.runs} {best_c:8.4f} s  = {best_c / n * 1e3:8.4f} ms/series (whole process)")
    print(f"pyxirr irr (loop)    : best of {a.runs} {best_p:8.4f} s  = {best_p / n * 1e3:8.4f} ms/series")
    print(f"ratio candor/pyxirr  : {best_c / best_p:.3f}")
    print(f"candor: {multi} series with more than one root, {uncertified} uncertified, {errors} errors; "
          f"pyxirr: {n - none_p} roots returned, {matched} found among candor's roots, {none_p} without a root")
    for p in problems[:50]:
        print("  " + p)
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
