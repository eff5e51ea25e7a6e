"""derive() for coupled systems: the stages of the single equation over a vector of unknowns.

Stages: problem → forcing of each equation in Heaviside form → transform every equation →
derivatives with the initial conditions → matrix form A(s) X(s) = B(s) → the characteristic
determinant Δ(s) = det A(s), factored (its roots are the system's poles) and each X_j(s) by
Cramer's rule, Δ_j(s)/Δ(s) → partial fractions per unknown and delay factor → inversion →
assemble each x_j(t). The determinants are computed fraction-free over the polynomial ring
(SymPy's DomainMatrix: Δ and the adjugate, so Δ_j = (adj A · B)_j), which keeps the work
polynomial-sized for larger systems; long expressions go into collapsible sub-steps.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp
from sympy.polys.matrices import DomainMatrix

from ..errors import EquationError, SolveError
from .algebra import initial_condition_polynomial, merge_poles, poles_of
from .engine import _order_key
from .forcing import TAU, heaviside_pieces
from .inverse import invert_term, inversion_step, shift
from .units import sign_cautions
from .parse import S, T
from .partial_fractions import fraction_steps, partial_fractions
from .problem import derivative_name
from .rules import rule
from .steps import Line, Step
from .system_problem import SystemProblem
from .transform import Laplace, Ysym, delayed, derivative_transform, transform_groups

__all__ = ["SystemStages", "solve_system_stages", "determinant_and_adjugate"]


@dataclass(frozen=True)
class SystemStages:
    """What the symbolic stages produce for a system, before any check."""

    steps: tuple
    determinant: sp.Expr             # Δ(s) = det A(s), expanded
    transform: dict                  # unknown → X_j(s) (delay factors in front of their parts)
    solution: dict                   # unknown → x_j(t), Heaviside form
    intervals: dict                  # unknown → ((start, expression), ...)
    parts: dict                      # unknown → ((c, R_jc(s)), ...)
    delayed_solutions: dict          # unknown → ((c, g_jc(τ)), ...)
    impulses: tuple                  # ((equation index, time, area), ...)
    system_poles: tuple
    response_poles: dict             # unknown → poles of X_j(s)
    breakpoints: tuple
    assumptions: tuple
    conditions: tuple
    notes: tuple


def determinant_and_adjugate(A: sp.Matrix):
    """det A(s) and adj A(s), fraction-free over the polynomial ring of A's entries."""
    dm = DomainMatrix.from_Matrix(A)
    adj, det = dm.adj_det()
    return sp.expand(dm.domain.to_sympy(det)), adj.to_Matrix().applyfunc(sp.expand)


def _dependent(A: sp.Matrix) -> str:
    """A sentence naming a combination of equations that vanishes (det A ≡ 0)."""
    null = A.T.nullspace()
    if not null:
        return "the equations are dependent"
    v = null[0]
    den = sp.lcm([sp.fraction(sp.cancel(c))[1] for c in v])
    v = (v * den).applyfunc(sp.cancel)
    parts = [f"({sp.sstr(sp.factor(c))})·(equation {i + 1})" for i, c in enumerate(v) if c != 0]
    return " + ".join(parts) + " = 0 for every s: these equations are dependent"


def _refuse_algebraic(problem) -> None:
    """A singular matrix of highest-derivative coefficients: a combination of equations with
    no highest derivative left is an algebraic relation (a differential-algebraic system)."""
    n = len(problem.unknowns)
    ops, orders = problem.operators, problem.orders
    lead = sp.Matrix(n, n, lambda i, j: ops[i][j][orders[j]] if orders[j] < len(ops[i][j])
                     else 0)
    if sp.expand(lead.det()) != 0:
        return
    combo = lead.T.nullspace()[0]
    parts = " + ".join(f"({sp.sstr(sp.nsimplify(c))})·(equation {i + 1})"
                       for i, c in enumerate(combo) if c != 0)
    raise EquationError(
        "the coefficients of the unknowns' highest derivatives form a singular matrix: "
        f"{parts} has none of them, so the system is partly algebraic (differential-"
        "algebraic), which this method does not solve. Eliminate the algebraic relation "
        "first, or write each unknown's highest derivative independently")


def _ordered(times, order):
    return sorted(times, key=lambda c: _order_key(c, order))


def _lcd_fraction(groups, extras):
    """Numerators over one common denominator for the groups of one delay (one per equation,
    or None), plus polynomial extras (the initial-value terms)."""
    lcd: dict = {}
    for g in groups:
        for t in (g.terms if g is not None else ()):
            for f, m in t.factors:
                lcd[f] = max(lcd.get(f, 0), m)
    den = sp.Mul(*[f ** m for f, m in lcd.items()])
    nums = []
    for g, extra in zip(groups, extras):
        num = sp.Integer(0)
        if g is not None:
            for t in g.terms:
                rest = sp.Mul(*[f ** (lcd[f] - dict(t.factors).get(f, 0)) for f in lcd])
                num += t.numerator * rest
            num += g.impulse_area * den
        num += extra * den
        nums.append(sp.expand(num))
    return nums, list(lcd.items())


def solve_system_stages(problem: SystemProblem, regime: str = "underdamped",
                        order=None) -> SystemStages:
    """Stages 1-8 for a system (see the module docstring)."""
    names = problem.unknowns
    n = len(names)
    X = [Ysym(u) for u in names]
    funcs = problem.functions()
    assumptions: list[str] = list(sign_cautions(problem.quantities))
    conditions: list = []
    notes: list[str] = []
    if problem.symbols:
        assumptions.append("symbolic parameters (" + ", ".join(problem.symbols)
                           + ") are taken as positive real numbers")

    # 1. Problem
    pieces_by_eq = []
    heaviside = []
    for i, f in enumerate(problem.forcings):
        pieces, nts = heaviside_pieces(f)
        notes += [f"equation {i + 1}: {x}" for x in nts]
        pieces_by_eq.append(pieces)
        for p in pieces:
            if not p.delay.is_number:
                text = f"switching time {sp.sstr(p.delay)} ≥ 0"
                if text not in assumptions:
                    assumptions.append(text)
        heaviside.append(sp.Add(*[p.shape * sp.DiracDelta(T - p.delay) if p.impulse
                                  else shift(p.shape, p.delay) for p in pieces]))
    eq_lines = tuple(Line(problem.lhs(i), problem.forcings[i], "=",
                          f"equation {i + 1}, t > 0") for i in range(n))
    ic_lines = tuple(Line(sp.Symbol(derivative_name(u, k) + "(0^-)"), v, "=")
                     for u, vals in zip(names, problem.initial_values) for k, v in enumerate(vals))
    forcing_lines = tuple(Line(sp.Function(f"f_{i + 1}")(T), h, "=",
                               f"equation {i + 1}, unit-step form")
                          for i, h in enumerate(heaviside) if h != 0)
    given = {q.name: q for q in problem.quantities}
    param_lines = tuple(Line(sp.Symbol(name), value, "=",
                             f"given {given[name].given}; SI {given[name].si_unit}"
                             if name in given else "parameter")
                        for name, value in problem.parameters)
    problem_step = Step(
        "Problem", rule("definition"), eq_lines + ic_lines + forcing_lines + param_lines,
        f"A system of {n} coupled linear ODEs with constant coefficients in {', '.join(names)}. "
        "Initial values are taken just before t = 0 (0⁻), so an impulse at t = 0 acts after "
        "them.")

    # 2. Transform every equation
    groups_by_eq = []
    eq_steps = []
    F = []
    for i, pieces in enumerate(pieces_by_eq):
        groups, forcing_steps = transform_groups(pieces)
        groups_by_eq.append(groups)
        Fi = sp.Add(*[delayed(g.delay, sp.Add(*[t.expr for t in g.terms]) + g.impulse_area)
                      for g in groups])
        F.append(Fi)
        lhs = sp.Add(*[a * Laplace(funcs[j].diff(T, k) if k else funcs[j])
                       for j, coeffs in enumerate(problem.operators[i])
                       for k, a in enumerate(coeffs) if a != 0])
        eq_steps.append(Step(f"Equation {i + 1}", rule("linearity"), (Line(lhs, Fi, "="),),
                             "" if forcing_steps else "No forcing in this equation.",
                             tuple(forcing_steps),
                             tuple({r.id: r for s in forcing_steps for r in s.all_rules}.values())))
    transform_step = Step(
        "Transform every equation", rule("linearity"), (),
        "Each equation transforms term by term; each forcing piece uses a table pair, delayed "
        "pieces the second shifting theorem.", tuple(eq_steps),
        tuple({r.id: r for s in eq_steps for r in s.all_rules}.values()))

    # 3. Derivatives with the initial conditions
    used = sorted({(j, k) for row in problem.operators for j, c in enumerate(row)
                   for k, a in enumerate(c) if a != 0 and k > 0})
    deriv_lines = tuple(Line(Laplace(funcs[j].diff(T, k)),
                             derivative_transform(names[j], k, problem.initial_values[j]), "=")
                        for j, k in used)
    A = sp.zeros(n, n)
    Q = []
    for i in range(n):
        q = sp.Integer(0)
        for j, coeffs in enumerate(problem.operators[i]):
            A[i, j] = sp.expand(sp.Add(*[a * S ** k for k, a in enumerate(coeffs)]))
            padded = tuple(problem.initial_values[j]) + (sp.Integer(0),) * len(coeffs)
            q += initial_condition_polynomial(coeffs, padded)
        Q.append(sp.expand(q))
    sub_lines = tuple(Line(sp.Add(*[sp.Mul(A[i, j], X[j], evaluate=False) for j in range(n)
                                    if A[i, j] != 0]) - Q[i], F[i], "=", f"equation {i + 1}")
                      for i in range(n))
    derivative_step = Step("Transform the derivatives", rule("derivative"),
                           deriv_lines + sub_lines,
                           "Each derivative brings down a power of s and the initial values at "
                           "0⁻.")

    # 4. Matrix form
    Xv = sp.ImmutableMatrix(X)
    Bv = sp.ImmutableMatrix([sp.Add(F[i], Q[i]) for i in range(n)])
    matrix_step = Step(
        "Matrix form", rule("solve_algebraic"),
        (Line(sp.MatMul(sp.ImmutableMatrix(A), Xv, evaluate=False), Bv, "=",
              "A(s) X(s) = B(s)"),),
        "The transformed equations are linear algebraic equations in the transforms: row i of "
        "A(s) holds the polynomials multiplying each unknown's transform in equation i.")

    # 5. Solve: Δ(s) and Cramer's rule
    det, adj = determinant_and_adjugate(A)
    if det == 0:
        raise SolveError("the transformed system is singular (det A(s) is identically zero): "
                         + _dependent(A) + "; give each unknown its own independent equation")
    _refuse_algebraic(problem)
    char_poles = poles_of(det, regime)
    assumptions += [x for x in char_poles.assumptions if x not in assumptions]
    conditions += list(char_poles.conditions)
    delays = []
    for groups in groups_by_eq:
        for g in groups:
            if g.delay not in delays:
                delays.append(g.delay)
    if any(q != 0 for q in Q) and sp.Integer(0) not in delays:
        delays.insert(0, sp.Integer(0))
    delays = _ordered(delays, order) if not all(d == 0 for d in delays) else delays
    by_delay = {}
    for c in delays:
        groups = [next((g for g in gs if g.delay == c), None) for gs in groups_by_eq]
        extras = [Q[i] if c == 0 else sp.Integer(0) for i in range(n)]
        nums, den_factors = _lcd_fraction(groups, extras)
        N = adj * sp.Matrix(nums)
        extra = [pole.with_multiplicity(m) for f, m in den_factors for pole in poles_of(f).poles]
        poles = merge_poles(char_poles, extra)
        for x in poles.assumptions:
            if x not in assumptions:
                assumptions.append(x)
                conditions.extend(cd for cd in poles.conditions if cd not in conditions)
        by_delay[c] = ([sp.expand(N[j]) for j in range(n)], poles, den_factors)
    solve_subs = []
    transform, parts, response = {}, {}, {}
    for j, u in enumerate(names):
        lines = []
        total = []
        pj = []
        rpoles = char_poles
        for idx, c in enumerate(delays):
            num, poles, _ = by_delay[c]
            if num[j] == 0:
                continue
            label = f"{X[j].func.__name__}_{idx}(s)"
            part = num[j] / poles.factored
            lines.append(Line(sp.Symbol(label), part, "=", "Δ_j(s)/Δ(s)" +
                              (f", part delayed by {sp.sstr(c)}" if c != 0 else ", undelayed part")))
            total.append(delayed(c, part))
            pj.append((c, num[j] / poles.factored))
            rpoles = merge_poles(rpoles, [p for p in poles.poles if p not in rpoles.poles])
        transform[u] = sp.Add(*total) if total else sp.Integer(0)
        parts[u] = tuple(pj)
        response[u] = rpoles.poles
        lines.append(Line(X[j], transform[u], "="))
        solve_subs.append(Step(f"{X[j]} by Cramer's rule", rule("solve_algebraic"), tuple(lines),
                               f"Δ_{j + 1}(s) is det A(s) with column {j + 1} replaced by B(s) "
                               "(computed fraction-free as the adjugate times B)."))
    solve_step = Step(
        "Solve: characteristic determinant and Cramer's rule", rule("solve_algebraic"),
        (Line(sp.Symbol("Δ(s)"), det, "=", "det A(s)"),
         Line(sp.Symbol("Δ(s)"), char_poles.factored, "=",
              "factored: its roots are the system's poles")),
        "The roots of the characteristic determinant are the natural frequencies of the system."
        + (" Numerical roots are carried to 50 digits." if char_poles.numeric else "")
        + "".join(f" Assumed ({x})." for x in assumptions
                  if x.startswith(("underdamped", "overdamped", "non-resonant"))),
        tuple(solve_subs), rules_used=(rule("numeric_roots"),) if char_poles.numeric else ())

    # 6-7. Partial fractions and inversion, per unknown and delay group
    frac_steps, inv_steps = [], []
    delayed_solutions = {}
    for j, u in enumerate(names):
        f_sub, i_sub, dsol = [], [], []
        for idx, c in enumerate(delays):
            num, poles, _ = by_delay[c]
            if num[j] == 0:
                continue
            label = f"{X[j].func.__name__}_{idx}(s)"
            terms = partial_fractions(num[j], poles)
            f_sub.append(fraction_steps(label, num[j], poles, terms))
            inverses = [invert_term(t) for t in terms]
            i_sub.append(inversion_step(label, c, inverses))
            dsol.append((c, sp.Add(*[inv.time for inv in inverses])))
        delayed_solutions[u] = tuple(dsol)
        frac_steps.append(Step(f"Partial fractions of {X[j]}", rule("pf_simple"), (), "",
                               tuple(f_sub),
                               tuple({r.id: r for s in f_sub for r in s.all_rules}.values())))
        inv_steps.append(Step(f"Invert {X[j]}", None, (), "", tuple(i_sub),
                              tuple({r.id: r for s in i_sub for r in s.all_rules}.values())))
    decompose = Step("Partial fractions", rule("pf_simple"), (),
                     "Each unknown's transform is split part by part between delay factors.",
                     tuple(frac_steps),
                     tuple({r.id: r for s in frac_steps for r in s.all_rules}.values()))
    invert = Step("Invert term by term", rule("second_shift") if any(d != 0 for d in delays)
                  else None, (),
                  "Each partial fraction maps back through its table pair; delayed parts shift.",
                  tuple(inv_steps),
                  tuple({r.id: r for s in inv_steps for r in s.all_rules}.values()))

    # 8. Assemble
    breaks = _ordered({p.delay for ps in pieces_by_eq for p in ps if p.delay != 0}
                      | {d for d in delays if d != 0}, order)
    if any(not b.is_number for b in breaks) and len(breaks) > 1:
        assumptions.append("switching times in the order " + " < ".join(sp.sstr(b) for b in breaks))
    rank = {sp.Integer(0): 0, **{b: i + 1 for i, b in enumerate(breaks)}}
    solution, intervals = {}, {}
    assemble_subs = []
    for j, u in enumerate(names):
        dsol = delayed_solutions[u]
        solution[u] = sp.Add(*[shift(g, d) for d, g in dsol])
        ivs = []
        for start in [sp.Integer(0)] + breaks:
            active = [(d, g) for d, g in dsol if rank[d] <= rank[start]]
            ivs.append((start, sp.Add(*[g.subs(TAU, T - d) for d, g in active])))
        intervals[u] = tuple(ivs)
        lines = (Line(funcs[j], solution[u], "=", "Heaviside form"),) + tuple(
            Line(funcs[j], e, "=", _interval_text(i, ivs)) for i, (_, e) in enumerate(ivs))
        assemble_subs.append(Step(f"{u}(t)", rule("second_shift") if breaks else rule("linearity"),
                                  lines, ""))
    assemble = Step("Assemble the solution", rule("second_shift") if breaks else rule("linearity"),
                    (), "Each unknown is the sum of its inverted parts; on each interval between "
                    "breakpoints only the parts already switched on act.", tuple(assemble_subs))
    impulses = tuple((i, p.delay, p.shape) for i, ps in enumerate(pieces_by_eq) for p in ps
                     if p.impulse)
    steps = (problem_step, transform_step, derivative_step, matrix_step, solve_step, decompose,
             invert, assemble)
    return SystemStages(steps=steps, determinant=det, transform=transform,
                        solution=solution, intervals=intervals, parts=parts,
                        delayed_solutions=delayed_solutions, impulses=impulses,
                        system_poles=char_poles.poles, response_poles=response,
                        breakpoints=tuple(breaks), assumptions=tuple(assumptions),
                        conditions=tuple(conditions), notes=tuple(notes))


def _interval_text(i: int, intervals) -> str:
    start = sp.sstr(intervals[i][0])
    if i + 1 < len(intervals):
        return f"{start} ≤ t < {sp.sstr(intervals[i + 1][0])}"
    return f"t ≥ {start}"



def derive_system(equations, ics=None, params=None, *, units=None, values=None,
                  derived=None, regime: str = "underdamped", tolerances=None,
                  window: float | None = None, checks: str = "all", on_failure: str = "raise",
                  definitions=None):
    """Solve a coupled system of linear constant-coefficient ODEs by the Laplace transform.

    As :func:`derivpad.derive` for one equation; ``equations`` is a list (text or SymPy
    ``Eq``), ``ics`` names each unknown's conditions, ``derived`` names quantities to report
    (``{"stroke": "x1 - x2"}``). Returns a :class:`SystemDerivation`.
    """
    from .system_problem import make_system_problem
    problem = make_system_problem(equations, ics, params, units, derived)
    return derive_system_problem(problem, regime=regime, tolerances=tolerances, values=values,
                                 window=window, checks=checks, on_failure=on_failure,
                                 definitions=definitions)


def derive_state_space(A, B=None, u=None, x0=None, outputs=None, D=None, *, names=None,
                       values=None, tolerances=None, window: float | None = None,
                       checks: str = "all", regime: str = "underdamped"):
    """Solve x' = A x + B u(t), x(0⁻) = x0 step by step; outputs y = C x + D u (``outputs``
    is C) are reported as derived quantities y1, y2, ... Inputs ``u`` are in the forcing
    library's Heaviside form (text, SymPy expressions in t, or ``derivpad.forcing`` loads)."""
    from .system_problem import state_space_problem
    problem = state_space_problem(A, B, u, x0, outputs, D, names)
    return derive_system_problem(problem, regime=regime, tolerances=tolerances, values=values,
                                 window=window, checks=checks)


def derive_system_problem(problem, *, regime="underdamped", tolerances=None, values=None,
                          window=None, checks="all", on_failure="raise", definitions=None):
    """The stages, the checks and the results for a checked :class:`SystemProblem`."""
    from types import MappingProxyType

    from ..errors import VerificationFailedError
    from .engine import check_options, parameter_values, refuse_failed, withheld
    from .numeric_checks import INDEPENDENT_CHECKS, missing_values, not_run
    from .system_checks import compile_system, system_independent_checks, system_self_check
    from .system_derivation import SystemDerivation
    from .system_results import system_results
    from .verify import Verification
    from .window import window_end

    tolerances = check_options(checks, tolerances, on_failure, window, definitions)
    value_map = parameter_values(_ParameterView(problem), values)
    stages = solve_system_stages(problem, regime, value_map or None)
    own = system_self_check(problem, stages, tolerances.get("back_substitution"), value_map)
    if not all(c.passed for c in own):
        worst = "; ".join(f"{c.name}: error {c.error:.3g} > tolerance {c.tolerance:.3g}"
                          for c in own if not c.passed)
        raise VerificationFailedError(f"the engine's own check rejected the solution of the "
                                      f"system ({worst}); no answer is returned. Please report "
                                      "this system", own)
    fields = dict(problem=problem, steps=stages.steps, transform=stages.transform,
                  solution=stages.solution, intervals=stages.intervals,
                  impulses=stages.impulses, poles=stages.system_poles,
                  assumptions=stages.assumptions, conditions=stages.conditions,
                  notes=stages.notes, transform_parts=stages.parts,
                  values=tuple(value_map.items()), determinant=stages.determinant)
    numeric_tol = {k: v for k, v in tolerances.items() if k != "back_substitution"}
    if checks == "engine" or not all(n in value_map for n in problem.symbols):
        skipped = (tuple(not_run(name, "", float("nan"), "skipped: checks='engine'")
                         for name in INDEPENDENT_CHECKS) if checks == "engine"
                   else missing_values(problem.symbols, value_map, numeric_tol))
        return SystemDerivation(**fields, verification=Verification(tuple(own) + skipped),
                                results=MappingProxyType({}),
                                derived=_derived(problem, stages))
    numbers = compile_system(problem, stages, value_map)
    every = [z for m in numbers.models.values() for z in m.response_poles]
    end = window_end(every, list(numbers.breakpoints), window)
    extra, samples = system_independent_checks(numbers, numeric_tol, end)
    verification = Verification(tuple(own) + extra, samples)
    refuse_failed(verification, "the system", on_failure)
    results = (system_results(problem, numbers, end, value_map, definitions)
               if verification.passed else withheld(verification))
    d = SystemDerivation(**fields, verification=verification,
                         results=results, derived=_derived(problem, stages))
    d._cache["numpy"] = {name: m.closed_form for name, m in numbers.models.items()}
    return d


def _derived(problem, stages) -> dict:
    funcs = {problem.function(j): stages.solution[u] for j, u in enumerate(problem.unknowns)}
    out = {}
    for name, expr in problem.derived:
        e = expr
        for f, sol in funcs.items():
            for k in range(4, 0, -1):
                e = e.subs(f.diff(T, k), sp.diff(sol, T, k))
        out[name] = e.subs(funcs)
    return out


class _ParameterView:
    """What ``engine.parameter_values`` reads of a problem: its symbols and the unit context
    that declares their units."""

    def __init__(self, problem):
        self.symbols = problem.symbols
        self.units = problem.unit_context(problem.unknowns[0]) if problem.units else None
