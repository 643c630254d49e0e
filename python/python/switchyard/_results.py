"""Result objects: attributes for the numbers, tables for the series, and ``to_dict()`` for the
command line's JSON document.

Tables are pandas DataFrames when pandas is installed; otherwise a dict from column name to a
numpy array (with numpy) or to a list.
"""

from __future__ import annotations

import json
from typing import Any, Dict, List, Optional, Sequence, Tuple

from . import _inputs


def _pandas() -> Any:
    """pandas if installed, else None (tests replace this function to check the fallback)."""
    try:
        import pandas
    except ImportError:
        return None
    return pandas


def table(rows: Sequence[Dict[str, Any]], columns: Sequence[str], *, extra: Optional[Dict[str, Any]] = None) -> Any:
    """A table of ``rows`` (dicts) with ``columns``, in row order. ``extra`` gives constant
    leading columns per row as ``{name: list}``."""
    data: Dict[str, List[Any]] = {}
    for name, values in (extra or {}).items():
        data[name] = list(values)
    for name in columns:
        data[name] = [row[name] for row in rows]
    pandas = _pandas()
    if pandas is not None:
        return pandas.DataFrame(data, columns=list(data))
    numpy = _inputs.numpy_module()
    if numpy is None:
        return data
    arrays: Dict[str, Any] = {}
    for name, values in data.items():
        if any(v is None or isinstance(v, str) for v in values):
            arrays[name] = numpy.array(values, dtype=object)
        else:
            arrays[name] = numpy.array(values)
    return arrays


_EVENT_COLUMNS = ("time", "from", "to", "weight", "cost")


class _Document:
    """A command's JSON document with its top-level keys as attributes."""

    def __init__(self, text: str, notes: Sequence[str] = ()) -> None:
        self._text = text
        self._document: Dict[str, Any] = json.loads(text)
        #: Notes the command line prints on standard error (parts that could not be proven).
        self.notes: List[str] = list(notes)
        #: The parameters: ``{"cutoff": c, "order": p, ...}`` (a comparison has them per setting).
        self.params: Dict[str, float] = self._document.get("params", {})
        #: The inputs: names (file, or the name given to a table), counts and the distance.
        self.inputs: Dict[str, Any] = self._document["inputs"]
        #: With ``class_column``: each class's result (of this type) by class name, else None.
        self.classes: Optional[Dict[str, Any]] = None
        if "classes" in self._document:
            self.classes = {name: type(self)(json.dumps(doc)) for name, doc in self._document["classes"].items()}

    def to_dict(self) -> Dict[str, Any]:
        """The document the command line writes with ``--format json``, as a new dict."""
        return json.loads(self._text)

    def __eq__(self, other: object) -> bool:
        return type(other) is type(self) and other._document == self._document  # type: ignore[attr-defined]

    __hash__ = None  # type: ignore[assignment]


class _Exactness(_Document):
    """The exactness keys shared by score, switches and audit."""

    def __init__(self, text: str, notes: Sequence[str] = ()) -> None:
        super().__init__(text, notes)
        d = self._document
        #: True when the assignment is integral and proven optimal: the value is the exact metric.
        self.integral: bool = d["integral"]
        #: d^p of the LP relaxation.
        self.lp_total: float = d["lp_total"]
        #: d^p of the exact metric when ``exact=True`` proved it, else None.
        self.exact_total: Optional[float] = d["exact_total"]
        #: The certificate of ``exact=True`` (None without it).
        self.exact: Optional[Dict[str, Any]] = d["exact"]


class Ospa2:
    """OSPA(2) (Beard, Vo, Vo, IEEE TSP 68, 2020) beside trajectory GOSPA: the ``ospa2`` object
    of ``switchyard score --ospa2 --format json``.

    ``value`` lies in [0, c]; ``paired_power + unpaired_power`` is ``value ** order``;
    ``truths`` and ``estimates`` count the trajectories; ``pairs`` is a table of the pairs closer
    than c (truth, estimate, distance).
    """

    def __init__(self, document: Dict[str, Any]) -> None:
        self._document = document
        self.value: float = document["value"]
        self.cutoff: float = document["cutoff"]
        self.order: float = document["order"]
        self.paired_power: float = document["paired_power"]
        self.unpaired_power: float = document["unpaired_power"]
        self.truths: int = document["truths"]
        self.estimates: int = document["estimates"]

    @property
    def pairs(self) -> Any:
        """The pairs closer than c, by truth: truth, estimate, distance."""
        return table(self._document["pairs"], ("truth", "estimate", "distance"))

    def __eq__(self, other: object) -> bool:
        return type(other) is type(self) and other._document == self._document  # type: ignore[attr-defined]

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"Ospa2(value={self.value!r}, pairs={len(self._document['pairs'])})"


class Score(_Exactness):
    """Trajectory GOSPA of an estimate against the truth, with its four parts.

    ``total`` is d^p = ``localisation + missed + false + switching``; ``metric`` is d and
    ``per_step`` is (d^p / steps)^(1/p). ``switches`` and ``jumps`` are tables of the switch
    events seen from the truths and from the estimates.
    """

    def __init__(self, text: str, notes: Sequence[str] = ()) -> None:
        super().__init__(text, notes)
        d = self._document
        self.metric: float = d["metric"]
        self.total: float = d["total"]
        self.per_step: float = d["per_step"]
        #: Steps in the window.
        self.steps: int = d["steps"]
        self.localisation: float = d["localisation"]
        self.missed: float = d["missed"]
        self.false: float = d["false"]
        self.switching: float = d["switching"]
        #: Truth object-steps not assigned (fractional when the LP optimum is).
        self.missed_count: float = d["missed_count"]
        #: Estimate object-steps not assigned.
        self.false_count: float = d["false_count"]
        #: Full switches count 1, half switches 0.5.
        self.switch_count: float = d["switch_count"]
        #: First and last step evaluated, or None when both inputs are empty.
        self.window: Optional[Tuple[int, int]] = (d["window"]["first"], d["window"]["last"]) if d["window"] else None
        #: The LP engine used.
        self.engine: str = d["engine"]
        #: LP sizes.
        self.lp: Dict[str, int] = d["lp"]
        #: The bounds that prove the value and how each group was solved.
        self.certificate: Dict[str, Any] = d["certificate"]
        #: True when the value is proven optimal (lower bound = upper bound).
        self.proven: bool = d["certificate"]["proven"]
        #: OSPA(2) over the whole window with ``ospa2=True``, else None.
        self.ospa2: Optional[Ospa2] = Ospa2(d["ospa2"]) if "ospa2" in d else None

    @property
    def localization(self) -> float:
        """The localisation part under its earlier name (kept for one release)."""
        return self.localisation

    @property
    def switches(self) -> Any:
        """Switches seen from the truths: time, truth, from, to, weight, cost (from/to are
        estimate ids; missing for unassigned: None, NaN in a DataFrame)."""
        return table(self._document["switches"], ("time", "truth") + _EVENT_COLUMNS[1:])

    @property
    def jumps(self) -> Any:
        """Jumps seen from the estimates: time, estimate, from, to, weight, cost (from/to are
        truth ids; missing for unassigned: None, NaN in a DataFrame)."""
        return table(self._document["jumps"], ("time", "estimate") + _EVENT_COLUMNS[1:])

    def __repr__(self) -> str:
        return (
            f"Score(total={self.total!r}, localisation={self.localisation!r}, missed={self.missed!r}, "
            f"false={self.false!r}, switching={self.switching!r}, proven={self.proven!r})"
        )


class Switches(_Exactness):
    """Every identity switch from the truths' side and every jump from the estimates' side."""

    def __init__(self, text: str, notes: Sequence[str] = ()) -> None:
        super().__init__(text, notes)
        d = self._document
        #: The switching part of the score (the events' costs add up to it).
        self.switching: float = d["switching"]
        #: Full switches count 1, half switches 0.5.
        self.switch_count: float = d["switch_count"]

    @property
    def switches(self) -> Any:
        """One row per switch: time, truth, from, to, weight, cost."""
        return table(self._document["switches"], ("time", "truth") + _EVENT_COLUMNS[1:])

    @property
    def jumps(self) -> Any:
        """One row per jump: time, estimate, from, to, weight, cost."""
        return table(self._document["jumps"], ("time", "estimate") + _EVENT_COLUMNS[1:])

    def __repr__(self) -> str:
        return f"Switches(switch_count={self.switch_count!r}, switching={self.switching!r})"


_TRUTH_COLUMNS = ("rank", "truth", "present_steps", "covered_steps", "missed_steps", "longest_missed", "estimates", "switches")
_ESTIMATE_COLUMNS = ("estimate", "present_steps", "false_steps", "truths")


def _spans(owners: Sequence[Dict[str, Any]], owner: str, key: str, columns: Sequence[str]) -> Any:
    rows = [span for o in owners for span in o[key]]
    names = [o[owner] for o in owners for _ in o[key]]
    return table(rows, columns, extra={owner: names})


class Audit(_Exactness):
    """How each true object was covered over time (worst first) and what each track followed."""

    @property
    def truths(self) -> Any:
        """One row per truth, worst covered first: rank, truth, present_steps, covered_steps,
        missed_steps, longest_missed, estimates, switches."""
        return table(self._document["truths"], _TRUTH_COLUMNS)

    @property
    def covered(self) -> Any:
        """Covered spans: truth, first, last, steps, estimate, mean_error."""
        return _spans(self._document["truths"], "truth", "covered", ("first", "last", "steps", "estimate", "mean_error"))

    @property
    def missed(self) -> Any:
        """Missed spans: truth, first, last, steps."""
        return _spans(self._document["truths"], "truth", "missed", ("first", "last", "steps"))

    @property
    def estimates(self) -> Any:
        """One row per estimate, in input order: estimate, present_steps, false_steps, truths."""
        return table(self._document["estimates"], _ESTIMATE_COLUMNS)

    @property
    def following(self) -> Any:
        """Spans of an estimate following one truth: estimate, first, last, steps, truth."""
        return _spans(self._document["estimates"], "estimate", "following", ("first", "last", "steps", "truth"))

    @property
    def false_spans(self) -> Any:
        """Spans of an estimate following nothing: estimate, first, last, steps."""
        return _spans(self._document["estimates"], "estimate", "false_spans", ("first", "last", "steps"))

    def __repr__(self) -> str:
        return f"Audit({len(self._document['truths'])} truths, {len(self._document['estimates'])} estimates)"


_STEP_COLUMNS = (
    "time",
    "gospa",
    "localisation",
    "missed",
    "false",
    "missed_count",
    "false_count",
    "truth_count",
    "estimate_count",
)
_OSPA2_COLUMNS = ("ospa2", "ospa2_paired_power", "ospa2_unpaired_power", "ospa2_pairs")


class Steps(_Document):
    """Per-step GOSPA over the window: one row per step, and a summary."""

    def __init__(self, text: str, notes: Sequence[str] = ()) -> None:
        super().__init__(text, notes)
        d = self._document
        #: First and last step, or None when both inputs are empty.
        self.window: Optional[Tuple[int, int]] = (d["window"]["first"], d["window"]["last"]) if d["window"] else None
        #: Sum, mean, root mean power and the summed parts over the steps.
        self.summary: Dict[str, Any] = d["summary"]
        #: With ``ospa2=True``, OSPA(2)'s ``{"cutoff", "order", "window"}`` (window: the width of
        #: the sliding window in steps), else None.
        self.ospa2: Optional[Dict[str, Any]] = d.get("ospa2")

    @property
    def table(self) -> Any:
        """One row per step of the window: time, gospa, localisation, missed, false (the parts
        are None unless alpha = 2), missed_count, false_count, truth_count, estimate_count; with
        ``ospa2=True`` also ospa2, ospa2_paired_power, ospa2_unpaired_power, ospa2_pairs (None,
        NaN in a DataFrame, where the window ending at the step holds no object)."""
        columns = _STEP_COLUMNS + (_OSPA2_COLUMNS if self.ospa2 is not None else ())
        return table(self._document["steps"], columns)

    def __repr__(self) -> str:
        return f"Steps(window={self.window!r}, sum={self.summary['sum']!r})"
