"""The Python package against the command line's own outputs.

Expected values come from tests/snapshots/score.json and steps.json: what `switchyard score`
and `switchyard steps` with `--truth demo-data/truth.csv --estimate demo-data/tracker-swaps.csv
--cutoff 20 --format json` printed (their numbers are checked independently by the Rust suite
against scipy references).
"""

import json
import os
from pathlib import Path

import pytest

import switchyard

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(autouse=True)
def at_repository_root(monkeypatch):
    # The snapshot names its inputs by relative path, so score from the same directory.
    monkeypatch.chdir(ROOT)


def test_score_document_equals_the_command_lines_json():
    expected = json.loads((ROOT / "tests/snapshots/score.json").read_text())
    got = switchyard.score("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20)
    # Same serde structs, same serialiser: equal key for key, floats bit for bit.
    assert got.to_dict() == expected
    assert got.total == pytest.approx(15103.590357841626, rel=0, abs=0)
    # Each attribute is its key of the document.
    for key in ("metric", "total", "per_step", "steps", "localisation", "localization", "missed", "false", "switching",
                "missed_count", "false_count", "switch_count", "integral", "lp_total", "exact_total",
                "exact", "engine", "lp", "certificate", "params", "inputs"):
        assert getattr(got, key) == expected[key], key
    assert got.proven is expected["certificate"]["proven"]
    assert got.window == (expected["window"]["first"], expected["window"]["last"])


def test_steps_document_equals_the_command_lines_json():
    expected = json.loads((ROOT / "tests/snapshots/steps.json").read_text())
    got = switchyard.steps("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20)
    assert got.to_dict() == expected
    assert got.summary == expected["summary"]
    # steps.json: 10 truths, no estimate at time 0, cut-off 20, alpha 2: 10 * 20 / 2 = 100.
    assert got.table["gospa"][0] == pytest.approx(100.0, abs=1e-12)


def test_exact_score_equals_the_command_lines_json():
    # tests/snapshots/score-exact.json: `score --truth demo-data/truth.csv --estimate
    # demo-data/tracker-fragments.csv --cutoff 10 --exact --format json`.
    expected = json.loads((ROOT / "tests/snapshots/score-exact.json").read_text())
    got = switchyard.score(
        "demo-data/truth.csv", "demo-data/tracker-fragments.csv", cutoff=10, exact=True
    )
    assert got.to_dict() == expected


def test_unknown_engine_is_a_value_error():
    with pytest.raises(ValueError, match="unknown engine \"simplex\""):
        switchyard.score("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20, engine="simplex")


def test_path_objects_are_accepted():
    got = switchyard.score(Path("demo-data/truth.csv"), Path("demo-data/tracker-swaps.csv"), cutoff=20)
    assert got.switch_count == pytest.approx(12.0, abs=0)  # score.json, "switch_count"


def test_bad_parameter_is_a_value_error():
    with pytest.raises(ValueError, match=r"invalid parameter: the cut-off must be a positive finite number, got -1"):
        switchyard.score("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=-1)


def test_bad_csv_names_file_line_and_column(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("time,id,x,y\n0,1,1.0,2.0\n1,1,oops,2.0\n")
    with pytest.raises(ValueError) as caught:
        switchyard.score("demo-data/truth.csv", str(bad), cutoff=20)
    message = str(caught.value)
    assert str(bad) in message
    assert "line 3" in message
    assert "oops" in message or "x" in message


def test_missing_file_is_a_value_error_naming_it():
    with pytest.raises(ValueError, match="no-such-file.csv"):
        switchyard.score("demo-data/truth.csv", "no-such-file.csv", cutoff=20)


def test_memory_budget_too_small_is_a_memory_error():
    # The command line exits 4 with "over the memory budget" when the candidate pairs alone
    # would not fit (src/cmd/mod.rs, exit codes); the package raises MemoryError with that text.
    with pytest.raises(MemoryError, match="over the memory budget"):
        switchyard.score("demo-data/truth.csv", "demo-data/tracker-swaps.csv", cutoff=20, memory_budget=1)
