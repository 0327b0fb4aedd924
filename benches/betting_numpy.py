#!/usr/bin/env python3
"""numpy counterpart of benches/betting.rs: the one-sided betting upper bound at delta = 0.05 on
the same 10,000,000 observations.

The observations: SplitMix64 with seed 0x5EED0002, observation i from output i:
u = (r >> 11) * 2^-53 and x = u * u (see benches/common/observations.rs), vectorised below.

The bound is computed from the formulas of METHODS.md section 7 with whole-array operations:
plug-in bets lambda_t = sqrt(2 ln(1/delta) t / (n q_{t-1})), with q = 1/4 + running sum of
(x_i - mu_i)^2 and mu_i = (1/2 + running sum of x) / (i + 1); log-capital
cumsum(log1p(min(lambda, c/(1-m)) (m - x))) with c = 1/2, its maximum over t, and the same
root-finder as the library (first guess from the variance, bracket, false position with the
Anderson-Bjorck rescaling, relative width 2e-15). It leaves out the library's rounding margin
on the log-capital (a worst-case bound, ~4e-9 in ln K at this n, which moves the root up by
~2e-13) and sums the log-capital without compensation, so the two results differ by ~6e-13
relative and the noisier numpy sum costs the root-finder extra passes.

Run from the crate root:

    pip install numpy
    python3 benches/betting_numpy.py

It times numpy, then runs `cargo run --release --example betting_value` for the Rust value and a
single Rust timing, and prints both values and the ratio. Pass --no-rust to time numpy only.
`cargo bench --bench betting` gives the Rust timing with criterion.
"""
import math
import os
import subprocess
import sys
import time

import numpy as np

SEED = 0x5EED0002
COUNT = 10_000_000
DELTA = 0.05
C = 0.5
REL_TOL = 2e-15
MAX_STEPS = 100


def observations(count):
    i = np.arange(1, count + 1, dtype=np.uint64)
    with np.errstate(over="ignore"):
        z = np.uint64(SEED) + i * np.uint64(0x9E3779B97F4A7C15)
        z = (z ^ (z >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
        z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
        z = z ^ (z >> np.uint64(31))
    u = (z >> np.uint64(11)).astype(np.float64) * (1.0 / 9007199254740992.0)
    return u * u


def bets(x, tuning):
    n = x.size
    # sequential running sums (np.cumsum accumulates in order), started at 1/2 and 1/4
    s = np.cumsum(np.concatenate(([0.5], x)))[1:]
    d = x - s / np.arange(2, n + 2, dtype=np.float64)
    q = np.cumsum(np.concatenate(([0.25], d * d)))
    t = np.arange(1, n + 1, dtype=np.float64)
    lam = np.sqrt(2.0 * tuning / n * t / q[:-1])
    return lam, (s[-1] - 0.5) / n, q[-1] / (n + 1)


def margin(x, lam, m, thr):
    cap = C / (1.0 - m) if m < 1.0 else np.inf
    logs = np.log1p(np.minimum(lam, cap) * (m - x))
    return max(0.0, float(np.cumsum(logs).max())) - thr


def upper_bound(x, delta):
    thr = -math.log(delta)
    lam, mean, variance = bets(x, thr)
    passes = [0]

    def g(m):
        passes[0] += 1
        return margin(x, lam, m, thr)

    if g(1.0) < 0.0:
        return 1.0, passes[0]
    n = x.size
    r = math.sqrt(2.0 * variance * thr / n) + thr / (C * n)
    start = min(max(mean, 0.0), 1.0)
    far = lambda step: min(start + step, 1.0)
    m0 = far(r)
    f0 = g(m0)
    if f0 >= 0.0:
        b, fb = m0, f0
        a = fa = None
        step = r
        for _ in range(64):
            step *= 0.25
            m = far(step)
            if m == start:
                break
            if m == b:
                continue
            fm = g(m)
            if fm >= 0.0:
                b, fb = m, fm
            else:
                a, fa = m, fm
                break
        if a is None:
            fs = g(start)
            if fs >= 0.0:
                b, fb = start, fs
                a, fa = 0.0, g(0.0)
            else:
                a, fa = start, fs
    else:
        a, fa = m0, f0
        step = r
        while True:
            step *= 4.0
            m = far(step)
            fm = g(m)
            if fm >= 0.0:
                b, fb = m, fm
                break
            if m == 1.0:
                return 1.0, passes[0]
            a, fa = m, fm
    last = 0
    w2 = w1 = math.inf
    for _ in range(MAX_STEPS):
        width = abs(b - a)
        if width <= REL_TOL * max(abs(a), abs(b)):
            break
        lo, hi = min(a, b), max(a, b)
        mid = lo + 0.5 * (hi - lo)
        if width > 0.5 * w2 or not (fb - fa > 0.0):
            c = mid
        else:
            c = b - fb * ((b - a) / (fb - fa))
        guard = width * 1e-4
        c = min(max(c, lo + guard), hi - guard)
        if not (lo < c < hi):
            c = mid
            if not (lo < c < hi):
                break
        fc = g(c)
        if fc >= 0.0:
            if last == 1:
                k = 1.0 - fc / fb
                fa *= k if k > 0.0 else 0.5
            b, fb, last = c, fc, 1
        else:
            if last == -1:
                k = 1.0 - fc / fa
                fb *= k if k > 0.0 else 0.5
            a, fa, last = c, fc, -1
        w2, w1 = w1, width
    return b, passes[0]


def main():
    x = observations(COUNT)
    t0 = time.perf_counter()
    u, passes = upper_bound(x, DELTA)
    elapsed = time.perf_counter() - t0
    print("numpy %s: %d observations, upper bound %.17g, %d passes, %.3f s"
          % (np.__version__, COUNT, u, passes, elapsed))
    if "--no-rust" in sys.argv:
        return
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    out = subprocess.run(["cargo", "run", "--quiet", "--release", "--example", "betting_value"],
                         cwd=root, check=True, capture_output=True, text=True).stdout.split()
    rust_u, rust_s = float(out[0]), float(out[1])
    print("rust: upper bound %.17g, %.3f s (one run; see cargo bench --bench betting)"
          % (rust_u, rust_s))
    print("relative difference %.2e; numpy / rust time %.1f" % (abs(rust_u - u) / u, elapsed / rust_s))


if __name__ == "__main__":
    main()
