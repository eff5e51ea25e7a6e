"""The canonical JSON-safe form of a derivation (``Derivation.to_dict``).

Every expression is written three ways: LaTeX (what the reader saw), plain text, and the
tree form of ``derivpad.core.exprtree`` that reads back into SymPy without evaluating text.
"""

from __future__ import annotations


from ..core.derivation import Derivation
from ..core.exprtree import to_tree
from ..core.problem import derivative_name
from ..core.steps import Step
from .latex import CAUTION, step_math_latex
from .notation import latex_expr, text_expr

__all__ = ["derivation_to_dict", "expression_dict"]

FORMAT = "derivpad.derivation"
VERSION = 1


def expression_dict(expr) -> dict:
    """LaTeX, text and tree form of one expression."""
    return {"latex": latex_expr(expr), "text": text_expr(expr), "tree": to_tree(expr)}


def _step_dict(step: Step) -> dict:
    return {"title": step.title, "rule": step.rule.to_dict() if step.rule else None,
            "rules_used": [r.id for r in step.all_rules], "latex": step_math_latex(step),
            "note": step.note, "substeps": [_step_dict(s) for s in step.substeps]}


def derivation_to_dict(d) -> dict:
    if not isinstance(d, Derivation):
        return system_to_dict(d)
    p = d.problem
    return {
        "format": FORMAT,
        "version": VERSION,
        "problem": {
            "equation": p.text,
            "unknown": p.unknown,
            "order": p.order,
            "ode": expression_dict(p.equation),
            "forcing": expression_dict(p.forcing),
            "initial_conditions": {derivative_name(p.unknown, k) + "(0-)": expression_dict(v)
                                   for k, v in enumerate(p.initial_values)},
            "parameters": {name: expression_dict(v) for name, v in p.parameters},
            "symbolic_parameters": list(p.symbols),
        },
        "steps": [_step_dict(s) for s in d.steps],
        "transform": expression_dict(d.transform),
        "solution": expression_dict(d.solution),
        "piecewise": [{"from": expression_dict(start), **expression_dict(expr)}
                      for start, expr in d.intervals],
        "poles": [{"kind": q.kind, "value": expression_dict(q.value),
                   "beta": expression_dict(q.beta), "multiplicity": q.multiplicity,
                   "numeric": q.numeric} for q in d.poles],
        "assumptions": list(d.assumptions),
        "notes": list(d.notes),
        "verification": d.verification.to_dict(),
        "results": {key: r.to_dict() for key, r in (d.results or {}).items()},
        "units": None if p.units is None else {
            "unknown": p.units.unknown_display, "unknown_si": p.units.unknown_si,
            "time": p.units.time_display, "forcing_si": p.units.forcing_si,
            "parameters": {q.name: {"given": q.given, "si_value": float(q.si_value),
                                    "si_unit": q.si_unit} for q in p.quantities}},
        "values_for_checks": {name: expression_dict(v) for name, v in d.values},
        "rules": {r.id: r.to_dict() for s in d.steps for r in s.all_rules},
        "caution": CAUTION,
    }


def system_to_dict(d) -> dict:
    """The canonical JSON form of a SystemDerivation: as for one equation, per unknown."""
    p = d.problem

    def poles(ps):
        return [{"kind": q.kind, "value": expression_dict(q.value),
                 "beta": expression_dict(q.beta), "multiplicity": q.multiplicity,
                 "numeric": q.numeric} for q in ps]

    return {
        "format": FORMAT,
        "version": VERSION,
        "kind": "system",
        "problem": {
            "equation": p.text,
            "unknown": ", ".join(p.unknowns),
            "equations": list(p.texts),
            "unknowns": list(p.unknowns),
            "orders": list(p.orders),
            "odes": [expression_dict(p.equation(i)) for i in range(len(p.unknowns))],
            "initial_conditions": {derivative_name(u, k) + "(0-)": expression_dict(v)
                                   for u, vals in zip(p.unknowns, p.initial_values)
                                   for k, v in enumerate(vals)},
            "parameters": {name: expression_dict(v) for name, v in p.parameters},
            "symbolic_parameters": list(p.symbols),
            "derived": {name: expression_dict(e) for name, e in p.derived},
        },
        "steps": [_step_dict(s) for s in d.steps],
        "determinant": expression_dict(d.determinant),
        "transform": {u: expression_dict(e) for u, e in d.transform.items()},
        "solutions": {u: expression_dict(e) for u, e in d.solution.items()},
        "solution": {   # the whole solution in one entry, as for a single equation
            "latex": r" \\ ".join(f"{latex_expr(p.function(j))} = {latex_expr(d.solution[u])}"
                                  for j, u in enumerate(p.unknowns)),
            "text": "; ".join(f"{u}(t) = {text_expr(d.solution[u])}" for u in p.unknowns),
            "tree": {u: to_tree(e) for u, e in d.solution.items()}},
        "derived": {name: expression_dict(e) for name, e in d.derived.items()},
        "piecewise": {u: [{"from": expression_dict(start), **expression_dict(expr)}
                          for start, expr in ivs] for u, ivs in d.intervals.items()},
        "poles": poles(d.poles),
        "assumptions": list(d.assumptions),
        "notes": list(d.notes),
        "verification": d.verification.to_dict(),
        "results": {key: r.to_dict() for key, r in (d.results or {}).items()},
        "units": None if not p.units else {
            "unknowns": {name: {"display": c.unknown_display, "si": c.unknown_si}
                         for name, c in p.units},
            "time": p.units[0][1].time_display,
            "parameters": {q.name: {"given": q.given, "si_value": float(q.si_value),
                                    "si_unit": q.si_unit} for q in p.quantities}},
        "values_for_checks": {name: expression_dict(v) for name, v in d.values},
        "rules": {r.id: r.to_dict() for s in d.steps for r in s.all_rules},
        "caution": CAUTION,
    }
