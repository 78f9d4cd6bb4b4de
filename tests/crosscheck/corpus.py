"""Seeded generator of the cross-check corpus for `candor rates --batch`.

Writes two JSON-lines files with the same number of lines, line i of one
describing line i of the other:

* corpus.jsonl: the batch input, one series a line (the command-line contract);
* answers.jsonl: what the generator knows about each line: its kind, exact
  roots where the series was built from chosen roots, published values where a
  series comes from the check values of docs/methods.md, whether certification may honestly fail
  ("ambiguous"), whether the line is meant to be rejected ("expect_error").

Every series is drawn from one random.Random(seed), so the same seed gives the
same bytes. Usage: python3 corpus.py --out DIR [--seed N] [--scale S]
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import os
import random
from fractions import Fraction

EVERY = {"year": 1, "half-year": 2, "quarter": 4, "month": 12, "week": 52, "day": 365}

# ---------------------------------------------------------------- helpers


def poly_mul(a: list[Fraction], b: list[Fraction]) -> list[Fraction]:
    """Product of two polynomials, coefficients in ascending powers."""
    out = [Fraction(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        if x == 0:
            continue
        for j, y in enumerate(b):
            out[i + j] += x * y
    return out


def to_primitive_ints(p: list[Fraction]) -> list[int]:
    """The same roots with coprime integer coefficients."""
    from math import gcd

    den = 1
    for x in p:
        den = den * x.denominator // gcd(den, x.denominator)
    ints = [int(x * den) for x in p]
    g = 0
    for x in ints:
        g = gcd(g, x)
    return [x // g for x in ints]


def sign_changes(values) -> int:
    last, n = 0, 0
    for v in values:
        if v == 0:
            continue
        s = 1 if v > 0 else -1
        if last and s != last:
            n += 1
        last = s
    return n


def fmt_decimal(units: int, places: int) -> str:
    """units / 10^places as an exact decimal string."""
    neg = units < 0
    u = abs(units)
    if places == 0:
        s = str(u)
    else:
        s = str(u).rjust(places + 1, "0")
        s = s[:-places] + "." + s[-places:]
    return ("-" if neg else "") + s


class Amount:
    """An exact amount, emitted either as a JSON number or as a decimal string."""

    def __init__(self, units: int, places: int, as_string: bool):
        self.units, self.places, self.as_string = units, places, as_string

    def json(self) -> str:
        s = fmt_decimal(self.units, self.places)
        return json.dumps(s) if self.as_string else s


def encode(obj) -> str:
    """JSON with Amount objects written verbatim (no float round trip)."""
    if isinstance(obj, Amount):
        return obj.json()
    if isinstance(obj, dict):
        return "{" + ", ".join(json.dumps(k) + ": " + encode(v) for k, v in obj.items()) + "}"
    if isinstance(obj, list):
        return "[" + ", ".join(encode(v) for v in obj) + "]"
    return json.dumps(obj)


def rate_value(rng: random.Random, lo_bp: int, hi_bp: int):
    """A rate in basis points drawn in [lo, hi], written as a fraction or as "x%"."""
    bp = rng.randint(lo_bp, hi_bp)
    if rng.random() < 0.5:
        pct = fmt_decimal(bp, 2).rstrip("0").rstrip(".")
        return pct + "%"
    return float(fmt_decimal(bp, 4))


def add_rates(rng: random.Random, line: dict, p_hurdle: float = 0.85) -> None:
    if rng.random() < p_hurdle:
        line["hurdle_rate"] = rate_value(rng, 0, 2000) if rng.random() < 0.1 else rate_value(rng, 300, 1500)
        if rng.random() < 0.3:
            line["finance_rate"] = rate_value(rng, 200, 900)
        if rng.random() < 0.3:
            line["reinvestment_rate"] = rate_value(rng, 300, 1500)


def amounts_from_ints(rng: random.Random, ints: list[int], places: int) -> list[Amount]:
    as_string = rng.random() < 0.5
    return [Amount(x, places, as_string or (rng.random() < 0.2)) for x in ints]


# ------------------------------------------------- (a) series from chosen roots

ORDINARY = [Fraction(x, 1000) for x in range(800, 1601, 5)]
NEAR_MINUS_100 = [Fraction(1, 20), Fraction(1, 50), Fraction(1, 100), Fraction(1, 1000), Fraction(3, 20)]
HUGE = [Fraction(10), Fraction(50), Fraction(100), Fraction(1000), Fraction(7, 2)]


def pick_real_roots(rng: random.Random) -> tuple[list[tuple[Fraction, int]], list[str]]:
    """Distinct positive growth factors with multiplicities, and tags describing them."""
    roots: dict[Fraction, int] = {}
    tags = []
    k = rng.choice([0, 1, 1, 2, 2, 2, 3, 3, 4])
    for _ in range(k):
        u = rng.random()
        if u < 0.62:
            x = rng.choice(ORDINARY)
        elif u < 0.74:
            x = rng.choice(NEAR_MINUS_100)
            tags.append("near-minus-100")
        elif u < 0.86:
            x = rng.choice(HUGE)
            tags.append("huge")
        else:
            x = rng.choice(ORDINARY)
            y = x + rng.choice([Fraction(1, 10000), Fraction(1, 1000), Fraction(1, 100000)])
            roots[y] = 1
            tags.append("cluster")
        m = 1
        r = rng.random()
        if r < 0.15:
            m = 2
            tags.append("double")
        elif r < 0.18:
            m = 3
            tags.append("triple")
        roots[x] = max(roots.get(x, 0), m)
    if rng.random() < 0.05:
        roots[Fraction(1)] = 1  # a zero rate
        tags.append("zero-rate")
    return sorted(roots.items()), tags


def complex_pair(rng: random.Random) -> list[Fraction]:
    """x^2 - 2a x + a^2 + b^2 (ascending), roots a +- b i with b != 0."""
    a = Fraction(rng.randint(30, 180), 100)
    b = Fraction(rng.randint(3, 90), 100)
    return [a * a + b * b, -2 * a, Fraction(1)]


def positive_factor(rng: random.Random) -> list[Fraction]:
    """A polynomial with positive coefficients: adds length, never a positive root."""
    deg = rng.randint(1, 30)
    if rng.random() < 0.3:
        # Sparse: 1 + x^d style factors leave zero flows inside the series.
        p = [Fraction(0)] * (deg + 1)
        p[0] = Fraction(rng.randint(1, 9))
        p[deg] = Fraction(rng.randint(1, 9))
        return p
    return [Fraction(rng.randint(1, 9)) for _ in range(deg + 1)]


def built_series(rng: random.Random, want_real: bool = True, max_coef: int = 10**15):
    """A polynomial in x = 1 + periodic rate with known positive roots.

    Returns (ascending coefficients in x, roots, tags) or None when the draw is
    unusable (too large amounts, too few sign changes).
    """
    roots, tags = pick_real_roots(rng) if want_real else ([], [])
    p = [Fraction(1)]
    for x, m in roots:
        for _ in range(m):
            p = poly_mul(p, [-x, Fraction(1)])
    pairs = rng.choice([0, 0, 1, 1, 2]) if want_real else rng.choice([1, 1, 2, 3])
    for _ in range(pairs):
        p = poly_mul(p, complex_pair(rng))
    if pairs:
        tags.append("complex-pair")
    if rng.random() < 0.5:
        p = poly_mul(p, positive_factor(rng))
        tags.append("padded")
    ints = to_primitive_ints(p)
    if len(ints) < 2 or max(abs(v) for v in ints) > max_coef:
        return None
    # C_k multiplies x^(n-k): the flows are the coefficients from the top down.
    flows = ints[::-1]
    if flows[0] > 0 and rng.random() < 0.8:
        flows = [-v for v in flows]  # most deals start with an outlay
    return flows, roots, tags


# The engine accepts amounts up to 10^15 currency units (src/model/values.rs, MAX_AMOUNT);
# built series stay within that, as integers or cents.


def make_built(rng: random.Random, idx: int, want_real: bool = True, ambiguous: bool = False):
    while True:
        got = built_series(rng, want_real)
        if got is None:
            continue
        flows, roots, tags = got
        v = sign_changes(flows)
        if want_real and not (1 <= v <= 8):
            continue
        if want_real and v < 2 and rng.random() < 0.7:
            continue  # keep most of them non-conventional
        break
    every = rng.choice(list(EVERY))
    places = rng.choice([0, 0, 2])
    line = {"id": f"roots-{idx:04d}", "every": every, "amounts": amounts_from_ints(rng, flows, places)}
    add_rates(rng, line)
    known = [{"x": f"{x.numerator}/{x.denominator}", "multiplicity": m} for x, m in roots]
    ans = {"id": line["id"], "kind": "roots", "tags": sorted(set(tags)), "known_growth": known,
           "sign_changes": v, "ambiguous": ambiguous}
    return line, ans


def make_ambiguous(rng: random.Random, idx: int):
    """Nearly coincident roots, or a complex pair nearly on the real axis.

    The exact answer is still known; an engine may honestly decline to certify.
    Draws are repeated until the amounts fit the engine's 10^15 limit.
    """
    while True:
        a = Fraction(rng.randint(80, 160), 100)
        c = Fraction(rng.randint(80, 160), 100)
        if abs(a - c) < Fraction(1, 20):
            continue
        if idx % 2 == 0:
            gap = Fraction(1, 10 ** rng.randint(6, 9))
            p = poly_mul([-a, Fraction(1)], [-(a + gap), Fraction(1)])
            roots = [(a, 1), (a + gap, 1)]
            tag = "near-double"
        else:
            b = Fraction(1, 10 ** rng.randint(4, 6))
            p = [a * a + b * b, -2 * a, Fraction(1)]
            roots = []
            tag = "near-real-complex-pair"
        p = poly_mul(p, [-c, Fraction(1)])
        ints = to_primitive_ints(p)
        if max(abs(v) for v in ints) <= 10**15:
            break
    roots = sorted(roots + [(c, 1)])
    flows = ints[::-1]
    if flows[0] > 0:
        flows = [-v for v in flows]
    line = {"id": f"ambiguous-{idx:03d}", "every": "year", "amounts": amounts_from_ints(rng, flows, 0)}
    add_rates(rng, line)
    known = [{"x": f"{x.numerator}/{x.denominator}", "multiplicity": m} for x, m in roots]
    ans = {"id": line["id"], "kind": "ambiguous", "tags": [tag], "ambiguous": True, "known_growth": known,
           "sign_changes": sign_changes(flows)}
    return line, ans


# --------------------------------------------- (b) random deal-like series


def deal_flows(rng: random.Random, n: int, m: int) -> list[int]:
    """Cents: an outlay (sometimes phased), mostly positive flows, occasional
    overhauls, sometimes a closing cost."""
    size = rng.randint(10**5, 10**8) * 100
    flows = [0] * (n + 1)
    flows[0] = -size
    build = 0
    if rng.random() < 0.3:
        build = rng.randint(1, max(1, n // 8))
        for k in range(1, build + 1):
            flows[k] = -rng.randint(size // 10, size // 2)
    yearly = size * rng.uniform(0.06, 0.30)
    per = yearly / m
    for k in range(build + 1, n + 1):
        if rng.random() < 0.02:
            flows[k] = 0
            continue
        flows[k] = int(per * rng.uniform(0.5, 1.5))
        if rng.random() < 0.04:
            flows[k] = -int(per * rng.uniform(1, 8 * max(1, m // 4)))
    if rng.random() < 0.35:
        flows[n] = -int(size * rng.uniform(0.1, 1.5))
    if flows[n] == 0:
        flows[n] = int(per)
    return flows


def make_deal(rng: random.Random, idx: int, every: str | None = None, n: int | None = None):
    if every is None:
        every = rng.choice(["year", "year", "half-year", "quarter", "quarter", "month", "week", "day"])
    m = EVERY[every]
    if n is None:
        n = {
            1: rng.randint(3, 40),
            2: rng.randint(6, 60),
            4: rng.randint(8, 100),
            12: rng.randint(12, 180),
            52: rng.randint(20, 160),
            365: rng.randint(30, 200),
        }[m]
    flows = deal_flows(rng, n, m)
    line = {"id": f"deal-{idx:04d}", "every": every, "amounts": amounts_from_ints(rng, flows, 2)}
    add_rates(rng, line)
    ans = {"id": line["id"], "kind": "deal", "tags": [every], "sign_changes": sign_changes(flows)}
    return line, ans


# ------------------------------------------------- (c) dated series on a grid

DAY_COUNTS = [("act/365f", 365), ("act/360", 360)]


def dated_line(rng, ident, coeffs_by_step, step_days, day_count, netting=False):
    """Dated flows at first + j*step days for each nonzero coefficient j."""
    first = dt.date(2025, 1, 1) + dt.timedelta(days=rng.randint(0, 5 * 365))
    places = rng.choice([0, 2])
    as_string = rng.random() < 0.5
    rows = []
    for j, cval in enumerate(coeffs_by_step):
        if cval == 0:
            continue
        d = (first + dt.timedelta(days=j * step_days)).isoformat()
        if netting and rng.random() < 0.15:
            part = rng.randint(-abs(cval), abs(cval))
            rows.append({"date": d, "amount": Amount(part, places, as_string)})
            rows.append({"date": d, "amount": Amount(cval - part, places, as_string)})
        else:
            rows.append({"date": d, "amount": Amount(cval, places, as_string)})
    line = {"id": ident, "day_count": day_count, "dated": rows}
    add_rates(rng, line)
    return line


def make_dated_built(rng: random.Random, idx: int):
    """Dated flows whose NPV is a polynomial in w = (1+r)^(-step/D) with known roots."""
    step = rng.choice([7, 30, 91, 91, 182])
    day_count, _ = rng.choice(DAY_COUNTS)
    while True:
        got = built_series(rng, True)
        if got is None:
            continue
        flows, roots, tags = got
        if 1 <= sign_changes(flows) <= 8 and len(flows) <= 120:
            break
    # Here the variable is w itself: NPV = sum C_j w^j, so the roots in w are 1/x.
    line = dated_line(rng, f"dated-roots-{idx:04d}", flows, step, day_count, netting=True)
    known = [{"w": f"{x.denominator}/{x.numerator}", "multiplicity": m} for x, m in roots]
    ans = {"id": line["id"], "kind": "dated-roots", "tags": sorted(set(tags)) + [f"step-{step}", day_count],
           "known_w": known, "step_days": step, "sign_changes": sign_changes(flows)}
    return line, ans


def make_dated_deal(rng: random.Random, idx: int):
    step = rng.choice([7, 30, 91])
    day_count, _ = rng.choice(DAY_COUNTS)
    horizon_days = {7: rng.randint(120, 1100), 30: rng.randint(365, 3650), 91: rng.randint(365, 3650 * 2)}[step]
    n = horizon_days // step
    m = max(1, round(365 / step))
    flows = deal_flows(rng, n, m)
    # Leave gaps: not every grid date carries a flow.
    for k in range(1, n):
        if rng.random() < 0.4:
            flows[k] = 0
    line = dated_line(rng, f"dated-deal-{idx:04d}", flows, step, day_count, netting=True)
    ans = {"id": line["id"], "kind": "dated-deal", "tags": [f"step-{step}", day_count], "step_days": step,
           "sign_changes": sign_changes(flows)}
    return line, ans


def make_dated_30360(rng: random.Random, idx: int):
    """Monthly or quarterly dates on one day of the month (<= 28) under a 30/360 count:
    year fractions are then exactly months / 12."""
    months_step = rng.choice([1, 3])
    n = rng.randint(6, 60)
    flows = deal_flows(rng, n, 12 // months_step)
    day_count = rng.choice(["30/360", "30e/360"])
    y, mo, day = rng.randint(2025, 2030), rng.randint(1, 12), rng.randint(1, 28)
    rows = []
    as_string = rng.random() < 0.5
    for j, cval in enumerate(flows):
        if cval == 0:
            continue
        tot = (mo - 1) + j * months_step
        d = dt.date(y + tot // 12, tot % 12 + 1, day).isoformat()
        rows.append({"date": d, "amount": Amount(cval, 2, as_string)})
    line = {"id": f"dated-30360-{idx:03d}", "day_count": day_count, "dated": rows}
    add_rates(rng, line)
    ans = {"id": line["id"], "kind": "dated-30360", "tags": [day_count], "sign_changes": sign_changes(flows)}
    return line, ans


# ------------------------------------------- (d) special and published series


def field_series() -> list[tuple[dict, dict]]:
    """The check values of docs/methods.md (Check values), with their sources."""
    src_ls = "Lorie & Savage, Journal of Business 28 (1955) 229-239 [flows from memory; values computed], via docs/methods.md"
    src_mine = "corporate-finance textbook mine example [memory]; values computed, via docs/methods.md"
    src_nr = "corporate-finance textbook example [memory]; values computed, via docs/methods.md"
    out = []
    out.append((
        {"id": "field-lorie-savage", "every": "year", "amounts": [-1600, 10000, -10000], "hurdle_rate": 0.10},
        {"kind": "field", "source": src_ls, "published": {"annual_rates": ["0.25", "4"], "npv_at_hurdle": "-773.5537",
                                                        "mirr": "0.05598956", "balance_kinds": ["mixed", "mixed"]},
         "known_growth": [{"x": "5/4", "multiplicity": 1}, {"x": "5/1", "multiplicity": 1}]},
    ))
    out.append((
        {"id": "field-mine", "every": "year", "amounts": [-30] + [10] * 9 + [-65], "hurdle_rate": "10%"},
        {"kind": "field", "source": src_mine, "published": {"annual_rates": ["0.03503024", "0.19542150"],
                                                          "npv_at_hurdle": "2.529924", "mirr": "0.10495274"}},
    ))
    out.append((
        {"id": "field-no-real-irr", "every": "year", "amounts": [1000, -3000, 2500], "hurdle_rate": 0.1},
        {"kind": "field", "source": src_nr, "published": {"annual_rates": [], "npv_at_hurdle": "338.8430"}},
    ))
    out.append((
        {"id": "field-double-root", "every": "year", "amounts": [-100, 220, -121]},
        {"kind": "field", "source": "computed (NPV = -(10 - 11v)^2), via docs/methods.md",
         "published": {"annual_rates": ["0.10"], "multiplicities": [2]},
         "known_growth": [{"x": "11/10", "multiplicity": 2}]},
    ))
    for dc, rates in [("act/365f", ["0.25025516", "3.97076089"]), ("act/360", ["0.24643578", "3.86275997"])]:
        out.append((
            {"id": f"field-lorie-savage-dated-{dc.replace('/', '')}", "day_count": dc,
             "dated": [{"date": "2024-01-01", "amount": -1600}, {"date": "2025-01-01", "amount": 10000},
                       {"date": "2026-01-01", "amount": -10000}]},
            {"kind": "field", "source": "computed, via docs/methods.md", "published": {"annual_rates": rates}},
        ))
    for line, ans in out:
        ans["id"] = line["id"]
        ans.setdefault("tags", [])
    return out


def make_one_sign(rng: random.Random, idx: int):
    n = rng.randint(2, 30)
    sgn = rng.choice([1, -1])
    flows = [sgn * rng.randint(1, 10**7) if rng.random() > 0.1 else 0 for _ in range(n)]
    flows[0] = sgn * rng.randint(1, 10**7)
    flows[-1] = sgn * rng.randint(1, 10**7)
    line = {"id": f"one-sign-{idx:03d}", "every": rng.choice(list(EVERY)), "amounts": amounts_from_ints(rng, flows, 2)}
    add_rates(rng, line)
    return line, {"id": line["id"], "kind": "one-sign", "tags": [], "known_growth": []}


def make_no_real(rng: random.Random, idx: int):
    line, ans = make_built(rng, idx, want_real=False)
    line["id"] = f"no-real-{idx:03d}"
    ans.update({"id": line["id"], "kind": "no-real"})
    return line, ans


def bad_lines() -> list[tuple[str, dict]]:
    """Lines the engine must reject one by one while the rest go on."""
    raw = [
        ('{"id": "bad-every", "every": "fortnight", "amounts": [-100, 110]}', "unknown period"),
        ('{"id": "bad-amount", "every": "year", "amounts": [-100, "12x"]}', "amount that is not a number"),
        ('{"id": "bad-empty", "every": "year", "amounts": []}', "no flows"),
        ('{"id": "bad-date", "day_count": "act/365f", "dated": [{"date": "2027-02-30", "amount": -1}, '
         '{"date": "2028-01-01", "amount": 2}]}', "impossible date"),
        ('{"id": "bad-hurdle", "every": "year", "amounts": [-100, 110], "hurdle_rate": "nine"}', "bad rate"),
        ('{"id": "bad-json", "every": "year", "amounts": [-100, 110', "not JSON"),
        ('{"id": "bad-too-large", "every": "year", "amounts": [-10000000000000001, 1, 20000000000000000]}',
         "amount beyond 10^15"),
    ]
    return [(r, {"id": r.split('"')[3], "kind": "bad", "tags": [why], "expect_error": True}) for r, why in raw]


# ---------------------------------------------------------------- assembly


def generate(seed: int = 20261201, scale: float = 1.0):
    """Lines (strings) and answers (dicts), in matching order."""
    rng = random.Random(seed)
    items: list[tuple[str, dict]] = []

    def add(line: dict, ans: dict):
        items.append((encode(line), ans))

    for line, ans in field_series():
        add(line, ans)
    n_built = int(440 * scale)
    for i in range(n_built):
        add(*make_built(rng, i))
    for i in range(int(20 * scale)):
        add(*make_no_real(rng, i))
    for i in range(int(12 * scale)):
        add(*make_one_sign(rng, i))
    for i in range(int(10 * scale)):
        add(*make_ambiguous(rng, i))
    for i in range(int(300 * scale)):
        add(*make_deal(rng, i))
    for i in range(int(30 * scale)):
        line, ans = make_deal(rng, 1000 + i, every="month", n=480)
        ans["tags"].append("481-flows")
        add(line, ans)
    for i in range(int(90 * scale)):
        add(*make_dated_built(rng, i))
    for i in range(int(90 * scale)):
        add(*make_dated_deal(rng, i))
    for i in range(int(24 * scale)):
        add(*make_dated_30360(rng, i))
    # Bad lines go in the middle, so that a line after them proves the batch went on.
    bad = bad_lines()
    mid = len(items) // 2
    items[mid:mid] = bad
    return items


def write(out_dir: str, seed: int = 20261201, scale: float = 1.0) -> tuple[str, str, int]:
    os.makedirs(out_dir, exist_ok=True)
    items = generate(seed, scale)
    cpath = os.path.join(out_dir, "corpus.jsonl")
    apath = os.path.join(out_dir, "answers.jsonl")
    with open(cpath, "w") as f:
        for line, _ in items:
            f.write(line + "\n")
    with open(apath, "w") as f:
        for _, ans in items:
            f.write(json.dumps(ans, sort_keys=True) + "\n")
    return cpath, apath, len(items)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default="target/crosscheck")
    ap.add_argument("--seed", type=int, default=20261201)
    ap.add_argument("--scale", type=float, default=1.0, help="multiply the number of series of each kind")
    a = ap.parse_args()
    cpath, apath, n = write(a.out, a.seed, a.scale)
    print(f"wrote {n} lines to {cpath} and {apath}")


if __name__ == "__main__":
    main()
