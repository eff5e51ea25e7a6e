"""The independent checks of a response to a load record.

- the recurrence against the generic segment's closed form: the state the march gives at the
  end of the first and last segments against the closed form of the derivation at τ = h;
- the whole record integrated in the time domain by SciPy ``solve_ivp`` (DOP853), restarted at
  every jump, the load interpolated between the record's own points, compared at every knot;
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

__all__ = ["final_value_check", "integration_check", "recurrence_check", "record_samples"]

_FIRST, _LAST = 20, 5
_WHOLE_LIMIT = 200_000
"""Live segments integrated in one pass; a longer record is integrated in windows."""


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


def _pieces(kt: np.ndarray):
    """Index ranges [a, b] of the knots between jumps (each integrated in one call)."""
    jumps = np.nonzero(np.diff(kt) == 0)[0]
    edges = [0] + [int(j) + 1 for j in jumps] + [len(kt)]
    return [(a, b - 1) for a, b in zip(edges[:-1], edges[1:]) if b - 1 > a]


def integrate_record(rm, extra_times=(), rtol=1e-10):
    """The state at every knot (and at ``extra_times``) by solve_ivp (DOP853) on
    z' = A z + g f(t) + c, the load linear between the record's points, restarted at jumps;
    after the record the load that follows (``final_level``)."""
    A, g, c = rm.system, rm.drive, rm.constant
    kt, kf = rm.knot_times, rm.knot_loads
    z = rm.states[0].copy()
    scale = max(float(np.max(np.abs(rm.states))), 1e-300)
    atol = 1e-13 * scale
    at_knots = np.empty_like(rm.states)
    at_knots[0] = z
    extra = np.sort(np.asarray(extra_times, dtype=float))
    at_extra = np.full((len(extra), len(z)), np.nan)
    for a, b in _pieces(kt):
        t, f = kt[a:b + 1], kf[a:b + 1]
        want = np.unique(np.concatenate([t, extra[(extra > t[0]) & (extra < t[-1])]]))
        sol = solve_ivp(lambda tt, zz: A @ zz + g * np.interp(tt, t, f) + c, (t[0], t[-1]), z,
                        method="DOP853", rtol=rtol, atol=atol, t_eval=want)
        if not sol.success:
            raise ArithmeticError(sol.message)
        rows = np.searchsorted(want, t)
        at_knots[a:b + 1] = sol.y[:, rows].T
        inside = np.searchsorted(extra, want)
        hit = (inside < len(extra)) & (extra[np.minimum(inside, len(extra) - 1)] == want)
        at_extra[inside[hit]] = sol.y[:, hit].T
        z = sol.y[:, -1]
        at_knots[b + 1:b + 2] = z   # the jump keeps the state
    later = extra > kt[-1]
    if later.any():
        f_end = rm.final_level
        sol = solve_ivp(lambda tt, zz: A @ zz + g * f_end + c, (kt[-1], extra[later][-1]), z,
                        method="DOP853", rtol=rtol, atol=atol, t_eval=extra[later])
        at_extra[later] = sol.y.T
    return at_knots, at_extra


def integration_check(rm, names, grid, tolerance=1e-7):
    """Every unknown at every knot, and on the figure's grid, against solve_ivp; the figure's
    samples too."""
    live = int(np.count_nonzero(np.diff(rm.knot_times) > 0))
    method = ("The equations in first-order form integrated in the time domain by SciPy "
              "solve_ivp (DOP853, rtol 1e-10), the load linear between the record's points, "
              "restarted at every jump; compared at every point of the record")
    ours = record_values(rm, grid)
    if live > _WHOLE_LIMIT:
        return not_run("Numerical integration of the whole record", method + ".", tolerance,
                       f"the record has {live:,} segments, more than {_WHOLE_LIMIT:,} integrated "
                       "in one pass; split the record to check it this way"), None
    try:
        at_knots, at_grid = integrate_record(rm, grid)
    except ArithmeticError as exc:
        return not_run("Numerical integration of the whole record", method + ".", tolerance,
                       f"the integrator stopped: {exc}"), None
    worst, detail = 0.0, []
    integrated = {}
    for name in names:
        C, D, E = rm.outputs[name]
        ref = at_knots @ C + D * rm.knot_loads + E
        mine = rm.node_values(name)
        scale = max(float(np.max(np.abs(mine))), 1e-300)
        err = float(np.max(np.abs(ref - mine))) / scale
        worst = max(worst, err)
        detail.append(f"{name} {err:.3e}")
        integrated[name] = at_grid @ C + D * rm_load(rm, grid) + E
    check = Check("Numerical integration of the whole record",
                  f"{method} ({len(rm.knot_times)} knots), relative to each quantity's largest "
                  "value.", tolerance, worst, worst <= tolerance,
                  detail="max relative error: " + ", ".join(detail))
    return check, (ours, integrated)


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
