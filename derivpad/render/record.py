"""The calc record as a header block (HTML) and as text."""

from __future__ import annotations

import html

from ..core.reading.record import CalcRecord
from .latex import CAUTION

__all__ = ["inputs_html", "record_html", "record_details_html", "record_text", "record_bundle",
           "revisions_html", "RECORD_MIME_TYPE"]

RECORD_MIME_TYPE = "application/vnd.derivpad.record+json"

_STYLE = """.dp-record{font-family:var(--jp-content-font-family,system-ui,sans-serif);
 border:2px solid var(--jp-border-color1,#888);padding:.5em .9em;max-width:62em;
 color:var(--jp-content-font-color1,#1d1d1d)}
.dp-record h2{margin:.1em 0 .3em;font-size:1.25em}
.dp-record.dp-record table{border-collapse:collapse;margin:.3em 0;font-size:.92em}
.dp-record.dp-record th,.dp-record.dp-record td{border:1px solid var(--jp-border-color2,#ccc);
 padding:.15em .5em;text-align:left;vertical-align:top}
.dp-record .dp-caution{font-size:.9em;border-top:1px solid var(--jp-border-color1,#bbb);
 margin-top:.5em;padding-top:.3em}"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _rows(pairs) -> str:
    return "".join(f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in pairs if v)


def inputs_html(r: CalcRecord) -> str:
    """The record's inputs, each with its value and source, as a table."""
    return ("<table><tr><th>Input</th><th>Value</th><th>Source</th></tr>" + "".join(
        f"<tr><td>{_e(i.name)}</td><td>{_e(i.value)}</td><td>{_e(i.source)}</td></tr>"
        for i in r.inputs) + "</table>")


def revisions_html(r: CalcRecord) -> str:
    """The record's revision history as a table."""
    by = any(v.by for v in r.revision_history)  # a "By" column where any entry names one
    return ("<table><tr><th>Rev</th><th>Date</th><th>Description</th>"
            + ("<th>By</th>" if by else "") + "</tr>" + "".join(
                f"<tr><td>{_e(v.revision)}</td><td>{_e(v.date)}</td><td>{_e(v.description)}</td>"
                + (f"<td>{_e(v.by)}</td>" if by else "") + "</tr>"
                for v in r.revision_history) + "</table>")


def record_html(r: CalcRecord) -> str:
    """The record's header block."""
    ident = _rows([("Calc number", r.calc_number), ("Revision", r.revision),
                   ("Project", r.project), ("Prepared by", f"{r.preparer} {r.prepared_date}".strip()),
                   ("Checked by", f"{r.checker} {r.checked_date}".strip())])
    parts = [f'<div class="dp-record"><style>{_STYLE}</style>', f"<h2>{_e(r.title)}</h2>",
             f"<table>{ident}</table>"]
    for label, text in (("Purpose", r.purpose), ("Method", r.method)):
        if text:
            parts.append(f"<p><b>{label}.</b> {_e(text)}</p>")
    if r.inputs:
        parts.append(inputs_html(r))
    for label, items in (("Acceptance criteria", r.criteria), ("Assumptions", r.assumptions),
                         ("References", r.references)):
        if items:
            parts.append(f"<p><b>{label}.</b></p><ul>"
                         + "".join(f"<li>{_e(x)}</li>" for x in items) + "</ul>")
    if r.revision_history:
        parts.append(revisions_html(r))
    parts.append(f'<p class="dp-caution"><b>Caution.</b> {_e(CAUTION)}</p></div>')
    return "\n".join(parts)


def record_details_html(r: CalcRecord) -> str:
    """What the report's first sheet does not show: the method and the revision history
    (empty when the record has neither; assumptions and references are collected apart)."""
    parts = []
    if r.method:
        parts.append(f"<p><b>Method.</b> {_e(r.method)}</p>")
    if r.revision_history:
        parts.append(revisions_html(r))
    return "\n".join(parts)


def record_text(r: CalcRecord) -> str:
    """The record as plain text."""
    lines = [r.title, "=" * len(r.title), f"Calc {r.calc_number}, revision {r.revision}"]
    for label, value in (("Project", r.project), ("Prepared by", r.preparer),
                         ("Checked by", r.checker), ("Purpose", r.purpose), ("Method", r.method)):
        if value:
            lines.append(f"{label}: {value}")
    for i in r.inputs:
        lines.append(f"  input {i.name} = {i.value}  ({i.source})")
    lines += [f"  acceptance criterion: {c}" for c in r.criteria]
    lines += [f"  assumption: {a}" for a in r.assumptions]
    lines += [f"  reference: {x}" for x in r.references]
    lines.append("Caution: " + CAUTION)
    return "\n".join(lines)


def record_bundle(r: CalcRecord, include=None, exclude=None) -> dict:
    """Display bundle: HTML header, text, and the record's JSON under our own type."""
    makers = {"text/plain": lambda: record_text(r), "text/html": lambda: record_html(r),
              RECORD_MIME_TYPE: r.to_dict}
    return {m: make() for m, make in makers.items()
            if (include is None or m in include) and (exclude is None or m not in exclude)}
