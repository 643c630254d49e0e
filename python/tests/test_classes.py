"""``class_column``: each class scored on its own, as the command line's ``--class-column``.

Expected documents: tests/snapshots/{score,switches,audit,steps}-classes.json, what
`switchyard COMMAND --truth tests/data/classes/truth.csv --estimate
tests/data/classes/estimate.csv --cutoff 5 --class-column kind --format json` printed (pinned by
tests/it/snapshots.rs; the sums over classes are checked against the whole-scene metric by
tests/it/classes.rs). Hand values follow the definition of trajectory GOSPA
(García-Fernández, Rahmathullah, Svensson, IEEE TSP 68:3917-3928, 2020) on the scene of
tests/data/classes/README.md, c = 5, p = 1, gamma = c.
"""

import warnings

import pytest

import switchyard

# Run from the repository root, where the snapshots' relative paths hold.
from test_results import at_repository_root, snapshot  # noqa: F401

TRUTH = "tests/data/classes/truth.csv"
ESTIMATE = "tests/data/classes/estimate.csv"
NAMES = {"truth_name": TRUTH, "estimate_name": ESTIMATE}
COMMANDS = {
    "score": switchyard.score,
    "switches": switchyard.switches,
    "audit": switchyard.audit,
    "steps": switchyard.steps,
}


def quiet(call, *args, **kwargs):
    """Calls without showing the note on the label that flips (it is checked below)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", switchyard.SolveNote)
        return call(*args, **kwargs)


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_paths_give_the_command_lines_documents(command):
    got = quiet(COMMANDS[command], TRUTH, ESTIMATE, cutoff=5, class_column="kind")
    expected = snapshot(f"{command}-classes.json")
    assert got.to_dict() == expected
    assert sorted(got.classes) == ["bike", "car", "person", "truck"]
    for name, part in got.classes.items():
        assert type(part) is type(got)
        assert part.to_dict() == expected["classes"][name]


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_tables_give_the_command_lines_documents(command):
    pd = pytest.importorskip("pandas")
    truth, estimate = pd.read_csv(TRUTH), pd.read_csv(ESTIMATE)
    got = quiet(COMMANDS[command], truth, estimate, cutoff=5, class_column="kind", **NAMES)
    assert got.to_dict() == snapshot(f"{command}-classes.json")


def test_score_by_class_by_hand():
    # Car: a-p (0.5) and b-q (0) at steps 1-3, then both tracks swap: two full switches
    # (2 gamma = 10) and 0.5 at steps 4-6, cheaper than leaving four objects unassigned for
    # three steps (30); the car piece of r (steps 3-4, 10.3 from a) is false: 2 x c/2 = 5.
    # Car: 1.5 + 1.5 + 10 + 5 = 18. Person: h-r at 0.3 for steps 1-2 (0.6), h missed at
    # steps 3-4 (5): 5.6. Bike (truth only): 2 steps missed, 5. Truck (estimate only): 5.
    with pytest.warns(switchyard.SolveNote, match="1 track carries more than one class"):
        got = switchyard.score(TRUTH, ESTIMATE, cutoff=5, class_column="kind")
    totals = {name: part.total for name, part in got.classes.items()}
    assert totals == pytest.approx({"car": 18.0, "person": 5.6, "bike": 5.0, "truck": 5.0}, abs=1e-9)
    assert got.total == pytest.approx(33.6, abs=1e-9)
    assert got.classes["car"].switch_count == pytest.approx(2.0, abs=0)
    assert any("estimate.csv: 1 track carries more than one class" in note for note in got.notes)
    # Without class_column the same files are one scene and no result has classes.
    assert switchyard.score(TRUTH, ESTIMATE, cutoff=5).classes is None


def test_class_errors():
    with pytest.raises(ValueError, match="there is no column 'sort'"):
        switchyard.score({"time": [1], "id": ["a"], "x": [0.0], "y": [0.0]}, TRUTH, cutoff=5, class_column="sort")
    with pytest.raises(ValueError, match='the header has no class column "sort"'):
        switchyard.score(TRUTH, ESTIMATE, cutoff=5, class_column="sort")
    table = {"time": [1, 2], "id": ["a", "a"], "x": [0.0, 0.0], "y": [0.0, 0.0], "kind": ["car", " "]}
    with pytest.raises(ValueError, match=r'truth: row 1, column "kind": the class is empty'):
        switchyard.steps(table, table, cutoff=5, class_column="kind")
    with pytest.raises(ValueError, match="the class column \"x\" is also the time, the id or a state column"):
        switchyard.steps(table, table, cutoff=5, class_column="x")
    with pytest.raises(ValueError, match="ospa2 does not go with class_column"):
        switchyard.steps(TRUTH, ESTIMATE, cutoff=5, class_column="kind", ospa2=True)
