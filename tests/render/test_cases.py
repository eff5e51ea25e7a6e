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
    assert html.count("<details>") == len(r.forms) == 1
