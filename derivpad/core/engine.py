"""derive(): run the stages in order, build the Derivation, and check it before returning.

Stages: problem → forcing in Heaviside form → transform both sides → derivatives with the
initial conditions → solve for Y(s) → partial fractions per delay group → invert term by term
→ assemble y(t) → the engine's own check. Only the engine's own rule table is used; SymPy's
laplace_transform, inverse_laplace_transform and dsolve never run here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

import sympy as sp

from ..errors import DerivpadError, ParameterError, UnitError, VerificationFailedError
from .algebra import (PoleSet, characteristic_polynomial, initial_condition_polynomial,
                      merge_poles, poles_of, solve_system)
from .derivation import Derivation
from .forcing import TAU, heaviside_pieces
from .inverse import invert_term, inversion_step, shift
from .parse import T
from .partial_fractions import fraction_steps, partial_fractions
from .problem import Problem, derivative_name, make_problem, mapping_of, to_exact
from .rules import rule
from .steps import Line, Step
from .units import dimension_text, read_quantity, sign_cautions
from .transform import Laplace, Ysym, delayed, derivative_transform, transform_groups
from .numeric_checks import INDEPENDENT_CHECKS, independent_checks, missing_values, not_run
from .numeric_model import ParametricModel
from .results import definitions_of, engineering_results
from .verify import Verification, self_check
from .window import window_end

__all__ = ["Stages", "check_options", "compile_model", "complete", "derive", "derive_problem",
           "engine_check", "parameter_values", "solve_stages"]


def derive(equation, ics=None, params=None, *, unknown: str | None = None, units=None,
           values=None, regime: str = "underdamped", tolerances=None,
           window: float | None = None, checks: str = "all", derived=None,
           on_failure: str = "raise", definitions=None):
    """Solve a linear constant-coefficient ODE (or a coupled system) by the Laplace
    transform, step by step.

    Parameters
    ----------
    equation : str, sympy.Eq, or a list of them
        The ODE, e.g. ``"m*x'' + c*x' + k*x = F0*u(t - t1)"``; see docs/input-syntax.md. A
        list is a coupled system (one equation per unknown; see docs/systems.md): the result
        is then a :class:`~derivpad.core.system_derivation.SystemDerivation`.
    ics : mapping
        Initial values at 0⁻, one for each order below the ODE's: ``{"x(0)": 0, "x'(0)": 0}``.
    params : mapping, optional
        Parameter values: numbers, numeric text, quantities with units (``"800 N/m"`` or pint),
        or a ``derivpad.forcing`` load for a name on the right side. Parameters without values
        stay symbolic (taken as positive reals).
    unknown : str, optional
        The unknown's name when no name carries primes.
    units : mapping, optional
        Display units of the unknown and of time, ``{"x": "mm", "t": "s"}``, or units for
        parameters given as plain numbers.
    values : mapping, optional
        Numbers for symbolic parameters, used only by the numerical checks and the results; the
        derivation stays symbolic.
    regime : {"underdamped", "overdamped"}
        The case taken for a symbolic quadratic factor whose discriminant sign is unknown.
    tolerances : mapping, optional
        Override check tolerances by key: "back_substitution", "integration", "inversion",
        "limits" (see docs/verification.md).
    window : float, optional
        End of the time window for the checks, results and figure (default: automatic).
    checks : {"all", "engine"}
        "all" runs the independent checks and the results too; "engine" only the engine's own
        back-substitution (for fast exploration; the derivation then counts as not verified).
    derived : mapping, optional
        For a system: named quantities to report, ``{"stroke": "x1 - x2"}``.
    on_failure : {"raise", "return"}
        When a check fails: raise VerificationFailedError (default), or return the derivation
        for inspection, marked NOT VERIFIED, with every engineering result absent.
    definitions : mapping, optional
        Step-response definitions: ``settling_band`` (default 0.02) and ``rise`` (default
        (0.1, 0.9)); see docs/results.md.

    Returns
    -------
    Derivation

    Raises
    ------
    DerivpadError
        ParseError, EquationError, InitialConditionError, ParameterError, UnitError,
        ForcingError, SolveError; VerificationFailedError if a check fails (the engine's own
        always; the independent ones unless ``on_failure="return"``).

    Examples
    --------
    >>> d = derive("y'' + 9*y = delta(t)", ics={"y(0)": 0, "y'(0)": 0})
    >>> d.solution
    sin(3*t)/3
    """
    if isinstance(equation, (list, tuple)):
        if unknown is not None:
            raise ParameterError("unknown= is for a single equation; a system's unknowns are "
                                 "the names written with primes", "unknown")
        from .system_engine import derive_system
        return derive_system(equation, ics, params, units=units, values=values,
                             derived=derived, regime=regime, tolerances=tolerances,
                             window=window, checks=checks, on_failure=on_failure,
                             definitions=definitions)
    if derived is not None:
        raise ParameterError("derived= is for a system of equations; for one equation, "
                             "evaluate the quantity from d.solution", "derived")
    problem = make_problem(equation, ics, params, unknown, units)
    return derive_problem(problem, regime=regime, tolerances=tolerances, values=values,
                          window=window, checks=checks, on_failure=on_failure,
                          definitions=definitions)


def derive_problem(problem: Problem, *, regime: str = "underdamped", tolerances=None,
                   values=None, window: float | None = None, checks: str = "all",
                   on_failure: str = "raise", definitions=None) -> Derivation:
    """The stages of :func:`derive` for an already checked :class:`Problem`."""
    tolerances = check_options(checks, tolerances, on_failure, window, definitions)
    value_map = parameter_values(problem, values)
    stages = stages_for_values(problem, regime, value_map)
    checks_own = engine_check(problem, stages, tolerances.get("back_substitution"), value_map)
    return complete(problem, stages, checks_own, value_map, tolerances=tolerances,
                    window=window, checks=checks, on_failure=on_failure,
                    definitions=definitions)


REGIMES = ("underdamped", "overdamped")


def stages_for_values(problem: Problem, regime: str, value_map: dict) -> "Stages":
    """The stages in the form that holds for the numbers given for the symbolic parameters:
    the regime asked for, else the other one (the derivation states which it took); refused,
    naming the condition, where neither holds (e.g. exactly critical damping or resonance)."""
    if regime not in REGIMES:
        raise ParameterError(f"regime must be 'underdamped' or 'overdamped', not {regime!r}",
                             "regime")
    stages = solve_stages(problem, regime, value_map or None)
    complete_values = all(name in value_map for name in problem.symbols)
    if not complete_values or not stages.conditions or form_holds(stages, value_map):
        return stages  # with some values missing the form cannot be judged: checks sample it
    other = REGIMES[1 - REGIMES.index(regime)]
    try:
        alternative = solve_stages(problem, other, value_map)
    except DerivpadError:
        alternative = None
    if alternative is not None and form_holds(alternative, value_map):
        return alternative
    subs = {sp.Symbol(k, positive=True): v for k, v in value_map.items()}
    failed = [c for c in stages.conditions if c.subs(subs) is not sp.true]
    shown = "; ".join(f"{sp.sstr(c)} (here {sp.sstr(_lhs_value(c, subs))})" for c in failed) or \
        "the switching times' order"
    msg = (f"the values given do not meet the derivation's condition {shown}, in either the "
           "underdamped or the overdamped form (for example exactly critical damping, or a "
           "forcing at the natural frequency); give these numbers as params= instead of values= "
           "so that the case is derived with them")
    raise ParameterError(msg, ", ".join(value_map))


def _lhs_value(condition, subs):
    try:
        return (condition.lhs - condition.rhs).subs(subs)
    except AttributeError:
        return condition.subs(subs)


def form_holds(stages, value_map: dict) -> bool:
    """The form's stated conditions hold at the values, and its switching times keep their
    order (the intervals were assembled in that order)."""
    subs = {sp.Symbol(k, positive=True): v for k, v in value_map.items()}
    for c in stages.conditions:
        if c.subs(subs) is not sp.true:
            return False
    times = [(sp.Integer(0) + b).subs(subs) for b in stages.breakpoints]
    if any(not t.is_number for t in times):
        return False
    nums = [float(t) for t in times]
    return all(a < b for a, b in zip(nums, nums[1:])) and all(t > 0 for t in nums)


@dataclass(frozen=True)
class Stages:
    """What the symbolic stages produce, before any check: steps, Y(s), y(t) and its parts."""

    steps: tuple
    transform: sp.Expr
    solution: sp.Expr
    intervals: tuple
    impulses: tuple
    system_poles: tuple
    response_poles: tuple
    assumptions: tuple
    conditions: tuple
    notes: tuple
    parts: tuple
    breakpoints: tuple
    delayed_solutions: tuple


def solve_stages(problem: Problem, regime: str = "underdamped", order=None) -> Stages:
    """Stages 1-7: problem, transform, derivatives, Y(s), partial fractions, inversion, y(t).

    ``order`` ({name: number}) orders symbolic switching times by those numbers.
    """
    y = problem.unknown
    Y = Ysym(y)
    n = problem.order
    a = problem.coefficients

    pieces, notes = heaviside_pieces(problem.forcing)
    assumptions: list[str] = list(sign_cautions(problem.quantities))
    conditions: list = []
    if problem.symbols:
        assumptions.append("symbolic parameters (" + ", ".join(problem.symbols)
                           + ") are taken as positive real numbers")
    for p in pieces:
        if not p.delay.is_number:
            text = f"switching time {sp.sstr(p.delay)} ≥ 0"
            if text not in assumptions:
                assumptions.append(text)
    heaviside = sp.Add(*[p.shape * sp.DiracDelta(T - p.delay) if p.impulse
                         else shift(p.shape, p.delay) for p in pieces])

    # 1. Problem
    ic_lines = tuple(Line(sp.Symbol(derivative_name(y, k) + "(0^-)"), v, "=")
                     for k, v in enumerate(problem.initial_values))
    given = {q.name: q for q in problem.quantities}
    param_lines = tuple(Line(sp.Symbol(name), value, "=",
                             f"given {given[name].given}; SI {given[name].si_unit}"
                             if name in given else "parameter")
                        for name, value in problem.parameters)
    load_lines = tuple(Line(sp.Function(name)(T), expr, "=", description)
                       for name, description, expr in problem.loads)
    forcing_line = load_lines + (Line(sp.Function("f")(T), heaviside, "=",
                                      "forcing in unit-step form"),)
    problem_step = Step(
        "Problem", rule("definition"),
        (Line(problem.lhs, problem.forcing, "=", "for t > 0"),) + ic_lines + forcing_line
        + param_lines,
        f"Order-{n} linear ODE with constant coefficients. Initial values are taken just "
        "before t = 0 (0⁻), so an impulse at t = 0 acts after them.",
        rules_used=(rule("piecewise_to_step"),) if problem.forcing.has(sp.Piecewise) else ())

    # 2. Transform the forcing, term by term
    groups, forcing_steps = transform_groups(pieces)
    F_total = sp.Add(*[delayed(g.delay, _group_transform(g)) for g in groups])
    lhs_laplace = sp.Add(*[a[k] * Laplace(problem.function.diff(T, k) if k else problem.function)
                           for k in range(n + 1) if a[k] != 0])
    transform_step = Step(
        "Transform both sides", rule("linearity"),
        (Line(lhs_laplace, F_total, "="),),
        "The transform is linear, so each side transforms term by term; each forcing piece "
        "uses a table pair, delayed pieces the second shifting theorem.",
        tuple(forcing_steps),
        tuple({r.id: r for s in forcing_steps for r in s.all_rules}.values()))

    # 3. Derivatives with the initial conditions
    deriv_lines = tuple(
        Line(Laplace(problem.function.diff(T, k) if k else problem.function),
             derivative_transform(y, k, problem.initial_values), "=")
        for k in range(1, n + 1) if a[k] != 0)
    P = characteristic_polynomial(a)
    Q = initial_condition_polynomial(a, problem.initial_values)
    substituted = Line(sp.Mul(P, Y, evaluate=False) - Q, F_total, "=")
    derivative_step = Step(
        "Transform the derivatives", rule("derivative"), deriv_lines + (substituted,),
        "Each derivative brings down a power of s and the initial values at 0⁻.")

    # 4. Solve for Y(s): the 1×1 case of A(s) X(s) = B(s)
    A = sp.Matrix([[P]])
    char_poles = poles_of(P, regime)
    assumptions += [x for x in char_poles.assumptions if x not in assumptions]
    conditions += list(char_poles.conditions)
    solved_parts = []
    group_data = []
    for g in groups:
        num, den_factors = _group_fraction(g, Q if g.delay == 0 else sp.Integer(0))
        det, (numerator,) = solve_system(A, sp.Matrix([num]))
        extra = [pole.with_multiplicity(m) for f, m in den_factors for pole in poles_of(f).poles]
        poles = merge_poles(char_poles, extra)
        group_data.append((g.delay, numerator, poles))
    if not any(g.delay == 0 for g in groups) and Q != 0:
        det, (numerator,) = solve_system(A, sp.Matrix([Q]))
        group_data.insert(0, (sp.Integer(0), numerator, char_poles))
    for delay, numerator, poles in group_data:
        for x in poles.assumptions:
            if x not in assumptions:
                assumptions.append(x)
                conditions.extend(c for c in poles.conditions if c not in conditions)
    labels = _labels(y, group_data)
    for (delay, numerator, poles), label in zip(group_data, labels):
        part = numerator / poles.factored
        solved_parts.append(delayed(delay, part))
    transform = sp.Add(*solved_parts) if solved_parts else sp.Integer(0)
    regime_note = _regime_sentence(char_poles, n)
    solve_lines = (
        Line(Y, sp.Mul(sp.Add(F_total, Q), sp.Pow(P, -1), evaluate=False), "="),
        Line(sp.Symbol("P(s)"), P, "=", "characteristic polynomial"),
        Line(sp.Symbol("P(s)"), char_poles.factored, "=", "factored"),
    ) + tuple(Line(sp.Symbol(lbl), num / poles.factored, "=",
                   "part delayed by " + sp.sstr(delay) if delay != 0 else "undelayed part")
              for (delay, num, poles), lbl in zip(group_data, labels)) + (
        Line(Y, _labelled_sum(group_data, labels), "="),)
    taken = [x for x in assumptions if x.startswith(("underdamped", "overdamped", "non-resonant"))]
    solve_step = Step(
        f"Solve for {Y}", rule("solve_algebraic"), solve_lines,
        f"{Y} is the forcing and initial-value terms over the characteristic polynomial. "
        f"{regime_note}" + (" Numerical roots are carried to 50 digits."
                            if char_poles.numeric else "")
        + ("".join(f" Assumed ({x})." for x in taken)),
        rules_used=(rule("numeric_roots"),) if char_poles.numeric else ())

    # 5-6. Partial fractions and inversion, group by group
    fraction_steps_list, inversion_steps = [], []
    delayed_solutions = []
    for (delay, numerator, poles), label in zip(group_data, labels):
        terms = partial_fractions(numerator, poles)
        fraction_steps_list.append(fraction_steps(label, numerator, poles, terms))
        inverses = [invert_term(t) for t in terms]
        inversion_steps.append(inversion_step(label, delay, inverses))
        g = sp.Add(*[inv.time for inv in inverses])
        delayed_solutions.append((delay, g))
    decompose = Step("Partial fractions", rule("pf_simple"),
                     (), "Each part of Y(s) between delay factors is split separately.",
                     tuple(fraction_steps_list),
                     tuple({r.id: r for s in fraction_steps_list for r in s.all_rules}.values()))
    invert = Step("Invert term by term", rule("second_shift") if any(
        d != 0 for d, _ in delayed_solutions) else None, (),
        "Each partial fraction maps back through its table pair; delayed parts shift.",
        tuple(inversion_steps),
        tuple({r.id: r for s in inversion_steps for r in s.all_rules}.values()))

    # 7. Assemble
    solution = sp.Add(*[shift(g, d) for d, g in delayed_solutions])
    breaks = sorted({p.delay for p in pieces if p.delay != 0} | {d for d, _ in delayed_solutions
                                                                if d != 0},
                    key=lambda c: _order_key(c, order))
    if any(not b.is_number for b in breaks) and len(breaks) > 1:
        assumptions.append("switching times in the order " + " < ".join(sp.sstr(b) for b in breaks))
    intervals = []
    rank = {sp.Integer(0): 0, **{b: i + 1 for i, b in enumerate(breaks)}}
    for start in [sp.Integer(0)] + breaks:
        # a part acts from its own switching time on, in the order just assumed
        active = [(d, g) for d, g in delayed_solutions if rank[d] <= rank[start]]
        expr = sp.Add(*[g.subs(TAU, T - d) for d, g in active])
        intervals.append((start, expr))
    impulses = tuple((p.delay, p.shape) for p in pieces if p.impulse)
    assemble_lines = (Line(problem.function, solution, "=", "Heaviside form"),) + tuple(
        Line(problem.function, expr, "=", _interval_text(i, intervals))
        for i, (start, expr) in enumerate(intervals))
    assemble = Step(f"Assemble {y}(t)", rule("second_shift") if breaks else rule("linearity"),
                    assemble_lines,
                    "The inverted parts add up to the solution; on each interval between "
                    "breakpoints only the parts already switched on act.")

    steps = (problem_step, transform_step, derivative_step, solve_step, decompose, invert,
             assemble)
    parts = tuple((delay, numerator / poles.factored) for delay, numerator, poles in group_data)
    all_poles = char_poles
    for _, _, poles in group_data:
        all_poles = merge_poles(all_poles, [p for p in poles.poles if p not in all_poles.poles])
    return Stages(steps=steps, transform=transform, solution=solution,
                  intervals=tuple(intervals), impulses=impulses, system_poles=char_poles.poles,
                  response_poles=all_poles.poles, assumptions=tuple(assumptions),
                  conditions=tuple(conditions), notes=tuple(notes), parts=parts,
                  breakpoints=tuple(breaks), delayed_solutions=tuple(delayed_solutions))


def engine_check(problem: Problem, stages: Stages, tolerance=None, preferred=None) -> tuple:
    """The engine's own back-substitution, ICs and jumps; raises when it rejects the answer.

    Symbolic parameters are sampled at ``preferred`` ({name: value}) where those satisfy the
    derivation's conditions.
    """
    checks_own = self_check(problem, list(stages.delayed_solutions), list(stages.breakpoints),
                            dict(stages.impulses), list(stages.conditions), tolerance,
                            preferred)
    own = Verification(checks_own)
    if not own.passed:
        worst = "; ".join(f"{c.name}: error {c.error:.3g} > tolerance {c.tolerance:.3g}"
                          for c in own.failed)
        msg = (f"the engine's own check rejected the solution of {problem.text!r} ({worst}); "
               "no answer is returned. Please report this equation")
        raise VerificationFailedError(msg, checks_own)
    return checks_own


def check_options(checks: str, tolerances, on_failure: str = "raise", window=None,
                  definitions=None) -> dict:
    """The checks=, tolerances=, on_failure=, window= and definitions= options, validated."""
    if checks not in ("all", "engine"):
        raise ParameterError(f"checks must be 'all' or 'engine', not {checks!r}", "checks")
    if on_failure not in ("raise", "return"):
        raise ParameterError(f"on_failure must be 'raise' or 'return', not {on_failure!r}",
                             "on_failure")
    if window is not None:
        ok = isinstance(window, (int, float)) and not isinstance(window, bool)
        if not ok or not math.isfinite(window) or window <= 0:
            raise ParameterError(f"window must be a positive, finite time in seconds (e.g. "
                                 f"window=2.5), not {window!r}", "window")
    definitions_of(definitions)
    if tolerances is not None and not hasattr(tolerances, "items"):
        raise ParameterError("tolerances must be a mapping, e.g. tolerances={'integration': "
                             "1e-6}", "tolerances")
    tolerances = dict(tolerances or {})
    unknown_keys = set(tolerances) - {"back_substitution", "integration", "inversion", "limits"}
    if unknown_keys:
        msg = (f"unknown tolerance {sorted(unknown_keys)[0]!r}; the keys are back_substitution, "
               "integration, inversion, limits")
        raise ParameterError(msg, sorted(unknown_keys)[0])
    for key, value in tolerances.items():
        good = isinstance(value, (int, float)) and not isinstance(value, bool)
        if not good or not math.isfinite(value) or value <= 0:
            raise ParameterError(f"tolerance {key!r} must be a positive, finite number (e.g. "
                                 f"tolerances={{{key!r}: 1e-6}}), not {value!r}", key)
    return tolerances


def compile_model(problem: Problem, stages: Stages, symbols=()) -> ParametricModel:
    """The derivation compiled once for numbers, with ``symbols`` as arguments."""
    return ParametricModel(problem, stages.solution, stages.parts, stages.response_poles,
                           stages.system_poles, stages.breakpoints, stages.impulses, symbols)


def complete(problem: Problem, stages: Stages, checks_own, value_map: dict, *, tolerances,
             window, checks: str = "all", model: ParametricModel | None = None,
             on_failure: str = "raise", definitions=None) -> Derivation:
    """The Derivation: the stages, the engine's checks, and (for checks="all" with numbers
    for every symbolic parameter) the independent checks and the engineering results.

    ``model`` is the derivation already compiled (the explorer compiles once per family).
    """
    fields = dict(problem=problem, steps=stages.steps, transform=stages.transform,
                  solution=stages.solution, intervals=stages.intervals,
                  impulses=stages.impulses, poles=stages.system_poles,
                  assumptions=stages.assumptions, conditions=stages.conditions,
                  notes=stages.notes, transform_parts=stages.parts,
                  values=tuple(value_map.items()))
    numeric_tol = {k: v for k, v in tolerances.items() if k != "back_substitution"}
    if checks == "engine":
        skipped = tuple(not_run(name, "", float("nan"), "skipped: derive(..., checks='engine')")
                        for name in INDEPENDENT_CHECKS)
        return Derivation(**fields, verification=Verification(tuple(checks_own) + skipped),
                          results=MappingProxyType({}))
    if not all(name in value_map for name in problem.symbols):
        skipped = missing_values(problem.symbols, value_map, numeric_tol)
        return Derivation(**fields, verification=Verification(tuple(checks_own) + skipped),
                          results=MappingProxyType({}))
    if model is None:
        model = compile_model(problem, stages, tuple(value_map))
    numbers = model.at(value_map)
    extra, samples = independent_checks(numbers, numeric_tol,
                                        lambda poles, bps: window_end(poles, bps, window))
    verification = Verification(tuple(checks_own) + extra, samples)
    refuse_failed(verification, problem.text, on_failure)
    results = (engineering_results(numbers, float(samples.times[-1]), problem.units, definitions)
               if verification.passed else withheld(verification))
    derivation = Derivation(**fields, verification=verification, results=results)
    derivation._cache["numpy"] = numbers.closed_form  # d(times) uses the same compiled form
    return derivation


def refuse_failed(verification: Verification, what: str, on_failure: str) -> None:
    """Raise VerificationFailedError naming each failed check, its error and tolerance, unless
    the caller asked for the unverified derivation (on_failure="return")."""
    if verification.passed or on_failure == "return":
        return
    worst = "; ".join(
        f"{c.name}: error {c.error:.3g} > tolerance {c.tolerance:.3g}" if c.ran
        else f"{c.name}: could not run ({c.detail})" for c in verification.failed)
    msg = (f"a check of {what!r} failed ({worst}); no answer is returned. To inspect the "
           "derivation anyway, derive again with on_failure=\"return\" (it is then marked NOT "
           "VERIFIED and has no engineering results)")
    raise VerificationFailedError(msg, verification.failed)


def withheld(verification: Verification):
    """The results of an unverified derivation: none, with the reason."""
    from .results import Result
    names = ", ".join(c.name for c in verification.failed)
    reason = f"verification failed ({names}): no engineering result is given"
    return MappingProxyType({"verification": Result("verification", "engineering results", None,
                                                    "", "", "", reason)})


def parameter_values(problem: Problem, values) -> dict:
    """Numbers for symbolic parameters, for the numerical checks and results only."""
    out = {}
    for name, value in mapping_of(values, "values", "{'k': 800}").items():
        if name not in problem.symbols:
            msg = (f"values= gives {name!r}, which is not a symbolic parameter of this problem "
                   f"(symbolic: {', '.join(problem.symbols) or 'none'})")
            raise ParameterError(msg, name)
        out[name] = _symbol_value(problem, name, value)
    return out


def _symbol_value(problem: Problem, name: str, value) -> sp.Expr:
    """A value for a symbolic parameter in SI: a plain number is read in the parameter's
    declared unit (units=), a quantity is converted after its dimension is checked."""
    ctx = problem.units
    unit = ctx.symbol_unit(name) if ctx else None
    if unit and isinstance(value, (int, float)) and not isinstance(value, bool):
        value = f"{value!r} {unit}"
    q = read_quantity(value, name)
    if q is None:
        number = to_exact(value, name)
        if not number.is_number or not number.is_real:
            raise ParameterError(f"values= gives {name!r} as {value!r}, which is not a number; "
                                 f"give a number, e.g. values={{{name!r}: 2.5}}", name)
        if not number > 0:
            raise ParameterError(f"values= gives {name!r} = {value!r}, but a symbolic parameter is "
                                 f"taken as a positive real number; give a value of zero or "
                                 f"below in params= instead (params={{{name!r}: {value!r}}})",
                                 name)
        return number
    want = dict(ctx.dimensions).get(name) if ctx else None
    if unit is None:
        raise UnitError(f"values= gives {name!r} with a unit ({q.given!r}) but {name} has no "
                        f"declared unit; declare it in units=, e.g. units={{{name!r}: "
                        f"{q.si_unit!r}}}", name=name)
    if q.dimensionality != want:
        raise UnitError(f"values= gives {name!r} in {q.given!r}, which is "
                        f"{dimension_text(q.dimensionality)}; {name} is declared in {unit!r}, "
                        f"which is {dimension_text(want)}", name=name)
    return q.si_value


def _group_transform(g) -> sp.Expr:
    return sp.Add(*[t.expr for t in g.terms]) + g.impulse_area


def _group_fraction(g, extra_numerator: sp.Expr):
    """Σ terms + impulse + initial-value part over the least common denominator of the terms."""
    lcd: dict = {}
    for t in g.terms:
        for f, m in t.factors:
            lcd[f] = max(lcd.get(f, 0), m)
    den = sp.Mul(*[f ** m for f, m in lcd.items()])
    num = sp.Integer(0)
    for t in g.terms:
        rest = sp.Mul(*[f ** (lcd[f] - dict(t.factors).get(f, 0)) for f in lcd])
        num += t.numerator * rest
    num += (g.impulse_area + extra_numerator) * den
    return sp.expand(num), list(lcd.items())


def _labels(y: str, group_data) -> list[str]:
    base = Ysym(y).func.__name__
    return [f"{base}_{i}(s)" for i in range(len(group_data))]


def _labelled_sum(group_data, labels):
    parts = []
    for (delay, _, _), label in zip(group_data, labels):
        sym = sp.Symbol(label)
        parts.append(delayed(delay, sym))
    return sp.Add(*parts)


def _regime_sentence(poles: PoleSet, n: int) -> str:
    kinds = [p for p in poles.poles]
    if n == 2 and len(kinds) >= 1:
        p = kinds[0]
        if p.kind == "complex":
            return "The characteristic roots are a complex pair: " + (
                "undamped oscillation." if p.alpha == 0 else "an underdamped response.")
        if p.multiplicity == 2:
            return "The characteristic root is repeated: critically damped."
        return "The characteristic roots are real and distinct: an overdamped response."
    return ""


def _order_key(c, order=None):
    """Numeric switching times by value; symbolic ones by their value in ``order`` (numbers
    for the parameters, e.g. an explorer's starting values) where given, else after the
    numeric ones."""
    if c.is_number:
        return (0, float(c))
    if order:
        value = c.subs({sp.Symbol(k, positive=True): v for k, v in order.items()})
        if value.is_number:
            return (0, float(value))
    return (1, 0.0)


def _interval_text(i: int, intervals) -> str:
    start = sp.sstr(intervals[i][0])
    if i + 1 < len(intervals):
        return f"{start} ≤ t < {sp.sstr(intervals[i + 1][0])}"
    return f"t ≥ {start}"
