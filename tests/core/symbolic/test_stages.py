"""core/symbolic/stages.py: the stages over the vector of unknowns. One equation is the case
n = 1 (no matrix form); for n > 1 each X_j(s) is Cramer's Δ_j/Δ, checked against SymPy's
LUsolve of A(s) X(s) = B(s); the transform step against sympy.laplace_transform."""

import sympy as sp

from derivpad.core.model.symbols import S, T
from derivpad.core.reading.read_problem import make_problem
from derivpad.core.symbolic.stages import interval_text, order_key, solve_stages

REST2 = {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}


def test_one_unknown_has_the_single_equation_steps():
    stages = solve_stages(make_problem("y'' + 4*y' + 13*y = 2*u(t - 1)", {"y(0)": 0,
                                                                       "y'(0)": 0}))
    assert [s.title for s in stages.steps] == [
        "Problem", "Transform both sides", "Transform the derivatives", "Solve for Y(s)",
        "Partial fractions", "Invert term by term", "Assemble y(t)"]
    assert sp.expand(stages.determinant - (S ** 2 + 4 * S + 13)) == 0
    # Y(s) = 2 e^{-s}/(s(s² + 4s + 13)) (SymPy's laplace_transform of the forcing, over P(s))
    f = sp.laplace_transform(2 * sp.Heaviside(T - 1), T, S, noconds=True)
    assert sp.simplify(stages.transform["y"] - f / (S ** 2 + 4 * S + 13)) == 0
    assert stages.breakpoints == (1,)


def test_two_unknowns_solve_by_cramer_as_lusolve_does():
    problem = make_problem(["2*x1'' + 1000*x1 - 200*x2 = 50*u(t)",
                            "x2'' + 3*x2' + 200*x2 - 200*x1 = 0"], REST2)
    stages = solve_stages(problem)
    titles = [s.title for s in stages.steps]
    assert "Matrix form" in titles and titles.index("Matrix form") == 3
    A = sp.Matrix([[2 * S ** 2 + 1000, -200], [-200, S ** 2 + 3 * S + 200]])
    B = sp.Matrix([50 / S, 0])
    X = A.LUsolve(B)                                    # SymPy as reference
    for j, u in enumerate(("x1", "x2")):   # Δ(s) has numeric (50-digit) roots here
        for point in (sp.Rational(1, 3), 2 + 5 * sp.I, 40):
            ours, ref = (complex(sp.N(e.subs(S, point), 40)) for e in (stages.transform[u], X[j]))
            assert abs(ours - ref) <= 1e-30 * abs(ref)
    assert sp.expand(stages.determinant - A.det()) == 0


def test_switching_times_order_and_interval_text():
    assert order_key(sp.Integer(2)) < order_key(sp.Symbol("t1", positive=True))
    assert order_key(sp.Symbol("t1", positive=True), {"t1": 0.5}) == (0, 0.5)
    ivs = ((0, "a"), (1, "b"), (3, "c"))
    assert [interval_text(i, ivs) for i in range(3)] == ["0 ≤ t < 1", "1 ≤ t < 3", "t ≥ 3"]
