"""derive() for a load that repeats for ever (``forcing.periodic``).

One period's load f₁ gives the whole load's transform by the rule for periodic functions,
F(s) = F₁(s)/(1 − e^{−sT}). The engine derives one generic period — the period's load from
the state z_k the period starts in — by the same stages as any derivation, reads from it the
map from period to period z_{k+1} = Φ_T z_k + q_T, and solves for the state the steady state
starts every period in, z_ss = (I − Φ_T)⁻¹ q_T. The response is then in closed form for all
t: y(t) = y_ss(t − kT) + y_tr(t) on kT ≤ t < (k + 1)T, the steady state's closed form per
period plus the transient, the free response from z(0) − z_ss.
"""

from __future__ import annotations

import dataclasses
import math
from types import MappingProxyType

import numpy as np
import sympy as sp
from scipy.integrate import solve_ivp

from ..errors import ParameterError
from .checking.acceptance import read_criteria
from .checking.modes import Modes
from .checking.numeric_checks import first_order_form, not_run
from .checking.own_check import self_check
from .checking.response import Extreme, SearchLimit, supremum
from .checking.results import _MODES, _REFINE, system_results, writer_for
from .engine import check_options, complete, compile_numbers, stages_for_values
from .generic_segment import assembled, generic_problems, outcome, user_values
from .model.checks import Check, Samples, Verification
from .model.history import PeriodicDerivation
from .model.steps import Line, Rule, Step
from .model.symbols import S, T, TAU
from .reading.forcing import heaviside_pieces
from .reading.periodic import PeriodicLoad
from .symbolic.transform import transform_groups

__all__ = ["PERIODIC", "derive_periodic", "periodic_in"]

PERIODIC = Rule(
    "periodic", "Transform of a periodic function",
    r"\mathcal{L}\{f\}(s) = \frac{F_1(s)}{1 - e^{-sT}}",
    "f(t + T) = f(t), T > 0; F₁(s) = ∫₀ᵀ f(t) e^{−st} dt, the transform of one period; f of "
    "exponential order, Re s > 0",
    "E. Kreyszig, Advanced Engineering Mathematics, ch. 6 (periodic functions), from memory")
_MAX_PERIODS = 5_000
"""Periods the whole response's peak search takes before it gives up (and says so)."""


def periodic_in(params):
    """The one periodic load among ``params`` ((name, load)), or None."""
    if not hasattr(params, "items"):
        return None
    found = [(str(k), v) for k, v in params.items() if isinstance(v, PeriodicLoad)]
    if len(found) > 1:
        raise ParameterError("two periodic loads; give one (add them over a common period)",
                             found[1][0])
    return found[0] if found else None


def _state_at(tables, problem, columns: tuple, at: float) -> np.ndarray:
    """The state (each unknown and its derivatives below the highest) of the generic period
    at τ = ``at`` from the left, for one set of numbers."""
    out = []
    for j, u in enumerate(problem.unknowns):
        modes = tables[u].at(columns)
        for _ in range(problem.orders[j]):
            out.append(float(modes(np.array([at]), strict=True)[0]))
            modes = modes.derivative()
    return np.array(out)


def _period_map(tables, problem, symbols, base: dict, state, period: float):
    """(Φ_T, q_T): the generic period's closed form at τ = T⁻ from each unit state and from
    rest."""
    def columns(z):
        v = {**base, **dict(zip(state, z))}
        return tuple(float(v[s]) for s in symbols)
    d = len(state)
    q = _state_at(tables, problem, columns(np.zeros(d)), period)
    phi = np.empty((d, d))
    for j in range(d):
        phi[:, j] = _state_at(tables, problem, columns(np.eye(d)[j]), period) - q
    return phi, q


def _steady_state(phi, q, period) -> np.ndarray:
    mu = np.linalg.eigvals(phi)
    if np.any(np.abs(mu - 1.0) < 1e-9):
        raise ParameterError(f"the load's period T = {period:g} s is a natural period of the "
                             "system (resonance): there is no periodic steady state; change the "
                             "period or add damping", "period")
    return np.linalg.solve(np.eye(len(q)) - phi, q)


def _closed_forms(stages, names, state, z_ss, z0):
    """Per quantity: the steady state's closed form over one period (τ), and the transient's
    closed form for all t (the free response from z(0) − z_ss)."""
    syms = [sp.Symbol(s, positive=True) for s in state]
    ss_subs = {x: sp.Float(float(v), 17) for x, v in zip(syms, z_ss)}
    delta = np.asarray(z0) - z_ss
    out = {}
    for name in names:
        expr = {**stages.solution, **stages.derived}[name]
        steady = sp.expand(expr.xreplace(ss_subs))
        free = sum((sp.diff(expr, x) * sp.Float(float(dv), 17) for x, dv in zip(syms, delta)),
                   sp.Integer(0))
        out[name] = (steady, sp.expand(free))
    return out


def derive_periodic(equation, ics, params, name: str, load: PeriodicLoad, *, unknown=None,
                    units=None, values=None, regime="underdamped", tolerances=None,
                    window=None, checks="all", derived=None, on_failure="raise",
                    definitions=None, criteria=None) -> PeriodicDerivation:
    """derive() when ``params[name]`` is a periodic load: see the module docstring."""
    tolerances = check_options(checks, tolerances, on_failure, window, definitions)
    criteria = read_criteria(criteria)
    given, problem, rows = generic_problems(equation, ics, params, name, load.one_period, "k",
                                            unknown, units, derived)
    state = [x for row in rows for x in row]
    user = user_values(problem, values, state, "a periodic load")
    base = {**user, **{s: sp.Integer(0) for s in state}}
    stages = stages_for_values(problem, regime, base)
    model = compile_numbers(problem, stages, problem.symbols)
    tables = model.mode_tables()[0]
    period = float(load.period)
    phi, q = _period_map(tables, problem, model.symbols, base, state, period)
    z_ss = _steady_state(phi, q, period)
    z0 = np.array([float(v) for vals in given.initial_values for v in vals])
    value_map = {**user, **{s: sp.Rational(float(v)) for s, v in zip(state, z_ss)}}
    own = self_check(problem, stages, tolerances.get("back_substitution"), value_map)
    period_d = complete(problem, stages, own, value_map, tolerances=tolerances, window=window,
                        checks=checks, model=model, on_failure="return",
                        definitions=definitions)
    forms = _closed_forms(stages, problem.names, state, z_ss, z0)
    response = _Response(forms, period)
    numbers = model.at(value_map)
    extra = _periodic_checks(problem, numbers, response, tables, model.symbols, value_map,
                             state, z_ss, z0, period, checks, tolerances)
    verification = Verification(tuple(dataclasses.replace(c, name=f"One period: {c.name}")
                                      for c in period_d.verification.checks) + extra[0],
                                extra[1])
    results, acceptance = outcome(
        verification, checks, on_failure, problem.text,
        lambda: _periodic_results(problem, numbers, response, phi, z_ss, z0, period), criteria)
    steps = _steps(problem, stages, period_d, load, name, state, phi, q, z_ss, forms)
    out = assembled(PeriodicDerivation, period_d, state, steps, verification, results,
                    acceptance, periodic_load=load, load_name=name, period_map=(phi, q),
                    steady_state=tuple(z_ss))
    out._cache["numpy"] = {n: (lambda t, n=n: response.values(n, t)) for n in problem.names}
    return out


class _Response:
    """y(t) = y_ss(t − kT) + y_tr(t) per quantity, from the two closed forms as modes."""

    def __init__(self, forms: dict, period: float):
        self.period = period
        self.steady = {n: Modes.of(s) for n, (s, _) in forms.items()}
        self.transient = {n: Modes.of(f) for n, (_, f) in forms.items()}

    def values(self, name: str, times) -> np.ndarray:
        t = np.atleast_1d(np.asarray(times, dtype=float))
        tau = np.mod(t, self.period)
        out = self.steady[name](tau) + self.transient[name](t)
        return np.where(t < 0, np.nan, out)


def _transient_bound(modes: Modes, t0: float) -> float:
    _, steady, decaying = modes.classify()
    return modes.tail_bound(t0, decaying) if decaying.any() else 0.0


def whole_peak(response: _Response, name: str, steady_peak: Extreme):
    """sup |y| over all t ≥ 0: period by period until the transient's bound proves no later
    period can pass the best found; the steady peak approached as t → ∞ where it is never
    passed. None with the reason where the transient does not die out."""
    tr = response.transient[name]
    growing, steady, _ = tr.classify()
    if growing.any() or steady.any():
        return None, "the transient does not die out (no damping), so the whole response's " \
                     "peak is not set by the steady state"
    T = response.period
    best = Extreme(0.0, 0.0)
    for k in range(_MAX_PERIODS):
        bound = _transient_bound(tr, k * T)
        if best.size >= steady_peak.size + bound and best.size > 0:
            return best, ""
        if bound <= 1e-12 * max(steady_peak.size, 1e-300):
            if best.size >= steady_peak.size:
                return best, ""
            return Extreme(steady_peak.value, math.inf, False,
                           "the steady-state peak, approached as t → ∞"), ""
        modes = _joined(response.steady[name], _shifted(tr, k * T))
        ext = supremum(modes, 0.0, T)
        if ext.size > best.size:
            best = Extreme(ext.value, k * T + ext.time)
    return None, f"the transient lasts more than {_MAX_PERIODS:,} periods"


def _periodic_results(problem, numbers, response, phi, z_ss, z0, period):
    out = system_results(problem, numbers)
    for name in problem.names:
        w = writer_for(problem, name)
        try:
            ss = supremum(response.steady[name], 0.0, period)
        except SearchLimit as exc:
            w.absent("steady_peak", "steady-state peak", w.y_unit, f"not found: {exc}")
            out.update(w.out)
            continue
        w.add("steady_peak", "steady-state peak", w.to_y(ss.value), w.y_unit,
              "sup |y_ss(τ)| over one period 0 ≤ τ < T; " + _REFINE, _MODES)
        w.add("time_of_steady_peak", "time of the steady-state peak within the period",
              w.to_t(ss.time), w.t_unit, _REFINE, _MODES)
        whole, why = whole_peak(response, name, ss)
        if whole is None:
            w.absent("peak", "peak response", w.y_unit, why)
        else:
            w.add("peak", "peak response", w.to_y(whole.value), w.y_unit,
                  "sup |y(t)| over t ≥ 0: period by period, until the transient's bound proves "
                  "no later period passes it", _MODES, note=whole.note)
            w.add("time_of_peak", "time of peak",
                  w.to_t(whole.time) if whole.attained else math.inf, w.t_unit, _REFINE,
                  _MODES, note=whole.note)
        out.update(w.out)
    return MappingProxyType(out)


def _shifted(modes: Modes, shift: float) -> Modes:
    """The modes of t ↦ y(t + shift) (every mode on from t = 0): each τ^k e^{aτ}(A cos bτ +
    B sin bτ) re-expanded about ``shift`` by the binomial and angle-sum rules."""
    rows = []
    for m in range(len(modes)):
        k, a, b = int(modes.power[m]), float(modes.rate[m]), float(modes.freq[m])
        A, B = float(modes.cos[m]), float(modes.sin[m])
        e, c, s_ = math.exp(a * shift), math.cos(b * shift), math.sin(b * shift)
        A1, B1 = A * c + B * s_, B * c - A * s_
        for p in range(k + 1):
            w = math.comb(k, p) * shift ** (k - p) * e
            rows.append((0.0, p, a, b, w * A1, w * B1))
    if not rows:
        return Modes.empty()
    d, k, a, b, A, B = (np.array(col) for col in zip(*rows))
    return Modes(d, k.astype(int), a, b, A, B)


def _joined(first: Modes, second: Modes) -> Modes:
    """The sum of two mode sums (floats only)."""
    return Modes(*(np.concatenate([getattr(first, f), getattr(second, f)])
                   for f in ("delay", "power", "rate", "freq", "cos", "sin")))


def _pulse_train(problem, numbers, z0, period, periods: int, samples: np.ndarray, scale):
    """The state by solve_ivp (DOP853) through ``periods`` repetitions of the load, each
    period restarted at its own switching times; the unknowns at ``samples``."""
    A, G, _, _, offsets = first_order_form(numbers.lead, numbers.lower, numbers.orders)
    cuts = sorted({0.0, period} | {b for b in numbers.breakpoints if 0 < b < period})
    z = z0.copy()
    out = np.full((len(samples), len(z0)), np.nan)
    for k in range(periods):
        for a, b in zip(cuts[:-1], cuts[1:]):
            lo, hi = k * period + a, k * period + b
            want = samples[(samples >= lo) & (samples < hi)]
            f = lambda tt, zz, k=k: A @ zz + G @ np.array([fn(tt - k * period)  # noqa: E731
                                                           for fn in numbers.forcing_at])
            sol = solve_ivp(f, (lo, hi), z, method="DOP853", rtol=1e-11, atol=1e-14 * scale,
                            t_eval=np.r_[want, hi])
            if not sol.success:
                raise ArithmeticError(sol.message)
            if want.size:
                out[np.searchsorted(samples, want)] = sol.y[:, :-1].T
            z = sol.y[:, -1]
    return {u: out[:, offsets[j]] for j, u in enumerate(problem.unknowns)}


def _periodic_checks(problem, numbers, response, tables, symbols, value_map, state, z_ss, z0,
                     period, checks, tolerances):
    """The steady state's periodicity, and a long pulse train integrated in the time
    domain against y_ss + y_tr; the figure's samples."""
    cols = tuple(float(value_map[s]) for s in symbols)
    end = _state_at(tables, problem, cols, period)
    scale = max(float(np.max(np.abs(z_ss))), 1e-300)
    err = float(np.max(np.abs(end - z_ss))) / scale
    periodic = Check("Steady state repeats", "The steady state's closed form at τ = T⁻ "
                     "against its state at τ = 0 (z_ss from (I − Φ_T) z_ss = q_T), relative to "
                     "the largest state component.", 1e-9, err, err <= 1e-9)
    tr = response.transient[problem.unknowns[0]]
    rates = [-a for a in tr.rate if a < 0]
    periods = int(min(400, max(20, math.ceil(14.0 / min(rates) / period) if rates else 20)))
    samples = np.linspace(0.0, periods * period, 40 * periods + 1)[:-1]
    what = "Numerical integration of a long pulse train"
    method = (f"The equations in first-order form integrated in the time domain by SciPy "
              f"solve_ivp (DOP853, rtol 1e-11) through {periods} repetitions of the load, "
              "restarted at every switch, against y_ss(t − kT) + y_tr(t) at "
              f"{samples.size} times, relative to each unknown's largest value")
    ours = {u: response.values(u, samples) for u in problem.unknowns}
    if checks == "engine":
        return (periodic, not_run(what, method, 1e-7, "skipped: checks='engine'")), \
            Samples(samples, ours, {u: np.full_like(samples, np.nan) for u in ours},
                    {"f": _load_samples(numbers, samples, period)}, ())
    try:
        ref = _pulse_train(problem, numbers, z0, period, periods, samples,
                           max(scale, float(np.max(np.abs(z0)))))
    except ArithmeticError as exc:
        return (periodic, not_run(what, method, 1e-7, f"the integrator stopped: {exc}")), \
            Samples(samples, ours, {u: np.full_like(samples, np.nan) for u in ours},
                    {"f": _load_samples(numbers, samples, period)}, ())
    worst, detail = 0.0, []
    for u in problem.unknowns:
        s = max(float(np.max(np.abs(ours[u]))), 1e-300)
        e = float(np.nanmax(np.abs(ours[u] - ref[u]))) / s
        worst = max(worst, e)
        detail.append(f"{u} {e:.3e}")
    tol = tolerances.get("integration", 1e-7)
    integration = Check(what, method + ".", tol, worst, worst <= tol,
                        detail="max relative error: " + ", ".join(detail))
    return (periodic, integration), Samples(samples, ours, ref,
                                            {"f": _load_samples(numbers, samples, period)}, ())


def _load_samples(numbers, samples, period):
    tau = np.mod(samples, period)
    return sum(np.array([fn(x) for x in tau]) for fn in numbers.forcing_at)


def _period_transform(load: PeriodicLoad):
    """F₁(s) of one period by the rule table (the second shifting theorem per switch)."""
    pieces, _ = heaviside_pieces(load.one_period.expr)
    groups, _ = transform_groups(pieces)
    return sp.Add(*[sp.exp(-g.delay * S) * (sp.Add(*[t.expr for t in g.terms]) + g.impulse_area)
                    for g in groups])


def _f(x) -> sp.Expr:
    x = float(x)
    return sp.Integer(0) if x == 0.0 else sp.Float(x, 6)


def _steps(problem, stages, period_d, load, name, state, phi, q, z_ss, forms):
    F1 = _period_transform(load)
    Fs = sp.Function(name.upper() if name.islower() else name + "_L")
    first = Step("The periodic load", PERIODIC,
                 (Line(sp.Function(f"{name}_1")(S), F1),
                  Line(Fs(S), F1 / (1 - sp.exp(-load.period * S)))),
                 note=f"{name}(t) repeats {load.one_period.description} every T = "
                      f"{load.period} s; {name}_1 is one period's load, and the whole load's "
                      "transform is the rule for periodic functions.")
    one = Step("One generic period", None, (), note="The load of one period from the state "
               f"({', '.join(state)}) the period starts in; below, t stands for τ = t − kT, the "
               "time since the period's start.", substeps=period_d.steps)
    zk = sp.Matrix([sp.Symbol(s, positive=True) for s in state])
    nxt = sp.Matrix([sp.Function(s[:-2])(sp.Symbol("T") + sp.Symbol("kT")) for s in state])
    Phi = sp.Matrix(phi.shape[0], phi.shape[1], lambda i, j: _f(phi[i, j]))
    Q = sp.Matrix([_f(x) for x in q])
    mapping = Step("From period to period", None,
                   (Line(nxt, sp.MatAdd(sp.MatMul(Phi, zk), Q, evaluate=False)),),
                   note="The generic period's closed form at τ = T: the state each period ends "
                        "in, from the state it starts in (Φ_T = e^{AT}; q_T, the response to one "
                        "period's load from rest).")
    lines = [Line(zk, sp.Matrix([_f(x) for x in z_ss]), label="z_ss = (I − Φ_T)⁻¹ q_T")]
    for u, (steady, _) in forms.items():
        lines.append(Line(sp.Function(f"{u}_ss")(TAU),
                          _readable_float(steady).xreplace({T: TAU}), label="0 ≤ τ < T"))
    steady_step = Step("The periodic steady state", None, tuple(lines),
                       note="The state every period of the steady state starts in repeats "
                            "itself: (I − Φ_T) z_ss = q_T; with it, the generic period's closed "
                            "form is the steady state over each period.")
    tr_lines = tuple(Line(sp.Function(f"{u}_tr")(T), _readable_float(free), label="t ≥ 0")
                     for u, (_, free) in forms.items())
    transient = Step("The transient, and the whole response", None, tr_lines,
                     note="The free response from z(0⁻) − z_ss: y(t) = y_ss(t − kT) + y_tr(t) "
                          "on kT ≤ t < (k + 1)T.")
    return (first, one, mapping, steady_step, transient)


def _readable_float(expr):
    return expr.xreplace({a: a.evalf(6) for a in expr.atoms(sp.Float)})
