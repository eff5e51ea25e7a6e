"""Suprema and final values over arrays of cases (core/checking/batch_response.py).

References: the step response of an underdamped second-order system, peak
1 + exp(-ζπ/√(1-ζ²)) at t_p = π/ω_d (second-order time-response definitions, e.g. Ogata,
Modern Control Engineering, §5-3; from memory); a first-order lag under a rectangular pulse
of duration d, largest at the pulse's end with 1 - e^{-d/τ} and back to 0 after it (common
practice, no source); and mpmath ``findroot`` on the derivative of the closed form for an
overdamped pulse response (bisection at 30 digits).
"""

import math

import mpmath
import numpy as np
import pytest
import sympy as sp

from derivpad.core.checking.batch_response import batch_final_value, batch_supremum
from derivpad.core.checking.modes import ModeTable
from derivpad.core.reading.parse import T

Z, W, D, TAU = sp.symbols("zeta wn d tau", positive=True)
U = sp.Heaviside


def _table(expr, symbols):
    return ModeTable(expr, [s.name for s in symbols])


def test_underdamped_step_peak_and_time_against_the_textbook_formula():
    wd = W * sp.sqrt(1 - Z ** 2)
    y = (1 - sp.exp(-Z * W * T) * (sp.cos(wd * T) + Z / sp.sqrt(1 - Z ** 2) * sp.sin(wd * T))) * U(T)
    zeta, wn = np.meshgrid(np.linspace(0.05, 0.9, 18), np.array([2.0, 7.0, 30.0]))
    zeta, wn = zeta.ravel(), wn.ravel()
    batch = _table(y, (Z, W)).batch([zeta, wn])
    peak = batch_supremum(batch)
    assert not peak.redo.any()
    want = 1 + np.exp(-zeta * np.pi / np.sqrt(1 - zeta ** 2))
    assert peak.value == pytest.approx(want, rel=1e-12)
    assert peak.time == pytest.approx(np.pi / (wn * np.sqrt(1 - zeta ** 2)), rel=1e-10)
    final, redo = batch_final_value(batch)
    assert not redo.any() and final == pytest.approx(np.ones_like(final), abs=1e-14)


def test_first_order_lag_under_a_pulse_primary_and_residual():
    y = (1 - sp.exp(-T / TAU)) * U(T) - (1 - sp.exp(-(T - D) / TAU)) * U(T - D)
    tau = np.array([0.01, 0.05, 0.2, 1.0, 3.0])
    d = np.array([0.02, 0.5, 0.1, 0.3, 4.0])
    batch = _table(y, (D, TAU)).batch([d, tau])
    want = 1 - np.exp(-d / tau)
    for ext in (batch_supremum(batch), batch_supremum(batch, 0, 0.0, d),
                batch_supremum(batch, 0, d, math.inf)):
        assert not ext.redo.any()
        assert ext.value == pytest.approx(want, rel=1e-13)
        assert ext.time == pytest.approx(d, rel=1e-13)
    final, redo = batch_final_value(batch)
    assert not redo.any() and np.all(final == 0.0)


def test_overdamped_pulse_response_against_mpmath_findroot():
    # m x'' + c x' + k x = u(t) - u(t - d), m = 1, k = 100, ζ > 1: two real exponentials
    r1, r2 = sp.symbols("r1 r2", positive=True)
    def step(t):
        return (1 + (r2 * sp.exp(-r1 * t) - r1 * sp.exp(-r2 * t)) / (r1 - r2)) / (r1 * r2)
    y = step(T) * U(T) - step(T - D) * U(T - D)
    cases = [(3.0, 40.0, 0.05), (5.0, 20.0, 0.5), (2.0, 90.0, 0.01), (8.0, 12.0, 0.2)]
    a, b, dd = (np.array(c) for c in zip(*cases))
    peak = batch_supremum(_table(y, (D, r1, r2)).batch([dd, a, b]))
    assert not peak.redo.any()
    for k, (x1, x2, xd) in enumerate(cases):
        after = (step(T) - step(T - xd)).subs({r1: x1, r2: x2})
        f = sp.lambdify(T, sp.diff(after, T), "mpmath")
        g = sp.lambdify(T, after, "mpmath")
        # before d the response rises monotonically; after it, it rises to the one zero of
        # y' (where y' > 0 just after d) and decays
        with mpmath.workdps(30):
            lo, hi = mpmath.mpf(xd), mpmath.mpf(xd) + 10 / min(x1, x2)
            t_star = xd
            if f(lo * (1 + mpmath.mpf(10) ** -20)) > 0:
                t_star = mpmath.findroot(f, (lo, hi), solver="bisect", tol=1e-40, verify=False)
            want = float(g(t_star))
        assert peak.value[k] == pytest.approx(want, rel=1e-11)


def test_an_undamped_or_growing_response_is_left_to_the_one_case_route():
    y = (1 - sp.exp(-Z * W * T) * sp.cos(W * T)) * U(T)
    batch = _table(y, (Z, W)).batch([np.array([0.1, 0.0, 0.2]), np.array([3.0, 3.0, 3.0])])
    peak = batch_supremum(batch)
    assert peak.redo.tolist() == [False, True, False]
    _, redo = batch_final_value(batch)
    assert redo.tolist() == [False, True, False]


def test_a_case_whose_numbers_the_form_cannot_take_is_marked_bad():
    y = (1 - sp.exp(-sp.sqrt(Z - 1) * T)) * U(T)  # real only for ζ > 1
    batch = _table(y, (Z,)).batch([np.array([2.0, 0.5])])
    assert batch.bad.tolist() == [False, True]
    assert batch_supremum(batch).redo.tolist() == [False, True]
