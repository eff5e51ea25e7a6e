"""core/symbolic/partial_fractions.py: each split sums back to the rational function, and
matches sympy.apart term by term, for simple, repeated and complex poles."""

import pytest
import sympy as sp

from derivpad.core.model.symbols import S
from derivpad.core.symbolic.algebra import poles_of
from derivpad.core.symbolic.partial_fractions import partial_fractions


@pytest.mark.parametrize("numerator, denominator", [
    (2, S * (S ** 2 + 4 * S + 13)),
    (S + 3, (S + 1) ** 3 * (S + 2)),
    (5 * S ** 2 + 1, (S ** 2 + 1) ** 2 * (S + 4)),
    (2, S * (S + 1) * (S + 2) * (S ** 2 + 2 * S + 5) * (S ** 2 + 9)),   # order 7
])
def test_terms_sum_to_the_function_and_agree_with_apart(numerator, denominator):
    den = sp.expand(denominator)
    terms = partial_fractions(sp.expand(numerator), poles_of(den))
    total = sp.Add(*[t.expr for t in terms])
    f = numerator / den
    assert sp.simplify(total - f) == 0
    assert sp.simplify(total - sp.apart(f, S)) == 0   # SymPy apart as reference
    # one term per pole and power: simple poles once, a k-fold pole k times
    powers = sorted((t.pole.value, t.power) for t in terms if t.pole.kind == "real")
    assert len(powers) == len(set(powers))


def test_a_residue_is_the_cover_up_value():
    # 2/(s(s² + 4s + 13)): the residue at s = 0 is 2/13 (cover-up rule; common practice,
    # no source)
    terms = partial_fractions(sp.Integer(2), poles_of(sp.expand(S * (S ** 2 + 4 * S + 13))))
    at_zero = [t for t in terms if t.pole.kind == "real" and t.pole.value == 0]
    assert at_zero[0].re == sp.Rational(2, 13)


def test_steps_name_each_coefficient_and_cite_exactly_the_rules_used():
    from derivpad.core.model.labels import Coefficient
    from derivpad.core.symbolic.partial_fractions import fraction_steps
    from derivpad.core.model.labels import PartLabel
    # (s + 3)/(s·((s + 1)² + 4)): a simple pole at 0 and the pair -1 ± 2i
    den = sp.expand(S * ((S + 1) ** 2 + 4))
    poles = poles_of(den)
    terms = partial_fractions(S + 3, poles)
    step = fraction_steps(PartLabel("Y", 0), S + 3, poles, terms)
    assert step.rule is None   # two kinds of pole: the step cites both, from its sub-steps
    assert [r.id for r in step.rules_shown] == ["pf_simple", "pf_complex_pair"]
    assert [s.rule.id for s in step.substeps] == ["pf_simple", "pf_complex_pair"]
    names = [line.lhs for sub in step.substeps for line in sub.lines]
    assert Coefficient("A", 1) in names and Coefficient("B", 2) in names
    assert Coefficient("C", 2) in names and Coefficient("A", 2) in names
    # the cover-up value at s = 0 is 3/5 (common practice, no source)
    assert step.substeps[0].lines[-1].rhs == sp.Rational(3, 5)
