"""derive(): read the problem, run the stages, check the answer, build the Derivation.

One route for one unknown or many: ``make_problem`` (core/read_problem.py) → the symbolic
stages (core/stages.py) → the engine's own check (core/own_check.py) → the derivation compiled
for numbers (core/numeric_model.py) → the independent checks (core/numeric_checks.py) → the
engineering results (core/results.py).
"""

from __future__ import annotations

import dataclasses
import math
from types import MappingProxyType

import sympy as sp

from ..errors import DerivpadError, ParameterError, UnitError, VerificationFailedError
from .model.derivation import Derivation
from .checking.numeric_checks import INDEPENDENT_CHECKS, independent_checks, missing_values, not_run
from .checking.numeric_model import ParametricNumbers
from .model.problem import Problem
from .reading.values import mapping_of, to_exact
from .reading.read_problem import make_problem
from .checking.acceptance import judge, read_criteria, unjudged
from .checking.results import definitions_of, engineering_results
from .symbolic.stages import Stages, solve_stages
from .reading.units import dimension_text, display_unit_for, read_quantity, to_display
from .model.checks import Verification
from .checking.own_check import self_check
from .checking.window import window_end

__all__ = ["check_options", "compile_numbers", "complete", "derive", "derive_problem",
           "derive_state_space", "engine_check", "form_holds", "parameter_values", "recheck",
           "stages_for_values"]


def derive(equation, ics=None, params=None, *, unknown: str | None = None, units=None,
           values=None, regime: str = "underdamped", tolerances=None,
           window: float | None = None, checks: str = "all", derived=None,
           on_failure: str = "raise", definitions=None, criteria=None):
    """Solve a linear constant-coefficient ODE (or a coupled system) by the Laplace
    transform, step by step.

    Parameters
    ----------
    equation : str, sympy.Eq, or a list of them
        The ODE, e.g. ``"m*x'' + c*x' + k*x = F0*u(t - t1)"``; see docs/input-syntax.md. A
        list is a coupled system (one equation per unknown; see docs/systems.md): the same
        Derivation, its solution and transform then keyed by unknown.
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
        Named quantities of the unknowns to report, ``{"stroke": "x1 - x2"}``.
    on_failure : {"raise", "return"}
        When a check fails: raise VerificationFailedError (default), or return the derivation
        for inspection, marked NOT VERIFIED, with every engineering result absent.
    definitions : mapping, optional
        Step-response definitions: ``settling_band`` (default 0.02) and ``rise`` (default
        (0.1, 0.9)); see docs/results.md.
    criteria : list of str, optional
        Acceptance criteria on results, ``["peak <= 3 mm", "settling_time_2pct <= 2 s"]``,
        each judged with units (value, utilisation, OK / NOT OK); see docs/acceptance.md.

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
    routed = _by_load(equation, ics, params, dict(
        unknown=unknown, units=units, values=values, regime=regime, tolerances=tolerances,
        window=window, checks=checks, derived=derived, on_failure=on_failure,
        definitions=definitions, criteria=criteria))
    if routed is not None:
        return routed
    problem = make_problem(equation, ics, params, unknown, units, derived)
    return derive_problem(problem, regime=regime, tolerances=tolerances, values=values,
                          window=window, checks=checks, on_failure=on_failure,
                          definitions=definitions, criteria=criteria)


def _by_load(equation, ics, params, options: dict):
    """A load record or a periodic load takes its own route (one generic piece derived once);
    None for every other load."""
    from .history_engine import derive_history, record_in
    from .periodic_engine import derive_periodic, periodic_in
    found = record_in(params)
    if found is not None:
        return derive_history(equation, ics, params, *found, **options)
    repeating = periodic_in(params)
    if repeating is not None:
        return derive_periodic(equation, ics, params, *repeating, **options)
    return None


def derive_state_space(A, B=None, u=None, x0=None, outputs=None, D=None, *, names=None,
                       values=None, tolerances=None, window: float | None = None,
                       checks: str = "all", regime: str = "underdamped",
                       on_failure: str = "raise", definitions=None) -> Derivation:
    """Solve x' = A x + B u(t), x(0⁻) = x0 step by step; outputs y = C x + D u (``outputs``
    is C) are reported as derived quantities y1, y2, ... Inputs ``u`` are in the forcing
    library's Heaviside form (text, SymPy expressions in t, or ``derivpad.forcing`` loads)."""
    from .reading.state_space import state_space_problem
    problem = state_space_problem(A, B, u, x0, outputs, D, names)
    return derive_problem(problem, regime=regime, tolerances=tolerances, values=values,
                          window=window, checks=checks, on_failure=on_failure,
                          definitions=definitions)


def derive_problem(problem: Problem, *, regime: str = "underdamped", tolerances=None,
                   values=None, window: float | None = None, checks: str = "all",
                   on_failure: str = "raise", definitions=None,
                   criteria=None) -> Derivation:
    """The stages of :func:`derive` for an already checked :class:`Problem`."""
    tolerances = check_options(checks, tolerances, on_failure, window, definitions)
    criteria = read_criteria(criteria)
    value_map = parameter_values(problem, values)
    stages = stages_for_values(problem, regime, value_map)
    checks_own = engine_check(problem, stages, tolerances.get("back_substitution"), value_map)
    return complete(problem, stages, checks_own, value_map, tolerances=tolerances,
                    window=window, checks=checks, on_failure=on_failure,
                    definitions=definitions, criteria=criteria)


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


def engine_check(problem: Problem, stages: Stages, tolerance=None, preferred=None) -> tuple:
    """The engine's own back-substitution, ICs and jumps; raises when it rejects the answer.

    Symbolic parameters are sampled at ``preferred`` ({name: value}) where those satisfy the
    derivation's conditions.
    """
    checks_own = self_check(problem, stages, tolerance, preferred)
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


def compile_numbers(problem: Problem, stages: Stages, symbols=()) -> ParametricNumbers:
    """The derivation compiled once for numbers, with ``symbols`` as arguments."""
    return ParametricNumbers(problem, stages, symbols)


def complete(problem: Problem, stages: Stages, checks_own, value_map: dict, *, tolerances,
             window, checks: str = "all", model: ParametricNumbers | None = None,
             on_failure: str = "raise", definitions=None, criteria=()) -> Derivation:
    """The Derivation: the stages, the engine's checks, and (for checks="all" with numbers
    for every symbolic parameter) the independent checks and the engineering results.

    ``model`` is the derivation already compiled (the explorer compiles once per family).
    """
    fields = dict(problem=problem, steps=stages.steps, transforms=stages.transform,
                  solutions=stages.solution, interval_map=stages.intervals,
                  impulses=stages.impulses, poles=stages.system_poles,
                  assumptions=stages.assumptions, conditions=stages.conditions,
                  notes=stages.notes, parts=stages.parts, values=tuple(value_map.items()),
                  derived=stages.derived,
                  determinant=stages.determinant, response_poles=stages.response_poles,
                  window=window, value_rows=value_rows(problem, value_map))
    numeric_tol = {k: v for k, v in tolerances.items() if k != "back_substitution"}
    if checks == "engine":
        skipped = tuple(not_run(name, "", float("nan"), "skipped: derive(..., checks='engine')")
                        for name in INDEPENDENT_CHECKS)
        return Derivation(**fields, verification=Verification(tuple(checks_own) + skipped),
                          results=MappingProxyType({}),
                          acceptance=unjudged(criteria, "checks='engine': no results"))
    if not all(name in value_map for name in problem.symbols):
        skipped = missing_values(problem.symbols, value_map, numeric_tol)
        return Derivation(**fields, verification=Verification(tuple(checks_own) + skipped),
                          results=MappingProxyType({}),
                          acceptance=unjudged(criteria, "symbolic parameters without values: "
                                              "no results"))
    if model is None:
        model = compile_numbers(problem, stages, tuple(value_map))
    numbers = model.at(value_map)
    end = window_end(numbers.every_pole, list(numbers.breakpoints), window)
    extra, samples = independent_checks(numbers, numeric_tol, end)
    verification = Verification(tuple(checks_own) + extra, samples)
    refuse_failed(verification, problem.text, on_failure)
    results = (engineering_results(problem, numbers, definitions)
               if verification.passed else withheld(verification))
    acceptance = (judge(criteria, results) if verification.passed
                  else unjudged(criteria, "verification failed: no results"))
    derivation = Derivation(**fields, verification=verification, results=results,
                            acceptance=acceptance)
    # d(times) uses the same compiled forms
    derivation._cache["numpy"] = {name: m.closed_form for name, m in numbers.models.items()}
    return derivation


def recheck(derivation: Derivation, tolerances=None) -> Derivation:
    """The derivation with its independent checks run again from its own closed form and
    transforms (e.g. one read back from JSON, whose figure samples are not stored): the same
    numbers, checks and samples as when it was derived."""
    stages = Stages(steps=derivation.steps, determinant=derivation.determinant,
                    transform=derivation.transforms, solution=derivation.solutions,
                    intervals=derivation.interval_map, parts=derivation.parts,
                    delayed_solutions={}, impulses=derivation.impulses,
                    system_poles=derivation.poles, response_poles=derivation.response_poles,
                    breakpoints=derivation.breakpoints, assumptions=derivation.assumptions,
                    conditions=derivation.conditions, notes=derivation.notes,
                    derived=derivation.derived)
    value_map = dict(derivation.values)
    numbers = compile_numbers(derivation.problem, stages, tuple(value_map)).at(value_map)
    end = window_end(numbers.every_pole, list(numbers.breakpoints), derivation.window)
    extra, samples = independent_checks(numbers, check_options("all", tolerances), end)
    own = tuple(c for c in derivation.verification.checks if c.name not in
                {x.name for x in extra} and c.name not in INDEPENDENT_CHECKS)
    return dataclasses.replace(derivation, verification=Verification(own + extra, samples),
                               _cache={})


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
    from .model.result import Result
    names = ", ".join(c.name for c in verification.failed)
    reason = f"verification failed ({names}): no engineering result is given"
    return MappingProxyType({"verification": Result("verification", "engineering results", None,
                                                    "", "", "", reason)})


def value_rows(problem: Problem, value_map: dict) -> tuple:
    """The numbers for symbolic parameters, each in its declared unit: ((name, number, unit),
    ...) (SI numbers and no unit where none was declared)."""
    ctx = problem.units
    out = []
    for name, v in value_map.items():
        unit = ctx.symbol_unit(name) if ctx else None
        if unit:
            si = display_unit_for(dict(ctx.dimensions)[name])
            out.append((name, to_display(float(v), si, unit), unit))
        else:
            out.append((name, float(v), ""))
    return tuple(out)


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
