#!/usr/bin/env python3
"""High-precision reference values for the anytime-valid methods and the m-dependent Hoeffding
bound (unit scale, values in [0, 1]).

Regenerate the fixture (from the crate root; takes a few minutes):

    pip install mpmath
    python3 tests/reference/sequence_reference.py

This writes tests/reference/sequence_bounds.json. Every value is computed with mpmath at
mp.dps = 50 straight from the formulas (METHODS.md sections 7, 8, 9a and 10), independently of
the Rust code. The bounded datasets are those of bounded_reference.py.

Methods:

* betting-sequence: Waudby-Smith & Ramdas, predictable plug-in bets with the confidence-sequence
  tuning lambda_t = sqrt(2 L / (sigma^2_{t-1} t ln(1 + t))), L = ln(1/alpha) one-sided and
  ln(2/alpha) for the hedged interval, truncated at c/(1-m) or c/m, c = 1/2; the running maximum
  of the log-capital over every t <= n is compared with the threshold and the edge of the
  rejected set is found by bisection in m (200 steps), returning the rejected end. As in
  bounded_reference.py, "mp" bets are computed in 50-digit arithmetic and "f64" bets in IEEE
  doubles in the order the formulas are written (the library's bet sequence). "prefix" cases are
  the bound on the first t values (the value of the running bound, or path, at t).
* eb-sequence: WSR predictable plug-in empirical Bernstein, one-sided,
  U_t = (sum lambda_i x_i + L + sum (x_i - mu_{i-1})^2 psi(lambda_i)) / sum lambda_i,
  lambda_i = min(lambda_dot_i, 1/2), psi(l) = -ln(1 - l) - l, L = ln(1/alpha); the running
  minimum over t; the lower bound is the same for 1 - x (in exact arithmetic), read back as 1 - U.
* beta-binomial-mixture (uniform prior, S events in t trials, F = t - S):
    - two-sided: ln M = ln B(1 + S, 1 + F) - S ln p - F ln(1 - p), with log-gammas at 50 digits;
      both ends solved directly (the lower end on (0, S/t), not by reflection);
    - one-sided: M- = int_0^p q^S (1 - q)^F dq / (p^(S+1) (1 - p)^F). The integral is computed
      as B(S+1, F+1) (1 - sum_{j<=S} C(t+1, j) p^j (1-p)^(t+1-j)) (a finite binomial sum) for
      S <= 2000, and by tanh-sinh quadrature of exp(S ln u + F ln((1 - p u)/(1 - p))) over u in
      [0, 1] (q = p u) with break points around the peak u* = (S/t)/p otherwise; S = 0 uses
      the closed form of METHODS.md section 8. The two ways are checked against each other
      below. The lower bound is the reflection 1 - U(F, S).
  Roots by Illinois false position to 1e-40 relative; the METHODS.md section 8 table is checked
  before anything is written.
* hoeffding-m-dependent: Janson (2004), mean +- sqrt((m + 1) ln(1/delta) / (2 n)).

Values are written as decimal strings with 25 significant digits.
"""
import json
import math
import os
import sys

try:
    import mpmath
    from mpmath import mp, mpf
except ImportError:
    sys.stderr.write("sequence_reference.py needs mpmath (pip install mpmath)\n")
    sys.exit(77)

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import bounded_reference as br  # noqa: E402  (datasets and the capital of the betting bound)

mp.dps = 50
DIGITS = 25
C = br.C


def fmt(v):
    return mpmath.nstr(v, DIGITS, min_fixed=-mp.inf, max_fixed=mp.inf)


# ----------------------------------------------------------------------------------------
# Betting confidence sequence
# ----------------------------------------------------------------------------------------

def cs_bets_mp(xs, tuning):
    s, q = mpf(1) / 2, mpf(1) / 4
    out = []
    for t, x in enumerate(xs, start=1):
        # q = t * sigma^2_{t-1}
        out.append(mpmath.sqrt(2 * tuning / (q * mpmath.log1p(t))))
        s += x
        q += (x - s / (t + 1)) ** 2
    return out


def cs_bets_f64(xs_float, tuning_float):
    scale = 2.0 * tuning_float
    s, q = 0.5, 0.25
    out = []
    for t, x in enumerate(xs_float, start=1):
        out.append(mpf(math.sqrt(scale / (q * math.log1p(t)))))
        s += x
        d = x - s / (t + 1)
        q += d * d
    return out


# ----------------------------------------------------------------------------------------
# Empirical-Bernstein confidence sequence
# ----------------------------------------------------------------------------------------

def eb_sequence(xs, d):
    """Running (lower, upper) after every t, as lists."""
    L = mpmath.log(1 / d)
    s, q = mpf(1) / 2, mpf(1) / 4
    a = b = w = mpf(0)
    best_u, best_l = mpf(1), mpf(0)
    ups, los = [], []
    for t, x in enumerate(xs, start=1):
        lam = min(mpmath.sqrt(2 * L / (q * mpmath.log1p(t))), C)
        mu_prev = s / t
        psi = -mpmath.log1p(-lam) - lam
        a += lam * x
        b += (x - mu_prev) ** 2 * psi
        w += lam
        s += x
        q += (x - s / (t + 1)) ** 2
        best_u = min(best_u, (a + L + b) / w)
        best_l = max(best_l, (a - L - b) / w)
        ups.append(best_u)
        los.append(best_l)
    return los, ups


# ----------------------------------------------------------------------------------------
# Beta-binomial mixture
# ----------------------------------------------------------------------------------------

def ln_beta(a, b):
    return mpmath.loggamma(a) + mpmath.loggamma(b) - mpmath.loggamma(a + b)


def ln_m_two(S, F, p):
    return ln_beta(1 + S, 1 + F) - S * mpmath.log(p) - F * mpmath.log1p(-p)


def ln_integral_sum(S, F, p):
    """ln int_0^p q^S (1-q)^F dq = ln B(S+1, F+1) + ln P(Bin(t+1, p) >= S+1)."""
    t = S + F
    lower = mpmath.fsum(mpmath.binomial(t + 1, j) * p ** j * (1 - p) ** (t + 1 - j)
                        for j in range(S + 1))
    return ln_beta(S + 1, F + 1) + mpmath.log(1 - lower)


def ln_integral_quad(S, F, p):
    """The same integral as p^(S+1) int_0^1 exp(g(u)) du, g(u) = S ln u + F ln(1 - p u)
    (q = p u)."""
    def g(u):
        return S * mpmath.log(u) + F * mpmath.log1p(-p * u)
    u_star = min(mpf(S) / (p * (S + F)), mpf(1))
    curv = S / u_star ** 2 + F * p ** 2 / (1 - p * u_star) ** 2
    w = 1 / mpmath.sqrt(curv)
    peak = g(u_star)
    pts = {mpf(0), mpf(1), u_star}
    for k in (1, 4, 12, 40, 120):
        for sgn in (-1, 1):
            v = u_star + sgn * k * w
            if 0 < v < 1:
                pts.add(v)
    pts = sorted(pts)
    val = mpmath.quad(lambda u: mpmath.exp(g(u) - peak), pts)
    return mpmath.log(p) + S * mpmath.log(p) + peak + mpmath.log(val)


def ln_m_one(S, F, p):
    t = S + F
    if S == 0:
        # (1 - (1 - p)^(t+1)) / ((t + 1) p (1 - p)^t)
        return (mpmath.log(-mpmath.expm1((t + 1) * mpmath.log1p(-p)))
                - mpmath.log((t + 1) * p) - t * mpmath.log1p(-p))
    if S <= 2000:
        li = ln_integral_sum(S, F, p)
    else:
        li = ln_integral_quad(S, F, p)
    return li - (S + 1) * mpmath.log(p) - F * mpmath.log1p(-p)


def illinois(f, a, fa, b, fb, rel=mpf(10) ** -40, maxit=500):
    """Root of f in (a, b) with fa < 0 <= fb (either order); returns the end with f >= 0."""
    side = 0
    for _ in range(maxit):
        if abs(b - a) <= rel * max(abs(a), abs(b)):
            break
        c = b - fb * (b - a) / (fb - fa)
        if not (min(a, b) < c < max(a, b)):
            c = (a + b) / 2
        fc = f(c)
        if fc >= 0:
            b, fb = c, fc
            if side == 1:
                fa /= 2
            side = 1
        else:
            a, fa = c, fc
            if side == -1:
                fb /= 2
            side = -1
    return b


def mixture_upper(ln_m, S, t, d):
    """sup {p > S/t : ln M(p) < ln(1/d)} (the rejected end of the bracket)."""
    F = t - S
    if F == 0:
        return mpf(1)
    L = mpmath.log(1 / d)
    f = lambda p: ln_m(S, F, p) - L
    lo = mpf(S) / t
    r = mpmath.sqrt((L + 1) * max(lo, mpf(1) / t) / t) + (L + 1) / t
    hi = min(lo + r, (1 + lo) / 2)
    while f(hi) < 0:
        r *= 2
        hi = min(lo + r, (1 + hi) / 2)
    flo = f(lo) if S > 0 else mpf(-1)  # at S = 0, M -> 1/(S+1) <= 1 as p -> 0
    return illinois(f, lo, flo, hi, f(hi))


def mixture_lower_two(S, t, d):
    """inf {p < S/t : ln M(p) < ln(1/d)}, two-sided mixture, solved on (0, S/t) directly."""
    F = t - S
    if S == 0:
        return mpf(0)
    L = mpmath.log(1 / d)
    f = lambda p: ln_m_two(S, F, p) - L
    hi = mpf(S) / t
    r = mpmath.sqrt((L + 1) * hi / t) + (L + 1) / t
    lo = max(hi - r, hi / 2)
    while f(lo) < 0:
        r *= 2
        lo = max(hi - r, lo / 2)
    return illinois(f, hi, f(hi), lo, f(lo))


def check_integral_forms():
    for S, F, p in [(3, 400, mpf("0.03")), (10, 990, mpf("0.02")), (150, 2000, mpf("0.09")),
                    (600, 9400, mpf("0.072"))]:
        a = ln_integral_sum(S, F, p)
        b = ln_integral_quad(S, F, p)
        assert abs(a - b) < mpf(10) ** -35 * (1 + abs(a)), (S, F, a, b)


def check_methods_table():
    # METHODS.md section 8, "Examples (computed, alpha = 0.05)": two-sided Beta(1,1) and
    # one-sided truncated uniform, 12 decimals.
    table = [(0, 1000, "0.009855599157", "0.004502093744"),
             (10, 1000, "0.027941747444", "0.021664418420"),
             (0, 100, "0.073284373403", "0.043978680326"),
             (5, 100, "0.160258873767", "0.134389372975")]
    for S, t, two, one in table:
        u2 = mixture_upper(ln_m_two, S, t, mpf("0.05"))
        u1 = mixture_upper(ln_m_one, S, t, mpf("0.05"))
        assert abs(u2 - mpf(two)) < 6e-13, (S, t, u2)
        assert abs(u1 - mpf(one)) < 6e-13, (S, t, u1)


# ----------------------------------------------------------------------------------------

# Binary sequences for the beta-binomial path: bounded_reference.py's 100 trials with 10
# events, and 1000 trials with an event wherever (7919 i + 13) mod 1000 < 30 (30 events).
BINARY_LONG = [1.0 if (7919 * i + 13) % 1000 < 30 else 0.0 for i in range(1000)]

COUNT_CASES = [
    # (events, trials, delta): the METHODS.md section 8 table, then small n, small delta and
    # n up to 1e12.
    (0, 1000, "0.05"), (10, 1000, "0.05"), (0, 100, "0.05"), (5, 100, "0.05"),
    (0, 1, "0.5"), (1, 1, "0.05"), (1, 2, "0.3"), (3, 7, "0.1"),
    (3, 1000, "1e-12"), (37, 5000, "1e-9"), (2500, 5000, "0.01"),
    (0, 10 ** 12, "1e-12"), (5, 10 ** 12, "1e-12"), (10 ** 6, 10 ** 12, "0.05"),
    (5 * 10 ** 11, 10 ** 12, "1e-6"), (10 ** 12 - 3, 10 ** 12, "1e-12"),
    (123456, 10 ** 9, "1e-3"),
]


def main():
    check_integral_forms()
    check_methods_table()
    print("checks passed", flush=True)
    cases = []

    def add(**kw):
        kw["value"] = fmt(kw["value"])
        cases.append(kw)

    datasets = dict(br.DATASETS)
    datasets["binary-long"] = BINARY_LONG

    # betting-sequence and eb-sequence on the bounded datasets
    for name, data in br.DATASETS.items():
        xs = br.exact(data)
        floats = [float(x) for x in data]
        n = len(xs)
        prefixes = sorted({max(1, n // 4), n // 2, n})
        for ds in ["0.1", "0.05", "0.001"]:
            d = mpf(float(ds))
            thr = mpmath.log(1 / d)
            tuning_f = -math.log(float(ds))
            for label, lam in [("mp", cs_bets_mp(xs, thr)),
                               ("f64", cs_bets_f64(floats, tuning_f))]:
                for side in ("upper", "lower"):
                    for t in prefixes:
                        v = br.betting_one_sided(xs[:t], lam[:t], thr, side)
                        add(method="betting-sequence", side=side, dataset=name, delta=ds,
                            bets=label, prefix=t, value=v)
            tuning2 = mpmath.log(2 / d)
            tuning2_f = math.log(2.0) - math.log(float(ds))
            for label, lam in [("mp", cs_bets_mp(xs, tuning2)),
                               ("f64", cs_bets_f64(floats, tuning2_f))]:
                for t in prefixes:
                    ends = br.betting_hedged(xs[:t], lam[:t], d)
                    if ends is not None:
                        add(method="betting-sequence", side="interval-lower", dataset=name,
                            delta=ds, bets=label, prefix=t, value=ends[0])
                        add(method="betting-sequence", side="interval-upper", dataset=name,
                            delta=ds, bets=label, prefix=t, value=ends[1])
        for ds in ["0.1", "0.05", "0.001", "1e-9"]:
            d = mpf(float(ds))
            los, ups = eb_sequence(xs, d)
            for t in prefixes:
                add(method="eb-sequence", side="upper", dataset=name, delta=ds, prefix=t,
                    value=br.clamp01(ups[t - 1]))
                add(method="eb-sequence", side="lower", dataset=name, delta=ds, prefix=t,
                    value=br.clamp01(los[t - 1]))
        print("done", name, flush=True)

    # betting-sequence on 1000 zeros (METHODS.md section 7 example), f64 bets.
    zeros = br.ZEROS
    lam = cs_bets_f64(zeros, -math.log(0.05))
    add(method="betting-sequence", side="upper", dataset="zeros", delta="0.05", bets="f64",
        prefix=len(zeros),
        value=br.betting_one_sided(br.exact(zeros), lam, mpmath.log(20), "upper"))
    datasets["zeros"] = zeros

    # beta-binomial mixture from counts
    for S, t, ds in COUNT_CASES:
        d = mpf(float(ds))
        F = t - S
        add(method="beta-binomial-mixture", side="upper", events=str(S), trials=str(t),
            delta=ds, value=mixture_upper(ln_m_one, S, t, d))
        add(method="beta-binomial-mixture", side="lower", events=str(S), trials=str(t),
            delta=ds, value=1 - mixture_upper(ln_m_one, F, t, d))
        add(method="beta-binomial-mixture", side="interval-upper", events=str(S),
            trials=str(t), delta=ds, value=mixture_upper(ln_m_two, S, t, d))
        add(method="beta-binomial-mixture", side="interval-lower", events=str(S),
            trials=str(t), delta=ds, value=mixture_lower_two(S, t, d))
        print("done counts", S, t, ds, flush=True)

    # beta-binomial mixture along a stream: running minimum / maximum over every s <= t.
    for name, data, one_sided, checkpoints in [
            ("binary", br.BINARY, True, [1, 10, 20, 50, 100]),
            ("binary-long", BINARY_LONG, False, [10, 100, 300, 1000])]:
        ds = "0.05"
        d = mpf(ds)
        kinds = [("", ln_m_two)] + ([("one", ln_m_one)] if one_sided else [])
        for kind, ln_m in kinds:
            best_u, best_l = mpf(1), mpf(0)
            S = 0
            for s, x in enumerate(data, start=1):
                S += int(x)
                u = mixture_upper(ln_m, S, s, d)
                if kind == "one":
                    lo = 1 - mixture_upper(ln_m, s - S, s, d)
                else:
                    lo = mixture_lower_two(S, s, d)
                best_u = min(best_u, u)
                best_l = max(best_l, lo)
                if s in checkpoints:
                    up_side, lo_side = (("upper", "lower") if kind == "one"
                                        else ("interval-upper", "interval-lower"))
                    add(method="beta-binomial-mixture", side="path-" + up_side, dataset=name,
                        delta=ds, prefix=s, value=best_u)
                    add(method="beta-binomial-mixture", side="path-" + lo_side, dataset=name,
                        delta=ds, prefix=s, value=best_l)
        print("done path", name, flush=True)

    # Hoeffding for m-dependent trials (Janson 2004); the first is the METHODS.md section 10
    # example (0.096540919130).
    for mean, n, m, ds in [("0.01", 1000, 4, "0.05"), ("0.3", 1000, 0, "0.05"),
                           ("0.25", 10 ** 6, 9, "1e-9"), ("0.9", 50, 3, "0.1"),
                           ("0.002", 10 ** 12, 100, "1e-12")]:
        r = mpmath.sqrt((m + 1) * mpmath.log(1 / mpf(float(ds))) / (2 * n))
        mu = mpf(float(mean))
        add(method="hoeffding-m-dependent", side="upper", mean=mean, trials=str(n), m=str(m),
            delta=ds, value=br.clamp01(mu + r))
        add(method="hoeffding-m-dependent", side="lower", mean=mean, trials=str(n), m=str(m),
            delta=ds, value=br.clamp01(mu - r))

    out = {
        "source": "mpmath %s, mp.dps = %d, tests/reference/sequence_reference.py"
                  % (mpmath.__version__, mp.dps),
        "truncation": "0.5",
        "datasets": {k: [repr(float(x)) for x in v] for k, v in datasets.items()},
        "cases": cases,
    }
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "sequence_bounds.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote %d cases" % len(cases))


if __name__ == "__main__":
    main()
