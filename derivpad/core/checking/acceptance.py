"""Acceptance criteria: limits a calc states on its results, judged with units.

A criterion is text such as ``"peak <= 3 mm"``, ``"settling_time_2pct <= 2 s"``,
``"peak_stroke <= 12 mm"`` (a system's derived quantity) or ``"damping_ratio >= 0.05"``: a
result key, ``<=`` or ``>=``, and a limit with its unit (none for a ratio). Each is judged
against the derivation's result in the limit's unit (a peak by its size, |y| at the supremum): the
utilisation is value/limit for an upper limit and limit/value for a lower one, and the outcome
OK or NOT OK. A result that is
absent or unbounded cannot meet a limit: NOT OK, with the reason.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...errors import ParameterError, UnitError
from ..reading.criteria import Criterion, read_criteria
from ..model.result import Result
from ..reading.units import registry

__all__ = ["Criterion", "Judgement", "judge", "judge_calc", "judge_columns", "read_criteria",
           "unjudged"]


@dataclass(frozen=True, slots=True)
class Judgement:
    """A criterion judged: the result's value in the limit's unit, the utilisation ratio and
    the outcome (``ok``); ``reason`` says why a result could not be judged."""

    criterion: Criterion
    value: float | None
    utilisation: float | None
    ok: bool
    reason: str = ""

    @property
    def outcome(self) -> str:
        return "OK" if self.ok else "NOT OK"

    def to_dict(self) -> dict:
        finite = lambda x: x if x is not None and math.isfinite(x) else None  # noqa: E731
        return {**self.criterion.to_dict(), "value": finite(self.value),
                "utilisation": finite(self.utilisation), "outcome": self.outcome,
                "reason": self.reason}


def judge(criteria, results) -> tuple[Judgement, ...]:
    """Each criterion against the results mapping (key → Result)."""
    out = []
    for c in criteria:
        r = results.get(c.key) if results else None
        if r is None:
            known = ", ".join(sorted(results or {})[:12])
            msg = (f"the criterion {c.text!r} names the result {c.key!r}, which this "
                   f"derivation does not have (its results: {known}, …)")
            raise ParameterError(msg, c.key)
        out.append(_judged(c, r))
    return tuple(out)


def judge_calc(criteria, results_of) -> tuple[tuple[tuple[Judgement, ...], ...], tuple]:
    """A calc's own criteria (its record's) judged on each of its derivations.

    ``results_of`` holds each derivation's results mapping. A criterion applies to every
    derivation whose results have its key; a derivation without results (withheld: a check
    failed, or parameters without values) meets none of them. Returns the judgements per
    derivation and the criteria that no derivation with results answers (a misspelt key).
    """
    criteria = read_criteria(criteria)
    per, answered = [], set()
    for results in results_of:
        if not results:
            per.append(unjudged(criteria, "this derivation has no results (a check did not "
                                          "pass, or a parameter has no value)"))
            continue
        mine = [c for c in criteria if c.key in results]
        answered.update(c.text for c in mine)
        per.append(judge(mine, results))
    with_results = any(results_of)
    missing = tuple(c for c in criteria if with_results and c.text not in answered)
    return tuple(per), missing


def judge_columns(criteria, columns: dict, reference) -> dict:
    """Each criterion judged for many cases at once: {criterion text: (utilisation array,
    outcome array)}. ``columns`` holds each result's values (display unit, NaN where it does
    not apply, inf where unbounded); ``reference`` one case's results mapping, whose units
    convert them (as :func:`judge` does, a peak by its size)."""
    import numpy as np
    out = {}
    for c in criteria:
        r = reference.get(c.key)
        if r is None or c.key not in columns:
            judge([c], reference)  # raises with the results the calc has
            msg = f"the criterion {c.text!r} cannot be judged over arrays"
            raise ParameterError(msg, c.key)
        zero, one = (_in_unit(Result(r.key, "", _like(r, x), r.unit, "", ""), c) for x in (0.0, 1.0))
        values = columns[c.key]
        value = zero + (one - zero) * values
        if c.key.startswith("peak"):
            value = np.abs(value)
        with np.errstate(all="ignore"):
            if c.upper:
                use = value / c.limit if c.limit else np.where(value > 0, math.inf, 0.0)
                ok = value <= c.limit
            else:
                use = np.where(value != 0, c.limit / value, math.inf)
                ok = value >= c.limit
        use = np.where(np.isnan(values), math.nan, np.where(np.isinf(values), math.inf, use))
        ok &= np.isfinite(values)
        out[c.text] = (use, np.where(ok, "OK", "NOT OK"))
    return out


def _like(r, x: float):
    """x in the unit of the result ``r`` (a pint Quantity where r's value is one)."""
    q = r.value
    return type(q)(x, q.units) if hasattr(q, "units") else x


def unjudged(criteria, why: str) -> tuple[Judgement, ...]:
    """The criteria of a derivation without results: each NOT OK, saying why."""
    return tuple(Judgement(c, None, None, False, f"cannot be judged: {why}") for c in criteria)


def _judged(c: Criterion, r) -> Judgement:
    m = r.magnitude
    if m is None:
        return Judgement(c, None, None, False, f"cannot be judged: {r.reason}")
    if isinstance(m, (tuple, list, str)):
        raise ParameterError(f"{c.key!r} is not a single number (it is {m!r}); a limit "
                             "applies to one value", c.key)
    if isinstance(m, float) and math.isinf(m):
        return Judgement(c, math.inf, math.inf, False,
                         "unbounded: " + (r.reason or r.note or "no finite value"))
    value = _in_unit(r, c)
    if c.key.startswith("peak"):  # a peak is the value at sup |y|: its size meets the limit
        value = abs(value)
    if c.upper:
        use = value / c.limit if c.limit else (math.inf if value > 0 else 0.0)
        ok = value <= c.limit
    else:
        use = c.limit / value if value else math.inf
        ok = value >= c.limit
    return Judgement(c, value, use, ok)


def _in_unit(r, c: Criterion) -> float:
    """The result's value in the criterion's unit; a unit of another dimension is refused."""
    q = r.value
    if not c.unit:
        if hasattr(q, "to") and not q.dimensionless:
            raise UnitError(f"the criterion {c.text!r} has no unit, but {c.key} is in "
                            f"{r.unit}; give the limit with a unit, e.g. \"{c.key} <= 3 "
                            f"{r.unit}\"", name=c.key)
        return float(getattr(q, "magnitude", q))
    if not hasattr(q, "to"):
        if not r.unit:
            raise UnitError(f"the criterion {c.text!r} has a unit, but {c.key} has none (the "
                            "problem was given without units); write the limit as a plain "
                            f"number in the equation's own units, e.g. \"{c.key} <= 0.003\", "
                            "or give the parameters with units", name=c.key)
        if r.unit == c.unit:
            return float(q)
        q = registry().Quantity(float(q), r.unit)
    try:
        return float(q.to(c.unit).magnitude)
    except Exception as exc:  # pint's DimensionalityError: translated at the boundary
        raise UnitError(f"the criterion {c.text!r} is in {c.unit!r}, which does not match "
                        f"{c.key} in {r.unit!r}", name=c.key) from exc
