"""The results of a load-case run kept in a store: the envelope from the chunks' summaries,
``cases.parquet`` written from the chunk files one at a time, the table read from it only when
used, and single rows read back for the sampled checks; memory bounded by a chunk."""

from __future__ import annotations

import numpy as np

from .forms import verify_forms
from .results import CaseResults
from .sampled_checks import sampled_checks
from .store import ChunkStore, StoredTable, write_stored_table
from .table import pandas

__all__ = ["stored_results", "units_of"]

def stored_results(spec, family, table, summaries, seed, runner, chunks) -> CaseResults:
    """The CaseResults of a run whose rows are in its store: the envelope from the chunks'
    summaries, ``cases.parquet`` written from the chunk files one at a time, the table read
    from it only when used; memory bounded by a chunk, not by the number of cases."""
    store = ChunkStore(*chunks)
    names = tuple(dict.fromkeys(f for s in summaries for f in s.form_names))
    code = {f: i for i, f in enumerate(names)}
    codes = np.concatenate([np.array([code[f] for f in s.form_names], dtype=np.int16)[s.forms]
                            for s in summaries])
    forms = CodedForms(codes, names)
    kinds = verify_forms(family, table, forms, (names, codes))
    keys = tuple(dict.fromkeys(k for s in summaries for k in s.keys))
    units = units_of(table, {k: u for s in summaries for k, u in s.units.items()})
    envelope = envelope_of_chunks(summaries, keys, units, table)
    path = write_stored_table(store.folder / "cases.parquet", store, summaries, table, keys,
                              units)
    rows = StoredRows(store, summaries, table)
    evaluated = np.flatnonzero(codes != code.get("failed", -1)).astype(np.int32 if len(codes)
                                                                        < 2 ** 31 else np.int64)
    checked = sampled_checks(spec, table, forms, evaluated, kinds, envelope, seed, runner,
                             rows.row)
    used = tuple((f, d) for f, d in family.verified.items() if f in kinds)
    return CaseResults(StoredTable(path, len(table)), envelope, used, units, checked,
                       table.names)


class CodedForms:
    """Each case's form as a small code, read as its name (``forms[i]``)."""

    def __init__(self, codes, names):
        self.codes, self.names = codes, names

    def __getitem__(self, i):
        return self.names[self.codes[i]]

    def __len__(self) -> int:
        return len(self.codes)


class StoredRows:
    """Rows of a stored run read back from their chunk files (the last file kept)."""

    def __init__(self, store, summaries, table):
        self.store, self.summaries, self.table = store, summaries, table
        self.starts = np.cumsum([0] + [s.size for s in summaries])
        self._open = (None, None)

    def row(self, i: int):
        """Case ``i``'s results as a pandas Series (key → value)."""
        k = int(np.searchsorted(self.starts, i, side="right")) - 1
        s = self.summaries[k]
        if self._open[0] != s.key:
            import pyarrow.parquet as pq
            self._open = (s.key, pq.read_table(self.store.chunks / f"{s.key}.parquet"))
        part = self._open[1]
        j = i - int(self.starts[k])
        pd = pandas()
        return pd.Series({c[2:]: part.column(c)[j].as_py() for c in part.column_names
                          if c.startswith("r:")})


def units_of(table, found: dict) -> dict:
    units = dict(zip(table.names, table.units))
    for key, unit in found.items():
        units.setdefault(key, unit)
    return units


def envelope_of_chunks(summaries, keys, units: dict, table):
    """The envelope (as :func:`envelope_of`) from the chunks' extremes: the largest value the
    first case that has it, as over the whole table."""
    pd = pandas()
    rows = []
    starts = np.cumsum([0] + [s.size for s in summaries])
    for key in keys:
        if key.endswith(": outcome"):
            continue
        best = None
        for start, s in zip(starts, summaries):
            e = s.extremes.get(key)
            if e is None:
                continue
            hi, at_hi, lo, at_lo, count = e
            if best is None:
                best = [hi, start + at_hi, lo, start + at_lo, count]
                continue
            if hi > best[0]:
                best[0], best[1] = hi, start + at_hi
            if lo < best[2]:
                best[2], best[3] = lo, start + at_lo
            best[4] += count
        if best is not None:
            rows.append({"result": key, "unit": units.get(key, ""), "max": best[0],
                         "case of max": table.ids[int(best[1])], "min": best[2],
                         "case of min": table.ids[int(best[3])], "cases with a value": best[4]})
    return pd.DataFrame(rows, columns=["result", "unit", "max", "case of max", "min",
                                       "case of min", "cases with a value"])
