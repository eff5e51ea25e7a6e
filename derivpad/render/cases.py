"""Load-case results as HTML and text: the summary, what was verified, the envelope with its
governing cases, each form's derivation (collapsed) and the head of the table."""

from __future__ import annotations

import html
import math

from .latex import CAUTION

__all__ = ["CASES_MIME_TYPE", "cases_bundle", "cases_figure", "cases_html", "cases_text"]

CASES_MIME_TYPE = "application/vnd.derivpad.cases+json"
"""Our own type for the load-case results in a notebook's outputs (read by the packager)."""

HEAD_ROWS = 10
_STYLE = (".dp-cases-view table.dp-cases,.dp-cases-view table.dp-envelope{border-collapse:"
          "collapse;font-size:.85em;margin:.3em 0}"
          ".dp-cases-view .dp-cases td,.dp-cases-view .dp-cases th,.dp-cases-view .dp-envelope td,"
          ".dp-cases-view .dp-envelope th{border:1px solid var(--jp-border-color2,#ccc);"
          "padding:.1em .4em;text-align:left;vertical-align:top}"
          "@media print{.dp-cases-view table.dp-cases,.dp-cases-view table.dp-envelope{"
          "width:100%;table-layout:fixed;overflow-wrap:anywhere;font-size:7pt}}")
HEAD_RESULTS = ("peak", "time_of_peak", "dynamic_load_factor", "settling_time_2pct")
"""The results the view's table shows (every column is in ``CaseResults.table``)."""


def _head_columns(r) -> list:
    """Case, inputs, the key results (a system's per unknown), the criteria, the form."""
    cols = [str(c) for c in r.table.columns]
    shown = [c for c in HEAD_RESULTS if c in cols]
    if not shown:  # a system: its results carry the unknown's or quantity's name
        shown = [c for c in cols for base in HEAD_RESULTS if c.startswith(base + "_")
                 and not c.endswith(("_primary", "_residual")) and
                 not any(c.startswith(b + "_") for b in HEAD_RESULTS if len(b) > len(base))]
    judged = [c for c in cols if c.endswith((": utilisation", ": outcome"))]
    return ["case", *r.inputs, *shown, *judged, "form"]


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
    parts = ['<div class="derivpad dp-cases-view">', f"<style>{_STYLE}</style>",
             "<p><b>" + _e(_summary(r)[0]) + "</b></p>",
             "<ul>" + "".join(f"<li>{_e(x)}</li>" for x in _summary(r)[1:]) + "</ul>",
             "<p><b>Verified.</b></p><ul>"
             + "".join(f"<li>{_e(v)}</li>" for v in r.verified) + "</ul>",
             "<p><b>Envelope</b> (largest and smallest value of each result, and the case it "
             "comes from)</p>", _table(r.envelope, {}, "dp-envelope")]
    for form, d in r.forms:
        parts.append(f'<details class="dp-form"><summary>The {_e(form)} form, derived once in '
                     "symbols and "
                     f"checked in full</summary>{to_html(d)}</details>")
    shown = r.table.head(HEAD_ROWS)[_head_columns(r)]
    parts.append(f"<p><b>Cases</b> (first {len(shown)} of {len(r.table)}; every result of "
                 "every case is in <code>.table</code>)</p>" + _table(shown, dict(r.units)))
    parts.append(f'<p class="dp-caution"><b>Caution.</b> {_e(CAUTION)}</p></div>')
    return "\n".join(parts)


def cases_bundle(r, include=None, exclude=None) -> dict:
    makers = {"text/plain": lambda: cases_text(r), "text/html": lambda: cases_html(r),
              CASES_MIME_TYPE: r.to_dict}
    return {m: make() for m, make in makers.items()
            if (include is None or m in include) and (exclude is None or m not in exclude)}


def cases_figure(r, result: str | None = None, width: float = 7.5):
    """A matplotlib Figure: ``result`` (default: the first criterion's result, else ``peak``)
    against each input, one panel per input, the governing case marked; below, where a
    criterion limits that result, its utilisation with the line where it is used up (1)."""
    from ..errors import ParameterError, import_extra
    (figure_module,) = import_extra(("matplotlib.figure",), "the load-case figure")
    inputs = list(r.inputs)
    outcomes = [str(c)[: -len(": outcome")] for c in r.table.columns
                if str(c).endswith(": outcome")]
    if result is None:
        limited = [t.split()[0] for t in outcomes]
        result = limited[0] if limited else "peak"
    if result not in r.table.columns:
        known = ", ".join(r.envelope["result"].tolist()[:12])
        raise ParameterError(f"no result {result!r} in the table (results: {known}, …)", result)
    uses = [t for t in outcomes if t.split()[0] == result]
    rows = 2 if uses else 1
    fig = figure_module.Figure(figsize=(width, 2.4 * rows + 0.5))
    axes = fig.subplots(rows, len(inputs), squeeze=False)
    # the governing case: the one that uses its criterion most, else the largest value
    envelope = r.envelope.set_index("result")
    key = f"{uses[0]}: utilisation" if uses else result
    top = envelope.loc[key, "case of max"] if key in envelope.index else None
    governing = r.table["case"] == top
    unit = r.units.get(result, "")
    for j, name in enumerate(inputs):
        ax = axes[0][j]
        ax.scatter(r.table[name], r.table[result], s=9, color="#1f3f8f", label="cases")
        if governing.any():
            ax.scatter(r.table[name][governing], r.table[result][governing], s=40,
                       facecolors="none", edgecolors="#b3261e", linewidths=1.5,
                       label=f"governing (case {top})")
        ax.set_xlabel(name + (f" [{r.units[name]}]" if r.units.get(name) else ""))
        if j == 0:
            ax.set_ylabel(result + (f" [{unit}]" if unit else ""))
            ax.legend(fontsize=7, frameon=False, loc="best")
        ax.grid(True, lw=0.3, color="0.85")
        for text in uses[:1]:
            low = axes[1][j]
            low.scatter(r.table[name], r.table[f"{text}: utilisation"], s=9, color="#1f3f8f")
            low.axhline(1.0, color="#b3261e", lw=0.9, ls="--")
            low.set_xlabel(name + (f" [{r.units[name]}]" if r.units.get(name) else ""))
            if j == 0:
                low.set_ylabel(f"utilisation of\n{text}", fontsize=8)
            low.grid(True, lw=0.3, color="0.85")
    fig.suptitle(f"{len(r.table)} load cases: {result} against the inputs", fontsize=9,
                 x=0.02, ha="left")
    fig.tight_layout()
    return fig
