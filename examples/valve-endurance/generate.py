"""Writes the data of the valve-endurance example: an invented endurance campaign.

An (invented) pinch valve for a fluid-handling module is cycled on a rig; after each cycle a
pressure-decay check passes or fails (`leak` = 1 when the seal leaked). The rig exports every
cycle run so far once a week, so each weekly file holds the previous weeks' rows too:

    python3 examples/valve-endurance/generate.py

writes weeks/week-1.csv, weeks/week-2.csv and weeks/week-3.csv (cumulative) and cycles.csv (the
latest export, the same as week 3). The leak probability per cycle is 0.1 %; the seeded generator
makes the files identical on every machine. Nothing here describes a real product.
"""

import os
import random

SEED = 20261203
WEEKS = [1_800, 4_200, 7_500]  # cycles run by the end of each week
LEAK = 0.001


def main() -> None:
    rng = random.Random(SEED)
    here = os.path.dirname(os.path.abspath(__file__))
    rows = []
    for week, total in enumerate(WEEKS, start=1):
        while len(rows) < total:
            cycle = len(rows) + 1
            rig = "A" if cycle % 2 else "B"
            rows.append(f"{cycle},{rig},{1 if rng.random() < LEAK else 0}")
        text = "cycle,rig,leak\n" + "\n".join(rows) + "\n"
        with open(os.path.join(here, "weeks", f"week-{week}.csv"), "w", newline="\n") as f:
            f.write(text)
    with open(os.path.join(here, "cycles.csv"), "w", newline="\n") as f:
        f.write(text)


if __name__ == "__main__":
    main()
