"""core/checking/numeric_model.py: a derivation compiled once; its numbers at given values agree
with the closed form evaluated by SymPy, and the operators' numbers with the problem's."""

import numpy as np
import sympy as sp

import derivpad
from derivpad.core.checking.numeric_model import ParametricNumbers
from derivpad.core.model.symbols import T
from derivpad.core.reading.read_problem import make_problem
from derivpad.core.symbolic.stages import solve_stages


def test_numbers_for_a_symbol_match_the_closed_form_and_a_fresh_derivation():
    problem = make_problem("m*x'' + 4*x' + k*x = 10*u(t - 0.2)", {"x(0)": 0, "x'(0)": 0},
                           {"m": 2})
    stages = solve_stages(problem, order={"k": 800})
    numbers = ParametricNumbers(problem, stages, ("k",)).at({"k": 800.0})
    times = np.array([0.1, 0.3, 0.75, 2.0])
    fresh = derivpad.derive("m*x'' + 4*x' + k*x = 10*u(t - 0.2)", {"x(0)": 0, "x'(0)": 0},
                            {"m": 2, "k": 800})
    expr = stages.solution["x"].subs(sp.Symbol("k", positive=True), 800)
    ref = [float(expr.subs(T, x)) for x in times]        # SymPy evaluation as reference
    assert np.allclose(numbers.models["x"].closed_form(times), ref, rtol=1e-12, atol=1e-15)
    assert np.allclose(fresh(times), ref, rtol=1e-12, atol=1e-15)
    assert numbers.coefficients(0, 0) == (800.0, 4.0, 2.0)
    assert numbers.static.tolist() == [[800.0]] and numbers.lead.tolist() == [[2.0]]
    assert numbers.breakpoints == (0.2,) and numbers.final_loads == (10.0,)


def test_a_system_has_a_model_per_unknown_and_derived_quantity():
    problem = make_problem(["2*x1'' + 1000*x1 - 200*x2 = 50*u(t)",
                            "x2'' + 200*x2 - 200*x1 = 0"],
                           {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
                           derived={"stroke": "x2 - x1"})
    numbers = ParametricNumbers(problem, solve_stages(problem)).at({})
    assert set(numbers.models) == {"x1", "x2", "stroke"}
    t = np.linspace(0, 1, 7)
    m = numbers.models
    assert np.allclose(m["stroke"].closed_form(t), m["x2"].closed_form(t) - m["x1"].closed_form(t),
                       rtol=1e-12, atol=1e-15)
    assert numbers.matrix(2).tolist() == [[2.0, 0.0], [0.0, 1.0]]
