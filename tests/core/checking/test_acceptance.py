"""core/checking/acceptance.py: limits on results judged with units. References: the demo's
peak, time of peak and damping ratio (checked against integration in tests/core/checking/
test_results.py); unit factors from pint (1 cm = 10 mm, 1 s = 1000 ms)."""

import math

import pytest

import derivpad
from derivpad import ParameterError, UnitError
from derivpad.core.checking.acceptance import read_criteria
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS


@pytest.fixture(scope="module")
def demo():
    return derivpad.derive(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS,
                           criteria=["peak <= 12 mm", "peak <= 1 cm", "damping_ratio >= 0.05",
                                     "time_of_peak <= 100 ms", "settling_time_2pct <= 2 s"])


def test_each_limit_in_its_own_unit(demo):
    peak = demo.results["peak"].magnitude          # mm
    j = {x.criterion.text: x for x in demo.acceptance}
    assert j["peak <= 12 mm"].ok and j["peak <= 12 mm"].utilisation == \
        pytest.approx(peak / 12, rel=1e-12)
    assert not j["peak <= 1 cm"].ok and j["peak <= 1 cm"].value == \
        pytest.approx(peak / 10, rel=1e-12)
    # ζ = c/(2√(km)) = 2400/(2√(480000·1200)) = 0.05 exactly: a lower limit met with ratio 1
    assert j["damping_ratio >= 0.05"].ok
    assert j["damping_ratio >= 0.05"].utilisation == pytest.approx(1.0, rel=1e-12)
    t = demo.results["time_of_peak"].magnitude     # s
    assert j["time_of_peak <= 100 ms"].value == pytest.approx(t * 1000, rel=1e-12)
    assert j["time_of_peak <= 100 ms"].outcome == "NOT OK"


def test_an_absent_result_is_not_ok_with_its_reason(demo):
    (j,) = [x for x in demo.acceptance if x.criterion.key == "settling_time_2pct"]
    assert not j.ok and j.value is None and "returns to zero" in j.reason
    assert "NOT OK" in demo.to_text() and "Acceptance criteria" in demo.to_html()


def test_a_system_s_derived_quantity_and_an_unbounded_result():
    d = derivpad.derive(["m1*x1'' + (k1 + k2)*x1 - k2*x2 = F0*u(t)",
                         "m2*x2'' + k2*(x2 - x1) = 0"],
                        {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
                        {"m1": 2, "m2": 1, "k1": 800, "k2": 200, "F0": 50},
                        derived={"stroke": "x1 - x2"}, criteria=["peak_stroke <= 0.2"])
    (j,) = d.acceptance
    assert j.ok and j.value == pytest.approx(d.results["peak_stroke"].magnitude)
    resonant = derivpad.derive("y'' + 4*y = sin(2*t)*u(t)", {"y(0)": 0, "y'(0)": 0},
                               criteria=["peak <= 1"])
    (j,) = resonant.acceptance
    assert not j.ok and math.isinf(j.value) and j.reason.startswith("unbounded")


def test_bad_criteria_are_refused_with_the_fix():
    with pytest.raises(ParameterError, match="cannot read the criterion"):
        read_criteria(["peak < 3 mm"])
    with pytest.raises(ParameterError, match="must be a list"):
        read_criteria("peak <= 3 mm")
    with pytest.raises(ParameterError, match="does not have"):
        derivpad.derive("y' + y = u(t)", {"y(0)": 0}, criteria=["peek <= 3"])
    with pytest.raises(UnitError, match="has none"):   # no units given: a number is meant
        derivpad.derive("y'' + 4*y = u(t)", {"y(0)": 0, "y'(0)": 0}, criteria=["peak <= 3 mm"])
    with pytest.raises(UnitError, match="does not match"):
        derivpad.derive("m*x'' + k*x = F*u(t)", {"x(0)": 0, "x'(0)": 0},
                        {"m": "1 kg", "k": "100 N/m", "F": "1 N"}, criteria=["peak <= 2 s"])


def test_criteria_read_back_and_are_compared_by_the_audit(demo):
    import json

    from derivpad import Derivation
    from derivpad.export.audit import _compare
    from derivpad.export.package import record_of
    back = Derivation.from_dict(json.loads(json.dumps(demo.to_dict())))
    assert [j.to_dict() for j in back.acceptance] == [j.to_dict() for j in demo.acceptance]
    old = record_of(demo.to_dict(), 1)
    stiffer = derivpad.derive(DEMO_EQUATION, DEMO_ICS, dict(DEMO_PARAMS, k="600 kN/m"),
                              units=DEMO_UNITS, criteria=["peak <= 1 cm"])
    rows = dict(_compare([old], [record_of(stiffer.to_dict(), 1)], 1e-9))
    assert rows["derivation-1 criterion peak <= 1 cm"] == "NOT OK → OK"


def test_a_negative_peak_is_judged_by_its_size():
    # a downward step load: x_max = -2F0/k = -0.125 m (any vibration text; from memory)
    d = derivpad.derive("m*x'' + k*x = -F0*u(t)", {"x(0)": 0, "x'(0)": 0},
                        {"m": 2, "k": 800, "F0": 50}, criteria=["peak <= 0.1", "peak <= 0.2"])
    assert d.results["peak"].magnitude == pytest.approx(-0.125, rel=1e-9)
    over, under = d.acceptance
    assert over.value == pytest.approx(0.125) and over.outcome == "NOT OK"
    assert under.utilisation == pytest.approx(0.625) and under.ok


def test_a_calcs_own_criteria_apply_where_the_result_exists(demo):
    # judge_calc: the record's limits on each derivation that has the key; the demo's peak is
    # 11.107 mm (tests/core/checking/test_results.py), so 10 mm is exceeded (utilisation 1.11)
    from derivpad.core.checking.acceptance import judge_calc
    per, missing = judge_calc(["peak <= 10 mm", "peak_x1 <= 5 mm"], [demo.results, {}])
    (on_demo, on_bare) = per
    assert [j.criterion.text for j in on_demo] == ["peak <= 10 mm"]
    assert not on_demo[0].ok and on_demo[0].utilisation == pytest.approx(1.1107, abs=1e-4)
    # a derivation without results meets none of the limits, and says why
    assert [j.outcome for j in on_bare] == ["NOT OK", "NOT OK"]
    assert "no results" in on_bare[0].reason
    # peak_x1 is a system's key: no derivation here answers it
    assert [c.key for c in missing] == ["peak_x1"]
