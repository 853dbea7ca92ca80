#!/usr/bin/env python3
"""Placement speed, Ambit beside scipy, in the same run.

Builds choir-shaped problems (each singer has a home section; fits fall off
one section away; sections further away are not allowed; fixed section
sizes so that scipy.optimize.linear_sum_assignment applies), solves them
with Ambit (`cargo run --release --example place_timing`) and with
scipy.optimize.linear_sum_assignment on seat-expanded columns, checks the
optima agree, and prints the times and their ratio.

Run from the repository root with the reference venv:
    /root/.cache/ambit/venv/bin/python scripts/compare-placement-speed.py [SINGERS...]
"""

import json
import random
import subprocess
import sys
import tempfile
import time

import numpy as np
from scipy.optimize import linear_sum_assignment


def problem(singers, sections, seed):
    rng = random.Random(seed)
    fit, homes = [], []
    for _ in range(singers):
        home = rng.randrange(sections)
        homes.append(home)
        fit.append([
            (100.0 - 30.0 * abs(j - home) - 25.0 * rng.random()) if abs(j - home) <= 1 else None
            for j in range(sections)
        ])
    counts = [homes.count(j) for j in range(sections)]
    # Move one singer's seat from the largest to the smallest section, so the
    # optimum has to trade fit for size.
    counts[counts.index(max(counts))] -= 1
    counts[counts.index(min(counts))] += 1
    return {
        "singers": [f"singer{v}" for v in range(singers)],
        "sections": [f"section{j}" for j in range(sections)],
        "fit": fit,
        "sizes": [{"min": c, "max": c} for c in counts],
    }


def scipy_lsa(instance):
    seats = [j for j, size in enumerate(instance["sizes"]) for _ in range(size["min"])]
    fit = instance["fit"]
    start = time.perf_counter()
    cost = np.full((len(fit), len(seats)), np.inf)
    for v, row in enumerate(fit):
        for column, j in enumerate(seats):
            if row[j] is not None:
                cost[v, column] = -row[j]
    rows, columns = linear_sum_assignment(cost)
    seconds = time.perf_counter() - start
    objective = float(sum(fit[r][seats[c]] for r, c in zip(rows, columns)))
    return objective, seconds


def main():
    sizes = [int(arg) for arg in sys.argv[1:]] or [200, 1000, 2000]
    instances = [problem(n, 8, n) for n in sizes]
    with tempfile.NamedTemporaryFile("w", suffix=".json", delete=False) as handle:
        json.dump(instances, handle)
        path = handle.name
    output = subprocess.run(
        ["cargo", "run", "--quiet", "--release", "--example", "place_timing", path],
        check=True, capture_output=True, text=True,
    ).stdout
    ours = json.loads(output)
    print(f"{'singers':>8} {'ambit s':>10} {'scipy lsa s':>12} {'ratio':>8}  optima agree")
    for n, instance, mine in zip(sizes, instances, ours):
        objective, seconds = scipy_lsa(instance)
        agree = abs(objective - mine["objective"]) <= 1e-9 * max(1.0, abs(objective))
        print(f"{n:>8} {mine['seconds']:>10.5f} {seconds:>12.4f} {seconds / mine['seconds']:>8.0f}  {agree}")


if __name__ == "__main__":
    main()
