"""LaTeX of a derivation: each step as an aligned block, then the checks and assumptions."""

from __future__ import annotations

import sympy as sp

from ..core.model.checks import Check, Verification
from ..core.model.derivation import Derivation
from ..core.model.steps import Line, Step
from .base import Renderer
from .notation import (NotationLatexPrinter, judgement_parts, latex_expr, result_parts,
                       text_expr)

__all__ = ["LABEL_BUDGET", "LatexRenderer", "ROW_BUDGET", "to_latex", "step_math_latex", "CAUTION"]

LABEL_BUDGET = 14
"""Characters of a line's label kept in the column beside it; a longer one goes on its own row
(a wide label column would push the working off the page)."""

ROW_BUDGET = 72
"""Characters of an expression's plain-text form per row of display math: past it, a sum
continues on the next row (about a page column of typeset math)."""

CAUTION = ("This is a linear model. Results are to be reviewed by a qualified engineer before "
           "use; local codes and licensed professional practice govern.")


# Characters of our prose that pdflatex's text fonts do not have, as math: the document then
# compiles with plain pdflatex (no unicode engine, no extra packages).
_UNICODE = {
    "⁻": r"$^{-}$", "⁺": r"$^{+}$", "⁰": r"$^{0}$", "¹": r"$^{1}$", "²": r"$^{2}$",
    "³": r"$^{3}$", "⁴": r"$^{4}$", "⁵": r"$^{5}$", "⁶": r"$^{6}$", "⁷": r"$^{7}$",
    "⁸": r"$^{8}$", "⁹": r"$^{9}$", "ᐟ": "/", "α": r"$\alpha$", "β": r"$\beta$",
    "γ": r"$\gamma$", "δ": r"$\delta$", "Δ": r"$\Delta$", "ε": r"$\varepsilon$",
    "ζ": r"$\zeta$", "θ": r"$\theta$", "λ": r"$\lambda$", "μ": r"$\mu$", "π": r"$\pi$",
    "σ": r"$\sigma$", "τ": r"$\tau$", "φ": r"$\varphi$", "Φ": r"$\Phi$", "ω": r"$\omega$",
    "Ω": r"$\Omega$", "±": r"$\pm$", "·": r"$\cdot$", "→": r"$\to$", "∞": r"$\infty$",
    "≤": r"$\le$", "≥": r"$\ge$", "≠": r"$\ne$", "≈": r"$\approx$", "−": "-", "√": r"$\surd$",
    "𝓛": r"$\mathcal{L}$", "ℒ": r"$\mathcal{L}$", "∑": r"$\sum$", "∫": r"$\int$",
    "×": r"$\times$", "°": r"$^{\circ}$", "ᵀ": r"$^{T}$", "Σ": r"$\Sigma$",
}


def _escape(text: str) -> str:
    """Text for LaTeX: its special characters escaped, characters outside pdflatex's text
    fonts written as math (any other non-ASCII character is replaced by '?', never passed
    through to break the compile)."""
    out = text
    for a, b in (("\\", r"\textbackslash{}"), ("&", r"\&"), ("%", r"\%"), ("$", r"\$"),
                 ("#", r"\#"), ("_", r"\_"), ("{", r"\{"), ("}", r"\}"), ("~", r"\~{}"),
                 ("^", r"\^{}"), ("<", r"$<$"), (">", r"$>$")):
        out = out.replace(a, b)
    return "".join(_UNICODE.get(ch, ch if ord(ch) < 128 or ch in "–—‘’“”é" else "?")
                   for ch in out)


class LatexRenderer(Renderer):
    """Renders a Derivation, a Step, a Line or a Verification as LaTeX."""

    _default_settings = {"float_digits": 6, "substeps": True, "document": False,
                         "imaginary_unit": "i", "decimals": None}
    _allowed = {"substeps": (True, False), "document": (True, False),
                "imaginary_unit": ("i", "j")}

    def _expr(self, expr) -> str:
        return latex_expr(expr, float_digits=self.settings["float_digits"],
                          imaginary_unit=self.settings["imaginary_unit"],
                          decimals=self.settings["decimals"])

    def _render_Line(self, line: Line) -> str:
        """``lhs &= rhs``; a long sum continues on further rows of the aligned block, broken
        between its terms, so that no equation runs off the page."""
        rel = {"=": "&=", ":": "&:", "\\to": r"&\to"}.get(line.relation, "&=")
        rows = self._rows(line.rhs, max(ROW_BUDGET - len(text_expr(line.lhs)), ROW_BUDGET // 3))
        tex = f"{self._expr(line.lhs)} {rel} {rows[0]}" + "".join(
            r" \\" + "\n" + r"&\quad " + row for row in rows[1:])
        if line.label and len(line.label) > LABEL_BUDGET:  # its own row, under the working
            tex += r" \\" + "\n" + r"&\quad\text{(%s)}" % _escape(line.label)
        elif line.label:
            tex += r" &&\text{%s}" % _escape(line.label)
        return tex

    def _rows(self, expr, first: int = ROW_BUDGET) -> list[str]:
        """The expression's LaTeX in rows of at most ROW_BUDGET characters of its plain-text
        form (``first`` for the row that follows the left side), broken between top-level
        terms, and inside a long product's sum (one row where it fits)."""
        if isinstance(expr, sp.Mul) and len(text_expr(expr)) > first:
            return self._product_rows(expr, first) or [self._expr(expr)]
        if not isinstance(expr, sp.Add):
            return [self._expr(expr)]
        printer = NotationLatexPrinter({"float_digits": self.settings["float_digits"],
                                        "imaginary_unit": self.settings["imaginary_unit"],
                                        "decimals": self.settings["decimals"]})
        terms = []  # (negative, body, plain-text length with its sign): each printed once
        for term in printer._as_ordered_terms(expr):
            negative = term.could_extract_minus_sign()
            body = -term if negative else term
            terms.append((negative, body, len(text_expr(body)) + 3))
        if sum(n for _, _, n in terms) - 3 <= first:
            return [self._expr(expr)]
        rows, row, size = [], "", 0
        for negative, body, length in terms:
            sign = "- " if negative else ("+ " if rows or row else "")
            inner = (self._product_rows(body, ROW_BUDGET - 3)
                     if length > ROW_BUDGET and isinstance(body, sp.Mul) else None)
            if inner:  # a product longer than a row: rows of its own
                if row:
                    rows.append(row)
                rows += [sign + inner[0]] + inner[1:]
                row, size = "", 0
                continue
            if row and size + length > (first if not rows else ROW_BUDGET):
                rows.append(row)
                row, size = "", 0
            row += (" " if row else "") + sign + self._expr(body)
            size += length
        if row:
            rows.append(row)
        return rows

    def _product_rows(self, expr: sp.Mul, budget: int) -> list[str] | None:
        """A product with one sum among its factors, c·(a + b + …)·g, as rows
        c(a + … / … + z)g: the sum broken between its terms, its parentheses opened on the first
        row and closed on the last. None where no factor is a sum."""
        sums = [f for f in expr.args if isinstance(f, sp.Add)]
        if len(sums) != 1:
            return None
        (inner,) = sums
        coeff, others = sp.Mul(*[f for f in expr.args if f is not inner]).as_coeff_Mul()
        head = "" if coeff == 1 else "-" if coeff == -1 else self._expr(coeff)
        rows = self._rows(inner, max(budget - len(text_expr(coeff)) - 2, ROW_BUDGET // 3))
        rows[0] = head + r"\bigl(" + rows[0]
        rows[-1] += r"\bigr)" + (r"\, " + self._expr(others) if others != 1 else "")
        return rows

    def math(self, step: Step) -> str:
        """Only the display math of one step (no sub-steps)."""
        if not step.lines:
            return ""
        body = r" \\" + "\n"
        return "\\begin{aligned}\n" + body.join(self.render(line) for line in step.lines) + \
            "\n\\end{aligned}"

    def _render_Step(self, step: Step, depth: int = 0) -> str:
        head = ["section*", "subsection*", "subsubsection*", "paragraph"][min(depth, 3)]
        parts = [f"\\{head}{{{_escape(step.title)}}}"]
        if step.rule is not None:
            parts.append(r"\textit{Rule: %s.} $%s$" % (_escape(step.rule.name), step.rule.statement))
        elif step.rules_shown:
            parts.append(r"\textit{Rules: %s.}" % _escape("; ".join(r.name
                                                                   for r in step.rules_shown)))
        if step.note:
            parts.append(_escape(step.note))
        math = self.math(step)
        if math:
            parts.append("\\[\n" + math + "\n\\]")
        if self.settings["substeps"]:
            parts.extend(self._render_Step(sub, depth + 1) for sub in step.substeps)
        return "\n\n".join(parts)

    def _render_Check(self, check: Check) -> str:
        err = "" if check.error != check.error else f"{check.error:.2e}"
        return (f"{_escape(check.name)} & {err} & {check.tolerance:.0e} & {check.status} "
                r"\\")

    def _render_Verification(self, ver: Verification) -> str:
        rows = "\n".join(self.render(c) for c in ver.checks)
        return ("\\begin{tabular}{llll}\nCheck & Error & Tolerance & Outcome \\\\\n\\hline\n"
                + rows + "\n\\end{tabular}")

    def _render_Result(self, result) -> str:
        value, unit, remark = result_parts(result, self.settings["float_digits"])
        value = _escape(value) + (f" ({_escape(remark)})" if remark else "")
        return f"{_escape(result.label)} & {value} & {_escape(unit)} \\\\"

    def acceptance(self, judgements) -> str:
        digits = self.settings["float_digits"]
        rows = []
        for j in judgements:
            value, limit, use = judgement_parts(j, digits)
            outcome = j.outcome if j.ok else r"\textbf{NOT OK}"
            rows.append(f"{_escape(j.criterion.key)} & {_escape(value)} & {_escape(limit)} & "
                        f"{_escape(use)} & {outcome}"
                        + (f" ({_escape(j.reason)})" if j.reason else "") + r" \\")
        return ("\\begin{tabular}{lllll}\nResult & Value & Limit & Utilisation & Outcome "
                "\\\\\n\\hline\n" + "\n".join(rows) + "\n\\end{tabular}")

    def results(self, results) -> str:
        if not results:
            return "No engineering results: give numbers for the symbolic parameters."
        rows = "\n".join(self.render(r) for r in results.values())
        return ("\\begin{tabular}{lll}\nResult & Value & Unit \\\\\n\\hline\n" + rows
                + "\n\\end{tabular}")

    def _render_Derivation(self, d: Derivation) -> str:
        if self.settings["decimals"] is None:  # the numbers the user wrote as decimals
            self.settings["decimals"] = dict(d.problem.written_decimals)
        parts = [self._render_Step(step) for step in d.steps]
        parts.append("\\section*{Verification}\n\n" + self.render(d.verification))
        if d.acceptance:
            parts.append("\\section*{Acceptance criteria}\n\n" + self.acceptance(d.acceptance))
        parts.append("\\section*{Engineering results}\n\n" + self.results(d.results))
        if d.assumptions:
            parts.append("\\section*{Assumptions}\n\\begin{itemize}\n" + "\n".join(
                r"\item " + _escape(a) for a in d.assumptions) + "\n\\end{itemize}")
        parts.append("\\section*{Caution}\n\n" + _escape(CAUTION))
        body = "\n\n".join(parts)
        if self.settings["document"]:
            return ("\\documentclass{article}\n\\usepackage{amsmath,amssymb}\n\\begin{document}\n"
                    + body + "\n\\end{document}\n")
        return body




def to_latex(obj, **settings) -> str:
    """LaTeX of a Derivation (or a Step, Line, Verification)."""
    return LatexRenderer(**settings).render(obj)


def step_math_latex(step: Step) -> str:
    """The display math of one step, as used by ``Step.latex``."""
    return LatexRenderer().math(step)
