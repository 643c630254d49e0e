#!/usr/bin/env python3
"""Independent reference values for trajectory GOSPA and per-step GOSPA (alpha = 2) with
different costs for missed and false objects: a missed object-step costs S c^p, a false one
(1 - S) c^p, an assigned pair min(d, c)^p, switches gamma^p / 2 per unit of weight change
(switchyard's `--missed-share S`, specs/missed-share.md).

These values do NOT use the reduction switchyard relies on (the score moves by the constant
(S - 1/2) c^p (truth - estimate object-steps)): the costs are written into the models directly.

Trajectory GOSPA: the full unreduced LP of trajectory_reference.py (Garcia-Fernandez,
Rahmathullah, Svensson, IEEE TSP 68:3917-3928, 2020, arXiv:1605.01177), whose cost tensor is
replaced here by one with separate costs:
  * real block: min(d, c)^p when both are present, S c^p when only the truth is present (the
    pair then leaves the truth unassigned), (1 - S) c^p when only the estimate is, 0 when
    neither;
  * last column (truth i unassigned): S c^p where truth i is present;
  * last row (estimate j unassigned): (1 - S) c^p where estimate j is present.
Solved with scipy.optimize.linprog(method="highs"), certified by its dual objective. The parts
are read from the optimum: localisation = sum of W d^p over cells where both are present and
d < c; assigned = sum of W over those cells; missed = S c^p (truth object-steps - assigned);
false = (1 - S) c^p (estimate object-steps - assigned); switching = gamma^p / 2 times the
weight change (asserted to add up to the LP value). The split is
reported (`parts`) only when it is the same at every optimum: the least and the most of
`assigned` and of the localisation over the optimal face (four more linprog solves, with the
objective held within 1e-9 of the optimum) agree within 1e-7; otherwise `parts` is null. The
values come from the optimum's W rounded to a small denominator (as trajectory_reference.py
does), checked against the face's values within 1e-6.

Per-step GOSPA (Rahmathullah, Garcia-Fernandez, Svensson, FUSION 2017, arXiv:1601.05585),
alpha = 2, at each step where an object is present: the augmented (m + n) x (m + n) assignment
with min(d, c)^p in the real block, S c^p on each truth's own dummy column, (1 - S) c^p on each
estimate's own dummy row, 0 in the dummy block; scipy.optimize.linear_sum_assignment.

Scenes: the seeded random scenes of trajectory_reference.py (gaps, unequal numbers of truths and
estimates, empty steps) and two of its crowded scenes whose LP optimum is fractional, each at
S in {0.2, 0.5, 0.8} and p in {1, 2}; plus two hand cases (one truth and no estimate, and the
reverse: 4 steps, c = 2, p = 1, S = 0.75 give 6 and 2).

Usage:
    python3 missed_share_reference.py           # (re)write tests/data/reference/missed_share_cases.json
    python3 missed_share_reference.py --check   # regenerate in memory, compare with the file
"""

import argparse
import json
import math
import sys
from pathlib import Path

import numpy as np
import scipy.sparse as sp
from scipy.optimize import linear_sum_assignment, linprog

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from refcheck import compare, load, report  # noqa: E402
from trajectory_reference import (  # noqa: E402
    GAP_SEED, GAP_SEEDS, SEED, Model, crowded_scene, dump, scene_arrays, scene_from_seed,
)

OUTPUT = HERE.parent / "data" / "reference" / "missed_share_cases.json"

N_RANDOM = 12
SHARES = [0.2, 0.5, 0.8]
ORDERS = [1.0, 2.0]
REL_TOL = 1e-9
# A stream of its own, so that these scenes are not the ones trajectory_cases.json holds.
SCENE_STREAM = 77

SOURCE = (
    "Seeded random scenes of tests/reference/trajectory_reference.py (default_rng([2718281, 77, q])) "
    "and two of its crowded scenes with a fractional LP optimum, at missed shares S in {0.2, 0.5, "
    "0.8} and p in {1, 2}, and two hand cases; trajectory GOSPA d^p (Garcia-Fernandez, "
    "Rahmathullah, Svensson, IEEE TSP 2020, arXiv:1605.01177) with a missed object-step costing "
    "S c^p and a false one (1 - S) c^p written directly into the full unreduced LP, solved by "
    "scipy.optimize.linprog(method='highs'); per-step GOSPA (alpha = 2) with the same costs by "
    "scipy.optimize.linear_sum_assignment on the augmented matrix; written by "
    "tests/reference/missed_share_reference.py."
)


def cost_tensor(PX, X, PY, Y, cutoff, order, share):
    """D^k with a missed object-step at S c^p and a false one at (1 - S) c^p, (T, nx+1, ny+1)."""
    T, nx = PX.shape
    ny = PY.shape[1]
    missed = share * cutoff ** order
    false = (1.0 - share) * cutoff ** order
    D = np.zeros((T, nx + 1, ny + 1))
    if nx and ny:
        diff = X[:, :, None, :] - Y[:, None, :, :]
        dist = np.sqrt((diff * diff).sum(axis=-1))
        both = PX[:, :, None] & PY[:, None, :]
        only_truth = PX[:, :, None] & ~PY[:, None, :]
        only_estimate = ~PX[:, :, None] & PY[:, None, :]
        D[:, :nx, :ny] = np.where(
            both, np.minimum(dist, cutoff) ** order,
            np.where(only_truth, missed, np.where(only_estimate, false, 0.0)))
    D[:, :nx, ny] = np.where(PX, missed, 0.0)
    D[:, nx, :ny] = np.where(PY, false, 0.0)
    D[:, nx, ny] = 0.0
    return D


def close_cells(PX, X, PY, Y, cutoff, order):
    """Indicator and d^p of the cells where both are present and d < c, (T, nx+1, ny+1)."""
    T, nx = PX.shape
    ny = PY.shape[1]
    close = np.zeros((T, nx + 1, ny + 1), dtype=bool)
    dp = np.zeros((T, nx + 1, ny + 1))
    if nx and ny:
        diff = X[:, :, None, :] - Y[:, None, :, :]
        dist = np.sqrt((diff * diff).sum(axis=-1))
        both = PX[:, :, None] & PY[:, None, :]
        close[:, :nx, :ny] = both & (dist < cutoff)
        dp[:, :nx, :ny] = np.where(close[:, :nx, :ny], dist ** order, 0.0)
    return close, dp


def _close(a, b, rel):
    return abs(a - b) <= rel * max(1.0, abs(a), abs(b))


def trajectory_value(truth, estimate, cutoff, order, gamma, share):
    """d^p of the LP with separate costs, its parts when the optimum fixes them, and T."""
    _, T, PX, X, PY, Y = scene_arrays(truth, estimate)
    model = Model(PX, X, PY, Y, cutoff, order, gamma)
    model.D = cost_tensor(PX, X, PY, Y, cutoff, order, share)
    model.cost = np.concatenate([model.D.ravel(), np.full(model.NE, model.switch_weight)])
    lp = model.solve_lp()
    dual = model.lp_dual_value(lp)
    if not _close(lp.fun, dual, 1e-9):
        raise AssertionError(f"LP primal {lp.fun!r} and dual {dual!r} differ")
    w = model.rational_w(lp.x, denominators=range(1, 13))
    total = model.objective_of(w) if w is not None else float(lp.fun)
    if not _close(total, lp.fun, 1e-9):
        raise AssertionError(f"rounded LP vertex {total!r} != LP optimum {lp.fun!r}")
    # Nothing assigned costs S c^p per truth object-step and (1 - S) c^p per estimate one.
    unassigned = cutoff ** order * (share * PX.sum() + (1.0 - share) * PY.sum())
    if total > unassigned + 1e-9 * max(1.0, unassigned):
        raise AssertionError("LP value above the all-unassigned cost")

    close, dp = close_cells(PX, X, PY, Y, cutoff, order)
    n_var = model.n_variables
    assigned_row = np.concatenate([close.ravel().astype(float), np.zeros(model.NE)])
    local_row = np.concatenate([dp.ravel(), np.zeros(model.NE)])
    # The optimal face: the objective held within 1e-9 of the optimum.
    limit = float(lp.fun) + 1e-9 * max(1.0, abs(float(lp.fun)))
    face_ub = sp.vstack([model.A_ub, sp.csr_array(model.cost.reshape(1, -1))]) \
        if model.A_ub is not None else sp.csr_array(model.cost.reshape(1, -1))
    face_b = np.concatenate([model.b_ub, [limit]]) if model.A_ub is not None else np.array([limit])
    ranges = []
    for row in (assigned_row, local_row):
        values = []
        for sign in (1.0, -1.0):
            res = linprog(sign * row, A_ub=face_ub, b_ub=face_b, A_eq=model.A_eq, b_eq=model.b_eq,
                          bounds=np.column_stack([model.lb, model.ub]), method="highs")
            if res.status != 0:
                raise RuntimeError(f"face LP failed: {res.message}")
            values.append(float(row @ res.x))
        ranges.append(values)
        assert n_var == row.size
    parts = None
    if w is not None and all(abs(a - b) <= 1e-7 * max(1.0, abs(a)) for a, b in ranges):
        # Read from the optimum's W rounded as above, free of the solver's tolerance noise.
        assigned = float(assigned_row[: model.NW] @ w)
        localisation = float(local_row[: model.NW] @ w)
        if not (_close(assigned, ranges[0][0], 1e-6) and _close(localisation, ranges[1][0], 1e-6)):
            raise AssertionError("the rounded optimum is off the optimal face's parts")
        missed_count = float(PX.sum()) - assigned
        false_count = float(PY.sum()) - assigned
        missed = share * cutoff ** order * missed_count
        false = (1.0 - share) * cutoff ** order * false_count
        W = w.reshape(T, model.nx + 1, model.ny + 1)
        switching = model.switch_weight * float(
            np.abs(np.diff(W[:, : model.nx, : model.ny], axis=0)).sum())
        if not _close(localisation + missed + false + switching, total, 1e-9):
            raise AssertionError("the parts do not add up to the LP value")
        parts = {
            "localisation": localisation,
            "missed": missed,
            "false": false,
            "switching": switching,
            "missed_count": missed_count,
            "false_count": false_count,
        }
    return total, parts, T


def per_step_value(xs, ys, cutoff, order, share):
    """GOSPA^p (alpha = 2) of two point sets with a missed point at S c^p and a false one at
    (1 - S) c^p, by the augmented square assignment."""
    m, n = len(xs), len(ys)
    if m + n == 0:
        return 0.0
    big = 1e300
    mat = np.full((m + n, m + n), big)
    for i in range(m):
        for j in range(n):
            d = math.dist(xs[i], ys[j])
            mat[i, j] = min(d, cutoff) ** order
        mat[i, n + i] = share * cutoff ** order
    for j in range(n):
        mat[m + j, j] = (1.0 - share) * cutoff ** order
    mat[m:, n:] = 0.0
    rows, cols = linear_sum_assignment(mat)
    value = float(mat[rows, cols].sum())
    if value >= big:
        raise AssertionError("the augmented assignment used a forbidden cell")
    return value


def per_step_values(truth, estimate, cutoff, order, share):
    """[step, GOSPA^p] at each step where an object is present, in time order."""
    first, T, PX, X, PY, Y = scene_arrays(truth, estimate)
    out = []
    for k in range(T):
        if not (PX[k].any() or PY[k].any()):
            continue
        xs = [list(X[k, i]) for i in np.flatnonzero(PX[k])]
        ys = [list(Y[k, j]) for j in np.flatnonzero(PY[k])]
        out.append([first + k, per_step_value(xs, ys, cutoff, order, share)])
    return out


def make_case(truth, estimate, cutoff, order, gamma, share):
    total, parts, T = trajectory_value(truth, estimate, cutoff, order, gamma, share)
    steps = per_step_values(truth, estimate, cutoff, order, share)
    if gamma == 0.0:
        # Without switches, trajectory GOSPA is the sum of the per-step values.
        step_sum = sum(v for _, v in steps)
        if not _close(total, step_sum, 1e-9):
            raise AssertionError(f"gamma = 0: LP {total!r} != per-step sum {step_sum!r}")
    as_json = lambda tracks: {  # noqa: E731
        name: [[int(s), [float(v) for v in x]] for s, x in seq] for name, seq in tracks.items()
    }
    return {
        "cutoff": cutoff,
        "order": order,
        "switch_penalty": gamma,
        "missed_share": share,
        "truth": as_json(truth),
        "estimate": as_json(estimate),
        "lp_total": total,
        "parts": parts,
        "steps": T,
        "per_step": steps,
    }


def hand_cases():
    """One truth and no estimate over 4 steps, then the reverse: c = 2, p = 1, S = 0.75.
    By hand: 4 missed object-steps x 0.75 x 2 = 6; 4 false ones x 0.25 x 2 = 2."""
    track = [(s, [0.0]) for s in range(4)]
    cases = []
    for truth, estimate, expected in (({"t0": track}, {}, 6.0), ({}, {"e0": track}, 2.0)):
        case = make_case(truth, estimate, 2.0, 1.0, 2.0, 0.75)
        if not math.isclose(case["lp_total"], expected, rel_tol=1e-12):
            raise AssertionError(f"hand case: {case['lp_total']} != {expected}")
        cases.append(case)
    return cases


def generate_cases():
    cases = hand_cases()
    scenes = [scene_from_seed([SEED, SCENE_STREAM, q]) for q in range(N_RANDOM)]
    scenes += [scene_from_seed([GAP_SEED, s], crowded_scene) for s in GAP_SEEDS[:2]]
    for truth, estimate, cutoff, _, gamma in scenes:
        for order in ORDERS:
            for share in SHARES:
                cases.append(make_case(truth, estimate, cutoff, order, gamma, share))
    return cases


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--check", action="store_true",
                        help="regenerate in memory and compare with the committed JSON")
    parser.add_argument("--output", type=Path, default=OUTPUT, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    doc = {"source": SOURCE, "cases": generate_cases()}
    if args.check:
        committed, fresh = load(doc, args.output, __file__)
        if committed is None:
            return 1
        diffs = compare(committed, fresh, REL_TOL)
        return report(args.output, diffs,
                      f"OK: {args.output.name} matches the regenerated {len(doc['cases'])} cases")
    dump(doc, args.output)
    fixed = sum(1 for c in doc["cases"] if c["parts"] is not None)
    print(f"wrote {args.output} with {len(doc['cases'])} cases ({fixed} with their parts fixed)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
