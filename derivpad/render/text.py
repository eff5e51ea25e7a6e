"""Readable terminal text of a derivation: numbered steps, indented sub-steps, the checks."""

from __future__ import annotations

import textwrap

from ..core.model.derivation import Derivation
from ..core.model.steps import Line, Step
from ..core.model.checks import Check, Verification
from .base import Renderer
from .latex import CAUTION
from .notation import result_parts, text_expr

__all__ = ["TextRenderer", "to_text"]


class TextRenderer(Renderer):
    """Renders a Derivation, a Step, a Line or a Verification as plain text."""

    _default_settings = {"float_digits": 6, "substeps": True, "width": 100, "statements": False}
    _allowed = {"substeps": (True, False), "statements": (True, False)}

    def _expr(self, expr) -> str:
        return text_expr(expr, float_digits=self.settings["float_digits"])

    def _wrap(self, text: str, indent: str) -> str:
        return textwrap.fill(text, width=self.settings["width"], initial_indent=indent,
                             subsequent_indent=indent)

    def _render_Line(self, line: Line, indent: str = "") -> str:
        rel = {"\\to": "->"}.get(line.relation, line.relation)
        text = f"{indent}{self._expr(line.lhs)} {rel} {self._expr(line.rhs)}"
        if line.label:
            text += f"    [{line.label}]"
        return text

    def _render_Step(self, step: Step, number: str = "", depth: int = 0) -> str:
        indent = "    " * depth
        out = [f"{indent}{number}{' ' if number else ''}{step.title}"]
        if step.rule is not None:
            rule_line = f"Rule: {step.rule.name}"
            if self.settings["statements"]:
                rule_line += f" — {step.rule.statement}"
            out.append(self._wrap(rule_line, indent + "  "))
        if step.note:
            out.append(self._wrap(step.note, indent + "  "))
        for line in step.lines:
            out.append(self._render_Line(line, indent + "    "))
        if self.settings["substeps"]:
            for i, sub in enumerate(step.substeps, 1):
                out.append(self._render_Step(sub, f"{number}{i}." if number else f"{i}.",
                                             depth + 1))
        return "\n".join(out)

    def _render_Check(self, check: Check) -> str:
        err = "" if check.error != check.error else f"error {check.error:9.2e}"
        line = f"  {check.name:<30} {err:<16} tolerance {check.tolerance:7.0e}  {check.status}"
        if check.detail:
            line += "\n" + self._wrap(check.detail, "      ")
        return line

    def _render_Verification(self, ver: Verification) -> str:
        head = "Verification: " + ("all checks passed" if ver.passed else "NOT VERIFIED")
        return "\n".join([head] + [self.render(c) for c in ver.checks])

    def _render_Result(self, result) -> str:
        value, unit, remark = result_parts(result, self.settings["float_digits"])
        line = f"  {result.label:<40} {value}" + (f" {unit}" if unit else "")
        if remark:
            line += "\n" + self._wrap(remark, "      ")
        return line

    def results(self, results) -> str:
        if not results:
            return "Engineering results: none (give numbers for the symbolic parameters)"
        return "\n".join(["Engineering results:"] + [self.render(r) for r in results.values()])

    def _render_Derivation(self, d: Derivation) -> str:
        out = [f"Derivation of {d.problem.text}", ""]
        for i, step in enumerate(d.steps, 1):
            out.append(self._render_Step(step, f"{i}."))
            out.append("")
        out.append(self.render(d.verification))
        out.append("")
        out.append(self.results(d.results))
        if d.assumptions:
            out.append("")
            out.append("Assumptions:")
            out.extend(self._wrap("- " + a, "  ") for a in d.assumptions)
        if d.notes:
            out.append("")
            out.append("Notes:")
            out.extend(self._wrap("- " + a, "  ") for a in d.notes)
        out.append("")
        out.append(self._wrap("Caution: " + CAUTION, ""))
        return "\n".join(out)




def to_text(obj, **settings) -> str:
    """Plain text of a Derivation (or a Step, Line, Verification)."""
    return TextRenderer(**settings).render(obj)
