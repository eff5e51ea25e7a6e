"""The explorer, tested through widget state without a browser."""

import pytest

import derivpad
from derivpad import ParameterError

ipywidgets = pytest.importorskip("ipywidgets")

EQ = "m*x'' + c*x' + k*x = F0*u(t - 0.1)"
ICS = {"x(0)": 0, "x'(0)": 0}
PARAMS = {"m": "2 kg", "c": "4 N*s/m", "k": "800 N/m", "F0": "50 N"}


@pytest.fixture
def view():
    return derivpad.explore(EQ, ICS, PARAMS, controls={"k": (400, 1600), "c": (0, 200)},
                            units={"x": "mm"})


def test_controls_start_at_the_given_values_with_units(view):
    rows = view.children[:2]
    slider, entry, unit = rows[0].children
    assert slider.get_state()["value"] == 800 and slider.get_state()["min"] == 400
    assert entry.get_state()["value"] == 800
    assert unit.get_state()["value"] == "N/m"
    assert view.derivation.verification.passed
    assert "dp-step" in view._html.get_state()["value"]


def test_moving_a_control_rederives_and_redraws(view):
    before_html = view._html.value
    peak_before = view.derivation.results["peak"].magnitude
    view._sliders["k"].value = 1200.0
    assert dict(view.derivation.values)["k"] == 1200
    assert view.derivation.results["peak"].magnitude < peak_before  # stiffer: smaller peak
    assert view._html.value != before_html
    assert "k = 1200" in view.get_state()["status"]


def test_crossing_the_damping_boundary_is_announced(view):
    # critical damping c = 2√(km) = 80 N·s/m at k = 800, m = 2 (vibration texts; from memory)
    view._sliders["c"].value = 120.0
    assert "regime changed: underdamped → overdamped" in view.status


def test_record_prints_exactly_the_values_shown(view):
    view._sliders["k"].value = 1000.0
    line = view._on_record()
    assert line == ("params={'m': '2 kg', 'c': '4.0 N*s/m', 'k': '1000.0 N/m', 'F0': '50 N'}")
    recorded = derivpad.derive(EQ, ICS, eval(line[7:]), units={"x": "mm"})  # test-only eval
    times = [0.05, 0.15, 0.4, 1.0]                                         # of our own literal
    assert list(recorded(times)) == pytest.approx(list(view.derivation(times)), rel=1e-12)
    assert recorded.results["peak"].magnitude == pytest.approx(
        view.derivation.results["peak"].magnitude, rel=1e-12)


def test_entry_and_slider_are_linked(view):
    entry = view.children[0].children[1]
    entry.value = 1500.0
    assert view._sliders["k"].value == 1500.0


def test_bad_controls_are_refused():
    with pytest.raises(ParameterError, match="starting value"):
        derivpad.explore(EQ, ICS, PARAMS, controls={"k": (1000, 2000)})
    with pytest.raises(ParameterError, match="no starting value"):
        derivpad.explore(EQ, ICS, PARAMS, controls={"q": (0, 1)})
    with pytest.raises(ParameterError, match="controls="):
        derivpad.explore(EQ, ICS, PARAMS)


def test_the_explorer_works_for_a_coupled_system():
    eqs = ["m1*x1'' + (k1 + k2)*x1 - k2*x2 = F0*u(t - 0.1)", "m2*x2'' - k2*x1 + k2*x2 = 0"]
    ics = {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}
    view = derivpad.explore(eqs, ics, {"m1": 2, "m2": 1, "k1": 800, "k2": 200,
                                       "F0": 50}, controls={"k2": (100, 400)})
    assert view.derivation.verification.passed
    before = view.derivation.results["natural_frequencies"].magnitude
    view._sliders["k2"].value = 300.0
    after = view.derivation.results["natural_frequencies"].magnitude
    assert after[1] > before[1]  # a stiffer coupling spring raises the upper mode
    assert "k2 = 300: no form in symbols could be derived" in view.status
    assert "derived with the numbers" in view.status
    assert "Matrix form" in view._html.value


def test_a_damped_system_explorer_takes_the_derive_once_route_for_its_load():
    view = derivpad.explore(["m1*x1'' + (k1 + k2)*x1 - k2*x2 - c2*(x2' - x1') = F0*u(t)",
                             "m2*x2'' + c2*(x2' - x1') + k2*(x2 - x1) = 0"],
                            {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
                            {"m1": 400, "k1": 6.4e6, "m2": 40, "k2": 6.32e5, "c2": 200,
                             "F0": 1500}, controls={"F0": (500, 3000)})
    view._sliders["F0"].value = 2000.0
    assert "values put into the symbolic derivation" in view.status
    # a step load's static response K⁻¹F: x1 = F0/k1 (the absorber spring carries no static
    # load; common practice, no source)
    assert view.derivation.results["static_response_x1"].magnitude == \
        pytest.approx(2000.0 / 6.4e6, rel=1e-12)
