"""Peaks, limits and step-response figures over the whole response (core/response.py).

Every expected value comes from outside derivpad: closed forms written out here by hand,
SciPy (solve_ivp over a long horizon, brentq on the hand-written closed form, the regularized
incomplete gamma function), or formulas from structural-dynamics texts named beside each check.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from scipy.special import gammaincinv

from derivpad import derive

REST2 = {"y(0)": 0, "y'(0)": 0}


def _rest(n):
    names = ["y", "y'", "y''", "y'''"] + [f"y^({k})" for k in range(4, 13)]
    return {names[k] + "(0)": 0 for k in range(n)}


def _dense_peak(rhs, z0, horizon, points=400_001):
    """max |y| over [0, horizon] from SciPy solve_ivp (DOP853, rtol 1e-12) on a dense grid."""
    ts = np.linspace(0, horizon, points)
    sol = solve_ivp(rhs, (0, horizon), z0, method="DOP853", rtol=1e-12, atol=1e-14, t_eval=ts,
                    max_step=horizon / 20000)
    y = sol.y[0]
    i = int(np.argmax(np.abs(y)))
    return abs(y[i]), ts[i]


# -- monotone responses: the supremum is approached, not attained ---------------------------

def test_overdamped_step_peak_is_the_final_value_approached_as_t_goes_to_infinity():
    # y'' + 4y' + 3y = 3u(t), rest: y = 1 - 1.5 e^{-t} + 0.5 e^{-3t} (by hand), rises to 1
    d = derive("y'' + 4*y' + 3*y = 3*u(t)", ics=REST2)
    r = d.results
    assert r["peak"].magnitude == pytest.approx(1.0, rel=1e-10)
    assert r["time_of_peak"].magnitude == math.inf
    assert "approached as t → ∞" in r["peak"].note
    # dynamic load factor of a suddenly applied load on an overdamped system: 1, approached
    # (common practice, no source)
    assert r["dynamic_load_factor"].magnitude == pytest.approx(1.0, rel=1e-10)
    assert r["final_value"].magnitude == 1.0
    y = lambda t: 1 - 1.5 * math.exp(-t) + 0.5 * math.exp(-3 * t)  # noqa: E731
    t10 = brentq(lambda t: y(t) - 0.1, 0, 10, xtol=1e-14)
    t90 = brentq(lambda t: y(t) - 0.9, 0, 10, xtol=1e-14)
    ts = brentq(lambda t: y(t) - 0.98, 0, 20, xtol=1e-14)
    assert r["rise_time"].magnitude == pytest.approx(t90 - t10, rel=1e-9)
    assert r["settling_time_2pct"].magnitude == pytest.approx(ts, rel=1e-9)
    assert r["percent_overshoot"].magnitude == 0.0


def test_critically_damped_step_settling_from_its_closed_form():
    # y'' + 2y' + y = u: y = 1 - (1 + t) e^{-t} (by hand); 2 % settling where (1 + t)e^{-t} = 0.02
    d = derive("y'' + 2*y' + y = u(t)", ics=REST2)
    ts = brentq(lambda t: (1 + t) * math.exp(-t) - 0.02, 1, 20, xtol=1e-14)
    assert d.results["settling_time_2pct"].magnitude == pytest.approx(ts, rel=1e-9)
    assert d.results["time_of_peak"].magnitude == math.inf


@pytest.mark.parametrize("n", [2, 4, 6, 8])
def test_repeated_pole_step_settles_where_the_incomplete_gamma_function_says(n):
    # 1/(s(s+1)^n): y(t) = P(n, t), the regularized lower incomplete gamma function
    # (Abramowitz & Stegun 6.5.13 with 29.3.x; SciPy gammaincinv for its inverse)
    coeffs = [math.comb(n, k) for k in range(n + 1)]
    names = ["y", "y'", "y''", "y'''"] + [f"y^({k})" for k in range(4, 13)]
    lhs = " + ".join(f"{c}*{names[k]}" for k, c in enumerate(coeffs))
    d = derive(lhs + " = u(t)", ics=_rest(n))
    r = d.results
    assert r["settling_time_2pct"].magnitude == pytest.approx(gammaincinv(n, 0.98), rel=1e-8)
    assert r["peak"].magnitude == pytest.approx(1.0, rel=1e-10)
    assert r["time_of_peak"].magnitude == math.inf  # never at the window's end
    assert r["rise_time"].magnitude == pytest.approx(gammaincinv(n, 0.9) - gammaincinv(n, 0.1),
                                                     rel=1e-8)


def test_definitions_are_adjustable():
    # a 5 % band and 5–95 % rise: the same closed form as above, by brentq (SciPy)
    d = derive("y'' + 4*y' + 3*y = 3*u(t)", ics=REST2,
               definitions={"settling_band": 0.05, "rise": (0.05, 0.95)})
    y = lambda t: 1 - 1.5 * math.exp(-t) + 0.5 * math.exp(-3 * t)  # noqa: E731
    assert d.results["settling_time_5pct"].magnitude == pytest.approx(
        brentq(lambda t: y(t) - 0.95, 0, 20, xtol=1e-14), rel=1e-9)
    assert "5–95 %" in d.results["rise_time"].label


# -- shock response: primary and residual peaks ---------------------------------------------

@pytest.mark.parametrize("ratio", [0.1, 0.25, 0.4])
def test_rectangular_pulse_residual_peak(ratio):
    # Undamped SDOF, rectangular pulse of duration t_d ≤ T/2: maximum response (residual)
    # DLF = 2 sin(π t_d/T) (Harris' Shock and Vibration Handbook, ch. 8; from memory)
    k, m, F = 400.0, 1.0, 10.0
    T = 2 * math.pi / math.sqrt(k / m)
    td = ratio * T
    d = derive("m*y'' + k*y = F*(u(t) - u(t - td))", ics=REST2,
               params={"m": m, "k": k, "F": F, "td": td})
    r = d.results
    expected = 2 * math.sin(math.pi * ratio)
    assert r["dynamic_load_factor"].magnitude == pytest.approx(expected, rel=1e-9)
    assert r["dynamic_load_factor_residual"].magnitude == pytest.approx(expected, rel=1e-9)
    # while the load acts the response is (F/k)(1 - cos ωt), largest at t_d
    assert r["dynamic_load_factor_primary"].magnitude == pytest.approx(
        1 - math.cos(2 * math.pi * ratio), rel=1e-9)
    assert r["final_value"].magnitude is None  # undamped: keeps oscillating


@pytest.mark.parametrize("ratio", [0.3, 0.8, 1.7])
def test_half_sine_pulse_residual_amplitude(ratio):
    # Undamped SDOF, half-sine pulse F sin(πt/t_d) on [0, t_d], τ = t_d/T: residual amplitude
    # |4τ cos(πτ) / (1 - 4τ²)|·F/k (Harris' Shock and Vibration Handbook, ch. 8; from memory,
    # re-derived from the Duhamel integral)
    k, m, F = 100.0, 1.0, 5.0
    T = 2 * math.pi / math.sqrt(k / m)
    td = ratio * T
    d = derive("m*y'' + k*y = F*sin(pi*t/td)*(u(t) - u(t - td))", ics=REST2,
               params={"m": m, "k": k, "F": F, "td": td})
    tau = ratio
    expected = abs(4 * tau * math.cos(math.pi * tau) / (1 - 4 * tau ** 2))
    assert d.results["dynamic_load_factor_residual"].magnitude == pytest.approx(expected,
                                                                                rel=1e-8)


@pytest.mark.parametrize("ratio", [0.3, 0.7, 1.25])
def test_ramp_to_constant_load(ratio):
    # Undamped SDOF, load rising linearly over t_r, then constant: DLF = 1 + |sin(π t_r/T)|/(π t_r/T)
    # (Harris' Shock and Vibration Handbook, ch. 8; Biggs, Introduction to Structural
    # Dynamics, ch. 2; from memory)
    k, m, F = 900.0, 1.0, 3.0
    T = 2 * math.pi / math.sqrt(k / m)
    tr = ratio * T
    d = derive("m*y'' + k*y = F/tr*(t*u(t) - (t - tr)*u(t - tr))", ics=REST2,
               params={"m": m, "k": k, "F": F, "tr": tr})
    x = math.pi * ratio
    assert d.results["dynamic_load_factor"].magnitude == pytest.approx(
        1 + abs(math.sin(x)) / x, rel=1e-9)


def test_damped_pulse_peak_against_a_dense_integration():
    # the built-in scenario's numbers: SciPy solve_ivp over a long horizon on a dense grid
    m, c, k, F0, t1, t2 = 1200.0, 2400.0, 480e3, 6e3, 0.02, 0.07
    d = derive("m*x'' + c*x' + k*x = F0*(u(t - t1) - u(t - t2))", ics={"x(0)": 0, "x'(0)": 0},
               params={"m": m, "c": c, "k": k, "F0": F0, "t1": t1, "t2": t2})

    def rhs(t, z):
        f = F0 if t1 <= t < t2 else 0.0
        return [z[1], (f - c * z[1] - k * z[0]) / m]
    peak, when = _dense_peak(rhs, [0.0, 0.0], 10.0)
    assert d.results["peak"].magnitude == pytest.approx(peak, rel=1e-6)
    assert d.results["time_of_peak"].magnitude == pytest.approx(when, abs=5e-5)
    assert d.results["final_value"].magnitude == 0.0  # returns to rest: exactly 0
    for key in ("percent_overshoot", "rise_time", "settling_time_2pct"):
        assert d.results[key].magnitude is None
        assert "returns to zero" in d.results[key].reason


# -- unbounded and undamped responses --------------------------------------------------------

@pytest.mark.parametrize("equation, words", [
    ("y'' + y = sin(t)", "resonance"),                 # forcing at ω_n: t·sin t growth
    ("y'' - y = u(t)", "positive real part"),          # pole at +1
    ("y' + y = t", "ramp"),                            # the load itself grows
    ("y'' = u(t) - u(t - 1)", "pole of order 2 at s = 0"),  # coasts off: grows like t
])
def test_unbounded_responses_are_infinite_with_the_reason(equation, words):
    ics = REST2 if "''" in equation else {"y(0)": 0}
    d = derive(equation, ics=ics)
    r = d.results
    assert r["peak"].magnitude == math.inf and words in r["peak"].reason
    assert r["final_value"].magnitude is None
    if "dynamic_load_factor" in r and r["dynamic_load_factor"].reason.startswith("unbounded"):
        assert r["dynamic_load_factor"].magnitude == math.inf


def test_a_response_whose_delayed_ramps_cancel_is_bounded():
    # y'' + y' = u(t) - u(t - 1): for t ≥ 1, y = 1 - (e - 1) e^{-t} (by hand) → 1 from below
    d = derive("y'' + y' = u(t) - u(t - 1)", ics=REST2)
    assert d.results["peak"].magnitude == pytest.approx(1.0, rel=1e-12)
    assert d.results["time_of_peak"].magnitude == math.inf
    assert d.results["final_value"].magnitude == pytest.approx(1.0, rel=1e-14)


def test_undamped_commensurate_frequencies_give_the_attained_supremum():
    # (s² + 1)(s² + 4) Y = 4/s: y = 1 - (4/3) cos t + (1/3) cos 2t (by hand); max 8/3 at t = π
    d = derive("y'''' + 5*y'' + 4*y = 4*u(t)", ics=_rest(4))
    assert d.results["peak"].magnitude == pytest.approx(8 / 3, rel=1e-10)
    assert d.results["time_of_peak"].magnitude == pytest.approx(math.pi, rel=1e-9)


def test_undamped_incommensurate_frequencies_give_the_bound_not_attained():
    # (s² + 1)(s² + 2) Y = 2/s: y = 1 - 2 cos t + cos(√2 t) (by hand); sup |y| = 4, approached
    # but never reached, since 1 and √2 have no common period (Kronecker's theorem)
    d = derive("y'''' + 3*y'' + 2*y = 2*u(t)", ics=_rest(4))
    peak = d.results["peak"]
    assert peak.magnitude == pytest.approx(4.0, rel=1e-10)
    assert d.results["time_of_peak"].magnitude == math.inf and "not attained" in peak.note


# -- numbers that used to fail ---------------------------------------------------------------

def test_nearly_equal_time_constants_give_the_answer_of_equal_ones():
    # 0.1 + 0.2 ≠ 0.3 in floats: the closed form's terms of size 10¹⁵ must not cancel to garbage
    same = derive("y'' + (a + b)*y' + a*b*y = u(t)", ics=REST2, params={"a": 0.3, "b": 0.3})
    near = derive("y'' + (a + b)*y' + a*b*y = u(t)", ics=REST2, params={"a": 0.1 + 0.2, "b": 0.3})
    ts = np.array([0.5, 3.0, 10.0, 40.0])
    # critically damped closed form (1/ab)(1 - (1 + at)e^{-at}), written out by hand
    exact = (1 - (1 + 0.3 * ts) * np.exp(-0.3 * ts)) / 0.09
    assert np.allclose(near(ts), exact, rtol=1e-12) and np.allclose(same(ts), exact, rtol=1e-12)
    for key in ("peak", "final_value", "settling_time_2pct", "rise_time"):
        assert near.results[key].magnitude == pytest.approx(same.results[key].magnitude,
                                                             rel=1e-12)


def test_stiff_spread_of_poles_samples_finite_and_right():
    # poles at -1e-3 and -1e4 (1/s): y = 1e-1 (1 - ...) by hand from the partial fractions
    d = derive("y'' + 10000.001*y' + 10*y = u(t)", ics=REST2)
    assert d.verification.passed
    assert np.isfinite(d.verification.samples.closed_form["y"]).all()
    p1, p2 = -1e-3, -1e4
    ts = np.array([1e-5, 1e-3, 1.0, 100.0, 3000.0])
    exact = 0.1 * (1 + (p2 * np.exp(p1 * ts) - p1 * np.exp(p2 * ts)) / (p1 - p2))
    assert np.allclose(d(ts), exact, rtol=1e-9)
    assert d.results["settling_time_2pct"].magnitude == pytest.approx(
        brentq(lambda t: 0.1 * (1 + (p2 * math.exp(p1 * t) - p1 * math.exp(p2 * t)) / (p1 - p2))
               - 0.098, 1, 1e5, xtol=1e-10), rel=1e-8)


def test_an_exponential_switched_on_late_is_evaluated_without_overflow():
    # y' + 750 y = 37500 e^{-750(t-1)} u(t-1), y(0) = 50: the peak is 50 at t = 0 (by hand:
    # 50 e^{-750 t} before the switch, then a smaller bump)
    d = derive("y' + 750*y = 37500*exp(-750*(t - 1))*u(t - 1)", ics={"y(0)": 50})
    assert d.verification.passed
    assert np.isfinite(d.verification.samples.closed_form["y"]).all()
    assert d.results["peak"].magnitude == pytest.approx(50.0, rel=1e-12)
    assert d.results["time_of_peak"].magnitude == 0.0


# -- property: never a window artefact -------------------------------------------------------

@settings(max_examples=30, deadline=None)
@given(a1=st.sampled_from([-3, -1, 0, 1, 2, 4]), a0=st.sampled_from([-2, 0, 1, 3, 9, 25]),
       delay=st.sampled_from([0, 1, 2]))
def test_random_second_order_steps_are_bounded_or_infinite_never_truncated(a1, a0, delay):
    # Against SciPy: stable → the peak is at least the integrated maximum over a long horizon
    # and not more than it by the grid's resolution; unstable or a double/undamped resonance → inf
    eq = f"y'' + ({a1})*y' + ({a0})*y = u(t - {delay})"
    d = derive(eq, ics=REST2)
    r = d.results
    roots = np.roots([1, a1, a0])
    grows = any(z.real > 1e-12 for z in roots) or (a0 == 0 and (a1 <= 0)) or \
        (a0 == 0 and a1 > 0)  # a0 = 0: the step drives a pole at 0 → ramp growth
    if grows:
        assert r["peak"].magnitude == math.inf and r["peak"].reason
        return
    horizon = delay + 40.0
    peak, _ = _dense_peak(lambda t, z: [z[1], (1.0 if t >= delay else 0.0) - a1 * z[1] - a0 * z[0]],
                          [0.0, 0.0], horizon, 200_001)
    assert r["peak"].magnitude >= peak * (1 - 1e-7)
    assert r["peak"].magnitude <= peak * (1 + 1e-4) + 1e-12 or \
        r["time_of_peak"].magnitude == math.inf


def test_a_train_of_ten_half_sine_pulses_verifies_and_peaks_as_integrated():
    # ten 0.5 s half-sine pulses, one a second, on a lightly damped oscillator: every check
    # passes (no false alarm), and the peak matches SciPy solve_ivp on a dense grid
    rhs_text = " + ".join(f"sin(pi*(t - {i})/0.5)*(u(t - {i}) - u(t - {i} - 0.5))"
                          for i in range(10))
    d = derive("y'' + 0.2*y' + 100*y = " + rhs_text, ics=REST2)
    assert d.verification.passed

    def load(t):
        i = math.floor(t)
        return math.sin(math.pi * (t - i) / 0.5) if 0 <= i < 10 and t - i < 0.5 else 0.0
    peak, when = _dense_peak(lambda t, z: [z[1], load(t) - 0.2 * z[1] - 100 * z[0]],
                             [0.0, 0.0], 60.0)
    assert d.results["peak"].magnitude == pytest.approx(peak, rel=1e-6)
    assert d.results["time_of_peak"].magnitude == pytest.approx(when, abs=2e-4)


def test_a_beat_with_a_long_common_period_is_searched_over_that_period():
    # y'' + y = sin(1.01 t) from rest: y = (sin 1.01t - 1.01 sin t)/(1 - 1.01²) (by hand), a
    # beat whose frequencies 1.01 and 1 share the period 200π; the largest |y| over one common
    # period, from a 4,000,001-point sample of that closed form (NumPy)
    d = derive("y'' + y = sin(1.01*t)", ics=REST2)
    ts = np.linspace(0, 200 * math.pi, 4_000_001)
    y = (np.sin(1.01 * ts) - 1.01 * np.sin(ts)) / (1 - 1.01 ** 2)
    i = int(np.argmax(np.abs(y)))
    assert d.results["peak"].magnitude == pytest.approx(y[i], rel=1e-8)
    assert d.results["time_of_peak"].magnitude == pytest.approx(ts[i], abs=1e-3)
