"""derive() under a periodic load, against outside references.

References: the Fourier-series steady state of a square wave, f(t) = (4F₀/π) Σ_{n odd}
sin(nωt)/n, each harmonic through the frequency response 1/(k − m n²ω² + i c nω) (standard
vibration texts, e.g. Thomson, Theory of Vibration, from memory); a dense evaluation for the
whole response's peak.
"""

import math

import numpy as np
import pytest

import derivpad
from derivpad import ForcingError, ParameterError, forcing

M, C, K, F0, PERIOD = 2.0, 20.0, 8000.0, 1000.0, 0.05
EQ = "m*x'' + c*x' + k*x = F"
REST = {"x(0)": 0, "x'(0)": 0}


def _square_wave():
    half = PERIOD / 2
    return forcing.periodic(forcing.pulse(F0, 0, half) + forcing.pulse(-F0, half, half), PERIOD)


def test_square_wave_steady_state_equals_its_fourier_series():
    d = derivpad.derive(EQ, REST, {"m": M, "c": C, "k": K, "F": _square_wave()})
    tau = np.linspace(0.0, PERIOD, 101)[:-1]
    ours = d(tau + 400 * PERIOD)          # the transient (e^{-5t}) is gone by then
    w = 2 * math.pi / PERIOD
    n = np.arange(1, 40001, 2)[:, None]
    h = 1.0 / (K - M * (n * w) ** 2 + 1j * C * n * w)
    ref = np.sum((4 * F0 / (math.pi * n)) * np.imag(h * np.exp(1j * n * w * tau[None, :])),
                 axis=0)
    assert np.max(np.abs(ours - ref)) <= 1e-8 * np.max(np.abs(ref))
    steady = d.results["steady_peak"].magnitude
    assert abs(steady) == pytest.approx(np.max(np.abs(d(np.linspace(0, PERIOD, 200001)
                                                         + 400 * PERIOD))), rel=1e-9)
    assert d.verification.passed


def test_whole_peak_includes_the_start_from_rest():
    load = forcing.periodic(forcing.pulse(F0, 0, 0.01), PERIOD)
    d = derivpad.derive(EQ, REST, {"m": M, "c": C, "k": K, "F": load})
    peak = abs(d.results["peak"].magnitude)
    at = d.results["time_of_peak"].magnitude
    near = np.abs(d(np.linspace(at - 1e-3, at + 1e-3, 200_001)))
    assert peak >= near.max() - 1e-15 and peak - near.max() <= 1e-10 * peak
    assert np.abs(d(np.linspace(0.0, 2.0, 400_001))).max() <= peak + 1e-15
    assert peak > abs(d.results["steady_peak"].magnitude)


def test_resonant_period_and_bad_periods_are_refused():
    w_d = math.sqrt(K / M)                 # undamped: T = 2π/ω is a natural period
    with pytest.raises(ParameterError, match="resonance"):
        derivpad.derive("m*x'' + k*x = F", REST, {"m": M, "k": K, "F": forcing.periodic(
            forcing.pulse(1, 0, 0.01), 2 * math.pi / w_d)})
    with pytest.raises(ForcingError, match="after t = T"):
        forcing.periodic(forcing.step(1, 0), 0.1)
    with pytest.raises(ForcingError, match="positive number"):
        forcing.periodic(forcing.pulse(1, 0, 0.01), -1)
