"""The results of a set of load cases: the table, the envelope with its governing cases, the
forms derived, and what was verified."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType

import numpy as np

from ..errors import ExportError, ParameterError
from .store import StoredTable, publish
from .table import pandas

__all__ = ["CASES_FORMAT_VERSION", "CaseResults", "envelope_of"]

CASES_FORMAT_VERSION = 1
"""Version of the JSON form of CaseResults (``to_dict``)."""

_NOT_RESULTS = ("case", "form", "notes")


def envelope_of(frame, units: dict, ids, inputs):
    """For each result column (not an input): its largest and smallest value over the cases
    and the case each comes from (cases whose value is NaN, a result that does not apply, are
    left out; an unbounded case governs with inf)."""
    pd = pandas()
    rows = []
    for key in frame.columns:
        if key in _NOT_RESULTS or key in inputs or str(key).endswith(": outcome") or \
                frame[key].dtype.kind != "f":
            continue
        col = frame[key].to_numpy(dtype=float)
        ok = ~np.isnan(col)
        if not ok.any():
            continue
        hi, lo = int(np.nanargmax(col)), int(np.nanargmin(col))
        rows.append({"result": key, "unit": units.get(key, ""), "max": col[hi],
                     "case of max": ids[hi], "min": col[lo], "case of min": ids[lo],
                     "cases with a value": int(ok.sum())})
    return pd.DataFrame(rows, columns=["result", "unit", "max", "case of max", "min",
                                       "case of min", "cases with a value"])


@dataclass(frozen=True)
class CaseResults:
    """A calc evaluated for every case of a table.

    ``table``: one row per case (its name, its inputs in their columns' units, each result in
    its display unit, each criterion's utilisation and outcome, the form it used, and why a
    result has no value), a pandas DataFrame — held in ``rows``, which for a run kept in a
    store is the store's ``cases.parquet``, read when ``table`` is first used; ``envelope``: the largest and smallest value of each result with
    the case it comes from; ``forms``: (form, Derivation) for each form derived in symbols,
    checked in full; ``units``: the unit of every column; ``verified``: what was checked;
    ``inputs``: the varied parameters' columns.
    """

    rows: object
    envelope: object
    forms: tuple
    units: MappingProxyType
    verified: tuple
    inputs: tuple = ()

    def __post_init__(self):
        object.__setattr__(self, "units", MappingProxyType(dict(self.units)))

    @property
    def table(self):
        """The table as a pandas DataFrame (a stored run's read from its store when first
        used)."""
        rows = self.rows
        return rows.frame if isinstance(rows, StoredTable) else rows

    @property
    def cases(self) -> int:
        """How many cases the run has (without reading a stored table)."""
        return len(self.rows)

    def governing(self, key: str, which: str = "max"):
        """The row (inputs and results) of the case that governs ``key`` (``"max"`` or
        ``"min"``)."""
        if which not in ("max", "min"):
            raise ParameterError(f"which must be 'max' or 'min', not {which!r}", "which")
        rows = self.envelope[self.envelope["result"] == key]
        if rows.empty:
            known = ", ".join(self.envelope["result"].tolist()[:12])
            raise ParameterError(f"no result {key!r} in the envelope (results: {known}, …)",
                                 key)
        case = rows.iloc[0][f"case of {which}"]
        return self.table[self.table["case"] == case].iloc[0]

    @property
    def all_ok(self) -> bool:
        """True when every criterion is OK in every case (True without criteria)."""
        cols = [c for c in self.table.columns if str(c).endswith(": outcome")]
        return all((self.table[c] == "OK").all() for c in cols)

    def to_dict(self) -> dict:
        """The JSON form (the notebook's vendor output, read by the packager): the table by
        column (NaN as null, ±inf as "inf"/"-inf"), the envelope, what was verified, and each
        form's derivation in its own JSON form."""
        return {"format": "derivpad.cases", "format_version": CASES_FORMAT_VERSION,
                "inputs": list(self.inputs), "units": dict(self.units),
                "table": {str(c): [_plain(v) for v in self.table[c].tolist()]
                          for c in self.table.columns},
                "envelope": [{k: _plain(v) for k, v in row.items()}
                             for row in self.envelope.to_dict("records")],
                "verified": list(self.verified),
                "forms": [{"form": f, "derivation": d.to_dict()} for f, d in self.forms]}

    @classmethod
    def from_dict(cls, data: dict) -> "CaseResults":
        """The CaseResults of its JSON form (:meth:`to_dict`), e.g. read from a notebook's
        output by the packager."""
        from ..core.model.derivation import Derivation
        pd = pandas()
        columns = {}
        for name, values in data["table"].items():
            text = any(isinstance(v, str) and v not in ("inf", "-inf") for v in values)
            columns[name] = values if text else [_number(v) for v in values]
        envelope = pd.DataFrame([{k: _number(v) if k in ("max", "min") else v
                                  for k, v in row.items()} for row in data["envelope"]],
                                columns=["result", "unit", "max", "case of max", "min",
                                         "case of min", "cases with a value"])
        forms = tuple((f["form"], Derivation.from_dict(f["derivation"]))
                      for f in data.get("forms", []))
        return cls(pd.DataFrame(columns), envelope, forms, data["units"],
                   tuple(data["verified"]), tuple(data["inputs"]))

    def figure(self, result: str | None = None):
        """A matplotlib Figure of ``result`` (default: the first criterion's result, else the
        peak) against each input, the governing case marked, and the criterion's utilisation
        (the notebook extra's matplotlib)."""
        from ..render.cases import cases_figure
        return cases_figure(self, result)

    def to_csv(self, path) -> Path:
        """Write the table as CSV (written whole or not at all)."""
        return _atomic(Path(path), lambda p: self.table.to_csv(p, index=False))

    def to_parquet(self, path) -> Path:
        """Write the table as Parquet (pyarrow, the cases extra)."""
        from ..errors import import_extra
        import_extra(("pyarrow",), "Parquet output", "cases")
        return _atomic(Path(path), lambda p: self.table.to_parquet(p, index=False))

    def _repr_mimebundle_(self, include=None, exclude=None):
        """Summary, envelope, verification and the table's head; never raises into the
        notebook."""
        try:
            from ..render.cases import cases_bundle
            return cases_bundle(self, include, exclude)
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"CaseResults: {self.cases} cases (display failed: "
                                  f"{exc})"}


def _atomic(path: Path, write) -> Path:
    if not path.parent.is_dir():
        raise ExportError(f"no folder {path.parent} to write {path.name} in")
    return publish(path, write)


def _plain(v):
    """A JSON-safe value: numbers as Python numbers, NaN as None, ±inf as "inf"/"-inf"."""
    if isinstance(v, (np.floating, float)):
        v = float(v)
        if v != v:
            return None
        if v in (float("inf"), float("-inf")):
            return "inf" if v > 0 else "-inf"
        return v
    if isinstance(v, np.integer):
        return int(v)
    return v


def _number(v) -> float:
    """A number of the JSON form: null as NaN, "inf"/"-inf" as ±inf."""
    if v is None:
        return float("nan")
    if v in ("inf", "-inf"):
        return float(v)
    return float(v)
