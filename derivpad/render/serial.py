"""The canonical JSON-safe form of a derivation (``Derivation.to_dict``).

Every expression is written three ways: LaTeX (what the reader saw), plain text, and the
tree form of ``derivpad.core.exprtree`` that reads back into SymPy without evaluating text.
"""

from __future__ import annotations

import numpy as np

from ..core.model.derivation import Derivation
from ..core.model.exprtree import to_tree
from ..core.model.problem import derivative_name
from ..core.model.steps import Step
from .latex import CAUTION, step_math_latex
from .notation import latex_expr, text_expr

__all__ = ["derivation_to_dict", "expression_dict"]

FORMAT = "derivpad.derivation"
VERSION = 2
"""Format version 2: one shape for one unknown or many (version 1 wrote a single equation's
entries unkeyed and a system's in a second shape; readers accept both)."""


def expression_dict(expr) -> dict:
    """LaTeX, text and tree form of one expression."""
    return {"latex": latex_expr(expr), "text": text_expr(expr), "tree": to_tree(expr)}


def _step_dict(step: Step) -> dict:
    return {"title": step.title, "rule": step.rule.to_dict() if step.rule else None,
            "rules_used": [r.id for r in step.all_rules],
            "own_rules": [r.id for r in step.rules_used], "latex": step_math_latex(step),
            "lines": [{"lhs": to_tree(x.lhs), "rhs": to_tree(x.rhs), "relation": x.relation,
                       "label": x.label} for x in step.lines],
            "note": step.note, "substeps": [_step_dict(s) for s in step.substeps]}


def _poles(ps) -> list:
    return [{"kind": q.kind, "value": expression_dict(q.value), "beta": expression_dict(q.beta),
             "multiplicity": q.multiplicity, "numeric": q.numeric} for q in ps]


def _joined(p, mapping, name_of) -> dict:
    """One unknown's expression as is; several joined into one entry (``x1(t) = …; …``),
    the tree keyed by unknown."""
    if p.size == 1:
        return expression_dict(mapping[p.unknowns[0]])
    return {"latex": r" \\ ".join(f"{name_of(j)} = {latex_expr(mapping[u])}"
                                   for j, u in enumerate(p.unknowns)),
            "text": "; ".join(f"{u}(t) = {text_expr(mapping[u])}" for u in p.unknowns),
            "tree": {u: to_tree(e) for u, e in mapping.items()}}


def derivation_to_dict(d: Derivation) -> dict:
    """The canonical JSON form (format version 2): one shape for one unknown or many, each
    per-unknown entry keyed by the unknown's name, plus the whole solution in one entry."""
    p = d.problem
    return {
        "format": FORMAT,
        "version": VERSION,
        "problem": _problem_dict(p),
        "steps": [_step_dict(s) for s in d.steps],
        "determinant": expression_dict(d.determinant),
        "transforms": {u: expression_dict(e) for u, e in d.transforms.items()},
        "solutions": {u: expression_dict(e) for u, e in d.solutions.items()},
        "transform": _joined(p, d.transforms, lambda j: latex_expr(p.function(j))),
        "solution": _joined(p, d.solutions, lambda j: latex_expr(p.function(j))),
        "derived": {name: expression_dict(e) for name, e in d.derived.items()},
        "piecewise": {u: [{"from": expression_dict(start), **expression_dict(expr)}
                          for start, expr in ivs] for u, ivs in d.interval_map.items()},
        "poles": _poles(d.poles),
        "response_poles": {u: _poles(ps) for u, ps in d.response_poles.items()},
        "window": d.window,
        "parts": {u: [[to_tree(c), to_tree(r)] for c, r in ps] for u, ps in d.parts.items()},
        "impulses": [[i, to_tree(c), to_tree(a)] for i, c, a in d.impulses],
        "conditions": [to_tree(c) for c in d.conditions],
        "assumptions": list(d.assumptions),
        "notes": list(d.notes),
        "verification": {**d.verification.to_dict(), "verified": d.verification.passed},
        "results": {key: r.to_dict() for key, r in (d.results or {}).items()},
        "acceptance": [j.to_dict() for j in d.acceptance],
        "units": _units_dict(p),
        "values_for_checks": {name: expression_dict(v) for name, v in d.values},
        "value_table": [list(row) for row in d.value_rows],
        "rules": {r.id: r.to_dict() for s in d.steps for r in s.all_rules},
        "caution": CAUTION,
        **_load_entries(d),
    }


def _load_entries(d) -> dict:
    """A derivation under a load record or a periodic load: the load's summary (the record's
    SHA-256, so a re-run proves it read the same record) and the figure's samples, which the
    generic closed form alone cannot give again."""
    record, repeating = getattr(d, "record", None), getattr(d, "periodic_load", None)
    kept = d._cache.get("load_json")  # read back from JSON: the summary as it was written
    if record is None and repeating is None and kept is None:
        return {}
    samples = d.verification.samples
    out = {}
    if samples is not None:
        def listed(block):
            return {k: [float(x) if np.isfinite(x) else None for x in v] for k, v in
                    block.items()}
        out["samples"] = {"times": [float(x) for x in samples.times],
                          "closed_form": listed(samples.closed_form),
                          "integrated": listed(samples.integrated),
                          "forcing": listed(samples.forcing)}
    if kept is not None:
        out["load"] = dict(kept)
    elif record is not None:
        out["load"] = {"kind": "record", "name": d.load_name, "description": record.description,
                       "points": len(record), "unit": record.unit, "source": record.source,
                       "hold_last": record.hold_last, "sha256": record.sha256}
    else:
        out["load"] = {"kind": "periodic", "name": d.load_name,
                       "description": repeating.description,
                       "period": float(repeating.period)}
    return out


def _problem_dict(p) -> dict:
    return {
        "equation": p.text,
        "unknown": ", ".join(p.unknowns),
        "equations": list(p.texts),
        "unknowns": list(p.unknowns),
        "orders": list(p.orders),
        "odes": [expression_dict(p.equation(i)) for i in range(p.size)],
        "forcings": [expression_dict(f) for f in p.forcings],
        "initial_conditions": {derivative_name(u, k) + "(0-)": expression_dict(v)
                               for u, vals in zip(p.unknowns, p.initial_values)
                               for k, v in enumerate(vals)},
        "parameters": {name: expression_dict(v) for name, v in p.parameters},
        "symbolic_parameters": list(p.symbols),
        "derived": {name: expression_dict(e) for name, e in p.derived},
        "loads": {name: {"description": text, **expression_dict(e)}
                  for name, text, e in p.loads},
        "operators": [[[to_tree(a) for a in coeffs] for coeffs in row] for row in p.operators],
        "initial_values": [[to_tree(v) for v in vals] for vals in p.initial_values],
    }


def _units_dict(p):
    if p.units is None:
        return None
    return {"unknowns": {name: {"display": c.unknown_display, "si": c.unknown_si}
                         for name, c in p.unit_contexts},
            "time": p.units.time_display,
            "parameters": {q.name: {"given": q.given, "si_value": float(q.si_value),
                                    "si_unit": q.si_unit, "si_exact": to_tree(q.si_value),
                                    "dimension": dict(q.dimensionality)}
                           for q in p.quantities},
            "contexts": [{"name": name, "unknown_si": c.unknown_si,
                          "unknown_display": c.unknown_display, "time_display": c.time_display,
                          "forcing_si": c.forcing_si, "symbol_units": dict(c.symbol_units),
                          "dimensions": {k: dict(v) if v is not None else None
                                         for k, v in c.dimensions}}
                         for name, c in p.unit_contexts]}
