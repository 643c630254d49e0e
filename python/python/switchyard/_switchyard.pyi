"""Type stubs of the compiled module switchyard._switchyard."""

from typing import Any, Dict, List, Optional, Tuple, Union

class InternalError(Exception):
    """A failure inside switchyard that is not the caller's input: please report it."""

#: (source, time column, id column, state columns, ids, times as native int64 or float64
#: bytes, whether the times are int64, states as row-major native float64 bytes, None or
#: (class column, each row's class as text))
TableInput = Tuple[str, str, str, List[str], List[str], bytes, bool, bytes, Optional[Tuple[str, List[str]]]]

def run(
    command: str,
    truth: Union[str, TableInput],
    estimate: Union[str, TableInput],
    options: Dict[str, Any],
) -> Tuple[str, List[str]]:
    """Runs ``score``, ``switches``, ``audit`` or ``steps`` without the GIL; returns the command
    line's JSON document as text and the notes it would print on standard error."""

def compare_scores(scores: Dict[str, Any]) -> str:
    """Aggregates case scores (keys: settings, trackers, cases, scores[setting][tracker][case]
    as 12-tuples, resamples, seed, confidence, resample_by, per_sequence, truth, manifest,
    estimates, distance, engine) into the JSON document of ``switchyard compare``."""
