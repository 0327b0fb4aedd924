"""Reference bounds for the bundled examples, computed with mpmath at 50 digits.

Independent of the Rust code: the one-sided Clopper-Pearson upper bound U solves
P(Bin(n, U) <= k) = delta, found here with mpmath's regularized incomplete beta and
bisection. The values printed are pasted, with this script named beside them, into
tests/cli.rs.

    pip install mpmath
    python3 tests/reference/examples_reference.py
"""
from mpmath import mp, mpf, betainc, log, exp

mp.dps = 50


def cdf(k, n, p):
    """P(Bin(n, p) <= k) = I_{1-p}(n - k, k + 1)."""
    return betainc(n - k, k + 1, 0, 1 - p, regularized=True)


def cp_upper(k, n, delta):
    if k >= n:
        return mpf(1)
    if k == 0:
        return 1 - exp(log(delta) / n)
    lo, hi = mpf(k) / n, mpf(1)
    for _ in range(200):
        mid = (lo + hi) / 2
        if cdf(k, n, mid) > delta:
            lo = mid
        else:
            hi = mid
    return hi


cases = [
    ("release-signoff", 1, 2300, mpf("0.05")),
    ("lot-comparison lot A-2611", 3, 640, mpf("0.05") / 3),
    ("lot-comparison lot B-2614", 7, 610, mpf("0.05") / 3),
    ("lot-comparison lot C-2619", 2, 655, mpf("0.05") / 3),
    ("zero-failure-demo", 0, 59, mpf("0.05")),
]
for name, k, n, delta in cases:
    print(f"{name}: k={k} n={n} delta={mp.nstr(delta, 20)} upper={mp.nstr(cp_upper(k, n, delta), 20)}")
