"""Turns what a caller hands over (a CSV path, a pandas DataFrame, a mapping of columns, a
2-D numpy array) into what the compiled module takes: a path, or plain columns (ids as text,
times as 64-bit integers or floats, states as 64-bit floats, row-major).

numpy and pandas are optional: without them, a mapping of lists works.
"""

from __future__ import annotations

import math
import os
import sys
from array import array
from typing import Any, List, Mapping, Optional, Sequence, Tuple

# The compiled module's table tuple: (source, time column, id column, state columns, ids,
# times as bytes, times are integers, states as bytes).
TableTuple = Tuple[str, str, str, List[str], List[str], bytes, bool, bytes, Optional[Tuple[str, List[str]]]]


def numpy_module() -> Any:
    """numpy if installed, else None."""
    try:
        import numpy
    except ImportError:
        return None
    return numpy


def is_path(value: Any) -> bool:
    return isinstance(value, (str, os.PathLike))


def _dataframe_type() -> Any:
    # A DataFrame can only exist if pandas is already imported: no import needed to test.
    pandas = sys.modules.get("pandas")
    return getattr(pandas, "DataFrame", None)


def default_state_columns(names: Sequence[str]) -> List[str]:
    """The command line's default: x and y, plus z when there is one."""
    return ["x", "y", "z"] if "z" in names else ["x", "y"]


class _FrameColumns(Mapping):
    """A DataFrame's columns by name, each converted to a numpy array when asked for."""

    def __init__(self, frame: Any) -> None:
        self._frame = frame
        self._names = {str(name): name for name in frame.columns}

    def __getitem__(self, name: str) -> Any:
        return self._frame[self._names[name]].to_numpy()

    def __iter__(self) -> Any:
        return iter(self._names)

    def __len__(self) -> int:
        return len(self._names)

    def __contains__(self, name: object) -> bool:
        return name in self._names


def _columns_of(value: Any, source: str, columns: Optional[Sequence[str]]) -> Mapping[str, Any]:
    """The input as a mapping from column name to a sequence of values."""
    frame = _dataframe_type()
    if frame is not None and isinstance(value, frame):
        if columns is not None:
            raise ValueError(f"{source}: columns= names the columns of a 2-D array, not of a DataFrame")
        # Only the columns used are converted (a Series costs more to touch than its array).
        return _FrameColumns(value)
    if isinstance(value, Mapping):
        if columns is not None:
            raise ValueError(f"{source}: columns= names the columns of a 2-D array, not of a mapping")
        return {str(name): column for name, column in value.items()}
    numpy = numpy_module()
    if numpy is not None and isinstance(value, numpy.ndarray):
        if value.ndim != 2:
            raise ValueError(f"{source}: expected a 2-D array (rows by columns), got {value.ndim} dimensions")
        width = value.shape[1]
        if columns is None:
            if width not in (4, 5):
                raise ValueError(
                    f"{source}: a 2-D array of {width} columns needs columns= naming them "
                    "(the default is time, id, x, y and, with 5 columns, z)"
                )
            columns = ["time", "id", "x", "y", "z"][:width]
        if len(columns) != width:
            raise ValueError(f"{source}: columns= names {len(columns)} columns, the array has {width}")
        return {str(name): value[:, k] for k, name in enumerate(columns)}
    raise TypeError(
        f"{source}: expected a CSV path, a pandas DataFrame, a mapping of columns or a 2-D numpy "
        f"array, got {type(value).__name__}"
    )


def _id_text(value: Any) -> str:
    """An id as text; "" (refused later with its row) for a missing one."""
    if isinstance(value, str):
        return value
    if value is None:
        return ""
    if isinstance(value, bytes):
        return value.decode("utf-8", errors="replace")
    if isinstance(value, float) or type(value).__name__.startswith("float"):
        number = float(value)
        if math.isnan(number):
            return ""
        # 7.0 from a float column (pandas turns integer ids with a gap into floats) is id "7".
        return str(int(number)) if number.is_integer() else repr(number)
    if isinstance(value, int) or type(value).__name__.startswith(("int", "uint")):
        return str(int(value))
    pandas = sys.modules.get("pandas")
    if pandas is not None and pandas.isna(value) is True:
        return ""
    return str(value)


def _ids(column: Any) -> List[str]:
    numpy = numpy_module()
    if numpy is not None:
        values = numpy.asarray(column)
        if values.dtype.kind in "iu":
            return [str(v) for v in values.tolist()]
        return [_id_text(v) for v in values.tolist()]
    return [_id_text(v) for v in column]


def _bad_number(source: str, name: str, column: Sequence[Any], what: str) -> ValueError:
    """The error for a column that does not convert: its first value that does not."""
    for row, value in enumerate(column):
        try:
            float(value)
        except (TypeError, ValueError):
            return ValueError(f"{source}: row {row}, column {name!r}: expected {what}, found {value!r}")
    return ValueError(f"{source}: column {name!r}: expected {what}")


def _times(source: str, name: str, column: Any) -> Tuple[bytes, bool]:
    """Times as native 64-bit integers (when the column holds integers) or floats."""
    numpy = numpy_module()
    if numpy is not None:
        values = numpy.asarray(column)
        if values.dtype.kind in "iu":
            if values.dtype.kind == "u" and values.size and values.max() > numpy.iinfo(numpy.int64).max:
                raise ValueError(f"{source}: column {name!r}: a time beyond the supported range of +-2^53")
            return numpy.ascontiguousarray(values, dtype=numpy.int64).tobytes(), True
        if values.dtype.kind not in "f":
            if values.dtype.kind in "bmM":
                raise ValueError(
                    f"{source}: column {name!r}: times must be step numbers (integers), or decimal "
                    f"times with time_step=; got {values.dtype} values"
                )
            try:
                values = values.astype(numpy.float64)
            except (TypeError, ValueError):
                raise _bad_number(source, name, values.tolist(), "a number") from None
        return numpy.ascontiguousarray(values, dtype=numpy.float64).tobytes(), False
    values = list(column)
    if all(isinstance(v, int) and not isinstance(v, bool) for v in values):
        try:
            return array("q", values).tobytes(), True
        except OverflowError:
            raise ValueError(f"{source}: column {name!r}: a time beyond the supported range of +-2^53") from None
    try:
        return array("d", [float("nan") if v is None else float(v) for v in values]).tobytes(), False
    except (TypeError, ValueError):
        raise _bad_number(source, name, values, "a number") from None


def _states(source: str, names: Sequence[str], columns: Sequence[Any], rows: int) -> bytes:
    """The state columns as row-major native 64-bit floats; missing values become NaN, which
    the compiled module refuses with their row and column."""
    numpy = numpy_module()
    if numpy is not None:
        matrix = numpy.empty((rows, len(names)), dtype=numpy.float64)
        for k, (name, column) in enumerate(zip(names, columns)):
            values = numpy.asarray(column)
            if values.dtype.kind in "bmMUS":
                raise ValueError(f"{source}: column {name!r}: expected numbers, got {values.dtype} values")
            try:
                if values.dtype.kind == "O":
                    values = numpy.array([numpy.nan if v is None else v for v in values.tolist()], dtype=numpy.float64)
                matrix[:, k] = values
            except (TypeError, ValueError):
                raise _bad_number(source, name, values.tolist(), "a number") from None
        return matrix.tobytes()
    flat = array("d")
    lists = [list(column) for column in columns]
    for row in range(rows):
        for name, values in zip(names, lists):
            value = values[row]
            try:
                flat.append(float("nan") if value is None else float(value))
            except (TypeError, ValueError):
                raise ValueError(
                    f"{source}: row {row}, column {name!r}: expected a number, found {value!r}"
                ) from None
    return flat.tobytes()


def to_input(
    value: Any,
    source: str,
    *,
    time_column: str,
    id_column: str,
    state_columns: Optional[Sequence[str]],
    columns: Optional[Sequence[str]] = None,
    class_column: Optional[str] = None,
) -> "str | TableTuple":
    """A path as text, or the table tuple of the compiled module."""
    if is_path(value):
        return os.fspath(value)
    table = _columns_of(value, source, columns)
    names = list(table)
    states = list(state_columns) if state_columns is not None else default_state_columns(names)
    wanted = [time_column, id_column, *states] + ([class_column] if class_column is not None else [])
    for name in wanted:
        if name not in table:
            raise ValueError(f"{source}: there is no column {name!r} (it has: {', '.join(map(repr, names))})")
    columns_used = {name: table[name] for name in wanted}
    rows = len(columns_used[time_column])
    for name, column in columns_used.items():
        if len(column) != rows:
            raise ValueError(
                f"{source}: column {name!r} has {len(column)} values but column {time_column!r} has {rows}"
            )
    times, integer_times = _times(source, time_column, columns_used[time_column])
    ids = _ids(columns_used[id_column])
    state_bytes = _states(source, states, [columns_used[name] for name in states], rows)
    # Classes as text, as ids are (a missing one is "", refused with its row).
    classes = None if class_column is None else (class_column, _ids(columns_used[class_column]))
    return (source, time_column, id_column, states, ids, times, integer_times, state_bytes, classes)
