"""Data-set scale on Dask distributed: every (tracker, sequence, run, setting) scored on a worker
process, the scores aggregated by switchyard.compare, equal to `switchyard compare`.

Expected documents: tests/snapshots/compare.json (`switchyard compare --truth
demo-data/truth.csv --estimate swaps=demo-data/runs/tracker-swaps.csv --estimate
fragments=demo-data/runs/tracker-fragments.csv --cutoff 20 --switch-penalty 5,20 --format json`)
and compare-sequences.json (`... --truth tests/data/sequences/truth.csv --estimate
swaps=tests/data/sequences/swaps.csv ... --cutoff 20 --per-sequence --format json`): what the
command printed; its per-case values are checked by the Rust suite against scipy references.
"""

import functools
import json
from pathlib import Path

import pytest

import switchyard

pd = pytest.importorskip("pandas")
pytest.importorskip("dask")
distributed = pytest.importorskip("distributed")

ROOT = Path(__file__).resolve().parents[2]
TRACKERS = ("swaps", "fragments")


def snapshot(name):
    return json.loads((ROOT / "tests/snapshots" / name).read_text())


@pytest.fixture(scope="module")
def client():
    # Two worker processes, one thread each: the same code runs on a real cluster's scheduler.
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    with distributed.Client(cluster) as client:
        yield client
    cluster.close()


def score_on(client, jobs, **parameters):
    """Scores (tracker, sequence, run, truth, estimate) jobs on the cluster, in job order."""
    score = functools.partial(switchyard.score, **parameters)
    futures = client.map(score, [job[3] for job in jobs], [job[4] for job in jobs], pure=False)
    scores = client.gather(futures)
    return [(tracker, sequence, run, result) for (tracker, sequence, run, _, _), result in zip(jobs, scores)]


def test_monte_carlo_runs_on_dask_equal_the_command(client):
    truth = pd.read_csv(ROOT / "demo-data/truth.csv")
    jobs = []
    for tracker in TRACKERS:
        estimate = pd.read_csv(ROOT / f"demo-data/runs/tracker-{tracker}.csv")
        for run, rows in estimate.groupby("run", sort=False):
            jobs.append((tracker, None, run, truth, rows))
    results = []
    for penalty in (5, 20):
        results += score_on(client, jobs, cutoff=20, switch_penalty=penalty)
    assert len(results) == 2 * 8 * 2  # compare.json: 2 trackers, 8 cases, 2 settings
    got = switchyard.compare(
        results,
        truth_name="demo-data/truth.csv",
        estimate_names={t: f"demo-data/runs/tracker-{t}.csv" for t in TRACKERS},
    )
    expected = snapshot("compare.json")
    assert got.to_dict() == expected
    # compare.json: fragments against swaps at switching penalty 5, mean difference of d.
    assert got.settings[0]["trackers"][1]["difference"]["mean"] == pytest.approx(7145.319665308725, rel=1e-15)
    assert got.ranking_stable is True


def sequence_jobs():
    """(tracker, sequence, run, truth, estimate) of tests/data/sequences, one per sequence."""
    base = ROOT / "tests/data/sequences"
    truth = pd.read_csv(base / "truth.csv")
    truths = dict(tuple(truth.groupby("sequence", sort=False)))
    jobs = []
    for tracker in TRACKERS:
        estimate = pd.read_csv(base / f"{tracker}.csv")
        for sequence, rows in estimate.groupby("sequence", sort=False):
            jobs.append((tracker, sequence, None, truths[sequence], rows))
    return jobs


def test_sequences_on_dask_equal_the_command(client):
    jobs = sequence_jobs()
    results = score_on(client, jobs, cutoff=20)
    got = switchyard.compare(
        results,
        per_sequence=True,
        truth_name="tests/data/sequences/truth.csv",
        estimate_names={t: f"tests/data/sequences/{t}.csv" for t in TRACKERS},
    )
    assert got.to_dict() == snapshot("compare-sequences.json")
    # The same scores computed in this process give the same document: where they are
    # computed does not matter.
    local = [(t, s, r, switchyard.score(a, b, cutoff=20)) for t, s, r, a, b in jobs]
    assert switchyard.compare(local, per_sequence=True).to_dict()["settings"] == got.to_dict()["settings"]



def test_case_rows_and_per_step_ranking_equal_the_command():
    # compare-cases.json: `switchyard compare --truth tests/data/sequences/truth.csv --estimate
    # swaps=... --estimate fragments=... --cutoff 20 --per-case --rank-by per-step --format json`.
    results = [(t, s, r, switchyard.score(a, b, cutoff=20)) for t, s, r, a, b in sequence_jobs()]
    got = switchyard.compare(
        results,
        rank_by="per_step",
        per_case=True,
        truth_name="tests/data/sequences/truth.csv",
        estimate_names={t: f"tests/data/sequences/{t}.csv" for t in TRACKERS},
    )
    assert got.to_dict() == snapshot("compare-cases.json")
    assert got.rank_by == "per_step"
    # Per step by hand: each case's d^p / steps (p = 1, 60 steps per sequence).
    first = got.cases[0]
    assert first["per_step"] == pytest.approx(first["total"] / first["steps"], rel=1e-15)
    assert len(got.cases) == 2 * 3
