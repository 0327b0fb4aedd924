#!/usr/bin/env python3
"""SciPy counterpart of benches/exact_bounds.rs.

One-sided exact upper bounds at delta = 0.05, scipy.stats.beta.ppf(1 - delta, k + 1, n - k)
(upper = 1 where k = n), for the same 1,000,000 (k, n) pairs. The generator is
SplitMix64 with seed 0x5EED0001; for each pair three outputs r1, r2, r3 (integers
modulo 2^64): decade d = 1 + r1 % 5, base = 10^d, n = base + r2 % (9 base),
k = r3 % (n // 5 + 1). See benches/common/pairs.rs.

Run from the crate root:

    pip install numpy scipy
    python3 benches/exact_bounds_scipy.py

It times SciPy, then runs `cargo run --release --example exact_bounds_pairs` to get the
Rust values (and a quick Rust timing) and reports the largest relative difference.
Pass --no-rust to time SciPy only.
"""
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
from scipy.stats import beta

MASK = (1 << 64) - 1
SEED = 0x5EED0001
PAIRS = 1_000_000
DELTA = 0.05


def splitmix64(state):
    while True:
        state = (state + 0x9E3779B97F4A7C15) & MASK
        z = state
        z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & MASK
        z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & MASK
        yield z ^ (z >> 31)


def pairs(count):
    g = splitmix64(SEED)
    ks = np.empty(count, dtype=np.int64)
    ns = np.empty(count, dtype=np.int64)
    for i in range(count):
        d = 1 + next(g) % 5
        base = 10 ** d
        n = base + next(g) % (9 * base)
        k = next(g) % (n // 5 + 1)
        ks[i], ns[i] = k, n
    return ks, ns


def main():
    ks, ns = pairs(PAIRS)
    t = time.perf_counter()
    full = ks == ns
    upper = beta.ppf(1 - DELTA, ks + 1, np.where(full, 1, ns - ks))
    upper = np.where(full, 1.0, upper)
    elapsed = time.perf_counter() - t
    print("scipy %s: %d pairs, beta.ppf %.3f s" % (__import__("scipy").__version__, PAIRS, elapsed))
    if "--no-rust" in sys.argv:
        return
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "rust.bin")
        subprocess.run(["cargo", "run", "--quiet", "--release", "--example", "exact_bounds_pairs", "--", out],
                       cwd=root, check=True)
        rust = np.fromfile(out, dtype="<f8")
    rel = np.abs(rust - upper) / upper
    i = int(np.argmax(rel))
    print("max relative difference rust vs scipy: %.3e at k=%d n=%d (rust %.17g, scipy %.17g)"
          % (rel[i], ks[i], ns[i], rust[i], upper[i]))
    print("pairs differing by more than 1e-12 relative: %d" % int(np.sum(rel > 1e-12)))


if __name__ == "__main__":
    main()
