"""Load-case results as HTML and text: the summary, what was verified, the envelope with its
governing cases, each form's derivation (collapsed) and the head of the table."""

from __future__ import annotations

import html
import math

from .latex import CAUTION

__all__ = ["cases_bundle", "cases_html", "cases_text"]

HEAD_ROWS = 10


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _number(x) -> str:
    if isinstance(x, str):
        return x
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "—"
    if isinstance(x, float) and math.isinf(x):
        return "unbounded" if x > 0 else "−unbounded"
    return f"{x:.6g}"


def _summary(r) -> list[str]:
    n = len(r.table)
    outcome = [c for c in r.table.columns if str(c).endswith(": outcome")]
    failed = int((r.table["form"] == "failed").sum())
    lines = [f"{n} load cases" + (f", {failed} of them failed (see the notes column)"
                                  if failed else "")]
    for c in outcome:
        bad = int((r.table[c] != "OK").sum())
        text = str(c)[: -len(": outcome")]
        lines.append(f"{text}: " + ("OK in every case" if not bad else
                                    f"NOT OK in {bad} of {n} cases"))
    return lines


def cases_text(r) -> str:
    """Plain-text summary: counts, criteria, verification, envelope."""
    lines = _summary(r) + ["Verified:"] + [f"  {v}" for v in r.verified] + ["Envelope:"]
    for _, row in r.envelope.iterrows():
        unit = f" {row['unit']}" if row["unit"] else ""
        lines.append(f"  {row['result']}: max {_number(row['max'])}{unit} (case "
                     f"{row['case of max']}), min {_number(row['min'])}{unit} (case "
                     f"{row['case of min']})")
    lines.append("Caution: " + CAUTION)
    return "\n".join(lines)


def _table(frame, units, css: str = "dp-cases") -> str:
    head = "".join(f"<th>{_e(c)}" + (f" [{_e(units[c])}]" if units.get(c) else "") + "</th>"
                   for c in frame.columns)
    body = "".join("<tr>" + "".join(f"<td>{_e(_number(v))}</td>" for v in row) + "</tr>"
                   for row in frame.itertuples(index=False))
    return f'<table class="{css}"><tr>{head}</tr>{body}</table>'


def cases_html(r) -> str:
    """The HTML view: summary, verification, envelope, forms (collapsed), table head."""
    from .html import to_html
    parts = ['<div class="derivpad dp-cases-view">',
             "<p><b>" + _e(_summary(r)[0]) + "</b></p>",
             "<ul>" + "".join(f"<li>{_e(x)}</li>" for x in _summary(r)[1:]) + "</ul>",
             "<p><b>Verified.</b></p><ul>"
             + "".join(f"<li>{_e(v)}</li>" for v in r.verified) + "</ul>",
             "<p><b>Envelope</b> (largest and smallest value of each result, and the case it "
             "comes from)</p>", _table(r.envelope, {}, "dp-envelope")]
    for form, d in r.forms:
        parts.append(f"<details><summary>The {_e(form)} form, derived once in symbols and "
                     f"checked in full</summary>{to_html(d)}</details>")
    shown = r.table.head(HEAD_ROWS)
    parts.append(f"<p><b>Cases</b> (first {len(shown)} of {len(r.table)})</p>"
                 + _table(shown, dict(r.units)))
    parts.append(f'<p class="dp-caution"><b>Caution.</b> {_e(CAUTION)}</p></div>')
    return "\n".join(parts)


def cases_bundle(r, include=None, exclude=None) -> dict:
    makers = {"text/plain": lambda: cases_text(r), "text/html": lambda: cases_html(r)}
    return {m: make() for m, make in makers.items()
            if (include is None or m in include) and (exclude is None or m not in exclude)}
