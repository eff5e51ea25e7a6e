"""A chunk of evaluated cases, held by column: what a worker returns and a store keeps.

Each result key has one array over the chunk's cases (a number in the result's display unit,
NaN where the case has no value; a criterion's outcome as text, "not evaluated" where the case
failed), its unit, and each case's note and form. Cases evaluated together over arrays fill
their columns at once; a case evaluated on its own fills its row.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Chunk", "ChunkBuilder", "joined"]

NOT_EVALUATED = "not evaluated"


def _is_text(key: str) -> bool:
    return key.endswith(": outcome")


def _empty(key: str, n: int) -> np.ndarray:
    return np.full(n, NOT_EVALUATED, dtype=object) if _is_text(key) else np.full(n, math.nan)


@dataclass(frozen=True, eq=False)
class Chunk:
    """The results of a chunk's cases: ``keys`` in order, ``units`` and ``columns`` by key,
    ``notes`` and ``forms`` per case."""

    keys: tuple
    units: dict
    columns: dict
    notes: list
    forms: list

    def __len__(self) -> int:
        return len(self.forms)


class ChunkBuilder:
    """Fills a chunk's columns, each key added when first met (in that order)."""

    def __init__(self, n: int):
        self.n = n
        self.keys: list = []
        self.units: dict = {}
        self.columns: dict = {}
        self.notes = [""] * n
        self.forms = [""] * n
        self._first: dict = {}  # key → (first case with it, order of writing)

    def _column(self, key: str, unit: str, at: int) -> np.ndarray:
        if key not in self.columns:
            self.keys.append(key)
            self.units[key] = unit
            self.columns[key] = _empty(key, self.n)
        mark = (at, len(self._first) if key not in self._first else self._first[key][1])
        self._first[key] = min(self._first.get(key, mark), mark)
        return self.columns[key]

    def row(self, i: int, row: dict, note: str, form: str) -> None:
        """One case: {key: (value, unit)}."""
        for key, (value, unit) in row.items():
            self._column(key, unit, i)[i] = value
        self.notes[i], self.forms[i] = note, form

    def rows(self, idx: np.ndarray, columns: dict, units: dict, notes, form: str) -> None:
        """Cases ``idx`` at once: {key: values over them}."""
        at = int(np.min(idx)) if len(idx) else self.n
        for key, values in columns.items():
            self._column(key, units.get(key, ""), at)[idx] = values
        for i, note in zip(idx.tolist(), notes):
            self.notes[i], self.forms[i] = note, form

    def finish(self) -> Chunk:
        """The chunk, its keys in the order a case-by-case pass would meet them: by the first
        case that has each, then by its order in that case's results."""
        keys = tuple(sorted(self.keys, key=lambda k: self._first[k]))
        return Chunk(keys, dict(self.units), dict(self.columns), self.notes, self.forms)


def joined(chunks) -> Chunk:
    """The chunks one after another as one: keys in the order first met; a key a chunk lacks
    is empty there."""
    keys: list = []
    units: dict = {}
    for c in chunks:
        for k in c.keys:
            if k not in units:
                keys.append(k)
                units[k] = c.units[k]
    columns = {k: np.concatenate([c.columns[k] if k in c.columns else _empty(k, len(c))
                                  for c in chunks]) if chunks else _empty(k, 0) for k in keys}
    notes = [x for c in chunks for x in c.notes]
    forms = [x for c in chunks for x in c.forms]
    return Chunk(tuple(keys), units, columns, notes, forms)


@dataclass(frozen=True, eq=False)
class ChunkSummary:
    """What a run that keeps its rows in a store holds of a chunk: its file's key, its result
    keys and units, each case's form (codes into ``form_names``), and per numeric result its
    largest and smallest value with where they are (position within the chunk) and how many
    cases have a value — enough for the envelope without the rows."""

    key: str
    size: int
    keys: tuple
    units: dict
    forms: np.ndarray
    form_names: tuple
    extremes: dict

    def __len__(self) -> int:
        return self.size

    @classmethod
    def of(cls, chunk: Chunk, key: str) -> "ChunkSummary":
        """The summary of ``chunk``, kept in the store's file ``key``."""
        names = tuple(dict.fromkeys(chunk.forms))
        code = {f: i for i, f in enumerate(names)}
        extremes = {}
        for k in chunk.keys:
            if _is_text(k):
                continue
            col = np.asarray(chunk.columns[k], dtype=float)
            has = ~np.isnan(col)
            if has.any():
                hi, lo = int(np.nanargmax(col)), int(np.nanargmin(col))
                extremes[k] = (float(col[hi]), hi, float(col[lo]), lo, int(has.sum()))
        return cls(key, len(chunk), chunk.keys, dict(chunk.units),
                   np.array([code[f] for f in chunk.forms], dtype=np.int16), names, extremes)

    def form_list(self) -> list:
        """Each case's form by name."""
        return [self.form_names[c] for c in self.forms.tolist()]
