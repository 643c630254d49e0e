#!/usr/bin/env python3
"""Independent reference values for OSPA(2) between two sets of trajectories.

Method: OSPA(2) as defined in
    M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object tracking",
    IEEE Trans. Signal Processing 68:2754-2769, 2020,
written here from the definition (the project's specs/ospa2.md states it in its own words):

    distance of two trajectories x, y over a window W:
        mean over the steps t of W where x or y has a state of
            min(c, |x_t - y_t|) when both have one, c when only one has
    OSPA(2)^p over W, with the m truth and n estimate trajectories having a state in W,
    N = max(m, n):
        (1/N) (min over one-to-one maps of the smaller set into the larger of
               sum d(x, y)^p + c^p |m - n|),   0 when m = n = 0.

Every pair distance is computed by a plain loop over the union of steps (no gating), the
N x N matrix (padded with c^p for the missing rows or columns) is solved with
scipy.optimize.linear_sum_assignment, and for sets of at most 6 trajectories the value is
checked against brute-force enumeration of all one-to-one maps. Sliding windows: for each end
step k of the covering window whose window [k - w + 1, k] (cut at the first step) holds a state,
the same computation on the trajectories cut to that window.

Usage:
    python3 ospa2_reference.py            # (re)write tests/data/reference/ospa2_cases.json
    python3 ospa2_reference.py --check    # regenerate in memory, compare with the file
"""

import argparse
import itertools
import json
import math
import sys
from pathlib import Path

import numpy as np
from scipy.optimize import linear_sum_assignment

from refcheck import compare, load, report

HERE = Path(__file__).resolve().parent
OUTPUT = HERE.parent / "data" / "reference" / "ospa2_cases.json"

SEED = 20_200_415
N_RANDOM = 120
REL_TOL = 1e-12

SOURCE = (
    "Seeded random trajectory sets (numpy default_rng seed 20200415) and one hand case; OSPA(2) "
    "from the definition (Beard, Vo, Vo, IEEE TSP 68:2754-2769, 2020): time-averaged pair "
    "distances by a plain loop over the union of steps, the padded N x N assignment solved with "
    "scipy.optimize.linear_sum_assignment, brute force for small sets; written by "
    "tests/reference/ospa2_reference.py."
)


def pair_distance(x, y, cutoff, first, last):
    """Time-averaged distance of two trajectories ({step: state}) over [first, last]."""
    steps = sorted(s for s in set(x) | set(y) if first <= s <= last)
    if not steps:
        return 0.0
    total = 0.0
    for s in steps:
        if s in x and s in y:
            total += min(cutoff, math.dist(x[s], y[s]))
        else:
            total += cutoff
    return total / len(steps)


def ospa2(truth, estimate, cutoff, order, first, last):
    """OSPA(2) over [first, last]; trajectories with no state there are left out."""
    inside = lambda t: any(first <= s <= last for s in t)
    xs = [t for t in truth.values() if inside(t)]
    ys = [t for t in estimate.values() if inside(t)]
    m, n = len(xs), len(ys)
    big = max(m, n)
    if big == 0:
        return 0.0
    cp = cutoff**order
    cost = np.full((big, big), cp)
    for i, x in enumerate(xs):
        for j, y in enumerate(ys):
            cost[i, j] = pair_distance(x, y, cutoff, first, last) ** order
    rows, cols = linear_sum_assignment(cost)
    value = cost[rows, cols].sum() / big
    if big <= 6:
        brute = min(
            sum(cost[i, perm[i]] for i in range(big)) for perm in itertools.permutations(range(big))
        ) / big
        assert abs(brute - value) <= 1e-12 * max(1.0, value), (brute, value)
    return value ** (1.0 / order)


def case_values(truth, estimate, cutoff, order, width):
    steps = sorted({s for t in list(truth.values()) + list(estimate.values()) for s in t})
    if not steps:
        return 0.0, []
    first, last = steps[0], steps[-1]
    whole = ospa2(truth, estimate, cutoff, order, first, last)
    sliding = []
    for k in range(first, last + 1):
        lo = max(first, k - width + 1)
        if any(lo <= s <= k for s in steps):
            sliding.append([k, ospa2(truth, estimate, cutoff, order, lo, k)])
    return whole, sliding


def random_set(rng, prefix, count, dim, horizon):
    objects = {}
    for k in range(count):
        start = int(rng.integers(0, horizon))
        length = int(rng.integers(1, horizon - start + 1))
        here = rng.uniform(-3, 3, size=dim)
        points = {}
        for s in range(start, start + length):
            here = here + rng.normal(0, 0.6, size=dim)
            if rng.random() < 0.8:  # gaps
                points[s] = [float(v) for v in here]
        if points:
            objects[f"{prefix}{k}"] = points
    return objects


def as_json(objects):
    return {name: [[s, state] for s, state in sorted(points.items())] for name, points in objects.items()}


def build():
    cases = []
    # Hand case (also derived in src/ospa2.rs): c = 2, p = 1, OSPA(2) = 1.5.
    truth = {"a": {1: [0.0], 2: [0.0], 3: [0.0], 4: [0.0]}}
    estimate = {"p": {1: [0.5], 2: [0.5], 3: [5.0], 4: [5.0]}, "q": {3: [0.0], 4: [0.0]}}
    whole, sliding = case_values(truth, estimate, 2.0, 1.0, 1)
    assert abs(whole - 1.5) < 1e-12
    cases.append({"cutoff": 2.0, "order": 1.0, "width": 1, "truth": as_json(truth),
                  "estimate": as_json(estimate), "whole": whole, "sliding": sliding})
    rng = np.random.default_rng(SEED)
    for _ in range(N_RANDOM):
        dim = int(rng.integers(1, 3))
        horizon = int(rng.integers(1, 12))
        truth = random_set(rng, "t", int(rng.integers(0, 6)), dim, horizon)
        estimate = random_set(rng, "e", int(rng.integers(0, 7)), dim, horizon)
        cutoff = float(rng.choice([0.5, 1.0, 2.0, 5.0]))
        order = float(rng.choice([1.0, 1.5, 2.0, 3.0]))
        width = int(rng.integers(1, 6))
        whole, sliding = case_values(truth, estimate, cutoff, order, width)
        cases.append({"cutoff": cutoff, "order": order, "width": width, "truth": as_json(truth),
                      "estimate": as_json(estimate), "whole": whole, "sliding": sliding})
    return {"source": SOURCE, "cases": cases}


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true")
    args = parser.parse_args()
    doc = build()
    if args.check:
        expected, actual = load(doc, OUTPUT, __file__)
        if expected is None:
            return 1
        return report(OUTPUT, compare(expected, actual, REL_TOL), f"ok: {OUTPUT.name} matches")
    OUTPUT.write_text(json.dumps(doc, indent=1) + "\n")
    print(f"wrote {OUTPUT} ({len(doc['cases'])} cases)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
