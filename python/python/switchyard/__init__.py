"""Score multi-object trackers with the trajectory GOSPA metric (Python bindings).

Each function takes the truth and the estimate as a CSV path, a pandas DataFrame, a mapping of
columns (numpy arrays or lists) or a 2-D numpy array, with the command line's parameters, and
returns a result object whose ``to_dict()`` is the command's JSON document:

=============  ==========================  ==============
function       command line                result
=============  ==========================  ==============
``score``      ``switchyard score``        ``Score``
``switches``   ``switchyard switches``     ``Switches``
``audit``      ``switchyard audit``        ``Audit``
``steps``      ``switchyard steps``        ``Steps``
``compare``    ``switchyard compare``      ``Comparison``
=============  ==========================  ==============

``compare`` takes the ``Score`` of every (tracker, sequence, run) and ranks the trackers with
the command's paired bootstrap: the scores can come from anywhere (a loop, or the workers of
Dask, Ray or Spark), since each case is scored on its own.

Columns are found by name: ``time``, ``id`` and ``x``, ``y`` (plus ``z`` when present) by
default, as on the command line; ``time_column``, ``id_column`` and ``state_columns`` rename
them. Times are integer steps, or decimal times with ``time_step`` (step = round(time /
time_step)). Ids are compared as text (an integral float id 7.0 is ``"7"``).

Bad input raises ``ValueError``: for a file, the command line's message (file, line, column);
for a table, its name (``truth`` or ``estimate`` unless ``truth_name``/``estimate_name`` say
otherwise), the row (counting from 0, in the order given) and the column. A memory budget too
small raises ``MemoryError``; a failure inside switchyard raises ``InternalError``. The work
runs without the GIL, so threads can score in parallel.
"""

from __future__ import annotations

import os
import warnings
from typing import Any, Dict, List, Optional, Sequence, Tuple, Union

from ._compare import Comparison, compare
from ._inputs import to_input
from ._results import Audit, Ospa2, Score, Steps, Switches
from ._switchyard import InternalError
from ._switchyard import run as _run

__all__ = [
    "Audit",
    "Comparison",
    "InternalError",
    "Ospa2",
    "Score",
    "SolveNote",
    "Steps",
    "Switches",
    "audit",
    "compare",
    "score",
    "steps",
    "switches",
]

#: A CSV path, a pandas DataFrame, a mapping of columns, or a 2-D numpy array.
Input = Union[str, "os.PathLike[str]", Any]


class SolveNote(UserWarning):
    """A note about the solve (for example a group whose value could not be proven within the
    memory budget, or with ``class_column`` an object whose class changes): the command line
    prints these on standard error."""


def _options(
    *,
    cutoff: float,
    order: float = 1.0,
    switch_penalty: Optional[float] = None,
    alpha: float = 2.0,
    missed_share: float = 0.5,
    engine: str = "auto",
    exact: bool = False,
    exact_seconds: Optional[float] = None,
    exact_nodes: Optional[int] = None,
    memory_budget: Optional[int] = None,
    top: Optional[int] = None,
    distance: str = "euclidean",
    weights: Optional[Sequence[float]] = None,
    box_layout: Optional[str] = None,
    time_column: str = "time",
    id_column: str = "id",
    state_columns: Optional[Sequence[str]] = None,
    time_step: Optional[float] = None,
    delimiter: str = ",",
    ospa2: bool = False,
    ospa2_window: Optional[int] = None,
    class_column: Optional[str] = None,
) -> Dict[str, Any]:
    # The command line's --ospa2-window takes 1 to 2^32 - 1 steps.
    if ospa2_window is not None and (
        isinstance(ospa2_window, bool) or not isinstance(ospa2_window, int) or not 1 <= ospa2_window <= 2**32 - 1
    ):
        raise ValueError(
            f"invalid parameter: ospa2_window must be a whole number of steps from 1 to 2^32 - 1, got {ospa2_window!r}"
        )
    if distance in ("iou", "geodesic") and state_columns is None:
        raise ValueError(
            f"invalid parameter: the {distance} distance needs state_columns naming "
            + ("the box's 4 or 6 columns" if distance == "iou" else "the latitude and the longitude columns, in that order")
        )
    return {
        "cutoff": float(cutoff),
        "order": float(order),
        "switch_penalty": None if switch_penalty is None else float(switch_penalty),
        "alpha": float(alpha),
        "missed_share": float(missed_share),
        "engine": engine,
        "exact": bool(exact),
        "exact_seconds": None if exact_seconds is None else float(exact_seconds),
        "exact_nodes": exact_nodes,
        "memory_budget": memory_budget,
        "top": top,
        "distance": distance,
        "weights": None if weights is None else [float(w) for w in weights],
        "box_layout": box_layout,
        "time_column": time_column,
        "id_column": id_column,
        "state_columns": None if state_columns is None else list(state_columns),
        "time_step": None if time_step is None else float(time_step),
        "delimiter": delimiter,
        "ospa2": bool(ospa2),
        "ospa2_window": ospa2_window,
        "class_column": class_column,
    }


def _call(command: str, arguments: Dict[str, Any]) -> Tuple[str, List[str]]:
    """Runs a command on the arguments of the public function that calls it."""
    arguments = dict(arguments)
    truth, estimate, columns = arguments.pop("truth"), arguments.pop("estimate"), arguments.pop("columns")
    names = {"truth": arguments.pop("truth_name"), "estimate": arguments.pop("estimate_name")}
    options = _options(**arguments)

    def prepare(value: Input, role: str) -> Any:
        return to_input(
            value,
            names[role] or role,
            time_column=options["time_column"],
            id_column=options["id_column"],
            state_columns=options["state_columns"],
            columns=columns,
            class_column=options["class_column"],
        )

    text, notes = _run(command, prepare(truth, "truth"), prepare(estimate, "estimate"), options)
    for note in notes:
        warnings.warn(note, SolveNote, stacklevel=3)
    return text, notes


_COMMON = """
    Inputs: ``truth`` and ``estimate`` are each a CSV path, a pandas DataFrame, a mapping of
    columns or a 2-D numpy array (whose columns ``columns=`` names; default time, id, x, y and
    with 5 columns z). ``time_column``, ``id_column``, ``state_columns`` (default x, y, plus z
    when present), ``time_step`` and ``delimiter`` (CSV files only) are the command line's CSV
    options; ``truth_name`` and ``estimate_name`` name a table in messages and in ``inputs``.

    Classes: ``class_column`` names a column giving each row's class (``--class-column``): each
    class is scored on its own and the document is that of all classes together with a
    ``classes`` object holding each class's document (the result's ``classes``: a dict from
    class name to a result of the same type).

    Distance: ``distance`` is ``"euclidean"`` (default), ``"manhattan"``, ``"chebyshev"`` (each
    with optional per-column ``weights``), ``"iou"`` (with ``box_layout`` ``"corner-size"``,
    ``"corners"`` or ``"centre-size"``) or ``"geodesic"`` (latitude and longitude in degrees).

    Raises ``ValueError`` for bad input or parameters, ``MemoryError`` when the work would not
    fit ``memory_budget``, ``InternalError`` for a failure inside switchyard.
"""

_METRIC = """
    Metric: cut-off ``cutoff`` > 0, order ``order`` >= 1, switching penalty ``switch_penalty``
    >= 0 (default: the cut-off). ``missed_share`` S in (0, 1) (default 0.5): a missed
    object-step costs S c^p and a false one (1 - S) c^p (``--missed-share``,
    specs/missed-share.md; our own construction, not checked against the paper that published
    different missed and false costs, arXiv:2507.13706). ``engine`` is ``"auto"`` (the
    Lagrangian engine, as on the command line), ``"lagrangian"``, ``"microlp"`` or ``"highs"``
    (a build with HiGHS).
    ``exact=True`` computes the exact (integral) metric, within ``exact_seconds`` or
    ``exact_nodes`` (branch-and-bound nodes per group) if given. ``memory_budget`` is in bytes
    (default: the command line's 4 GiB).
"""


def score(
    truth: Input,
    estimate: Input,
    *,
    cutoff: float,
    order: float = 1.0,
    switch_penalty: Optional[float] = None,
    missed_share: float = 0.5,
    engine: str = "auto",
    exact: bool = False,
    exact_seconds: Optional[float] = None,
    exact_nodes: Optional[int] = None,
    memory_budget: Optional[int] = None,
    distance: str = "euclidean",
    weights: Optional[Sequence[float]] = None,
    box_layout: Optional[str] = None,
    time_column: str = "time",
    id_column: str = "id",
    state_columns: Optional[Sequence[str]] = None,
    time_step: Optional[float] = None,
    delimiter: str = ",",
    columns: Optional[Sequence[str]] = None,
    truth_name: Optional[str] = None,
    estimate_name: Optional[str] = None,
    class_column: Optional[str] = None,
    ospa2: bool = False,
) -> Score:
    return Score(*_call("score", locals()))


def switches(
    truth: Input,
    estimate: Input,
    *,
    cutoff: float,
    order: float = 1.0,
    switch_penalty: Optional[float] = None,
    missed_share: float = 0.5,
    engine: str = "auto",
    exact: bool = False,
    exact_seconds: Optional[float] = None,
    exact_nodes: Optional[int] = None,
    memory_budget: Optional[int] = None,
    distance: str = "euclidean",
    weights: Optional[Sequence[float]] = None,
    box_layout: Optional[str] = None,
    time_column: str = "time",
    id_column: str = "id",
    state_columns: Optional[Sequence[str]] = None,
    time_step: Optional[float] = None,
    delimiter: str = ",",
    columns: Optional[Sequence[str]] = None,
    truth_name: Optional[str] = None,
    estimate_name: Optional[str] = None,
    class_column: Optional[str] = None,
) -> Switches:
    return Switches(*_call("switches", locals()))


def audit(
    truth: Input,
    estimate: Input,
    *,
    cutoff: float,
    order: float = 1.0,
    switch_penalty: Optional[float] = None,
    missed_share: float = 0.5,
    top: Optional[int] = None,
    engine: str = "auto",
    exact: bool = False,
    exact_seconds: Optional[float] = None,
    exact_nodes: Optional[int] = None,
    memory_budget: Optional[int] = None,
    distance: str = "euclidean",
    weights: Optional[Sequence[float]] = None,
    box_layout: Optional[str] = None,
    time_column: str = "time",
    id_column: str = "id",
    state_columns: Optional[Sequence[str]] = None,
    time_step: Optional[float] = None,
    delimiter: str = ",",
    columns: Optional[Sequence[str]] = None,
    truth_name: Optional[str] = None,
    estimate_name: Optional[str] = None,
    class_column: Optional[str] = None,
) -> Audit:
    if top is not None and (isinstance(top, bool) or not isinstance(top, int) or top < 0):
        raise ValueError(f"invalid parameter: top must be a count >= 0, got {top!r}")
    return Audit(*_call("audit", locals()))


def steps(
    truth: Input,
    estimate: Input,
    *,
    cutoff: float,
    order: float = 1.0,
    alpha: float = 2.0,
    missed_share: float = 0.5,
    distance: str = "euclidean",
    weights: Optional[Sequence[float]] = None,
    box_layout: Optional[str] = None,
    time_column: str = "time",
    id_column: str = "id",
    state_columns: Optional[Sequence[str]] = None,
    time_step: Optional[float] = None,
    delimiter: str = ",",
    columns: Optional[Sequence[str]] = None,
    truth_name: Optional[str] = None,
    estimate_name: Optional[str] = None,
    class_column: Optional[str] = None,
    ospa2: bool = False,
    ospa2_window: Optional[int] = None,
) -> Steps:
    return Steps(*_call("steps", locals()))


score.__doc__ = (
    """Trajectory GOSPA of ``estimate`` against ``truth``: ``switchyard score``.

    Returns a ``Score``: ``total`` (d^p) and its parts ``localisation``, ``missed``, ``false``,
    ``switching`` with their counts, the ``certificate``, the ``switches`` and ``jumps`` tables,
    and ``to_dict()``, the document of ``switchyard score --format json``.

    ``ospa2=True`` (``score --ospa2``) also gives OSPA(2) (Beard, Vo, Vo, IEEE TSP 68, 2020)
    with the same cut-off and order over the whole window, as ``Score.ospa2`` (an ``Ospa2``).
"""
    + _METRIC
    + _COMMON
)
switches.__doc__ = (
    """Every identity switch, from the truths' side and the estimates' side:
    ``switchyard switches``.

    Returns a ``Switches``: ``switching``, ``switch_count``, the ``switches`` and ``jumps``
    tables, and ``to_dict()``, the document of ``switchyard switches --format json``.
"""
    + _METRIC
    + _COMMON
)
audit.__doc__ = (
    """How each true object was covered, worst first, and what each track followed:
    ``switchyard audit``. ``top`` keeps only the N worst-covered truths.

    Returns an ``Audit`` with the tables ``truths``, ``covered``, ``missed``, ``estimates``,
    ``following`` and ``false_spans``, and ``to_dict()``, the document of
    ``switchyard audit --format json``.
"""
    + _METRIC
    + _COMMON
)
steps.__doc__ = (
    """Per-step GOSPA of ``estimate`` against ``truth``: ``switchyard steps``.

    Cut-off ``cutoff`` > 0, order ``order`` >= 1, ``alpha`` in (0, 2] (the parts are given only
    for 2), ``missed_share`` S in (0, 1) (default 0.5; other values only with alpha 2): a
    missed object costs S c^p at a step and a false one (1 - S) c^p (``--missed-share``).
    Returns a ``Steps``: ``table`` (one row per step of the window), ``summary``, and
    ``to_dict()``, the document of ``switchyard steps --format json``.

    ``ospa2=True`` (``steps --ospa2``) adds to each step OSPA(2) (Beard, Vo, Vo, IEEE TSP 68,
    2020) with the same cut-off and order over the sliding window of ``ospa2_window`` steps
    (default 1, ``--ospa2-window``) ending there: the table's columns ``ospa2``,
    ``ospa2_paired_power``, ``ospa2_unpaired_power`` and ``ospa2_pairs``, missing (None, NaN in
    a DataFrame) where that window holds no object.
"""
    + _COMMON
)
