"""`missed_share` (the command line's `--missed-share`, specs/missed-share.md) in the Python
package.

Expected values: the default run moved by (S - 1/2) c^p (truth - estimate object-steps), the
object-steps counted from the demo's files, and the two costs S c^p and (1 - S) c^p by hand (the
Rust suite checks the values against scipy with the separate costs written into the LP).
"""

from pathlib import Path

import pytest

import switchyard

ROOT = Path(__file__).resolve().parents[2]
TRUTH = "demo-data/truth.csv"
ESTIMATE = "demo-data/tracker-swaps.csv"


@pytest.fixture(autouse=True)
def at_repository_root(monkeypatch):
    monkeypatch.chdir(ROOT)


def object_steps(path):
    """Rows after the header of a CSV file."""
    return len((ROOT / path).read_text().splitlines()) - 1


def test_score_moves_by_the_share_and_names_it():
    standard = switchyard.score(TRUTH, ESTIMATE, cutoff=20)
    shared = switchyard.score(TRUTH, ESTIMATE, cutoff=20, missed_share=0.8)
    # c = 20, p = 1: 0.3 x 20 per object-step of difference.
    difference = object_steps(TRUTH) - object_steps(ESTIMATE)
    assert shared.total == pytest.approx(standard.total + 0.3 * 20 * difference, rel=1e-12)
    assert shared.missed == pytest.approx(0.8 * 20 * standard.missed_count, rel=1e-12)
    assert shared.params["missed_share"] == 0.8
    assert "missed_share" not in standard.params
    # The standard share is the default, key for key.
    assert switchyard.score(TRUTH, ESTIMATE, cutoff=20, missed_share=0.5).to_dict() == standard.to_dict()


def test_audit_and_steps_price_missed_and_false_apart():
    # c = 20, p = 1, S = 0.8: a missed object-step costs 16, a false one 4. The demo's LP
    # optimum is integral, so each truth's missed cost is 16 per missed step.
    report = switchyard.audit(TRUTH, ESTIMATE, cutoff=20, missed_share=0.8).to_dict()
    assert report["params"]["missed_share"] == 0.8
    for truth in report["truths"]:
        assert truth["costs"]["missed"] == pytest.approx(16 * truth["missed_steps"], rel=1e-12, abs=1e-12)
    summary = switchyard.steps(TRUTH, ESTIMATE, cutoff=20, missed_share=0.8).to_dict()["summary"]
    assert summary["missed"] == pytest.approx(16 * summary["missed_count"], rel=1e-12)
    assert summary["false"] == pytest.approx(4 * summary["false_count"], rel=1e-12)


@pytest.mark.parametrize("share", [0.0, 1.0, -1.0, float("nan")])
def test_shares_outside_the_open_interval_are_refused(share):
    with pytest.raises(ValueError, match="the missed share must be a number strictly between 0 and 1"):
        switchyard.score(TRUTH, ESTIMATE, cutoff=20, missed_share=share)


def test_a_share_with_alpha_other_than_two_is_refused():
    switchyard.steps(TRUTH, ESTIMATE, cutoff=20, alpha=1, missed_share=0.5)
    with pytest.raises(ValueError, match="needs alpha = 2"):
        switchyard.steps(TRUTH, ESTIMATE, cutoff=20, alpha=1, missed_share=0.7)


def test_compare_keeps_the_share_of_the_scores():
    # Scores at S = 0.8 are compared at S = 0.8: the setting says so (as `compare
    # --missed-share 0.8` writes it) and each tracker's mean total is its own score's total.
    scores = {t: switchyard.score(TRUTH, f"demo-data/tracker-{t}.csv", cutoff=20, missed_share=0.8)
              for t in ("swaps", "fragments")}
    got = switchyard.compare([(t, None, None, s) for t, s in scores.items()]).to_dict()
    setting = got["settings"][0]
    assert setting["missed_share"] == 0.8
    for row in setting["trackers"]:
        assert row["total_mean"] == scores[row["tracker"]].total
    # Scores at the standard share keep the document without the key.
    standard = switchyard.score(TRUTH, ESTIMATE, cutoff=20)
    assert "missed_share" not in switchyard.compare([("swaps", None, None, standard)]).to_dict()["settings"][0]
