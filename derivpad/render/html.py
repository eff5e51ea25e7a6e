"""HTML of a derivation for notebooks and reports, laid out as a calculation sheet.

Three columns: the reference (Given, Result, the step number), the calculation, and a narrow
column with the rule each step used, its statement and its published source, as on a hand calc
sheet. Each step is a ``<details>`` element whose ``<summary>`` row keeps the number, title
and rule names, so a notebook can fold it; reports print every step open. The math inside is display LaTeX (``$$…$$``) for the page's math typesetter, with the raw
LaTeX one click away to copy. Ids are derived from the content (SHA-256), so the same derivation
gives the same bytes every time. The look uses JupyterLab's theme variables where present, so
it reads in light and dark themes and prints plainly.
"""

from __future__ import annotations

import hashlib
import html

import sympy as sp

from ..core.model.derivation import Derivation
from ..core.model.labels import initial_value_label
from ..core.model.steps import Line, Step
from ..core.model.checks import Check, Verification
from .base import Renderer
from .latex import CAUTION, LatexRenderer
from .notation import format_value, judgement_parts, latex_expr, result_parts

__all__ = ["HtmlRenderer", "to_html", "STYLE"]

STYLE = """
.derivpad{--dp-ink:var(--jp-content-font-color1,#1d1d1d);--dp-soft:var(--jp-content-font-color2,#4a4a4a);
 --dp-rule:var(--jp-border-color1,#9a9a9a);--dp-faint:var(--jp-border-color2,#d0d0d0);
 --dp-ok:#2e6b45;--dp-bad:#b3261e;
 font-family:var(--jp-content-font-family,system-ui,sans-serif);color:var(--dp-ink);
 line-height:1.45;max-width:64em;border-top:2px solid var(--dp-rule);
 border-bottom:2px solid var(--dp-rule)}
body[data-jp-theme-light="false"] .derivpad{--dp-ok:#7fc79a;--dp-bad:#ff8a80}
.derivpad .dp-row{display:grid;grid-template-columns:3.8em minmax(0,1fr) minmax(10em,16em);
 column-gap:.9em;padding:.3em 0;border-top:1px solid var(--dp-faint)}
.derivpad .dp-cols{font-size:.75em;letter-spacing:.05em;text-transform:uppercase;
 color:var(--dp-soft);border-top:none;padding:.2em 0}
.derivpad .dp-no{font-weight:600;font-variant-numeric:tabular-nums}
.derivpad .dp-work{min-width:0}
.derivpad .dp-title{font-weight:600}
.derivpad .dp-ref{font-size:.82em;color:var(--dp-soft);border-left:1px solid var(--dp-faint);
 padding-left:.6em;min-width:0;overflow-wrap:anywhere}
.derivpad .dp-ref .dp-rulename{color:var(--dp-ink)}
.derivpad .dp-ref .dp-source{display:block;margin-top:.15em}
.derivpad .dp-statement{font-size:.92em;overflow-wrap:normal}
.derivpad details.dp-step>summary{cursor:pointer;list-style:none}
.derivpad details.dp-step>summary::-webkit-details-marker{display:none}
.derivpad details.dp-step>summary .dp-no::after{content:" \\25B8";color:var(--dp-soft);
 font-weight:400}
.derivpad details.dp-step[open]>summary .dp-no::after{content:" \\25BE"}
.derivpad details.dp-step>.dp-row{border-top:none;padding-top:0}
.derivpad details.dp-step details.dp-step{margin-left:0}
.derivpad .dp-note{margin:.2em 0}
.derivpad .dp-ok{color:var(--dp-ok);font-weight:600}
.derivpad .dp-bad{color:var(--dp-bad);font-weight:700}
.derivpad details.dp-latex{margin:0;font-size:.8em}
.derivpad details.dp-latex>summary{cursor:pointer;color:var(--dp-soft)}
.derivpad details.dp-latex pre{white-space:pre-wrap;overflow-wrap:anywhere;
 background:var(--jp-layout-color2,#f3f3f3);padding:.4em;margin:.2em 0}
.derivpad h4{font-size:.8em;letter-spacing:.05em;text-transform:uppercase;color:var(--dp-soft);
 margin:.8em 0 .2em;font-weight:600}
.derivpad table{border-collapse:collapse;margin:.3em 0;font-size:.9em;max-width:100%}
.derivpad.derivpad th,.derivpad.derivpad td{border:1px solid var(--dp-faint);
 padding:.15em .5em;text-align:left;vertical-align:top;overflow-wrap:break-word}
.derivpad table.dp-checks td:first-child{min-width:8.5em}
.derivpad.derivpad td.dp-tag{white-space:nowrap}
.derivpad.derivpad td.dp-num{text-align:right;font-variant-numeric:tabular-nums;
 overflow-wrap:normal}
.derivpad .dp-caution{border-top:1px solid var(--dp-rule);margin:.6em 0 .3em;padding-top:.3em;
 font-size:.88em}
.derivpad .dp-math{overflow-x:auto;overflow-y:hidden;max-width:100%}
.derivpad .dp-math mjx-container svg{max-width:100%;height:auto}
.derivpad figure{margin:.4em 0}
.derivpad figure svg{max-width:100%;height:auto;background:#fff}
body[data-jp-theme-light="false"] .derivpad figure svg{filter:invert(.88) hue-rotate(180deg)}
@media (max-width:40em){.derivpad .dp-row{grid-template-columns:2.4em minmax(0,1fr)}
 .derivpad .dp-ref{grid-column:2;border-left:none;padding-left:0}}
@media print{.derivpad details.dp-latex{display:none}
 .derivpad .dp-math{overflow:visible}
 .derivpad details.dp-step>summary .dp-no::after,
 .derivpad details.dp-step[open]>summary .dp-no::after{content:none}
 .derivpad .dp-row{grid-template-columns:3.6em minmax(0,1fr) 11.5em;column-gap:.6em}
 .derivpad .dp-row{break-inside:avoid-page}
 .derivpad details.dp-step>summary{break-after:avoid-page}}
"""

def _esc(text: str) -> str:
    return html.escape(str(text), quote=True)


_MATH_CACHE: dict = {}


def _once(obj, kind, digits: int, make) -> str:
    """LaTeX printed once per object: an explorer shows the same steps and the same symbolic
    solution with new numbers on every change. An entry keeps its object, so the id is not
    reused while it is cached."""
    key = (id(obj), kind, digits)
    hit = _MATH_CACHE.get(key)
    if hit is not None and hit[0] is obj:
        return hit[1]
    tex = make()
    if len(_MATH_CACHE) > 4096:
        _MATH_CACHE.clear()
    _MATH_CACHE[key] = (obj, tex)
    return tex


def content_id(d) -> str:
    """A short id derived from the derivation's content: the same input, the same id."""
    p = d.problem
    fixed = _once(p, "key", 0, lambda: "\n".join([p.text, repr(p.operators), repr(p.forcings),
                                                 repr(p.initial_values), repr(p.parameters)]))
    solved = _once(d.solutions, "repr", 0, lambda: repr(sorted(d.solutions.items(), key=str)))
    key = "\n".join([fixed, solved] + ([repr(d.values)] if d.values else []))
    return "dp-" + hashlib.sha256(key.encode()).hexdigest()[:12]


def _written_key(decimals) -> tuple:
    """The cache's part of the key for the decimals shown as written."""
    return tuple(sorted(decimals.items())) if decimals else ()


def _step_math(step: Step, digits: int, decimals=None) -> str:
    return _once(step, ("step", _written_key(decimals)), digits,
                 lambda: LatexRenderer(float_digits=digits, decimals=decimals).math(step))


def _expr_latex(expr, digits: int, decimals=None) -> str:
    return _once(expr, ("expr", _written_key(decimals)), digits,
                 lambda: latex_expr(expr, float_digits=digits, decimals=decimals))


class HtmlRenderer(Renderer):
    """Renders a Derivation (or a Step, Verification, Check) as an HTML fragment."""

    _default_settings = {"float_digits": 6, "open": False, "figure": True, "style": True,
                         "decimals": None}
    _allowed = {"open": (True, False), "figure": (True, False), "style": (True, False)}

    def _math(self, tex: str, display: bool = True) -> str:
        return _esc(f"$${tex}$$" if display else f"${tex}$")

    def __init__(self, figure_source=None, **settings):
        super().__init__(**settings)
        self._figure_source = figure_source

    def _reference(self, step: Step) -> str:
        """The open step's reference column: its rule's statement and published source (the
        rule names stand in the summary row above)."""
        out = ['<div class="dp-ref">']
        if step.rule is not None:
            out.append(f'<div class="dp-statement">{self._math(step.rule.statement, False)}'
                       f'</div><span class="dp-source">{_esc(step.rule.source)}</span>')
        out.append("</div>")
        return "".join(out)

    def _render_Step(self, step: Step, number: str = "", ids: str = "") -> str:
        """A numbered row of the sheet: the number, the working (title, note, math) and the
        reference column; a ``<details>`` whose summary row keeps number, title and rule."""
        tex = _step_math(step, self.settings["float_digits"], self.settings["decimals"])
        shown = step.rules_shown
        rule = _esc("; ".join(r.name for r in shown)) if shown else ""
        parts = [f'<details class="dp-step" id="{ids}"{" open" if self.settings["open"] else ""}>',
                 f'<summary class="dp-row"><span class="dp-no">{_esc(number)}</span>'
                 f'<span class="dp-title">{_esc(step.title)}</span>'
                 f'<span class="dp-ref"><span class="dp-rulename">{rule}</span></span></summary>',
                 '<div class="dp-row"><span></span><div class="dp-work">']
        if step.note:
            parts.append(f'<div class="dp-note">{_esc(step.note)}</div>')
        if tex:
            parts.append(f'<div class="dp-math">{self._math(tex)}</div>')
            parts.append(f'<details class="dp-latex"><summary>LaTeX</summary><pre>{_esc(tex)}'
                         "</pre></details>")
        parts.append("</div>" + self._reference(step) + "</div>")
        for i, sub in enumerate(step.substeps, 1):
            parts.append(self._render_Step(sub, f"{number}{i}.", f"{ids}-{i}"))
        parts.append("</details>")
        return "\n".join(parts)

    def _render_Check(self, check: Check) -> str:
        err = "" if check.error != check.error else f"{check.error:.2e}"
        return (f"<tr><td>{_esc(check.name)}</td><td>{_esc(check.method)}</td>"
                f'<td class="dp-num">{err}</td><td class="dp-num">{check.tolerance:.0e}</td>'
                f'<td class="dp-tag">{_esc(check.status)}</td><td>{_esc(check.detail)}</td></tr>')

    def _render_Verification(self, ver: Verification) -> str:
        rows = "\n".join(self.render(c) for c in ver.checks)
        return ('<table class="dp-checks"><tr><th>Check</th><th>Method</th><th>Error</th>'
                f"<th>Tolerance</th><th>Outcome</th><th>Detail</th></tr>\n{rows}</table>")

    def acceptance(self, judgements) -> str:
        """Each stated limit: criterion, value, limit, utilisation and OK / NOT OK (a NOT OK
        stated plainly, in the failure colour)."""
        digits = self.settings["float_digits"]
        rows = []
        for j in judgements:
            value, limit, use = judgement_parts(j, digits)
            cls = "dp-ok" if j.ok else "dp-bad"
            rows.append(f"<tr><td>{_esc(j.criterion.key)}</td><td class=\"dp-num\">"
                        f"{_esc(value)}</td><td>{_esc(limit)}</td>"
                        f"<td class=\"dp-num\">{_esc(use)}</td>"
                        f"<td class=\"{cls}\"><b>{j.outcome}</b>"
                        f"{' — ' + _esc(j.reason) if j.reason else ''}</td></tr>")
        return ('<table class="dp-acceptance"><tr><th>Result</th><th>Value</th><th>Limit</th>'
                "<th>Utilisation</th><th>Outcome</th></tr>\n" + "\n".join(rows) + "</table>")

    def results(self, results) -> str:
        if not results:
            return ("<p>No engineering results: give numbers for the symbolic parameters "
                    "(<code>values=</code>).</p>")
        rows = "\n".join(self._result_row(r) for r in results.values())
        return ('<table class="dp-results"><tr><th>Result</th><th>Value</th><th>Unit</th>'
                f"<th>How</th></tr>\n{rows}</table>")

    def _result_row(self, r) -> str:
        value, unit, remark = result_parts(r, self.settings["float_digits"])
        how = "<br>".join(x for x in (_esc(r.formula), f"<em>{_esc(remark)}</em>" if remark
                                      else "") if x)
        return (f"<tr><td>{_esc(r.label)}</td><td class=\"dp-num\">{_esc(value)}</td>"
                f"<td>{_esc(unit)}</td><td>{how}</td></tr>")

    def status(self, ver: Verification) -> str:
        """One plain line: how many checks passed, or NOT VERIFIED with what failed."""
        if ver.passed:
            n = sum(1 for c in ver.checks if c.status == "passed")
            return f'<span class="dp-ok">Verified: {n} checks passed</span>'
        bad = "; ".join(f"{c.name}: {c.status}" + (f" (error {c.error:.2e} > {c.tolerance:.0e})"
                                                    if c.status == "FAILED" else "")
                        for c in ver.failed)
        return f'<span class="dp-bad">NOT VERIFIED — {_esc(bad)}</span>'

    def figure(self, d: Derivation) -> str:
        if not self.settings["figure"] or d.verification.samples is None:
            return ""
        try:
            if self._figure_source is not None:
                svg = self._figure_source.svg(d)
            else:
                from .figure import figure_svg
                svg = figure_svg(d)
        except ImportError as exc:  # MissingExtraError: say so in place of the figure
            return f"<p>{_esc(exc)}</p>"
        return f"<figure>{svg}<figcaption>Verification figure.</figcaption></figure>"

    def _row(self, label: str, work: str, ref: str = "") -> str:
        return (f'<div class="dp-row"><span class="dp-no">{_esc(label)}</span>'
                f'<div class="dp-work">{work}</div><div class="dp-ref">{ref}</div></div>')

    def _render_Derivation(self, d: Derivation) -> str:
        """The sheet: Given (equations, initial conditions, values), Result (the solution and
        the verification status), the numbered working, then checks, results, figure."""
        did = content_id(d)
        p = d.problem
        digits = self.settings["float_digits"]
        if self.settings["decimals"] is None:  # the numbers the user wrote as decimals
            self.settings["decimals"] = dict(p.written_decimals)
        decimals = self.settings["decimals"]
        out = [f'<div class="derivpad" id="{did}">']
        if self.settings["style"]:
            out.append(f"<style>{STYLE}</style>")
        out.append('<div class="dp-row dp-cols"><span>Ref</span><span>Calculation</span>'
                   "<span>Rule and source</span></div>")
        equations = _once(p, ("equation", _written_key(decimals)), digits, lambda: _aligned(
            [(p.lhs(i), p.forcings[i]) for i in range(p.size)], digits, decimals))
        ics = ", \\quad ".join(f"{latex_expr(initial_value_label(u, k))} = "
                                f"{_expr_latex(v, digits, decimals)}"
                                for u, vals in zip(p.unknowns, p.initial_values)
                                for k, v in enumerate(vals))
        given = [f'<div class="dp-math">{self._math(equations)}</div>',
                 f'<div class="dp-math">{self._math(ics)}</div>']
        if d.values:
            values = ", \\quad ".join(
                f"{latex_expr(sp.Symbol(name))} = {format_value(v, digits)}"
                + (f"\\ \\text{{{unit}}}" if unit else "")
                for name, v, unit in d.value_table())
            given.append('<div class="dp-note">With the values used for the checks and '
                         f'results:</div><div class="dp-math">{self._math(values)}</div>')
        out.append('<div class="dp-head">')
        out.append(self._row("Given", "".join(given),
                             "linear ODE" + ("" if p.size == 1 else " system")
                             + ", constant coefficients; initial values at 0⁻"))
        result = [f'<div class="dp-note">Solution{_written_in(p)}:</div>'
                  f'<div class="dp-math">{self._math(_solution_tex(p, d.solutions, digits, decimals))}</div>']
        if d.values:
            result.append('<div class="dp-note">With the values:</div><div class="dp-math">'
                          f'{self._math(_solution_tex(p, d.evaluated_solutions, digits, decimals))}</div>')
        result.append(f'<div class="dp-note">{self.status(d.verification)}</div>')
        out.append(self._row("Result", "".join(result), "derived below, step by step; "
                             "checked independently (see Verification)"))
        out.append("</div>")
        out += self.body(d, did)
        return "\n".join(part for part in out if part)

    def body(self, d, did: str) -> list[str]:
        """Everything below the header: steps, checks, results, figure, assumptions, caution
        (the same for one equation and for a system); a heading only where it has content."""
        out = []
        for i, step in enumerate(d.steps, 1):
            out.append(self._render_Step(step, f"{i}.", f"{did}-s{i}"))
        out.append("<h4>Verification</h4>")
        out.append(f'<p class="dp-note">{self.status(d.verification)}</p>')
        out.append(self.render(d.verification))
        if d.acceptance:
            out.append("<h4>Acceptance criteria</h4>")
            out.append(self.acceptance(d.acceptance))
        out.append("<h4>Engineering results</h4>")
        out.append(self.results(d.results))
        out.append(self.figure(d))
        if d.assumptions:
            out.append("<h4>Assumptions</h4><ul>"
                       + "".join(f"<li>{_esc(a)}</li>" for a in d.assumptions) + "</ul>")
        out.append(f'<p class="dp-caution"><b>Caution.</b> {_esc(CAUTION)}</p>')
        out.append("</div>")
        return out


def _aligned(relations, digits: int, decimals=None) -> str:
    """Relations lhs = rhs aligned at their equals signs, a long right side continued on
    further rows (the LaTeX renderer's rows), so that the header never runs off its box."""
    printer = LatexRenderer(float_digits=digits, decimals=decimals)
    return "\\begin{aligned}" + " \\\\\n".join(
        printer.render(Line(lhs, rhs)) for lhs, rhs in relations) + "\\end{aligned}"


def _solution_tex(p, solutions: dict, digits: int, decimals=None) -> str:
    return _once(solutions, ("solution", _written_key(decimals)), digits, lambda: _aligned(
        [(p.function(j), solutions[u]) for j, u in enumerate(p.unknowns)], digits, decimals))


def _written_in(p) -> str:
    """' (SI: x in m, t in s)': the units the solution's numbers are in."""
    if p.units is None:
        return " (t in s)"
    units = ", ".join(f"{u} in {p.unit_context(u).unknown_si or '1'}" for u in p.unknowns)
    return f" (SI: {_esc(units)}, t in s)"


def to_html(obj, figure_source=None, **settings) -> str:
    """HTML fragment of a Derivation (or a Step, Verification, Check).

    ``figure_source`` draws the figure instead of a fresh matplotlib figure: an object with
    ``svg(derivation)``, such as :class:`derivpad.render.figure.LiveFigure`.
    """
    return HtmlRenderer(figure_source, **settings).render(obj)
