"""Type stubs of the compiled module switchyard._switchyard."""

from typing import Optional

class InternalError(Exception):
    """A failure inside switchyard that is not the caller's input: please report it."""

def score_paths(
    truth: str,
    estimate: str,
    cutoff: float,
    order: float,
    switch_penalty: float,
    engine: str,
    exact: bool,
    memory_budget: Optional[int],
) -> str:
    """Scores two CSV files; returns the command line's score document as JSON text."""

def steps_paths(truth: str, estimate: str, cutoff: float, order: float, alpha: float) -> str:
    """Per-step GOSPA of two CSV files; returns the command line's steps document as JSON text."""
