"""The safe parser: notation, positions, and refusal of code (never evaluated)."""

import os
import subprocess

import pytest
import sympy as sp

from derivpad.core.reading.parse import T, parse_equation, parse_value
from derivpad.errors import ParseError, UnknownNameError, UnsafeInputError

y = sp.Function("y")(T)


def test_prime_notation_and_orders():
    eq = parse_equation("y'''' + y''' + y'' + y' + y = 0")
    assert eq.unknown == "y"
    assert sp.expand(eq.lhs - sum(y.diff(T, k) for k in range(1, 5)) - y) == 0


def test_parenthesised_order_is_a_derivative():
    eq = parse_equation("y^(4) + 2*y = 0")
    assert eq.lhs == y.diff(T, 4) + 2 * y


def test_implicit_multiplication_after_a_number():
    eq = parse_equation("2y' + 3t*y = 4(t - 1)")
    assert eq.lhs == 2 * y.diff(T) + 3 * T * y
    assert eq.rhs == 4 * T - 4


def test_caret_and_double_star_are_powers():
    a = parse_equation("y' = t^2 + t**3")
    assert a.rhs == T ** 2 + T ** 3


def test_functions_map_to_sympy():
    eq = parse_equation("y'' = u(t - 1) + delta(t - 2) + exp(-t) + sin(t) + cos(t) + sinh(t)"
                        " + cosh(t) + sqrt(2) + pi")
    assert eq.rhs == (sp.Heaviside(T - 1) + sp.DiracDelta(T - 2) + sp.exp(-T) + sp.sin(T)
                      + sp.cos(T) + sp.sinh(T) + sp.cosh(T) + sp.sqrt(2) + sp.pi)


def test_decimals_are_read_exactly():
    # 0.8 must be 4/5, not the binary float 0.8000000000000000444 (common practice, no source)
    assert parse_value("0.8") == sp.Rational(4, 5)
    assert parse_value("1.2e6") == 1200000
    assert parse_value("2.5E-3") == sp.Rational(1, 400)


def test_parameters_are_listed_in_order_of_appearance():
    eq = parse_equation("m*x'' + c*x' + k*x = F0*u(t - t1)")
    assert eq.unknown == "x"
    assert eq.names == ("m", "c", "k", "F0", "t1")


def test_term_positions_point_into_the_text():
    text = "y'' + 4*y' = 2*u(t - 1)"
    eq = parse_equation(text)
    assert [text[t.start:t.end] for t in eq.terms] == ["y''", "4*y'", "2*u(t - 1)"]


def test_unknown_may_be_written_with_argument():
    assert parse_equation("y''(t) + y(t) = 0").lhs == y.diff(T, 2) + y


@pytest.mark.parametrize("text, column", [
    ("y'' + = 1", 7),
    ("y'' + y = (1", 13),
    ("y'' + y", 7),
    ("y'' + y = 1 = 2", 13),
    ("y'' + 2 3 = 0", 9),
])
def test_malformed_text_reports_the_column(text, column):
    with pytest.raises(ParseError) as err:
        parse_equation(text)
    assert err.value.position + 1 == column
    assert "column" in str(err.value)


def test_unknown_function_is_named():
    with pytest.raises(UnknownNameError) as err:
        parse_equation("y'' + y = foo(t)")
    assert err.value.name == "foo" and err.value.position == 10


def test_shifted_unknown_is_refused():
    with pytest.raises(ParseError, match="delay equation"):
        parse_equation("y'' + y(t - 1) = 0")


def test_two_unknowns_are_refused():
    with pytest.raises(ParseError, match="more than one name"):
        parse_equation("y'' + x' = 0")


INJECTIONS = [
    "__import__('os').system('touch /tmp/derivpad_pwned')",
    "y'' = __import__('os').system('touch /tmp/derivpad_pwned')",
    "y'' = os.system('touch /tmp/derivpad_pwned')",
    "y'' = ().__class__.__bases__[0].__subclasses__()",
    "y'' = (lambda: 1)()",
    "y'' = [x for x in range(3)]",
    "y'' = {1: 2}",
    "y'' = exec('1')",
    "y'' = eval('1')",
    "y'' = sin.__globals__",
    "y'' = 'text'",
    "y'' = y; import os",
    "y'' = 1 if t else 0",
    "y'' = t @ t",
    "y'' = t # comment",
]


@pytest.mark.parametrize("text", INJECTIONS)
def test_code_injection_is_refused_and_nothing_runs(text, monkeypatch):
    canary = "/tmp/derivpad_pwned"
    if os.path.exists(canary):
        os.remove(canary)
    calls = []
    monkeypatch.setattr(os, "system", lambda *a: calls.append(a) or 0)
    monkeypatch.setattr(subprocess, "Popen", lambda *a, **k: calls.append(a))
    with pytest.raises((ParseError, UnknownNameError)) as err:
        parse_equation(text)
    assert str(err.value)
    assert calls == []
    assert not os.path.exists(canary)


def test_unsafe_constructs_get_the_unsafe_error_class():
    for text in ["y'' = os.system(1)", "y'' = __import__('x')", "y'' = [1]", "y'' = lambda"]:
        with pytest.raises(UnsafeInputError):
            parse_equation(text)


def test_parser_never_calls_sympify_or_eval(monkeypatch):
    def boom(*a, **k):
        raise AssertionError("text reached an evaluator")
    import builtins
    monkeypatch.setattr(sp, "sympify", boom)
    monkeypatch.setattr(sp, "parse_expr", boom)
    monkeypatch.setattr(builtins, "eval", boom)
    eq = parse_equation("m*x'' + c*x' + k*x = F0*(u(t - 0.5) - u(t - 1))")
    assert eq.unknown == "x"
