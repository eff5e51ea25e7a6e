"""derive() for a load given as a measured record (``forcing.history``).

The record's load is linear between its points, so on each segment [t_i, t_{i+1}] it is
F_i + Ḟ_i·τ (τ = t − t_i), and the response there is the closed form of one generic segment
from the state the segment starts in. The engine derives that generic segment once, by the
same stages as any derivation (every step and rule shown, its own and independent checks),
then marches the state from knot to knot with the exact recurrence
(core/checking/history_march.py) and finds each result over the whole response — every
segment that can hold the peak, and all the time after the record — as a case of the generic
form (core/checking/history_response.py). Thousands of points cost array operations, not
thousands of symbolic terms.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import sympy as sp

from ..errors import ForcingError, ParameterError, SolveError, UnitError
from .checking.acceptance import read_criteria
from .checking.history_checks import (EnergyBalance, figure_grid, final_value_check,
                                     integration_check, mechanical_matrices, record_samples,
                                     recurrence_check)
from .checking.numeric_checks import not_run
from .checking.history_march import march, output_rows, record_values
from .checking.history_results import record_results, segment_columns, tail_modes
from .checking.numeric_checks import first_order_form
from .checking.own_check import self_check
from .engine import check_options, complete, compile_numbers, stages_for_values
from .generic_segment import assembled, outcome, user_values
from .generic_segment import generic_problems as shared_problems
from .history_steps import record_steps
from .model.checks import Check, Verification
from .model.history import HistoryDerivation, LoadHistory, RecordMarch
from .model.symbols import T
from .reading.forcing import Forcing

__all__ = ["derive_history", "record_in"]


def record_in(params) -> tuple[str, LoadHistory] | None:
    """The one load record among ``params`` ((name, record)), or None; two are refused."""
    if not hasattr(params, "items"):
        return None
    found = [(str(k), v) for k, v in params.items() if isinstance(v, LoadHistory)]
    if len(found) > 1:
        names = ", ".join(n for n, _ in found)
        raise ForcingError(f"two load records ({names}); a derivation takes one record: put the "
                           "loads on one time base and add them into one record", term=names)
    return found[0] if found else None


def generic_problems(equation, ics, params, name, record, unknown, units, derived):
    """(the problem as given with the record's load set to zero — its initial values are the
    march's start —, the generic segment's problem, its state symbols, its load symbols)."""
    load = (f"{name}_i", f"{name}dot_i")
    f_i, fdot_i = (sp.Symbol(x, positive=True) for x in load)
    segment_load = Forcing(f_i + fdot_i * T, f"the record on one segment: {name} = "
                                            f"{load[0]} + {load[1]}·τ", _dimension(record))
    given, generic, state = shared_problems(equation, ics, params, name, segment_load, "i",
                                            unknown, units, derived, reserved=load)
    generic = dataclasses.replace(generic, symbols=generic.symbols + load)
    _check_units(generic, name, record)
    return given, generic, state, load


def _dimension(record: LoadHistory):
    """The record's dimension (pint), None where its values have no unit."""
    if not record.unit:
        return None
    from .reading.units import read_quantity
    return read_quantity(f"1 {record.unit}", "the record's unit").dimensionality


def _check_units(problem, name: str, record: LoadHistory) -> None:
    """The record's unit has the load's dimension; a record without a unit is refused where the
    problem states units (its numbers would be read as SI without saying so)."""
    ctx = problem.units
    if ctx is None:
        return
    want = dict(ctx.dimensions).get(name)
    if not record.unit:
        raise UnitError(f"the problem gives units but the load record {name!r} has none; give "
                        "its unit (forcing.history(..., unit='kN'), or a header 'F [kN]' in the "
                        "file, or --load-unit on the command line)", name=name)
    from .reading.units import read_quantity
    got = read_quantity(f"1 {record.unit}", name).dimensionality
    if want is not None and dict(got) != dict(want):
        from .reading.units import dimension_text
        raise UnitError(f"the load record {name!r} is in {record.given_unit or record.unit} "
                        f"({dimension_text(got)}), but {name} in the equation is "
                        f"{dimension_text(want)}; check the units of the parameters in its "
                        "term, and give the unknowns' units (units={'x': 'mm'}) so that the "
                        "load's dimension follows from the equation", name=name)


def equation_loads(problem, value_map: dict, load: tuple[str, str]):
    """(e, r) per equation: its right side is e·f(t) + r, f the record. Each right side must
    be linear in the record, with only constant loads beside it."""
    f_i, fdot_i = (sp.Symbol(x, positive=True) for x in load)
    subs = {sp.Symbol(k, positive=True): v for k, v in value_map.items()
            if k not in load}
    e, r = [], []
    for i, f in enumerate(problem.forcings):
        f = sp.expand(sp.Integer(0) + f.subs(subs))
        coeff = sp.diff(f, f_i)
        rest = sp.expand(f - coeff * (f_i + fdot_i * T))
        if coeff.free_symbols or rest.free_symbols or rest.has(sp.Heaviside, sp.DiracDelta):
            raise ForcingError(f"equation {i + 1}'s right side is {f}; beside a load record only "
                               "constant loads may act (add any other load into the record)",
                               term=str(f))
        e.append(float(coeff))
        r.append(float(rest))
    return np.array(e), np.array(r)


def _picks(problem, offsets, load) -> list:
    """Each quantity (unknowns, then derived) as (coefficient, state index, differentiated?);
    state index -1 is the record's load itself (a derived quantity may name it)."""
    out = [[(1.0, int(offsets[j]), False)] for j in range(problem.size)]
    for name, expr in problem.derived:
        terms = []
        expr = sp.expand(expr)
        for j, u in enumerate(problem.unknowns):
            fn = sp.Function(u)(T)
            for k in range(problem.orders[j] + 1):
                target = fn if k == 0 else sp.Derivative(fn, (T, k))
                coeff = expr.coeff(target)
                if coeff == 0:
                    continue
                expr = sp.expand(expr - coeff * target)
                if k < problem.orders[j]:
                    terms.append((float(coeff), int(offsets[j] + k), False))
                else:
                    terms.append((float(coeff), int(offsets[j] + k - 1), True))
        load_part = sp.expand(expr)
        coeff = load_part.coeff(sp.Symbol(load[0], positive=True))
        f_i, fdot_i = (sp.Symbol(x, positive=True) for x in load)
        if coeff != 0 and sp.expand(load_part - coeff * (f_i + fdot_i * T)) == 0:
            terms.append((float(coeff), -1, False))   # the record itself: y = ... + D f
            expr = 0
        if expr != 0:
            raise ParameterError(f"the derived quantity {name!r} is not a linear combination of "
                                 "the unknowns and their derivatives; it cannot be reported "
                                 "under a load record", name)
        out.append(terms)
    return out


def record_march(problem, numbers, loads, load, given, record) -> RecordMarch:
    """The march through the record for the numbers of one case (``loads``: the equations'
    (e, r) from :func:`equation_loads`)."""
    system, gain, _, _, offsets = first_order_form(numbers.lead, numbers.lower, numbers.orders)
    drive, constant = gain @ loads[0], gain @ loads[1]
    z0 = np.concatenate([np.array([float(v) for v in vals]) for vals in given.initial_values])
    kt, kf = record.knots()
    states = march(system, drive, constant, z0, kt, kf)
    if not np.all(np.isfinite(states)):
        bad = int(np.nonzero(~np.all(np.isfinite(states), axis=1))[0][0])
        raise SolveError(f"the response to the record leaves floating point at t = "
                         f"{kt[bad]:.6g} s (a growing response, or values too large); check the "
                         "record's scale and the system's stability")
    C, D, E = output_rows(system, drive, constant, _picks(problem, offsets, load))
    outputs = {name: (C[r], float(D[r]), float(E[r])) for r, name in enumerate(problem.names)}
    return RecordMarch(system, drive, constant, kt, kf, states, outputs, record.final_level)


def _busiest(rm: RecordMarch, state, load) -> dict:
    """The numbers of the segment where the load is largest: the generic segment's checks run
    with them (a segment at rest under no load would check nothing)."""
    kt, kf = rm.knot_times, rm.knot_loads
    live = np.nonzero(np.diff(kt) > 0)[0]
    i = int(live[np.argmax(np.abs(kf[live]))]) if live.size else 0
    slope = (kf[i + 1] - kf[i]) / (kt[i + 1] - kt[i]) if live.size else 0.0
    out = {load[0]: kf[i], load[1]: slope}
    flat = [s for row in state for s in row]
    out.update({s: rm.states[i][m] for m, s in enumerate(flat)})
    return {k: sp.Rational(float(v)) for k, v in out.items()}


def derive_history(equation, ics, params, name: str, record: LoadHistory, *, unknown=None,
                   units=None, values=None, regime="underdamped", tolerances=None, window=None,
                   checks="all", derived=None, on_failure="raise", definitions=None,
                   criteria=None) -> HistoryDerivation:
    """derive() when ``params[name]`` is a load record: see the module docstring."""
    tolerances = check_options(checks, tolerances, on_failure, window, definitions)
    criteria = read_criteria(criteria)
    given, problem, state, load = generic_problems(equation, ics, params, name, record,
                                                   unknown, units, derived)
    generic_names = [x for row in state for x in row] + list(load)
    user = user_values(problem, values, generic_names, "a load record")
    probe = {**user, **{s: sp.Integer(0) for row in state for s in row},
             load[0]: sp.Integer(0), load[1]: sp.Integer(0)}
    stages = stages_for_values(problem, regime, probe)
    model = compile_numbers(problem, stages, problem.symbols)
    rm = record_march(problem, model.at(probe), equation_loads(problem, probe, load), load,
                      given, record)
    value_map = {**user, **_busiest(rm, state, load)}
    own = self_check(problem, stages, tolerances.get("back_substitution"), value_map)
    segment = complete(problem, stages, own, value_map, tolerances=tolerances, window=window,
                       checks=checks, model=model, on_failure="return",
                       definitions=definitions)
    numbers = model.at(value_map)
    route = _symbolic_route_check(equation, ics, params, name, record, rm, unknown, units,
                                  problem.unknowns)
    extra, samples = _record_checks(problem, numbers, model, rm, state, load, value_map,
                                    tolerances, checks)
    extra = (extra[0], route) + extra[1:]
    verification = Verification(_segment_checks(segment) + extra, samples)
    results, acceptance = outcome(
        verification, checks, on_failure, problem.text,
        lambda: record_results(problem, numbers, model, rm, state, load, value_map), criteria)
    steps = record_steps(problem, stages, segment, record, rm, name, state, load)
    out = assembled(HistoryDerivation, segment, generic_names, steps, verification, results,
                    acceptance, record=record, march=rm, load_name=name)
    out._cache["record_values"] = lambda times: record_values(rm, times)
    return out


def _segment_checks(segment) -> tuple:
    """The generic segment's own and independent checks, named as the segment's."""
    return tuple(dataclasses.replace(c, name=f"Generic segment: {c.name}")
                 for c in segment.verification.checks)



_SYMBOLIC_POINTS = 6
"""Points of the record derived by the fully symbolic route (forcing.table) as a check."""


def _symbolic_route_check(equation, ics, params, name, record, rm, unknown, units, unknowns):
    """The response over the record's first points derived by the fully symbolic route (the
    points as a forcing.table load, every segment a Heaviside term), against the march."""
    from .engine import derive
    from .reading.forcing import table
    what = "Recurrence against the fully symbolic route"
    k = min(len(record), _SYMBOLIC_POINTS)
    t, f = record.times[:k], record.values[:k]
    method = (f"The record's first {k} points as a load table (forcing.table, the last value "
              "held), derived by the Laplace transform with a Heaviside term per corner, against "
              f"the recurrence at 200 times up to t = {t[-1]:.6g} s, relative to each unknown's "
              "largest value there.")
    tol = 1e-8
    if t[-1] <= 0:
        return not_run(what, method, tol, "the first points are all at t = 0")
    try:
        d = derive(equation, ics, {**params, name: table(list(zip(t.tolist(), f.tolist())),
                                                            hold_last=True)},
                   unknown=unknown, units=units, checks="engine")
    except Exception as exc:  # noqa: BLE001 - any failure of the other route is reported
        return not_run(what, method, tol, f"the symbolic route could not be derived ({exc})")
    times = np.linspace(0.0, float(t[-1]), 200)
    theirs = d.values_at(times)
    ours = record_values(rm, times)
    worst, detail = 0.0, []
    for u in unknowns:
        scale = max(float(np.max(np.abs(ours[u]))), 1e-300)
        err = float(np.max(np.abs(theirs[u] - ours[u]))) / scale
        worst = max(worst, err)
        detail.append(f"{u} {err:.3e}")
    return Check(what, method, tol, worst, worst <= tol,
                 detail="max relative error: " + ", ".join(detail))


def _record_checks(problem, numbers, model, rm, state, load, value_map, tolerances, checks):
    """(the record's independent checks, the figure's samples)."""
    def columns_of(knots, slopes):
        return segment_columns(model.symbols, value_map, rm, state, load, knots, slopes)
    recurrence = recurrence_check(model, rm, state, load, value_map, columns_of)
    grid = figure_grid(rm, numbers.system_poles)
    if checks == "engine":
        skipped = tuple(not_run(n, "", float("nan"), "skipped: derive(..., checks='engine')")
                        for n in ("Numerical integration of every segment of the record",
                                  "Energy balance on every segment",
                                  "Final-value theorem on the whole transform"))
        return (recurrence,) + skipped, record_samples(rm, problem.unknowns, grid, None, None)
    mck = mechanical_matrices(numbers)
    balance = (EnergyBalance(mck, equation_loads(problem, value_map, load),
                             first_order_form(numbers.lead, numbers.lower, numbers.orders)[4], rm)
               if mck is not None else None)
    integration, pair, energy = integration_check(rm, problem.unknowns, grid,
                                                  tolerances.get("integration", 1e-7), balance)
    if energy is None:
        energy = Check(EnergyBalance.NAME, "The work of the loads against the change of stored "
                       "energy and the energy the damping takes.", 1e-8, float("nan"), True,
                       applicable=False, detail="applies to mechanical systems "
                       "M x'' + C x' + K x = f with M and K symmetric")
    finals = tuple(final_value_check(rm, model, u, tail_modes(model, rm, u, state, load,
                                                             value_map),
                                     numbers.system_poles, tolerances.get("limits", 1e-9))
                   for u in problem.unknowns)
    finals = tuple(dataclasses.replace(c, name=f"{c.name} ({u})") if problem.size > 1 else c
                   for c, u in zip(finals, problem.unknowns))
    samples = record_samples(rm, problem.unknowns, grid, pair, None)
    return (recurrence, integration, energy) + finals, samples

