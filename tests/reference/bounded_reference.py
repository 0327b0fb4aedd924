#!/usr/bin/env python3
"""High-precision reference values for the bounded-mean methods (unit scale, values in [0, 1]).

Regenerate the fixture (from the crate root; takes a minute or two):

    pip install mpmath
    python3 tests/reference/bounded_reference.py

This writes tests/reference/bounded_bounds.json. Every value is computed with mpmath at
mp.dps = 50 straight from the formulas in the literature (see each function), independently of
the Rust code. The datasets are written out below; each value is a double (the literal's nearest
double, which is what the Rust test parses), and mpmath works with its exact value.

Methods:

* hoeffding: mean +- sqrt(ln(1/delta) / (2 n)), clamped to [0, 1] (Hoeffding 1963, Thm 2).
* chernoff-kl: kl inverses of the mean at budget ln(1/delta)/n, by bisection (400 steps).
* bernstein-empirical: Maurer & Pontil (2009), Thm 4, with the unbiased variance; the lower
  bound is the upper bound of 1 - x read back as 1 - U.
* bernstein-unexpected: min over eta = 2^-(i+1), i < k, k = max(1, ceil(log2(sqrt(n/L)/2))),
  L = ln(1/delta), of mean + (psi(-eta)/eta) mean(x^2) + ln(k/delta)/(eta n), psi(u) = u - ln(1+u);
  lower bound from 1 - x.
* split-kl: 1/2 + 1/2 kl+^-1(2 p+, e) - 1/2 kl-^-1(2 p-, e), e = ln(2/delta)/n, p+- the means of
  max(0, +-(x - 1/2)); lower bound from 1 - x.
* betting: Waudby-Smith & Ramdas, predictable plug-in bets with the fixed-n tuning
  lambda_t = sqrt(2 ln(1/alpha) / (n sigma^2_{t-1})), truncated at c/(1-m) (upper, capital K-) or
  c/m (lower, capital K+), c = 1/2; the running maximum over t <= n of the log-capital is
  compared with ln(1/alpha) and the edge of the rejected set is found by bisection in m
  (200 steps), returning the rejected end. Two bet sequences are used:
    - "mp": the bets in 50-digit arithmetic (the method as defined);
    - "f64": the bets evaluated in IEEE double precision in the order the formulas are written
      (running sums sequential, from 1/2 and 1/4): the bet sequence the library uses, so that
      the capital and the root are compared exactly.
  Two-sided interval: the hedged capital max(theta K+, (1-theta) K-), theta = 1/2, tuning
  ln(2/alpha), threshold 1/alpha; its ends are found by bisection from the sample mean outwards
  on the hedged capital itself (not by reduction to one-sided problems).

Values are written as decimal strings with 25 significant digits.
"""
import json
import math
import os

import mpmath
from mpmath import mp, mpf

mp.dps = 50
DIGITS = 25
C = mpf(1) / 2          # truncation of the bets
THETA = mpf(1) / 2      # hedging weight

# ----------------------------------------------------------------------------------------
# Datasets (unit scale). The Beta-looking and low-variance samples were drawn once with
# Python's random module and rounded to 4 decimals; the others are constructed directly.
# ----------------------------------------------------------------------------------------

BETA = [0.2545, 0.1866, 0.2438, 0.1701, 0.261, 0.1585, 0.2073, 0.288, 0.1499, 0.1542, 0.1222,
        0.19, 0.2422, 0.4414, 0.3655, 0.1941, 0.1455, 0.5208, 0.259, 0.1503, 0.3315, 0.0671,
        0.2237, 0.4317, 0.3892, 0.0566, 0.4561, 0.2124, 0.2418, 0.1514, 0.4439, 0.1408, 0.1622,
        0.0558, 0.3411, 0.2226, 0.2051, 0.2947, 0.1721, 0.1432, 0.2619, 0.4195, 0.4822, 0.2099,
        0.0703, 0.5318, 0.1405, 0.142, 0.2803, 0.466]

LOW_VARIANCE = [0.5007, 0.4712, 0.4924, 0.5034, 0.4706, 0.4917, 0.4765, 0.4835, 0.5115, 0.5004,
                0.5117, 0.4928, 0.4744, 0.4786, 0.4826, 0.4801, 0.4733, 0.508, 0.5217, 0.5294,
                0.5225, 0.4822, 0.515, 0.512, 0.5254, 0.4739, 0.5051, 0.5149, 0.5171, 0.4968,
                0.4747, 0.5061, 0.4839, 0.4932, 0.5121, 0.4715, 0.5278, 0.5215, 0.4718, 0.5247,
                0.5021, 0.5111, 0.5246, 0.5115, 0.4715, 0.5254, 0.4966, 0.5159, 0.5119, 0.4974,
                0.5138, 0.4875, 0.472, 0.481, 0.5133, 0.5204, 0.4873, 0.4755, 0.5027, 0.5245]

TERNARY = [0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0, 0, 0, 0.5, 0, 0, 0.5, 0, 0, 0, 0.5, 0.5, 0.5, 0, 0,
           0, 0.5, 0, 0, 0, 0.5, 0, 1, 0.5, 1, 1, 0.5, 0, 0, 0, 0.5]

# 100 binary trials, events at these positions (10 events: the METHODS.md example k = 10).
BINARY = [1.0 if i in (4, 17, 20, 38, 46, 49, 83, 88, 89, 98) else 0.0 for i in range(100)]

# 200 trials, mostly exactly 0, a few small positive values (a severity-like measure).
SPARSE = [0.0] * 200
for _i, _v in [(59, 0.239), (67, 0.207), (137, 0.092), (140, 0.26), (141, 0.392), (183, 0.051),
               (189, 0.231), (190, 0.327), (197, 0.105)]:
    SPARSE[_i] = _v

# 80 trials whose level jumps half-way (0.05 then 0.6): the running maximum over t rejects
# candidates that the final capital alone would keep, including the sample mean itself.
DRIFT = [0.05] * 40 + [0.6] * 40

DATASETS = {
    "beta": BETA,
    "low-variance": LOW_VARIANCE,
    "ternary": TERNARY,
    "binary": BINARY,
    "sparse": SPARSE,
    "drift": DRIFT,
}

# Betting only, one-sided upper bound at delta = 0.05: the METHODS.md section 7 example
# (binary, n = 1000, no events).
ZEROS = [0.0] * 1000
DELTAS = ["0.1", "0.05", "0.001"]


def exact(xs):
    return [mpf(float(x)) for x in xs]


def fmt(v):
    return mpmath.nstr(v, DIGITS, min_fixed=-mp.inf, max_fixed=mp.inf)


# ----------------------------------------------------------------------------------------
# Closed forms
# ----------------------------------------------------------------------------------------

def mean(xs):
    return mpmath.fsum(xs) / len(xs)


def clamp01(v):
    return min(max(v, mpf(0)), mpf(1))


def hoeffding(xs, d):
    r = mpmath.sqrt(mpmath.log(1 / d) / (2 * len(xs)))
    m = mean(xs)
    return clamp01(m - r), clamp01(m + r)


def kl(p, q):
    if p == 0:
        return -mpmath.log1p(-q)
    if p == 1:
        return -mpmath.log(q)
    return p * mpmath.log(p / q) + (1 - p) * mpmath.log((1 - p) / (1 - q))


def kl_inv_upper(p, eps):
    """sup{q in [p, 1] : kl(p || q) <= eps}, bisection keeping kl(p||lo) <= eps < kl(p||hi)."""
    if p >= 1:
        return mpf(1)
    lo, hi = p, mpf(1)
    for _ in range(400):
        mid = (lo + hi) / 2
        if kl(p, mid) <= eps:
            lo = mid
        else:
            hi = mid
    return hi


def kl_inv_lower(p, eps):
    """inf{q in [0, p] : kl(p || q) <= eps}."""
    if p <= 0:
        return mpf(0)
    lo, hi = mpf(0), p
    for _ in range(400):
        mid = (lo + hi) / 2
        if kl(p, mid) <= eps:
            hi = mid
        else:
            lo = mid
    return lo


def chernoff(xs, d):
    eps = mpmath.log(1 / d) / len(xs)
    m = mean(xs)
    return kl_inv_lower(m, eps), kl_inv_upper(m, eps)


def maurer_pontil_upper(xs, d):
    n = len(xs)
    if n < 2:
        return mpf(1)
    m = mean(xs)
    v = mpmath.fsum((x - m) ** 2 for x in xs) / (n - 1)
    l2 = mpmath.log(2 / d)
    return clamp01(m + mpmath.sqrt(2 * v * l2 / n) + 7 * l2 / (3 * (n - 1)))


def unexpected_bernstein_upper(xs, d):
    n = len(xs)
    L = mpmath.log(1 / d)
    k = max(1, int(mpmath.ceil(mpmath.log(mpmath.sqrt(n / L) / 2, 2))))
    m = mean(xs)
    m2 = mpmath.fsum(x * x for x in xs) / n
    best = None
    for i in range(k):
        eta = mpf(2) ** (-(i + 1))
        psi = -eta - mpmath.log1p(-eta)
        val = m + psi / eta * m2 + mpmath.log(k / d) / (eta * n)
        best = val if best is None else min(best, val)
    return clamp01(best)


def split_kl_upper(xs, d):
    n = len(xs)
    half = mpf(1) / 2
    plus = mpmath.fsum(max(mpf(0), x - half) for x in xs) / n
    minus = mpmath.fsum(max(mpf(0), half - x) for x in xs) / n
    eps = mpmath.log(2 / d) / n
    return clamp01(half + half * kl_inv_upper(2 * plus, eps) - half * kl_inv_lower(2 * minus, eps))


def reflected_lower(upper_fn, xs, d):
    return clamp01(1 - upper_fn([1 - x for x in xs], d))


# ----------------------------------------------------------------------------------------
# Betting
# ----------------------------------------------------------------------------------------

def bets_mp(xs, tuning):
    n = len(xs)
    s, q = mpf(1) / 2, mpf(1) / 4
    out = []
    for t, x in enumerate(xs, start=1):
        sigma2_prev = q / t
        out.append(mpmath.sqrt(2 * tuning / (n * sigma2_prev)))
        s += x
        q += (x - s / (t + 1)) ** 2
    return out


def bets_f64(xs_float, tuning_float):
    """The same formulas in IEEE doubles, in the order written: lambda_t = sqrt(scale t / q)
    with scale = 2 L / n and q = 1/4 + sum_{i<t} (x_i - mu_i)^2 (so that q / t = sigma^2_{t-1})."""
    n = len(xs_float)
    scale = 2.0 * tuning_float / n
    s, q = 0.5, 0.25
    out = []
    for t, x in enumerate(xs_float, start=1):
        out.append(mpf(math.sqrt(scale * t / q)))
        s += x
        d = x - s / (t + 1)
        q += d * d
    return out


def max_log_capital(xs, lam, m, side):
    """max over t = 0..n of ln K_t(m); K- for side 'upper', K+ for side 'lower'."""
    best = mpf(0)
    total = mpf(0)
    for x, l in zip(xs, lam):
        if side == "upper":
            b = l if m >= 1 else min(l, C / (1 - m))
            total += mpmath.log1p(b * (m - x))
        else:
            b = l if m <= 0 else min(l, C / m)
            total += mpmath.log1p(b * (x - m))
        if total > best:
            best = total
    return best


def betting_one_sided(xs, lam, thr, side, steps=200):
    rejected = lambda m: max_log_capital(xs, lam, m, side) >= thr
    if side == "upper":
        if not rejected(mpf(1)):
            return mpf(1)
        lo, hi = mpf(0), mpf(1)          # lo survives, hi rejected
        for _ in range(steps):
            mid = (lo + hi) / 2
            if rejected(mid):
                hi = mid
            else:
                lo = mid
        return hi
    if not rejected(mpf(0)):
        return mpf(0)
    lo, hi = mpf(0), mpf(1)              # lo rejected, hi survives
    for _ in range(steps):
        mid = (lo + hi) / 2
        if rejected(mid):
            lo = mid
        else:
            hi = mid
    return lo


def betting_hedged(xs, lam, alpha, steps=200):
    thr = mpmath.log(1 / alpha)

    def rejected(m):
        up = mpmath.log(THETA) + max_log_capital(xs, lam, m, "lower")
        dn = mpmath.log(1 - THETA) + max_log_capital(xs, lam, m, "upper")
        return max(up, dn) >= thr

    centre = mean(xs)
    if rejected(centre):
        # The interval does not contain the sample mean (the running maximum rejected it);
        # bisection from the mean would not apply, and no reference is written.
        return None
    # upper end
    if not rejected(mpf(1)):
        hi_end = mpf(1)
    else:
        lo, hi = centre, mpf(1)
        for _ in range(steps):
            mid = (lo + hi) / 2
            if rejected(mid):
                hi = mid
            else:
                lo = mid
        hi_end = hi
    if not rejected(mpf(0)):
        lo_end = mpf(0)
    else:
        lo, hi = mpf(0), centre
        for _ in range(steps):
            mid = (lo + hi) / 2
            if rejected(mid):
                lo = mid
            else:
                hi = mid
        lo_end = lo
    return lo_end, hi_end


# ----------------------------------------------------------------------------------------

def main():
    cases = []

    def add(dataset, delta, method, side, value, bets=None):
        case = {"dataset": dataset, "delta": delta, "method": method, "side": side,
                "value": fmt(value)}
        if bets is not None:
            case["bets"] = bets
        cases.append(case)

    for name, data in DATASETS.items():
        xs = exact(data)
        for ds in DELTAS:
            d = mpf(float(ds))
            lo, up = hoeffding(xs, d)
            add(name, ds, "hoeffding", "lower", lo)
            add(name, ds, "hoeffding", "upper", up)
            lo, up = chernoff(xs, d)
            add(name, ds, "chernoff-kl", "lower", lo)
            add(name, ds, "chernoff-kl", "upper", up)
            for method, fn in [("bernstein-empirical", maurer_pontil_upper),
                               ("bernstein-unexpected", unexpected_bernstein_upper),
                               ("split-kl", split_kl_upper)]:
                add(name, ds, method, "upper", fn(xs, d))
                add(name, ds, method, "lower", reflected_lower(fn, xs, d))
            # betting, one-sided: tuning and threshold ln(1/alpha)
            thr = mpmath.log(1 / d)
            floats = [float(x) for x in data]
            tuning_f = -math.log(float(ds))
            for label, lam in [("mp", bets_mp(xs, thr)), ("f64", bets_f64(floats, tuning_f))]:
                add(name, ds, "betting", "upper", betting_one_sided(xs, lam, thr, "upper"), label)
                add(name, ds, "betting", "lower", betting_one_sided(xs, lam, thr, "lower"), label)
            # betting, two-sided hedged: tuning ln(2/alpha), threshold ln(1/alpha)
            tuning2 = mpmath.log(2 / d)
            tuning2_f = math.log(2.0) - math.log(float(ds))
            for label, lam in [("mp", bets_mp(xs, tuning2)), ("f64", bets_f64(floats, tuning2_f))]:
                ends = betting_hedged(xs, lam, d)
                if ends is not None:
                    add(name, ds, "betting", "interval-lower", ends[0], label)
                    add(name, ds, "betting", "interval-upper", ends[1], label)
        print("done", name, flush=True)

    xs = exact(ZEROS)
    thr = mpmath.log(1 / mpf(0.05))
    for label, lam in [("mp", bets_mp(xs, thr)), ("f64", bets_f64(ZEROS, -math.log(0.05)))]:
        add("zeros", "0.05", "betting", "upper", betting_one_sided(xs, lam, thr, "upper"), label)
    print("done zeros", flush=True)

    out = {
        "source": "mpmath %s, mp.dps = %d, tests/reference/bounded_reference.py"
                  % (mpmath.__version__, mp.dps),
        "truncation": "0.5",
        "datasets": {k: [repr(float(x)) for x in v]
                     for k, v in list(DATASETS.items()) + [("zeros", ZEROS)]},
        "cases": cases,
    }
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "bounded_bounds.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote %d cases" % len(cases))


if __name__ == "__main__":
    main()
