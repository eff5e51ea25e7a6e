"""The steps a derivation under a load record shows: the record, the generic segment's own
derivation, the recurrence with its coefficients as formulas of the segment length h, and the
response at the first and last knots."""

from __future__ import annotations

import sympy as sp

from .checking.results import writer_for
from .model.steps import Line, Rule, Step
from .model.symbols import T

__all__ = ["RECURRENCE", "record_steps"]

RECURRENCE = Rule(
    "record_recurrence", "Exact recurrence for a piecewise-linear load",
    r"z_{i+1} = e^{A h} z_i + K_0(h)\,(g F_i + c) + K_1(h)\,g \dot{F}_i",
    "K₀(h) = ∫₀ʰ e^{Aσ} dσ, K₁(h) = ∫₀ʰ e^{Aσ}(h − σ) dσ; the load linear on each segment "
    "[t_i, t_i + h]; z the unknowns and their derivatives below the highest",
    "N. C. Nigam and P. C. Jennings, Bull. Seismological Soc. America 59 (1969), and A. K. "
    "Chopra, Dynamics of Structures, §5.2 (from memory); blocks by C. F. Van Loan, IEEE Trans. "
    "Automatic Control 23 (1978) (from memory)")

_SHOWN = 3


def _number(x) -> sp.Expr:
    """A shown number: 6 significant digits, an exact 0 for zero (a float zero does not read
    back from the JSON form as itself)."""
    x = float(x)
    return sp.Integer(0) if x == 0.0 else sp.Float(x, 6)


def _record_step(record, name: str) -> Step:
    f = sp.Function(name)
    idx = list(range(min(_SHOWN, len(record))))
    idx += [i for i in range(max(len(record) - 2, 0), len(record)) if i not in idx]
    lines = tuple(Line(f(_number(record.times[i])), _number(record.values[i])) for i in idx)
    return Step("The load record", None, lines,
                note=f"{name}(t) is the {record.description}; on each segment [t_i, t_(i+1)] it "
                     f"is {name}_i + {name}dot_i·τ with τ = t − t_i.")


def _segment_step(segment, name: str, state, load) -> Step:
    first = ", ".join(row[0] for row in state)
    return Step("One generic segment of the record", None, (),
                note=f"The load on a segment is {load[0]} + {load[1]}·τ and the state at its "
                     f"start ({first}, …) is the one the previous segment ends in; below, t "
                     "stands for τ, the time since the segment's start. Every segment is this "
                     "derivation with its own numbers.",
                substeps=segment.steps)


def _coefficients(problem, stages, state, load) -> tuple[Line, ...]:
    """Each state component at τ = h as a linear combination of the state at τ = 0 and the
    load's value and slope, the coefficients as formulas of h (the closed form at τ = h)."""
    h = sp.Symbol("h", positive=True)
    inputs = [sp.Symbol(s, positive=True) for row in state for s in row] + \
        [sp.Symbol(x, positive=True) for x in load]
    lines = []
    for j, u in enumerate(problem.unknowns):
        expr = stages.intervals[u][0][1]
        for k in range(problem.orders[j]):
            form = sp.diff(expr, T, k) if k else expr
            rhs = sum((sp.factor_terms(sp.diff(form, x).subs(T, h)) * x for x in inputs),
                      sp.Integer(0))
            lhs = sp.Function(state[j][k][:-2])(sp.Symbol("t_i", positive=True) + h)
            lines.append(Line(lhs, _readable(rhs)))
    return tuple(lines)


def _readable(expr):
    """Exact numbers with long denominators (parameters given as decimals such as 2π to 16
    digits) shown to 10 significant digits; short ones kept exact."""
    long = [r for r in expr.atoms(sp.Rational) if abs(r.q) > 10 ** 6 or abs(r.p) > 10 ** 12]
    if not long:
        return expr
    numbers = {a: a.evalf(10) for a in expr.atoms(sp.Rational, sp.Pow)
               if a.is_number and not a.is_Integer}
    return expr.xreplace(numbers)


def _knots_step(problem, rm) -> Step:
    n = len(rm.knot_times)
    idx = list(range(min(_SHOWN, n))) + [i for i in range(max(n - _SHOWN, 0), n)
                                         if i >= _SHOWN]
    lines = []
    for i in idx:
        for u in problem.unknowns:
            w = writer_for(problem, u)
            t = _number(w.to_t(float(rm.knot_times[i])))
            value = _number(w.to_y(float(rm.node_values(u)[i])))
            lines.append(Line(sp.Function(u)(t), value,
                              label=f"{w.y_unit} at t in {w.t_unit}" if w.y_unit else ""))
    return Step("The response at the knots", RECURRENCE, tuple(lines),
                note=f"The recurrence carried the state through all {n} knots (a jump in the "
                     "load is a knot twice, the state unchanged); the first and last are shown. "
                     "Between knots the response is the generic segment's closed form.")


def record_steps(problem, stages, segment, record, rm, name, state, load) -> tuple[Step, ...]:
    """The record's steps in order."""
    recurrence = Step("From knot to knot: the recurrence", RECURRENCE,
                      _coefficients(problem, stages, state, load),
                      note="The generic closed form at τ = h gives the next state from this one; "
                           "the march evaluates the same map by the matrix exponential of the "
                           "first-order form (checked against these formulas below).")
    return (_record_step(record, name), _segment_step(segment, name, state, load), recurrence,
            _knots_step(problem, rm))
