"""The independent checks of a response to a load record.

- the recurrence against the generic segment's closed form: the state the march gives at the
  end of the first and last segments against the closed form of the derivation at τ = h;
- every segment of the record integrated in the time domain by SciPy ``solve_ivp`` (DOP853)
  from the state the recurrence gives at its start, all segments at once as one stacked system
  (so that no integration crosses a corner of the load), against the recurrence's next state;
- the final-value theorem on the whole transform: lim sY(s) as s → 0 of
  Y(s) = (sI − A)⁻¹ (z(0) + g F(s) + c/s) is −A⁻¹(g f(∞) + c) read out, against the limit the
  results take from the closed form after the record.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp

from ..model.checks import Check, Samples
from .history_march import record_values
from .numeric_checks import not_run
from .response import final_value

__all__ = ["EnergyBalance", "final_value_check", "integration_check", "mechanical_matrices",
           "recurrence_check", "record_samples"]

_FIRST, _LAST = 20, 5


def recurrence_check(model, rm, state, load, value_map, columns_of, tolerance=1e-9) -> Check:
    """The march's state at the end of the first and last segments against the generic
    segment's closed form at τ = h (each unknown, relative to its largest value at a knot)."""
    kt = rm.knot_times
    starts = np.nonzero(np.diff(kt) > 0)[0]
    pick = np.unique(np.concatenate([starts[:_FIRST], starts[-_LAST:]]))
    lengths = kt[pick + 1] - kt[pick]
    slopes = (rm.knot_loads[pick + 1] - rm.knot_loads[pick]) / lengths
    cols = columns_of(pick, slopes)
    tables = model.mode_tables()[0]
    worst, names = 0.0, []
    for u in model.unknowns:
        if tables.get(u) is None:
            continue
        batch = tables[u].batch(cols)
        ours = batch.at(lengths[:, None], np.zeros(len(pick)))[:, 0]
        march = rm.node_values(u)[pick + 1]
        scale = max(float(np.max(np.abs(rm.node_values(u)))), 1e-300)
        err = float(np.max(np.abs(ours - march))) / scale
        worst = max(worst, err)
        names.append(f"{u} {err:.3e}")
    method = (f"The state the recurrence gives at the end of {len(pick)} segments (the first "
              f"{min(_FIRST, len(starts))} and the last {min(_LAST, len(starts))}) against the "
              "generic segment's closed form at τ = h, relative to each unknown's largest value "
              "at a knot.")
    return Check("Recurrence against the generic closed form", method, tolerance, worst,
                 worst <= tolerance, detail="max relative error: " + ", ".join(names))


def _links(rm, times: np.ndarray):
    """For each time, the knot before it (the last one at or before it, the later of a jump's
    two) and the time since that knot; times after the record start from its last knot."""
    kt = rm.knot_times
    i = np.clip(np.searchsorted(kt, times, side="right") - 1, 0, len(kt) - 1)
    return i, times - kt[i]


def integrate_links(rm, starts: np.ndarray, spans: np.ndarray, rtol: float = 1e-12,
                    power=None, power_scale: float = 1.0):
    """The state ``spans`` after each knot in ``starts``, every one integrated by solve_ivp
    (DOP853) from the march's state at that knot under the load from there — all at once, as
    one stacked system on a common scaled time u ∈ [0, 1] (dz/du = h (A z + g f + c)). The
    load is linear on each span, so no integration crosses a corner of the record."""
    A, g, c = rm.system, rm.drive, rm.constant
    kt, kf = rm.knot_times, rm.knot_loads
    last = len(kt) - 1
    nxt = np.minimum(starts + 1, last)
    span_k = kt[nxt] - kt[starts]
    inside = (starts < last) & (span_k > 0)
    slope = np.where(inside, (kf[nxt] - kf[starts]) / np.where(span_k > 0, span_k, 1.0), 0.0)
    level = np.where(starts < last, kf[starts], rm.final_level)
    z0 = rm.states[starts]
    n, d = z0.shape
    h = spans.astype(float)
    scale = max(float(np.max(np.abs(rm.states))), 1e-300)

    extra = 0 if power is None else 2

    def rhs(u, flat):
        z = flat.reshape(n, d + extra)[:, :d]
        load = level + slope * h * u
        dz = z @ A.T + load[:, None] * g[None, :] + c[None, :]
        if extra:
            dz = np.concatenate([dz, power(z, load)], axis=1)
        return (h[:, None] * dz).ravel()
    start = np.concatenate([z0, np.zeros((n, extra))], axis=1)
    atol = np.full((n, d + extra), 1e-15 * scale)
    if extra:  # the accumulators' own scale: the largest energy the states hold or the loads do
        atol[:, d:] = 1e-15 * power_scale
    sol = solve_ivp(rhs, (0.0, 1.0), start.ravel(), method="DOP853", rtol=rtol,
                    atol=atol.ravel())
    if not sol.success:
        raise ArithmeticError(sol.message)
    end = sol.y[:, -1].reshape(n, d + extra)
    return end if extra else end[:, :d]


class EnergyBalance:
    """The energy balance of a mechanical system M x'' + C x' + K x = e f(t) + r (M and K
    symmetric): the work of the loads ∫vᵀ(e f + r) dt and the energy the damping takes
    ∫vᵀCv dt, integrated along each segment beside its state (``power``), against the change
    of the stored energy ½vᵀMv + ½xᵀKx between the recurrence's states at its ends."""

    NAME = "Energy balance on every segment"

    def __init__(self, mck, loads, offsets, rm):
        self.M, self.C, self.K = mck
        self.e, self.r = loads
        self.pos = np.asarray(offsets[:-1])
        self.vel = self.pos + 1
        work = float(np.max(np.abs(rm.knot_loads))) * max(float(np.max(np.abs(rm.states))),
                                                          1e-300)
        self.scale = max(float(np.max(self.energy(rm.states))), work, 1e-300)

    def power(self, z, load):
        v = z[:, self.vel]
        work = v @ self.e * load + v @ self.r
        loss = np.einsum("ni,ij,nj->n", v, self.C, v)
        return np.stack([work, loss], axis=1)

    def energy(self, z):
        x, v = z[:, self.pos], z[:, self.vel]
        return (0.5 * np.einsum("ni,ij,nj->n", v, self.M, v)
                + 0.5 * np.einsum("ni,ij,nj->n", x, self.K, x))

    def check(self, rm, live, ends, tolerance=1e-8) -> Check:
        d = rm.states.shape[1]
        change = self.energy(rm.states[live + 1]) - self.energy(rm.states[live])
        balance = ends[:, d] - ends[:, d + 1]
        scale = max(self.scale, float(np.max(np.abs(ends[:, d:]), initial=0.0)))
        err = float(np.max(np.abs(change - balance), initial=0.0)) / scale
        method = ("The work of the loads ∫vᵀ(e f + r) dt and the energy the damping takes "
                  "∫vᵀCv dt on each segment, integrated by SciPy solve_ivp (DOP853, rtol 1e-12) "
                  "along it with its state, against the change of the stored energy "
                  "½vᵀMv + ½xᵀKx between the recurrence's states at its ends, relative to the "
                  "largest stored energy or work.")
        return Check(self.NAME, method, tolerance, err, err <= tolerance,
                     detail=f"largest imbalance {err:.3e} of the largest energy")


def mechanical_matrices(numbers):
    """(M, C, K) where every unknown is of second order and M and K are symmetric (the
    energy balance applies); None otherwise."""
    if any(o != 2 for o in numbers.orders):
        return None
    n = len(numbers.orders)
    M, K = np.asarray(numbers.lead, float), np.asarray(numbers.static, float)
    C = np.zeros((n, n))
    for i, j, k, a in numbers.lower:
        if k == 1:
            C[i, j] += a
    if not (np.allclose(M, M.T, rtol=1e-12, atol=0) and np.allclose(K, K.T, rtol=1e-12,
                                                                       atol=0)):
        return None
    return M, C, K


def integration_check(rm, names, grid, tolerance=1e-7, balance: EnergyBalance | None = None):
    """Every segment of the record, and every time of the figure's grid, integrated by
    solve_ivp from the state at the knot before it, against the march; the figure's samples
    too (the grid after the record in stretches of at most one record length). With
    ``balance``, the energy balance is integrated in the same pass. Returns (the integration
    check, the samples' pair, the energy check or None)."""
    kt = rm.knot_times
    live = np.nonzero(np.diff(kt) > 0)[0]
    g_start, g_span = _links(rm, grid)
    method = ("Each segment of the record integrated in the time domain by SciPy solve_ivp "
              "(DOP853, rtol 1e-12, no matrix exponential, no closed form) from the state the "
              "recurrence gives at its start, under the record's load on it, to its end — all "
              f"{len(live):,} segments at once as one stacked system, so that no integration "
              "crosses a corner of the record — and compared with the recurrence's next state")
    what = "Numerical integration of every segment of the record"
    try:
        ends = integrate_links(rm, live, kt[live + 1] - kt[live],
                               power=balance.power if balance else None,
                               power_scale=balance.scale if balance else 1.0)
        at_grid = _grid_links(rm, g_start, g_span)
    except (ArithmeticError, MemoryError) as exc:
        why = f"the integrator stopped: {exc}"
        return (not_run(what, method + ".", tolerance, why), None,
                not_run(EnergyBalance.NAME, "", 1e-8, why) if balance else None)
    worst, detail, integrated = 0.0, [], {}
    loads = rm_load(rm, grid)
    for name in names:
        C, D, E = rm.outputs[name]
        mine = rm.node_values(name)
        scale = max(float(np.max(np.abs(mine))), 1e-300)
        ref = ends[:, :len(C)] @ C + D * rm.knot_loads[live + 1] + E
        err = float(np.max(np.abs(ref - mine[live + 1]), initial=0.0)) / scale
        worst = max(worst, err)
        detail.append(f"{name} {err:.3e}")
        integrated[name] = at_grid @ C + D * loads + E
    check = Check(what, f"{method}; relative to each quantity's largest value at a knot.",
                  tolerance, worst, worst <= tolerance,
                  detail="max relative error: " + ", ".join(detail))
    energy = balance.check(rm, live, ends) if balance else None
    return check, (record_values(rm, grid), integrated), energy


def _grid_links(rm, starts, spans) -> np.ndarray:
    """The state at the figure's times by integration from the knot before each: inside the
    record in one stacked pass; after it, stretches no longer than the record, chained from
    the last knot by one integration each."""
    out = np.empty((len(starts), rm.states.shape[1]))
    last = len(rm.knot_times) - 1
    within = starts < last
    if within.any():
        out[within] = integrate_links(rm, starts[within], spans[within])
    after = np.nonzero(~within)[0]
    if after.size:
        sol = solve_ivp(lambda tt, z: rm.system @ z + rm.drive * rm.final_level + rm.constant,
                        (0.0, float(spans[after].max())), rm.states[last], method="DOP853",
                        rtol=1e-12, atol=1e-15 * max(float(np.max(np.abs(rm.states))), 1e-300),
                        t_eval=np.sort(spans[after]))
        order = np.argsort(spans[after], kind="stable")
        out[after[order]] = sol.y.T
    return out


def rm_load(rm, times) -> np.ndarray:
    """The load at ``times`` (right-continuous; the level after the record after it)."""
    kt, kf = rm.knot_times, rm.knot_loads
    t = np.asarray(times, dtype=float)
    i = np.clip(np.searchsorted(kt, t, side="right") - 1, 0, len(kt) - 1)
    nxt = np.minimum(i + 1, len(kt) - 1)
    span = kt[nxt] - kt[i]
    frac = np.where(span > 0, (t - kt[i]) / np.where(span > 0, span, 1.0), 0.0)
    inside = kf[i] + (kf[nxt] - kf[i]) * frac
    return np.where(t >= kt[-1], rm.final_level, inside)


def final_value_check(rm, model, name, tail_modes, system_poles, tolerance=1e-9) -> Check:
    """lim y(t) by the final-value theorem on the whole transform against the limit of the
    closed form after the record (one quantity)."""
    what = "Final-value theorem on the whole transform"
    method = ("lim sY(s) as s → 0 with Y(s) = (sI − A)⁻¹(z(0) + g F(s) + c/s), F(s) the whole "
              "record's transform: −A⁻¹(g f(∞) + c), read out as y; against the constant modes "
              "of the closed form after the record.")
    zs = np.asarray(system_poles, dtype=complex)
    if zs.size and np.max(zs.real) >= -1e-12:
        return Check(what, method, tolerance, math.nan, True, applicable=False,
                     detail="a pole on or right of the imaginary axis: sY(s) is not analytic "
                            "there, so the theorem does not apply")
    C, D, E = rm.outputs[name]
    z_inf = -np.linalg.solve(rm.system, rm.drive * rm.final_level + rm.constant)
    theorem = float(C @ z_inf + D * rm.final_level + E)
    if tail_modes is None:
        return not_run(what, method, tolerance, "the closed form is not a sum of modes")
    limit, why = final_value(tail_modes, system_poles)
    if limit is None:
        return not_run(what, method, tolerance, why)
    scale = max(abs(theorem), float(np.max(np.abs(rm.node_values(name)))), 1e-300)
    err = abs(theorem - limit) / scale
    return Check(what, method, tolerance, err, err <= tolerance,
                 detail=f"theorem {theorem:.10g}, closed form {limit:.10g}")


def record_samples(rm, names, grid, pair, record) -> Samples:
    """The figure's arrays: the response from the march and from the integration, the load."""
    ours, integrated = pair if pair is not None else (record_values(rm, grid), None)
    if integrated is None:
        integrated = {n: np.full_like(grid, np.nan) for n in names}
    return Samples(grid, {n: ours[n] for n in names}, integrated,
                   {"f": rm_load(rm, grid)}, ())


def figure_grid(rm, system_poles, points: int = 2000) -> np.ndarray:
    """Times for the figure: the record and a stretch after it (up to three slowest time
    constants, at most as long again as the record)."""
    end = float(rm.knot_times[-1])
    decays = [-z.real for z in system_poles if z.real < 0]
    after = min(3.0 / min(decays), end) if decays else 0.1 * end
    return np.linspace(0.0, end + max(after, 0.05 * end), points)
