"""The engine's own check: the solution substituted back into every equation.

The engine's own check (``self_check``) substitutes the solution back into the ODE on every
open interval between breakpoints, into the initial conditions as limits from the right at
0⁺ (an impulse at 0 adds its area over the leading coefficient to y^(n-1)), and into the jump
conditions at each later breakpoint. Residuals are proven zero symbolically where that is
cheap, otherwise measured in 30-digit arithmetic at sample points. Symbolic parameters are
given sample values that satisfy the derivation's assumptions.
"""

from __future__ import annotations

import random

import mpmath
import sympy as sp

from ..model.checks import Check
from ..reading.forcing import forcing_on_interval
from ..reading.parse import T
from ..model.symbols import TAU

__all__ = ["DEFAULT_TOLERANCES", "self_check"]

DEFAULT_TOLERANCES = {"exact": 1e-20, "numeric": 1e-9}
"""Relative residual allowed: exact coefficients (30-digit arithmetic), numerical poles."""

_DIGITS = 30


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
    from ...errors import VerificationFailedError
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
        from ...errors import VerificationFailedError
        raise VerificationFailedError("a check's sample point fell on a switching time; "
                                      "please report this equation")
    return 1 if x > 0 else 0


def self_check(problem, stages, tolerance=None, preferred=None) -> tuple[Check, ...]:
    """Back-substitution into every equation, the initial values at 0⁺, the jumps.

    Parameters
    ----------
    problem : Problem
    stages : Stages (each unknown's delayed parts (c, g(τ)), the breakpoints, the impulses and
        the conditions the derivation assumed, used to pick sample values)
    tolerance : float, optional
        Relative residual allowed; by default 1e-20 for exact work, 1e-9 with numerical poles.
    preferred : mapping, optional
        Numbers for symbolic parameters to check at first (the caller's values=), when they
        satisfy the conditions.
    """
    floaty = any(g.has(sp.Float) for ds in stages.delayed_solutions.values() for _, g in ds)
    tol = tolerance if tolerance is not None else \
        DEFAULT_TOLERANCES["numeric" if floaty else "exact"]
    syms = sorted({sp.Symbol(nm, positive=True) for nm in problem.symbols}, key=lambda x: x.name)
    values = _sample_values(syms, list(stages.conditions), preferred)
    sampled = f"; symbolic parameters sampled at {values}" if values else ""
    sub = _Substituted(problem, stages, values)
    size = sum(sp.count_ops(g) for ds in stages.delayed_solutions.values() for _, g in ds)
    if not floaty and size < 250 and len(sub.starts) <= 4 and sub.residuals_vanish():
        ode_err, how = 0.0, "expanded to zero symbolically"
    else:
        ode_err = sub.numeric_residual()
        how = f"residuals at sample points in {_DIGITS}-digit arithmetic"
    one = problem.size == 1
    checks = [Check("ODE on every interval",
                    ("The solution was substituted into the ODE" if one else
                     "Each unknown was substituted into every equation")
                    + f" on each open interval between breakpoints ({how}){sampled}.",
                    tol, ode_err, ode_err <= tol)]
    ic_err = sub.mismatch(sp.Integer(0), lambda j, m: [v.subs(values)
                                                       for v in problem.initial_values[j]])
    checks.append(Check("Initial conditions at 0+",
                        "y and its derivatives up to order n-1 at t = 0+, against the 0⁻ values "
                        "(an impulse at 0 adds its area over the leading coefficient to y^(n-1))."
                        if one else
                        "Each unknown and its derivatives below its order at t = 0+, against "
                        "the 0⁻ values (an impulse J at 0 adds E⁻¹J to the highest ones).",
                        tol, ic_err, ic_err <= tol))
    if len(sub.starts) > 1:
        # parts switched on earlier are smooth at c, so the jump is what starts at c
        jump_err = max(sub.mismatch(c, lambda j, m: [sp.Integer(0)] * m)
                       for c in sub.starts[1:])
        checks.append(Check("Jump conditions at breakpoints",
                            "y … y^(n-2) continuous at each breakpoint; the jump in y^(n-1) "
                            "equals the impulse area there over the leading coefficient."
                            if one else
                            "Below each unknown's highest state derivative, continuity at each "
                            "breakpoint; the highest ones jump by E⁻¹J for an impulse J there.",
                            tol, jump_err, jump_err <= tol))
    return tuple(checks)


def derivatives(g: sp.Expr, top: int) -> list:
    """g(τ) and its derivatives up to order ``top`` (see :func:`mode_derivatives`)."""
    return mode_derivatives(g, top)[0]


def mode_derivatives(g: sp.Expr, top: int):
    """(g and its derivatives up to order ``top``, the same as {(n, p): c} mode tables or None).

    A sum of modes c·τ^n·e^{pτ} (cosines and sines as exponentials) is differentiated on its
    coefficients — d/dτ τ^n e^{pτ} = (n τ^(n-1) + p τ^n) e^{pτ} — which costs what the
    algebra costs; anything else by SymPy."""
    modes = _exponential_modes(g)
    if modes is None:
        out = [g]
        for _ in range(top):
            out.append(sp.diff(out[-1], TAU))
        return out, None
    out, tables = [g], [modes]
    for _ in range(top):
        nxt: dict = {}
        for (n, p), c in modes.items():
            nxt[(n, p)] = nxt.get((n, p), 0) + c * p
            if n:
                nxt[(n - 1, p)] = nxt.get((n - 1, p), 0) + c * n
        modes = {k: sp.expand(v) for k, v in nxt.items() if v != 0}
        tables.append(modes)
        out.append(sp.Add(*[c * TAU ** n * sp.exp(p * TAU) for (n, p), c in modes.items()]))
    return out, tables


def _exponential_modes(g: sp.Expr):
    """{(n, p): c} with g = Σ c τ^n e^{pτ}, or None where g is not such a sum."""
    out: dict = {}
    for term in sp.Add.make_args(sp.expand(g.rewrite(sp.exp), power_exp=True)):
        coeff, n, p = sp.Integer(1), 0, sp.Integer(0)
        for f in sp.Mul.make_args(term):
            if f == TAU:
                n += 1
            elif f.is_Pow and f.base == TAU and f.exp.is_Integer and f.exp > 0:
                n += int(f.exp)
            elif isinstance(f, sp.exp):
                rate = sp.expand(f.args[0] / TAU)
                if rate.has(TAU):
                    if not f.args[0].has(TAU):
                        coeff *= f
                        continue
                    return None
                p += rate
            elif f.has(TAU):
                return None
            else:
                coeff *= f
        p = sp.expand(p)
        out[(n, p)] = out.get((n, p), 0) + coeff
    return out


class _Substituted:
    """The problem and each unknown's delayed parts with sample values put in, and the parts'
    derivatives up to the orders the equations use."""

    def __init__(self, problem, stages, values):
        self.problem = problem
        self.values = values
        self.ops = [[[a.subs(values) for a in c] for c in row] for row in problem.operators]
        self.forcings = [f.subs(values) for f in problem.forcings]
        self.impulses = [(i, (sp.Integer(0) + c).subs(values), (sp.Integer(0) + a).subs(values))
                         for i, c, a in stages.impulses]
        self.ders, self.tables = {}, {}
        for j, u in enumerate(problem.unknowns):
            top = max(max(len(row[j]) for row in self.ops) - 1, problem.orders[j])
            out = []
            tables = []
            for c, g in stages.delayed_solutions[u]:
                ders, modes = mode_derivatives(g.subs(values), top)
                out.append(((sp.Integer(0) + c).subs(values), ders))
                tables.append(modes)
            self.ders[u] = out
            self.tables[u] = tables
        self.starts = [sp.Integer(0)] + sorted({(sp.Integer(0) + b).subs(values)
                                                for b in stages.breakpoints}, key=float)

    def _lhs(self, i, start, at):
        """Σ_j Σ_k a_ijk x_j^(k) of equation i on the interval from ``start``, at τ-shifted
        time ``at`` (a SymPy expression in t)."""
        return sp.Add(*[a * d[k].subs(TAU, at - c)
                        for j, u in enumerate(self.problem.unknowns)
                        for c, d in self.ders[u] if c <= start
                        for k, a in enumerate(self.ops[i][j]) if a != 0])

    def residuals_vanish(self) -> bool:
        """True when every equation's residual expands to zero on every interval (cheap
        cases only)."""
        for s_i, start in enumerate(self.starts):
            end = self.starts[s_i + 1] if s_i + 1 < len(self.starts) else None
            mid = (start + end) / 2 if end is not None else start + 1
            for i in range(self.problem.size):
                residual = self._lhs(i, start, T) - forcing_on_interval(self.forcings[i], mid)
                if sp.expand(residual.rewrite(sp.exp)) != 0:
                    return False
        return True

    def numeric_residual(self) -> float:
        """Max over sample points of |Σ a x^(k) - f| / scale in 30-digit arithmetic; the scale
        is the size of what was added (Σ |a_k| Σ |term|), which is what the working precision
        bounds where terms cancel (y ≈ t⁹/9! near a switching time)."""
        fns = {u: [(c, self._part_rows(d, table)) for (c, d), table in
                   zip(self.ders[u], self.tables[u])] for u in self.problem.unknowns}
        fs = [sp.lambdify(T, f, modules=[{"Heaviside": _step_value,
                                          "DiracDelta": lambda *_: 0}, "mpmath"])
              for f in self.forcings]
        worst = mpmath.mpf(0)
        with mpmath.workdps(_DIGITS):
            for s_i, start in enumerate(self.starts):
                end = self.starts[s_i + 1] if s_i + 1 < len(self.starts) else None
                for p in _points(start, end):
                    x = mpmath.mpf(sp.N(p, _DIGITS))
                    rows = {u: [(c, fn(x - mpmath.mpf(sp.N(c, _DIGITS))))
                                for c, fn in fns[u] if c <= start] for u in fns}
                    for i in range(self.problem.size):
                        total, scale = mpmath.mpf(0), mpmath.mpf(0)
                        for j, u in enumerate(self.problem.unknowns):
                            for _, r in rows[u]:
                                for k, a in enumerate(self.ops[i][j]):
                                    if a == 0:
                                        continue
                                    ak = mpmath.mpf(sp.N(a, _DIGITS))
                                    total += ak * sum(r[k])
                                    scale += abs(ak) * sum(abs(v) for v in r[k])
                        fx = mpmath.mpf(fs[i](x))
                        scale = scale + abs(fx) or mpmath.mpf(1)
                        worst = max(worst, abs(total - fx) / scale)
        return float(worst)

    @staticmethod
    def _part_rows(ders, tables):
        """τ → each derivative's additive terms at τ, in mpmath: from the mode tables where
        there are ones (no expression to print and compile), else lambdified."""
        if tables is None:
            return sp.lambdify(TAU, [list(sp.Add.make_args(
                sp.expand(x, power_exp=False, trig=False))) for x in ders], modules="mpmath")
        def mp(x):  # exact to the working precision (never through a Python float)
            re, im = (sp.N(v, _DIGITS + 10) for v in sp.expand(x).as_real_imag())
            return mpmath.mpc(mpmath.mpf(re), mpmath.mpf(im)) if im != 0 else mpmath.mpf(re)

        with mpmath.workdps(_DIGITS + 10):
            numeric = [[(n, mp(p), mp(c)) for (n, p), c in table.items()] for table in tables]

        def rows(tau):
            return [[c * tau ** n * mpmath.exp(p * tau) for n, p, c in table]
                    for table in numeric]
        return rows

    def mismatch(self, at, before) -> float:
        """Worst error of the values at ``at`` against ``before(j, m)`` plus the jump E⁻¹J
        there (the highest ones are not compared where E is singular and J acts)."""
        n = self.problem.size
        orders = self.problem.orders
        lead = sp.Matrix(n, n, lambda i, j: self.ops[i][j][orders[j]]
                         if orders[j] < len(self.ops[i][j]) else 0)
        J = sp.zeros(n, 1)
        for i, c, a in self.impulses:
            if c == at:
                J[i] += a
        dx = lead.inv() * J if lead.det() != 0 else None
        err = 0.0
        for j, u in enumerate(self.problem.unknowns):
            got = [sp.Add(*[d[k].subs(TAU, 0) for c, d in self.ders[u] if c == at])
                   for k in range(orders[j])]
            want = list(before(j, len(got)))
            if dx is not None:
                want[-1] += dx[j]
            top = len(got) if dx is not None or J.is_zero_matrix else len(got) - 1
            for k in range(top):
                err = max(err, _abs_rel(got[k], want[k]))
        return err


def _abs_rel(got: sp.Expr, expected: sp.Expr) -> float:
    with mpmath.workdps(_DIGITS):
        d = abs(complex(sp.N(got - expected, _DIGITS)))
        scale = max(1.0, abs(complex(sp.N(expected, _DIGITS))))
    return d / scale
