"""Property-based tests: random characteristic polynomials and forcing, solved and checked.

Polynomials are built from random real roots and complex pairs (so their factors are known),
forcing from random delayed steps, pulses and ramps. Each solution must pass the engine's own
check and agree with SciPy's integration of the same ODE (the reference).
"""

import numpy as np
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from derivpad import derive
from derivpad.core.reading.parse import S
from tests.reference import integrate

real_root = st.integers(-4, -1)
complex_pair = st.tuples(st.integers(-3, 0), st.integers(1, 4))


@st.composite
def problems(draw):
    reals = draw(st.lists(real_root, max_size=2))
    pairs = draw(st.lists(complex_pair, max_size=2))
    if not reals and not pairs:
        reals = [draw(real_root)]
    poly = sp.Integer(1)
    for r in reals:
        poly *= S - r
    for a, b in pairs:
        poly *= (S - a) ** 2 + b ** 2
    coeffs = sp.Poly(sp.expand(poly), S).all_coeffs()[::-1]
    n = len(coeffs) - 1
    lhs = " + ".join(f"({c})*y^({k})" for k, c in enumerate(coeffs) if c != 0)
    parts = []
    for _ in range(draw(st.integers(1, 3))):
        kind = draw(st.sampled_from(["step", "pulse", "ramp", "impulse"]))
        size = draw(st.integers(-5, 5)) or 1
        start = sp.Rational(draw(st.integers(0, 8)), 4)
        if kind == "step":
            parts.append(f"({size})*u(t - {start})")
        elif kind == "pulse":
            width = sp.Rational(draw(st.integers(1, 6)), 4)
            parts.append(f"({size})*(u(t - {start}) - u(t - {start + width}))")
        elif kind == "ramp":
            parts.append(f"({size})*(t - {start})*u(t - {start})")
        else:
            parts.append(f"({size})*delta(t - {start})")
    ics = {f"y^({k})(0)": draw(st.integers(-2, 2)) for k in range(n)}
    return f"{lhs} = " + " + ".join(parts), ics


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(problems())
def test_random_problems_satisfy_the_ode_and_match_integration(case):
    equation, ics = case
    d = derive(equation, ics=ics)
    assert d.verification.passed
    times = np.linspace(0, 4, 41)
    ref = integrate(d.problem, times, d.breakpoints, d.impulses)
    ours = d(times)
    scale = max(1.0, float(np.max(np.abs(ref))))
    assert np.max(np.abs(ours - ref)) / scale < 1e-7
