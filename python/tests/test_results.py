"""Result objects of switches, audit and steps, and values on generated scenes.

Sources of the expected values:
- tests/snapshots/switches.json and audit.json: what `switchyard switches --truth
  demo-data/truth.csv --estimate demo-data/tracker-fragments.csv --cutoff 20 --format json` and
  `switchyard audit ... --estimate demo-data/tracker-swaps.csv ...` printed.
- tests/data/reference/trajectory_cases.json: trajectory GOSPA (García-Fernández, Rahmathullah,
  Svensson, IEEE TSP 68:3917-3928, 2020) of hand and seeded random scenes, from the full LP and
  integer program solved by scipy (tests/reference/trajectory_reference.py), not by switchyard.
- tests/data/reference/per_step_cases.json: per-step GOSPA (Rahmathullah, García-Fernández,
  Svensson, FUSION 2017) by scipy's linear_sum_assignment (tests/reference/per_step_reference.py).
"""

import json
import math
from pathlib import Path

import pytest

import switchyard

ROOT = Path(__file__).resolve().parents[2]
REFERENCE = ROOT / "tests/data/reference"


@pytest.fixture(autouse=True)
def at_repository_root(monkeypatch):
    monkeypatch.chdir(ROOT)


def snapshot(name):
    return json.loads((ROOT / "tests/snapshots" / name).read_text())


def missing_as_none(value):
    # pandas shows a missing id (unassigned) as NaN; the document as null.
    return None if isinstance(value, float) and math.isnan(value) else value


def rows(table, columns):
    """The rows of a table (DataFrame or dict of columns) as tuples, missing values as None."""
    return [tuple(map(missing_as_none, row)) for row in zip(*(list(table[c]) for c in columns))]


def test_switches_document_and_tables():
    expected = snapshot("switches.json")
    got = switchyard.switches("demo-data/truth.csv", "demo-data/tracker-fragments.csv", cutoff=20)
    assert got.to_dict() == expected
    assert got.switching == expected["switching"] and got.switch_count == expected["switch_count"]
    columns = ["time", "truth", "from", "to", "weight", "cost"]
    assert rows(got.switches, columns) == [tuple(e[c] for c in columns) for e in expected["switches"]]
    columns = ["time", "estimate", "from", "to", "weight", "cost"]
    assert rows(got.jumps, columns) == [tuple(e[c] for c in columns) for e in expected["jumps"]]
    # The switching part is the sum of the events' costs (specs/formats.md; switches.json has
    # switching 1240 = 62 switches at gamma^p = 20).
    assert sum(got.switches["cost"]) == pytest.approx(1240.0, abs=1e-9)


def test_audit_document_and_tables():
    expected = snapshot("audit.json")
    got = switchyard.audit("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20)
    assert got.to_dict() == expected
    truths = got.truths
    assert list(truths["truth"]) == [t["truth"] for t in expected["truths"]]
    assert list(truths["rank"]) == list(range(1, len(expected["truths"]) + 1))
    covered = got.covered
    want = [(t["truth"], s["first"], s["last"], s["estimate"]) for t in expected["truths"] for s in t["covered"]]
    assert rows(covered, ["truth", "first", "last", "estimate"]) == want
    # audit.json: T4, the worst covered, is first covered by E4 over steps 2-41 with a mean
    # error 3.7873486433511347.
    assert covered["mean_error"][0] == pytest.approx(3.7873486433511347, rel=1e-15)
    want = [(t["truth"], s["first"], s["last"]) for t in expected["truths"] for s in t["missed"]]
    assert rows(got.missed, ["truth", "first", "last"]) == want
    assert list(got.estimates["estimate"]) == [e["estimate"] for e in expected["estimates"]]
    want = [(e["estimate"], s["first"], s["truth"]) for e in expected["estimates"] for s in e["following"]]
    assert rows(got.following, ["estimate", "first", "truth"]) == want
    want = [(e["estimate"], s["first"], s["last"]) for e in expected["estimates"] for s in e["false_spans"]]
    assert rows(got.false_spans, ["estimate", "first", "last"]) == want
    # top keeps the worst-covered truths, as `audit --top`.
    top = switchyard.audit("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20, top=5)
    assert top.to_dict()["truths"] == expected["truths"][:5]
    with pytest.raises(ValueError, match="top must be a count >= 0"):
        switchyard.audit("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20, top=-1)


def as_columns(objects, dim):
    """A reference scene ({id: [[step, state], ...]}) as a mapping of lists."""
    table = {"time": [], "id": [], "x": [], "y": []}
    for name, points in objects.items():
        for step, state in points:
            table["time"].append(step)
            table["id"].append(name)
            for k, axis in enumerate("xy"[:dim]):
                table[axis].append(state[k])
    return {key: value for key, value in table.items() if key not in "xy"[dim:]}


def scene_dim(case):
    for objects in (case["truth"], case["estimate"]):
        for points in objects.values():
            if points:
                return len(points[0][1])
    return 1


TRAJECTORY_CASES = json.loads((REFERENCE / "trajectory_cases.json").read_text())["cases"]


@pytest.mark.parametrize("exact", [False, True], ids=["lp", "exact"])
def test_trajectory_scenes_match_the_scipy_reference(exact):
    for number, case in enumerate(TRAJECTORY_CASES):
        dim = scene_dim(case)
        got = switchyard.score(
            as_columns(case["truth"], dim),
            as_columns(case["estimate"], dim),
            cutoff=case["cutoff"],
            order=case["order"],
            switch_penalty=case["switch_penalty"],
            state_columns=["x", "y"][:dim],
            exact=exact,
        )
        expected = case["exact_total"] if exact else case["lp_total"]
        # The reference solves the LP with HiGHS to its default tolerance (1e-7 relative).
        assert got.total == pytest.approx(expected, rel=1e-6, abs=1e-6), f"case {number}"
        assert got.localisation + got.missed + got.false + got.switching == pytest.approx(got.total, rel=1e-9)


def test_trajectory_scenes_as_arrays_give_the_same_documents():
    numpy = pytest.importorskip("numpy")
    for number, case in enumerate(TRAJECTORY_CASES[:20]):
        dim = scene_dim(case)
        tables = []
        for objects in (case["truth"], case["estimate"]):
            columns = as_columns(objects, dim)
            # Numeric ids for a float array: the id's position in the scene.
            ids = {name: k for k, name in enumerate(objects)}
            columns["id"] = [ids[name] for name in columns["id"]]
            tables.append(columns)
        names = ["time", "id", "x", "y"][: 2 + dim]
        arrays = [numpy.array([t[c] for c in names], dtype=float).T.reshape(-1, len(names)) for t in tables]
        kwargs = dict(cutoff=case["cutoff"], order=case["order"], switch_penalty=case["switch_penalty"], state_columns=names[2:])
        from_arrays = switchyard.score(*arrays, columns=names, **kwargs)
        from_lists = switchyard.score(*tables, **kwargs)
        assert from_arrays.to_dict() == from_lists.to_dict(), f"case {number}"
        assert from_arrays.total == pytest.approx(case["lp_total"], rel=1e-6, abs=1e-6), f"case {number}"


def test_per_step_gospa_matches_the_scipy_reference():
    cases = json.loads((REFERENCE / "per_step_cases.json").read_text())["cases"]
    for number, case in enumerate(cases):
        dim = len((case["truth"] or case["estimate"] or [[0.0]])[0])
        axes = ["x", "y", "z"][:dim]
        tables = [
            {"time": [0] * len(points), "id": [f"o{k}" for k in range(len(points))], **{a: [p[i] for p in points] for i, a in enumerate(axes)}}
            for points in (case["truth"], case["estimate"])
        ]
        got = switchyard.steps(*tables, cutoff=case["cutoff"], order=case["order"], alpha=case["alpha"], state_columns=axes)
        if not case["truth"] and not case["estimate"]:
            assert got.window is None and got.to_dict()["steps"] == []
            continue
        step = got.to_dict()["steps"][0]
        assert step["gospa"] ** case["order"] == pytest.approx(case["power"], rel=1e-9, abs=1e-12), f"case {number}"
        # The reference file names the part "localization"; the document spells it localisation.
        for part, key in (("localisation", "localization"), ("missed", "missed"), ("false", "false")):
            if case[key] is None:
                assert step[part] is None
            else:
                assert step[part] == pytest.approx(case[key], rel=1e-9, abs=1e-12), f"case {number} {part}"
        if case["missed_count"] is not None:  # counted by the reference for alpha = 2 only
            assert (step["missed_count"], step["false_count"]) == (case["missed_count"], case["false_count"])


def test_swap_scene_by_hand():
    # metric definition (García-Fernández et al. 2020), worked by hand: truths a at 0 and b at
    # 10 over steps 1-4; estimates p = 0, 0, 10, 10 and q = 10, 10, 0, 0 swap at step 3. With
    # c = 5, p = 1 the best is min(2 gamma, 4c): follow the swap (two full switches, gamma each)
    # or leave both unassigned after it (4 steps x 2 objects x c/2 = 20).
    truth = {"time": [1, 2, 3, 4] * 2, "id": ["a"] * 4 + ["b"] * 4, "x": [0.0] * 4 + [10.0] * 4}
    estimate = {"time": [1, 2, 3, 4] * 2, "id": ["p"] * 4 + ["q"] * 4, "x": [0, 0, 10, 10, 10, 10, 0, 0]}
    for gamma, total in [(1, 2.0), (6, 12.0), (11, 20.0)]:
        got = switchyard.score(truth, estimate, cutoff=5, switch_penalty=gamma, state_columns=["x"])
        assert got.total == pytest.approx(total, abs=1e-9)
        assert got.metric == pytest.approx(total, abs=1e-9)  # d = d^p at p = 1
    assert (got.localisation, got.missed, got.false, got.switching) == pytest.approx((0.0, 10.0, 10.0, 0.0), abs=1e-9)
    # c = 5, p = 2, gamma = 2: two full switches at gamma^p = 4 each, all switching.
    got = switchyard.score(truth, estimate, cutoff=5, order=2, switch_penalty=2, state_columns=["x"])
    assert got.total == pytest.approx(8.0, abs=1e-9) and got.switching == pytest.approx(8.0, abs=1e-9)
    assert got.metric == pytest.approx(math.sqrt(8.0), rel=1e-12)
    assert got.switch_count == pytest.approx(2.0, abs=0)


def test_compare_refuses_incomplete_or_repeated_scores():
    truth = ROOT / "demo-data/truth.csv"
    a = switchyard.score(truth, ROOT / "demo-data/tracker-swaps.csv", cutoff=20)
    b = switchyard.score(truth, ROOT / "demo-data/tracker-fragments.csv", cutoff=20)
    with pytest.raises(ValueError, match="no score of tracker 'b' for sequence '', run '2'"):
        switchyard.compare([("a", None, 1, a), ("a", None, 2, a), ("b", None, 1, b)])
    with pytest.raises(ValueError, match="two scores of tracker 'a' for sequence '', run '1'"):
        switchyard.compare([("a", None, 1, a), ("a", None, 1, b)])
    with pytest.raises(ValueError, match="the number of bootstrap resamples must lie between 1"):
        switchyard.compare([("a", None, 1, a), ("b", None, 1, b)], resamples=0)
