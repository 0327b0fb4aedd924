#!/usr/bin/env python3
"""Reference values for sample-size planning (src/plan), independent of the Rust code.

Regenerate the fixture (from the crate root; about a minute on one core):

    pip install mpmath scipy
    python3 tests/reference/plan_reference.py

This writes tests/reference/plan_values.json. Sources, section by section:

* standard, demonstration: the smallest n with P(Bin(n, L) <= c) <= delta, the binomial
  distribution function summed term by term with mpmath at mp.dps = 50 (exact finite sums),
  found by doubling and bisection in n. Every input is evaluated at the double nearest to it
  (mpf(float)), which is the value the Rust tests pass. `margin` is the smallest relative gap
  |F / delta - 1| at n and n - 1, so a reader can see that no answer sits on a near-tie.
* ties: exact ties in rational arithmetic (fractions.Fraction) on the decimals as written,
  e.g. confidence 0.3439 and reliability 0.9, where 0.9**4 = 0.6561 exactly; with the rule
  "pass when the bound is at most the limit" a tie passes.
* operating: the acceptance number c(n) (largest k with F(k; n, L) <= delta) and the chance
  of passing P(Bin(n, p) <= c(n)) on a grid of rates, mpmath at mp.dps = 50.
* sawtooth: a brute-force scan over every n from 1 to n_max of c(n) and P(n) =
  P(Bin(n, p0) <= c(n)), with scipy.special.bdtr in double precision; any comparison whose
  relative margin is below 1e-9 is redone with mpmath. From the scan: the first n with
  P(n) >= t and the smallest n from which P stays >= t up to n_max (n_max is at least three
  times that n).
* still_needed: zero further events, the demonstration n for c = k minus n; at the observed
  rate, the first N >= n at which ceil(k N / n) events in N trials pass, by scanning N
  (scipy, mpmath near margins).
* bounded: plug-in sample sizes at mp.dps = 50: Hoeffding ceil(lambda / (2 gap^2)),
  Chernoff-kl ceil(lambda / kl(m || l)), and by search the Maurer-Pontil empirical Bernstein
  bound m + sqrt(2 s^2 ln(2/delta) / n) + 7 ln(2/delta) / (3 (n - 1)) and the known-variance
  Bernstein (Bennett form) m + sqrt(2 s^2 lambda / n) + lambda / (3 n), each <= l.
* two_point: the exact chance that Hoeffding's bound passes when the data follow the two-point
  law on {0, 1} (a binomial sum, mpmath), for checking the simulation driver.
"""
import json
import math
import os
from fractions import Fraction

import mpmath
from mpmath import mp, mpf
from scipy.special import bdtr

mp.dps = 50

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "plan_values.json")


# ------------------------------------------------------------------------------------------
# Binomial distribution function, exactly summed
# ------------------------------------------------------------------------------------------

def cdf(k, n, p):
    """P(Bin(n, p) <= k) as an exact finite sum at mp.dps digits (k small enough to sum)."""
    p = mpf(p)
    if k >= n:
        return mpf(1)
    if p == 0:
        return mpf(1)
    if p == 1:
        return mpf(0)
    q = 1 - p
    # term j = C(n, j) p^j q^(n - j), built up by the ratio (n - j) / (j + 1) * p / q
    t = q ** n
    s = t
    for j in range(k):
        t = t * (n - j) / (j + 1) * p / q
        s += t
    return s


def passes(k, n, L, delta):
    return n > k and cdf(k, n, L) <= mpf(delta)


def min_trials(c, L, delta):
    """Smallest n with P(Bin(n, L) <= c) <= delta, by doubling then bisection."""
    lo = c  # n <= c always fails (the bound is 1)
    hi = max(c + 1, int(math.log(delta) / math.log1p(-L)))
    while not passes(c, hi, L, delta):
        lo = hi
        hi *= 2
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if passes(c, mid, L, delta):
            hi = mid
        else:
            lo = mid
    return hi


def margin(c, n, L, delta):
    d = mpf(delta)
    gaps = [abs(cdf(c, m, L) / d - 1) for m in (n, n - 1) if m > c]
    return float(min(gaps))


def c_max(n, L, delta):
    """Largest k with F(k; n, L) <= delta, or -1."""
    if not passes(0, n, L, delta):
        return -1
    k = max(0, int(n * L))
    while k > 0 and not passes(k, n, L, delta):
        k -= 1
    while passes(k + 1, n, L, delta):
        k += 1
    return k


# ------------------------------------------------------------------------------------------
# Fast double-precision scan with high-precision rechecks near the margin
# ------------------------------------------------------------------------------------------

RECHECK = 1e-9


def fast_le(k, n, p, x):
    """P(Bin(n, p) <= k) <= x, in double, redone in mpmath when within RECHECK."""
    if k >= n:
        return 1.0 <= x
    f = bdtr(k, n, p)
    if abs(f / x - 1) > RECHECK:
        return f <= x
    return cdf(k, n, p) <= mpf(x)


def fast_ge(k, n, p, x):
    """P(Bin(n, p) <= k) >= x."""
    if k >= n:
        return True
    f = bdtr(k, n, p)
    if abs(f / x - 1) > RECHECK:
        return f >= x
    return cdf(k, n, p) >= mpf(x)


def scan_c(L, delta, n_max):
    """c(n) for n = 1..n_max; c grows by 0 or 1 per step. Index 0 unused."""
    c = [-1] * (n_max + 1)
    cur = -1
    for n in range(1, n_max + 1):
        if cur + 1 < n and fast_le(cur + 1, n, L, delta):
            cur += 1
        c[n] = cur
    return c


# ------------------------------------------------------------------------------------------
# Sections
# ------------------------------------------------------------------------------------------

def section_standard():
    pairs = [(90, 90, 0.10, 0.10), (95, 90, 0.05, 0.10), (95, 95, 0.05, 0.05),
             (95, 99, 0.05, 0.01), (99, 99, 0.01, 0.01)]
    rows = []
    for conf, rel, delta, L in pairs:
        trials = [min_trials(c, L, delta) for c in range(4)]
        rows.append({
            "confidence_percent": conf, "reliability_percent": rel,
            "delta": delta, "limit": L, "trials": trials,
            "margin": min(margin(c, n, L, delta) for c, n in enumerate(trials)),
        })
    return rows


def section_demonstration():
    cases = [
        (0, 1e-6, 0.05), (3, 1e-6, 0.05), (0, 0.01, 1e-12), (5, 0.01, 1e-12),
        (0, 0.9, 0.05), (4, 0.9, 0.05), (10, 0.99, 0.01), (0, 0.3, 0.9), (2, 0.3, 0.9),
        (50, 0.02, 0.05), (100, 0.05, 0.001), (20, 1e-4, 0.1), (1, 0.5, 0.5),
        (7, 0.123, 0.0123), (0, 1e-9, 0.05), (2, 1e-9, 1e-6), (0, 0.999999, 0.5), (0, 1e-12, 1e-15),
        (3, 0.999999999999, 0.5),
    ]
    out = []
    for c, L, delta in cases:
        n = min_trials(c, L, delta)
        out.append({"events": c, "limit": L, "delta": delta, "trials": n,
                    "margin": margin(c, n, L, delta)})
    return out


def section_ties():
    """Exact ties on the decimals: the smallest n with F <= delta in rational arithmetic, and
    n - 1 failing; `tie` is True when F(n) equals delta exactly."""
    def fcdf(k, n, p):
        q = 1 - p
        return sum(Fraction(math.comb(n, j)) * p ** j * q ** (n - j) for j in range(k + 1))

    cases = [
        # (label, events, limit as text, delta as text)
        ("confidence 0.3439, reliability 0.9 (0.9^4 = 0.6561)", 0, "0.1", "0.6561"),
        ("confidence 0.19, reliability 0.9 (0.9^2 = 0.81)", 0, "0.1", "0.81"),
        ("confidence 0.271, reliability 0.9 (0.9^3 = 0.729)", 0, "0.1", "0.729"),
        ("confidence 0.875, reliability 0.5 (0.5^3 = 0.125)", 0, "0.5", "0.125"),
        ("one event, rate 1/2: P(Bin(4, 1/2) <= 1) = 5/16", 1, "0.5", "0.3125"),
        ("two events, rate 1/2: P(Bin(5, 1/2) <= 2) = 1/2", 2, "0.5", "0.5"),
        ("confidence 0.7599, reliability 0.7 (0.7^4 = 0.2401)", 0, "0.3", "0.2401"),
        ("confidence 0.9919, reliability 0.3 (0.3^4 = 0.0081)", 0, "0.7", "0.0081"),
    ]
    out = []
    for label, k, ltxt, dtxt in cases:
        L, d = Fraction(ltxt), Fraction(dtxt)
        n = k + 1
        while fcdf(k, n, L) > d:
            n += 1
        out.append({"label": label, "events": k, "limit": float(ltxt), "delta": float(dtxt),
                    "trials": n, "tie": fcdf(k, n, L) == d})
    return out


def section_operating():
    plans = [(46, 0.1, 0.05), (473, 0.01, 0.05), (1001, 0.01, 0.01), (20000, 0.01, 0.05),
             (10_000_000, 1e-5, 1e-3), (30, 0.5, 0.2)]
    out = []
    for n, L, delta in plans:
        c = c_max(n, L, delta)
        rates = sorted(set([L] + [L * 3 * i / 24 for i in range(25)] + [min(1.0, L * 5)]))
        rates = [r for r in rates if r <= 1]
        points = [[r, float(cdf(c, n, r))] for r in rates]
        out.append({"trials": n, "limit": L, "delta": delta, "allowed_events": c,
                    "consumer_risk": float(cdf(c, n, L)), "points": points})
    return out


def section_sawtooth():
    cases = [
        # limit, delta, assumed rate, target, n_max
        (0.1, 0.05, 0.02, 0.9, 2000),
        (0.05, 0.05, 0.01, 0.8, 3000),
        (0.01, 0.05, 0.005, 0.9, 20000),
        (0.9, 0.05, 0.85, 0.9, 3000),
        (0.2, 0.01, 0.1, 0.95, 3000),
        (0.05, 0.1, 0.03, 0.5, 20000),
        (0.01, 0.05, 0.009, 0.9, 260000),
    ]
    out = []
    for L, delta, p0, t, n_max in cases:
        c = scan_c(L, delta, n_max)
        ok = [c[n] >= 0 and fast_ge(c[n], n, p0, t) for n in range(n_max + 1)]
        ok[0] = False
        first = next(n for n in range(1, n_max + 1) if ok[n])
        last_fail = max(n for n in range(1, n_max + 1) if not ok[n])
        held = last_fail + 1
        assert n_max >= 3 * held, (L, delta, p0, t, held, n_max)
        n0 = next(n for n in range(1, n_max + 1) if c[n] >= 0)
        picks = set(range(max(1, first - 3), first + 4)) | set(range(held - 3, held + 4))
        step = max(1, n_max // 60)
        picks |= set(range(n0, n_max + 1, step))
        picks.add(n0 - 1)  # the last n at which no count passes (0 is dropped below)
        picks = sorted(n for n in picks if 1 <= n <= n_max)
        samples = []
        for n in picks:
            p = float(cdf(c[n], n, p0)) if c[n] >= 0 else 0.0
            samples.append([n, c[n], p])
        out.append({"limit": L, "delta": delta, "assumed_rate": p0, "target": t,
                    "n_max": n_max, "first_reached": first, "held": held,
                    "allowed_events_at_held": c[held], "samples": samples})
    return out


def section_still_needed():
    cases = [(3, 100, 0.05, 0.05), (1, 20, 0.1, 0.05), (10, 1000, 0.011, 0.05),
             (0, 10, 0.1, 0.05), (2, 300, 0.01, 0.05), (6, 100, 0.05, 0.05),
             (5, 50, 0.2, 0.01), (40, 10000, 0.005, 0.1), (0, 59, 0.05, 0.05)]
    out = []
    for k, n, L, delta in cases:
        nk = min_trials(k, L, delta)
        row = {"events": k, "trials": n, "limit": L, "delta": delta,
               "zero_further_events": max(0, nk - n)}
        if k > 0 and k / n >= L:
            row["at_observed_rate"] = None
        else:
            big = n
            while True:
                e = -(-k * big // n)
                if e < big and fast_le(e, big, L, delta):
                    break
                big += 1
            row["at_observed_rate"] = big - n
            row["at_observed_rate_events"] = e
        out.append(row)
    return out


def kl(p, q):
    p, q = mpf(p), mpf(q)
    t1 = p * mpmath.log(p / q) if p > 0 else mpf(0)
    t2 = (1 - p) * mpmath.log((1 - p) / (1 - q)) if p < 1 else mpf(0)
    return t1 + t2


def smallest(pred, start):
    """Smallest n >= start with pred(n), for pred false then true: doubling, bisection."""
    if pred(start):
        return start
    lo, hi = start, 2 * start
    while not pred(hi):
        lo, hi = hi, 2 * hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if pred(mid):
            hi = mid
        else:
            lo = mid
    return hi


def section_bounded():
    cases = [  # low, high, mean, sd, limit, delta
        (0.0, 2.5, 1.0, 0.4, 1.2, 0.05),
        (0.0, 1.0, 0.1, 0.05, 0.15, 0.05),
        (-5.0, 5.0, -1.0, 2.0, 0.5, 0.01),
        (0.0, 100.0, 20.0, 10.0, 25.0, 0.1),
        (0.0, 1.0, 0.01, 0.02, 0.05, 0.001),
        (0.0, 1.0, 0.5, 0.5, 0.6, 0.05),
    ]
    out = []
    for a, b, mu, sd, L, delta in cases:
        a_, b_, w = mpf(a), mpf(b), mpf(b) - mpf(a)
        m = (mpf(mu) - a_) / w
        l = (mpf(L) - a_) / w
        v = (mpf(sd) / w) ** 2
        lam = -mpmath.log(mpf(delta))
        lam2 = mpmath.log(2 / mpf(delta))
        gap = l - m
        x_h = lam / (2 * gap ** 2)
        x_kl = lam / kl(m, l)
        eb = smallest(lambda n: n >= 2 and m + mpmath.sqrt(2 * v * lam2 / n)
                      + 7 * lam2 / (3 * (n - 1)) <= l, 2)
        bern = smallest(lambda n: m + mpmath.sqrt(2 * v * lam / n) + lam / (3 * n) <= l, 1)
        frac = lambda x: float(min(x - mpmath.floor(x), mpmath.ceil(x) - x))
        out.append({"low": a, "high": b, "mean": mu, "sd": sd, "limit": L, "delta": delta,
                    "hoeffding": int(mpmath.ceil(x_h)), "hoeffding_x": float(x_h),
                    "chernoff_kl": int(mpmath.ceil(x_kl)), "chernoff_kl_x": float(x_kl),
                    "empirical_bernstein": eb, "bernstein": bern,
                    "closed_form_distance_to_integer": min(frac(x_h), frac(x_kl))})
    return out


def section_two_point():
    """Hoeffding's chance of passing under the two-point law on {0, 1} with mean m (the law of
    largest variance): the mean of n draws is Bin(n, m)/n, and the bound passes when
    k/n + sqrt(ln(1/delta)/(2n)) <= l, i.e. k <= floor(n (l - r)). `distance` is how far
    n (l - r) is from an integer (a near-integer would make the count sensitive to rounding)."""
    cases = [(0.3, 0.45, 0.05, 100), (0.1, 0.2, 0.1, 150), (0.5, 0.6, 0.05, 300)]
    out = []
    for m, l, delta, n in cases:
        r = mpmath.sqrt(-mpmath.log(mpf(delta)) / (2 * n))
        x = n * (mpf(l) - r)
        k = int(mpmath.floor(x))
        out.append({"mean": m, "limit": l, "delta": delta, "trials": n,
                    "pass_probability": float(cdf(k, n, m)),
                    "distance": float(min(x - k, k + 1 - x))})
    return out


def main():
    doc = {
        "source": "tests/reference/plan_reference.py: mpmath (mp.dps = 50) exact binomial sums, "
                  "fractions.Fraction for decimal ties, scipy.special.bdtr brute-force scans "
                  "rechecked with mpmath within 1e-9 of a decision",
        "standard": section_standard(),
        "demonstration": section_demonstration(),
        "ties": section_ties(),
        "operating": section_operating(),
        "sawtooth": section_sawtooth(),
        "still_needed": section_still_needed(),
        "bounded": section_bounded(),
        "two_point": section_two_point(),
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
