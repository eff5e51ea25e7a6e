"""The Result value object: one engineering result with its unit, formula and source.

A value of ``None`` means the result does not apply, ``math.inf`` that it is unbounded or only
approached; ``reason`` and ``note`` say which and why. Computed in core/results.py.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Result"]


@dataclass(frozen=True, slots=True)
class Result:
    """One engineering result: value (a pint Quantity where a unit applies), unit, how, source."""

    key: str
    label: str
    value: object
    unit: str
    formula: str
    source: str
    reason: str = ""   # why the value is None (does not apply) or math.inf (unbounded)
    note: str = ""     # e.g. "approached as t → ∞, not attained"

    @property
    def present(self) -> bool:
        """True when the result has a finite value."""
        m = self.magnitude
        return m is not None and not (isinstance(m, float) and math.isinf(m))

    @property
    def magnitude(self):
        """The plain number (or tuple of numbers) without its unit."""
        return getattr(self.value, "magnitude", self.value)

    def to_dict(self) -> dict:
        m = self.magnitude
        infinite = isinstance(m, float) and math.isinf(m)
        status = ("not applicable" if m is None else
                  "unbounded" if infinite and self.reason.startswith("unbounded") else
                  "as t → ∞" if infinite else "value")
        return {"key": self.key, "label": self.label, "value": _json_value(m) if m is not None
                else None, "unit": self.unit, "status": status, "reason": self.reason,
                "note": self.note, "formula": self.formula, "source": self.source}


def _json_value(v):
    """Numbers, tuples of numbers and tuples of tuples (mode shapes) as JSON values."""
    if isinstance(v, (list, tuple)):
        return [_json_value(x) for x in v]
    return _json_number(v)


def _json_number(v):
    if isinstance(v, complex):
        return {"re": v.real, "im": v.imag}
    if isinstance(v, (bool, str)):
        return v
    v = float(v)
    return v if math.isfinite(v) else None
