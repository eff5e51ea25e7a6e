"""core/checking/own_check.py: the engine's own back-substitution accepts a right solution (to
zero, symbolically or in 30 digits) and rejects one altered by 1e-6."""

import sympy as sp

from derivpad.core.checking.own_check import self_check
from derivpad.core.model.symbols import TAU
from derivpad.core.reading.read_problem import make_problem
from derivpad.core.symbolic.stages import solve_stages


def _stages(equation, ics):
    problem = make_problem(equation, ics)
    return problem, solve_stages(problem)


def test_a_right_solution_passes_every_check():
    problem, stages = _stages("y'' + 4*y' + 13*y = 2*u(t - 1) + delta(t - 2)",
                              {"y(0)": 1, "y'(0)": 0})
    checks = self_check(problem, stages)
    assert [c.name for c in checks] == ["ODE on every interval", "Initial conditions at 0+",
                                        "Jump conditions at breakpoints"]
    assert all(c.passed and c.error <= 1e-20 for c in checks)


def test_an_altered_solution_is_rejected():
    problem, stages = _stages("y'' + 4*y' + 13*y = 2*u(t - 1)", {"y(0)": 0, "y'(0)": 0})
    ((c1, g1),) = stages.delayed_solutions["y"]   # the one part, delayed by 1
    bad = stages.__class__(**{**stages.__dict__, "delayed_solutions": {
        "y": ((c1, g1 * (1 + sp.Rational(1, 10 ** 6))),)}})
    ode = self_check(problem, bad)[0]
    assert not ode.passed and 1e-8 < ode.error < 1e-5


def test_a_system_with_an_impulse_jumps_by_the_inverse_lead_matrix():
    # an impulse J in equation 1 of 2 x1'' ... makes x1' jump by J/2 (E⁻¹J; common practice,
    # no source): the checks pass only if the closed form carries exactly that jump
    problem, stages = _stages(["2*x1'' + 300*x1 - 100*x2 = 4*delta(t - 1)",
                               "x2'' + 100*x2 - 100*x1 = 0"],
                              {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0})
    assert all(c.passed for c in self_check(problem, stages))
    g = dict(stages.delayed_solutions["x1"])[1]
    assert sp.diff(g, TAU).subs(TAU, 0) == 2
