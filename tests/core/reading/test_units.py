"""Units: conversion to SI with pint, homogeneity term by term, clear errors."""

import pytest
import sympy as sp

from derivpad import UnitError, derive
from derivpad.core.reading.read_problem import make_problem
from derivpad.core.reading.units import read_quantity, registry
from derivpad.core.reading.parse import T

REST = {"x(0)": 0, "x'(0)": 0}


def test_quantities_convert_to_exact_si():
    # unit factors from the SI brochure (BIPM): k = 10^3, m = 10^-3 (common practice, no source)
    assert read_quantity("250 ms", "t1").si_value == sp.Rational(1, 4)
    assert read_quantity("2.4 kN*s/m", "c").si_value == 2400
    assert read_quantity("480 kN/m", "k").si_unit == "N/m"
    assert read_quantity("3 mm", "x0").si_value == sp.Rational(3, 1000)
    assert read_quantity("12", "n") is None


def test_pint_quantities_are_accepted():
    ureg = registry()
    p = make_problem("m*x'' + k*x = F0", REST,
                     {"m": ureg.Quantity(2, "kg"), "k": ureg.Quantity(8, "kN/m"),
                      "F0": ureg.Quantity(40, "N")})
    assert p.coefficients == (8000, 0, 2)
    assert p.units.unknown_si == "m"


def test_inhomogeneous_equation_names_the_terms_and_dimensions():
    with pytest.raises(UnitError) as err:
        make_problem("m*x'' + c*x' + k*x = F0", REST,
                     {"m": "2 kg", "c": "3 N*s/m", "k": "800 N", "F0": "5 N"})
    assert "k*x" in err.value.terms
    assert any("length²" in d for d in err.value.dimensions)


def test_unknown_unit_names_the_parameter():
    with pytest.raises(UnitError) as err:
        make_problem("m*x'' + k*x = F0", REST, {"m": "2 kgs", "k": "8 N/m", "F0": "1 N"})
    assert err.value.name == "m" and "'kgs'" in str(err.value)


def test_exponent_arguments_must_be_dimensionless():
    make_problem("m*x'' + k*x = F0*exp(-a*t)", REST,
                 {"m": "1 kg", "k": "4 N/m", "F0": "1 N", "a": "2 1/s"})
    with pytest.raises(UnitError, match="dimensionless"):
        make_problem("m*x'' + k*x = F0*exp(-a*t)", REST,
                     {"m": "1 kg", "k": "4 N/m", "F0": "1 N", "a": "2 m"})


def test_an_impulse_has_the_dimension_of_one_over_time():
    # I0 δ(t - t1) with I0 in N·s is a force (δ has dimension 1/time; common practice)
    p = make_problem("m*x'' + k*x = I0*delta(t - t1)", REST,
                     {"m": "1 kg", "k": "100 N/m", "I0": "2 N*s", "t1": "10 ms"})
    assert p.units.forcing_si == "N"


def test_display_units_and_time_unit_checks():
    d = derive("m*x'' + k*x = F0*u(t)", REST, {"m": "1 kg", "k": "100 N/m", "F0": "1 N"},
               units={"x": "mm"})
    assert d.results["static_response"].magnitude == pytest.approx(10.0)  # 1 N / 100 N/m = 10 mm
    with pytest.raises(UnitError, match="not a unit of time"):
        derive("m*x'' + k*x = F0", REST, {"m": "1 kg", "k": "1 N/m", "F0": "1 N"},
               units={"t": "m"})
    with pytest.raises(UnitError, match="neither the unknown"):
        derive("m*x'' + k*x = F0", REST, {"m": "1 kg", "k": "1 N/m", "F0": "1 N"},
               units={"q": "m"})


def test_units_for_plain_numbers_and_initial_conditions():
    p = make_problem("m*x'' + k*x = 0", {"x(0)": "5 mm", "x'(0)": 0}, {"m": 2, "k": 800},
                     units={"m": "kg", "k": "N/m"})
    assert p.initial_values[0][0] == sp.Rational(1, 200)
    with pytest.raises(UnitError, match="must be length/time"):
        make_problem("m*x'' + k*x = 0", {"x(0)": "5 mm", "x'(0)": "1 m"},
                     {"m": "2 kg", "k": "800 N/m"})


def test_problem_step_shows_given_and_si_values():
    d = derive("m*x'' + k*x = F0*u(t)", REST, {"m": "1200 kg", "k": "480 kN/m", "F0": "6 kN"})
    labels = [line.label for line in d.steps[0].lines]
    assert "given 480 kN/m; SI N/m" in labels


def test_offset_temperatures_give_the_same_physical_answer_in_k_degc_and_degf():
    # An enclosure: C T' + (T - Ta)/R = P u(t - t1). 20 °C = 68 °F = 293.15 K (pint's own
    # conversion, with the offset); the rise P·R = 50 K is the same in every scale, so the
    # final temperature is 343.15 K = 70 °C (common practice, no source).
    finals = []
    for ambient, unit in (("293.15 K", "K"), ("20 degC", "degC"), ("68 degF", "degF")):
        d = derive("C*T' + (T - Ta)/R = P*u(t - t1)", ics={"T(0)": ambient},
                   params={"C": "5 kJ/K", "R": "0.2 K/W", "Ta": ambient, "P": "250 W",
                           "t1": "60 s"}, units={"T": unit})
        finals.append(d.results["final_value"].value.to("kelvin").magnitude)
        assert d.solution.subs(T, 0) == pytest.approx(293.15, rel=1e-12)  # SI, absolute
    assert finals == pytest.approx([343.15] * 3, rel=1e-12)


def test_a_compound_unit_with_an_offset_scale_reads_as_a_difference():
    # pint reads J/degC as J per degree-Celsius difference: the same as J/K (pint docs,
    # "Temperature conversion"); a parameter of 5 kJ/degC is 5000 J/K
    d = derive("C*T' + T/R = P", ics={"T(0)": 0}, params={"C": "5 kJ/degC", "R": "0.2 K/W",
                                                        "P": "250 W"})
    assert dict(d.problem.parameters)["C"] == 5000


def test_a_display_unit_of_time_never_changes_the_dimension_check():
    # numbers written in the equation are in the SI unit of their place; t shown in ms
    plain = derive("y'' + 4*y = u(t - 1)", ics={"y(0)": 0, "y'(0)": 0})
    shown = derive("y'' + 4*y = u(t - 1)", ics={"y(0)": 0, "y'(0)": 0}, units={"t": "ms"})
    assert shown.solution == plain.solution
    assert shown.results["time_of_peak"].value.to("s").magnitude == pytest.approx(
        plain.results["time_of_peak"].magnitude, rel=1e-12)


def test_us_customary_units_with_many_digits_give_the_si_answer():
    # 1 lb = 0.45359237 kg, 1 lbf = 4.4482216152605 N, 1 in = 0.0254 m (NIST SP 811, App. B)
    us = derive("m*x'' + k*x = F*u(t)", ics={"x(0)": 0, "x'(0)": 0},
                params={"m": f"{1 / 0.45359237!r} lb",
                        "k": f"{1000 / (4.4482216152605 / 0.0254)!r} lbf/in", "F": "1 N"})
    si = derive("m*x'' + k*x = F*u(t)", ics={"x(0)": 0, "x'(0)": 0},
                params={"m": "1 kg", "k": "1000 N/m", "F": "1 N"})
    assert us.results["peak"].magnitude == pytest.approx(si.results["peak"].magnitude, rel=1e-9)
    assert us.results["natural_frequency"].magnitude == pytest.approx(
        si.results["natural_frequency"].magnitude, rel=1e-9)
