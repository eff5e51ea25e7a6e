"""Readable terminal text of a derivation: numbered steps, indented sub-steps, the checks."""

from __future__ import annotations

import textwrap

from ..core.model.derivation import Derivation
from ..core.model.steps import Line, Step
from ..core.model.checks import Check, Verification
from .base import Renderer
from .latex import CAUTION
from .notation import judgement_parts, result_parts, text_expr

__all__ = ["TextRenderer", "to_text", "top_level_terms", "wrap_terms"]


def _breaks(text: str) -> list[tuple[int, int]]:
    """(position, bracket depth) of each ' + ' or ' - ' in a printed expression: the places
    where it may break without changing how it reads."""
    out, depth = [], 0
    for i, ch in enumerate(text):
        if ch in "([{":
            depth += 1
        elif ch in ")]}":
            depth -= 1
        elif i and text.startswith((" + ", " - "), i):
            out.append((i, depth))
    return out


def top_level_terms(text: str) -> list[str]:
    """A printed sum split before each top-level ' + ' or ' - ' (outside any brackets)."""
    cuts = [i for i, depth in _breaks(text) if depth == 0]
    return [text[a + (1 if a else 0):b] for a, b in zip([0] + cuts, cuts + [len(text)])]


def wrap_terms(head: str, body: str, width: int, indent: str) -> str:
    """``head`` + ``body`` within ``width`` columns where it can be: broken between top-level
    terms first, and inside brackets only where a term alone is too long; continuation lines
    start with ``indent`` and the sign of their first term."""
    if len(head) > max(width // 2, len(indent)) and len(head) + len(body) > width:
        # a long left side: the right side starts on its own line
        return head.rstrip() + "\n" + wrap_terms(indent, body, width, indent)
    text = head + body
    breaks = [(i + len(head), d) for i, d in _breaks(body)]
    best = None
    for depth in range(0, max((d for _, d in breaks), default=0) + 1):
        lines = _fill(text, [i for i, d in breaks if d <= depth], width, indent, len(head))
        best = lines
        if all(len(x) <= width for x in lines):
            break
    return "\n".join(best or [text])


def _fill(text, cuts, width, indent, start_min):
    """Greedy lines of ``text`` broken only at ``cuts`` (positions of ' + '/' - ')."""
    lines, start, prefix = [], 0, ""
    last_fit = None
    for cut in cuts + [len(text)]:
        length = len(prefix) + cut - start
        if length <= width or last_fit is None:
            if cut == len(text):
                break
            if length <= width:
                last_fit = cut
                continue
        if last_fit is None:
            last_fit = cut
        lines.append(prefix + text[start:last_fit])
        start, prefix = last_fit + 1, indent
        last_fit = cut if len(prefix) + cut - start <= width and cut < len(text) else None
    lines.append(prefix + text[start:])
    return lines


class TextRenderer(Renderer):
    """Renders a Derivation, a Step, a Line or a Verification as plain text."""

    _default_settings = {"float_digits": 6, "substeps": True, "width": 80, "statements": False,
                         "imaginary_unit": "i", "decimals": None}
    _allowed = {"substeps": (True, False), "statements": (True, False),
                "imaginary_unit": ("i", "j")}

    def _expr(self, expr) -> str:
        return text_expr(expr, float_digits=self.settings["float_digits"],
                         imaginary_unit=self.settings["imaginary_unit"],
                         decimals=self.settings["decimals"])

    def _wrap(self, text: str, indent: str) -> str:
        return textwrap.fill(text, width=self.settings["width"], initial_indent=indent,
                             subsequent_indent=indent)

    def _render_Line(self, line: Line, indent: str = "") -> str:
        """``lhs = rhs`` within the width: a long right side breaks between its top-level
        terms, a label that does not fit goes on the next line."""
        rel = {"\\to": "->"}.get(line.relation, line.relation)
        width = self.settings["width"]
        text = wrap_terms(f"{indent}{self._expr(line.lhs)} {rel} ", self._expr(line.rhs),
                          width, indent + "    ")
        if line.label:
            label = f"[{line.label}]"
            last = text.rsplit("\n", 1)[-1]
            if len(last) + 4 + len(label) <= width:
                text += "    " + label
            else:
                text += "\n" + self._wrap(label, indent + "    ")
        return text

    def _render_Step(self, step: Step, number: str = "", depth: int = 0) -> str:
        indent = "    " * depth
        out = [f"{indent}{number}{' ' if number else ''}{step.title}"]
        shown = step.rules_shown
        if shown:
            rule_line = ("Rule: " if len(shown) == 1 else "Rules: ") + "; ".join(
                r.name for r in shown)
            if self.settings["statements"] and step.rule is not None:
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

    def _render_Check(self, check: Check, name_width: int = 30) -> str:
        err = "" if check.error != check.error else f"{check.error:.2e}"
        line = (f"  {check.name:<{name_width}} {err:>9}  {check.tolerance:<9.0e}  "
                f"{check.status}")
        if len(check.name) > name_width:  # the name alone on its line
            line = (f"  {check.name}\n  {'':<{name_width}} {err:>9}  "
                    f"{check.tolerance:<9.0e}  {check.status}")
        if check.detail:
            line += "\n" + self._wrap(check.detail, "      ")
        return line

    def _render_Verification(self, ver: Verification) -> str:
        head = "Verification: " + ("all checks passed" if ver.passed else "NOT VERIFIED")
        name_width = min(max((len(c.name) for c in ver.checks), default=0),
                         self.settings["width"] - 36)
        rows = [f"  {'check':<{name_width}} {'error':>9}  {'tolerance':<9}  outcome"]
        return "\n".join([head] + rows + [self._render_Check(c, name_width)
                                           for c in ver.checks])

    def _render_Result(self, result, label_width: int = 40) -> str:
        """'  label   value unit' within the width: a long value breaks between its listed
        items, a long label puts the value on the next line."""
        value, unit, remark = result_parts(result, self.settings["float_digits"])
        width = self.settings["width"]
        items = value.split(", ")
        items[-1] += f" {unit}" if unit else ""
        indent = " " * (label_width + 3)
        first = f"  {result.label:<{label_width}} "
        lines = [first] if len(first) <= label_width + 3 else [f"  {result.label}", indent]
        for k, item in enumerate(items):
            piece = item + ("," if k + 1 < len(items) else "")
            if lines[-1].strip() and lines[-1] not in (first, indent) and \
                    len(lines[-1]) + 1 + len(piece) > width:
                lines.append(indent)
            lines[-1] += ("" if lines[-1] in (first, indent) else " ") + piece
        line = "\n".join(x.rstrip() for x in lines)
        if remark:
            line += "\n" + self._wrap(remark, "      ")
        return line

    def acceptance(self, judgements) -> str:
        """'  peak <= 3 mm   value 2.10000 mm   utilisation 0.700   OK', a NOT OK plainly."""
        digits = self.settings["float_digits"]
        out = ["Acceptance criteria: " + ("all OK" if all(j.ok for j in judgements)
                                          else "NOT OK")]
        for j in judgements:
            value, _, use = judgement_parts(j, digits)
            out.append(self._wrap(f"{j.criterion.text}: value {value}, utilisation {use}: "
                                  f"{j.outcome}", "  "))
            if j.reason:
                out.append(self._wrap(j.reason, "      "))
        return "\n".join(out)

    def results(self, results) -> str:
        if not results:
            return "Engineering results: none (give numbers for the symbolic parameters)"
        label_width = min(max(len(r.label) for r in results.values()),
                          self.settings["width"] // 2)
        return "\n".join(["Engineering results:"] + [self._render_Result(r, label_width)
                                                      for r in results.values()])

    def _render_Derivation(self, d: Derivation) -> str:
        if self.settings["decimals"] is None:  # the numbers the user wrote as decimals
            self.settings["decimals"] = dict(d.problem.written_decimals)
        out = [self._wrap(f"Derivation of {d.problem.text}", ""), ""]
        for i, step in enumerate(d.steps, 1):
            out.append(self._render_Step(step, f"{i}."))
            out.append("")
        out.append(self.render(d.verification))
        out.append("")
        if d.acceptance:
            out.append(self.acceptance(d.acceptance))
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
