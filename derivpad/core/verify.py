"""Checks of a solution that do not reuse the derivation: Check and Verification values.

The engine's own check (``self_check``) substitutes the solution back into the ODE on every
open interval between breakpoints, into the initial conditions as limits from the right at
0⁺ (an impulse at 0 adds its area over the leading coefficient to y^(n-1)), and into the jump
conditions at each later breakpoint. Residuals are proven zero symbolically where that is
cheap, otherwise measured in 30-digit arithmetic at sample points. Symbolic parameters are
given sample values that satisfy the derivation's assumptions.
"""

from __future__ import annotations

import random
from dataclasses import dataclass

import mpmath
import sympy as sp

from .forcing import piecewise_to_heaviside
from .parse import T

__all__ = ["Check", "Verification", "self_check", "DEFAULT_TOLERANCES"]

DEFAULT_TOLERANCES = {"exact": 1e-20, "numeric": 1e-9}
"""Relative residual allowed: exact coefficients (30-digit arithmetic), numerical poles."""

_DIGITS = 30


@dataclass(frozen=True, slots=True)
class Check:
    """One check: what was checked, how, the tolerance, the measured error, and the outcome."""

    name: str
    method: str
    tolerance: float
    error: float
    passed: bool
    ran: bool = True
    detail: str = ""

    def to_dict(self) -> dict:
        return {"name": self.name, "method": self.method, "tolerance": self.tolerance,
                "error": self.error, "passed": self.passed, "ran": self.ran,
                "detail": self.detail}


@dataclass(frozen=True, slots=True)
class Verification:
    """All checks of one derivation; ``passed`` only when every check ran and passed."""

    checks: tuple[Check, ...]

    @property
    def passed(self) -> bool:
        return bool(self.checks) and all(c.ran and c.passed for c in self.checks)

    @property
    def failed(self) -> tuple[Check, ...]:
        return tuple(c for c in self.checks if not (c.ran and c.passed))

    def to_dict(self) -> dict:
        return {"passed": self.passed, "checks": [c.to_dict() for c in self.checks]}


def _sample_values(symbols, conditions, seed: int = 20261201) -> dict:
    """Values for symbolic parameters that satisfy every stated assumption."""
    if not symbols:
        return {}
    rng = random.Random(seed)
    for _ in range(500):
        vals = {s: sp.Rational(rng.randint(5, 40), rng.randint(3, 11)) for s in symbols}
        if all(bool(c.subs(vals)) for c in conditions):
            return vals
    raise ArithmeticError("no sample parameter values satisfy the assumptions")


def _active(expr: sp.Expr, point: sp.Expr) -> sp.Expr:
    """expr with every step u(t - c) replaced by its value on an interval containing point."""
    expr = piecewise_to_heaviside(expr)
    repl = {}
    for h in expr.atoms(sp.Heaviside):
        val = h.args[0].subs(T, point)
        repl[h] = sp.Integer(1) if val > 0 else sp.Integer(0)
    repl.update({d: sp.Integer(0) for d in expr.atoms(sp.DiracDelta)})
    return expr.xreplace(repl)


def _residual_error(residual: sp.Expr, scale_terms, points, exact: bool) -> tuple[float, str]:
    """Max over points of |residual| / Σ|terms|; 0 when proven zero symbolically."""
    if exact and sp.count_ops(residual) < 400:
        if sp.expand(residual.rewrite(sp.exp)) == 0:
            return 0.0, "symbolic"
    f = sp.lambdify(T, residual, modules="mpmath")
    g = [sp.lambdify(T, term, modules="mpmath") for term in scale_terms]
    worst = mpmath.mpf(0)
    with mpmath.workdps(_DIGITS):
        for p in points:
            x = mpmath.mpf(sp.N(p, _DIGITS))
            scale = sum(abs(gi(x)) for gi in g) or mpmath.mpf(1)
            worst = max(worst, abs(f(x)) / scale)
    return float(worst), f"{len(points)} points, {_DIGITS}-digit arithmetic"


def _points(a, b):
    if b is None:
        width = max(sp.Integer(1), a)
        return [a + width * k for k in (sp.Rational(1, 7), sp.Rational(1, 2), 1, 2, 4)]
    return [a + (b - a) * k for k in (sp.Rational(1, 7), sp.Rational(3, 7), sp.Rational(5, 7),
                                      sp.Rational(13, 14))]


def self_check(problem, intervals, impulses, conditions, tolerance=None) -> tuple[Check, ...]:
    """Back-substitution into the ODE, the initial conditions and the jump conditions.

    Parameters
    ----------
    problem : Problem
    intervals : sequence of (start, expression) pairs, the solution on [start, next start)
    impulses : mapping from time to impulse area
    conditions : relations the derivation assumed (used to pick sample values)
    tolerance : float, optional
        Relative residual allowed; by default 1e-20 for exact work, 1e-9 with numerical poles.
    """
    solution_has_float = any(e.has(sp.Float) for _, e in intervals)
    tol = tolerance if tolerance is not None else \
        DEFAULT_TOLERANCES["numeric" if solution_has_float else "exact"]
    syms = sorted({s for _, e in intervals for s in e.free_symbols if s != T}
                  | {s for a in problem.coefficients for s in a.free_symbols}
                  | {s for c, _ in intervals for s in c.free_symbols}
                  | (problem.forcing.free_symbols - {T}), key=lambda s: s.name)
    values = _sample_values(syms, conditions)
    sampled = f"; symbolic parameters sampled at {values}" if values else ""
    n = problem.order
    a = [c.subs(values) for c in problem.coefficients]
    forcing = problem.forcing.subs(values)
    ivs = [(sp.Integer(0) + c, e) for c, e in intervals]
    ivs = [(c.subs(values), e.subs(values)) for c, e in ivs]
    exact = not solution_has_float

    ode_err, how = 0.0, "symbolic"
    for i, (start, y) in enumerate(ivs):
        end = ivs[i + 1][0] if i + 1 < len(ivs) else None
        mid = (start + end) / 2 if end is not None else start + 1
        f_i = _active(forcing, mid)
        derivs = [y] + [sp.diff(y, T, k) for k in range(1, n + 1)]
        terms = [a[k] * derivs[k] for k in range(n + 1)]
        residual = sp.Add(*terms) - f_i
        err, how_i = _residual_error(residual, terms + [f_i], _points(start, end), exact)
        if how_i != "symbolic":
            how = how_i
        ode_err = max(ode_err, err)
    checks = [Check("ODE on every interval",
                    "The solution was substituted into the ODE on each open interval between "
                    f"breakpoints ({how}){sampled}.", tol, ode_err, ode_err <= tol)]

    # Initial conditions as limits from the right at 0+.
    y0 = ivs[0][1]
    area0 = sum((v for c, v in impulses.items() if c == 0), sp.Integer(0))
    ic_err = 0.0
    for k in range(n):
        expected = problem.initial_values[k].subs(values)
        if k == n - 1:
            expected += (sp.Integer(0) + area0).subs(values) / a[n]
        got = sp.diff(y0, T, k).subs(T, 0)
        ic_err = max(ic_err, _abs_rel(got, expected))
    checks.append(Check("Initial conditions at 0+",
                        "y and its derivatives up to order n-1 at t = 0+, against the 0⁻ values "
                        "(an impulse at 0 adds its area over the leading coefficient to y^(n-1)).",
                        tol, ic_err, ic_err <= tol))

    jump_err = 0.0
    for i in range(1, len(ivs)):
        c, y_right = ivs[i]
        y_left = ivs[i - 1][1]
        area = sum((v for cc, v in impulses.items() if (sp.Integer(0) + cc).subs(values) == c),
                   sp.Integer(0))
        for k in range(n):
            jump = sp.diff(y_right - y_left, T, k).subs(T, c)
            expected = area.subs(values) / a[n] if k == n - 1 else sp.Integer(0)
            jump_err = max(jump_err, _abs_rel(jump, expected))
    if len(ivs) > 1:
        checks.append(Check("Jump conditions at breakpoints",
                            "y … y^(n-2) continuous at each breakpoint; the jump in y^(n-1) "
                            "equals the impulse area there over the leading coefficient.",
                            tol, jump_err, jump_err <= tol))
    return tuple(checks)


def _abs_rel(got: sp.Expr, expected: sp.Expr) -> float:
    with mpmath.workdps(_DIGITS):
        d = abs(complex(sp.N(got - expected, _DIGITS)))
        scale = max(1.0, abs(complex(sp.N(expected, _DIGITS))))
    return d / scale
