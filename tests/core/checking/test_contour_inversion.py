"""Talbot's and Cohen's inversions: the ball-arithmetic route for a ratio of polynomials and
the mpmath route for any callable, each against mpmath's own ``invertlaplace`` and against
a closed-form inverse."""

import math

import mpmath
import pytest
import sympy as sp

from derivpad.core.checking.contour_inversion import cohen, talbot
from derivpad.core.checking.numeric_model import BoundRational, RationalPart
from derivpad.core.reading.parse import S

# F(s) = 1/((s + a)² + b²) ↔ f(t) = e^{-at} sin(bt)/b: the damped-sine pair (the first
# shifting theorem on sin(bt)/b ↔ 1/(s² + b²); common practice, no source)
A, B = sp.Rational(3, 10), 2
DAMPED = 1 / ((S + A) ** 2 + B ** 2)


def damped_sine(t):
    return math.exp(-0.3 * t) * math.sin(2 * t) / 2


def rational(expr):
    return BoundRational(RationalPart.make(expr), ())


def as_mpmath(expr):
    return sp.lambdify(S, expr, modules="mpmath")


@pytest.mark.parametrize("method,ours", [("talbot", talbot), ("cohen", cohen)])
@pytest.mark.parametrize("t", [0.01, 0.7, 3.0])
def test_the_ball_route_gives_mpmaths_value(method, ours, t):
    # reference: mpmath invertlaplace with the same method at the same requested digits
    with mpmath.workdps(20):
        ref = float(mpmath.invertlaplace(as_mpmath(DAMPED), t, method=method))
    assert ours(rational(DAMPED), t, 20) == pytest.approx(ref, rel=1e-14, abs=1e-18)


@pytest.mark.parametrize("method,ours", [("talbot", talbot), ("cohen", cohen)])
def test_the_mpmath_route_gives_mpmaths_value(method, ours):
    fn = as_mpmath(DAMPED)
    assert not hasattr(fn, "coefficients")
    with mpmath.workdps(20):
        ref = float(mpmath.invertlaplace(fn, 1.3, method=method))
    assert ours(fn, 1.3, 20) == pytest.approx(ref, rel=1e-14)


@pytest.mark.parametrize("ours", [talbot, cohen])
@pytest.mark.parametrize("t", [0.05, 1.0, 4.0])
def test_both_methods_give_the_damped_sine(ours, t):
    assert ours(rational(DAMPED), t, 20) == pytest.approx(damped_sine(t), rel=1e-12, abs=1e-15)


def test_a_higher_order_transform_with_parameters():
    # 2/(s·(s² + 2ζωs + ω²)) with ω = 10, ζ = 0.05 (a step response of a lightly damped
    # oscillator, static value 2/ω²): against SymPy's inverse_laplace_transform
    w, z = sp.Symbol("w", positive=True), sp.Symbol("z", positive=True)
    expr = 2 / (S * (S ** 2 + 2 * z * w * S + w ** 2))
    part = BoundRational(RationalPart.make(expr, (w, z)), (sp.Integer(10), sp.Rational(1, 20)))
    t = sp.Symbol("t", positive=True)
    exact = sp.inverse_laplace_transform(expr.subs({w: 10, z: sp.Rational(1, 20)}), S, t)
    for time in (0.2, 0.9, 1.7):
        want = float(exact.subs(t, time))
        assert talbot(part, time, 20) == pytest.approx(want, rel=1e-12)
        assert cohen(part, time, 20) == pytest.approx(want, rel=1e-12)


def test_an_infinite_coefficient_gives_nan_not_a_number_that_looks_right():
    # a coefficient that overflowed must not be read as zero (the ball route would then
    # invert a different transform)
    from derivpad.core.checking.contour_inversion import _arb
    assert str(_arb(mpmath.inf)) == "nan" and str(_arb(mpmath.nan)) == "nan"
    assert _arb(mpmath.mpf(0)) == 0 and _arb(mpmath.mpf(-2.5)) == -2.5
