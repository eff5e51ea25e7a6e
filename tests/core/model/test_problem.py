"""The Problem value object: the numbers the user wrote as decimals."""

import sympy as sp

from derivpad import derive
from derivpad.core.model.problem import decimal_text


def test_decimal_text_of_terminating_rationals_only():
    # exact decimal expansions (a rational terminates iff its reduced denominator is 2^a·5^b;
    # common practice, no source)
    assert decimal_text(sp.Rational(6283, 50)) == "125.66"
    assert decimal_text(sp.Rational(1, 80)) == "0.0125"
    assert decimal_text(sp.Rational(-7, 100)) == "-0.07"
    assert decimal_text(sp.Rational(1, 3)) is None
    assert decimal_text(sp.Integer(4)) is None
    assert decimal_text(sp.Rational(1, 2 ** 60)) is None          # more than 12 figures


def test_written_decimals_come_from_the_equation_and_the_given_values():
    d = derive("L*i' + R*i = V0*sin(w*t)*u(t) + 0.25*u(t - 1.5)", ics={"i(0)": 0},
               params={"L": 0.8, "R": 40, "V0": 24.5, "w": "125.66 rad/s"}, checks="engine")
    written = dict(d.problem.written_decimals)
    assert written == {sp.Rational(1, 4): "0.25", sp.Rational(3, 2): "1.5",
                       sp.Rational(4, 5): "0.8", sp.Rational(49, 2): "24.5",
                       sp.Rational(6283, 50): "125.66"}
    # the algebra stays exact; the record shows the decimals as written
    assert d.problem.forcings[0].has(sp.Rational(6283, 50))
    text = d.to_text()
    assert "sin(125.66*t)" in text and "6283" not in text.split("2. ")[0]
    assert "u(t - 1.5)" in text
