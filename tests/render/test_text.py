"""render/text.py: exact terminal text of a step, and the whole derivation's sections."""

import derivpad
from derivpad.render.text import to_text


def test_solve_step_text():
    d = derivpad.derive("y' + 2*y = 4*u(t - 1)", {"y(0)": 1})
    assert to_text(d.steps[3], width=100) == (
        "Solve for Y(s)\n"
        "  Rule: Algebraic solution for the transform\n"
        "  Y(s) is the forcing and initial-value terms over the characteristic polynomial.\n"
        "    Y(s) = (1 + exp(-s)*4/s)/(s + 2)\n"
        "    P(s) = s + 2    [characteristic polynomial]\n"
        "    P(s) = s + 2    [factored]\n"
        "    Y_0(s) = 1/(s + 2)    [undelayed part]\n"
        "    Y_1(s) = 4/(s*(s + 2))    [part delayed by 1]\n"
        "    Y(s) = Y_0(s) + exp(-s)*Y_1(s)")


def test_long_lines_break_between_terms_within_the_width():
    from derivpad.render.text import top_level_terms, wrap_terms
    assert top_level_terms("a + b*(c + d) - e") == ["a", "+ b*(c + d)", "- e"]
    text = wrap_terms("y(t) = ", "aaaa + bbbb*(cccc + dddd) - eeee", 20, "    ")
    assert text == "y(t) = aaaa\n    + bbbb*(cccc\n    + dddd) - eeee"
    assert all(len(line) <= 20 for line in text.splitlines())


def test_a_system_reads_with_the_same_sections():
    d = derivpad.derive(["2*x1'' + 1000*x1 - 200*x2 = 50*u(t)", "x2'' + 200*x2 - 200*x1 = 0"],
                        {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0})
    text = d.to_text()
    for heading in ("4. Matrix form", "5. Solve: characteristic determinant",
                    "Verification: all checks passed", "Engineering results:", "Caution:"):
        assert heading in text
    assert "Δ(s) = " in text and "x1'(0-) = 0" in text
