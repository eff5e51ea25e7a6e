"""core/symbolic/inverse.py: each partial-fraction term inverted through the rule table, against
sympy.inverse_laplace_transform; the second shifting theorem against SymPy too."""

import pytest
import sympy as sp

from derivpad.core.model.symbols import S, TAU
from derivpad.core.symbolic.algebra import poles_of
from derivpad.core.symbolic.inverse import invert_term, shift
from derivpad.core.symbolic.partial_fractions import partial_fractions

t = sp.Symbol("t", positive=True)


@pytest.mark.parametrize("numerator, denominator", [
    (2, S * (S ** 2 + 4 * S + 13)),
    (S + 3, (S + 1) ** 3),
    (5, (S ** 2 + 9) ** 2),
])
def test_inverse_of_each_term_against_sympy(numerator, denominator):
    terms = partial_fractions(sp.Integer(numerator) if isinstance(numerator, int)
                              else numerator, poles_of(sp.expand(denominator)))
    for term in terms:
        ours = invert_term(term).time.subs(TAU, t)
        ref = sp.inverse_laplace_transform(term.expr, S, t)   # SymPy as reference
        for x in (sp.Rational(3, 10), sp.Rational(17, 10), sp.Integer(4)):
            assert abs(complex(sp.N((ours - ref).subs(t, x), 30))) < 1e-25


def test_second_shift_against_sympy():
    # L⁻¹{e^{-2s}/(s+1)} = e^{-(t-2)} u(t-2) (the second shifting theorem, in any table of transforms; from memory)
    g = sp.exp(-TAU)
    ours = shift(g, sp.Integer(2))
    ref = sp.inverse_laplace_transform(sp.exp(-2 * S) / (S + 1), S, t)
    for x in (1.0, 2.5, 6.0):
        assert abs(float(ours.subs(sp.Symbol("t", real=True), x)) - float(ref.subs(t, x))) < 1e-15


def test_a_pure_sine_is_cited_as_the_sine_pair_only():
    # 3/(s² + 9) = sin 3t: the sine pair (any table of transforms; from memory)
    (term,) = partial_fractions(sp.Integer(3), poles_of(S ** 2 + 9))
    inv = invert_term(term)
    assert [r.id for r in inv.rules] == ["pair_sin"]
    (term,) = partial_fractions(S, poles_of(S ** 2 + 9))
    assert [r.id for r in invert_term(term).rules] == ["pair_cos"]
