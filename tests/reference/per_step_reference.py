#!/usr/bin/env python3
"""Independent reference values for per-step GOSPA between two finite point sets.

Method: GOSPA as defined in
    A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson,
    "Generalized optimal sub-pattern assignment metric", FUSION 2017 (arXiv:1601.05585).

    GOSPA(X, Y)^p, alpha = 2:
        min over partial one-to-one assignments g of
            sum_{(i,j) in g} d(x_i, y_j)^p + (c^p / 2) (|X| + |Y| - 2 |g|)
    general alpha in (0, 2], |X| <= |Y| (else swap the roles):
        min over assignments of all of X into Y of
            sum_i min(d, c)^p + (c^p / alpha) (|Y| - |X|)

For alpha = 2 the value is computed on the augmented square assignment problem
((m + n) x (m + n)): real block min(d, c)^p, each truth to its own dummy column c^p / 2,
each estimate to its own dummy row c^p / 2, dummy-dummy block 0, every other entry
forbidden (a large number), solved with scipy.optimize.linear_sum_assignment. The result
is cross-checked against the rectangular form (matrix min(d, c)^p - c^p), against the
general-alpha form at alpha = 2, and, for small sets, against brute-force enumeration of
all partial assignments with the raw distance d.

Usage:
    python3 per_step_reference.py            # (re)write tests/data/reference/per_step_cases.json
    python3 per_step_reference.py --check    # regenerate in memory, compare with the file
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
OUTPUT = HERE.parent / "data" / "reference" / "per_step_cases.json"

SEED = 7_314_159
N_RANDOM = 397
REL_TOL = 1e-12

SOURCE = (
    "Hand cases, then seeded random point sets (numpy default_rng seed 7314159); GOSPA^p from "
    "the definition (Rahmathullah, Garcia-Fernandez, Svensson, FUSION 2017, arXiv:1601.05585): "
    "alpha = 2 by the augmented (m+n)x(m+n) assignment solved with "
    "scipy.optimize.linear_sum_assignment, other alpha by full assignment of the smaller set "
    "plus (c^p/alpha)|m-n|; written by tests/reference/per_step_reference.py."
)


# --------------------------------------------------------------------------------------
# Metric
# --------------------------------------------------------------------------------------

def as_points(points):
    """A list of coordinate lists (possibly empty) as an (m, dim) float array."""
    arr = np.asarray(points, dtype=float)
    if arr.size == 0:
        return np.zeros((0, 0))
    return arr.reshape(len(points), -1)


def euclidean(truth, estimate):
    """(m, n) matrix of Euclidean distances."""
    m, n = len(truth), len(estimate)
    if m == 0 or n == 0:
        return np.zeros((m, n))
    diff = truth[:, None, :] - estimate[None, :, :]
    return np.sqrt((diff * diff).sum(axis=-1))


def _augmented_matrix(dist, cutoff, order, real_shift=0.0):
    """Augmented square cost matrix of GOSPA with alpha = 2 (arXiv:1601.05585).

    Rows: m truths, then n estimate-dummies. Columns: n estimates, then m truth-dummies.
    `real_shift` is added to real entries with d < c (used only to probe ties).
    """
    m, n = dist.shape
    cp = cutoff ** order
    half = cp / 2.0
    big = 10.0 * (m + n + 1) * cp
    size = m + n
    mat = np.full((size, size), big)
    real = np.minimum(dist, cutoff) ** order
    if real_shift != 0.0:
        real = np.where(dist < cutoff, real + real_shift, real)
    mat[:m, :n] = real
    for i in range(m):
        mat[i, n + i] = half  # truth i left unassigned (missed)
    for j in range(n):
        mat[m + j, j] = half  # estimate j left unassigned (false)
    mat[m:, n:] = 0.0  # dummy-dummy
    return mat, big


def _solve_augmented(dist, cutoff, order, real_shift=0.0):
    m, n = dist.shape
    mat, big = _augmented_matrix(dist, cutoff, order, real_shift)
    if m + n == 0:
        return mat, [], []
    rows, cols = linear_sum_assignment(mat)
    if np.any(mat[rows, cols] >= big):
        raise AssertionError("augmented assignment chose a forbidden entry")
    return mat, rows, cols


def _detected_pairs(dist, cutoff, rows, cols):
    m, n = dist.shape
    return [
        (int(i), int(j))
        for i, j in zip(rows, cols)
        if i < m and j < n and dist[i, j] < cutoff
    ]


def gospa_alpha2(truth, estimate, cutoff, order):
    """GOSPA^p with alpha = 2 and its parts, via the augmented square assignment
    (arXiv:1601.05585)."""
    truth, estimate = as_points(truth), as_points(estimate)
    dist = euclidean(truth, estimate)
    m, n = dist.shape
    half = cutoff ** order / 2.0
    mat, rows, cols = _solve_augmented(dist, cutoff, order)
    pairs = _detected_pairs(dist, cutoff, rows, cols)
    localization = 0.0
    for i, j in sorted(pairs):
        localization += float(dist[i, j]) ** order
    k = len(pairs)
    missed_count, false_count = m - k, n - k
    missed = half * missed_count
    false = half * false_count
    power = localization + missed + false
    assignment_value = float(mat[rows, cols].sum()) if m + n else 0.0
    if not math.isclose(power, assignment_value, rel_tol=1e-12, abs_tol=1e-12):
        raise AssertionError(f"parts {power} != assignment value {assignment_value}")
    return {
        "power": power,
        "localization": localization,
        "missed": missed,
        "false": false,
        "missed_count": missed_count,
        "false_count": false_count,
    }


def detected_count_is_unique(truth, estimate, cutoff, order):
    """True when every optimal assignment detects the same number of pairs.

    Probes by shifting the cost of every real pair with d < c by -eps and +eps: if the
    number of detected pairs differs, the split of the total into parts is ambiguous
    (a tie or a near-tie), and such a random case is redrawn.
    """
    truth, estimate = as_points(truth), as_points(estimate)
    dist = euclidean(truth, estimate)
    eps = 1e-9 * cutoff ** order
    counts = set()
    for shift in (-eps, eps):
        _, rows, cols = _solve_augmented(dist, cutoff, order, shift)
        counts.add(len(_detected_pairs(dist, cutoff, rows, cols)))
    return len(counts) == 1


def gospa_rectangular_alpha2(truth, estimate, cutoff, order):
    """GOSPA^p, alpha = 2, on the m x n matrix min(d, c)^p - c^p (cross-check)."""
    truth, estimate = as_points(truth), as_points(estimate)
    dist = euclidean(truth, estimate)
    m, n = dist.shape
    cp = cutoff ** order
    base = cp / 2.0 * (m + n)
    if m == 0 or n == 0:
        return base
    gain = np.minimum(dist, cutoff) ** order - cp
    rows, cols = linear_sum_assignment(gain)
    return base + float(gain[rows, cols].sum())


def gospa_alpha(truth, estimate, cutoff, order, alpha):
    """GOSPA^p for any alpha in (0, 2]: full assignment of the smaller set (arXiv:1601.05585)."""
    truth, estimate = as_points(truth), as_points(estimate)
    dist = euclidean(truth, estimate)
    m, n = dist.shape
    cp = cutoff ** order
    unassigned = cp / alpha * abs(m - n)
    if m == 0 or n == 0:
        return unassigned
    cost = np.minimum(dist, cutoff) ** order
    rows, cols = linear_sum_assignment(cost)  # assigns all of the smaller set
    assert len(rows) == min(m, n)
    return float(cost[rows, cols].sum()) + unassigned


def gospa_brute_force(truth, estimate, cutoff, order, alpha):
    """Enumerate the definition directly (small sets only)."""
    truth, estimate = as_points(truth), as_points(estimate)
    dist = euclidean(truth, estimate)
    m, n = dist.shape
    cp = cutoff ** order
    best = math.inf
    if alpha == 2.0:
        # partial assignments, raw distance
        for k in range(min(m, n) + 1):
            for rows in itertools.combinations(range(m), k):
                for cols in itertools.permutations(range(n), k):
                    val = sum(float(dist[i, j]) ** order for i, j in zip(rows, cols))
                    best = min(best, val + cp / 2.0 * (m + n - 2 * k))
        return best
    if m <= n:
        for cols in itertools.permutations(range(n), m):
            val = sum(min(float(dist[i, j]), cutoff) ** order for i, j in enumerate(cols))
            best = min(best, val)
    else:
        for rows in itertools.permutations(range(m), n):
            val = sum(min(float(dist[i, j]), cutoff) ** order for j, i in enumerate(rows))
            best = min(best, val)
    return best + cp / alpha * abs(m - n)


# --------------------------------------------------------------------------------------
# Cases
# --------------------------------------------------------------------------------------

def evaluate_case(cutoff, order, alpha, truth, estimate):
    """Full case record, with every internal cross-check asserted."""
    case = {
        "cutoff": cutoff,
        "order": order,
        "alpha": alpha,
        "truth": truth,
        "estimate": estimate,
    }
    general = gospa_alpha(truth, estimate, cutoff, order, alpha)
    if alpha == 2.0:
        parts = gospa_alpha2(truth, estimate, cutoff, order)
        rect = gospa_rectangular_alpha2(truth, estimate, cutoff, order)
        for name, other in (("rectangular", rect), ("general-alpha", general)):
            if not math.isclose(parts["power"], other, rel_tol=1e-12, abs_tol=1e-12):
                raise AssertionError(f"{name} form {other} != augmented {parts['power']}")
        case.update(parts)
    else:
        case.update(
            {
                "power": general,
                "localization": None,
                "missed": None,
                "false": None,
                "missed_count": None,
                "false_count": None,
            }
        )
    if len(truth) <= 5 and len(estimate) <= 5:
        brute = gospa_brute_force(truth, estimate, cutoff, order, alpha)
        if not math.isclose(case["power"], brute, rel_tol=1e-12, abs_tol=1e-12):
            raise AssertionError(f"brute force {brute} != {case['power']}")
    return case


HAND_CASES = [
    # (cutoff, order, alpha, truth, estimate, expected power, loc, missed, false)
    (2.0, 1.0, 2.0, [[0.0], [10.0]], [[0.5], [20.0], [30.0]], 3.5, 0.5, 1.0, 2.0),
    (3.0, 2.0, 2.0, [[0.0, 0.0], [5.0, 5.0]], [[1.0, 0.0], [5.0, 7.0], [20.0, 20.0]],
     9.5, 5.0, 0.0, 4.5),
    (5.0, 2.0, 2.0, [[0.0, 0.0], [10.0, 0.0]], [[0.0, 3.0], [10.0, 1.0], [4.0, 0.0]],
     22.5, 10.0, 0.0, 12.5),
]


def hand_cases():
    cases = []
    for cutoff, order, alpha, truth, estimate, power, loc, missed, false in HAND_CASES:
        case = evaluate_case(cutoff, order, alpha, truth, estimate)
        got = (case["power"], case["localization"], case["missed"], case["false"])
        want = (power, loc, missed, false)
        for g, w in zip(got, want):
            if not math.isclose(g, w, rel_tol=1e-12, abs_tol=1e-12):
                raise AssertionError(f"hand case: got {got}, expected {want}")
        cases.append(case)
    return cases


def _near_cutoff(truth, estimate, cutoff):
    dist = euclidean(as_points(truth), as_points(estimate))
    return bool(np.any(np.abs(dist - cutoff) <= 1e-9 * cutoff))


def random_case(rng):
    dim = int(rng.integers(1, 4))
    cutoff = float(rng.choice([0.5, 1.0, 2.0, 5.0]))
    order = float(rng.choice([1.0, 1.5, 2.0, 3.0]))
    alpha = float(rng.choice([2.0, 1.0, 0.5], p=[0.7, 0.15, 0.15]))
    m = int(rng.integers(0, 10))
    n = int(rng.integers(0, 10))
    roll = rng.random()
    if roll < 0.06:
        m = 0
    elif roll < 0.12:
        n = 0
    elif roll < 0.14:
        m = n = 0
    half_width = cutoff * float(rng.uniform(0.5, 4.0))
    truth = rng.uniform(-half_width, half_width, size=(m, dim))
    estimate = np.empty((n, dim))
    noise = cutoff * float(rng.choice([0.1, 0.4, 1.0]))
    for j in range(n):
        if m > 0 and rng.random() < 0.6:
            source = truth[int(rng.integers(0, m))]
            estimate[j] = source + rng.normal(0.0, noise, size=dim)
        else:
            estimate[j] = rng.uniform(-half_width, half_width, size=dim)
    truth_list = [[float(v) for v in row] for row in truth]
    estimate_list = [[float(v) for v in row] for row in estimate]
    return cutoff, order, alpha, truth_list, estimate_list


def generate_cases():
    cases = hand_cases()
    rng = np.random.default_rng(SEED)
    redrawn = 0
    while len(cases) < len(HAND_CASES) + N_RANDOM:
        cutoff, order, alpha, truth, estimate = random_case(rng)
        if _near_cutoff(truth, estimate, cutoff) or (
            alpha == 2.0 and not detected_count_is_unique(truth, estimate, cutoff, order)
        ):
            redrawn += 1  # ambiguous split of the total into parts: draw again
            continue
        cases.append(evaluate_case(cutoff, order, alpha, truth, estimate))
    return cases, redrawn


def document(cases):
    return {"source": SOURCE, "cases": cases}


def dump(doc, path):
    """One case per line; floats as json writes them (repr, round-trips exactly)."""
    lines = ["{" + f'"source": {json.dumps(doc["source"])},', '"cases": [']
    body = [json.dumps(case) for case in doc["cases"]]
    lines.append(",\n".join(body))
    lines.append("]}")
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n")


# --------------------------------------------------------------------------------------
# --check
# --------------------------------------------------------------------------------------

def check(doc, path):
    committed, fresh = load(doc, path, __file__)
    if committed is None:
        return 1
    diffs = compare(committed, fresh, REL_TOL, "doc")
    return report(path, diffs, f"OK: {path.name} matches the regenerated {len(fresh['cases'])} cases")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--check", action="store_true",
                        help="regenerate in memory and compare with the committed JSON")
    parser.add_argument("--output", type=Path, default=OUTPUT, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    cases, redrawn = generate_cases()
    doc = document(cases)
    if args.check:
        return check(doc, args.output)
    dump(doc, args.output)
    n_alpha2 = sum(1 for c in cases if c["alpha"] == 2.0)
    print(f"wrote {args.output} with {len(cases)} cases ({n_alpha2} with alpha = 2; "
          f"{redrawn} ambiguous draws redrawn)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
