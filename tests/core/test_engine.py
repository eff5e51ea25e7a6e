"""derive(): solutions against published results, SciPy integration and SymPy dsolve."""

import numpy as np
import pytest
import sympy as sp

import derivpad
from derivpad import derive, forcing
from derivpad.core.reading.parse import T
from derivpad.errors import ForcingError, SolveError, UnknownNameError, VerificationFailedError
from tests.reference import integrate

ZERO2 = {"y(0)": 0, "y'(0)": 0}


def _close_to_integration(d, t_end, n=60, rtol=1e-8):
    times = np.linspace(0, t_end, n)
    ref = integrate(d.problem, times, d.breakpoints, d.impulses)
    ours = d(times)
    scale = max(1e-12, np.max(np.abs(ref)))
    err = np.max(np.abs(ours - ref)) / scale
    assert err < rtol, err


def test_issue_example_matches_the_underdamped_step_formula():
    # x = (F/k)[1 - e^{-στ}(cos ω_d τ + (σ/ω_d) sin ω_d τ)], τ = t - 1, σ = 2, ω_d = 3
    # (underdamped step response, any vibration text; from memory)
    d = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2)
    tau = T - 1
    formula = sp.Rational(2, 13) * (1 - sp.exp(-2 * tau) * (sp.cos(3 * tau)
                                                            + sp.Rational(2, 3) * sp.sin(3 * tau)))
    for x in (1.3, 2, 4.5):
        assert abs(float(d.solution.subs(T, x) - formula.subs(T, x))) < 1e-14
    assert float(d.solution.subs(T, 0.5)) == 0
    _close_to_integration(d, 6)


def test_impulse_at_zero_acts_after_the_0_minus_conditions():
    # y'' + 9y = δ(t) from rest gives sin(3t)/3 (Lundberg, Miller & Trumper, IEEE CSM 2007;
    # from memory)
    d = derive("y'' + 9*y = delta(t)", ics=ZERO2)
    assert sp.simplify(d.solution - sp.sin(3 * T) / 3) == 0
    assert any("0⁻" in s.note for s in d.steps)


def test_resonant_forcing_gives_t_cos_terms():
    # y'' + 4y = sin 2t from rest: y = sin(2t)/8 - t cos(2t)/4 (undamped resonance; from memory)
    d = derive("y'' + 4*y = sin(2*t)", ics=ZERO2)
    assert sp.simplify(d.solution - (sp.sin(2 * T) / 8 - T * sp.cos(2 * T) / 4)) == 0


def test_delayed_resonant_forcing_against_integration():
    # SymPy 1.14 dsolve was seen to answer this one wrongly; SciPy is the reference here.
    d = derive("y'' + y = cos(t)*u(t - pi/2)", ics=ZERO2)
    _close_to_integration(d, 12)


def test_against_dsolve_where_it_answers():
    # y'' + 3y' + 2y = e^{-3t}, y(0) = 1, y'(0) = 0: SymPy dsolve as reference
    d = derive("y'' + 3*y' + 2*y = exp(-3*t)", ics={"y(0)": 1, "y'(0)": 0})
    y = sp.Function("y")
    ref = sp.dsolve(y(T).diff(T, 2) + 3 * y(T).diff(T) + 2 * y(T) - sp.exp(-3 * T), y(T),
                    ics={y(0): 1, y(T).diff(T).subs(T, 0): 0}).rhs
    assert sp.simplify(d.solution - ref) == 0


def test_issue_parameter_example_against_integration():
    d = derive("m*x'' + c*x' + k*x = F0*u(t - t1)", ics={"x(0)": 0, "x'(0)": 0},
               params={"m": 2, "c": 0.8, "k": 800, "F0": 50, "t1": 0.25})
    assert d.verification.passed
    _close_to_integration(d, 3, n=200)
    # final value F0/k (static deflection; common practice, no source)
    assert abs(d(np.array([400.0]))[0] - 50 / 800) < 1e-12


def test_symbolic_parameters_stay_symbolic_with_the_case_stated():
    d = derive("m*x'' + c*x' + k*x = F0*u(t)", ics={"x(0)": 0, "x'(0)": 0})
    assert d.problem.symbols == ("m", "c", "k", "F0")
    assert any("underdamped" in a and "c**2 - 4*k*m < 0" in a for a in d.assumptions)
    m, c, k, F0 = sp.symbols("m c k F0", positive=True)
    values = {m: 2, c: sp.Rational(3, 2), k: 50, F0: 7}
    wn = sp.sqrt(50 / 2)
    zeta = sp.Rational(3, 2) / (2 * sp.sqrt(50 * 2))
    wd = wn * sp.sqrt(1 - zeta ** 2)
    # underdamped step response (vibration texts; from memory)
    formula = 7 / 50 * (1 - sp.exp(-zeta * wn * T) * (sp.cos(wd * T) + zeta / sp.sqrt(1 - zeta ** 2)
                                                       * sp.sin(wd * T)))
    for x in (0.1, 0.7, 2.0):
        assert abs(float(d.solution.subs(values).subs(T, x) - formula.subs(T, x))) < 1e-13


def test_overdamped_case_can_be_chosen_for_symbols():
    d = derive("m*x'' + c*x' + k*x = F0", ics={"x(0)": 0, "x'(0)": 0}, regime="overdamped")
    assert any(a.startswith("overdamped") for a in d.assumptions)
    m, c, k, F0 = sp.symbols("m c k F0", positive=True)
    vals = {m: 1, c: 5, k: 4, F0: 4}   # roots -1, -4: x = 1 - 4/3 e^{-t} + 1/3 e^{-4t}
    ref = 1 - sp.Rational(4, 3) * sp.exp(-T) + sp.Rational(1, 3) * sp.exp(-4 * T)
    assert abs(float((d.solution.subs(vals) - ref).subs(T, 0.8))) < 1e-14


def test_critically_damped_repeated_pole():
    # y'' + 4y' + 4y = 4 from rest: 1 - (1 + 2t) e^{-2t} (critical damping; from memory)
    d = derive("y'' + 4*y' + 4*y = 4", ics=ZERO2)
    assert sp.simplify(d.solution - (1 - (1 + 2 * T) * sp.exp(-2 * T))) == 0
    assert "critically" in d.steps[3].note


def test_impulses_with_nonzero_initial_conditions():
    d = derive("y'' + 2*y' + 5*y = 3*delta(t) + 2*delta(t - 2)", ics={"y(0)": 1, "y'(0)": -1})
    _close_to_integration(d, 6)


def test_irreducible_quintic_gets_numeric_poles_step_by_step():
    eq = "y^(5) + 2*y^(4) + 3*y''' + 2*y'' + y' + 3*y = u(t - 1)"
    d = derive(eq, ics={f"y^({k})(0)": 0 for k in range(5)})
    assert any(p.numeric for p in d.poles)
    assert "Numerical" in d.steps[4].substeps[0].substeps[0].note or any(
        "numerically" in s.note for s in d.steps[4].substeps[0].substeps)
    _close_to_integration(d, 4, rtol=1e-7)


def test_floating_point_coefficients():
    d = derive("y''' + 2.1*y'' + 3.3*y' + 1.7*y = 2.5*u(t - 0.3)", ics={"y(0)": 0.1, "y'(0)": 0,
                                                                        "y''(0)": 0})
    _close_to_integration(d, 8)


def test_order_ten():
    eq = "y^(10) + y = delta(t - 1)"
    d = derive(eq, ics={f"y^({k})(0)": 0 for k in range(10)})
    _close_to_integration(d, 3, rtol=1e-6)


def test_fifty_segment_load_history():
    rng = np.random.default_rng(7)
    pts = [(0, 0)] + [(0.02 * i, int(v)) for i, v in enumerate(rng.integers(-5, 6, 49), 1)] + [(1.0, 0)]
    d = derive("m*x'' + c*x' + k*x = F", ics={"x(0)": 0, "x'(0)": 0},
               params={"m": 2, "c": 0.8, "k": 800, "F": forcing.table(pts)})
    assert len(d.breakpoints) >= 45
    _close_to_integration(d, 1.5, n=300)


def test_half_sine_shock():
    d = derive("y'' + 4*y = sin(pi*t)*(u(t) - u(t - 1))", ics=ZERO2)
    _close_to_integration(d, 5)


def test_piecewise_forcing_is_converted_with_its_rule():
    f = sp.Piecewise((T, T < 1), (1, T < 3), (0, True))
    y = sp.Function("y")
    d = derive(sp.Eq(y(T).diff(T, 2) + y(T), f), ics={y(0): 0, y(T).diff(T).subs(T, 0): 0})
    assert "piecewise_to_step" in [r.id for r in d.steps[0].all_rules]
    _close_to_integration(d, 8)


def test_derivation_api_shape():
    d = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2)
    titles = [s.title for s in d.steps]
    assert titles[:3] == ["Problem", "Transform both sides", "Transform the derivatives"]
    assert len(d.steps) == 7
    for s in d.steps:
        assert s.title and s.note and isinstance(s.latex, str)
        if s.rule is not None:
            assert s.rule.name and s.rule.statement
    assert "Y(s)" in str(d.transform.atoms(sp.Function)) or d.transform.has(sp.exp)
    pw = d.piecewise()
    for x in (0.5, 1.5, 3.0):
        assert abs(float(pw.subs(T, x) - d.solution.subs(T, x))) < 1e-15
    vals = d(np.array([-1.0, 0.0, 0.5, 2.0]))
    assert np.isnan(vals[0]) and vals[1] == 0 and vals[2] == 0
    assert abs(vals[3] - float(d.solution.subs(T, 2))) < 1e-14
    text, tex = d.to_text(), d.to_latex()
    assert "Partial fractions" in text and "qualified engineer" in " ".join(text.split())
    assert r"u(t - 1)" in tex and r"\theta" not in tex


def test_engine_refuses_to_return_a_wrong_answer(monkeypatch):
    from derivpad.core.symbolic import stages
    real = stages.partial_fractions

    def corrupted(numerator, poles):
        terms = real(numerator, poles)
        first = terms[0]
        return [type(first)(first.pole, first.power, first.re * sp.Rational(101, 100), first.im)] + terms[1:]

    monkeypatch.setattr(stages, "partial_fractions", corrupted)
    with pytest.raises(VerificationFailedError) as err:
        derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics=ZERO2)
    assert err.value.checks and not all(c.passed for c in err.value.checks)


def test_forcing_without_a_table_pair_is_refused():
    with pytest.raises(ForcingError, match="no pair in the transform table"):
        derive("y'' + y = 1/(t + 1)", ics=ZERO2)
    with pytest.raises(UnknownNameError, match="exp"):
        derive("y'' + y = e^(-2*t)", ics=ZERO2)


def test_symbolic_cubic_needs_values():
    with pytest.raises(SolveError, match="give numerical values"):
        derive("y''' + a*y'' + b*y' + y = 1", ics={"y(0)": 0, "y'(0)": 0, "y''(0)": 0})


def test_public_derive_is_the_engine():
    assert derivpad.derive is derive
