"""derive() under a measured load record, against outside references.

References: the fully symbolic route (forcing.table: a Heaviside term per corner, derived by
the Laplace transform) for records of up to 20 segments; scipy.signal.lsim(interp=True); the
rectangular-pulse and half-sine-pulse response of an undamped oscillator (shock-response
texts, e.g. Harris' Shock and Vibration Handbook ch. 8, and J. M. Biggs, Introduction to
Structural Dynamics; from memory); solve_ivp for a two-degree-of-freedom system.
"""

import math

import numpy as np
import pytest
from scipy import signal
from scipy.integrate import solve_ivp

import derivpad
from derivpad import (ForcingError, LoadHistoryError, ParameterError, UnitError,
                      forcing)

SDOF = "m*x'' + c*x' + k*x = F"
REST = {"x(0)": 0, "x'(0)": 0}


def test_twenty_segments_equal_the_fully_symbolic_route():
    rng = np.random.default_rng(5)
    t = np.round(np.cumsum(rng.uniform(0.002, 0.006, 21)) - 0.002, 6)
    t[0] = 0.0
    f = np.round(rng.normal(0, 400, 21), 3)
    f[10] = f[9]
    params = {"m": 10, "c": 300, "k": 4e5}
    ours = derivpad.derive(SDOF, REST, {**params, "F": forcing.history(t, f)})
    table = derivpad.derive(SDOF, REST, {**params, "F": forcing.table(
        list(zip(t.tolist(), f.tolist())))}, checks="engine")
    times = np.linspace(0.0, 0.2, 2001)
    assert np.max(np.abs(ours(times) - table(times))) <= 1e-10 * np.max(np.abs(table(times)))
    assert ours.verification.passed


def test_peak_is_the_supremum_and_the_response_equals_lsim():
    t = np.linspace(0.0, 2.0, 401)
    f = 1000 * np.sin(2 * np.pi * 3 * t) * np.exp(-t)
    d = derivpad.derive(SDOF, REST, {"m": 2, "c": 4, "k": 8000, "F": forcing.history(t, f)})
    # scipy.signal.lsim with first-order hold is exact for a load linear between samples
    _, ref, _ = signal.lsim(signal.lti([0.5], [1, 2, 4000]), f, t, interp=True)
    assert np.max(np.abs(d(t) - ref)) <= 1e-12 * np.max(np.abs(ref))
    peak = d.results["peak"].magnitude
    at = d.results["time_of_peak"].magnitude
    dense = np.linspace(at - 0.01, at + 0.01, 200_001)
    values = np.abs(d(dense))
    assert abs(peak) >= values.max() - 1e-15
    assert abs(peak) - values.max() <= 1e-9 * abs(peak)
    # nothing larger anywhere else, the free vibration after the record included
    assert np.abs(d(np.linspace(0, 6, 600_001))).max() <= abs(peak) + 1e-15


@pytest.mark.parametrize("ratio, expected", [(0.2, 2 * math.sin(math.pi * 0.2)), (0.75, 2.0)])
def test_rectangular_pulse_load_factor(ratio, expected):
    # undamped oscillator, rectangular pulse of duration t_d: DLF = 2 sin(π t_d/T) for
    # t_d/T ≤ 1/2, else 2 (Biggs; Harris ch. 8; from memory)
    k, m = 4e4, 1.0
    period = 2 * math.pi / math.sqrt(k / m)
    td = ratio * period
    rec = forcing.history([0.0, td], [100.0, 100.0])
    d = derivpad.derive("m*x'' + k*x = F", REST, {"m": m, "k": k, "F": rec})
    assert d.results["dynamic_load_factor"].magnitude == pytest.approx(expected, rel=1e-9)


def test_half_sine_pulse_residual_response():
    # undamped oscillator, half-sine pulse of duration t_d < T/2: the largest response is the
    # residual one, x/x_st = 2r|cos(π t_d/T)|/(r² − 1), r = T/(2 t_d) (Harris ch. 8, from
    # memory); the record samples the sine at 4001 points (linear between them: error ~h²)
    k, m = 4e4, 1.0
    period = 2 * math.pi / math.sqrt(k / m)
    td = 0.25 * period
    t = np.linspace(0.0, td, 4001)
    rec = forcing.history(t, 100.0 * np.sin(np.pi * t / td))
    d = derivpad.derive("m*x'' + k*x = F", REST, {"m": m, "k": k, "F": rec})
    r = period / (2 * td)
    expected = 2 * r * abs(math.cos(math.pi * td / period)) / (r * r - 1)
    assert d.results["dynamic_load_factor"].magnitude == pytest.approx(expected, rel=1e-6)
    assert d.results["peak_residual"].magnitude == pytest.approx(d.results["peak"].magnitude)


def test_two_degree_of_freedom_system_with_a_derived_quantity():
    eqs = ["m1*x1'' + c*(x1' - x2') + k1*x1 - k2*(x2 - x1) = F",
           "m2*x2'' + c*(x2' - x1') + k2*(x2 - x1) = 0"]
    ics = {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}
    t = np.linspace(0.0, 0.05, 51)
    f = 1000 * np.sin(60 * t)
    p = {"m1": 10, "m2": 2, "k1": 4e5, "k2": 1e5, "c": 30}
    d = derivpad.derive(eqs, ics, {**p, "F": forcing.history(t, f)},
                        derived={"stroke": "x1 - x2"})
    a = np.array([[0, 1, 0, 0], [-5e4, -3, 1e4, 3], [0, 0, 0, 1], [5e4, 15, -5e4, -15]], float)

    def rhs(s, z):
        return a @ z + np.array([0, np.interp(s, t, f) / 10 if s <= t[-1] else 0, 0, 0])
    times = np.linspace(0.0, 0.08, 161)
    ref = solve_ivp(rhs, (0, 0.08), np.zeros(4), method="DOP853", rtol=1e-12, atol=1e-15,
                    t_eval=times, max_step=1e-4)
    got = d(times)
    for name, row in (("x1", 0), ("x2", 2)):
        assert np.max(np.abs(got[name] - ref.y[row])) <= 1e-7 * np.max(np.abs(ref.y[row]))
    assert np.max(np.abs(got["stroke"] - (ref.y[0] - ref.y[2]))) <= 1e-6 * np.max(
        np.abs(ref.y[0] - ref.y[2]))
    assert d.results["peak_stroke"].present and d.verification.passed


def test_units_and_display():
    rec = forcing.history([0, 10, 20], [0, 5, 0], time_unit="ms", unit="kN")
    d = derivpad.derive(SDOF, REST, {"m": "10 kg", "c": "300 N*s/m", "k": "4e5 N/m", "F": rec},
                        units={"x": "mm", "t": "ms"})
    assert str(d.results["peak"].value.units) == "millimeter"
    text = d.to_text()
    assert "From knot to knot" in text and "Nigam" not in text  # the rule's name, not its source
    assert "One generic segment" in d.to_html()


def test_bad_uses_of_a_record():
    rec = forcing.history([0, 1], [0, 1])
    with pytest.raises(ParameterError, match="right side"):
        derivpad.derive("m*x'' + k*x = 1", REST, {"m": rec, "k": 1})
    with pytest.raises(ForcingError, match="two load records"):
        derivpad.derive("x'' + x = F + G", REST, {"F": rec, "G": rec})
    with pytest.raises(UnitError, match="has none"):
        derivpad.derive(SDOF, REST, {"m": "1 kg", "c": "1 N*s/m", "k": "1 N/m", "F": rec})
    with pytest.raises(UnitError, match="'F' is length"):
        derivpad.derive(SDOF, REST, {"m": "1 kg", "c": "1 N*s/m", "k": "1 N/m",
                                     "F": forcing.history([0, 1], [0, 1], unit="m")},
                        units={"x": "mm"})
    with pytest.raises(ForcingError, match="only constant loads"):
        derivpad.derive("x'' + x = F + u(t - 1)", REST, {"F": rec})
    with pytest.raises(ParameterError, match="needs a number for every parameter"):
        derivpad.derive(SDOF, REST, {"m": 1, "c": 1, "F": rec})
    with pytest.raises(LoadHistoryError):
        forcing.history([0, 1, 1, 1], [0, 1, 2, 3])


def test_engine_checks_only_return_unverified():
    d = derivpad.derive(SDOF, REST, {"m": 1, "c": 1, "k": 100,
                                     "F": forcing.history([0, 1], [0, 1])}, checks="engine")
    assert not d.verification.passed and not d.results


def test_json_keeps_the_record_summary_and_the_figure_samples():
    t = np.linspace(0.0, 0.05, 11)
    rec = forcing.history(t, 100 * np.sin(60 * t))
    d = derivpad.derive(SDOF, REST, {"m": 10, "c": 300, "k": 4e5, "F": rec})
    data = d.to_dict()
    assert data["load"]["kind"] == "record" and data["load"]["sha256"] == rec.sha256
    back = derivpad.Derivation.from_dict(data)
    s0, s1 = d.verification.samples, back.verification.samples
    assert np.array_equal(s0.times, s1.times)
    assert np.array_equal(s0.closed_form["x"], s1.closed_form["x"])
    assert back.results["peak"].magnitude == d.results["peak"].magnitude


def test_record_checks_catch_a_wrong_state():
    # the energy balance and the segment integration are independent of the march: a state
    # 1e-6 off at one knot must fail both (a check that cannot fail proves nothing)
    import dataclasses
    from derivpad.core.checking.history_checks import EnergyBalance, integration_check
    t = np.linspace(0.0, 0.05, 51)
    d = derivpad.derive(SDOF, REST, {"m": 10, "c": 300, "k": 4e5,
                                     "F": forcing.history(t, 1000 * np.sin(60 * t))})
    assert d.verification.passed
    states = d.march.states.copy()
    states[20] *= 1 + 1e-6
    bad = dataclasses.replace(d.march, states=states)
    mck = (np.array([[10.0]]), np.array([[300.0]]), np.array([[4e5]]))
    balance = EnergyBalance(mck, (np.array([1.0]), np.array([0.0])), np.array([0, 2]), bad)
    check, _, energy = integration_check(bad, ("x",), np.linspace(0, 0.06, 50), 1e-7, balance)
    assert not check.passed and not energy.passed


def test_a_response_that_leaves_floating_point_is_an_error_not_a_number():
    rec = forcing.history(np.linspace(0, 1000, 2001), np.ones(2001))
    with pytest.raises(derivpad.SolveError, match="leaves floating point"):
        derivpad.derive("x'' - x = F", REST, {"F": rec})
