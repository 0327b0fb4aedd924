"""The computation of benches/read_csv.rs with NumPy, for comparison: read the 10,000,000-row CSV,
SHA-256 of its bytes, parse, check the declared range [0, 2.5], rescale to [0, 1], sum, sum of
squares, split sums at 1/2, min and max.

    cargo bench --bench read_csv            # writes target/bench-data/read_csv_10m.csv first
    python3 benches/read_csv_numpy.py [path]

Two parsers are timed: np.loadtxt (strict: refuses a bad cell, like surety) and np.fromstring
in text mode (faster, but it stops silently at the first cell it cannot read, so it is shown only
as a bound on what NumPy can do). NumPy's sums are pairwise, not compensated.
"""

import hashlib
import io
import os
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT = os.path.join(HERE, "..", "target", "bench-data", "read_csv_10m.csv")
LOW, HIGH = 0.0, 2.5


def summarise(x):
    if not (np.isfinite(x).all() and (x >= LOW).all() and (x <= HIGH).all()):
        raise ValueError("value outside the declared range")
    u = (x - LOW) / (HIGH - LOW)
    return (
        u.size,
        u.sum(),
        (u * u).sum(),
        np.maximum(u - 0.5, 0.0).sum(),
        np.maximum(0.5 - u, 0.0).sum(),
        u.min(),
        u.max(),
    )


def run(path, parse):
    t = time.perf_counter()
    with open(path, "rb") as f:
        data = f.read()
    digest = hashlib.sha256(data).hexdigest()
    x = parse(data)
    s = summarise(x)
    return time.perf_counter() - t, digest, s


def loadtxt(data):
    return np.loadtxt(io.BytesIO(data), dtype=np.float64, skiprows=1)


def fromstring(data):
    body = data[data.index(b"\n") + 1 :].decode("ascii")
    return np.fromstring(body, dtype=np.float64, sep="\n")


def main():
    path = sys.argv[1] if len(sys.argv) > 1 else DEFAULT
    size = os.path.getsize(path)
    print(f"numpy {np.__version__}, {path}, {size / 1e6:.1f} MB")
    for name, parse in [("np.loadtxt", loadtxt), ("np.fromstring", fromstring)]:
        times = []
        for _ in range(3):
            dt, digest, s = run(path, parse)
            times.append(dt)
        best = min(times)
        print(f"{name:14s} best of 3: {best:.3f} s = {size / best / 1e6:.0f} MB/s "
              f"(n={s[0]}, sum={s[1]:.6f}, sha256={digest[:12]}…)")


if __name__ == "__main__":
    main()
