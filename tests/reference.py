"""Independent references for the tests: SciPy integration of the ODE between breakpoints.

The ODE a_n y^(n) + ... + a_0 y = f(t) is integrated as a first-order system with
``scipy.integrate.solve_ivp`` (DOP853, rtol 1e-12), restarting at every breakpoint and
applying an impulse of area A at time c as the jump A / a_n in y^(n-1) (the 0⁻ convention).
The forcing is evaluated from the problem's own SymPy expression, not from derivpad's pieces.
"""

from __future__ import annotations

import numpy as np
import sympy as sp
from scipy.integrate import solve_ivp

from derivpad.core.reading.parse import T


def integrate(problem, times, breakpoints=(), impulses=()):
    """y at ``times`` (sorted, ≥ 0) by piecewise numerical integration."""
    a = [float(c) for c in problem.coefficients]
    n = len(a) - 1
    smooth = problem.forcing.replace(sp.DiracDelta, lambda *args: sp.Integer(0))
    f = sp.lambdify(T, smooth, modules=[{"Heaviside": lambda x, *_: np.heaviside(x, 1.0)}, "numpy"])

    def rhs(t, z):
        acc = float(f(t)) - sum(a[k] * z[k] for k in range(n))
        return np.concatenate([z[1:], [acc / a[n]]])

    z = np.array([float(v) for v in problem.initial_values[0]], dtype=float)
    kicks = {}
    for *_, c, area in impulses:  # (equation, time, area)
        kicks[float(c)] = kicks.get(float(c), 0.0) + float(area)
    cuts = sorted({0.0} | {float(b) for b in breakpoints} | set(kicks))
    times = np.asarray(times, dtype=float)
    out = np.full(times.shape, np.nan)
    end = float(times.max())
    for i, start in enumerate(cuts):
        if start > end:
            break
        if start in kicks:
            z = z.copy()
            z[n - 1] += kicks[start] / a[n]
        stop = cuts[i + 1] if i + 1 < len(cuts) else end
        stop = min(stop, end)
        mask = (times >= start) & ((times < stop) | ((i + 1 == len(cuts)) | (stop == end)))
        if stop > start:
            sol = solve_ivp(rhs, (start, stop), z, method="DOP853", rtol=1e-12, atol=1e-14,
                            dense_output=True)
            assert sol.success, sol.message
            sel = mask & (times <= stop)
            out[sel] = sol.sol(times[sel])[0]
            z = sol.y[:, -1]
        else:
            out[mask & (times == start)] = z[0]
    return out


def integrate_second_order(M, C, K, force, x0, v0, times, breakpoints=()):
    """x at ``times`` for M x'' + C x' + K x = force(t) by solve_ivp (DOP853, rtol 1e-12),
    written out directly from the matrices (not from derivpad's parsed problem), restarting
    at every breakpoint. Returns an array of shape (len(times), n)."""
    M, C, K = (np.asarray(a, dtype=float) for a in (M, C, K))
    n = M.shape[0]
    Minv = np.linalg.inv(M)

    def rhs(t, z):
        x, v = z[:n], z[n:]
        return np.concatenate([v, Minv @ (np.asarray(force(t), dtype=float) - C @ v - K @ x)])

    times = np.asarray(times, dtype=float)
    out = np.full((len(times), n), np.nan)
    z = np.concatenate([np.asarray(x0, dtype=float), np.asarray(v0, dtype=float)])
    cuts = sorted({0.0, float(times.max())} | {float(b) for b in breakpoints
                                               if 0 < b < times.max()})
    for left, right in zip(cuts, cuts[1:]):
        sol = solve_ivp(rhs, (left, right), z, method="DOP853", rtol=1e-12, atol=1e-14,
                        dense_output=True)
        assert sol.success, sol.message
        sel = (times >= left) & (times <= right)
        out[sel] = sol.sol(times[sel])[:n].T
        z = sol.y[:, -1]
    return out
