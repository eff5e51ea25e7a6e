"""Case grids and random spreads: the combinations and draws NumPy itself gives."""

import itertools
import math

import numpy as np
import pandas as pd
import pytest

import derivpad
from derivpad import ParameterError


def test_a_grid_is_every_combination_in_order():
    grid = derivpad.case_grid({"td [ms]": [5, 10, 20]}, m=[900, 1200])
    assert list(grid.columns) == ["td [ms]", "m"] and len(grid) == 6
    assert [tuple(r) for r in grid.itertuples(index=False)] == \
        list(itertools.product([5.0, 10.0, 20.0], [900.0, 1200.0]))


def test_a_sample_is_numpys_seeded_draws():
    s = derivpad.case_sample(500, seed=7, m=("normal", 1200, 60),
                             **{"k [kN/m]": ("uniform", 400, 560)},
                             zeta=("triangular", 0.02, 0.05, 0.1), c=("lognormal", 3.0, 0.2))
    rng = np.random.default_rng(7)  # reference: the same generator drawn in the same order
    assert np.array_equal(s["m"], rng.normal(1200, 60, 500))
    assert np.array_equal(s["k [kN/m]"], rng.uniform(400, 560, 500))
    assert np.array_equal(s["zeta"], rng.triangular(0.02, 0.05, 0.1, 500))
    assert np.array_equal(s["c"], 3.0 * np.exp(rng.normal(0.0, 0.2, 500)))
    assert s.equals(derivpad.case_sample(500, seed=7, m=("normal", 1200, 60),
                                         **{"k [kN/m]": ("uniform", 400, 560)},
                                         zeta=("triangular", 0.02, 0.05, 0.1),
                                         c=("lognormal", 3.0, 0.2)))


@pytest.mark.parametrize("call,match", [
    (lambda: derivpad.case_grid(), "at least one parameter"),
    (lambda: derivpad.case_grid(td=[]), "list of numbers"),
    (lambda: derivpad.case_grid(td=[0.1, float("nan")]), "finite"),
    (lambda: derivpad.case_grid({"td": [1]}, td=[2]), "given twice"),
    (lambda: derivpad.case_grid(a=range(5000), b=range(4001)), "more than"),
    (lambda: derivpad.case_sample(0, seed=1, m=("normal", 1, 1)), "whole number"),
    (lambda: derivpad.case_sample(5, seed=1, m=("gauss", 1, 1)), "give a distribution"),
    (lambda: derivpad.case_sample(5, seed=1, m=("normal", 1, -1)), "sd must be positive"),
    (lambda: derivpad.case_sample(5, seed=1, m=("uniform", 2, 1)), "low < high"),
])
def test_bad_designs_are_refused(call, match):
    with pytest.raises(ParameterError, match=match):
        call()


def test_the_rectangular_pulse_spectrum_from_a_grid():
    # DLF = 2 sin(π t_d/T) up to t_d = T/2, then 2 (Harris' Shock and Vibration Handbook,
    # ch. 8, from memory); T = 1 s
    grid = derivpad.case_grid({"td [s]": np.linspace(0.05, 1.5, 30)})
    r = derivpad.load_cases("m*x'' + k*x = F0*(u(t) - u(t - td))", {"x(0)": 0, "x'(0)": 0},
                            {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"},
                            cases=grid)
    want = [2 * math.sin(math.pi * t) if t <= 0.5 else 2.0 for t in grid["td [s]"]]
    assert r.table["dynamic_load_factor"].tolist() == pytest.approx(want, rel=1e-12)
    assert isinstance(grid, pd.DataFrame)
