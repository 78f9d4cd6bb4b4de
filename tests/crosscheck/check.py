"""Cross-check `candor rates --batch` against independent references.

Runs the binary on the seeded corpus (corpus.py) and compares every line with

* the exact root reference (refroots.py: integer polynomial, square-free split,
  Descartes isolation, mpmath refinement at 90 digits, proven to 1e-45): every real
  IRR with multiplicity, so the engine may miss none and add none;
* the roots the corpus was built from, where it knows them exactly;
* numpy-financial's npv and mirr (periodic series) and a 60-digit mpmath
  evaluation of the same definitions (all series) for the NPV at the hurdle and
  the MIRR;
* the balance path at each root (pure investment / mixed / pure borrowing) and the
  investment-or-borrowing stance from the sign of NPV(h) and of (IRR - h)
  [Hazen, The Engineering Economist 48 (2003) 31-51; docs/methods.md, Reading an IRR];
* the published check values of docs/methods.md (Check values), each with its source.

Usage: python3 tests/crosscheck/check.py [BINARY] [--jobs 2] [--out DIR]
       python3 tests/crosscheck/check.py --reference-only   (no binary: the
       reference is checked against the corpus' exact answers alone)
Exit status 0 only when nothing mismatches.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import math
import os
import subprocess
import sys
import time
from concurrent.futures import ProcessPoolExecutor
from decimal import Decimal
from fractions import Fraction

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

import corpus  # noqa: E402
import refroots  # noqa: E402  (sets one BLAS thread before numpy loads)
import mpmath  # noqa: E402
import numpy as np  # noqa: E402
import numpy_financial as npf  # noqa: E402

mpmath.mp.dps = 60
PERIODS = {"year": 1, "half-year": 2, "quarter": 4, "month": 12, "week": 52, "day": 365}
# The largest NPV to the cent an exact decimal holds (rust_decimal: 2^96 - 1 cents).
DECIMAL_MAX = (mpmath.mpf(2) ** 96 - 1) / 100

# Tolerances (see README.md for why each is what it is).
TOL_INTERVAL_REL = 1e-12   # reference root may sit this far outside a certified interval
# The next three are relative errors of the growth factor per clock unit (period, or
# grid step of a dated series): an annual rate compounds m of them, so a weekly root
# near 10^10 % legitimately carries 52 times the relative error of its weekly rate.
TOL_WIDTH_REL = 1e-6       # a certified interval wider than this tells a reader little
TOL_RATE_SIMPLE = 1e-9     # point estimate of a simple root standing apart
TOL_RATE_MULTIPLE = 1e-6   # in a cluster or at a multiple root (ill-conditioned)
TINY_GROWTH = 1e-3         # below this 1 + annual rate, the annual rate is compared absolutely
TOL_LOG10 = 1e-9
TOL_MIRR_REL = 1e-9
TOL_NPV_ABS = Decimal("0.01")
TOL_NPV_REL = 1e-12


# ------------------------------------------------------------------ parsing


def to_fraction(v) -> Fraction:
    if isinstance(v, bool) or v is None:
        raise ValueError(f"not a number: {v!r}")
    if isinstance(v, (int, Decimal)):
        return Fraction(v)
    if isinstance(v, str):
        s = v.strip()
        if s.endswith("%"):
            return Fraction(Decimal(s[:-1].strip())) / 100
        return Fraction(Decimal(s))
    raise ValueError(f"not a number: {v!r}")


def days_30360(d1: dt.date, d2: dt.date, variant: str) -> int:
    """Day count numerator of the 30/360 family (ISDA 2006, 4.16; docs/methods.md, Day counts)."""
    y1, m1, a = d1.year, d1.month, d1.day
    y2, m2, b = d2.year, d2.month, d2.day
    if variant == "30/360":
        if a == 31:
            a = 30
        if b == 31 and a > 29:
            b = 30
    elif variant == "30e/360":
        a = min(a, 30)
        b = min(b, 30)
    else:
        raise ValueError(f"day count {variant} not supported by the reference")
    return 360 * (y2 - y1) + 30 * (m2 - m1) + (b - a)


class Series:
    """One input line as exact flows on an integer clock.

    Flow j sits at exponent e_j of the polynomial variable; its time in years is
    e_j / per_year, so (1 + annual) = var^(-per_year).
    """

    def __init__(self, obj: dict):
        self.id = obj.get("id")
        self.periodic = "amounts" in obj
        if self.periodic:
            self.m = PERIODS[obj["every"]]
            amounts = [to_fraction(a) for a in obj["amounts"]]
            self.terms = {k: a for k, a in enumerate(amounts)}
            self.raw = amounts
            self.per_year = Fraction(self.m)
            self.n_periods = len(amounts) - 1
        else:
            dc = obj["day_count"]
            rows = [(dt.date.fromisoformat(r["date"]), to_fraction(r["amount"])) for r in obj["dated"]]
            first = min(d for d, _ in rows)
            if dc in ("act/365f", "act/360"):
                units = [(d - first).days for d, _ in rows]
                denom = 365 if dc == "act/365f" else 360
            else:
                units = [days_30360(first, d, dc) for d, _ in rows]
                denom = 360
            g = 0
            for u in units:
                g = math.gcd(g, u)
            g = g or 1
            self.terms = {}
            for u, (_, a) in zip(units, rows):
                self.terms[u // g] = self.terms.get(u // g, Fraction(0)) + a
            self.per_year = Fraction(denom, g)
            self.m = None
        self.hurdle = to_fraction(obj["hurdle_rate"]) if "hurdle_rate" in obj else None
        self.finance = to_fraction(obj["finance_rate"]) if "finance_rate" in obj else self.hurdle
        self.reinvest = to_fraction(obj["reinvestment_rate"]) if "reinvestment_rate" in obj else self.hurdle
        # Netted, zero flows dropped, in time order (docs/methods.md, Notation: net first,
        # drop zeros).
        self.flows = sorted((e, a) for e, a in self.terms.items() if a != 0)

    def int_poly(self) -> list[int]:
        den = 1
        for _, a in self.flows:
            den = den * a.denominator // math.gcd(den, a.denominator)
        top = max(e for e, _ in self.flows)
        c = [0] * (top + 1)
        for e, a in self.flows:
            c[e] = int(a * den)
        return c

    def years(self, e) -> mpmath.mpf:
        return mpmath.mpf(e) / mpmath.mpf(self.per_year.numerator) * self.per_year.denominator


# ------------------------------------------------------------ the reference


def mp_rate(fr: Fraction):
    return mpmath.mpf(fr.numerator) / fr.denominator


def reference(line: str) -> dict:
    """Everything the check compares, computed without the engine."""
    obj = json.loads(line, parse_float=Decimal)
    s = Series(obj)
    out: dict = {"id": s.id}
    signs = [a for _, a in s.flows]
    out["sign_changes"] = corpus.sign_changes(signs)
    roots = []
    if len(s.flows) >= 2 and out["sign_changes"] > 0:
        e_year = mpmath.mpf(s.per_year.numerator) / s.per_year.denominator
        for v, mult, _ in refroots.positive_roots(s.int_poly()):
            growth = v ** (-e_year)
            annual = growth - 1
            log10g = -e_year * mpmath.log10(v)
            roots.append({
                "annual": annual, "log10": log10g, "multiplicity": mult,
                "periodic": (1 / v - 1) if s.periodic else None,
                "balance_kind": balance_kind(s, growth),
            })
    roots.sort(key=lambda r: r["log10"])
    out["roots"] = roots
    if s.hurdle is not None:
        h = mp_rate(s.hurdle)
        npv = mpmath.fsum(mp_rate(a) * (1 + h) ** (-s.years(e)) for e, a in s.flows)
        scale = mpmath.fsum(abs(mp_rate(a)) * (1 + h) ** (-s.years(e)) for e, a in s.flows)
        out["npv"] = npv
        out["npv_scale"] = scale
        out["mirr"] = mirr_mp(s)
        for r in roots:
            if npv != 0 and r["annual"] != h:
                same = (npv > 0) == (r["annual"] > h)
                r["stance"] = "investment" if same else "borrowing"
        if s.periodic:
            m = s.m
            hp = float((1 + h) ** (mpmath.mpf(1) / m) - 1)
            vals = np.array([float(a) for a in s.raw])
            out["npf_npv"] = float(npf.npv(hp, vals))
            fp = float((1 + mp_rate(s.finance)) ** (mpmath.mpf(1) / m) - 1)
            gp = float((1 + mp_rate(s.reinvest)) ** (mpmath.mpf(1) / m) - 1)
            mp_ = npf.mirr(vals, fp, gp)
            annual_m = None
            if mp_ is not None and np.isfinite(mp_):
                annual_m = float((1 + mpmath.mpf(float(mp_))) ** m - 1)  # may exceed a double: inf
            # Beyond a double the 60-digit value alone is compared.
            out["npf_mirr"] = annual_m if annual_m is not None and math.isfinite(annual_m) else None
    return out


def balance_kind(s: Series, growth) -> str:
    """Sign pattern of the balance F_k = F_(k-1) growth^(dt) + C_k before the last flow.

    Above 0% the path is run backwards from F_n = 0, F_(k-1) = (F_k - C_k) growth^(-dt):
    forwards, the 45 proven digits of a large growth factor are used up after a few
    steps (each step multiplies the error by the factor), backwards they are not."""
    e_year = mpmath.mpf(s.per_year.numerator) / s.per_year.denominator
    if growth > 1:
        seen = [mpmath.mpf(0)] * len(s.flows)
        for k in range(len(s.flows) - 1, 0, -1):
            dt = (s.flows[k][0] - s.flows[k - 1][0]) / e_year
            seen[k - 1] = (seen[k] - mp_rate(s.flows[k][1])) * growth ** (-dt)
    else:
        f = mpmath.mpf(0)
        prev = None
        seen = []
        for e, a in s.flows:
            if prev is not None:
                f = f * growth ** ((e - prev) / e_year)
            f += mp_rate(a)
            seen.append(f)
            prev = e
    body = seen[:-1]
    big = max(abs(x) for x in seen) or 1
    eps = big * mpmath.mpf(10) ** -40
    neg = any(x < -eps for x in body)
    pos = any(x > eps for x in body)
    if neg and pos:
        return "mixed"
    return "pure-borrowing" if pos else "pure-investment"


def mirr_mp(s: Series):
    """MIRR by its definition (docs/methods.md, MIRR; Lin 1976): annual, None when undefined."""
    f = mp_rate(s.finance)
    g = mp_rate(s.reinvest)
    T = s.years(s.n_periods) if s.periodic else s.years(s.flows[-1][0])
    pos = [(e, a) for e, a in s.flows if a > 0]
    neg = [(e, a) for e, a in s.flows if a < 0]
    if not pos or not neg or T <= 0:
        return None
    fv = mpmath.fsum(mp_rate(a) * (1 + g) ** (T - s.years(e)) for e, a in pos)
    pv = -mpmath.fsum(mp_rate(a) * (1 + f) ** (-s.years(e)) for e, a in neg)
    return (fv / pv) ** (1 / T) - 1


def reference_safe(line: str) -> dict:
    try:
        return reference(line)
    except (refroots.ReferenceError_, ValueError, KeyError, TypeError) as e:
        return {"reference_error": f"{type(e).__name__}: {e}"}


# ------------------------------------------------------------ comparison


def num(x):
    """A JSON number from the engine as an mpf (None stays None)."""
    if x is None:
        return None
    if isinstance(x, bool):
        raise ValueError("boolean where a number belongs")
    return mpmath.mpf(str(x))


def rel_close(a, b, tol) -> bool:
    return abs(a - b) <= tol * max(1, abs(b))


def known_roots(ans: dict, s: Series) -> list[tuple[mpmath.mpf, mpmath.mpf, int]]:
    """(log10 annual growth, annual rate, multiplicity) of the roots a series was built from."""
    out = []
    for k in ans.get("known_growth", []):
        x = Fraction(k["x"])
        out.append((s.m * mpmath.log10(mp_rate(x)), mp_rate(x) ** s.m - 1, k["multiplicity"]))
    for k in ans.get("known_w", []):
        w = Fraction(k["w"])
        denom = 365 if "act/365f" in ans["tags"] else 360
        e = mpmath.mpf(denom) / ans["step_days"]
        out.append((-e * mpmath.log10(mp_rate(w)), mp_rate(w) ** (-e) - 1, k["multiplicity"]))
    return sorted(out)


def compare(line: str, ans: dict, ref: dict, got: dict | None, stats: dict, reference_only: bool = False) -> list[str]:
    """Problems found on one line (empty list: it passed)."""
    bad: list[str] = []
    if ans.get("expect_error"):
        if reference_only:
            return []
        if got is None or not isinstance(got.get("error"), dict):
            return [f"expected an error object, got {json.dumps(got)[:200]}"]
        err = got["error"]
        if not (isinstance(err.get("code"), str) and isinstance(err.get("message"), str) and err["message"]):
            bad.append(f"error object lacks a code or message: {err}")
        return bad
    if "reference_error" in ref:
        return [f"REFERENCE could not decide: {ref['reference_error']}"]
    obj = json.loads(line, parse_float=Decimal)
    s = Series(obj)
    stats["roots"] += len(ref["roots"])

    # The reference itself against the exact roots the series was built from.
    known = known_roots(ans, s)
    if "known_growth" in ans or "known_w" in ans:
        refr = [(r["log10"], r["annual"], r["multiplicity"]) for r in ref["roots"]]
        if len(known) != len(refr) or any(
            not rel_close(la, lb, 1e-40) or m1 != m2 for (la, _, m1), (lb, _, m2) in zip(known, refr)
        ):
            bad.append("REFERENCE disagrees with the built roots: "
                       f"known {[(mpmath.nstr(a, 12), m) for _, a, m in known]} "
                       f"reference {[(mpmath.nstr(a, 12), m) for _, a, m in refr]}")
    pub = ans.get("published")
    if pub:
        bad += check_published(pub, ref, None, ans)
    if got is None:
        return bad  # reference-only run

    if got.get("id") != s.id:
        bad.append(f"id {got.get('id')!r} where {s.id!r} was expected (order lost?)")
    if "error" in got:
        return bad + [f"engine rejected a valid line: {got['error']}"]
    certified = got.get("certified")
    if certified is not True:
        if ans.get("ambiguous"):
            stats["ambiguous_uncertified"] += 1
        else:
            bad.append(f"certified is {certified!r}")
    roots = got.get("roots") or []
    want = sum(r["multiplicity"] for r in ref["roots"])
    if certified is True or not ans.get("ambiguous"):
        bad += check_roots(ref, roots, got, want, s, stats)
    bad += check_money(ref, got, s)
    if pub:
        bad += check_published(pub, ref, got, ans)
    if certified is False and not ans.get("ambiguous") and not STRICT and undecided_only(bad, ref, got):
        # The engine said it could not decide, and every root it did not list lies in
        # an interval it reported as undecided: no root was silently missed.
        stats["undecided"] = stats.get("undecided", 0) + 1
        return []
    return bad


STRICT = False


def undecided_only(bad: list, ref: dict, got: dict) -> bool:
    """True when the only problems are the count, the missed roots and the
    certification flag, and each missed root lies in one of the reported undecided
    intervals (annual rates)."""
    others = [b for b in bad if not (b.startswith("certified is") or b.startswith("count ")
                                     or b.startswith("MISSED "))]
    if others:
        return False
    intervals = got.get("unresolved") or []
    if not intervals:
        return False
    roots = got.get("roots") or []
    for r in ref["roots"]:
        a = r["annual"]
        listed = any(c.get("interval") and c["interval"][0] - 1e-12 <= float(a) <= c["interval"][1] + 1e-12
                     for c in roots)
        inside = any(lo - 1e-12 * max(1, abs(lo)) <= float(a) <= hi + 1e-12 * max(1, abs(hi))
                     for lo, hi in intervals)
        if not listed and not inside:
            return False
    return True


def candor_root(r: dict) -> dict:
    iv = r.get("interval")
    lo = hi = None
    if isinstance(iv, list) and len(iv) == 2 and iv[0] is not None and iv[1] is not None:
        lo, hi = num(iv[0]), num(iv[1])
    return {"annual": num(r.get("annual_rate")), "lo": lo, "hi": hi, "log10": num(r.get("log10_annual_growth")),
            "multiplicity": r.get("multiplicity"), "periodic": num(r.get("periodic_rate")),
            "balance_kind": r.get("balance_kind"), "stance": r.get("stance")}


def log10_tol(s: Series, L) -> float:
    """log10 growth agrees when the growth per clock unit (period, or grid step) is
    right to 1e-9 relative: near -100% the annual rate alone cannot show that."""
    return TOL_LOG10 * (float(s.per_year) / math.log(10) + abs(float(L)) * 1e-3)


def interval_holds(c: dict, a) -> bool | None:
    """True/False when the engine gave a finite interval, None when it gave none."""
    if c["lo"] is not None and mpmath.isfinite(c["lo"]) and mpmath.isfinite(c["hi"]):
        tol = TOL_INTERVAL_REL * max(1, abs(a))
        return bool(c["lo"] - tol <= a <= c["hi"] + tol)
    return None


def match(cands: list[dict], r: dict, s: Series) -> list[int]:
    """Engine roots standing for reference root r: by interval, narrowed by log10
    growth when several intervals hold it (annual rates that all round to -100%);
    by log10 growth alone (1e-6 per clock unit) when the interval says nothing."""
    by_iv = [i for i, c in enumerate(cands) if interval_holds(c, r["annual"])]
    if len(by_iv) > 1:
        near = [i for i in by_iv if cands[i]["log10"] is not None
                and abs(cands[i]["log10"] - r["log10"]) <= log10_tol(s, r["log10"])]
        by_iv = near or by_iv
    if by_iv:
        return by_iv
    loose = [i for i, c in enumerate(cands) if c["log10"] is not None
             and abs(c["log10"] - r["log10"]) <= 1e3 * log10_tol(s, r["log10"])]
    return loose


def separation(refs: list[dict], r: dict) -> float:
    """Smallest relative gap in growth per clock unit to another reference root."""
    gaps = [abs(float(o["log10"] - r["log10"])) for o in refs if o is not r]
    return min(gaps) if gaps else math.inf


def check_roots(ref, roots_json, got, want, s: Series, stats) -> list[str]:
    bad = []
    try:
        cands = [candor_root(r) for r in roots_json]
    except (ValueError, TypeError, AttributeError) as e:
        return [f"roots not readable: {e}"]
    refs = ref["roots"]
    if got.get("count") != want:
        bad.append(f"count {got.get('count')} but the reference finds {want} "
                   f"({[(mpmath.nstr(r['annual'], 10), r['multiplicity']) for r in refs]})")
    if sum((c["multiplicity"] or 0) for c in cands) != got.get("count"):
        bad.append("count is not the sum of the multiplicities")
    ub = got.get("upper_bound")
    if not isinstance(ub, int) or ub < (got.get("count") or 0) or ub > ref["sign_changes"]:
        bad.append(f"upper_bound {ub} not between count {got.get('count')} and Descartes' {ref['sign_changes']}")
    if all(c["log10"] is not None for c in cands):
        keys = [c["log10"] for c in cands]
    else:  # a null annual rate stands for one too large to print
        keys = [c["annual"] if c["annual"] is not None else mpmath.inf for c in cands]
    if any(keys[i] > keys[i + 1] for i in range(len(keys) - 1)):
        bad.append("roots are not in ascending order")
    used = [0] * len(cands)
    for r in refs:
        hits = match(cands, r, s)
        label = f"root {mpmath.nstr(r['annual'], 15)} (log10 growth {mpmath.nstr(r['log10'], 12)}, x{r['multiplicity']})"
        if not hits:
            bad.append(f"MISSED {label}")
            stats["missed"] += 1
            continue
        if len(hits) > 1:
            bad.append(f"{label} lies in {len(hits)} intervals")
        i = hits[0]
        used[i] += 1
        c = cands[i]
        a = r["annual"]
        if interval_holds(c, a) is False:
            bad.append(f"{label}: its interval [{c['lo']}, {c['hi']}] does not hold it")
        if c["multiplicity"] != r["multiplicity"]:
            bad.append(f"{label}: multiplicity {c['multiplicity']}")
        finite = interval_holds(c, a) is not None
        py = float(s.per_year)
        g_ref = 1 + a
        if finite and abs(a) < 1e300:
            if g_ref > TINY_GROWTH and c["lo"] > -1:
                width = float(mpmath.log((1 + c["hi"]) / (1 + c["lo"]))) / py
            else:
                width = float(c["hi"] - c["lo"])
            if interval_holds(c, a):
                stats["max_width"] = max(stats.get("max_width", 0.0), width)
            if width > TOL_WIDTH_REL:
                bad.append(f"{label}: interval [{c['lo']}, {c['hi']}] is wider than {TOL_WIDTH_REL} "
                           f"per clock unit ({width:.2g})")
        # Point estimates: tight for a simple root standing apart; roots in a cluster or
        # next to a multiple root are ill-conditioned, and there the certified
        # interval is what counts.
        sep = separation(refs, r) / max(1.0, py)
        tol = TOL_RATE_SIMPLE if r["multiplicity"] == 1 and sep > 1e-3 else TOL_RATE_MULTIPLE
        if c["annual"] is not None and mpmath.isfinite(c["annual"]):
            if g_ref > TINY_GROWTH and c["annual"] > -1:
                err = abs(float(mpmath.log((1 + c["annual"]) / g_ref))) / py
            else:
                err = float(abs(c["annual"] - a))
            if err > tol:
                bad.append(f"{label}: annual_rate {c['annual']} off by {err:.2g} per clock unit (> {tol:g})")
            if finite and not (c["lo"] - abs(c["lo"]) * 1e-15 <= c["annual"] <= c["hi"] + abs(c["hi"]) * 1e-15):
                bad.append(f"{label}: annual_rate {c['annual']} outside its own interval")
        elif abs(a) < 1e300:
            bad.append(f"{label}: annual_rate is null for a representable rate")
        if c["log10"] is None:
            bad.append(f"{label}: log10_annual_growth missing")
        elif abs(c["log10"] - r["log10"]) > log10_tol(s, r["log10"]) * (tol / TOL_RATE_SIMPLE):
            bad.append(f"{label}: log10_annual_growth {c['log10']} vs {mpmath.nstr(r['log10'], 15)}")
        if s.periodic and c["periodic"] is not None and r["periodic"] is not None:
            if not rel_close(1 + c["periodic"], 1 + r["periodic"], tol):
                bad.append(f"{label}: periodic_rate {c['periodic']} vs {mpmath.nstr(r['periodic'], 15)}")
        if c["balance_kind"] != r["balance_kind"]:
            bad.append(f"{label}: balance_kind {c['balance_kind']!r}, reference {r['balance_kind']!r}")
        if "stance" in r and c["stance"] != r["stance"]:
            bad.append(f"{label}: stance {c['stance']!r}, reference {r['stance']!r}")
    for i, n in enumerate(used):
        if n == 0:
            c = cands[i]
            bad.append(f"EXTRA root {c['annual']} interval [{c['lo']}, {c['hi']}] holds no real root")
            stats["extra"] += 1
        elif n > 1:
            bad.append(f"interval [{cands[i]['lo']}, {cands[i]['hi']}] holds {n} distinct roots")
    return bad


def check_money(ref, got, s: Series) -> list[str]:
    bad = []
    if s.hurdle is None:
        for k in ("npv_at_hurdle", "mirr"):
            if got.get(k) is not None:
                bad.append(f"{k} given without a hurdle rate")
        return bad
    npv_s = got.get("npv_at_hurdle")
    if npv_s is None:
        # Allowed only for an NPV beyond an exact decimal's range (about 7.9e26).
        if abs(ref["npv"]) < DECIMAL_MAX:
            bad.append("npv_at_hurdle is null although the NPV fits an exact decimal")
    elif not isinstance(npv_s, str):
        bad.append(f"npv_at_hurdle {npv_s!r} is not a decimal string")
    else:
        try:
            npv = Decimal(npv_s)
        except ArithmeticError:
            return bad + [f"npv_at_hurdle {npv_s!r} is not a decimal"]
        tol = TOL_NPV_ABS + Decimal(TOL_NPV_REL) * Decimal(mpmath.nstr(ref["npv_scale"], 30))
        exact = Decimal(mpmath.nstr(ref["npv"], 40, min_fixed=-1000, max_fixed=1000))
        if abs(npv - exact) > tol:
            bad.append(f"npv_at_hurdle {npv_s} vs 60-digit {mpmath.nstr(ref['npv'], 20)}")
        if "npf_npv" in ref and abs(npv - Decimal(repr(ref["npf_npv"]))) > tol:
            bad.append(f"npv_at_hurdle {npv_s} vs numpy-financial {ref['npf_npv']!r}")
    m = got.get("mirr", "absent")
    if m == "absent":
        bad.append("mirr missing although a hurdle is given")
    elif ref["mirr"] is None:
        if m is not None:
            bad.append(f"mirr {m} where it is undefined")
    elif m is None:
        if abs(ref["mirr"]) < 1e300:  # null is allowed only beyond what a double holds
            bad.append(f"mirr null, reference {mpmath.nstr(ref['mirr'], 15)}")
    else:
        mv = num(m)
        if not rel_close(mv, ref["mirr"], TOL_MIRR_REL):
            bad.append(f"mirr {m} vs 60-digit {mpmath.nstr(ref['mirr'], 15)}")
        if ref.get("npf_mirr") is not None and not rel_close(mv, mpmath.mpf(ref["npf_mirr"]), TOL_MIRR_REL):
            bad.append(f"mirr {m} vs numpy-financial {ref['npf_mirr']!r}")
    return bad


def decimals_tol(s: str) -> float:
    """Half a unit in the last printed place, plus a hair."""
    places = len(s.split(".")[1]) if "." in s else 0
    return 0.6 * 10.0 ** (-places)


def check_published(pub, ref, got, ans) -> list[str]:
    """The check values of docs/methods.md (source in the corpus' answers: ans['source'])."""
    who = "REFERENCE" if got is None else "engine"
    bad = []
    src = ans.get("source", "docs/methods.md, Check values")
    if "annual_rates" in pub:
        if got is None:
            vals = [r["annual"] for r in ref["roots"]]
            mults = [r["multiplicity"] for r in ref["roots"]]
        else:
            vals = [num(r.get("annual_rate")) for r in got.get("roots") or []]
            mults = [r.get("multiplicity") for r in got.get("roots") or []]
        want = sorted(pub["annual_rates"], key=float)
        if len(vals) != len(want) or any(
            v is None or abs(v - mpmath.mpf(w)) > decimals_tol(w) for v, w in zip(vals, want)
        ):
            bad.append(f"{who}: IRRs {[mpmath.nstr(v, 10) if v is not None else None for v in vals]} "
                       f"vs published {want} [{src}]")
        if "multiplicities" in pub and mults != pub["multiplicities"]:
            bad.append(f"{who}: multiplicities {mults} vs published {pub['multiplicities']} [{src}]")
    if "npv_at_hurdle" in pub:
        v = ref.get("npv") if got is None else got.get("npv_at_hurdle")
        if v is None or abs(mpmath.mpf(str(v)) - mpmath.mpf(pub["npv_at_hurdle"])) > max(0.0051, decimals_tol(pub["npv_at_hurdle"])):
            bad.append(f"{who}: NPV {v} vs published {pub['npv_at_hurdle']} [{src}]")
    if "mirr" in pub:
        v = ref.get("mirr") if got is None else got.get("mirr")
        if v is None or abs(mpmath.mpf(str(v)) - mpmath.mpf(pub["mirr"])) > decimals_tol(pub["mirr"]):
            bad.append(f"{who}: MIRR {v} vs published {pub['mirr']} [{src}]")
    if "balance_kinds" in pub:
        kinds = [r["balance_kind"] for r in ref["roots"]] if got is None else \
            [r.get("balance_kind") for r in got.get("roots") or []]
        if kinds != pub["balance_kinds"]:
            bad.append(f"{who}: balance kinds {kinds} vs published {pub['balance_kinds']} [{src}]")
    return bad


# ------------------------------------------------------------------ driver


def main() -> int:
    ap = argparse.ArgumentParser(description="Cross-check candor rates --batch against exact references.")
    ap.add_argument("binary", nargs="?", default="target/release/candor")
    ap.add_argument("--out", default="target/crosscheck", help="where the corpus and the report go")
    ap.add_argument("--seed", type=int, default=20261201)
    ap.add_argument("--scale", type=float, default=1.0)
    ap.add_argument("--jobs", type=int, default=os.cpu_count() or 2)
    ap.add_argument("--reference-only", action="store_true", help="check the reference against known answers only")
    ap.add_argument("--only", default=None, help="check only ids containing this text")
    ap.add_argument("--strict", action="store_true",
                    help="count series the engine reports as undecided as failures too")
    args = ap.parse_args()
    global STRICT
    STRICT = args.strict

    t0 = time.time()
    cpath, apath, n = corpus.write(args.out, args.seed, args.scale)
    lines = open(cpath).read().splitlines()
    answers = [json.loads(a) for a in open(apath)]
    print(f"corpus: {n} lines ({cpath})", flush=True)

    outputs: list[dict | None] = [None] * n
    if not args.reference_only:
        if not os.path.exists(args.binary):
            print(f"error: no binary at {args.binary} (build it: cargo build --release)", file=sys.stderr)
            return 2
        t = time.time()
        proc = subprocess.run([args.binary, "rates", "--batch", cpath], capture_output=True, text=True)
        engine_s = time.time() - t
        out_lines = proc.stdout.splitlines()
        print(f"engine: exit {proc.returncode}, {len(out_lines)} output lines in {engine_s:.2f} s", flush=True)
        if len(out_lines) != n:
            print(f"FAIL: {n} input lines but {len(out_lines)} output lines\n"
                  f"stderr: {proc.stderr[-2000:]}")
            return 1
        for i, ol in enumerate(out_lines):
            try:
                outputs[i] = json.loads(ol)
            except json.JSONDecodeError:
                outputs[i] = {"unparsable": ol[:200]}

    todo = [i for i in range(n) if (args.only is None or args.only in answers[i]["id"])]
    work = [i for i in todo if not answers[i].get("expect_error")]
    # Longest first, so the pool finishes together.
    work.sort(key=lambda i: -len(lines[i]))
    refs: dict[int, dict] = {}
    t = time.time()
    with ProcessPoolExecutor(max_workers=max(1, args.jobs)) as pool:
        for i, r in zip(work, pool.map(reference_safe, [lines[i] for i in work], chunksize=4)):
            refs[i] = r
    print(f"reference: {len(work)} series in {time.time() - t:.1f} s", flush=True)

    stats = {"roots": 0, "missed": 0, "extra": 0, "ambiguous_uncertified": 0}
    failed = 0
    report = []
    for i in todo:
        ans = answers[i]
        got = outputs[i] if not args.reference_only else None
        if got is not None and "unparsable" in got:
            probs = [f"output line is not JSON: {got['unparsable']}"]
        else:
            try:
                probs = compare(lines[i], ans, refs.get(i, {}), got, stats, args.reference_only)
            except Exception as e:  # a malformed engine line must be reported, not crash the check
                probs = [f"check crashed on this line: {type(e).__name__}: {e}"]
        if probs:
            failed += 1
            report.append(f"--- {ans['id']} (line {i + 1}, {ans['kind']}, tags {ans.get('tags')})")
            report += ["    " + p for p in probs]
    passed = len(todo) - failed
    with open(os.path.join(args.out, "report.txt"), "w") as f:
        f.write("\n".join(report) + "\n")
    if report:
        print("\n".join(report[:400]))
        if len(report) > 400:
            print(f"... {len(report) - 400} more report lines in {args.out}/report.txt")
    print(f"summary: {len(todo)} series checked, {stats['roots']} reference roots compared, "
          f"{stats['missed']} missed, {stats['extra']} extra, "
          f"{stats['ambiguous_uncertified']} ambiguous left uncertified, "
          f"{stats.get('undecided', 0)} reported undecided with every unlisted root inside an undecided interval, "
          f"{failed} series with mismatches, "
          f"widest certified interval {stats.get('max_width', 0):.2g} per clock unit, "
          f"{time.time() - t0:.1f} s in all")
    print(f"crosscheck: {passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
