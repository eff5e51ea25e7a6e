"""Measured load records read and checked: arrays, a pandas table, or a CSV/text file.

Every check names the row the user would look at (the point's index for arrays and tables,
the line number for a file) and nothing is resampled: the record's own points are the load's
corners. Sizes are checked before any arithmetic.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import math
import os
import re

import numpy as np

from ...errors import LoadHistoryError, UnitError
from ..model.history import LoadHistory
from .units import read_quantity

__all__ = ["MAX_FILE_BYTES", "MAX_HISTORY_POINTS", "history", "read_history"]

MAX_HISTORY_POINTS = 20_000_000
"""Points a record may have: the march keeps a few numbers per point (about 0.5 GB at this
size for a two-state system)."""

MAX_FILE_BYTES = 2 * 1024 ** 3
"""The largest record file read (checked before it is read)."""

_HEADER = re.compile(r"^\s*([^\[\(]*?)\s*(?:[\[\(]\s*([^\]\)]*?)\s*[\]\)])?\s*$")


def history(times, values=None, *, time=None, value=None, time_unit=None, unit=None,
            hold_last: bool = False) -> LoadHistory:
    """A measured load record, linear between its points, for a name on a right side.

    Parameters
    ----------
    times : sequence of numbers, pandas Series, or a pandas DataFrame
        The sample times (not decreasing; two equal times make a jump). A DataFrame holds
        both columns: ``time=`` and ``value=`` name them (default: its first two columns);
        a header such as ``"F [kN]"`` gives the unit.
    values : sequence of numbers or pandas Series
        The load at each time (omitted for a DataFrame).
    time_unit, unit : str, optional
        Units of the times (default s) and of the values (e.g. "kN"); converted to SI once.
    hold_last : bool
        Keep the last value after the record (default: the load is zero after it).

    Raises
    ------
    LoadHistoryError (a ForcingError)
        Fewer than two points, a value that is not a finite number, times that decrease,
        three points at one time, a first time before 0, columns of unequal length, a unit
        that is not one (UnitError), or more than MAX_HISTORY_POINTS points.

    Examples
    --------
    >>> from derivpad import forcing
    >>> load = forcing.history([0, 0.01, 0.02], [0, 5.0, 0], unit="kN")
    """
    if values is None and hasattr(times, "columns"):
        return _from_frame(times, time, value, time_unit, unit, hold_last)
    if values is None:
        raise LoadHistoryError("forcing.history needs the values too: history(times, values), or a "
                           "pandas DataFrame with a time and a value column")
    where = "pandas" if hasattr(times, "iloc") else "array"
    t = _column(times, "times", where)
    f = _column(values, "values", where)
    return checked(t, f, time_unit or "s", unit or "", hold_last, where, first_row=0,
                   row_word="point #")


def read_history(path, *, time=None, value=None, time_unit=None, unit=None,
                 hold_last: bool = False, delimiter=None) -> LoadHistory:
    """A load record from a CSV or whitespace-separated text file with a header naming its
    columns, each with its unit in brackets: ``t [ms], F [kN]``. ``time=``/``value=`` pick
    the columns by name (default: the first two); ``time_unit=``/``unit=`` give the units
    when the header does not. Errors name the file's line."""
    path = os.fspath(path)
    try:
        size = os.path.getsize(path)
    except OSError:
        size = 0
    if size > MAX_FILE_BYTES:
        raise LoadHistoryError(f"{path} is {size / 2**30:.1f} GiB, more than a record of "
                               f"{MAX_HISTORY_POINTS:,} points takes; split the record into "
                               "parts")
    try:
        with open(path, encoding="utf-8-sig") as fh:
            header = fh.readline()
            body = fh.read()
    except (OSError, UnicodeDecodeError) as exc:
        raise LoadHistoryError(f"the load record {path!r} cannot be read ({exc}); give the path of "
                           "a CSV or text file") from exc
    delimiter = delimiter or _delimiter(header)
    names = [n.strip() for n in (header.split(delimiter) if delimiter != " " else header.split())]
    if not any(re.search(r"[A-Za-z_]", n) for n in names):
        raise LoadHistoryError(
            f"{path}: line 1 is {header.strip()[:60]!r}, not a header; the first "
                           "line names the columns with their units, e.g. 't [s], F [kN]'",
                           row=1)
    ti, fi, (tname, tu), (fname, fu) = _pick(names, time, value, path)
    data = _numbers(body, delimiter, len(names), path, names)
    source = f"file {os.path.basename(path)}, columns {tname!r} and {fname!r}"
    rec = checked(data[:, ti], data[:, fi], time_unit or tu or "s", unit or fu or "",
                  hold_last, source, first_row=2, row_word="line ")
    return dataclasses.replace(rec, name=fname)


def checked(t, f, time_unit: str, unit: str, hold_last: bool, source: str, *,
            first_row: int, row_word: str) -> LoadHistory:
    """The record checked point by point and converted to SI; ``first_row`` is the number the
    user sees for the first point (0 for an index, 2 for a file's line after its header)."""
    def row(i):
        return f"{row_word}{int(i) + first_row}"
    if len(t) != len(f):
        raise LoadHistoryError(f"the record has {len(t)} times and {len(f)} values; give one value "
                           "per time")
    if len(t) < 2:
        raise LoadHistoryError(f"a load record needs at least two points; this one has {len(t)}")
    for name, x in (("time", t), ("value", f)):
        bad = np.nonzero(~np.isfinite(x))[0]
        if bad.size:
            raise LoadHistoryError(
                f"the {name} at {row(bad[0])} is {float(x[bad[0]])!r}, not a finite "
                               "number; mend or remove that point (nothing is filled in)",
                               row=int(bad[0]) + first_row, column=name)
    dt = np.diff(t)
    back = np.nonzero(dt < 0)[0]
    if back.size:
        i = back[0] + 1
        raise LoadHistoryError(
            f"the times must not decrease: {row(i)} has t = {float(t[i]):g} after "
                           f"t = {float(t[i - 1]):g}; sort the record or mend that time",
                           row=int(i) + first_row, column="time")
    triple = np.nonzero((dt[:-1] == 0) & (dt[1:] == 0))[0]
    if triple.size:
        i = triple[0]
        raise LoadHistoryError(
            f"three points at t = {float(t[i]):g} ({row(i)} on); a jump is two points at "
                           "one time: keep the value before and the value after",
                           row=int(i) + first_row, column="time")
    t_si, _ = _to_si(t, time_unit, "time")
    f_si, si_unit = _to_si(f, unit, "value") if unit else (np.asarray(f, dtype=float), "")
    if t_si[0] < 0:
        raise LoadHistoryError(
            f"the first time ({row(0)}) is {float(t[0]):g}, before t = 0; the record "
                           "must start at t = 0 or later (shift its times)", row=first_row,
                           column="time")
    return LoadHistory(t_si, f_si, hold_last=bool(hold_last), unit=si_unit, given_unit=unit,
                       time_unit=time_unit, source=source)


def _to_si(x: np.ndarray, unit: str, what: str):
    quantity = read_quantity(f"1 {unit}", f"the record's {what} unit")
    if quantity is None:
        raise UnitError(f"the record's {what} unit {unit!r} is not a unit; write e.g. 's', "
                        "'ms', 'N', 'kN', 'm/s**2'", name=what)
    if what == "time" and dict(quantity.dimensionality) != {"[time]": 1}:
        raise UnitError(f"the record's time unit {unit!r} is not a unit of time; write 's' or "
                        "'ms'", name=what)
    factor = float(quantity.si_value)
    return (np.asarray(x, dtype=float) * factor if factor != 1.0 else
            np.asarray(x, dtype=float)), quantity.si_unit


def _column(x, name: str, where: str) -> np.ndarray:
    n = _length(x)
    if n is not None and n > MAX_HISTORY_POINTS:
        raise LoadHistoryError(f"the record has {n:,} points, more than {MAX_HISTORY_POINTS:,}; "
                           "split it into parts, each derived from the state the last one "
                           "ends in, or thin it where the load is smooth")
    try:
        a = np.asarray(x, dtype=float)
    except (TypeError, ValueError) as exc:
        raise LoadHistoryError(f"the record's {name} ({where}) are not all numbers ({exc}); give "
                           "numbers only") from exc
    if a.ndim != 1:
        raise LoadHistoryError(f"the record's {name} must be one column of numbers, not an array "
                           f"of shape {a.shape}")
    return a


def _length(x):
    try:
        return len(x)
    except TypeError:
        return None


def _split_header(name: str) -> tuple[str, str]:
    m = _HEADER.match(str(name))
    return (m.group(1), m.group(2) or "") if m else (str(name), "")


def _pick(names, time, value, where):
    heads = [_split_header(n) for n in names]
    if len(heads) < 2:
        raise LoadHistoryError(
            f"{where}: the header names {len(heads)} column; a record has a time "
                           "column and a value column, e.g. 't [s], F [kN]'", row=1)

    def find(wanted, default):
        if wanted is None:
            return default
        for i, (n, _) in enumerate(heads):
            if wanted in (n, names[i]):
                return i
        listed = ", ".join(repr(n) for n, _ in heads)
        raise LoadHistoryError(f"{where}: no column named {wanted!r}; the columns are {listed}",
                           row=1, column=str(wanted))
    ti, fi = find(time, 0), find(value, 1)
    if ti == fi:
        raise LoadHistoryError(f"{where}: the time and the value are both column {heads[ti][0]!r}; "
                           "name two different columns", row=1)
    return ti, fi, heads[ti], heads[fi]


def _from_frame(frame, time, value, time_unit, unit, hold_last) -> LoadHistory:
    names = [str(c) for c in frame.columns]
    ti, fi, (tname, tu), (fname, fu) = _pick(names, time, value, "the table")
    t = _column(frame.iloc[:, ti].to_numpy(), f"column {tname!r}", "pandas")
    f = _column(frame.iloc[:, fi].to_numpy(), f"column {fname!r}", "pandas")
    rec = checked(t, f, time_unit or tu or "s", unit or fu or "", hold_last,
                  f"pandas table, columns {tname!r} and {fname!r}", first_row=0,
                  row_word="row ")
    return dataclasses.replace(rec, name=fname)


def _delimiter(header: str) -> str:
    for d in (",", ";", "\t"):
        if d in header:
            return d
    return " "


def _numbers(body: str, delimiter: str, width: int, path: str, names) -> np.ndarray:
    """The file's numbers (rows × columns); the first line that is not numbers is named."""
    lines = body.count("\n") + 1
    if lines > MAX_HISTORY_POINTS + 1:
        raise LoadHistoryError(
            f"{path} has {lines:,} lines, more than {MAX_HISTORY_POINTS:,} points; "
                           "split the record into parts")
    try:
        with np.errstate(all="ignore"):
            data = np.loadtxt(io.StringIO(body), delimiter=None if delimiter == " " else
                              delimiter, ndmin=2, dtype=float)
    except ValueError:
        data = None
    if data is not None and data.shape[1] == width and data.size:
        return data
    _first_bad_line(body, delimiter, width, path, names)
    raise LoadHistoryError(f"{path}: no numbers under the header; a record has a time and a value "
                       "on each line", row=2)


def _first_bad_line(body: str, delimiter: str, width: int, path: str, names) -> None:
    reader = csv.reader(io.StringIO(body), delimiter=delimiter if delimiter != " " else " ",
                        skipinitialspace=True)
    for k, cells in enumerate(reader):
        line = k + 2
        cells = [c for c in cells if c.strip()] if delimiter == " " else cells
        if not cells:
            continue
        if len(cells) != width:
            raise LoadHistoryError(
                f"{path}, line {line}: {len(cells)} fields where the header names "
                               f"{width}; each line holds one number per column", row=line)
        for c, cell in enumerate(cells):
            try:
                x = float(cell)
            except ValueError:
                x = None
            if x is None or not math.isfinite(x):
                raise LoadHistoryError(f"{path}, line {line}: {cell.strip()!r} in column "
                                   f"{names[c]!r} is not a finite number; mend or remove that "
                                   "line (nothing is filled in)", row=line, column=names[c])
