"""Load cases against published results and an independent integration.

References: the dynamic load factor of an undamped single-degree-of-freedom system under a
rectangular pulse of duration t_d, DLF = 2 sin(π t_d/T) for t_d ≤ T/2 and 2 beyond (J. M.
Biggs, Introduction to Structural Dynamics, ch. 2, from memory; it follows from the
Duhamel integral); and SciPy ``solve_ivp`` (DOP853) for a damped system over damping
through critical.
"""

import math

import numpy as np
import pandas as pd
import pytest
from scipy.integrate import solve_ivp

import derivpad
from derivpad import ParameterError, UnitError

PULSE = "m*x'' + k*x = F0*(u(t) - u(t - td))"
ZERO = {"x(0)": 0, "x'(0)": 0}
UNIT_PERIOD = {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"}  # T = 1 s


def test_rectangular_pulse_dynamic_load_factor_over_pulse_durations():
    tds = [0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.8, 1.2]
    r = derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=pd.DataFrame({"td [s]": tds}),
                            criteria=["dynamic_load_factor <= 1.9"])
    for td, dlf in zip(tds, r.table["dynamic_load_factor"]):
        want = 2 * math.sin(math.pi * td) if td <= 0.5 else 2.0
        assert dlf == pytest.approx(want, rel=1e-12)
    # the envelope: DLF 2 first reached at t_d = T/2 (case 6), the criterion NOT OK there
    row = r.envelope[r.envelope["result"] == "dynamic_load_factor"].iloc[0]
    assert row["max"] == pytest.approx(2.0, rel=1e-12) and row["case of max"] == "6"
    assert r.governing("dynamic_load_factor")["td"] == 0.5
    outcome = r.table["dynamic_load_factor <= 1.9: outcome"].tolist()
    assert outcome == ["OK"] * 4 + ["NOT OK"] * 5 and not r.all_ok  # 1.902 at t_d = 0.4 T
    assert [f for f, _ in r.forms] == ["underdamped"]


def _integrated_peak(m, c, k, f0, t_end=1.5):
    sol = solve_ivp(lambda t, z: [z[1], (f0 * (t <= 0.1) - c * z[1] - k * z[0]) / m],
                    (0, 0.1), [0, 0], method="DOP853", rtol=1e-12, atol=1e-15,
                    dense_output=True)
    rest = solve_ivp(lambda t, z: [z[1], (-c * z[1] - k * z[0]) / m], (0.1, t_end),
                     sol.y[:, -1], method="DOP853", rtol=1e-12, atol=1e-15, dense_output=True)
    ts = np.linspace(0, t_end, 200001)
    ys = np.where(ts <= 0.1, sol.sol(np.minimum(ts, 0.1))[0], rest.sol(np.maximum(ts, 0.1))[0])
    return float(np.max(np.abs(ys)))


def test_damping_through_critical_takes_both_forms_and_matches_integration():
    # m = 2 kg, k = 800 N/m: critical damping 2√(km) = 80 N·s/m; 80 itself has no symbolic
    # form (a double pole) and is derived with its numbers
    cases = pd.DataFrame({"case": ["light", "heavy", "critical", "medium"],
                          "c [N*s/m]": [8.0, 200.0, 80.0, 40.0]})
    r = derivpad.load_cases("m*x'' + c*x' + k*x = F0*(u(t) - u(t - 0.1))", ZERO,
                            {"m": "2 kg", "k": "800 N/m", "F0": "50 N"}, cases=cases)
    forms = dict(zip(r.table["case"], r.table["form"]))
    assert forms == {"light": "underdamped", "heavy": "overdamped",
                     "critical": "derived with its numbers", "medium": "underdamped"}
    for case, c in zip(cases["case"], cases["c [N*s/m]"]):
        got = abs(float(r.table.loc[r.table["case"] == case, "peak"].iloc[0]))
        # a grid maximum of the integration is at most the supremum, and within 1e-6 of it
        want = _integrated_peak(2.0, c, 800.0, 50.0)
        assert got == pytest.approx(want, rel=1e-6) and got >= want * (1 - 1e-12)
    assert {f for f, _ in r.forms} == {"underdamped", "overdamped"}
    assert "4 cases" in r.verified[1]


def test_tables_from_csv_and_parquet_with_units_in_the_headers(tmp_path):
    frame = pd.DataFrame({"case": ["a", "b"], "td [ms]": [200.0, 600.0]})
    frame.to_csv(tmp_path / "cases.csv", index=False)
    frame.to_parquet(tmp_path / "cases.parquet", index=False)
    for path in (tmp_path / "cases.csv", tmp_path / "cases.parquet"):
        r = derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=path)
        assert r.table["dynamic_load_factor"].tolist() == pytest.approx(
            [2 * math.sin(0.2 * math.pi), 2.0], rel=1e-12)
        assert r.units["td"] == "ms"
    out = r.to_csv(tmp_path / "out.csv")
    back = pd.read_csv(out)
    assert list(back["case"]) == ["a", "b"] and "peak" in back.columns
    assert list(tmp_path.glob(".out.csv*")) == []  # no temporary file left behind
    r.to_parquet(tmp_path / "out.parquet")
    assert len(pd.read_parquet(tmp_path / "out.parquet")) == 2


@pytest.mark.parametrize("cases,error,match", [
    (pd.DataFrame({"td [s]": [0.1, "x"]}), ParameterError, r"case 2: 'x' is not a finite"),
    (pd.DataFrame({"td [furlongz]": [0.1]}), UnitError, "furlongz"),
    (pd.DataFrame({"q [s]": [0.1]}), ParameterError, "column 'q' of the case table is not"),
    (pd.DataFrame({"td (s)": [0.1]}), ParameterError, r"'k \[kN/m\]'"),
    (pd.DataFrame({"case": ["a", "a"], "td [s]": [0.1, 0.2]}), ParameterError, "twice"),
    (pd.DataFrame({"td [s]": []}), ParameterError, "no rows"),
    ([0.1, 0.2], ParameterError, "DataFrame or the path"),
    ("missing.csv", ParameterError, "no case table"),
])
def test_bad_tables_are_refused_saying_where(cases, error, match):
    with pytest.raises(error, match=match):
        derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=cases)


def test_display_shows_summary_envelope_and_cautions():
    r = derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD,
                            cases=pd.DataFrame({"td [s]": [0.2, 0.7]}),
                            criteria=["dynamic_load_factor <= 1.9"])
    bundle = r._repr_mimebundle_()
    assert "2 load cases" in bundle["text/plain"]
    assert "NOT OK in 1 of 2 cases" in bundle["text/plain"]
    assert "qualified engineer" in bundle["text/plain"]
    html = bundle["text/html"]
    assert 'class="dp-envelope"' in html and '<details class="dp-form">' in html
    assert "qualified engineer" in html


def test_bad_rows_can_be_recorded_instead_of_stopping_the_run():
    table = pd.DataFrame({"case": ["a", "b", "c"], "td [s]": [0.2, None, 0.6]})
    with pytest.raises(ParameterError, match="case b"):
        derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=table)
    r = derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=table, on_error="record",
                            criteria=["dynamic_load_factor <= 1.9"])
    assert r.table["form"].tolist() == ["underdamped", "failed", "underdamped"]
    assert "case b" in r.table["notes"][1] and math.isnan(r.table["peak"][1])
    assert r.table["dynamic_load_factor <= 1.9: outcome"].tolist() == [
        "OK", "not evaluated", "NOT OK"]
    assert r.table["dynamic_load_factor"][0] == pytest.approx(2 * math.sin(0.2 * math.pi),
                                                             rel=1e-12)
    assert not r.all_ok and "1 of them failed" in r._repr_mimebundle_()["text/plain"]


def test_progress_is_reported_to_a_callable():
    seen = []
    derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD, cases=pd.DataFrame({"td [s]": [0.2, 0.3]}),
                        progress=lambda done, total: seen.append((done, total)))
    assert seen[0] == (0, 2) and seen[-1] == (2, 2)


def test_every_result_of_random_cases_matches_one_derive_per_case():
    # brute force: 40 random cases of the demo isolator (m, k, c varied across critical
    # damping, both forms), each derived on its own by derive() with all its checks
    from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS
    cases = derivpad.case_sample(40, seed=11, **{
        "m [kg]": ("normal", 1200, 60), "k [kN/m]": ("uniform", 400, 560),
        "c [kN*s/m]": ("uniform", 20, 80)})
    r = derivpad.load_cases(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS, cases=cases)
    assert set(r.table["form"]) == {"underdamped", "overdamped"}
    keys = ["peak", "time_of_peak", "dynamic_load_factor", "peak_residual", "natural_frequency",
            "damping_ratio", "final_value"]
    for i, row in cases.iterrows():
        params = dict(DEMO_PARAMS, m=f"{float(row['m [kg]'])!r} kg",
                      k=f"{float(row['k [kN/m]'])!r} kN/m",
                      c=f"{float(row['c [kN*s/m]'])!r} kN*s/m")
        d = derivpad.derive(DEMO_EQUATION, DEMO_ICS, params, units=DEMO_UNITS)
        for key in keys:
            want = d.results[key].magnitude
            got = r.table[key][i]
            if want is None:
                assert math.isnan(got), (i, key)
            else:
                assert got == pytest.approx(float(want), rel=1e-9, abs=1e-12), (i, key)


def test_the_json_form_reads_back_to_the_same_results():
    r = derivpad.load_cases(PULSE, ZERO, UNIT_PERIOD,
                            cases=pd.DataFrame({"case": ["a", "b"], "td [s]": [0.2, 0.7]}),
                            criteria=["dynamic_load_factor <= 1.9"])
    back = derivpad.CaseResults.from_dict(r.to_dict())
    pd.testing.assert_frame_equal(back.table, r.table, check_dtype=False)
    pd.testing.assert_frame_equal(back.envelope, r.envelope, check_dtype=False)
    assert back.inputs == ("td",) and back.units == r.units
    assert [f for f, _ in back.forms] == ["underdamped"]
    assert back.forms[0][1].verification.passed


def _both_routes(monkeypatch, *problem, **options):
    """(table over arrays, cases the array route carried, table one case at a time) of one
    run: the second with the array route switched off and the families derived afresh."""
    import derivpad.cases.run as run
    carried = []
    real = run.batched

    def counted(*a):
        got = list(real(*a))
        carried.append(sum(len(g[0]) for g in got))
        return iter(got)
    monkeypatch.setattr(run, "batched", counted)
    fast = derivpad.load_cases(*problem, **options).table
    monkeypatch.setattr(run, "batched", lambda *a: iter(()))
    run._FAMILIES.clear()
    slow = derivpad.load_cases(*problem, **options).table
    assert list(fast.columns) == list(slow.columns)
    for col in fast.columns:
        if fast[col].dtype.kind == "f":
            np.testing.assert_allclose(fast[col], slow[col], rtol=1e-9, atol=1e-14, err_msg=col)
        else:
            assert fast[col].tolist() == slow[col].tolist(), col
    return fast, sum(carried), slow


def test_the_array_route_gives_the_one_case_table_over_damping_through_critical(monkeypatch):
    """The table found over arrays of cases equals the one found one case at a time (each
    value to 1e-9), with under- and overdamped cases mixed, criteria judged; and the array
    route carries nearly every case."""
    from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS
    cases = derivpad.case_sample(240, seed=11, **{
        "m [kg]": ("normal", 1200, 60), "k [kN/m]": ("uniform", 400, 560),
        "c [kN*s/m]": ("uniform", 20, 80)})
    args = dict(units=DEMO_UNITS, cases=cases, criteria=["peak <= 3 mm"], progress=False)
    fast, carried, _ = _both_routes(monkeypatch, DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, **args)
    assert carried >= 0.95 * len(cases)
    assert set(fast["form"]) == {"underdamped", "overdamped"}


def test_the_array_route_serves_a_system_as_it_serves_one_equation(monkeypatch):
    """A 2-DOF system under a pulse (each unknown and a derived quantity): the same table over
    arrays as one case at a time."""
    eqs = ["m1*x1'' + c1*x1' + (k1 + k2)*x1 - k2*x2 = F0*(u(t) - u(t - td))",
           "m2*x2'' + k2*(x2 - x1) = 0"]
    ics = {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}
    params = {"m1": "400 kg", "k1": "6.4 MN/m", "m2": "40 kg", "k2": "632 kN/m",
              "c1": "2 kN*s/m", "F0": "1.5 kN", "td": "20 ms"}
    args = dict(units={"x1": "mm", "x2": "mm", "t": "s"}, derived={"stroke": "x2 - x1"},
                cases=pd.DataFrame({"td [ms]": np.linspace(5, 60, 12),
                                    "F0 [kN]": np.linspace(1, 3, 12)}), progress=False)
    fast, carried, _ = _both_routes(monkeypatch, eqs, ics, params, **args)
    assert carried >= 10 and "peak_stroke" in fast.columns