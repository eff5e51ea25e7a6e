"""Our notation printers: exact strings (u for the step, δ, primes, delay factors in front)."""

import sympy as sp

from derivpad.core.reading.parse import S, T
from derivpad.core.symbolic.transform import Laplace
from derivpad.render.latex import to_latex
from derivpad.render.notation import latex_expr, text_expr
from derivpad.render.text import to_text

y = sp.Function("y")(T)


def test_unit_step_is_u_not_theta():
    assert latex_expr(sp.Heaviside(T - 1)) == "u(t - 1)"
    assert text_expr(3 * sp.Heaviside(T - 2)) == "3*u(t - 2)"


def test_impulse():
    assert latex_expr(sp.DiracDelta(T - 2)) == r"\delta(t - 2)"
    assert text_expr(sp.DiracDelta(T)) == "delta(t)"


def test_derivatives_in_prime_notation_highest_first():
    assert latex_expr(y.diff(T, 2) + 4 * y.diff(T) + 13 * y) == "y''(t) + 4 y'(t) + 13 y(t)"
    assert text_expr(y.diff(T, 5)) == "y^(5)(t)"
    assert latex_expr(y.diff(T, 4)) == "y^{(4)}(t)"


def test_delay_factor_stands_in_front():
    expr = sp.Mul(sp.exp(-2 * S), 1 / (S * (S + 1)), evaluate=False)
    assert latex_expr(expr) == r"e^{- 2 s}\,\frac{1}{s \left(s + 1\right)}"
    assert text_expr(expr) == "exp(-2*s)*1/(s*(s + 1))"


def test_transform_node():
    assert latex_expr(Laplace(y)) == r"\mathcal{L}\left\{y(t)\right\}"
    assert text_expr(Laplace(y.diff(T))) == "ℒ{y'(t)}"   # no clash with an inductance L


def test_floats_show_six_significant_digits():
    assert latex_expr(sp.Float("0.123456789") * T) == "0.123457 t"
    assert text_expr(sp.Float("1.23456789e-7")) == "1.23457e-7"
    assert latex_expr(sp.Float("1.23456789e-7")) == r"1.23457 \cdot 10^{-7}"


def test_labels_print_through_their_own_printer_methods():
    # notation as objects (core/labels.py): no name is decoded; what a checker reads on a
    # hand calc sheet (common practice, no source)
    from derivpad.core.model.labels import InitialValue, PartLabel, PolynomialLabel
    assert latex_expr(InitialValue("y", 1)) == "y'(0^{-})"
    assert text_expr(InitialValue("y", 1)) == "y'(0-)"
    assert latex_expr(InitialValue("x2", 4)) == "x_{2}^{(4)}(0^{-})"
    assert latex_expr(PartLabel("Y", 1)) == "Y_{1}(s)"
    assert latex_expr(PolynomialLabel("Delta")) == r"\Delta(s)"
    assert text_expr(PolynomialLabel("Delta")) == "Δ(s)"
    assert latex_expr(PolynomialLabel("P") * 2) == "2 P(s)"


def test_renderer_settings_are_validated():
    import pytest
    from derivpad.errors import RenderSettingError
    with pytest.raises(RenderSettingError, match="Unknown setting 'colour'"):
        to_text(sp.Integer(1), colour=True)
    with pytest.raises(RenderSettingError, match="must be one of"):
        to_latex(sp.Integer(1), document="yes")


def test_the_imaginary_unit_is_i_or_j_as_chosen():
    # electrical engineers write j (common practice, no source)
    z = sp.Rational(-3, 10) - sp.I / 10
    assert text_expr(z) == "-3/10 - i/10"
    assert text_expr(z, imaginary_unit="j") == "-3/10 - j/10"
    assert latex_expr(z, imaginary_unit="j") == r"- \frac{3}{10} - \frac{j}{10}"
    import derivpad
    d = derivpad.derive("y'' + 2*y' + 5*y = u(t)", {"y(0)": 0, "y'(0)": 0})
    assert " j" in to_text(d, imaginary_unit="j") and "*I" not in to_text(d)


def test_decimals_written_by_the_user_print_as_written():
    import sympy as sp
    from derivpad.render.notation import latex_expr, text_expr
    t = sp.Symbol("t")
    dec = {sp.Rational(6283, 50): "125.66", sp.Rational(4, 5): "0.8"}
    assert latex_expr(sp.sin(sp.Rational(6283, 50) * t), decimals=dec) == \
        r"\sin{\left(125.66 t \right)}"
    assert text_expr(3 - sp.Rational(4, 5) * t, decimals=dec) == "3 - 0.8*t"
    assert text_expr(sp.Rational(1, 80) * t, decimals=dec) == "t/80"   # algebra stays exact
    assert latex_expr(sp.Rational(6283, 50)) == r"\frac{6283}{50}"      # without the setting
