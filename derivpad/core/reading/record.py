"""The calc record: what a reviewer needs to follow a calculation without asking its author.

A :class:`CalcRecord` holds the title, calc number, revision, project, purpose, method,
preparer and checker with dates, revision history, the user's assumptions, the inputs (each
with its value, unit and the source of the value), references, and the calc's acceptance
criteria (judged on every derivation that has the result when the calc is packaged). It is immutable; a change
is a copy (``copy_with``). Derivations add their own assumptions, rules and verification to
the record when a package is assembled.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields

from ...errors import ParameterError
from .criteria import read_criteria
from .units import read_quantity

__all__ = ["CalcRecord", "RecordInput", "Revision"]


@dataclass(frozen=True, slots=True)
class RecordInput:
    """One input: its name, its value as given (with unit), and where the value comes from."""

    name: str
    value: str
    source: str

    def to_dict(self) -> dict:
        return {"name": self.name, "value": self.value, "source": self.source}


@dataclass(frozen=True, slots=True)
class Revision:
    """One line of the revision history."""

    revision: str
    date: str
    description: str
    by: str = ""            # who made the revision, where given

    def to_dict(self) -> dict:
        out = {"revision": self.revision, "date": self.date, "description": self.description}
        return {**out, "by": self.by} if self.by else out


def _text(value, what: str, required: bool = False) -> str:
    if value is None:
        value = ""
    if not isinstance(value, str):
        raise ParameterError(f"the calc record's {what} must be text, not "
                             f"{type(value).__name__}", what)
    if required and not value.strip():
        raise ParameterError(f"the calc record needs a {what}; give {what}='...'", what)
    return value.strip()


def _triples(items, cls, what: str, shape: str) -> list:
    """Entries given as ``cls`` objects or as 3-tuples, the tuples checked for their shape."""
    out = []
    for i, item in enumerate(items or ()):
        if isinstance(item, cls):
            out.append(item)
            continue
        try:
            first, second, third = item
        except (TypeError, ValueError) as exc:
            raise ParameterError(f"{what} #{i} is {item!r}; give ({shape})", what) from exc
        out.append((first, second, third))
    return out


def _inputs(items) -> tuple[RecordInput, ...]:
    out = []
    for item in _triples(items, RecordInput, "record input",
                         "name, value with unit, source of the value"):
        if not isinstance(item, RecordInput):
            name, value, source = item
            value = str(value)
            read_quantity(value, str(name))  # a unit pint does not know is refused here
            item = RecordInput(_text(name, "input name", True), value,
                               _text(source, f"source of input {name!r}", True))
        out.append(item)
    names = [inp.name for inp in out]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise ParameterError(f"record inputs listed twice: {', '.join(dupes)}", "inputs")
    return tuple(out)


def _revisions(items) -> tuple[Revision, ...]:
    """(revision, date, description) or (revision, date, description, by) entries."""
    out = []
    for i, item in enumerate(items or ()):
        if isinstance(item, Revision):
            out.append(item)
            continue
        if isinstance(item, dict):
            item = (item.get("revision"), item.get("date"), item.get("description"),
                    item.get("by", ""))
        try:
            parts = tuple(str(v) for v in item)
        except TypeError as exc:
            raise ParameterError(f"revision-history entry #{i} is {item!r}; give (revision, "
                                 "date, description[, by])", "revision-history entry") from exc
        if len(parts) not in (3, 4):
            raise ParameterError(f"revision-history entry #{i} is {item!r}; give (revision, "
                                 "date, description[, by])", "revision-history entry")
        out.append(Revision(*parts))
    return tuple(out)


@dataclass(frozen=True, slots=True)
class CalcRecord:
    """The header of a calculation: identity, purpose, people, inputs and references."""

    title: str
    calc_number: str
    revision: str
    project: str = ""
    purpose: str = ""
    method: str = ""
    preparer: str = ""
    checker: str = ""
    prepared_date: str = ""
    checked_date: str = ""
    revision_history: tuple = field(default=())
    assumptions: tuple = field(default=())
    inputs: tuple = field(default=())
    references: tuple = field(default=())
    criteria: tuple = field(default=())

    def __post_init__(self):
        # Normalise once, at construction: text fields stripped, lists made tuples of values.
        for f in fields(self):
            value = getattr(self, f.name)
            if f.name in ("title", "calc_number", "revision"):
                value = _text(value, f.name.replace("_", " "), required=True)
            elif f.name == "inputs":
                value = _inputs(value)
            elif f.name == "revision_history":
                value = _revisions(value)
            elif f.name in ("assumptions", "references"):
                value = tuple(_text(v, f.name[:-1]) for v in (value or ()))
            elif f.name == "criteria":
                value = tuple(c.text for c in read_criteria(value or ()))
            else:
                value = _text(value, f.name.replace("_", " "))
            object.__setattr__(self, f.name, value)
        if any(ch in self.calc_number for ch in "/\\:*?\"<>|") or self.calc_number.startswith("."):
            msg = (f"calc number {self.calc_number!r} must be usable as a folder name (no / \\ : "
                   "* ? \" < > |)")
            raise ParameterError(msg, "calc_number")

    @property
    def package_name(self) -> str:
        """The folder a calc package of this record goes in: '<calc-number>-rev<R>'."""
        return f"{self.calc_number}-rev{self.revision}"

    def copy_with(self, **changes) -> "CalcRecord":
        """A new record with some fields replaced (records are immutable)."""
        values = {f.name: getattr(self, f.name) for f in fields(self)}
        unknown = sorted(set(changes) - set(values))
        if unknown:
            raise ParameterError(f"CalcRecord has no field {unknown[0]!r}", unknown[0])
        values.update(changes)
        return CalcRecord(**values)

    def to_dict(self) -> dict:
        out = {}
        for f in fields(self):
            value = getattr(self, f.name)
            if f.name in ("inputs", "revision_history"):
                value = [v.to_dict() for v in value]
            elif isinstance(value, tuple):
                value = list(value)
            out[f.name] = value
        return out

    def _repr_mimebundle_(self, include=None, exclude=None):
        """Rich display as a header block; never raises into the notebook."""
        try:
            from ..model.display_hook import record_bundle
            return record_bundle(self, include, exclude)
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"CalcRecord {self.calc_number} rev {self.revision} "
                                  f"(display failed: {exc})"}
