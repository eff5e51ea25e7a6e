"""The symbolic stages over a vector of unknowns; a single ODE is the case n = 1.

Stages, each a function returning its Step and what the next stage needs: problem → forcing of
each equation in Heaviside form → transform every equation → derivatives with the initial
conditions → (n > 1) matrix form A(s) X(s) = B(s) → solve: the characteristic polynomial
Δ(s) = det A(s), factored (its roots are the poles), each X_j(s) = Δ_j(s)/Δ(s) (Cramer's rule,
fraction-free as adj A · B; for n = 1 simply B(s)/P(s)) → partial fractions per unknown and
delay factor → inversion through the rule table and the shifting theorems → assemble each
x_j(t). Only the engine's own rule table is used; SymPy's laplace_transform,
inverse_laplace_transform and dsolve never run here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp
from sympy.polys.matrices import DomainMatrix

from ...errors import EquationError, SolveError
from .algebra import initial_condition_polynomial, merge_poles, poles_of
from ..reading.forcing import TAU, heaviside_pieces
from ..model.labels import InitialValue, PartLabel, PolynomialLabel
from .inverse import invert_term, inversion_step, shift
from ..reading.parse import S, T
from .partial_fractions import fraction_steps, partial_fractions
from ..model.problem import Problem
from .rules import rule
from ..model.steps import Line, Step
from .transform import (Laplace, Ysym, delayed, derivative_transform, time_text,
                        transform_groups)
from ..reading.units import sign_cautions

__all__ = ["Stages", "derived_solutions", "determinant_and_adjugate", "interval_text", "order_key",
           "solve_stages"]


@dataclass(frozen=True)
class Stages:
    """What the symbolic stages produce, before any check; mappings are keyed by unknown."""

    steps: tuple
    determinant: sp.Expr             # Δ(s) = det A(s) (P(s) for one unknown), expanded
    transform: dict                  # unknown → X_j(s), delay factors in front of their parts
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
    derived: dict = field(default_factory=dict)   # derived quantity → expression in t


@dataclass
class _Facts:
    """Assumptions, conditions and notes the stages collect, in order, each once."""

    assumptions: list
    conditions: list
    notes: list

    def assume(self, texts, conditions=()) -> None:
        for x in texts:
            if x not in self.assumptions:
                self.assumptions.append(x)
                self.conditions.extend(c for c in conditions if c not in self.conditions)


def solve_stages(problem: Problem, regime: str = "underdamped", order=None) -> Stages:
    """Run the stages in order (see the module docstring).

    ``order`` ({name: number}) orders symbolic switching times by those numbers.
    """
    facts = _Facts(list(sign_cautions(problem.quantities)), [], [])
    if problem.symbols:
        facts.assume(["symbolic parameters (" + ", ".join(problem.symbols)
                      + ") are taken as positive real numbers"])
    pieces, heaviside = _forcing_pieces(problem, facts)
    first = problem_step(problem, heaviside)
    transformed, groups, F = transform_step(problem, pieces)
    derivatives, A, Q = derivative_step(problem, F)
    solved = solve_step(problem, A, F, Q, groups, regime, order, facts)
    decompose, invert, delayed_solutions = fraction_and_inversion_steps(problem, solved)
    assembled, solution, intervals, breaks = assembly_step(problem, pieces, solved.delays,
                                                           delayed_solutions, order, facts)
    matrix = (matrix_step(A, F, Q, problem),) if problem.size > 1 else ()
    steps = (first, transformed, derivatives) + matrix + (solved.step, decompose, invert,
                                                          assembled)
    impulses = tuple((i, p.delay, p.shape) for i, ps in enumerate(pieces) for p in ps
                     if p.impulse)
    return Stages(steps=steps, determinant=solved.determinant, transform=solved.transform,
                  solution=solution, intervals=intervals, parts=solved.parts,
                  delayed_solutions=delayed_solutions, impulses=impulses,
                  system_poles=solved.poles.poles, response_poles=solved.response_poles,
                  breakpoints=tuple(breaks), assumptions=tuple(facts.assumptions),
                  conditions=tuple(facts.conditions), notes=tuple(facts.notes),
                  derived=derived_solutions(problem, solution))


# -- 1. the problem and its forcing ---------------------------------------------------------
def _forcing_pieces(problem: Problem, facts: _Facts):
    """Each equation's forcing as Heaviside pieces, and as one unit-step expression."""
    pieces_by_eq, heaviside = [], []
    for i, f in enumerate(problem.forcings):
        pieces, notes = heaviside_pieces(f)
        facts.notes += [x if problem.size == 1 else f"equation {i + 1}: {x}" for x in notes]
        facts.assume([f"switching time {sp.sstr(p.delay)} ≥ 0" for p in pieces
                      if not p.delay.is_number])
        pieces_by_eq.append(pieces)
        heaviside.append(sp.Add(*[p.shape * sp.DiracDelta(T - p.delay) if p.impulse
                                  else shift(p.shape, p.delay) for p in pieces]))
    return pieces_by_eq, heaviside


def problem_step(problem: Problem, heaviside) -> Step:
    """Stage 1: the equations, the initial values at 0⁻, the forcing in unit-step form and
    the parameters with their given and SI values."""
    n = problem.size
    eq_lines = tuple(Line(problem.lhs(i), problem.forcings[i], "=",
                          "for t > 0" if n == 1 else f"equation {i + 1}, t > 0")
                     for i in range(n))
    ic_lines = tuple(Line(InitialValue(u, k), v, "=")
                     for u, vals in zip(problem.unknowns, problem.initial_values)
                     for k, v in enumerate(vals))
    load_lines = tuple(Line(sp.Function(name)(T), expr, "=", description)
                       for name, description, expr in problem.loads)
    forcing_lines = tuple(
        Line(sp.Function("f" if n == 1 else f"f_{i + 1}")(T), h, "=",
             "forcing in unit-step form" if n == 1 else f"equation {i + 1}, unit-step form")
        for i, h in enumerate(heaviside) if h != 0 or n == 1)
    given = {q.name: q for q in problem.quantities}
    param_lines = tuple(Line(sp.Symbol(name), value, "=",
                             f"given {given[name].given}; SI {given[name].si_unit}"
                             if name in given else "parameter")
                        for name, value in problem.parameters)
    what = (f"Order-{problem.orders[0]} linear ODE with constant coefficients." if n == 1 else
            f"A system of {n} coupled linear ODEs with constant coefficients in "
            f"{', '.join(problem.unknowns)}.")
    piecewise = any(f.has(sp.Piecewise) for f in problem.forcings)
    return Step("Problem", rule("definition"),
                eq_lines + ic_lines + load_lines + forcing_lines + param_lines,
                what + " Initial values are taken just before t = 0 (0⁻), so an impulse at "
                "t = 0 acts after them.",
                rules_used=(rule("piecewise_to_step"),) if piecewise else ())


# -- 2. transform every equation ------------------------------------------------------------
def transform_step(problem: Problem, pieces_by_eq):
    """Stage 2: both sides of every equation transformed term by term; the forcing's pieces
    by table pairs and the second shifting theorem. Returns (step, groups per equation, F)."""
    groups_by_eq, eq_steps, F = [], [], []
    funcs = problem.functions()
    for i, pieces in enumerate(pieces_by_eq):
        groups, forcing_steps = transform_groups(pieces)
        groups_by_eq.append(groups)
        Fi = sp.Add(*[delayed(g.delay, sp.Add(*[t.expr for t in g.terms]) + g.impulse_area)
                      for g in groups])
        F.append(Fi)
        lhs = sp.Add(*[a * Laplace(funcs[j].diff(T, k) if k else funcs[j])
                       for j, coeffs in enumerate(problem.operators[i])
                       for k, a in reversed(list(enumerate(coeffs))) if a != 0])
        eq_steps.append(Step(f"Equation {i + 1}", rule("linearity"), (Line(lhs, Fi, "="),),
                             "" if forcing_steps else "No forcing in this equation.",
                             tuple(forcing_steps), _rules_of(forcing_steps)))
    note = ("The transform is linear, so each side transforms term by term; each forcing "
            "piece uses a table pair, delayed pieces the second shifting theorem.")
    if problem.size == 1:  # one equation: its lines and sub-steps are the step's own
        only = eq_steps[0]
        step = Step("Transform both sides", rule("linearity"), only.lines, note, only.substeps,
                    only.rules_used)
    else:
        step = Step("Transform every equation", rule("linearity"), (), note, tuple(eq_steps),
                    _rules_of(eq_steps))
    return step, groups_by_eq, F


# -- 3. derivatives with the initial conditions ---------------------------------------------
def derivative_step(problem: Problem, F):
    """Stage 3: each derivative's transform with the values at 0⁻; A(s) and the initial-value
    terms Q(s) of every equation. Returns (step, A, Q)."""
    n, names, funcs = problem.size, problem.unknowns, problem.functions()
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
    X = [Ysym(u) for u in names]
    sub_lines = tuple(Line(sp.Add(*[sp.Mul(A[i, j], X[j], evaluate=False) for j in range(n)
                                    if A[i, j] != 0]) - Q[i], F[i], "=",
                           "" if n == 1 else f"equation {i + 1}")
                      for i in range(n))
    step = Step("Transform the derivatives", rule("derivative"), deriv_lines + sub_lines,
                "Each derivative brings down a power of s and the initial values at 0⁻.")
    return step, A, Q


def matrix_step(A, F, Q, problem: Problem) -> Step:
    """Stage 4 (n > 1): the transformed equations as A(s) X(s) = B(s)."""
    Xv = sp.ImmutableMatrix([Ysym(u) for u in problem.unknowns])
    Bv = sp.ImmutableMatrix([sp.Add(F[i], Q[i]) for i in range(problem.size)])
    return Step(
        "Matrix form", rule("solve_algebraic"),
        (Line(sp.MatMul(sp.ImmutableMatrix(A), Xv, evaluate=False), Bv, "=",
              "A(s) X(s) = B(s)"),),
        "The transformed equations are linear algebraic equations in the transforms: row i of "
        "A(s) holds the polynomials multiplying each unknown's transform in equation i.")


# -- 5. solve for the transforms ------------------------------------------------------------
@dataclass(frozen=True)
class _Solved:
    step: Step
    determinant: sp.Expr
    poles: object                    # PoleSet of Δ(s)
    delays: tuple
    by_delay: dict                   # c → (numerators per unknown, PoleSet)
    transform: dict
    parts: dict
    response_poles: dict


def determinant_and_adjugate(A: sp.Matrix):
    """det A(s) and adj A(s), fraction-free over the polynomial ring of A's entries."""
    dm = DomainMatrix.from_Matrix(A)
    adj, det = dm.adj_det()
    return sp.expand(dm.domain.to_sympy(det)), adj.to_Matrix().applyfunc(sp.expand)


def solve_step(problem, A, F, Q, groups_by_eq, regime, order, facts) -> _Solved:
    """Stage 5: Δ(s) = det A(s) factored into its poles, and each X_j(s) part by part between
    delay factors (Cramer's rule, fraction-free; for one unknown B(s)/P(s))."""
    det, adj = determinant_and_adjugate(A)
    if det == 0:
        raise SolveError("the transformed system is singular (det A(s) is identically zero): "
                         + _dependent(A) + "; give each unknown its own independent equation")
    _refuse_algebraic(problem)
    char_poles = poles_of(det, regime)
    facts.assume(char_poles.assumptions, char_poles.conditions)
    delays = _delays(groups_by_eq, Q, order)
    by_delay = {}
    for c in delays:
        groups = [next((g for g in gs if g.delay == c), None) for gs in groups_by_eq]
        nums, den_factors = _lcd_fraction(groups, [Q[i] if c == 0 else sp.Integer(0)
                                                   for i in range(problem.size)])
        N = adj * sp.Matrix(nums)
        extra = [pole.with_multiplicity(m) for f, m in den_factors for pole in poles_of(f).poles]
        poles = merge_poles(char_poles, extra)
        facts.assume(poles.assumptions, poles.conditions)
        by_delay[c] = ([sp.expand(N[j]) for j in range(problem.size)], poles)
    transform, parts, response, subs = _transforms(problem, delays, by_delay, char_poles)
    step = _solve_step_text(problem, A, F, Q, det, char_poles, subs, facts)
    return _Solved(step, det, char_poles, tuple(delays), by_delay, transform, parts, response)


def _delays(groups_by_eq, Q, order) -> list:
    delays = []
    for groups in groups_by_eq:
        for g in groups:
            if g.delay not in delays:
                delays.append(g.delay)
    if any(q != 0 for q in Q) and sp.Integer(0) not in delays:
        delays.insert(0, sp.Integer(0))
    return sorted(delays, key=lambda c: order_key(c, order))


def _transforms(problem, delays, by_delay, char_poles):
    """Each unknown's X_j(s) = Σ_c e^{-cs} R_jc(s), its parts, its poles, and the lines that
    show each part."""
    transform, parts, response, subs = {}, {}, {}, []
    for j, u in enumerate(problem.unknowns):
        X = Ysym(u)
        lines, total, pj, rpoles = [], [], [], char_poles
        for idx, c in enumerate(delays):
            num, poles = by_delay[c]
            if num[j] == 0:
                continue
            part = num[j] / poles.factored
            where = "part delayed by " + time_text(c) if c != 0 else "undelayed part"
            lines.append(Line(_part_label(u, idx), part, "=",
                              where if problem.size == 1 else "Δ_j(s)/Δ(s), " + where))
            total.append(delayed(c, part))
            pj.append((c, part))
            rpoles = merge_poles(rpoles, [p for p in poles.poles if p not in rpoles.poles])
        transform[u] = sp.Add(*total) if total else sp.Integer(0)
        parts[u] = tuple(pj)
        response[u] = rpoles.poles
        labelled = sp.Add(*[delayed(c, _part_label(u, idx)) for idx, c in enumerate(delays)
                            if by_delay[c][0][j] != 0])
        lines.append(Line(X, labelled if problem.size == 1 else transform[u], "="))
        subs.append(Step(f"{X} by Cramer's rule", rule("solve_algebraic"), tuple(lines),
                         f"Δ_{j + 1}(s) is det A(s) with column {j + 1} replaced by B(s) "
                         "(computed fraction-free as the adjugate times B)."))
    return transform, parts, response, subs


def _part_label(u: str, idx: int) -> PartLabel:
    return PartLabel(Ysym(u).func.__name__, idx)


def _solve_step_text(problem, A, F, Q, det, char_poles, subs, facts) -> Step:
    taken = "".join(f" Assumed ({x})." for x in facts.assumptions
                    if x.startswith(("underdamped", "overdamped", "non-resonant")))
    digits = " Numerical roots are carried to 50 digits." if char_poles.numeric else ""
    numeric = (rule("numeric_roots"),) if char_poles.numeric else ()
    if problem.size == 1:
        Y = Ysym(problem.unknowns[0])
        P = PolynomialLabel("P")
        lines = (Line(Y, sp.Mul(sp.Add(F[0], Q[0]), sp.Pow(A[0, 0], -1), evaluate=False), "="),
                 Line(P, det, "=", "characteristic polynomial"),
                 Line(P, char_poles.factored, "=", "factored")) + subs[0].lines
        note = (f"{Y} is the forcing and initial-value terms over the characteristic "
                f"polynomial. {_regime_sentence(char_poles, problem.orders[0])}")
        return Step(f"Solve for {Y}", rule("solve_algebraic"), lines, note + digits + taken,
                    rules_used=numeric)
    D = PolynomialLabel("Delta")
    return Step(
        "Solve: characteristic determinant and Cramer's rule", rule("solve_algebraic"),
        (Line(D, det, "=", "det A(s)"),
         Line(D, char_poles.factored, "=", "factored: its roots are the system's poles")),
        "The roots of the characteristic determinant are the natural frequencies of the "
        "system." + digits + taken, tuple(subs), rules_used=numeric)


def _regime_sentence(poles, n: int) -> str:
    if n == 2 and poles.poles:
        p = poles.poles[0]
        if p.kind == "complex":
            return "The characteristic roots are a complex pair: " + (
                "undamped oscillation." if p.alpha == 0 else "an underdamped response.")
        if p.multiplicity == 2:
            return "The characteristic root is repeated: critically damped."
        return "The characteristic roots are real and distinct: an overdamped response."
    return ""


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


def _refuse_algebraic(problem: Problem) -> None:
    """A singular matrix of highest-derivative coefficients: a combination of equations with
    no highest derivative left is an algebraic relation (a differential-algebraic system)."""
    lead = problem.lead_matrix()
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


# -- 6-7. partial fractions and inversion ---------------------------------------------------
def fraction_and_inversion_steps(problem: Problem, solved: _Solved):
    """Stages 6 and 7: each part split into partial fractions and inverted term by term.
    Returns (fraction step, inversion step, {unknown: ((c, g_c(τ)), ...)})."""
    frac_steps, inv_steps, delayed_solutions = [], [], {}
    for j, u in enumerate(problem.unknowns):
        f_sub, i_sub, dsol = [], [], []
        for idx, c in enumerate(solved.delays):
            num, poles = solved.by_delay[c]
            if num[j] == 0:
                continue
            label = _part_label(u, idx)
            terms = partial_fractions(num[j], poles)
            f_sub.append(fraction_steps(label, num[j], poles, terms))
            inverses = [invert_term(t) for t in terms]
            i_sub.append(inversion_step(label, c, inverses))
            dsol.append((c, sp.Add(*[inv.time for inv in inverses])))
        delayed_solutions[u] = tuple(dsol)
        X = Ysym(u)
        own = [r for r in _rules_of(f_sub) if r.id != "numeric_roots"]
        frac_steps.append(Step(f"Partial fractions of {X}", own[0] if len(own) == 1 else None,
                               (), "", tuple(f_sub), _rules_of(f_sub)))
        inv_steps.append(Step(f"Invert {X}", None, (), "", tuple(i_sub), _rules_of(i_sub)))
    if problem.size == 1:  # one unknown: its parts are the steps' own sub-steps
        frac_steps, inv_steps = list(frac_steps[0].substeps), list(inv_steps[0].substeps)
        frac_note = (f"Each part of {Ysym(problem.unknowns[0])} between delay factors is split "
                     "separately.")
    else:
        frac_note = "Each unknown's transform is split part by part between delay factors."
    rules = [r for r in _rules_of(frac_steps) if r.id != "numeric_roots"]
    decompose = Step("Partial fractions", rules[0] if len(rules) == 1 else None, (), frac_note,
                     tuple(frac_steps), _rules_of(frac_steps))
    shifted = any(c != 0 for c in solved.delays)
    invert = Step("Invert term by term", rule("second_shift") if shifted else None, (),
                  "Each partial fraction maps back through its table pair; delayed parts "
                  "shift.", tuple(inv_steps), _rules_of(inv_steps))
    return decompose, invert, delayed_solutions


# -- 8. assemble ----------------------------------------------------------------------------
def assembly_step(problem: Problem, pieces_by_eq, delays, delayed_solutions, order, facts):
    """Stage 8: each x_j(t) = Σ_c g_c(t - c)·u(t - c), and interval by interval. Returns
    (step, solution, intervals, breakpoints)."""
    breaks = sorted({p.delay for ps in pieces_by_eq for p in ps if p.delay != 0}
                    | {d for d in delays if d != 0}, key=lambda c: order_key(c, order))
    if any(not b.is_number for b in breaks) and len(breaks) > 1:
        facts.assume(["switching times in the order " + " < ".join(sp.sstr(b) for b in breaks)])
    rank = {sp.Integer(0): 0, **{b: i + 1 for i, b in enumerate(breaks)}}
    which = rule("second_shift") if breaks else rule("linearity")
    solution, intervals, subs = {}, {}, []
    for j, u in enumerate(problem.unknowns):
        dsol = delayed_solutions[u]
        solution[u] = sp.Add(*[shift(g, d) for d, g in dsol])
        ivs = []
        for start in [sp.Integer(0)] + breaks:
            # a part acts from its own switching time on, in the order just assumed
            active = [(d, g) for d, g in dsol if rank[d] <= rank[start]]
            ivs.append((start, sp.Add(*[g.subs(TAU, T - d) for d, g in active])))
        intervals[u] = tuple(ivs)
        f = problem.function(j)
        lines = (Line(f, solution[u], "=", "Heaviside form"),) + tuple(
            Line(f, e, "=", interval_text(i, ivs)) for i, (_, e) in enumerate(ivs))
        subs.append(Step(f"{u}(t)", which, lines, ""))
    note = ("The inverted parts add up to the solution; on each interval between breakpoints "
            "only the parts already switched on act.")
    if problem.size == 1:
        step = Step(f"Assemble {problem.unknowns[0]}(t)", which, subs[0].lines, note)
    else:
        step = Step("Assemble the solution", which, (), note, tuple(subs))
    return step, solution, intervals, breaks


def interval_text(i: int, intervals) -> str:
    """'a ≤ t < b' for interval i of ((start, expression), ...), 't ≥ a' for the last."""
    start = sp.sstr(intervals[i][0])
    if i + 1 < len(intervals):
        return f"{start} ≤ t < {sp.sstr(intervals[i + 1][0])}"
    return f"t ≥ {start}"


def order_key(c, order=None):
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


def _rules_of(steps) -> tuple:
    return tuple({r.id: r for s in steps for r in s.all_rules}.values())


def derived_solutions(problem: Problem, solution: dict) -> dict:
    """Each derived quantity as an expression in t, the unknowns' solutions put in (their
    derivatives only where the quantity uses them)."""
    funcs = {problem.function(j): solution[u] for j, u in enumerate(problem.unknowns)}
    out = {}
    for name, expr in problem.derived:
        used = {d: sp.diff(funcs[d.expr], T, d.derivative_count)
                for d in expr.atoms(sp.Derivative) if d.expr in funcs}
        e = expr.xreplace(used).xreplace(funcs)
        out[name] = sp.expand(e, power_exp=False)
    return out
