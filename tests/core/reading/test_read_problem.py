"""Problem checks: linearity, constant coefficients, initial conditions, parameters, Eq input."""

import pytest
import sympy as sp

from derivpad.core.reading.parse import T
from derivpad.core.reading.read_problem import make_problem
from derivpad.errors import (EquationError, InitialConditionError, NonlinearTermError,
                             ParameterError, VariableCoefficientError)

ZERO2 = {"y(0)": 0, "y'(0)": 0}


def test_coefficients_and_forcing_are_separated():
    p = make_problem("m*x'' + c*x' + k*x = F0*u(t - t1)", {"x(0)": 0, "x'(0)": 0},
                     {"m": 2, "c": 0.8, "k": 800, "F0": 50, "t1": 0.25})
    assert p.coefficients == (800, sp.Rational(4, 5), 2)
    assert p.forcing == 50 * sp.Heaviside(T - sp.Rational(1, 4))
    assert p.order == 2 and p.symbols == ()


def test_forcing_terms_on_the_left_move_to_the_right():
    p = make_problem("y'' + y - sin(t) = 1", ZERO2)
    assert p.forcing == 1 + sp.sin(T)


@pytest.mark.parametrize("text, term", [
    ("y*y' = 1", "y*y'"),
    ("y'' + sin(y) = 0", "sin(y)"),
    ("y'' + y^2 = 0", "y^2"),
    ("y'' + exp(y') = 0", "exp(y')"),
    ("y'' + 1/y = 0", "1/y"),
    ("y'' = u(t - y)", "u(t - y)"),
])
def test_nonlinear_terms_are_named_with_their_position(text, term):
    with pytest.raises(NonlinearTermError) as err:
        make_problem(text, ZERO2)
    assert err.value.term == term
    assert text[err.value.position:].startswith(term)


@pytest.mark.parametrize("text", ["t*y'' + y = 0", "y'' + exp(-t)*y = 0", "y'' + u(t-1)*y = 0"])
def test_variable_coefficients_are_refused(text):
    with pytest.raises(VariableCoefficientError, match="varies with t"):
        make_problem(text, ZERO2)


def test_missing_initial_conditions_are_listed():
    with pytest.raises(InitialConditionError) as err:
        make_problem("y''' + y = 0", {"y(0)": 0})
    assert err.value.missing == ("y'(0)", "y''(0)")
    assert "missing: y'(0), y''(0)" in str(err.value)


def test_extra_initial_conditions_are_refused():
    with pytest.raises(InitialConditionError) as err:
        make_problem("y' + y = 0", {"y(0)": 0, "y'(0)": 1})
    assert err.value.extra == ("y'(0)",)


def test_conditions_away_from_zero_are_refused():
    with pytest.raises(InitialConditionError, match="t = 2"):
        make_problem("y'' + y = 0", {"y(0)": 0, "y'(2)": 1})


def test_conditions_for_another_name_are_refused():
    with pytest.raises(InitialConditionError, match="unknown is 'y'"):
        make_problem("y'' + y = 0", {"y(0)": 0, "x'(0)": 1})


def test_zero_minus_spellings_are_accepted():
    p = make_problem("y'' + y = 0", {"y(0-)": 1, "y'(0^-)": 2})
    assert p.initial_values == ((1, 2),)


def test_sympy_eq_and_sympy_keys():
    t = sp.Symbol("t")
    yf = sp.Function("y")
    k = sp.Symbol("k")
    eq = sp.Eq(yf(t).diff(t, 2) + k * yf(t), sp.Heaviside(t - 1))
    p = make_problem(eq, {yf(0): 1, yf(t).diff(t).subs(t, 0): 0}, {"k": 4})
    assert p.coefficients == (4, 0, 1)
    assert p.initial_values == ((1, 0),)
    assert p.forcing == sp.Heaviside(T - 1)


def test_unknown_parameter_names_are_refused():
    with pytest.raises(ParameterError, match="'q' does not appear"):
        make_problem("y'' + k*y = 0", ZERO2, {"q": 1})


@pytest.mark.parametrize("value", [float("nan"), float("inf"), "abc(", True, [1]])
def test_bad_parameter_values_are_refused(value):
    with pytest.raises(ParameterError):
        make_problem("y'' + k*y = 0", ZERO2, {"k": value})


def test_algebraic_equation_is_not_an_ode():
    with pytest.raises(EquationError):
        make_problem("y = u(t)", {}, unknown="y")


def test_leading_coefficient_zero_by_values():
    with pytest.raises(ParameterError, match="order drops"):
        make_problem("m*y'' + y = 0", ZERO2, {"m": 0})


def test_a_users_own_sympy_t_is_time():
    # sympy.Symbol("t") without assumptions, in a load given as a parameter and in the
    # documented Piecewise form: the same solution as the parser's t (by hand:
    # (1 - cos 2(t - 1))/4 after t = 1)
    t = sp.Symbol("t")
    from derivpad import derive
    rest = {"y(0)": 0, "y'(0)": 0}
    step = derive("y'' + 4*y = F", ics=rest, params={"F": sp.Heaviside(t - 1)})
    text = derive("y'' + 4*y = u(t - 1)", ics=rest)
    assert sp.simplify(step.solution - text.solution) == 0
    window = derive("y'' + 4*y = F", ics=rest, params={"F": sp.Piecewise((1, t < 2), (0, True))})
    both = derive("y'' + 4*y = u(t) - u(t - 2)", ics=rest)
    assert sp.simplify(window.solution - both.solution) == 0
