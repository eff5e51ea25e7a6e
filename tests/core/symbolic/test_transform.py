"""core/symbolic/transform.py: the derivative rule with the values at 0⁻, and a forcing's pieces
grouped by delay and transformed, against sympy.laplace_transform."""

import sympy as sp

from derivpad.core.model.symbols import S, T
from derivpad.core.reading.forcing import heaviside_pieces
from derivpad.core.symbolic.transform import Ysym, delayed, derivative_transform, \
    transform_groups


def test_derivative_rule():
    # L{y''} = s² Y - s y(0⁻) - y'(0⁻) (the derivative theorem; A&S 29.2.4, from memory)
    y0, y1 = sp.symbols("y0 y1")
    assert sp.expand(derivative_transform("y", 2, (y0, y1))
                     - (S ** 2 * Ysym("y") - S * y0 - y1)) == 0
    assert str(Ysym("x1").func) == "X1"


def test_groups_of_a_pulse_train_against_sympy():
    f = 3 * sp.Heaviside(T) - 3 * sp.Heaviside(T - 1) + 2 * (T - 2) * sp.Heaviside(T - 2)
    pieces, _ = heaviside_pieces(f)
    groups, steps = transform_groups(pieces)
    ours = sp.Add(*[delayed(g.delay, sp.Add(*[t.expr for t in g.terms]) + g.impulse_area)
                    for g in groups])
    ref = sp.laplace_transform(f, T, S, noconds=True)   # SymPy as reference
    assert sp.simplify(ours - ref) == 0
    assert sorted(g.delay for g in groups) == [0, 1, 2]
    assert steps and all(s.rule is not None for s in steps)
