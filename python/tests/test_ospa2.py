"""OSPA(2) (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object tracking",
IEEE Trans. Signal Processing 68:2754-2769, 2020) through ``score(ospa2=True)`` and
``steps(ospa2=True, ospa2_window=W)``.

Sources of the expected values:
- tests/snapshots/score-ospa2.json: what `switchyard score --truth demo-data/truth.csv
  --estimate demo-data/tracker-swaps.csv --cutoff 20 --ospa2 --format json` printed;
- tests/snapshots/steps-ospa2.json: what `switchyard steps --truth demo-data/truth.csv
  --estimate demo-data/tracker-swaps.csv --cutoff 20 --ospa2 --ospa2-window 10 --format json`
  printed (the command line's values are checked by the Rust suite against the scipy reference
  tests/reference/ospa2_reference.py and on hand-derived scenes);
- a scene derived by hand from the definition (in the test).
"""

import pytest

import switchyard

# The snapshots name their inputs by relative path: the autouse fixture runs from the
# repository root.
from test_results import at_repository_root, missing_as_none, snapshot  # noqa: F401

DEMO = ("demo-data/truth.csv", "demo-data/tracker-swaps.csv")


def test_score_ospa2_equals_the_command_lines_json():
    expected = snapshot("score-ospa2.json")
    got = switchyard.score(*DEMO, cutoff=20, ospa2=True)
    assert got.to_dict() == expected
    want = expected["ospa2"]
    second = got.ospa2
    assert isinstance(second, switchyard.Ospa2)
    for key in ("value", "cutoff", "order", "paired_power", "unpaired_power", "truths", "estimates"):
        assert getattr(second, key) == want[key], key
    pairs = second.pairs
    assert list(pairs["truth"]) == [p["truth"] for p in want["pairs"]]
    assert list(pairs["estimate"]) == [p["estimate"] for p in want["pairs"]]
    assert list(pairs["distance"]) == [p["distance"] for p in want["pairs"]]
    # The parts add up to value^p (specs/ospa2.md), here p = 1.
    assert second.paired_power + second.unpaired_power == pytest.approx(second.value, rel=1e-12)
    # Without ospa2 the document and the object carry none (tests/snapshots/score.json).
    plain = switchyard.score(*DEMO, cutoff=20)
    assert plain.ospa2 is None
    assert plain.to_dict() == snapshot("score.json")


def test_steps_ospa2_equals_the_command_lines_json():
    expected = snapshot("steps-ospa2.json")
    got = switchyard.steps(*DEMO, cutoff=20, ospa2=True, ospa2_window=10)
    assert got.to_dict() == expected
    assert got.ospa2 == {"cutoff": 20.0, "order": 1.0, "window": 10}
    table = got.table
    for column in ("ospa2", "ospa2_paired_power", "ospa2_unpaired_power", "ospa2_pairs"):
        assert [missing_as_none(v) for v in table[column]] == [s[column] for s in expected["steps"]], column
    # Without ospa2 the table has no such column and the document is steps.json.
    plain = switchyard.steps(*DEMO, cutoff=20)
    assert plain.ospa2 is None
    assert "ospa2" not in list(plain.table.keys() if isinstance(plain.table, dict) else plain.table.columns)
    assert plain.to_dict() == snapshot("steps.json")


def test_steps_ospa2_hand_case_from_a_table():
    # Derived by hand from the definition (specs/ospa2.md), c = 2, p = 1, window of 2 steps:
    # truth a on x = 0 at steps 1-4; track p at x = 0.5 (steps 1-2) and 5 (steps 3-4), track q
    # at x = 0 (steps 3-4).
    #   step 1, window [1, 1]: d(a, p) = 0.5, one truth, one track: 0.5;
    #   step 2, window [1, 2]: d(a, p) = 0.5: 0.5;
    #   step 3, window [2, 3]: d(a, p) = (0.5 + 2) / 2 = 1.25, d(a, q) = (2 + 0) / 2 = 1, one
    #     truth, two tracks: a-q, (1 + 2) / 2 = 1.5 (paired 0.5, unpaired 1);
    #   step 4, window [3, 4]: d(a, p) = 2, d(a, q) = 0: (0 + 2) / 2 = 1 (paired 0, unpaired 1).
    truth = {"time": [1, 2, 3, 4], "id": ["a"] * 4, "x": [0.0] * 4}
    estimate = {"time": [1, 2, 3, 4, 3, 4], "id": ["p"] * 4 + ["q"] * 2, "x": [0.5, 0.5, 5.0, 5.0, 0.0, 0.0]}
    got = switchyard.steps(truth, estimate, cutoff=2, state_columns=["x"], ospa2=True, ospa2_window=2)
    table = got.table
    assert list(table["ospa2"]) == pytest.approx([0.5, 0.5, 1.5, 1.0], abs=1e-12)
    assert list(table["ospa2_paired_power"]) == pytest.approx([0.5, 0.5, 0.5, 0.0], abs=1e-12)
    assert list(table["ospa2_unpaired_power"]) == pytest.approx([0.0, 0.0, 1.0, 1.0], abs=1e-12)
    assert list(table["ospa2_pairs"]) == [1, 1, 1, 1]
    # The whole window (score): d(a, p) = (0.5 + 0.5 + 2 + 2) / 4 = 1.25, d(a, q) = (2 + 2 + 0
    # + 0) / 4 = 1: a-q, (1 + 2) / 2 = 1.5.
    whole = switchyard.score(truth, estimate, cutoff=2, state_columns=["x"], ospa2=True).ospa2
    assert whole.value == pytest.approx(1.5, abs=1e-12)
    assert (list(whole.pairs["truth"]), list(whole.pairs["estimate"])) == (["a"], ["q"])


def test_steps_ospa2_window_without_a_state_is_missing():
    # By hand, c = 2, p = 1, window of 5 steps: truth a on x = 0 at steps 1, 2 and 40; track p
    # at x = 1 (step 1) and 3 (step 2). The windows ending at 7 to 39 hold no state: missing.
    # Step 6, window [2, 6]: d(a, p) = 2 = c, no pair: 2. Step 40, a alone: 2.
    truth = {"time": [1, 2, 40], "id": ["a"] * 3, "x": [0.0] * 3}
    estimate = {"time": [1, 2], "id": ["p"] * 2, "x": [1.0, 3.0]}
    got = switchyard.steps(truth, estimate, cutoff=2, state_columns=["x"], ospa2=True, ospa2_window=5)
    values = [missing_as_none(v) for v in got.table["ospa2"]]
    assert len(values) == 40
    assert values[:6] == pytest.approx([1.0, 1.5, 1.5, 1.5, 1.5, 2.0], abs=1e-12)
    assert values[6:39] == [None] * 33
    assert values[39] == pytest.approx(2.0, abs=1e-12)
    assert got.to_dict()["steps"][10]["ospa2_pairs"] is None


@pytest.mark.parametrize(
    "call, message",
    [
        (lambda: switchyard.steps(*DEMO, cutoff=20, ospa2_window=3), "ospa2_window applies only with ospa2=True"),
        (lambda: switchyard.steps(*DEMO, cutoff=20, ospa2=True, ospa2_window=0), "ospa2_window must be a whole number"),
        (lambda: switchyard.steps(*DEMO, cutoff=20, ospa2=True, ospa2_window=True), "ospa2_window must be a whole number"),
        (lambda: switchyard.steps(*DEMO, cutoff=20, ospa2=True, ospa2_window=2.5), "ospa2_window must be a whole number"),
        (lambda: switchyard.steps(*DEMO, cutoff=20, ospa2=True, ospa2_window=2**32), "ospa2_window must be a whole number"),
    ],
)
def test_bad_ospa2_window_is_a_value_error(call, message):
    with pytest.raises(ValueError, match=message):
        call()
