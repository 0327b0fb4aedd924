#!/usr/bin/env python3
"""High-precision reference values for the binary-data bounds (exact, kl, Hoeffding).

Regenerate the fixtures (from the crate root; takes a few minutes on 2 cores):

    pip install mpmath scipy
    python3 tests/reference/binomial_reference.py

This writes tests/reference/binary_bounds.json (the bounds) and
tests/reference/special_values.json (log-gamma, log-beta, log binomial coefficients and
log binomial tails at a few extreme arguments).

Everything is computed with mpmath at mp.dps = 60, independently of the Rust code:

* Clopper-Pearson upper bound: the p with P(Bin(n, p) <= k) = delta; lower bound: the p
  with P(Bin(n, p) >= k) = delta (solved directly, not by reflection).
  The binomial tail is an exact finite sum of binomial probabilities when the tail has
  at most SUM_MAX terms, and otherwise the integral of the Beta density (mpmath.quad,
  tanh-sinh on subintervals a fraction of a standard deviation wide) divided by the Beta
  function from mpmath.loggamma. Both methods are cross-checked against each other and
  against mpmath.betainc at start-up.
  Roots: Newton's method at 60 digits (derivative = Beta density), started from SciPy's
  double-precision beta quantile, then certified by a sign change of the equation across
  root * (1 -+ 1e-30).
* kl inverse: bisection at 60 digits (in ln q or ln(1 - q) near the ends), 400 steps.
* Hoeffding: p_hat +- sqrt(ln(1/delta) / (2 n)), clamped to [0, 1].

Values are written as decimal strings with 25 significant digits. Every input given as
a decimal string (delta, p, x) is evaluated at the double nearest to it, which is the value
the Rust tests parse.
"""
import json
import os
from multiprocessing import Pool

import mpmath
from mpmath import mp, mpf

mp.dps = 60
SUM_MAX = 4000
DIGITS = 25


# ----------------------------------------------------------------------------------------
# Binomial tails
# ----------------------------------------------------------------------------------------

def ln_pmf(j, n, p):
    return (mpmath.loggamma(n + 1) - mpmath.loggamma(j + 1) - mpmath.loggamma(n - j + 1)
            + j * mpmath.log(p) + (n - j) * mpmath.log1p(-p))


def tail_sum(j0, n, p, downwards):
    """sum of P(Bin(n, p) = j) for j = j0, j0 -+ 1, ... (to 0 or to n), where the terms
    decrease away from j0. Stops once a term is below 1e-70 of the sum (the rest is a
    geometric series with a ratio that only shrinks). None if SUM_MAX terms do not do."""
    t = mpmath.exp(ln_pmf(j0, n, p))
    s = t
    j = j0
    odds = p / (1 - p)
    for _ in range(SUM_MAX):
        if downwards:
            if j == 0:
                return s
            ratio = j / ((n - j + 1) * odds)
            j -= 1
        else:
            if j == n:
                return s
            ratio = (n - j) * odds / (j + 1)
            j += 1
        t *= ratio
        s += t
        if t < s * mpf(10) ** -70 and ratio < 1:
            return s
    return None


def ln_beta_fn(a, b):
    return mpmath.loggamma(a) + mpmath.loggamma(b) - mpmath.loggamma(a + b)


def beta_tail_quad(a, b, x, upper):
    """int_x^1 (upper) or int_0^x (lower) of the Beta(a, b) density, by quadrature."""
    lnb = ln_beta_fn(a, b)

    def g(t):  # log density
        return (a - 1) * mpmath.log(t) + (b - 1) * mpmath.log1p(-t) - lnb

    sd = mpmath.sqrt(a * b / ((a + b) ** 2 * (a + b + 1)))
    g0 = g(x)
    slope = abs((a - 1) / x - (b - 1) / (1 - x))
    h = min(sd / 2, 3 / slope) if slope > 0 else sd / 2
    pts = [x]
    t = x
    i = 0
    while True:
        step = h * (1 + mpf(i) / 3)
        nt = t + step if upper else t - step
        if upper and nt >= 1:
            pts.append(mpf(1))
            break
        if (not upper) and nt <= 0:
            pts.append(mpf(0))
            break
        pts.append(nt)
        t = nt
        i += 1
        if g(t) < g0 - 170:
            break
    # Integrate each subinterval on its own (relative to the density at x) and check its
    # error estimate: a single quad call over the whole list of points can stop early.
    f = lambda t: mpmath.exp(g(t) - g0)
    total = mpf(0)
    errs = mpf(0)
    for lo, hi in zip(pts[:-1], pts[1:]):
        lo, hi = (lo, hi) if lo < hi else (hi, lo)
        v, e = mpmath.quad(f, [lo, hi], error=True)
        total += v
        errs += e
    if not errs <= total * mpf(10) ** -45:
        raise RuntimeError("quadrature did not converge: %s" % mpmath.nstr(errs / total, 5))
    return total * mpmath.exp(g0)


def cdf(k, n, p):
    """P(Bin(n, p) <= k), at 60 digits: the smaller tail is summed (or integrated) and
    the larger one is its complement."""
    if k >= n:
        return mpf(1)
    a, b = k + 1, n - k
    if a <= (n + 1) * p:  # k at or below the mode: the lower tail is the smaller one
        small = tail_sum(k, n, p, True)
        if small is None:
            small = beta_tail_quad(a, b, p, True)
        return small
    small = tail_sum(k + 1, n, p, False)
    if small is None:
        small = beta_tail_quad(a, b, p, False)
    return 1 - small


def sf(k, n, p):
    """P(Bin(n, p) >= k), at 60 digits."""
    if k <= 0:
        return mpf(1)
    return 1 - cdf(k - 1, n, p) if k <= (n + 1) * p else sf_small(k, n, p)


def sf_small(k, n, p):
    small = tail_sum(k, n, p, False)
    if small is None:
        # P(K >= k) = lower tail of Beta(k, n - k + 1) at p
        small = beta_tail_quad(k, n - k + 1, p, False)
    return small


def beta_density(a, b, x):
    return mpmath.exp((a - 1) * mpmath.log(x) + (b - 1) * mpmath.log1p(-x) - ln_beta_fn(a, b))


# ----------------------------------------------------------------------------------------
# Clopper-Pearson roots
# ----------------------------------------------------------------------------------------

def solve(fun_and_slope, start, lo, hi, increasing):
    """Root of a monotone function on (lo, hi) by safeguarded Newton; returns mpf.

    fun_and_slope(x) returns (f(x), f'(x)). Stops once the Newton step is below 1e-35
    relative (the tails are good to about 40 digits at n = 1e15).
    """
    x = mpf(start)
    if not (lo < x < hi):
        x = (lo + hi) / 2
    for _ in range(300):
        fx, d = fun_and_slope(x)
        if (fx > 0) == increasing:
            hi = x
        else:
            lo = x
        nx = x - fx / d if d != 0 else (lo + hi) / 2
        if not (lo < nx < hi):
            if lo > 0 and hi / lo < 4:
                nx = (lo + hi) / 2
            else:
                nx = mpmath.sqrt(lo * hi) if lo > 0 else hi / 16
        if abs(nx - x) <= mpf(10) ** (-35) * abs(x):
            return nx
        x = nx
    raise RuntimeError("no convergence")


def certify(fun, x, increasing):
    eps = mpf(10) ** -30
    a, b = fun(x * (1 - eps)), fun(x * (1 + eps))
    ok = (a < 0 < b) if increasing else (a > 0 > b)
    if not ok:
        raise RuntimeError("root not certified at %s" % mpmath.nstr(x, 30))


def exact_upper(k, n, delta):
    if k == n:
        return mpf(1)
    from scipy.stats import beta as sbeta
    ld = mpmath.log(delta)
    fun = lambda p: mpmath.log(cdf(k, n, p)) - ld

    def both(p):
        c = cdf(k, n, p)
        return mpmath.log(c) - ld, -beta_density(k + 1, n - k, p) / c

    start = float(sbeta.isf(float(delta), k + 1, n - k))
    x = solve(both, start, mpf(0), mpf(1), False)
    certify(fun, x, False)
    return x


def exact_lower(k, n, delta):
    if k == 0:
        return mpf(0)
    from scipy.stats import beta as sbeta
    ld = mpmath.log(delta)
    fun = lambda p: mpmath.log(sf(k, n, p)) - ld

    def both(p):
        s = sf(k, n, p)
        return mpmath.log(s) - ld, beta_density(k, n - k + 1, p) / s

    start = float(sbeta.ppf(float(delta), k, n - k + 1))
    x = solve(both, start, mpf(0), mpf(1), True)
    certify(fun, x, True)
    return x


# ----------------------------------------------------------------------------------------
# kl inverse and Hoeffding
# ----------------------------------------------------------------------------------------

def kl(p, q, one_minus_q):
    r = mpf(0)
    if p > 0:
        r += p * mpmath.log(p / q)
    if p < 1:
        r += (1 - p) * mpmath.log((1 - p) / one_minus_q)
    return r


def kl_upper(k, n, delta):
    if k == n:
        return mpf(1)
    ph = mpf(k) / n
    eps = -mpmath.log(delta) / n
    # bisection on s = ln(1 - q), q in (ph, 1): kl increasing in q
    lo, hi = mpmath.log1p(-ph), mpf(-3000)
    for _ in range(400):
        mid = (lo + hi) / 2
        if kl(ph, -mpmath.expm1(mid), mpmath.exp(mid)) > eps:
            hi = mid
        else:
            lo = mid
    return -mpmath.expm1((lo + hi) / 2)


def kl_lower(k, n, delta):
    if k == 0:
        return mpf(0)
    ph = mpf(k) / n
    eps = -mpmath.log(delta) / n
    # bisection on s = ln q, q in (0, ph): kl decreasing in q
    lo, hi = mpf(-3000), mpmath.log(ph)
    for _ in range(400):
        mid = (lo + hi) / 2
        if kl(ph, mpmath.exp(mid), -mpmath.expm1(mid)) > eps:
            lo = mid
        else:
            hi = mid
    return mpmath.exp((lo + hi) / 2)


def hoeffding(k, n, delta):
    r = mpmath.sqrt(-mpmath.log(delta) / (2 * n))
    ph = mpf(k) / n
    return min(mpf(1), ph + r), max(mpf(0), ph - r)


# ----------------------------------------------------------------------------------------
# Cases
# ----------------------------------------------------------------------------------------

DELTAS = ["1e-15", "1e-10", "1e-6", "0.001", "0.025", "0.05", "0.1", "0.3", "0.5", "0.7", "0.95"]


def case_list():
    ns = [1, 2, 3, 5, 10, 20, 50, 100, 1000, 10**4, 10**5, 10**6, 10**7, 10**9, 10**12, 10**15]
    cases = []
    seen = set()
    rot = 0
    for n in ns:
        ks = {0, 1, 2, 5, n // 10, n // 2, n - 1, n, n - 2, (3 * n) // 4, n // 3 + 1}
        if n >= 1000:
            ks |= {20, 100, 1000, n - 5}
        ks = sorted(k for k in ks if 0 <= k <= n)
        for k in ks:
            chosen = {"1e-15", "0.05"}
            chosen.add(DELTAS[rot % len(DELTAS)])
            chosen.add(DELTAS[(rot + 4) % len(DELTAS)])
            rot += 1
            for d in sorted(chosen, key=float):
                key = (k, n, d)
                if key not in seen:
                    seen.add(key)
                    cases.append(key)
    return cases


def fmt(x):
    if x == 0:
        return "0"
    if x == 1:
        return "1"
    return mpmath.nstr(x, DIGITS, min_fixed=-1, max_fixed=1)


def compute(case):
    k, n, d = case
    mp.dps = 60
    # Evaluate at the double nearest to the decimal string: the value the Rust test parses.
    delta = mpf(float(d))
    hu, hl = hoeffding(k, n, delta)
    return {
        "k": k,
        "n": n,
        "delta": d,
        "exact_upper": fmt(exact_upper(k, n, delta)),
        "exact_lower": fmt(exact_lower(k, n, delta)),
        "kl_upper": fmt(kl_upper(k, n, delta)),
        "kl_lower": fmt(kl_lower(k, n, delta)),
        "hoeffding_upper": fmt(hu),
        "hoeffding_lower": fmt(hl),
    }


def self_check():
    # The three tail methods must agree where they overlap.
    for (k, n, p) in [(30, 200, mpf("0.2")), (300, 2000, mpf("0.17")), (10, 60, mpf("0.1")),
                      (500, 3000, mpf("0.2")), (40, 1000, mpf("0.03"))]:
        s = cdf(k, n, p)
        q = beta_tail_quad(k + 1, n - k, p, True) if p >= mpf(k + 1) / (n + 1) else 1 - beta_tail_quad(k + 1, n - k, p, False)
        bi = mpmath.betainc(k + 1, n - k, p, 1, regularized=True)
        direct = mpmath.fsum(mpmath.binomial(n, j) * p ** j * (1 - p) ** (n - j) for j in range(k + 1))
        for other in (q, bi, direct):
            if abs(other / s - 1) > mpf(10) ** -45:
                raise RuntimeError("tail methods disagree at %s: %s %s" % ((k, n, p), s, other))


def special_values():
    """Log special functions and log binomial tails at extreme arguments."""
    out = {"ln_gamma": [], "ln_beta": [], "ln_choose": [], "ln_binom": []}
    for x in ["0.5", "1.5", "3.7", "10", "123.456", "1000000.5", "1e15", "1000000000000000.25",
              "9007199254740992"]:
        out["ln_gamma"].append({"x": x, "value": fmt(mpmath.loggamma(mpf(float(x))))})
    for a, b in [("0.5", "0.5"), ("3", "4.5"), ("10", "1e15"), ("5e14", "5e14"), ("2.5", "1e9"),
                 ("12345.5", "678.25"), ("1e-3", "2")]:
        out["ln_beta"].append({"a": a, "b": b, "value": fmt(ln_beta_fn(mpf(float(a)), mpf(float(b))))})
    for n, k in [(100, 50), (10**12, 5), (10**15, 1), (10**15, 5 * 10**14), (10**9, 1000),
                 (61, 30), (2**53, 3)]:
        v = mpmath.loggamma(n + 1) - mpmath.loggamma(k + 1) - mpmath.loggamma(n - k + 1)
        out["ln_choose"].append({"n": n, "k": k, "value": fmt(v)})
    # (k, n, p): ln P(K = k), ln P(K <= k), ln P(K > k)
    for k, n, p in [(5, 10**12, "1e-11"), (5, 10**12, "1e-9"), (0, 10**15, "3e-14"), (3, 20, "0.9"),
                    (10**14, 10**15, "0.1000001"), (5 * 10**14, 10**15, "0.49999"),
                    (5 * 10**14, 10**15, "0.5000003"), (40, 100, "0.3"), (700, 1000, "0.6"),
                    (999, 1000, "0.9999"), (1, 2, "0.5"), (2000, 10**6, "0.0015"),
                    (10**6, 10**7, "0.11"), (50, 10**9, "1e-7")]:
        pm = mpf(float(p))
        out["ln_binom"].append({
            "k": k, "n": n, "p": p,
            "ln_pmf": fmt(ln_pmf(k, n, pm)),
            "ln_cdf": fmt(mpmath.log(cdf(k, n, pm))),
            "ln_sf": fmt(mpmath.log(sf(k + 1, n, pm))),
        })
    return out


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    self_check()
    source = ("mpmath %s, mp.dps = 60 (exact sums / tanh-sinh quadrature, Newton roots "
              "certified by sign change; kl inverse by bisection)" % mpmath.__version__)
    special = special_values()
    special["source"] = source
    special["generator"] = "tests/reference/binomial_reference.py"
    with open(os.path.join(here, "special_values.json"), "w") as f:
        json.dump(special, f, indent=0)
        f.write("\n")
    cases = case_list()
    with Pool(2) as pool:
        rows = pool.map(compute, cases, chunksize=1)
    out = {"source": source, "generator": "tests/reference/binomial_reference.py", "digits": DIGITS, "cases": rows}
    with open(os.path.join(here, "binary_bounds.json"), "w") as f:
        json.dump(out, f, indent=0)
        f.write("\n")


if __name__ == "__main__":
    main()
