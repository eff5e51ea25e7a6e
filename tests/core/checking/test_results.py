"""Engineering results against handbook facts and SciPy's linear-system responses."""

import math

import numpy as np
import pytest
from scipy import signal

from derivpad import derive, forcing

REST = {"x(0)": 0, "x'(0)": 0}


def test_suddenly_applied_load_on_an_undamped_oscillator_has_dlf_two():
    # Dynamic load factor 2 for a suddenly applied constant load, peak at half a period
    # (any structural-dynamics text, e.g. Biggs ch. 2; from memory)
    d = derive("m*x'' + k*x = F0*u(t)", ics=REST, params={"m": 5, "k": 2000, "F0": 100})
    r = d.results
    assert r["dynamic_load_factor"].magnitude == pytest.approx(2.0, rel=1e-10)
    wn = math.sqrt(2000 / 5)
    assert r["time_of_peak"].magnitude == pytest.approx(math.pi / wn, rel=1e-9)
    assert r["regime"].magnitude == "undamped"
    # an undamped response does not settle: no final value, and the reason says why
    assert r["final_value"].magnitude is None and "oscillating" in r["final_value"].reason


@pytest.mark.parametrize("ratio", [0.1, 0.25, 0.4, 0.6, 1.3])
def test_rectangular_pulse_dlf_matches_the_shock_spectrum(ratio):
    # Undamped SDOF, rectangular pulse of duration td, natural period T (Biggs, Introduction to
    # Structural Dynamics, from memory):  DLF = 2 sin(π td / T) for td/T < 1/2,  DLF = 2 otherwise.
    m, k = 1.0, 400.0
    period = 2 * math.pi / math.sqrt(k / m)
    td = ratio * period
    d = derive("m*x'' + k*x = F", ics=REST,
               params={"m": 1, "k": 400, "F": forcing.pulse(10, 0, round(td, 12))})
    expected = 2 * math.sin(math.pi * td / period) if ratio < 0.5 else 2.0
    assert d.results["dynamic_load_factor"].magnitude == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize("zeta", [0.1, 0.3, 0.6])
def test_percent_overshoot_formula(zeta):
    # PO = 100 exp(-ζπ/√(1-ζ²)) for a second-order step response (control texts; from memory)
    wn = 10.0
    d = derive("y'' + c*y' + k*y = k*u(t)", ics={"y(0)": 0, "y'(0)": 0},
               params={"c": 2 * zeta * wn, "k": wn ** 2})
    po = 100 * math.exp(-zeta * math.pi / math.sqrt(1 - zeta ** 2))
    assert d.results["percent_overshoot"].magnitude == pytest.approx(po, rel=1e-8)
    assert d.results["damping_ratio"].magnitude == pytest.approx(zeta, rel=1e-12)
    assert d.results["natural_frequency"].magnitude == pytest.approx(wn, rel=1e-12)


@pytest.mark.parametrize("zeta", [0.2, 0.4])
def test_settling_time_near_the_four_over_zeta_omega_rule(zeta):
    # t_s(2 %) ≈ 4/(ζ ω_n): a rule of thumb, good to a few tens of percent for 0.1 < ζ < 0.6
    # (common practice, no source)
    wn = 5.0
    d = derive("y'' + c*y' + k*y = k*u(t)", ics={"y(0)": 0, "y'(0)": 0},
               params={"c": 2 * zeta * wn, "k": wn ** 2})
    ts = d.results["settling_time_2pct"].magnitude
    assert 0.7 * 4 / (zeta * wn) < ts < 1.3 * 4 / (zeta * wn)


def test_step_response_against_scipy_signal_step():
    wn, zeta = 6.0, 0.25
    d = derive("y'' + c*y' + k*y = k*u(t)", ics={"y(0)": 0, "y'(0)": 0},
               params={"c": 2 * zeta * wn, "k": wn ** 2})
    sys = signal.TransferFunction([wn ** 2], [1, 2 * zeta * wn, wn ** 2])
    t = np.linspace(0, 5, 400)
    _, ref = signal.step(sys, T=t)
    assert np.max(np.abs(d(t) - ref)) < 1e-6
    # rise time 10-90 % from SciPy's sampled response, to the grid's resolution
    crossing = lambda lvl: t[np.argmax(ref >= lvl)]  # noqa: E731
    assert d.results["rise_time"].magnitude == pytest.approx(crossing(0.9) - crossing(0.1),
                                                              abs=2 * (t[1] - t[0]))


def test_impulse_response_against_scipy_signal_impulse():
    d = derive("y'' + 3*y' + 25*y = delta(t)", ics={"y(0)": 0, "y'(0)": 0})
    t = np.linspace(0, 4, 300)
    _, ref = signal.impulse(signal.TransferFunction([1], [1, 3, 25]), T=t)
    assert np.max(np.abs(d(t) - ref)) < 1e-7


def test_load_table_response_against_scipy_lsim():
    pts = [(0, 0), (0.1, 3), (0.25, 3), (0.4, -1), (0.6, 0)]
    d = derive("y'' + 2*y' + 40*y = F", ics={"y(0)": 0, "y'(0)": 0},
               params={"F": forcing.table(pts)})
    t = np.unique(np.concatenate([np.linspace(0, 3, 3001), [p[0] for p in pts]]))
    u = np.interp(t, [p[0] for p in pts], [p[1] for p in pts], right=0)
    _, ref, _ = signal.lsim(signal.TransferFunction([1], [1, 2, 40]), U=u, T=t)
    assert np.max(np.abs(d(t) - ref)) < 1e-6


def test_results_carry_units_and_sources():
    d = derive("m*x'' + c*x' + k*x = F0*u(t - t1)", ics=REST,
               params={"m": "2 kg", "c": "0.8 N*s/m", "k": "800 N/m", "F0": "50 N",
                       "t1": "250 ms"}, units={"x": "mm"})
    peak = d.results["peak"]
    assert str(peak.value.units) == "millimeter" and peak.unit == "mm"
    static = d.results["static_response"]
    assert static.magnitude == pytest.approx(50 / 800 * 1000, rel=1e-12)  # F0/k in mm
    assert d.results["natural_frequency"].unit == "rad/s"
    assert d.results["natural_frequency"].magnitude == pytest.approx(20.0, rel=1e-12)
    for r in d.results.values():
        assert (r.formula and r.source) or (r.magnitude is None and r.reason)


def test_results_are_only_stated_where_meaningful():
    d = derive("y'' + 4*y = sin(2*t)", ics={"y(0)": 0, "y'(0)": 0})
    # resonance (forcing at the natural frequency, 2 rad/s): unbounded, t·sin 2t growth
    assert d.results["peak"].magnitude == math.inf
    assert "resonance" in d.results["peak"].reason
    assert d.results["settling_time_2pct"].magnitude is None
    assert d.results["final_value"].magnitude is None
    assert "static_response" not in d.results  # the load does not settle to a level
