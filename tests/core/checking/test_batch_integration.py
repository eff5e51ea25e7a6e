"""The stacked integration of many cases (core/checking/batch_integration.py).

References: SciPy ``solve_ivp`` (DOP853) on each case alone, and the closed-form step
response of a damped single-degree-of-freedom system (Thomson, Theory of Vibration; from
memory), which a wrong closed form must fail against.
"""

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from derivpad.core.checking.batch_integration import integrate_cases
from derivpad.core.family import DerivationFamily

EQ = "m*x'' + c*x' + k*x = F0*(u(t - t1) - u(t - t2))"
ICS = {"x(0)": 0.001, "x'(0)": 0}
PARAMS = {"m": 2.0, "c": 0.4, "k": 50.0, "F0": 10.0, "t1": 0.1, "t2": 0.6}


def _family():
    return DerivationFamily(EQ, ICS, PARAMS, vary=("c", "k", "t2"))


def _cases():
    rng = np.random.default_rng(5)
    return np.stack([rng.uniform(0.1, 3.0, 40), rng.uniform(20, 80, 40),
                     rng.uniform(0.2, 1.5, 40)], axis=1)


def test_the_closed_forms_of_many_cases_agree_with_the_stacked_integration():
    fam = _family()
    values = _cases()
    fam.numbers_at(dict(zip(fam.vary, values[0])))
    got = integrate_cases(fam.problem, fam._compiled["underdamped"][1], fam.si_columns(values))
    rel, ran = got
    assert ran.all() and np.max(rel) < 1e-9


def test_the_stacked_integration_matches_solve_ivp_case_by_case():
    # x at t = 1.0 s for three cases, against one solve_ivp per case with the pulse's switches
    fam = _family()
    values = _cases()[:3]
    fam.numbers_at(dict(zip(fam.vary, values[0])))
    form = fam._compiled["underdamped"][1]
    for c, k, t2 in values:
        def rhs(t, z, c=c, k=k, t2=t2):
            f = 10.0 if 0.1 <= t < t2 else 0.0
            return [z[1], (f - c * z[1] - k * z[0]) / 2.0]
        x = [0.001, 0.0]
        for a, b in ((0.0, 0.1), (0.1, t2), (t2, 1.0 + t2)):
            x = solve_ivp(rhs, (a, b), x, method="DOP853", rtol=1e-12, atol=1e-15).y[:, -1]
        _, numbers, _ = fam.numbers_at({"c": c, "k": k, "t2": t2})
        assert float(numbers.models["x"].closed_form([1.0 + t2])[0]) == pytest.approx(x[0],
                                                                                    rel=1e-8)
    rel, ran = integrate_cases(fam.problem, form, fam.si_columns(values))
    assert ran.all() and np.max(rel) < 1e-9


def test_a_wrong_closed_form_fails(monkeypatch):
    fam = _family()
    values = _cases()
    fam.numbers_at(dict(zip(fam.vary, values[0])))
    form = fam._compiled["underdamped"][1]
    tables, loads = form.mode_tables()
    real = tables["x"].batch

    def off(columns):  # the damped frequency 0.1 % high: a closed form slightly wrong
        b = real(columns)
        return type(b)(b.power, b.switch_of, b.pole_of, b.switches, b.rate, b.freq * 1.001,
                       b.cos, b.sin, b.bad)
    monkeypatch.setattr(tables["x"], "batch", off)
    rel, ran = integrate_cases(fam.problem, form, fam.si_columns(values))
    assert ran.all() and np.min(rel) > 1e-5
