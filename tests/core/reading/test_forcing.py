"""Forcing builders: each Heaviside form against the load it describes, evaluated directly."""

import numpy as np
import pytest
import sympy as sp

from derivpad import forcing
from derivpad.core.reading.forcing import heaviside_pieces
from derivpad.core.reading.parse import T
from derivpad.errors import ForcingError


def _eval(f, times):
    fn = sp.lambdify(T, f.expr, modules=[{"Heaviside": lambda x, *_: np.heaviside(x, 1.0),
                                          "DiracDelta": lambda *_: 0.0}, "numpy"])
    return np.asarray(fn(np.asarray(times, dtype=float)), dtype=float) * np.ones(len(times))


TIMES = np.array([0.05, 0.3, 0.7, 1.1, 1.6, 2.2, 2.9, 3.5, 5.0])


def test_step_and_ramp():
    assert np.allclose(_eval(forcing.step(3, 1), TIMES), np.where(TIMES > 1, 3, 0))
    assert np.allclose(_eval(forcing.ramp(2, 1), TIMES), np.where(TIMES > 1, 2 * (TIMES - 1), 0))


def test_rectangular_pulse():
    assert np.allclose(_eval(forcing.pulse(5, 0.5, 1), TIMES),
                       np.where((TIMES > 0.5) & (TIMES < 1.5), 5, 0))


def test_triangular_pulse_peaks_at_mid_duration():
    tri = forcing.triangle(4, 1, 2)
    ref = np.interp(TIMES, [0, 1, 2, 3, 10], [0, 0, 4, 0, 0])  # NumPy interpolation as reference
    assert np.allclose(_eval(tri, TIMES), ref)


def test_load_table_is_exact_linear_interpolation():
    pts = [(0, 0), (0.5, 2), (1.5, 2), (2.0, -1), (3.0, 0.5)]
    ref = np.interp(TIMES, [p[0] for p in pts], [p[1] for p in pts], right=0)
    assert np.allclose(_eval(forcing.table(pts), TIMES), ref)


def test_load_table_with_a_jump_and_held_last_value():
    pts = [(0, 0), (1, 0), (1, 3), (2, 3), (3, 1)]
    f = forcing.table(pts, hold_last=True)
    ref = np.interp(TIMES, [0, 1, 1, 2, 3], [0, 0, 3, 3, 1])
    assert np.allclose(_eval(f, TIMES), ref)


def test_switched_waves_and_window():
    s = forcing.switched_sine(2, 3, start=1)
    assert np.allclose(_eval(s, TIMES), np.where(TIMES > 1, 2 * np.sin(3 * (TIMES - 1)), 0))
    e = forcing.switched_exp(1, -2, start=0.5)
    assert np.allclose(_eval(e, TIMES), np.where(TIMES > 0.5, np.exp(-2 * (TIMES - 0.5)), 0))
    w = forcing.window([1, 0, 2], 1, 3)
    assert np.allclose(_eval(w, TIMES), np.where((TIMES > 1) & (TIMES < 3),
                                                 1 + 2 * (TIMES - 1) ** 2, 0))


def test_impulse_is_a_delta():
    f = forcing.impulse(2.5, 1)
    pieces, _ = heaviside_pieces(f.expr)
    assert [(p.delay, p.shape, p.impulse) for p in pieces] == [(1, sp.Rational(5, 2), True)]


def test_forcings_add_and_describe_themselves():
    f = forcing.step(1, 0) + forcing.pulse(2, 1, 1)
    assert "step" in f.description and "pulse" in f.description
    assert np.allclose(_eval(f, [0.5, 1.5, 2.5]), [1, 3, 1])


@pytest.mark.parametrize("build", [
    lambda: forcing.step(1, -1),
    lambda: forcing.pulse(1, 0, -2),
    lambda: forcing.table([(0, 0)]),
    lambda: forcing.table([(1, 0), (0, 1)]),
    lambda: forcing.table([(0, 1, 2)]),
    lambda: forcing.step("abc(", 0),
])
def test_bad_forcing_input_is_refused(build):
    with pytest.raises(ForcingError):
        build()


def test_reflected_steps_and_impulses_before_zero():
    pieces, notes = heaviside_pieces(sp.Heaviside(2 - T) + sp.DiracDelta(T + 1))
    assert [(p.delay, p.shape) for p in pieces] == [(0, 1), (2, -1)]
    assert notes and "before t = 0" in notes[0]
