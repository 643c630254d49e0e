"""Score multi-object trackers with the trajectory GOSPA metric (Python bindings).

Inputs are read with switchyard's own CSV reader, so errors are the command line's:
a ``ValueError`` naming the file, line and column.
"""

from __future__ import annotations

import json
import os
from typing import Any, Dict, Optional, Union

from ._switchyard import InternalError, score_paths, steps_paths

__all__ = ["InternalError", "score", "steps"]

PathLike = Union[str, "os.PathLike[str]"]


def score(
    truth: PathLike,
    estimate: PathLike,
    *,
    cutoff: float,
    order: float = 1.0,
    switch_penalty: Optional[float] = None,
    engine: str = "lagrangian",
    exact: bool = False,
    memory_budget: Optional[int] = None,
) -> Dict[str, Any]:
    """Trajectory GOSPA of ``estimate`` against ``truth`` (two CSV files).

    Returns the document ``switchyard score --format json`` writes, as a dict.
    The switching penalty defaults to the cut-off, as on the command line. ``engine`` is
    ``"lagrangian"``, ``"microlp"`` or ``"highs"`` (a build with HiGHS); ``exact=True`` asks
    for the exact (integral) metric; ``memory_budget`` is in bytes (default: the command's).
    Raises ``ValueError`` for bad input, ``InternalError`` for a failure inside switchyard.
    """
    penalty = cutoff if switch_penalty is None else switch_penalty
    text = score_paths(
        os.fspath(truth), os.fspath(estimate), cutoff, order, penalty, engine, exact, memory_budget
    )
    return json.loads(text)


def steps(
    truth: PathLike,
    estimate: PathLike,
    *,
    cutoff: float,
    order: float = 1.0,
    alpha: float = 2.0,
) -> Dict[str, Any]:
    """Per-step GOSPA of ``estimate`` against ``truth`` (two CSV files).

    Returns the document ``switchyard steps --format json`` writes, as a dict: its
    ``"steps"`` list holds one entry per occupied step (time, gospa and its parts).
    Raises ``ValueError`` for bad input, ``InternalError`` for a failure inside switchyard.
    """
    text = steps_paths(os.fspath(truth), os.fspath(estimate), cutoff, order, alpha)
    return json.loads(text)
