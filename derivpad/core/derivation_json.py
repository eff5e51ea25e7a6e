"""Reading a derivation back from its canonical JSON form (``Derivation.from_dict``).

Every expression is rebuilt from its tree (core/exprtree.py), never from text; steps with
their lines and rules, the checks, the results with their units and the problem with its unit
contexts come back as the value objects they were. The verification's sampled arrays are not
part of the JSON form, so a derivation read back has no figure samples.
"""

from __future__ import annotations

import math
from types import MappingProxyType

from ..errors import ParseError
from .symbolic.algebra import Pole
from .model.derivation import Derivation
from .model.exprtree import from_tree
from .model.problem import Problem
from .model.result import Result
from .checking.acceptance import Criterion, Judgement
from .checking.results import _quantity
from .symbolic.rules import rule
from .model.steps import Line, Rule, Step
from .reading.units import Quantity, UnitContext, registry
from .model.checks import Check, Samples, Verification

__all__ = ["FORMAT", "READABLE_VERSIONS", "derivation_from_dict"]

FORMAT = "derivpad.derivation"
READABLE_VERSIONS = (2,)


def derivation_from_dict(data: dict) -> Derivation:
    """The Derivation whose ``to_dict()`` is ``data`` (format version 2)."""
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise ParseError(f"not a derivation in the {FORMAT!r} JSON form")
    if data.get("version") not in READABLE_VERSIONS:
        msg = (f"derivation JSON version {data.get('version')!r} cannot be read back into a "
               f"Derivation (readable: {', '.join(map(str, READABLE_VERSIONS))}); version 1 "
               "records are read by the audit as records")
        raise ParseError(msg)
    problem = _problem(data["problem"], data.get("units"))
    tree = {u: from_tree(t) for u, t in _trees(data, "transforms").items()}
    derivation = Derivation(
        problem=problem,
        steps=tuple(_step(s) for s in data["steps"]),
        transforms=tree,
        solutions={u: from_tree(t) for u, t in _trees(data, "solutions").items()},
        interval_map={u: tuple((from_tree(iv["from"]["tree"]), from_tree(iv["tree"]))
                               for iv in ivs) for u, ivs in data["piecewise"].items()},
        impulses=tuple((int(i), from_tree(c), from_tree(a)) for i, c, a in data["impulses"]),
        poles=_pole_list(data["poles"]),
        response_poles={u: _pole_list(ps) for u, ps in data["response_poles"].items()},
        window=None if data["window"] is None else float(data["window"]),
        value_rows=tuple((str(n), float(v), str(u)) for n, v, u in data["value_table"]),
        acceptance=tuple(_judgement(j) for j in data.get("acceptance", ())),
        assumptions=tuple(data["assumptions"]),
        conditions=tuple(from_tree(c) for c in data["conditions"]),
        verification=Verification(tuple(_check(c) for c in data["verification"]["checks"]),
                                  _samples(data.get("samples"))),
        notes=tuple(data["notes"]),
        results=MappingProxyType({k: _result(r, problem) for k, r in data["results"].items()}),
        parts={u: tuple((from_tree(c), from_tree(r)) for c, r in ps)
               for u, ps in data["parts"].items()},
        values=tuple((name, from_tree(v["tree"]))
                     for name, v in data["values_for_checks"].items()),
        derived={name: from_tree(e["tree"]) for name, e in data["derived"].items()},
        determinant=from_tree(data["determinant"]["tree"]))
    if isinstance(data.get("load"), dict):  # a record's or a periodic load's summary, kept
        derivation._cache["load_json"] = dict(data["load"])
    return derivation


def _samples(data):
    """The figure's samples where the JSON keeps them (a derivation under a load record or a
    periodic load, whose figure cannot be drawn again from the generic closed form alone)."""
    if not isinstance(data, dict):
        return None
    import numpy as np

    def arrays(block):
        return {str(k): np.asarray(v, dtype=float) for k, v in dict(block).items()}
    return Samples(np.asarray(data["times"], dtype=float), arrays(data["closed_form"]),
                   arrays(data["integrated"]), arrays(data["forcing"]), ())


def _judgement(j: dict) -> Judgement:
    number = (lambda x: None if x is None else float(x))  # noqa: E731
    c = Criterion(j["key"], j["relation"] == "<=", float(j["limit"]), j["unit"], j["text"])
    value = number(j["value"])
    if value is None and j["reason"].startswith("unbounded"):
        value = math.inf
    use = number(j["utilisation"])
    if use is None and value == math.inf:
        use = math.inf
    return Judgement(c, value, use, j["outcome"] == "OK", j["reason"])


def _pole_list(poles) -> tuple:
    return tuple(Pole(p["kind"], from_tree(p["value"]["tree"]), from_tree(p["beta"]["tree"]),
                      int(p["multiplicity"]), bool(p["numeric"])) for p in poles)


def _trees(data, key) -> dict:
    return {u: e["tree"] for u, e in data[key].items()}


def _problem(p: dict, units) -> Problem:
    quantities = tuple(
        Quantity(name, q["given"], from_tree(q["si_exact"]), q["si_unit"], _dimension(q["dimension"]))
        for name, q in ((units or {}).get("parameters") or {}).items())
    contexts = tuple((c["name"], UnitContext(
        unknown_si=c["unknown_si"], unknown_display=c["unknown_display"],
        time_display=c["time_display"], forcing_si=c["forcing_si"],
        dimensions=tuple((k, _dimension(v) if v is not None else None)
                         for k, v in c["dimensions"].items()),
        symbol_units=tuple(c["symbol_units"].items())))
        for c in (units or {}).get("contexts", ()))
    return Problem(
        texts=tuple(p["equations"]), unknowns=tuple(p["unknowns"]),
        operators=tuple(tuple(tuple(from_tree(a) for a in coeffs) for coeffs in row)
                        for row in p["operators"]),
        forcings=tuple(from_tree(f["tree"]) for f in p["forcings"]),
        orders=tuple(int(o) for o in p["orders"]),
        initial_values=tuple(tuple(from_tree(v) for v in vals) for vals in p["initial_values"]),
        parameters=tuple((name, from_tree(v["tree"])) for name, v in p["parameters"].items()),
        symbols=tuple(p["symbolic_parameters"]),
        derived=tuple((name, from_tree(e["tree"])) for name, e in p["derived"].items()),
        loads=tuple((name, x["description"], from_tree(x["tree"]))
                    for name, x in p["loads"].items()),
        quantities=quantities, unit_contexts=contexts)


def _dimension(powers: dict):
    """A pint dimensionality from {"[length]": 1, "[time]": -2}."""
    out = registry().Quantity(1, "").dimensionality
    for name, power in powers.items():
        out = out * type(out)({str(name): power})
    return out


def _step(s: dict) -> Step:
    r = s["rule"]
    return Step(s["title"], Rule(**r) if r else None,
                tuple(Line(from_tree(x["lhs"]), from_tree(x["rhs"]), x["relation"], x["label"])
                      for x in s["lines"]),
                s["note"], tuple(_step(sub) for sub in s["substeps"]),
                tuple(rule(i) for i in s.get("own_rules", ())))


def _check(c: dict) -> Check:
    def number(x):
        return math.nan if x is None else float(x)
    return Check(c["name"], c["method"], number(c["tolerance"]), number(c["error"]),
                 bool(c["passed"]), bool(c["ran"]), c["detail"], bool(c["applicable"]))


def _result(r: dict, problem: Problem) -> Result:
    status = r["status"]
    if status == "not applicable":
        value = None
    elif status in ("unbounded", "as t → ∞"):
        value = math.inf
    else:
        value = _value(r["value"])
    units = problem.unit_context(_owner(r["key"], problem)) or problem.units
    return Result(r["key"], r["label"], _quantity(value, r["unit"], units), r["unit"],
                  r["formula"], r["source"], r["reason"], r["note"])


def _owner(key: str, problem: Problem) -> str:
    for name in problem.names:
        if key.endswith("_" + name):
            return name
    return problem.unknowns[0]


def _value(v):
    if isinstance(v, list):
        return tuple(_value(x) for x in v)
    if isinstance(v, dict):
        return complex(v["re"], v["im"])
    return v
