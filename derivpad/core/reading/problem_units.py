"""The units of a problem: one dimension per unknown, every equation homogeneous.

Each unknown's dimension is declared (``units=``), read from its initial value's unit, or
inferred equation by equation from terms whose parameters carry units (a term with numbers
only takes whatever dimension its equation needs, so it says nothing). A load given as a
``derivpad.forcing`` value takes its equation's dimension. The result is one UnitContext per
unknown and derived quantity.
"""

from __future__ import annotations

import sympy as sp

from ...errors import UnitError
from .parse import T
from ..model.problem import derivative_name
from .units import (UnitContext, check_homogeneity, dimension_of, dimension_text,
                    display_unit_for, has_units, read_quantity, registry, time_dimension)

__all__ = ["unit_contexts"]


def unit_contexts(term_lists, positions, unknowns, names, quantities, ic_quantities, units,
                  derived=(), loads=()):
    """((name, UnitContext), ...) for each unknown, then each derived quantity."""
    one = registry().Quantity(1, "").dimensionality
    time_unit, time_dim = time_dimension(units)
    _check_unit_names(units, unknowns, names, derived)
    dims, symbol_units = _parameter_dimensions(names, quantities, units, loads, time_dim, one)
    known = _declared(unknowns, units, ic_quantities)
    funcs = [sp.Function(u)(T) for u in unknowns]
    _infer(term_lists, unknowns, funcs, dims, known, loads, one)
    for u in unknowns:
        known.setdefault(u, one)
    dims.update(known)
    for terms in term_lists:  # a load carries the dimension its term needs (F, or a_g in m·a_g)
        inside = [tm for tm in terms if any(tm.expr.has(f) for f in funcs)]
        for name in loads:
            if getattr(loads[name], "dimension", None) is not None:
                continue  # a record's own dimension: the homogeneity check judges it
            symbol = sp.Symbol(name, positive=True)
            holding = [tm for tm in terms if symbol in tm.expr.free_symbols]
            if holding:
                per = dimension_of(holding[0].expr, {**dims, name: one}, unknowns[0], "")
                dims[name] = dimension_of(inside[0].expr, dims, unknowns[0], "") / per
    forcing_dims = []
    for i, (terms, text) in enumerate(zip(term_lists, positions)):
        try:
            forcing_dims.append(check_homogeneity(terms, dims, unknowns[0], text))
        except UnitError as exc:
            if len(unknowns) == 1:
                raise
            raise UnitError(f"equation {i + 1}: {exc}", terms=exc.terms,
                            dimensions=exc.dimensions) from exc
    _check_initial_units(ic_quantities, unknowns, dims)
    table = tuple((k, v) for k, v in dims.items())
    out = []
    for j, u in enumerate(unknowns):
        si = display_unit_for(dims[u])
        out.append((u, UnitContext(unknown_si=si, unknown_display=units.get(u, si),
                                   time_display=time_unit,
                                   forcing_si=display_unit_for(forcing_dims[j]),
                                   dimensions=table, symbol_units=tuple(symbol_units))))
    for name, expr in derived:
        d = dimension_of(expr, dims, unknowns[0], f"derived quantity {name!r}")
        si = display_unit_for(d)
        like = [units[u] for u in unknowns if u in units and dims[u] == d]
        out.append((name, UnitContext(unknown_si=si,
                                      unknown_display=units.get(name, like[0] if like else si),
                                      time_display=time_unit, forcing_si="",
                                      dimensions=table, symbol_units=tuple(symbol_units))))
    return tuple(out)


def _check_unit_names(units, unknowns, names, derived) -> None:
    for key in units:
        if key in unknowns or key == "t" or key in names or key in dict(derived):
            continue
        if len(unknowns) == 1:
            msg = (f"units= names {key!r}, which is neither the unknown {unknowns[0]!r}, t, nor "
                   "a parameter of the equation")
        else:
            msg = (f"units= names {key!r}, which is neither an unknown "
                   f"({', '.join(unknowns)}), t, nor a parameter")
        raise UnitError(msg, name=key)


def _parameter_dimensions(names, quantities, units, loads, time_dim, one):
    dims = {"t": time_dim}
    symbol_units = []
    for name in names:
        if name in quantities:
            dims[name] = quantities[name].dimensionality
        elif name in loads:  # a load: its record's dimension, else the one its term needs
            dims[name] = getattr(loads[name], "dimension", None)
        elif name in units:  # a symbolic parameter with a declared unit
            dims[name] = read_quantity(f"1 {units[name]}", name).dimensionality
            symbol_units.append((name, units[name]))
        else:
            dims[name] = one
    return dims, symbol_units


def _declared(unknowns, units, ic_quantities) -> dict:
    known = {}
    for j, u in enumerate(unknowns):
        if u in units:
            known[u] = read_quantity(f"1 {units[u]}", u).dimensionality
        elif (j, 0) in ic_quantities:
            known[u] = ic_quantities[(j, 0)].dimensionality
    return known


def _infer(term_lists, unknowns, funcs, dims, known, loads, one) -> None:
    """Unknowns' dimensions from terms whose parameters carry units, equation by equation,
    until nothing more can be learned (a load whose record gives its dimension counts)."""
    loads = [n for n in loads if dims.get(n) is None]
    load_free = {n: one for n in loads}
    progress = True
    while progress and len(known) < len(unknowns):
        progress = False
        for terms in term_lists:
            named = [tm for tm in terms if tm.expr != 0 and has_units(tm.expr, dims)
                     and not any(sp.Symbol(n, positive=True) in tm.expr.free_symbols
                                 for n in loads)]
            eq_dim = None
            for tm in named:
                inside = [u for u, f in zip(unknowns, funcs) if tm.expr.has(f)]
                if all(u in known for u in inside):
                    eq_dim = dimension_of(tm.expr, {**dims, **load_free, **known}, "", "")
                    break
            if eq_dim is None:
                continue
            for tm in named:
                inside = [u for u, f in zip(unknowns, funcs) if tm.expr.has(f)]
                if len(inside) == 1 and inside[0] not in known:
                    per = dimension_of(tm.expr, {**dims, **known, inside[0]: one}, "", "")
                    known[inside[0]] = eq_dim / per
                    progress = True


def _check_initial_units(ic_quantities, unknowns, dims) -> None:
    for (j, k), q in ic_quantities.items():
        want = dims[unknowns[j]] / dims["t"] ** k
        if q.dimensionality != want:
            label = derivative_name(unknowns[j], k) + "(0)"
            raise UnitError(f"{label} is given in {q.given!r}, which is "
                            f"{dimension_text(q.dimensionality)}; it must be "
                            f"{dimension_text(want)}", name=label)
