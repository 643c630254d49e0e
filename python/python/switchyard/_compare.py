"""Comparing trackers from case scores computed anywhere: a loop, threads, or the workers of a
distributed engine (Dask, Ray, Spark). The scores of each (tracker, sequence, run) are
independent; only this aggregation needs them all.
"""

from __future__ import annotations

from typing import Any, Dict, Iterable, List, Mapping, Optional, Tuple

from ._results import Score, _Document, table
from ._switchyard import compare_scores

#: One case score: (tracker, sequence, run, Score). sequence and run are None (or "") when
#: the data have no such grouping.
CaseResult = Tuple[str, Any, Any, Score]

_SUMMARY_COLUMNS = (
    "cases",
    "metric_mean",
    "metric_rms",
    "total_mean",
    "per_step_mean",
    "localisation",
    "missed",
    "false",
    "switching",
    "missed_count",
    "false_count",
    "switch_count",
    "fractional_cases",
)


def _key(value: Any) -> str:
    return "" if value is None else str(value)


def _values(score: Score) -> Tuple[Any, ...]:
    return (
        score.metric,
        score.total,
        score.localisation,
        score.missed,
        score.false,
        score.switching,
        score.missed_count,
        score.false_count,
        score.switch_count,
        score.integral,
        score.proven,
        score.steps,
    )


class Comparison(_Document):
    """Trackers ranked per setting, each against the best with a paired bootstrap interval."""

    def __init__(self, text: str) -> None:
        super().__init__(text)
        d = self._document
        #: The bootstrap: method, resamples, seed, confidence, what was resampled, units.
        self.bootstrap: Dict[str, Any] = d["bootstrap"]
        #: One entry per setting: its parameters, "ranking" ("A < B = C"), trackers, sequences.
        self.settings: List[Dict[str, Any]] = d["settings"]
        #: True when every setting ranks the trackers the same.
        self.ranking_stable: bool = d["ranking_stable"]
        #: What ranked the trackers: "metric" (mean d) or "per_step" (mean d^p / steps).
        self.rank_by: str = d["rank_by"]
        #: With ``per_case=True``, every (setting, tracker, sequence, run) score: cutoff, order,
        #: switch_penalty, tracker, sequence, run, metric, total, the parts and counts,
        #: integral, steps and per_step (d^p / steps); otherwise empty.
        self.cases: List[Dict[str, Any]] = d.get("cases", [])

    @property
    def table(self) -> Any:
        """One row per (setting, tracker), best first within a setting: cutoff, order,
        switch_penalty, rank, tracker, the summary over the cases, and the paired difference
        with the best (difference, lower, upper, verdict; missing for the best)."""
        rows = []
        for setting in self.settings:
            for tracker in setting["trackers"]:
                difference = tracker["difference"] or {}
                rows.append(
                    {
                        "cutoff": setting["cutoff"],
                        "order": setting["order"],
                        "switch_penalty": setting["switch_penalty"],
                        "rank": tracker["rank"],
                        "tracker": tracker["tracker"],
                        **{name: tracker[name] for name in _SUMMARY_COLUMNS},
                        "difference": difference.get("mean"),
                        "lower": difference.get("lower"),
                        "upper": difference.get("upper"),
                        "verdict": difference.get("verdict"),
                    }
                )
        columns = ("cutoff", "order", "switch_penalty", "rank", "tracker") + _SUMMARY_COLUMNS
        return table(rows, columns + ("difference", "lower", "upper", "verdict"))

    def __repr__(self) -> str:
        return f"Comparison({'; '.join(s['ranking'] for s in self.settings)})"


def compare(
    results: Iterable[CaseResult],
    *,
    resamples: int = 10_000,
    seed: int = 0,
    confidence: float = 0.95,
    resample_by: str = "auto",
    per_sequence: bool = False,
    rank_by: str = "metric",
    per_case: bool = False,
    truth_name: Optional[str] = None,
    manifest_name: Optional[str] = None,
    estimate_names: Optional[Mapping[str, str]] = None,
) -> Comparison:
    """Ranks trackers from their case scores, as ``switchyard compare`` does.

    ``results`` holds one ``(tracker, sequence, run, score)`` per tracker, case and setting,
    ``score`` a ``Score`` of that case (from ``switchyard.score`` anywhere: a loop, or the
    workers of Dask, Ray or Spark). Settings are told apart by the scores' parameters, kept in
    order of first appearance, as are the trackers; cases are sorted as the command sorts them
    (integers by value, then names). Every tracker needs a score of every case at every setting.

    The bootstrap (``resamples``, ``seed``, ``confidence``, ``resample_by`` ``"auto"``,
    ``"sequence"`` or ``"run"``) is the command's; ``per_sequence`` adds each sequence's ranking,
    ``per_case`` every case score (``Comparison.cases``); ``rank_by="per_step"`` ranks and compares
    by d^p / steps of each case instead of d (``--rank-by per-step``).
    ``truth_name``, ``manifest_name`` and ``estimate_names`` (tracker -> file) only fill in
    ``inputs``. Returns a ``Comparison`` whose ``to_dict()`` is the document of
    ``switchyard compare --format json`` on the same data and options.

    Raises ``ValueError`` for missing or repeated scores, scores of different distances or
    engines, or bad options.
    """
    settings: List[Tuple[float, float, float, float]] = []
    trackers: List[str] = []
    cases: List[Tuple[str, str]] = []
    found: Dict[Tuple[int, int, int], Tuple[Any, ...]] = {}
    kinds = set()
    for tracker, sequence, run, score in results:
        if not isinstance(score, Score):
            raise TypeError(f"expected a switchyard.Score for tracker {tracker!r}, got {type(score).__name__}")
        params = score.params
        # The missed share is written only when it is not 0.5 (specs/missed-share.md).
        setting = (params["cutoff"], params["order"], params["switch_penalty"], params.get("missed_share", 0.5))
        case = (_key(sequence), _key(run))
        for values, item in ((settings, setting), (trackers, str(tracker)), (cases, case)):
            if item not in values:
                values.append(item)
        key = (settings.index(setting), trackers.index(str(tracker)), cases.index(case))
        if key in found:
            raise ValueError(
                f"two scores of tracker {tracker!r} for sequence {case[0]!r}, run {case[1]!r} at "
                f"cut-off {setting[0]}, order {setting[1]}, switching penalty {setting[2]}"
            )
        found[key] = _values(score)
        kinds.add((score.inputs["distance"], score.engine))
    if len(kinds) > 1:
        raise ValueError(f"the scores were computed with different distances or engines: {sorted(kinds)}")
    grid = []
    for s, setting in enumerate(settings):
        per_tracker = []
        for t, tracker in enumerate(trackers):
            row = []
            for c, case in enumerate(cases):
                if (s, t, c) not in found:
                    raise ValueError(
                        f"no score of tracker {tracker!r} for sequence {case[0]!r}, run {case[1]!r} "
                        f"at cut-off {setting[0]}, order {setting[1]}, switching penalty {setting[2]}"
                    )
                row.append(found[(s, t, c)])
            per_tracker.append(row)
        grid.append(per_tracker)
    distance, engine = next(iter(kinds)) if kinds else ("", "")
    names = estimate_names or {}
    request = {
        "settings": settings,
        "trackers": trackers,
        "cases": cases,
        "scores": grid,
        "resamples": resamples,
        "seed": seed,
        "confidence": float(confidence),
        "resample_by": resample_by,
        "per_sequence": bool(per_sequence),
        "rank_by": rank_by,
        "per_case": bool(per_case),
        "truth": truth_name,
        "manifest": manifest_name,
        "estimates": [names.get(t) for t in trackers],
        "distance": distance,
        "engine": engine,
    }
    return Comparison(compare_scores(request))
