"""The independent checks: they pass on right answers, catch wrong ones, and say when they
cannot run or do not apply."""

import dataclasses
import math

import numpy as np
import pytest
import sympy as sp

from derivpad import ParameterError, VerificationFailedError, derive
from derivpad.core.engine import compile_numbers
from derivpad.core.symbolic.stages import solve_stages
from derivpad.core.checking.numeric_checks import integration_check, inversion_check
from derivpad.core.reading.parse import S
from derivpad.core.reading.read_problem import make_problem

ZERO2 = {"y(0)": 0, "y'(0)": 0}
NAMES = ["ODE on every interval", "Initial conditions at 0+", "Jump conditions at breakpoints",
         "Numerical integration", "Numerical inversion of Y(s)", "Initial-value theorem",
         "Final-value theorem"]


def test_all_checks_run_and_pass_on_a_delayed_pulse():
    d = derive("y'' + 2*y' + 26*y = 3*(u(t - 1) - u(t - 2))", ics=ZERO2)
    assert [c.name for c in d.verification.checks] == NAMES
    for c in d.verification.checks:
        assert c.method and c.status == "passed" and c.error <= c.tolerance
    assert d.verification.passed


def test_final_value_theorem_is_not_applied_to_an_undamped_system():
    # poles ±2i: sY(s) has poles on the imaginary axis, so lim y(t) does not exist
    d = derive("y'' + 4*y = u(t)", ics=ZERO2)
    fvt = d.verification.checks[-1]
    assert fvt.status == "not applicable" and "imaginary axis" in fvt.detail
    assert d.verification.passed


def test_final_value_matches_static_deflection():
    # m x'' + c x' + k x = F0 u(t): x(∞) = F0/k (statics; common practice, no source)
    d = derive("m*x'' + c*x' + k*x = F0*u(t)", ics={"x(0)": 0, "x'(0)": 0},
               params={"m": 3, "c": 4, "k": 300, "F0": 12})
    fvt = d.verification.checks[-1]
    assert fvt.status == "passed" and "theorem 0.04" in fvt.detail


def test_symbolic_parameters_without_values_do_not_count_as_verified():
    d = derive("m*x'' + c*x' + k*x = F0*u(t)", ics={"x(0)": 0, "x'(0)": 0})
    statuses = {c.name: c.status for c in d.verification.checks}
    assert statuses["Numerical integration"] == "not run"
    assert "values=" in d.verification.checks[3].detail
    assert not d.verification.passed
    assert d.results == {}


def test_values_let_the_numerical_checks_run_on_a_symbolic_derivation():
    d = derive("m*x'' + c*x' + k*x = F0*u(t)", ics={"x(0)": 0, "x'(0)": 0},
               values={"m": 2, "c": 1, "k": 50, "F0": 10})
    assert d.problem.symbols == ("m", "c", "k", "F0")
    assert d.verification.passed
    assert abs(d.results["final_value"].magnitude - 10 / 50) < 1e-12
    with pytest.raises(ParameterError, match="not a symbolic parameter"):
        derive("m*x'' + k*x = 1", ics={"x(0)": 0, "x'(0)": 0}, params={"m": 1}, values={"m": 2})


def test_tolerances_can_be_set_per_call():
    # a failed check stops the answer, naming the check, its error and tolerance
    with pytest.raises(VerificationFailedError, match="Numerical integration: error .* > "
                                                      "tolerance 1e-30"):
        derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2, tolerances={"integration": 1e-30})
    d = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2, tolerances={"integration": 1e-30},
               on_failure="return")
    check = d.verification.checks[3]
    assert check.tolerance == 1e-30 and check.status == "FAILED"
    assert not d.verification.passed
    # no engineering result from an unverified derivation: each absent, with the reason
    assert [r.magnitude for r in d.results.values()] == [None]
    assert "verification failed" in d.results["verification"].reason
    assert "NOT VERIFIED" in d.to_text()
    with pytest.raises(ParameterError, match="unknown tolerance 'speed'"):
        derive("y' + y = 1", ics={"y(0)": 0}, tolerances={"speed": 1})


def _numbers(equation, ics):
    problem = make_problem(equation, ics, None, None, None)
    return compile_numbers(problem, solve_stages(problem)).at({})


def test_integration_check_catches_a_wrong_closed_form():
    # closed form of y'' + 4y = u(t) from rest is (1 - cos 2t)/4 (SymPy dsolve agrees; common
    # practice, no source); give it 1 % wrong
    wrong = lambda t: 1.01 * (1 - np.cos(2 * np.asarray(t))) / 4  # noqa: E731
    numbers = _numbers("y'' + 4*y = u(t)", ZERO2)
    model = dataclasses.replace(numbers.models["y"], closed_form=wrong)
    numbers = dataclasses.replace(numbers, models={"y": model})
    check, samples = integration_check(numbers, 6.0, 1e-7)
    assert check.status == "FAILED" and 5e-3 < check.error < 2e-2
    assert samples.times[-1] == 6.0 and len(samples.integrated["y"]) == len(samples.times)


def test_inversion_check_catches_a_wrong_closed_form():
    right = lambda t: (1 - np.cos(2 * np.asarray(t))) / 4  # noqa: E731
    parts = [(0.0, sp.lambdify(S, 1 / (S * (S ** 2 + 4)), modules="mpmath"))]
    ok = inversion_check(parts, right, 5.0, [], 0.5, 1e-7)
    assert ok.status == "passed" and ok.error < 1e-12
    bad = inversion_check(parts, lambda t: right(t) + 1e-4, 5.0, [], 0.5, 1e-7)
    assert bad.status == "FAILED"


def test_checks_with_impulses_and_initial_values():
    d = derive("y'' + 2*y' + 5*y = 3*delta(t) + 2*delta(t - 2)", ics={"y(0)": 1, "y'(0)": -1})
    assert d.verification.passed
    ivt = d.verification.checks[5]
    # y(0+) = y(0-) = 1: an impulse changes y' only (second-order ODE)
    assert ivt.status == "passed" and "solution 1" in ivt.detail


def test_samples_cover_the_window_with_breakpoints():
    d = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2)
    samples = d.verification.samples
    assert 1.0 in samples.breakpoints
    # window: last breakpoint + max(5 time constants, 2 periods) = 1 + max(2.5, 4.19)
    assert math.isclose(samples.times[-1], 1 + 2 * 2 * math.pi / 3, rel_tol=1e-12)


def test_engine_only_checks_leave_the_derivation_unverified():
    d = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2, checks="engine")
    assert [c.status for c in d.verification.checks][3:] == ["not run"] * 4
    assert not d.verification.passed and d.results == {}
    with pytest.raises(ParameterError, match="checks must be"):
        derive("y' + y = 1", ics={"y(0)": 0}, checks="some")


# -- the time-domain integrator itself ------------------------------------------------------

def test_exponential_weights_integrate_polynomials_exactly_for_a_stiff_rate():
    # ∫₀^h e^{a(h−τ)} τ^k dτ for a = −10⁴, h = 0.3 (a·h = −3000: stiff) against mpmath quad
    # at 40 digits (reference library); the nodes' weights are exact for degree < nodes.
    import mpmath
    from derivpad.core.checking.numeric_checks import _exponential_weights
    a, h = -1.0e4, 0.3
    phi, theta, weights = _exponential_weights(np.array([[a]]), h, 9)
    assert phi[0, 0] == pytest.approx(math.exp(a * h), abs=1e-300)
    with mpmath.workdps(40):
        for k in (0, 1, 4, 8):
            exact = float(mpmath.quad(lambda tau: mpmath.e ** (a * (h - tau)) * tau ** k,
                                      [0, h - 1e-3, h]))
            ours = float(sum(weights[q, 0, 0] * (theta[q] * h) ** k for q in range(9)))
            assert ours == pytest.approx(exact, rel=1e-11)


def test_integration_of_a_stiff_equation_matches_its_textbook_solution():
    # y'' + 10000.001 y' + 10 y = u(t), y(0) = y'(0) = 0: roots −0.001 and −10000, so
    # y = 1/10 + A e^{−0.001 t} + B e^{−10000 t} with A = −10000/(10·9999.999),
    # B = 0.001/(10·9999.999) (partial fractions by hand; common practice, no source).
    from derivpad.core.checking.numeric_checks import integrate
    numbers = _numbers("y'' + 10000.001*y' + 10*y = u(t)", ZERO2)
    times = np.linspace(0.0, 3000.0, 301)
    lam = 9999.999
    exact = 0.1 - (1e4 / (10 * lam)) * np.exp(-1e-3 * times) \
        + (1e-3 / (10 * lam)) * np.exp(-1e4 * times)
    ours = integrate(numbers, times)["y"]
    assert np.max(np.abs(ours - exact)) < 1e-10 * 0.1


def test_integration_refines_a_fast_forcing_against_scipy():
    # a forcing 40× faster than the grid step: the substeps are refined until the two
    # interpolation orders agree; reference: SciPy solve_ivp (DOP853, rtol 1e-12), tests/reference.py
    from derivpad.core.checking.numeric_checks import integrate
    from tests.reference import integrate as reference
    equation = "y'' + 0.4*y' + 9*y = sin(400*t)*u(t)"
    numbers = _numbers(equation, ZERO2)
    times = np.linspace(0.0, 4.0, 41)      # steps of 0.1: 40 rad of forcing per step
    ours = integrate(numbers, times)["y"]
    ref = reference(make_problem(equation, ZERO2, None, None, None), times)
    assert np.max(np.abs(ours - ref)) < 1e-9 * np.max(np.abs(ref))
