"""Checks of a solution that do not reuse the derivation: Check and Verification values.

The engine's own check (``self_check``) substitutes the solution back into the ODE on every
open interval between breakpoints, into the initial conditions as limits from the right at
0⁺ (an impulse at 0 adds its area over the leading coefficient to y^(n-1)), and into the jump
conditions at each later breakpoint. Residuals are proven zero symbolically where that is
cheap, otherwise measured in 30-digit arithmetic at sample points. Symbolic parameters are
given sample values that satisfy the derivation's assumptions.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass

import mpmath
import sympy as sp

from .forcing import TAU, forcing_on_interval
from .parse import T

__all__ = ["Check", "Samples", "Verification", "self_check", "DEFAULT_TOLERANCES"]

DEFAULT_TOLERANCES = {"exact": 1e-20, "numeric": 1e-9}
"""Relative residual allowed: exact coefficients (30-digit arithmetic), numerical poles."""

_DIGITS = 30


@dataclass(frozen=True, slots=True)
class Check:
    """One check: what was checked, how, the tolerance, the measured error, and the outcome.

    ``ran`` is False when the check could not run (say so in ``detail``; it does not count as
    passed); ``applicable`` is False when the check's theorem does not apply to this problem
    (``detail`` says why; it counts neither way).
    """

    name: str
    method: str
    tolerance: float
    error: float
    passed: bool
    ran: bool = True
    detail: str = ""
    applicable: bool = True

    @property
    def status(self) -> str:
        if not self.applicable:
            return "not applicable"
        if not self.ran:
            return "not run"
        return "passed" if self.passed else "FAILED"

    def to_dict(self) -> dict:
        """JSON-safe: a check with no measured error (not run, not applicable) has null."""
        return {"name": self.name, "method": self.method, "tolerance": _finite(self.tolerance),
                "error": _finite(self.error), "passed": self.passed, "ran": self.ran,
                "applicable": self.applicable, "status": self.status, "detail": self.detail}


def _finite(x):
    return x if isinstance(x, (int, float)) and math.isfinite(x) else None


@dataclass(frozen=True, slots=True, eq=False)
class Samples:
    """Sampled arrays a verification figure needs: closed form against numerical integration."""

    times: "object"          # numpy array of t
    closed_form: "object"    # y(t) from the derivation
    integrated: "object"     # y(t) from solve_ivp
    forcing: "object"        # f(t)
    breakpoints: tuple[float, ...]

    @property
    def difference(self):
        """|closed form - integration| at each sample time."""
        return abs(self.closed_form - self.integrated)


@dataclass(frozen=True, slots=True, eq=False)
class Verification:
    """All checks of one derivation; ``passed`` only when every applicable check ran and passed."""

    checks: tuple[Check, ...]
    samples: Samples | None = None

    @property
    def passed(self) -> bool:
        return bool(self.checks) and all(c.status in ("passed", "not applicable")
                                         for c in self.checks)

    @property
    def failed(self) -> tuple[Check, ...]:
        """Checks that ran and failed, or could not run."""
        return tuple(c for c in self.checks if c.status in ("FAILED", "not run"))

    def to_dict(self) -> dict:
        return {"passed": self.passed, "checks": [c.to_dict() for c in self.checks]}


def _sample_values(symbols, conditions, preferred=None, seed: int = 20261201) -> dict:
    """Values for symbolic parameters that satisfy every stated assumption.

    The caller's own numbers come first (``preferred``, {name: value}) when they satisfy the
    assumptions; otherwise random rationals over nine decades, since the assumptions of an
    engineering model (k > c²/4m in SI) rarely hold for numbers near 1.
    """
    if not symbols:
        return {}
    rng = random.Random(seed)
    preferred = dict(preferred or {})
    given = {s: preferred[s.name] for s in symbols if s.name in preferred}
    tries = []
    if given:
        tries.append(given)
    for i in range(1500):
        scale = sp.Integer(10) ** rng.randint(-3, 6) if i >= 300 else sp.Integer(1)
        tries.append({s: sp.Rational(rng.randint(5, 40), rng.randint(3, 11)) * scale
                      for s in symbols})
    for vals in tries:
        vals = {**vals, **{s: v for s, v in given.items()}} if len(given) < len(symbols) \
            else vals
        if all(c.subs(vals) is sp.true for c in conditions):
            return vals
    from ..errors import VerificationFailedError
    msg = ("the engine's own check found no parameter values that satisfy the derivation's "
           "assumptions (" + "; ".join(sp.sstr(c) for c in conditions) + "); give values for "
           "the symbolic parameters that satisfy them (values=)")
    raise VerificationFailedError(msg)


def _points(a, b):
    """Sample times inside [a, b); past the last breakpoint, out to a few widths."""
    if b is None:
        width = max(sp.Integer(1), a)
        return [a + width * k for k in (sp.Rational(1, 7), sp.Rational(1, 2), 1, 2, 4)]
    return [a + (b - a) * k for k in (sp.Rational(1, 7), sp.Rational(3, 7), sp.Rational(5, 7),
                                      sp.Rational(13, 14))]


def _step_value(x, *_):
    if x == 0:
        from ..errors import VerificationFailedError
        raise VerificationFailedError("a check's sample point fell on a switching time; "
                                      "please report this equation")
    return 1 if x > 0 else 0


def _symbolic_zero(parts_d, a, forcing, starts) -> bool:
    """True when the residual on every interval expands to zero (cheap cases only)."""
    for i, start in enumerate(starts):
        end = starts[i + 1] if i + 1 < len(starts) else None
        mid = (start + end) / 2 if end is not None else start + 1
        active = [(c, ders) for c, ders in parts_d if c <= start]
        lhs = sp.Add(*[a[k] * ders[k].subs(TAU, T - c) for c, ders in active
                       for k in range(len(a))])
        residual = lhs - forcing_on_interval(forcing, mid)
        if sp.expand(residual.rewrite(sp.exp)) != 0:
            return False
    return True


def _numeric_ode_error(parts_d, a, forcing, starts) -> float:
    """Max over sample points of |Σ a_k y^(k) - f| / scale, in 30-digit arithmetic.

    The scale is Σ_k |a_k| Σ_j |d^k/dt^k term_j| + |f| over the solution's additive terms:
    where terms cancel (y ≈ t^9/9! near a switching time), the residual is judged against
    the size of what was added, which is what the working precision bounds.
    """
    fns = []
    for c, ders in parts_d:
        rows = [list(sp.Add.make_args(sp.expand(d, power_exp=False, trig=False))) for d in ders]
        fns.append((c, sp.lambdify(TAU, rows, modules="mpmath")))
    f = sp.lambdify(T, forcing, modules=[{"Heaviside": _step_value,
                                          "DiracDelta": lambda *_: 0}, "mpmath"])
    worst = mpmath.mpf(0)
    with mpmath.workdps(_DIGITS):
        ak = [mpmath.mpf(sp.N(x, _DIGITS)) for x in a]
        for i, start in enumerate(starts):
            end = starts[i + 1] if i + 1 < len(starts) else None
            for p in _points(start, end):
                x = mpmath.mpf(sp.N(p, _DIGITS))
                total = mpmath.mpf(0)
                scale = mpmath.mpf(0)
                for c, fn in fns:
                    if c <= start:
                        rows = fn(x - mpmath.mpf(sp.N(c, _DIGITS)))
                        for k, row in enumerate(rows):
                            total += ak[k] * sum(row)
                            scale += abs(ak[k]) * sum(abs(v) for v in row)
                fx = mpmath.mpf(f(x))
                scale = scale + abs(fx) or mpmath.mpf(1)
                worst = max(worst, abs(total - fx) / scale)
    return float(worst)


def self_check(problem, parts, breakpoints, impulses, conditions,
               tolerance=None, preferred=None) -> tuple[Check, ...]:
    """Back-substitution into the ODE, the initial conditions and the jump conditions.

    Parameters
    ----------
    problem : Problem
    parts : sequence of (delay c, g(τ)): the solution is Σ g(t - c)·u(t - c)
    breakpoints : the times after 0 where the forcing switches or strikes
    impulses : mapping from time to impulse area
    conditions : relations the derivation assumed (used to pick sample values)
    tolerance : float, optional
        Relative residual allowed; by default 1e-20 for exact work, 1e-9 with numerical poles.
    preferred : mapping, optional
        Numbers for symbolic parameters to check at first (the caller's values=), when they
        satisfy the conditions.
    """
    floaty = any(g.has(sp.Float) for _, g in parts)
    tol = tolerance if tolerance is not None else \
        DEFAULT_TOLERANCES["numeric" if floaty else "exact"]
    syms = sorted({x for c, g in parts for x in (g.free_symbols | (sp.Integer(0) + c).free_symbols)}
                  | {x for b in breakpoints for x in b.free_symbols}
                  | {x for ak in problem.coefficients for x in ak.free_symbols}
                  | (problem.forcing.free_symbols - {T}), key=lambda x: x.name)
    syms = [x for x in syms if x not in (T, TAU)]
    values = _sample_values(syms, conditions, preferred)
    sampled = f"; symbolic parameters sampled at {values}" if values else ""
    n = problem.order
    a = [ak.subs(values) for ak in problem.coefficients]
    forcing = problem.forcing.subs(values)
    parts_d = []
    for c, g in parts:
        c = (sp.Integer(0) + c).subs(values)
        ders = [g.subs(values)]
        for _ in range(n):
            ders.append(sp.diff(ders[-1], TAU))
        parts_d.append((c, ders))
    starts = [sp.Integer(0)] + sorted({(sp.Integer(0) + b).subs(values) for b in breakpoints},
                                      key=lambda v: float(v))
    size = sum(sp.count_ops(g) for _, g in parts)
    if not floaty and size < 250 and len(starts) <= 4 and _symbolic_zero(parts_d, a, forcing,
                                                                           starts):
        ode_err, how = 0.0, "expanded to zero symbolically"
    else:
        ode_err = _numeric_ode_error(parts_d, a, forcing, starts)
        how = f"residuals at sample points in {_DIGITS}-digit arithmetic"
    checks = [Check("ODE on every interval",
                    "The solution was substituted into the ODE on each open interval between "
                    f"breakpoints ({how}){sampled}.", tol, ode_err, ode_err <= tol)]

    def start_values(at):
        return [sp.Add(*[ders[k].subs(TAU, 0) for c, ders in parts_d if c == at])
                for k in range(n)]

    def area_at(at):
        return sp.Add(*[(sp.Integer(0) + v).subs(values) for c, v in impulses.items()
                        if (sp.Integer(0) + c).subs(values) == at])

    got = start_values(sp.Integer(0))
    expected = [iv.subs(values) for iv in problem.initial_values]
    expected[-1] += area_at(sp.Integer(0)) / a[n]
    ic_err = max(_abs_rel(g, e) for g, e in zip(got, expected))
    checks.append(Check("Initial conditions at 0+",
                        "y and its derivatives up to order n-1 at t = 0+, against the 0⁻ values "
                        "(an impulse at 0 adds its area over the leading coefficient to y^(n-1)).",
                        tol, ic_err, ic_err <= tol))
    if len(starts) > 1:
        # Parts switched on earlier are smooth at c, so the jump is what starts at c.
        jump_err = 0.0
        for c in starts[1:]:
            want = [sp.Integer(0)] * (n - 1) + [area_at(c) / a[n]]
            jump_err = max(jump_err, max(_abs_rel(g, e) for g, e in zip(start_values(c), want)))
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
