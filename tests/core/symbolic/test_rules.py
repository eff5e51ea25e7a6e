"""Every rule-table entry against outside references.

Transform pairs and theorems: the engine's own transform (``transform_term`` /
``transform_groups``) against SymPy's ``laplace_transform`` and against the Laplace integral
∫₀^∞ f(t) e^{-st} dt computed by mpmath quadrature at a few real s.
Partial-fraction and algebra rules: against SymPy's ``apart`` and polynomial roots.
"""

import mpmath
import pytest
import sympy as sp

from derivpad.core.symbolic.algebra import poles_of
from derivpad.core.reading.forcing import TAU, heaviside_pieces
from derivpad.core.reading.parse import S, T
from derivpad.core.symbolic.partial_fractions import partial_fractions
from derivpad.core.symbolic.rules import RULES
from derivpad.core.symbolic.transform import TableTerm, derivative_transform, transform_groups, transform_term

t = sp.Symbol("t", positive=True)
R = sp.Rational

# rule id -> (TableTerm, the time function it stands for)
PAIRS = {
    "pair_step": TableTerm(sp.Integer(3), 0, sp.Integer(0), sp.Integer(0), "one"),
    "pair_power": TableTerm(sp.Integer(2), 3, sp.Integer(0), sp.Integer(0), "one"),
    "pair_exp": TableTerm(sp.Integer(1), 0, R(-3, 2), sp.Integer(0), "one"),
    "pair_power_exp": TableTerm(sp.Integer(5), 2, sp.Integer(-2), sp.Integer(0), "one"),
    "pair_sin": TableTerm(sp.Integer(1), 0, sp.Integer(0), sp.Integer(3), "sin"),
    "pair_cos": TableTerm(sp.Integer(2), 0, sp.Integer(0), R(1, 2), "cos"),
    "pair_exp_sin": TableTerm(sp.Integer(1), 0, sp.Integer(-1), sp.Integer(2), "sin"),
    "pair_exp_cos": TableTerm(sp.Integer(1), 0, R(-1, 3), sp.Integer(4), "cos"),
    "pair_power_trig": TableTerm(sp.Integer(1), 2, sp.Integer(-1), sp.Integer(2), "cos"),
    # the first shifting theorem and multiplication by t are exercised through these:
    "first_shift": TableTerm(sp.Integer(1), 0, sp.Integer(-2), sp.Integer(5), "sin"),
    "times_t": TableTerm(sp.Integer(1), 1, sp.Integer(0), sp.Integer(1), "sin"),
}


def _quad_laplace(f, s_value):
    fn = sp.lambdify(t, f, "mpmath")
    with mpmath.workdps(30):
        return mpmath.quad(lambda x: fn(x) * mpmath.exp(-s_value * x), [0, 1, 5, 20, mpmath.inf])


@pytest.mark.parametrize("rule_id", sorted(PAIRS))
def test_pair_against_sympy_laplace_transform(rule_id):
    term = PAIRS[rule_id]
    ours = transform_term(term).expr
    f = (term.coefficient * term.time_function).subs(TAU, t)
    reference = sp.laplace_transform(f, t, S, noconds=True)  # SymPy as reference
    assert sp.simplify(ours - reference) == 0
    if rule_id != "first_shift":
        assert term.rule.id == rule_id or rule_id == "times_t"


@pytest.mark.parametrize("rule_id", sorted(PAIRS))
def test_pair_against_the_laplace_integral(rule_id):
    term = PAIRS[rule_id]
    ours = transform_term(term).expr
    f = (term.coefficient * term.time_function).subs(TAU, t)
    for s_value in (2, 3.5, 7):
        numeric = _quad_laplace(f, s_value)
        assert abs(complex(ours.subs(S, s_value)) - complex(numeric)) < 1e-15 * max(1, abs(numeric))


def test_pair_delta_and_second_shift_against_sympy():
    pieces, _ = heaviside_pieces(2 * sp.DiracDelta(T - 3) + sp.cos(T) * sp.Heaviside(T - sp.pi / 2))
    groups, steps = transform_groups(pieces)
    ours = sum(sp.exp(-g.delay * S) * (sum(tr.expr for tr in g.terms) + g.impulse_area)
               for g in groups)
    f = 2 * sp.DiracDelta(t - 3) + sp.cos(t) * sp.Heaviside(t - sp.pi / 2)
    reference = sp.laplace_transform(f, t, S, noconds=True)
    assert sp.simplify(ours - reference) == 0
    assert {s.rule.id for s in steps} == {"pair_delta", "second_shift"}


def test_second_shift_against_the_laplace_integral():
    pieces, _ = heaviside_pieces((T - 1) ** 2 * sp.Heaviside(T - 1))
    groups, _ = transform_groups(pieces)
    (g,) = groups
    ours = sp.exp(-g.delay * S) * sum(tr.expr for tr in g.terms)
    f = sp.Piecewise((0, t < 1), ((t - 1) ** 2, True))
    for s_value in (1, 2.5):
        assert abs(float(ours.subs(S, s_value)) - float(_quad_laplace(f, s_value))) < 1e-15


def test_derivative_rule_against_sympy():
    # L{f''} = s² F - s f(0) - f'(0), checked on f = e^{-t} sin 2t + 3 (A&S §29.2, from memory)
    f = sp.exp(-t) * sp.sin(2 * t) + 3
    F = sp.laplace_transform(f, t, S, noconds=True)
    Y = sp.Function("Y")(S)
    ours = derivative_transform("y", 2, (f.subs(t, 0), sp.diff(f, t).subs(t, 0))).subs(Y, F)
    reference = sp.laplace_transform(sp.diff(f, t, 2), t, S, noconds=True)
    assert sp.simplify(ours - reference) == 0


def test_linearity_against_the_laplace_integral():
    a = transform_term(PAIRS["pair_sin"]).expr
    b = transform_term(PAIRS["pair_exp"]).expr
    f = 2 * sp.sin(3 * t) - 5 * sp.exp(-R(3, 2) * t)
    assert abs(float((2 * a - 5 * b).subs(S, 4)) - float(_quad_laplace(f, 4))) < 1e-15


def test_definition_0_minus_takes_in_an_impulse_at_zero():
    # ∫_{0⁻} δ(t) e^{-st} dt = 1 (Lundberg, Miller & Trumper 2007, from memory)
    pieces, _ = heaviside_pieces(sp.DiracDelta(T))
    groups, _ = transform_groups(pieces)
    assert groups[0].impulse_area == 1 and groups[0].delay == 0


def test_piecewise_to_step_rule():
    pw = sp.Piecewise((T, T < 1), (1, T < 3), (0, True))
    pieces, _ = heaviside_pieces(pw)
    rebuilt = sum(p.shape.subs(TAU, T - p.delay) * sp.Heaviside(T - p.delay) for p in pieces)
    for x in (0.5, 1.5, 2.9, 3.5, 10):
        assert abs(float(rebuilt.subs(T, x)) - float(pw.subs(T, x))) < 1e-15


@pytest.mark.parametrize("rational", [
    1 / (S * (S + 1) * (S + 3)),                      # pf_simple
    (S + 2) / ((S + 1) ** 3 * S),                     # pf_repeated
    (3 * S + 1) / ((S ** 2 + 2 * S + 5) * (S + 2)),   # pf_complex_pair
    1 / (S * (S ** 2 + 4) ** 2),                      # repeated complex pair
])
def test_partial_fraction_rules_against_sympy_apart(rational):
    num, den = sp.fraction(sp.together(rational))
    poles = poles_of(den)
    terms = partial_fractions(num, poles)
    ours = sum(tm.expr for tm in terms)
    assert sp.simplify(ours - sp.apart(rational, S)) == 0  # SymPy apart as reference


def test_numeric_roots_against_numpy_roots():
    import numpy as np
    p = S ** 5 - S - 1  # irreducible over Q, no closed-form roots (Galois group S5; from memory)
    poles = poles_of(p)
    assert poles.numeric
    ours = [complex(float(q.value), sign * float(q.beta)) for q in poles.poles
            for sign in ((1, -1) if q.kind == "complex" else (0,))]
    ref = sorted(np.roots([1, 0, 0, 0, -1, -1]), key=lambda z: (z.real, z.imag))
    ours = sorted(ours, key=lambda z: (z.real, z.imag))
    assert np.allclose(ours, ref, atol=1e-12)


def test_solve_algebraic_rule_is_cramer():
    from derivpad.core.symbolic.algebra import solve_system
    A = sp.Matrix([[S ** 2 + 2, -1], [-1, S ** 2 + 1]])
    B = sp.Matrix([1 / S, 0])
    det, nums = solve_system(A, B)
    X = A.LUsolve(B)  # SymPy LU as reference
    assert all(sp.simplify(n / det - x) == 0 for n, x in zip(nums, X))


COVERED = set(PAIRS) | {"pair_delta", "second_shift", "derivative", "linearity", "definition",
                        "piecewise_to_step", "pf_simple", "pf_repeated", "pf_complex_pair",
                        "numeric_roots", "solve_algebraic"}


def test_every_rule_has_a_reference_test():
    assert set(RULES) == COVERED


def test_every_rule_names_a_source():
    for r in RULES.values():
        assert r.source and r.statement and r.name
