"""Writes approach-errors.csv for the dock-approach example: an invented data set.

Each row is one docking approach of an (invented) autonomous cart, in the order they were run;
`error_m` is the distance in metres between the commanded and the reached stop point, as a test
rig would log it. The values
are drawn from a seeded generator so that the file is the same on every machine:

    python3 examples/dock-approach/generate.py

Most approaches stop within about 10 cm of 0.29 m; a few per thousand hit a wheel slip
and land far off. Nothing here describes a real product.
"""

import os
import random

ROWS = 240_000
SEED = 20261202


def main() -> None:
    rng = random.Random(SEED)
    here = os.path.dirname(os.path.abspath(__file__))
    lines = ["error_m"]
    for _ in range(ROWS):
        if rng.random() < 0.004:
            value = rng.uniform(0.6, 1.9)  # wheel slip: a long miss
        else:
            value = rng.gammavariate(9.0, 0.0325)  # mean 0.2925 m, sd 0.0975 m
        value = min(max(value, 0.0), 2.5)
        lines.append(f"{value:.3f}")
    with open(os.path.join(here, "approach-errors.csv"), "w", newline="\n") as f:
        f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
