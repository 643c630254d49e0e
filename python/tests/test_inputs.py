"""Every kind of input gives the command line's result; bad tables are refused by row and column.

Expected documents: tests/snapshots/score.json, steps.json (what `switchyard score` and
`switchyard steps --truth demo-data/truth.csv --estimate demo-data/tracker-swaps.csv --cutoff 20
--format json` printed; their numbers are checked by the Rust suite against scipy references).
"""

import json
from pathlib import Path

import pytest

import switchyard

np = pytest.importorskip("numpy")
pd = pytest.importorskip("pandas")

ROOT = Path(__file__).resolve().parents[2]
TRUTH = "demo-data/truth.csv"
ESTIMATE = "demo-data/tracker-swaps.csv"
# The inputs' names in the snapshots, given to tables so that the whole documents match.
NAMES = {"truth_name": TRUTH, "estimate_name": ESTIMATE}


@pytest.fixture(autouse=True)
def at_repository_root(monkeypatch):
    monkeypatch.chdir(ROOT)


def snapshot(name):
    return json.loads((ROOT / "tests/snapshots" / name).read_text())


def frames():
    return pd.read_csv(TRUTH), pd.read_csv(ESTIMATE)


def test_dataframes_give_the_command_lines_documents():
    truth, estimate = frames()
    assert switchyard.score(truth, estimate, cutoff=20, **NAMES).to_dict() == snapshot("score.json")
    assert switchyard.steps(truth, estimate, cutoff=20, **NAMES).to_dict() == snapshot("steps.json")


def test_dataframe_numpy_dict_list_dict_and_path_inputs_agree():
    truth, estimate = frames()
    expected = snapshot("score.json")
    inputs = [
        (TRUTH, ESTIMATE),
        (truth, estimate),
        ({c: truth[c].to_numpy() for c in truth.columns}, {c: estimate[c].to_numpy() for c in estimate.columns}),
        ({c: truth[c].tolist() for c in truth.columns}, {c: estimate[c].tolist() for c in estimate.columns}),
        (truth, ESTIMATE),
    ]
    for t, e in inputs:
        got = switchyard.score(t, e, cutoff=20, **NAMES)
        assert got.to_dict() == expected
        assert got.total == pytest.approx(15103.590357841626, rel=0, abs=0)  # score.json "total"


def numeric(frame):
    """The frame with ids as numbers ("T12" -> 12): a 2-D float array can hold it."""
    return frame.assign(id=frame["id"].str[1:].astype(int))


def test_two_dimensional_arrays():
    truth, estimate = frames()
    truth, estimate = numeric(truth), numeric(estimate)
    from_frames = switchyard.score(truth, estimate, cutoff=20)
    # Default columns: time, id, x, y.
    t = truth[["time", "id", "x", "y"]].to_numpy(dtype=float)
    e = estimate[["time", "id", "x", "y"]].to_numpy(dtype=float)
    assert switchyard.score(t, e, cutoff=20).to_dict() == from_frames.to_dict()
    # Other orders, named by columns=; ids 7.0 of a float array are the objects 7 of the frame.
    order = ["x", "id", "y", "time"]
    t, e = truth[order].to_numpy(dtype=float), estimate[order].to_numpy(dtype=float)
    got = switchyard.score(t, e, cutoff=20, columns=order)
    assert got.to_dict() == from_frames.to_dict()
    # Renaming ids does not change the value: score.json "total".
    assert got.total == pytest.approx(15103.590357841626, rel=1e-12)
    with pytest.raises(ValueError, match="a 2-D array of 3 columns needs columns="):
        switchyard.score(t[:, :3], e, cutoff=20)


def test_renamed_columns_and_decimal_times():
    truth, estimate = frames()
    renamed = {"time": "t", "id": "track", "x": "east", "y": "north"}
    # Times in seconds at 0.1 s a step: step = round(t / 0.1) gives back the integer steps.
    t = truth.rename(columns=renamed).assign(t=truth["time"] * 0.1)
    e = estimate.rename(columns=renamed).assign(t=estimate["time"] * 0.1)
    got = switchyard.score(
        t, e, cutoff=20, time_column="t", id_column="track", state_columns=["east", "north"], time_step=0.1, **NAMES
    )
    # The command line's document (score.json) plus what a step size and other state column
    # names add (specs/formats.md, "Time in the input's units"): inputs.time_step, the state
    # columns as named, and each event's input_time = step x 0.1.
    expected = snapshot("score.json")
    expected["inputs"]["time_step"] = 0.1
    expected["inputs"]["state_columns"] = ["east", "north"]
    for event in expected["switches"] + expected["jumps"]:
        event["input_time"] = round(event["time"] * 0.1, 1)
    assert got.to_dict() == expected
    # Without the time step: rows 0-9 are the 10 truths at time 0 (steps.json, step 0), row 10
    # the first at time 0.1.
    with pytest.raises(ValueError, match=r'truth: row 10, column "t": the time 0.1 is not an integer step'):
        switchyard.score(t, e, cutoff=20, time_column="t", id_column="track", state_columns=["east", "north"])


def small(rows):
    return pd.DataFrame(rows, columns=["time", "id", "x", "y"])


GOOD = small([(0, "a", 0.0, 0.0), (1, "a", 1.0, 0.0), (2, "a", 2.0, 0.0)])


@pytest.mark.parametrize(
    "rows, message",
    [
        ([(0, "a", 0.0, 0.0), (1, "a", float("nan"), 0.0)], r'estimate: row 1, column "x": expected a finite number, found NaN'),
        ([(0, "a", 0.0, 0.0), (1, "a", 1.0, float("inf"))], r'estimate: row 1, column "y": expected a finite number, found inf'),
        ([(0, "a", 0.0, 0.0), (0, "a", 1.0, 0.0)], r'estimate: row 1, column "time": id "a" has a second row at step 0 \(the first is row 0\)'),
        ([(0, "a", 0.0, 0.0), (1, None, 1.0, 0.0)], r'estimate: row 1, column "id": the id is empty or missing'),
        ([(0, "a", 0.0, 0.0), (1.5, "a", 1.0, 0.0)], r'estimate: row 1, column "time": the time 1.5 is not an integer step'),
        ([(0, "a", 0.0, 0.0), (1, "a", "far", 0.0)], r"estimate: row 1, column 'x': expected a number, found 'far'"),
    ],
)
def test_bad_cells_are_named_by_row_and_column(rows, message):
    with pytest.raises(ValueError, match=message):
        switchyard.score(GOOD, small(rows), cutoff=5)


def test_bad_tables_are_value_errors():
    with pytest.raises(ValueError, match=r"truth: there is no column 'x' \(it has: 'time', 'id', 'east', 'y'\)"):
        switchyard.score(GOOD.rename(columns={"x": "east"}), GOOD, cutoff=5)
    with pytest.raises(ValueError, match=r"estimate: column 'x' has 2 values but column 'time' has 3"):
        switchyard.score(GOOD, {"time": [0, 1, 2], "id": ["a"] * 3, "x": [0.0, 1.0], "y": [0.0] * 3}, cutoff=5)
    with pytest.raises(ValueError, match=r"tracker-7: row 0, column \"x\""):
        switchyard.score(GOOD, small([(0, "a", np.nan, 0.0)]), cutoff=5, estimate_name="tracker-7")
    with pytest.raises(TypeError, match="expected a CSV path, a pandas DataFrame"):
        switchyard.score(GOOD, 42, cutoff=5)
    # The command line's checks of the two inputs still apply: 2 state columns against 1.
    # (x, y against x, y, z by default).
    with pytest.raises(ValueError, match="both files need the same state dimensions"):
        switchyard.score(GOOD, GOOD.assign(z=0.0), cutoff=5)


def test_without_pandas_and_numpy_lists_in_lists_out(monkeypatch):
    # Hide both optional libraries from the package: a mapping of lists goes in, dicts of
    # lists come out.
    monkeypatch.setattr(switchyard._inputs, "numpy_module", lambda: None)
    monkeypatch.setattr(switchyard._results, "_pandas", lambda: None)
    truth, estimate = frames()
    t = {c: truth[c].tolist() for c in truth.columns}
    e = {c: estimate[c].tolist() for c in estimate.columns}
    got = switchyard.score(t, e, cutoff=20, **NAMES)
    assert got.to_dict() == snapshot("score.json")
    switches = got.switches
    assert isinstance(switches, dict) and isinstance(switches["time"], list)
    # score.json: the first switch is T1 from E1 to E13 at step 39.
    assert (switches["time"][0], switches["truth"][0], switches["from"][0], switches["to"][0]) == (39, "T1", "E1", "E13")
    with pytest.raises(ValueError, match=r"estimate: row 1, column 'x': expected a number, found 'far'"):
        switchyard.score(GOOD.to_dict("list"), small([(0, "a", 0.0, 0.0), (1, "a", "far", 0.0)]).to_dict("list"), cutoff=5)


def test_without_pandas_tables_are_dicts_of_arrays(monkeypatch):
    monkeypatch.setattr(switchyard._results, "_pandas", lambda: None)
    got = switchyard.steps(TRUTH, ESTIMATE, cutoff=20)
    table = got.table
    assert isinstance(table["gospa"], np.ndarray)
    # steps.json: 300 steps; the first has 10 truths and no estimate: 10 * 20 / 2 = 100.
    assert table["gospa"].shape == (300,)
    assert table["gospa"][0] == pytest.approx(100.0, abs=1e-12)


def test_distances_by_hand():
    # Two truths over 3 steps, each estimate offset by (1, 1), cut-off 5, order 1, no switch:
    # d^p = 6 object-steps x the distance of the offset (common practice definitions):
    # euclidean sqrt(2), weighted euclidean (4, 1) sqrt(4 + 1), manhattan 2, chebyshev 1,
    # weighted chebyshev (3, 1) 3.
    truth = {"time": [0, 0, 1, 1, 2, 2], "id": ["a", "b"] * 3, "x": [0, 10, 1, 11, 2, 12], "y": [0.0] * 6}
    estimate = {"time": truth["time"], "id": ["p", "q"] * 3, "x": [v + 1 for v in truth["x"]], "y": [1.0] * 6}
    cases = [
        ({}, 2 ** 0.5),
        ({"weights": [4, 1]}, 5 ** 0.5),
        ({"distance": "manhattan"}, 2.0),
        ({"distance": "chebyshev"}, 1.0),
        ({"distance": "chebyshev", "weights": [3, 1]}, 3.0),
    ]
    for options, distance in cases:
        got = switchyard.score(truth, estimate, cutoff=5, **options)
        assert got.total == pytest.approx(6 * distance, rel=1e-12), options
        assert got.inputs["distance"] == options.get("distance", "euclidean")
    with pytest.raises(ValueError, match="the iou distance needs state_columns"):
        switchyard.score(truth, estimate, cutoff=0.5, distance="iou")
    with pytest.raises(ValueError, match="weights apply to the euclidean, manhattan and chebyshev distances, not to iou"):
        switchyard.score(truth, estimate, cutoff=0.5, distance="iou", weights=[1, 1, 1, 1], state_columns=["x", "y", "x", "y"])
    with pytest.raises(ValueError, match="3 column weights given for 2 state columns"):
        switchyard.score(truth, estimate, cutoff=5, weights=[1, 1, 1])
    with pytest.raises(ValueError, match='unknown distance "cosine"'):
        switchyard.score(truth, estimate, cutoff=5, distance="cosine")
