"""The exact recurrence for piecewise-linear loads, against outside references.

References: scipy.signal.lsim with interp=True (first-order hold: the same exactness for a load
linear between samples, on a uniform grid); scipy.integrate.solve_ivp (DOP853) restarted at
every point of the record, for non-uniform steps and jumps.
"""

import numpy as np
import pytest
from scipy import signal
from scipy.integrate import solve_ivp

from derivpad.core.checking.history_march import march, output_rows, transitions

# a single-degree-of-freedom oscillator m x'' + c x' + k x = f in first-order form
M, C, K = 2.0, 0.8, 200.0
A = np.array([[0.0, 1.0], [-K / M, -C / M]])
G = np.array([0.0, 1.0 / M])


def _ivp_chain(system, drive, constant, z0, t, f):
    """The state at every point by solve_ivp restarted at each point (jumps keep the state)."""
    z, out = np.asarray(z0, float), [np.asarray(z0, float)]
    for i in range(len(t) - 1):
        h = t[i + 1] - t[i]
        if h > 0:
            b = (f[i + 1] - f[i]) / h
            sol = solve_ivp(lambda s, y: system @ y + drive * (f[i] + b * (s - t[i])) + constant,
                            (t[i], t[i + 1]), z, method="DOP853", rtol=1e-12, atol=1e-15)
            z = sol.y[:, -1]
        out.append(z)
    return np.array(out)


def test_uniform_record_equals_lsim_first_order_hold():
    # scipy.signal.lsim(interp=True) is exact for a load linear between samples
    rng = np.random.default_rng(1)
    t = np.arange(20_000) * 1e-3
    f = np.cumsum(rng.normal(size=t.size))
    ours = march(A, G, np.zeros(2), [0.01, -0.2], t, f)
    system = signal.StateSpace(A, G[:, None], np.eye(2), np.zeros((2, 1)))
    _, _, ref = signal.lsim(system, f, t, X0=[0.01, -0.2], interp=True)
    assert np.max(np.abs(ours - ref)) <= 1e-11 * np.max(np.abs(ref))


def test_non_uniform_steps_and_a_jump_equal_solve_ivp():
    rng = np.random.default_rng(2)
    t = np.sort(rng.uniform(0.0, 3.0, 300))
    t = np.concatenate([t[:150], [t[149]], t[150:]])        # a jump at t[149]
    f = rng.normal(size=t.size) * 50
    ours = march(A, G, np.array([0.0, 0.3]), [0.0, 0.0], t, f)
    ref = _ivp_chain(A, G, np.array([0.0, 0.3]), [0.0, 0.0], t, f)
    assert np.max(np.abs(ours - ref)) <= 1e-9 * np.max(np.abs(ref))
    assert np.array_equal(ours[150], ours[149])              # the jump keeps the state


def test_two_degree_of_freedom_system_equals_solve_ivp():
    # m1 x1'' + (k1 + k2) x1 - k2 x2 = f, m2 x2'' + k2 (x2 - x1) = 0, light damping c on x1
    m1, m2, k1, k2, c = 10.0, 2.0, 4e5, 1e5, 30.0
    system = np.array([[0, 1, 0, 0], [-(k1 + k2) / m1, -c / m1, k2 / m1, 0],
                       [0, 0, 0, 1], [k2 / m2, 0, -k2 / m2, 0]], dtype=float)
    drive = np.array([0, 1 / m1, 0, 0])
    t = np.linspace(0.0, 0.05, 101)
    f = 1000 * np.sin(60 * t)
    ours = march(system, drive, np.zeros(4), np.zeros(4), t, f)
    ref = _ivp_chain(system, drive, np.zeros(4), np.zeros(4), t, f)
    assert np.max(np.abs(ours - ref)) <= 1e-9 * np.max(np.abs(ref))


def test_lengths_that_differ_by_rounding_share_an_exponential_exactly():
    # times read from a log carry rounding: each length is carried from its bin's exponential
    # by the Taylor series; against SciPy expm of each length itself
    from scipy.linalg import expm
    h = 1e-3 * (1 + np.array([0.0, 3e-13, -2e-12, 4e-3, 1.2e-2]))
    tr = transitions(A, G, np.zeros(2), h, np.ones(5), np.zeros(5))
    for i, hi in enumerate(h):
        assert np.max(np.abs(tr.phi[i] - expm(A * hi))) <= 1e-15


def test_output_rows_read_a_derivative_from_the_equations():
    # acceleration x'' = (f - c x' - k x)/m read as C z + D f: at z = (1, 0), f = 0 it is -k/m
    Cm, D, E = output_rows(A, G, np.zeros(2), [[(1.0, 1, True)]])
    assert Cm[0] @ np.array([1.0, 0.0]) == pytest.approx(-K / M)
    assert D[0] == pytest.approx(1 / M) and E[0] == 0.0
