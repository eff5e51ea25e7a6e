"""A table of load cases read and checked: a pandas DataFrame, or a CSV or Parquet file.

Each column but an optional ``case`` column (the cases' names) is a parameter of the problem;
its header may carry the unit its values are in, ``k [kN/m]``. Every value must be a finite
number. The size is checked before anything is computed.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..core.reading.units import read_quantity
from ..errors import ParameterError, import_extra

__all__ = ["CaseTable", "MAX_CASES", "read_cases"]

MAX_CASES = 20_000_000
"""The most cases one call takes (a larger table is refused before any work)."""

_HEADER = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")


def pandas():
    """pandas, or the install command of the extra that brings it."""
    (module,) = import_extra(("pandas",), "load cases", "cases")
    return module


class NumberedIds:
    """The names "1", "2", … (from ``first``) of a table without a case column, made when
    asked for: ten million cases need no ten million strings, and a chunk's names are a
    NumberedIds of their own (a slice)."""

    __slots__ = ("n", "first")

    def __init__(self, n: int, first: int = 1):
        self.n, self.first = n, first

    def __len__(self) -> int:
        return self.n

    def __getitem__(self, i):
        if isinstance(i, slice):
            start, stop, step = i.indices(self.n)
            if step == 1:
                return NumberedIds(max(stop - start, 0), self.first + start)
            return [str(self.first + k) for k in range(start, stop, step)]
        if not -self.n <= i < self.n:
            raise IndexError(i)
        return str(self.first + i % self.n)

    def __iter__(self):
        return (str(self.first + k) for k in range(self.n))

    def __eq__(self, other) -> bool:
        return list(self) == list(other) if not isinstance(other, NumberedIds) else \
            (self.n, self.first) == (other.n, other.first)

    def __hash__(self) -> int:
        return hash((self.n, self.first))

    def __dask_tokenize__(self):
        """The names' identity for Dask's task keys (a chunk of numbered cases)."""
        return ("NumberedIds", self.n, self.first)

    def position(self, case: str) -> int | None:
        """The row of the case named ``case`` (None where there is none)."""
        text = str(case)
        if text.isdigit() and text == str(int(text)) and \
                self.first <= int(text) < self.first + self.n:
            return int(text) - self.first
        return None


@dataclass(frozen=True)
class CaseTable:
    """The cases: their ids, the parameters' names and units, and a cases × parameters array."""

    ids: tuple
    names: tuple
    units: tuple
    values: np.ndarray
    failed: dict = field(default_factory=dict)  # row → why it cannot be evaluated

    def __len__(self) -> int:
        return len(self.ids)

    def case(self, i: int) -> dict:
        """Case ``i`` as {name: number in its column's unit}."""
        return {n: float(v) for n, v in zip(self.names, self.values[i])}

    def position(self, case) -> int | None:
        """The row of the case named ``case`` (None where there is none)."""
        if isinstance(self.ids, NumberedIds):
            return self.ids.position(case)
        if "_positions" not in self.__dict__:
            object.__setattr__(self, "_positions", {c: i for i, c in enumerate(self.ids)})
        return self.__dict__["_positions"].get(str(case))


def read_cases(cases, on_error: str = "raise") -> CaseTable:
    """``cases=`` read into a :class:`CaseTable`, with a clear error for anything wrong; with
    ``on_error="record"`` a row with a bad value is kept, marked failed with the reason."""
    if on_error not in ("raise", "record"):
        raise ParameterError(f"on_error must be 'raise' or 'record', not {on_error!r}",
                             "on_error")
    pd = pandas()
    if isinstance(cases, (str, Path)):
        frame = _read_file(pd, Path(cases))
    elif isinstance(cases, pd.DataFrame):
        frame = cases
    else:
        msg = ("cases= must be a pandas DataFrame or the path of a .csv or .parquet file, not "
               f"{type(cases).__name__}")
        raise ParameterError(msg, "cases")
    if len(frame) > MAX_CASES:
        raise ParameterError(f"{len(frame):,} cases is more than the {MAX_CASES:,} one call "
                             "takes; split the table", "cases")
    if not len(frame):
        raise ParameterError("the case table has no rows", "cases")
    columns = [str(c) for c in frame.columns]
    ids = (tuple(str(v) for v in frame["case"]) if "case" in columns
           else NumberedIds(len(frame)))
    if isinstance(ids, tuple) and len(set(ids)) != len(ids):
        raise ParameterError("the case column names a case twice; give each case its own "
                             "name", "case")
    names, units, failed = [], [], {}
    # one array for every parameter column, filled in place (no second copy of a large table)
    data = np.empty((len(frame), sum(1 for c in columns if c != "case")))
    for col in columns:
        if col == "case":
            continue
        m = _HEADER.match(col)
        if not m:
            raise ParameterError(f"column {col!r}: write a parameter name with an optional "
                                 "unit in brackets, e.g. 'k [kN/m]'", col)
        name, unit = m.group(1), (m.group(2) or "")
        if unit:
            read_quantity(f"1 {unit}", name)  # a unit pint does not know is refused here
        numbers = pd.to_numeric(frame[col], errors="coerce").to_numpy(dtype=float)
        for i in np.nonzero(~np.isfinite(numbers))[0].tolist():
            why = f"column {col!r}, case {ids[i]}: {frame[col].iloc[i]!r} is not a finite number"
            if on_error == "raise":
                raise ParameterError(why, name)
            failed.setdefault(i, why)
        data[:, len(names)] = numbers
        names.append(name)
        units.append(unit)
    if not names:
        raise ParameterError("the case table has no parameter columns", "cases")
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise ParameterError(f"parameter {dupes[0]!r} has two columns", dupes[0])
    return CaseTable(ids, tuple(names), tuple(units), data, failed)


def _read_file(pd, path: Path):
    if not path.is_file():
        raise ParameterError(f"no case table at {path}", "cases")
    suffix = path.suffix.lower()
    try:
        if suffix == ".csv":
            return pd.read_csv(path)
        if suffix == ".parquet":
            import_extra(("pyarrow",), "Parquet case tables", "cases")
            return pd.read_parquet(path)
    except (ValueError, OSError) as exc:
        raise ParameterError(f"cannot read the case table {path.name}: {exc}", "cases") from exc
    raise ParameterError(f"cannot tell the case table's format from {path.name!r}; end the "
                         "name with .csv or .parquet", "cases")
