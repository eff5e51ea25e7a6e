"""Response spectra against the shock-spectrum formulas of an undamped oscillator.

References: rectangular pulse of duration t_d: the largest response over the static one is
2 sin(π t_d/T) for t_d/T ≤ 1/2, else 2; half-sine pulse, t_d/T small (the residual era
governs): 2r|cos(π t_d/T)|/(r² − 1), r = T/(2 t_d) (Harris' Shock and Vibration Handbook ch.
8; J. M. Biggs, Introduction to Structural Dynamics; both from memory). A damped point of a
spectrum against derive() of the same oscillator under the same record.
"""

import math

import numpy as np
import pytest

import derivpad
from derivpad import ParameterError, forcing


def test_rectangular_pulse_spectrum():
    td = 0.1
    periods = np.geomspace(0.05, 2.0, 25)
    s = derivpad.response_spectrum(forcing.history([0.0, td], [3.0, 3.0]), periods, 0.0,
                                   kind="force")
    r = td / periods
    expected = np.where(r <= 0.5, 2 * np.sin(np.pi * np.minimum(r, 0.5)), 2.0)
    assert np.max(np.abs(s.load_factor - expected)) <= 1e-9
    omega = 2 * np.pi / periods
    assert np.allclose(s.pseudo_acceleration, omega ** 2 * s.displacement, rtol=1e-15)
    assert np.allclose(s.pseudo_velocity, omega * s.displacement, rtol=1e-15)


def test_half_sine_pulse_residual_spectrum():
    td = 0.02
    t = np.linspace(0.0, td, 4001)
    rec = forcing.history(t, np.sin(np.pi * t / td))
    periods = np.array([td / 0.1, td / 0.2, td / 0.3])
    s = derivpad.response_spectrum(rec, periods, 0.0, kind="force")
    r = periods / (2 * td)
    expected = 2 * r * np.abs(np.cos(np.pi * td / periods)) / (r ** 2 - 1)
    assert s.load_factor == pytest.approx(expected, rel=2e-6)


def test_a_damped_point_equals_derive_of_the_same_oscillator():
    rng = np.random.default_rng(4)
    t = np.arange(800) * 0.01
    ag = rng.normal(size=t.size) * np.exp(-((t - 3) / 1.5) ** 2)
    rec = forcing.history(t, ag, unit="m/s**2")
    s = derivpad.response_spectrum(rec, [0.4], 0.05)
    w = 2 * math.pi / 0.4
    d = derivpad.derive("x'' + 2*zeta*w*x' + w**2*x = -a", {"x(0)": 0, "x'(0)": 0},
                        {"zeta": 0.05, "w": w, "a": rec})
    assert s.displacement[0] == pytest.approx(abs(d.results["peak"].magnitude), rel=1e-10)
    assert s.derivation.verification.passed


def test_bad_spectrum_inputs():
    rec = forcing.history([0, 1], [0, 1])
    with pytest.raises(ParameterError, match="positive numbers of seconds"):
        derivpad.response_spectrum(rec, [0.1, -1.0])
    with pytest.raises(ParameterError, match="damping"):
        derivpad.response_spectrum(rec, [0.1], 1.5)
    with pytest.raises(ParameterError, match="load record"):
        derivpad.response_spectrum([0, 1], [0.1])
