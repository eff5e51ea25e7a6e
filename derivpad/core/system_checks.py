"""Checks of a system's solution: the engine's own and the independent ones, per unknown.

* Own check: every unknown substituted back into every equation on each open interval between
  breakpoints (30-digit residuals at sample points), the initial values at 0⁺ and the jumps at
  each breakpoint. An impulse J_i in equation i makes the highest state derivatives jump by
  E⁻¹J, E being the matrix of the coefficients of each unknown's highest derivative.
* Numerical integration of the whole system as one first-order system (SciPy ``odeint``,
  LSODA), restarted at every breakpoint, impulses as jumps E⁻¹J.
* Numerical inversion of each X_j(s) (mpmath Talbot and Cohen), per delay part.
* Initial- and final-value theorems per unknown.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import mpmath
import numpy as np
import sympy as sp

from .forcing import TAU
from .numeric_checks import (NUMERIC_TOLERANCES, RTOL, segment_cuts, grid, integrate_piecewise,
                             inversion_check, inversion_horizon, limit_checks, not_run)
from .numeric_model import NumericModel, _compile_numpy, _compile_scalar, _mode_table, _modes_at, \
    _smooth, _vector, stable, \
    s_limits, _finite
from .parse import S, T
from .transform import Ysym
from .verify import DEFAULT_TOLERANCES, Check, _points, _sample_values
from .window import numeric_poles

__all__ = ["SystemNumbers", "SystemSamples", "compile_system", "system_self_check",
           "system_independent_checks"]

_DIGITS = 30


@dataclass(frozen=True)
class SystemSamples:
    """What the figure draws: each unknown's closed form and integration on one grid."""

    times: np.ndarray
    closed_form: dict
    integrated: dict
    forcing: dict            # equation label → f_i(times)
    breakpoints: tuple

    def difference(self, name: str) -> np.ndarray:
        return np.abs(self.closed_form[name] - self.integrated[name])


@dataclass(frozen=True)
class SystemNumbers:
    """A system's numbers: per-unknown numeric models (closed form, Y(s) parts, limits) and
    the first-order form for the integrator."""

    unknowns: tuple
    models: dict             # unknown or derived name → NumericModel
    lead: np.ndarray         # E: coefficients of each unknown's highest derivative
    lower: tuple             # (i, j, k, a_ijk) for k below unknown j's order
    orders: tuple
    initial: tuple           # per unknown: values at 0⁻
    forcing_at: tuple        # per equation: scalar f_i(t)
    forcing: tuple           # per equation: f_i(times)
    impulses: tuple          # (equation, time, area)
    breakpoints: tuple
    system_poles: tuple


def _poles_numbers(poles) -> tuple:
    return tuple(numeric_poles(poles))


def compile_system(problem, stages, values: dict) -> SystemNumbers:
    """The system's numbers for ``values`` of its symbolic parameters (compiled once here)."""
    subs = {sp.Symbol(k, positive=True): v for k, v in values.items()}
    n = len(problem.unknowns)
    bps = tuple(float((sp.Integer(0) + b).subs(subs)) for b in stages.breakpoints)
    forcings = [_smooth(f.subs(subs)) for f in problem.forcings]
    models = {}
    solutions = {u: stages.solution[u].subs(subs) for u in problem.unknowns}
    funcs = {problem.function(j): solutions[u] for j, u in enumerate(problem.unknowns)}
    exprs = dict(solutions)
    for name, expr in problem.derived:
        e = expr.subs(subs)
        for f, sol in funcs.items():
            for k in range(4, 0, -1):
                e = e.subs(f.diff(T, k), sp.diff(sol, T, k))
        exprs[name] = sp.expand(e.subs(funcs), power_exp=False)
    for name, expr in exprs.items():
        parts = stages.parts.get(name)
        num_parts = tuple(((sp.Integer(0) + c).subs(subs), r.subs(subs)) for c, r in parts) \
            if parts else ()
        ivt, fvt = s_limits(num_parts) if num_parts else (sp.nan, sp.nan)
        poles = stages.response_poles.get(name, stages.system_poles)
        modes = _modes_at(_mode_table(expr, ()), ())
        if modes is not None:  # evaluated mode by mode: stable for any poles and switches
            closed, derivative = stable(modes), stable(modes.derivative())
        else:
            closed = _vector(_compile_numpy(expr, ()), (), _compile_scalar(expr, ()))
            derivative = _vector(_compile_numpy(sp.diff(expr, T), ()), (),
                                 _compile_scalar(sp.diff(expr, T), ()))
        models[name] = NumericModel(
            coefficients=(), initial=(), breakpoints=bps, impulses=(),
            system_poles=_poles_numbers([_at(p, subs) for p in stages.system_poles]),
            response_poles=_poles_numbers([_at(p, subs) for p in poles]),
            closed_form=closed, derivative=derivative, modes=modes,
            forcing=_vector(_compile_numpy(sp.Integer(0), ())), forcing_at=lambda t: 0.0,
            parts=tuple((float(c), sp.lambdify(S, r, modules="mpmath")) for c, r in num_parts),
            initial_value_limit=_finite(ivt) if num_parts else math.nan,
            final_value_limit=_finite(fvt) if num_parts else None, final_load=None)
    lead = np.zeros((n, n))
    lower = []
    for i, row in enumerate(problem.operators):
        for j, coeffs in enumerate(row):
            for k, a in enumerate(coeffs):
                value = float(sp.Integer(0) + a.subs(subs)) if a != 0 else 0.0
                if value == 0.0:
                    continue
                if k == problem.orders[j]:
                    lead[i, j] = value
                else:
                    lower.append((i, j, k, value))
    return SystemNumbers(
        unknowns=problem.unknowns, models=models, lead=lead, lower=tuple(lower),
        orders=problem.orders,
        initial=tuple(tuple(float(v.subs(subs)) for v in vals) for vals in problem.initial_values),
        forcing_at=tuple(_compile_scalar(f, ()) for f in forcings),
        forcing=tuple(_vector(_compile_numpy(f, ())) for f in forcings),
        impulses=tuple((i, float((sp.Integer(0) + c).subs(subs)),
                        float((sp.Integer(0) + a).subs(subs))) for i, c, a in stages.impulses),
        breakpoints=bps,
        system_poles=_poles_numbers([_at(p, subs) for p in stages.system_poles]))


def _at(p, subs):
    return type(p)(p.kind, p.value.subs(subs), p.beta.subs(subs), p.multiplicity, p.numeric)


# -- the engine's own check ---------------------------------------------------------------
def system_self_check(problem, stages, tolerance=None, preferred=None) -> tuple[Check, ...]:
    """Back-substitution into every equation, initial values at 0⁺, jumps at breakpoints."""
    floaty = any(g.has(sp.Float) for ds in stages.delayed_solutions.values() for _, g in ds)
    tol = tolerance if tolerance is not None else \
        DEFAULT_TOLERANCES["numeric" if floaty else "exact"]
    syms = sorted({sp.Symbol(nm, positive=True) for nm in problem.symbols}, key=lambda x: x.name)
    values = _sample_values(syms, list(stages.conditions), preferred)
    sampled = f"; symbolic parameters sampled at {values}" if values else ""
    n = len(problem.unknowns)
    ops = [[[a.subs(values) for a in c] for c in row] for row in problem.operators]
    forcings = [f.subs(values) for f in problem.forcings]
    ders = {}
    for j, u in enumerate(problem.unknowns):
        top = max(len(row[j]) for row in ops) - 1
        top = max(top, problem.orders[j])
        out = []
        for c, g in stages.delayed_solutions[u]:
            c = (sp.Integer(0) + c).subs(values)
            d = [g.subs(values)]
            for _ in range(top):
                d.append(sp.diff(d[-1], TAU))
            out.append((c, d))
        ders[u] = out
    starts = [sp.Integer(0)] + sorted({(sp.Integer(0) + b).subs(values)
                                       for b in stages.breakpoints}, key=float)
    fns = {u: [(c, sp.lambdify(TAU, [list(sp.Add.make_args(sp.expand(x, power_exp=False,
                                                                        trig=False)))
                                     for x in d], modules="mpmath")) for c, d in ders[u]]
           for u in problem.unknowns}
    step = lambda x, *_: 1 if x > 0 else (0 if x < 0 else _raise())  # noqa: E731
    fs = [sp.lambdify(T, f, modules=[{"Heaviside": step, "DiracDelta": lambda *_: 0}, "mpmath"])
          for f in forcings]
    worst = mpmath.mpf(0)
    with mpmath.workdps(_DIGITS):
        for i in range(n):
            for s_i, start in enumerate(starts):
                end = starts[s_i + 1] if s_i + 1 < len(starts) else None
                for p in _points(start, end):
                    x = mpmath.mpf(sp.N(p, _DIGITS))
                    total, scale = mpmath.mpf(0), mpmath.mpf(0)
                    for j, u in enumerate(problem.unknowns):
                        for (c, fn) in fns[u]:
                            if c <= start:
                                rows = fn(x - mpmath.mpf(sp.N(c, _DIGITS)))
                                for k, a in enumerate(ops[i][j]):
                                    if a == 0:
                                        continue
                                    ak = mpmath.mpf(sp.N(a, _DIGITS))
                                    total += ak * sum(rows[k])
                                    scale += abs(ak) * sum(abs(v) for v in rows[k])
                    fx = mpmath.mpf(fs[i](x))
                    scale = scale + abs(fx) or mpmath.mpf(1)
                    worst = max(worst, abs(total - fx) / scale)
    ode_err = float(worst)
    checks = [Check("ODE on every interval",
                    "Each unknown was substituted into every equation on each open interval "
                    f"between breakpoints (residuals at sample points in {_DIGITS}-digit "
                    f"arithmetic){sampled}.", tol, ode_err, ode_err <= tol)]
    lead = sp.Matrix(n, n, lambda i, j: ops[i][j][problem.orders[j]]
                     if problem.orders[j] < len(ops[i][j]) else 0)
    invertible = lead.det() != 0
    inv = lead.inv() if invertible else None

    def jump(at):
        J = sp.zeros(n, 1)
        for i, c, a in stages.impulses:
            if (sp.Integer(0) + c).subs(values) == at:
                J[i] += (sp.Integer(0) + a).subs(values)
        return inv * J if inv is not None else None, J

    def start_values(u, at):
        order = problem.orders[problem.unknowns.index(u)]
        return [sp.Add(*[d[k].subs(TAU, 0) for c, d in ders[u] if c == at]) for k in range(order)]

    def mismatch(at, before) -> float:
        """Worst error of the values at ``at`` against ``before(j)`` plus the jump E⁻¹J there
        (the highest ones are not compared where E is singular and J acts)."""
        dx, J = jump(at)
        err = 0.0
        for j, u in enumerate(problem.unknowns):
            got = start_values(u, at)
            want = list(before(j, len(got)))
            if dx is not None:
                want[-1] += dx[j]
            top = len(got) if dx is not None or J.is_zero_matrix else len(got) - 1
            for k in range(top):
                err = max(err, _abs_rel(got[k], want[k]))
        return err

    ic_err = mismatch(sp.Integer(0),
                      lambda j, m: [v.subs(values) for v in problem.initial_values[j]])
    checks.append(Check("Initial conditions at 0+",
                        "Each unknown and its derivatives below its order at t = 0+, against "
                        "the 0⁻ values (an impulse J at 0 adds E⁻¹J to the highest ones).",
                        tol, ic_err, ic_err <= tol))
    if len(starts) > 1:
        jump_err = max(mismatch(c, lambda j, m: [sp.Integer(0)] * m) for c in starts[1:])
        checks.append(Check("Jump conditions at breakpoints",
                            "Below each unknown's highest state derivative, continuity at each "
                            "breakpoint; the highest ones jump by E⁻¹J for an impulse J there.",
                            tol, jump_err, jump_err <= tol))
    return tuple(checks)


def _raise():
    from ..errors import VerificationFailedError
    raise VerificationFailedError("a check's sample point fell on a switching time; please "
                                  "report this system")


def _abs_rel(got, expected) -> float:
    with mpmath.workdps(_DIGITS):
        d = abs(complex(sp.N(got - expected, _DIGITS)))
        scale = max(1.0, abs(complex(sp.N(expected, _DIGITS))))
    return d / scale


# -- independent checks -------------------------------------------------------------------
def integrate_system(numbers: SystemNumbers, times: np.ndarray, scale: float) -> dict:
    """Each unknown at ``times`` by LSODA on the first-order form, restarted at breakpoints."""
    n = len(numbers.unknowns)
    einv = np.linalg.inv(numbers.lead)
    offsets = np.cumsum([0] + list(numbers.orders))
    dim = int(offsets[-1])
    L = np.zeros((n, dim))
    for i, j, k, a in numbers.lower:
        L[i, offsets[j] + k] += a
    shift_m = np.zeros((dim, dim))
    top = np.zeros((dim, n))
    for j in range(n):
        for m in range(numbers.orders[j] - 1):
            shift_m[offsets[j] + m, offsets[j] + m + 1] = 1.0
        top[offsets[j] + numbers.orders[j] - 1, j] = 1.0
    system = shift_m - top @ einv @ L
    gain = top @ einv
    fs = numbers.forcing_at

    def rhs(z, t):
        f = np.array([float(fi(t)) for fi in fs])
        return system @ z + gain @ f

    kicks: dict = {}
    for i, c, a in numbers.impulses:
        kicks.setdefault(c, np.zeros(n))[i] += a
    z = np.concatenate([np.array(v, dtype=float) for v in numbers.initial])
    atol = 1e-14 * max(scale, float(np.max(np.abs(z))) if z.size else 0.0, 1e-300)
    out = integrate_piecewise(rhs, z, times, segment_cuts(times, numbers.breakpoints, kicks), kicks,
                              lambda at, state: state + top @ (einv @ kicks[at]), atol)
    return {u: out[:, offsets[j]] for j, u in enumerate(numbers.unknowns)}


def system_independent_checks(numbers: SystemNumbers, tolerances, t_end: float):
    """Integration of the whole system; inversion and limit theorems per unknown."""
    tol = {**NUMERIC_TOLERANCES, **(tolerances or {})}
    bps = list(numbers.breakpoints)
    times = grid(t_end, bps)
    ours = {u: numbers.models[u].closed_form(times) for u in numbers.unknowns}
    checks = []
    samples = None
    if not np.all(np.isfinite(numbers.lead)) or \
            np.linalg.matrix_rank(numbers.lead) < len(numbers.unknowns):
        checks.append(not_run("Numerical integration", "", tol["integration"],
                              "the coefficients of the highest derivatives form a singular "
                              "matrix (a differential-algebraic system); not integrated"))
    else:
        scale = max(float(np.nanmax(np.abs(v))) for v in ours.values())
        ref = integrate_system(numbers, times, scale)
        off = np.ones_like(times, dtype=bool)
        for b in bps:
            off &= times != b
        worst, detail = 0.0, []
        for u in numbers.unknowns:
            peak = max(float(np.max(np.abs(ref[u]))), float(np.max(np.abs(ours[u]))), 1e-300)
            rel = float(np.max(np.abs(ours[u][off] - ref[u][off]))) / max(peak, scale * 1e-3)
            worst = max(worst, rel)
            detail.append(f"{u} {rel:.3e}")
        checks.append(Check(
            "Numerical integration",
            f"The whole system integrated as one first-order system by SciPy odeint (LSODA, "
            f"rtol {RTOL:.0e}) between breakpoints, impulses as jumps E⁻¹J, compared on "
            f"{int(off.sum())} grid points to t = {t_end:.4g}.", tol["integration"], worst,
            worst <= tol["integration"], detail="max relative error: " + ", ".join(detail)))
        samples = SystemSamples(times, ours, ref,
                                {f"f{i + 1}": f(times) for i, f in enumerate(numbers.forcing)},
                                tuple(bps))
    for u in numbers.unknowns:
        m = numbers.models[u]
        peak = max(float(np.max(np.abs(ours[u]))), 1e-300)
        if not m.parts:
            continue
        inv = inversion_check(m.parts, m.closed_form, inversion_horizon(m.response_poles, t_end,
                                                                        bps),
                              bps, peak, tol["inversion"], m.modes)
        checks.append(_renamed(inv, f"Numerical inversion of {Ysym(u)}"))
        decays = [-z.real for z in m.response_poles if z.real < 0]
        far = max(bps, default=0.0) + (60.0 / min(decays) if decays else t_end)
        ivt, fvt = limit_checks(m, float(m.closed_form(np.array([0.0]))[0]),
                                lambda m=m, far=far: m.closed_form(np.array([far]))[0], peak,
                                tol["limits"])
        checks.append(_renamed(ivt, f"Initial-value theorem ({u})"))
        checks.append(_renamed(fvt, f"Final-value theorem ({u})"))
    return tuple(checks), samples


def _renamed(check: Check, name: str) -> Check:
    return Check(name, check.method, check.tolerance, check.error, check.passed, check.ran,
                 check.detail, check.applicable)
