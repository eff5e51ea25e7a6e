"""The modes of a closed form (core/modes.py): evaluation, derivative, re-expansion.

References: SymPy's own lambdify and diff of the same expression (a general-purpose library,
not derivpad's code path), and closed forms written out by hand.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp

from derivpad.core.checking.modes import Modes, ModeTable, NotAModeSum, symbolic_modes
from derivpad.core.reading.parse import T

H = sp.Heaviside
EXPRS = [
    (1 - sp.exp(-2 * T) * sp.cos(3 * T)) + (sp.Rational(1, 2) - (T - 1) * sp.exp(1 - T)) * H(T - 1),
    T ** 2 * sp.exp(-T) * sp.sin(2 * T + 1) - 3 * H(T - 2) * (T - 2) * sp.cos(5 * (T - 2)),
    sp.exp(-T / 10) * (2 * sp.cos(4 * T) - sp.sin(4 * T)) * H(T - sp.Rational(3, 2)),
]


@pytest.mark.parametrize("expr", EXPRS)
def test_modes_evaluate_as_sympy_lambdify_does(expr):
    m = Modes.of(expr)
    ts = np.linspace(0, 6, 301)
    ref = sp.lambdify(T, expr.replace(H, lambda x, *_: sp.Piecewise((1, x >= 0), (0, True))),
                      "numpy")(ts)
    assert np.allclose(m(ts), ref, rtol=1e-12, atol=1e-12)
    d_ref = sp.lambdify(T, sp.diff(expr, T).replace(sp.DiracDelta, lambda *a: 0).replace(
        H, lambda x, *_: sp.Piecewise((1, x >= 0), (0, True))), "numpy")
    off = ts[(np.abs(ts - 1) > 1e-9) & (np.abs(ts - 2) > 1e-9) & (np.abs(ts - 1.5) > 1e-9)]
    assert np.allclose(m.derivative()(off), d_ref(off), rtol=1e-11, atol=1e-11)


@pytest.mark.parametrize("expr", EXPRS)
def test_the_tail_is_the_same_function_after_the_last_switch(expr):
    m = Modes.of(expr)
    tail = m.tail()
    last = max(m.breakpoints, default=0.0)
    ts = last + np.linspace(0, 5, 101)
    assert np.allclose(tail(ts), m(ts), rtol=1e-12, atol=1e-12)


def test_delayed_ramps_that_cancel_leave_a_constant():
    # t·u(t) - (t - 1)·u(t - 1) = 1 for t ≥ 1 (by hand)
    tail = Modes.of(T - (T - 1) * H(T - 1)).tail()
    assert len(tail) == 1 and tail.power[0] == 0 and tail.cos[0] == pytest.approx(1.0)


def test_symbolic_modes_keep_parameters():
    k, m = sp.symbols("k m", positive=True)
    rows = symbolic_modes(sp.exp(-k * T / m) * H(T - m))
    assert rows == ((m, 0, -k / m, 0, sp.exp(-k), 0),)
    table = ModeTable(sp.exp(-k * T / m) * H(T - m), ("k", "m"))
    assert table.at((2.0, 1.0))(np.array([0.5, 2.0]))[1] == pytest.approx(np.exp(-4.0))


def test_nearly_equal_poles_are_added_in_extended_precision():
    # (e^{-at} - e^{-bt})/(b - a) with b - a = 1e-16 relative: float sums lose every digit;
    # the limit a → b is t e^{-at} (by hand)
    a = sp.Rational(3, 10)
    b = a + sp.Rational(1, 10 ** 17)
    m = Modes.of((sp.exp(-a * T) - sp.exp(-b * T)) / (b - a))
    assert m.fragile
    ts = np.array([1.0, 5.0, 20.0])
    assert np.allclose(m(ts), ts * np.exp(-0.3 * ts), rtol=1e-12)


def test_a_product_of_two_trigonometric_factors_is_not_a_mode_sum():
    with pytest.raises(NotAModeSum):
        symbolic_modes(sp.sin(T) * sp.cos(T) * sp.exp(T ** 2))
