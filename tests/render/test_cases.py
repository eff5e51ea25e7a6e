"""render/cases.py: the load-case view reads a CaseResults and prints its numbers as given.
Reference: the undamped rectangular-pulse load factor, 2 sin(π t_d/T) (tests/cases/test_run.py)."""

import math

import pandas as pd

import derivpad
from derivpad.render.cases import cases_html, cases_text


def test_text_and_html_name_the_governing_case_and_count_not_ok():
    r = derivpad.load_cases("m*x'' + k*x = F0*(u(t) - u(t - td))", {"x(0)": 0, "x'(0)": 0},
                            {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"},
                            cases=pd.DataFrame({"case": ["a", "b"], "td [s]": [0.1, 0.5]}),
                            criteria=["dynamic_load_factor <= 1.9"])
    text = cases_text(r)
    assert text.startswith("2 load cases\ndynamic_load_factor <= 1.9: NOT OK in 1 of 2 cases")
    # 2 sin(0.1π) = 0.618034 in case a; 2 in case b
    assert "  dynamic_load_factor: max 2 (case b), min 0.618034 (case a)" in text
    html = cases_html(r)
    assert "<th>td [s]</th>" in html and "<td>0.618034</td>" in html
    assert html.count("<details class=\"dp-form\">") == len(r.forms) == 1


def test_the_figure_marks_the_case_that_uses_its_criterion_most():
    r = derivpad.load_cases("m*x'' + k*x = F0*(u(t) - u(t - td))", {"x(0)": 0, "x'(0)": 0},
                            {"m": "1 kg", "k": f"{4 * math.pi ** 2!r} N/m", "F0": "1 N"},
                            units={"x": "mm"},
                            cases=derivpad.case_grid({"td [s]": [0.1, 0.3, 0.5, 0.9],
                                                      "m [kg]": [0.9, 1.1]}),
                            criteria=["peak <= 50 mm"])
    fig = r.figure()
    top, low = fig.axes[0], fig.axes[2]
    assert [ax.get_xlabel() for ax in fig.axes] == ["td [s]", "m [kg]"] * 2
    assert top.get_ylabel() == "peak [mm]"
    # the marked case is the one of largest utilisation (|peak|/50 mm)
    use = r.table["peak <= 50 mm: utilisation"]
    marked = top.collections[1].get_offsets()[0]
    assert marked[0] == r.table["td"][use.idxmax()]
    assert low.get_lines()[0].get_ydata()[0] == 1.0
