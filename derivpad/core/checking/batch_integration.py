"""An independent numerical integration of many cases of one form at once (load cases).

The equations of every case are put in first-order form, z' = A z + G f(t) (the same form as
the one-case integration, :func:`~derivpad.core.checking.numeric_checks.first_order_form`),
stacked into one system and integrated by SciPy's ``solve_ivp`` (DOP853, relative tolerance
1e-12) between the load's switching times, each case on its own time scale: on each interval
a case's time is t = t_j + τ (t_{j+1} - t_j), τ ∈ [0, 1], so that every case restarts at its own
switches. The load comes from the problem's forcing, never from the derivation; the closed form
is then compared with the integrated state on each interval, relative to each unknown's peak,
as the one-case check does. Nothing of the transform, its poles or its partial fractions is
used.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp

from .numeric_checks import first_order_form

__all__ = ["integrate_cases"]

_POINTS = 41         # compared samples per interval between switches
_LAST_POINTS = 401   # and after the last switch


def integrate_cases(problem, model, columns):
    """(relative error per case, integrated per case) of the closed forms of the unknowns
    against the stacked integration, or None where this route does not apply (impulses, a
    load or a response that is not a sum of modes); a case not integrated (a singular matrix
    of highest-derivative coefficients, an integration that fails) is left to the one-case
    check. The cases are stacked _STACK at a time: the integrator's error test is a root mean
    square over the stack, which would let one case's error hide among many."""
    n = len(columns[0])
    order = _by_work(model, problem, columns)
    rel, ran = np.full(n, math.nan), np.zeros(n, dtype=bool)
    for i in range(0, n, _STACK):
        rows = order[i:i + _STACK]
        got = _stack(problem, model, [c[rows] for c in columns])
        if got is None:
            return None
        rel[rows], ran[rows] = got
    return rel, ran


def _by_work(model, problem, columns) -> np.ndarray:
    """The cases in order of the oscillations their window holds, so that a stack holds cases
    of like step sizes (the stack steps at the pace of its fastest case)."""
    tables, _ = model.mode_tables()
    table = tables.get(problem.unknowns[0])
    if table is None:
        return np.arange(len(columns[0]))
    r = table.batch(columns)
    seg = r.segment(r.segments - 1)
    with np.errstate(all="ignore"):
        decay = np.min(np.where(seg.rate < 0, -seg.rate, np.inf), axis=1, initial=np.inf)
        fast = np.max(np.maximum(seg.freq, np.abs(seg.rate)), axis=1, initial=0.0)
        work = np.nan_to_num(fast / decay, nan=0.0, posinf=0.0)
    return np.argsort(work, kind="stable")


_STACK = 64


def _stack(problem, model, columns):
    """:func:`integrate_cases` for one stack of cases."""
    tables, loads = model.mode_tables()
    if model._impulses or any(t is None for t in loads) or any(
            tables.get(u) is None for u in problem.unknowns):
        return None
    n = len(columns[0])
    responses = [tables[u].batch(columns) for u in problem.unknowns]
    loaded = [(i, t.batch(columns)) for i, t in enumerate(loads) if len(t)]
    system, gain, z, ok = _system(problem, model, columns)
    cuts = _cuts(responses, loaded, n)
    for r in responses:
        ok &= ~r.bad & _switches_among(r.switches, cuts)
    errors = np.zeros((len(responses), n))
    peaks = np.zeros((len(responses), n))
    offsets = np.cumsum([0] + list(problem.orders))
    scale = _state_scale(responses, problem.orders)
    for j in range(cuts.shape[1] - 1):
        lo, hi = cuts[:, j], cuts[:, j + 1]
        u = np.linspace(0.0, 1.0, _LAST_POINTS if j == cuts.shape[1] - 2 else _POINTS)
        states, good = _interval(system, gain, loaded, z, lo, hi, u, scale)
        ok &= good
        t = lo[:, None] + (hi - lo)[:, None] * u[None, :]
        for q, r in enumerate(responses):
            ours = r.at(t, lo)
            ref = states[:, offsets[q], :]
            errors[q] = np.maximum(errors[q], np.max(np.abs(ours - ref), axis=1))
            peaks[q] = np.maximum(peaks[q], np.max(np.maximum(np.abs(ours), np.abs(ref)), axis=1))
        z = states[:, :, -1]
    size = np.max(peaks, axis=0)
    rel = np.max(errors / np.maximum(np.maximum(peaks, 1e-3 * size), 1e-300), axis=0)
    return np.where(ok, rel, math.nan), ok & np.isfinite(rel)


def _system(problem, model, columns):
    """(A, G, z(0)) stacked over the cases, and the cases whose E is invertible."""
    n = len(columns[0])
    orders = problem.orders
    entries = [(i, j, k, a) for i, row in enumerate(problem.operators)
               for j, coeffs in enumerate(row) for k, a in enumerate(coeffs) if a != 0]
    values = model.evaluate_many("operators", [a for *_, a in entries], columns)
    size = len(orders)
    lead = np.zeros((n, size, size))
    lower = []
    for (i, j, k, _), v in zip(entries, values):
        if k == orders[j]:
            lead[:, i, j] = v
        else:
            lower.append((i, j, k, v))
    with np.errstate(all="ignore"):
        ok = np.abs(np.linalg.det(lead)) > 0
    lead = np.where(ok[:, None, None], lead, np.eye(size))
    system, gain, *_ = first_order_form(lead, lower, orders)
    initial = [v for vals in problem.initial_values for v in vals]
    z = np.stack(model.evaluate_many("initial", initial, columns), axis=1) if initial else \
        np.zeros((n, 0))
    return system, gain, z, ok & np.all(np.isfinite(system), axis=(1, 2))


def _cuts(responses, loaded, n: int) -> np.ndarray:
    """Per case: 0, the loads' switching times after 0, and the end of the window (as the
    one-case window: five time constants of the slowest decaying mode after the last switch,
    at least two periods of the slowest oscillation, at most 200 of the fastest)."""
    times = [np.zeros((n, 1))] + [np.where(b.switches > 0, b.switches, 0.0) for _, b in loaded]
    cuts = np.sort(np.concatenate(times, axis=1), axis=1)
    last = cuts[:, -1]
    slow, osc, fast = np.full(n, np.inf), np.full(n, np.inf), np.zeros(n)
    for r in responses:
        seg = r.segment(r.segments - 1)
        _, _, decaying = seg.classify()
        slow = np.minimum(slow, np.min(np.where(decaying, -seg.rate, np.inf), axis=1,
                                       initial=np.inf))
        on = seg.amplitude > 0
        osc = np.minimum(osc, np.min(np.where(on & (seg.freq > 0), seg.freq, np.inf), axis=1,
                                     initial=np.inf))
        fast = np.maximum(fast, np.max(np.where(on, seg.freq, 0.0), axis=1, initial=0.0))
    span = np.where(np.isfinite(slow), 5.0 / slow, 1.0)
    span = np.maximum(span, np.where(np.isfinite(osc), 4 * math.pi / osc, 0.0))
    span = np.minimum(span, np.where(fast > 0, 400 * math.pi / np.maximum(fast, 1e-300), np.inf))
    return np.concatenate([cuts, (last + span)[:, None]], axis=1)


def _switches_among(switches, cuts) -> np.ndarray:
    """Cases whose response switches only at the cuts (no switch inside an interval)."""
    near = np.abs(switches[:, :, None] - cuts[:, None, :]) <= 1e-12 * np.maximum(
        np.abs(cuts[:, None, :]), 1e-300)
    return np.all(near.any(axis=2) | (switches == 0)[:, :], axis=1)


def _state_scale(responses, orders) -> np.ndarray:
    """A size for each state component of each case (absolute tolerances): the modes'
    amplitudes, times the fastest rate once per derivative."""
    parts = []
    for r, order in zip(responses, orders):
        amp = np.sum(np.hypot(r.cos, r.sin), axis=1)
        rate = np.maximum(np.max(np.maximum(np.abs(r.rate), r.freq), axis=1, initial=0.0), 1e-300)
        parts += [amp * rate ** k for k in range(order)]
    return np.maximum(np.stack(parts, axis=1), 1e-300)


def _interval(system, gain, loaded, z, lo, hi, u, scale):
    """The stacked state at τ = ``u`` on [lo, hi] from z at lo: (cases × state × samples,
    the cases integrated)."""
    n, d = z.shape
    length = hi - lo
    loads = [(i, _acting(b, lo)) for i, b in loaded]

    def rhs(tau, flat):
        state = flat.reshape(n, d)
        t = (lo + tau * length)[:, None]
        push = np.einsum("nij,nj->ni", system, state)
        for i, load in loads:
            push += gain[:, :, i] * load(t)
        return (length[:, None] * push).ravel()

    sol = solve_ivp(rhs, (0.0, 1.0), z.ravel(), method="DOP853", t_eval=u, rtol=1e-12,
                    atol=(1e-20 * scale).ravel())
    if sol.status != 0 or sol.y.shape[1] != len(u):
        return np.full((n, d, len(u)), np.nan), np.zeros(n, dtype=bool)
    return sol.y.reshape(n, d, len(u)), np.ones(n, dtype=bool)


def _acting(load, lo):
    """The load on the interval starting at ``lo`` as a function of t (cases × 1): the terms of
    the load's own interval there, added once (what the integrator calls thousands of times),
    where every case is in the same one; else every mode with its switch."""
    k = np.sum(load.switches <= lo[:, None], axis=1) - 1
    if np.all(k == k[0]):
        if k[0] < 0:
            return lambda t: np.zeros_like(t)
        seg = load.segment(int(k[0]))
        return lambda t: seg.values(t, 0)[0]
    return lambda t: load.at(t, lo)
