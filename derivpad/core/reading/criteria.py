"""Acceptance criteria as the user writes them: ``"peak <= 3 mm"`` read into a Criterion.

A criterion is a result key, ``<=`` or ``>=`` (``≤``, ``≥``), and a limit with its unit (none
for a ratio). Reading checks the form and the unit (pint must know it) and nothing else; what
the key names is judged against a derivation's results in ``checking/acceptance.py``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ...errors import ParameterError
from .units import read_quantity

__all__ = ["Criterion", "read_criteria"]

_FORM = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*)\s*(<=|>=|≤|≥)\s*(.+?)\s*$")
_NUMBER = re.compile(r"^\s*([-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)\s*(.*)$")


@dataclass(frozen=True, slots=True)
class Criterion:
    """A limit on one result: ``key <= limit`` (upper) or ``key >= limit`` (lower)."""

    key: str
    upper: bool
    limit: float
    unit: str
    text: str

    def to_dict(self) -> dict:
        return {"key": self.key, "relation": "<=" if self.upper else ">=",
                "limit": self.limit, "unit": self.unit, "text": self.text}


def read_criteria(criteria) -> tuple[Criterion, ...]:
    """``criteria=`` read and checked: a list of texts such as ``"peak <= 3 mm"``."""
    if criteria is None:
        return ()
    if isinstance(criteria, str) or not hasattr(criteria, "__iter__"):
        msg = ("criteria= must be a list of limits, e.g. criteria=[\"peak <= 3 mm\", "
               "\"settling_time_2pct <= 2 s\"]")
        raise ParameterError(msg, "criteria")
    return tuple(_criterion(text) for text in criteria)


def _criterion(text) -> Criterion:
    if not isinstance(text, str):
        raise ParameterError(f"criterion {text!r} must be text such as \"peak <= 3 mm\"",
                             "criteria")
    m = _FORM.match(text)
    if not m:
        msg = (f"cannot read the criterion {text!r}; write a result key, <= or >=, and a limit "
               "with its unit, e.g. \"peak <= 3 mm\" or \"damping_ratio >= 0.05\"")
        raise ParameterError(msg, "criteria")
    key, relation, limit = m.groups()
    quantity = read_quantity(limit, f"limit of {key}")   # refuses a unit pint does not know
    number = _NUMBER.match(limit)
    if number is None:
        raise ParameterError(f"the limit in {text!r} is not a number with a unit, e.g. 3 mm",
                             "criteria")
    value, unit = float(number.group(1)), (number.group(2).strip() if quantity else "")
    if not math.isfinite(value):
        raise ParameterError(f"the limit in {text!r} is not finite", "criteria")
    return Criterion(key, relation in ("<=", "≤"), value, unit, text.strip())
