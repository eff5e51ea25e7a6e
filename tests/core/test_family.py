"""A derivation family: derived once in symbols, numbers put in per change, re-derived at a
regime boundary. Each answer is checked against an independent integration (tests/reference)
and against a fresh numeric derivation."""

import math

import numpy as np
import pytest

import derivpad
from derivpad import ParameterError, UnitError
from derivpad.core import family as family_module
from derivpad.core.family import DerivationFamily, what_changed
from derivpad.core.reading.read_problem import make_problem

from ..reference import integrate

EQ = "m*x'' + c*x' + k*x = F0*(u(t - t1) - u(t - t2))"
ICS = {"x(0)": 0, "x'(0)": 0}
PARAMS = {"m": "2 kg", "c": "4 N*s/m", "k": "800 N/m", "F0": "50 N", "t1": "0.1 s",
          "t2": "0.25 s"}
TIMES = [0.05, 0.12, 0.2, 0.3, 0.5, 1.0, 2.0]


def _reference(params):
    """x(t) at TIMES by SciPy solve_ivp of the same ODE with numbers (tests/reference.py)."""
    problem = make_problem(EQ, ICS, params, None, None)
    bps = [b for b in (0.1, 0.25)]
    t1, t2 = (float(dict(problem.parameters)[n]) for n in ("t1", "t2"))
    return integrate(problem, TIMES, breakpoints=sorted({t1, t2} | set(bps)))


@pytest.fixture
def stiffness_family():
    return DerivationFamily(EQ, ICS, PARAMS, vary=["k"])


def test_values_put_in_agree_with_integration_and_with_a_fresh_derivation(stiffness_family):
    for k in (800, 1250.5, 400):
        member = stiffness_family.at({"k": k})
        d = member.derivation
        assert d.verification.passed
        params = dict(PARAMS, k=f"{k} N/m")
        assert d(TIMES) == pytest.approx(_reference(params), rel=1e-8, abs=1e-12)
        fresh = derivpad.derive(EQ, ICS, params)
        assert d.results["peak"].magnitude == pytest.approx(fresh.results["peak"].magnitude,
                                                            rel=1e-12)
        assert dict(d.values)["k"] == fresh.problem.coefficients[0]


def test_later_changes_do_not_derive_again(stiffness_family, monkeypatch):
    first = stiffness_family.at({"k": 800})
    assert first.rederived and "derived in symbols for k" in first.how
    calls = []
    original = family_module.solve_stages
    monkeypatch.setattr(family_module, "solve_stages",
                        lambda *a, **k: calls.append(1) or original(*a, **k))
    second = stiffness_family.at({"k": 900})
    assert not second.rederived and "no re-derivation" in second.how
    assert calls == []
    assert second.derivation.steps is first.derivation.steps  # the same symbolic steps


def test_damping_through_critical_rederives_and_says_so():
    # critical damping c_cr = 2√(k m) = 2√(800·2) = 80 N·s/m (vibration texts; from memory)
    fam = DerivationFamily(EQ, ICS, PARAMS, vary=["c"])
    under = fam.at({"c": 4}).derivation
    over = fam.at({"c": 120})
    assert "re-derived in symbols for the overdamped form" in over.how
    assert over.derivation.results["regime"].magnitude == "overdamped"
    assert what_changed(under, over.derivation) == ["regime changed: underdamped → overdamped"]
    critical = fam.at({"c": 80})
    assert "derived with the numbers" in critical.how
    assert critical.derivation.results["regime"].magnitude == "critically damped"
    assert critical.derivation.results["damping_ratio"].magnitude == pytest.approx(1.0)
    params = dict(PARAMS, c="80 N*s/m")
    assert critical.derivation(TIMES) == pytest.approx(_reference(params), rel=1e-8, abs=1e-12)
    back = fam.at({"c": 10})
    assert "the underdamped form applies (derived in symbols earlier" in back.how
    assert not back.rederived and back.derivation.verification.passed


def test_switching_times_out_of_order_fall_back_to_numbers():
    fam = DerivationFamily(EQ, ICS, PARAMS, vary=["t1"])
    assert "derived in symbols" in fam.at({"t1": 0.1}).how
    swapped = fam.at({"t1": 0.4})  # now t2 < t1: the load is -F0 between them
    assert "derived with the numbers" in swapped.how
    params = dict(PARAMS, t1="0.4 s")
    assert swapped.derivation(TIMES) == pytest.approx(_reference(params), rel=1e-8, abs=1e-12)


def test_units_of_varied_parameters():
    fam = DerivationFamily(EQ, ICS, dict(PARAMS, k="0.8 kN/m"), vary=["k"], units={"x": "mm"})
    d = fam.at({"k": 1.2}).derivation  # in kN/m, the unit of the starting value
    assert dict(d.values)["k"] == 1200
    assert d.value_table() == (("k", pytest.approx(1.2), "kN/m"),)
    assert fam.params_for({"k": 1.2})["k"] == "1.2 kN/m"
    # x_static = F0/k = 50/1200 m = 41.67 mm while the load lasts (statics; no source needed)
    fresh = derivpad.derive(EQ, ICS, dict(PARAMS, k="1.2 kN/m"), units={"x": "mm"})
    assert d.results["peak"].magnitude == pytest.approx(fresh.results["peak"].magnitude)
    assert str(d.results["peak"].value.units) == "millimeter"


def test_bad_families_are_refused():
    with pytest.raises(ParameterError, match="no starting value"):
        DerivationFamily(EQ, ICS, PARAMS, vary=["q"])
    with pytest.raises(ParameterError, match="at least one"):
        DerivationFamily(EQ, ICS, PARAMS, vary=[])
    fam = DerivationFamily(EQ, ICS, PARAMS, vary=["k"])
    with pytest.raises(ParameterError, match="no value for 'k'"):
        fam.at({})


def test_values_for_symbolic_parameters_with_declared_units():
    d = derivpad.derive(EQ, ICS, {k: v for k, v in PARAMS.items() if k != "k"},
                        units={"k": "kN/m"}, values={"k": "1.2 kN/m"})
    assert dict(d.values)["k"] == 1200 and d.verification.passed
    with pytest.raises(UnitError, match="declared in 'kN/m'"):
        derivpad.derive(EQ, ICS, {k: v for k, v in PARAMS.items() if k != "k"},
                        units={"k": "kN/m"}, values={"k": "3 kg"})
    with pytest.raises(UnitError, match="no declared unit"):
        derivpad.derive("x'' + k*x = 1", {"x(0)": 0, "x'(0)": 0}, values={"k": "3 N/m"})


def test_a_pole_through_zero_is_reported_as_a_stability_change():
    # y' + (a - 2) y = 1 with a = 3 - b: pole at s = -(1 - b); b > 1 moves it right of 0
    fam = DerivationFamily("y' + (1 - b)*y = 1", {"y(0)": 0}, {"b": 0.5}, vary=["b"])
    stable = fam.at({"b": 0.5}).derivation
    unstable = fam.at({"b": 1.5}).derivation
    assert "stability changed: stable → unstable" in what_changed(stable, unstable)
    # y = (e^{(b-1)t} - 1)/(b - 1) for b ≠ 1 (first-order ODE, solved by hand; no source)
    t = np.array([0.5, 1.0, 3.0])
    assert unstable(t) == pytest.approx((np.exp(0.5 * t) - 1) / 0.5, rel=1e-12)
    assert not math.isnan(unstable.results["time_of_peak"].magnitude)


def test_a_damped_two_mass_system_is_derived_once_for_its_load():
    # the pump and absorber (2 DOF, damped): Δ(s) has numerical roots, but the load's size F0
    # enters only the numerators, so the derivation stays symbolic in F0 and is derived once.
    # Reference: the response of a linear system is proportional to its load (superposition;
    # common practice, no source), and a fresh derivation with the numbers.
    eqs = ["m1*x1'' + (k1 + k2)*x1 - k2*x2 - c2*(x2' - x1') = F0*sin(w*t)*u(t)",
           "m2*x2'' + c2*(x2' - x1') + k2*(x2 - x1) = 0"]
    ics = {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}
    params = {"m1": "400 kg", "k1": "6.4 MN/m", "m2": "40 kg", "k2": "632 kN/m",
              "c2": "200 N*s/m", "F0": "1.5 kN", "w": "125.66 rad/s"}
    fam = DerivationFamily(eqs, ics, params, vary=["F0"], units={"x1": "mm", "x2": "mm"})
    first = fam.at({"F0": 1.2})
    second = fam.at({"F0": 1.8})
    assert "derived in symbols for F0" in first.how and not second.rederived
    assert second.derivation.verification.passed
    p1 = first.derivation.results["peak_x1"].magnitude
    p2 = second.derivation.results["peak_x1"].magnitude
    assert p2 == pytest.approx(p1 * 1.8 / 1.2, rel=1e-9)
    fresh = derivpad.derive(eqs, ics, dict(params, F0="1.8 kN"), units={"x1": "mm", "x2": "mm"})
    assert p2 == pytest.approx(fresh.results["peak_x1"].magnitude, rel=1e-9)


def test_forms_of_many_cases_agree_with_numbers_at_one_by_one():
    """The vectorised form test takes each case to the form numbers_at takes it to, and leaves
    a case within 1e-9 of critical damping to the exact test."""
    import numpy as np
    from derivpad.core.family import DerivationFamily
    fam = DerivationFamily("m*x'' + c*x' + k*x = 6*u(t)", {"x(0)": 0, "x'(0)": 0},
                           {"m": 2.0, "c": 1.0, "k": 8.0}, vary=("c",))
    cs = np.array([1.0, 7.9, 8.0 * (1 + 1e-12), 8.1, 30.0])  # critical c = 2√(km) = 8
    forms = fam.forms_of(fam.si_columns(cs[:, None]))
    assert forms.tolist() == ["underdamped", "underdamped", "", "overdamped", "overdamped"]
    for c, form in zip(cs, forms):
        if form:
            assert fam.numbers_at({"c": c})[0] == form
