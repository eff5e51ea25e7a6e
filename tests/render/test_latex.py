"""render/latex.py: exact LaTeX of a step and of a check (as SymPy's own printer tests compare
strings), and a whole derivation as a document. The expected strings are this notation's
(docs/input-syntax.md): u for the unit step, delay factors in front, Y_0(s) for the parts."""

import derivpad
from derivpad.render.latex import to_latex


def _d():
    return derivpad.derive("y' + 2*y = 4*u(t - 1)", {"y(0)": 1})


def test_solve_step_latex():
    # Y(s) = (1 + 4e^{-s}/s)/(s + 2): the transform of y' + 2y = 4u(t - 1), y(0⁻) = 1
    # (derivative and second-shift rules; checked against sympy in tests/core/symbolic)
    assert _d().steps[3].latex == (
        "\\begin{aligned}\n"
        "Y(s) &= \\frac{1 + e^{- s}\\,\\frac{4}{s}}{s + 2} \\\\\n"
        "P(s) &= s + 2 \\\\\n"
        "&\\quad\\text{(characteristic polynomial)} \\\\\n"   # a long label: its own row
        "P(s) &= s + 2 &&\\text{factored} \\\\\n"
        "Y_{0}(s) &= \\frac{1}{s + 2} &&\\text{undelayed part} \\\\\n"
        "Y_{1}(s) &= \\frac{4}{s \\left(s + 2\\right)} \\\\\n"
        "&\\quad\\text{(part delayed by 1)} \\\\\n"
        "Y(s) &= Y_{0}(s) + e^{- s}\\,Y_{1}(s)\n"
        "\\end{aligned}")


def test_check_row_and_document():
    d = _d()
    assert to_latex(d.verification.checks[0]) == \
        "ODE on every interval & 0.00e+00 & 1e-20 & passed \\\\"
    doc = d.to_latex(document=True)
    assert doc.startswith("\\documentclass{article}") and doc.rstrip().endswith("\\end{document}")
    assert "\\section*{Caution}" in doc and "\\theta" not in doc


def test_a_long_sum_continues_on_further_rows():
    import sympy as sp

    from derivpad.core.model.steps import Line
    from derivpad.core.model.symbols import T
    from derivpad.render.latex import ROW_BUDGET, LatexRenderer
    from derivpad.render.notation import text_expr
    terms = [k * sp.exp(-k * T) * sp.cos(3 * k * T) for k in range(1, 9)]
    line = Line(sp.Function("y")(T), sp.Add(*terms), "=", "a label")
    tex = LatexRenderer()._render_Line(line)
    rows = tex.split(" \\\\\n")
    assert len(rows) > 1 and rows[1].startswith("&\\quad + ")
    assert tex.endswith("&&\\text{a label}")
    # every row's terms, as plain text, fit the budget
    assert len(text_expr(sp.Add(*terms))) > ROW_BUDGET
    assert tex.count("e^{") == 8


def test_a_long_product_breaks_inside_its_sum():
    # (a + b + … ) u(t - 1/50): the sum's terms on rows of their own, its parentheses opened
    # on the first row and closed on the last, the step factor after them
    import sympy as sp

    from derivpad.core.model.steps import Line
    from derivpad.core.model.symbols import T
    from derivpad.render.latex import LatexRenderer
    c = sp.Rational(1, 50)
    inner = sp.Add(*[sp.Rational(k, 1000 + k) * sp.cos(k * (T - c)) for k in range(1, 8)])
    product = inner * sp.Heaviside(T - c)  # (a numeric factor SymPy spreads over the sum)
    tex = LatexRenderer()._render_Line(Line(sp.Function("y")(T), product, "="))
    rows = tex.split(" \\\\\n")
    assert len(rows) > 1
    assert rows[0].startswith("y(t) &= \\bigl(")
    assert rows[-1].endswith("\\bigr)\\, u(t - \\frac{1}{50})")
    assert tex.count("\\bigl(") == tex.count("\\bigr)") == 1
    assert tex.count("\\cos") == 7
    # the same product inside a sum gets rows of its own, signed
    tex = LatexRenderer()._render_Line(Line(sp.Function("y")(T), T - product, "="))
    assert "\\\\\n&\\quad - \\bigl(" in tex
