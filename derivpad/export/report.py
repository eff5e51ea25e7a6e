"""The calc package's report: one self-contained HTML page, and its PDF printed by Chromium.

Layout: the first sheet — one title block (calc number, revision, title, project, preparer and
checker with sign-off fields, status), the purpose, the inputs, each derivation's key results
against its acceptance criteria and its verification status — then contents, the rest of the
calc record (method, revision history), each derivation as the notebook showed it with every
step opened, the collected assumptions and references, and the cautions. A heading appears
only over content.
A package made with ``--allow-failed`` carries NOT VERIFIED on every printed page.
"""

from __future__ import annotations

import html
import subprocess
import tempfile
from pathlib import Path

from ..render.latex import CAUTION
from ..render.offline import standalone_page
from ..render.html import STYLE, HtmlRenderer
from ..render.record import inputs_html, record_details_html

__all__ = ["report_html", "print_pdf", "CHROMIUM", "PAGE_SIZES"]

PAGE_SIZES = ("A4", "Letter")
"""Paper for the printed report: A4 by default, US Letter by option."""

CHROMIUM = "/usr/bin/chromium"

_STYLE = """
body{font-family:system-ui,sans-serif;margin:1.5em auto;max-width:60em;color:#1d1d1d}
.dp-cover{border:3px double #444;padding:.8em 1.2em;margin-bottom:1.2em}
.dp-cover h1{margin:.1em 0 .4em;font-size:1.5em}
.dp-cover table{border-collapse:collapse}
.dp-cover td,.dp-cover th{border:1px solid #999;padding:.25em .6em;text-align:left}
.dp-sign{min-width:14em}
.dp-status-ok{color:#2e7d4f;font-weight:700}
.dp-status-bad{color:#b3261e;font-weight:700}
.dp-unverified{position:fixed;top:0;left:0;right:0;text-align:center;background:#b3261e;
 color:#fff;font-weight:700;padding:.2em;z-index:10}
h2.dp-section{border-bottom:1px solid #888;margin-top:1.4em}
.derivpad.dp-first{border:none;max-width:none}
.dp-first h3{font-size:1.05em;margin:.9em 0 .2em}
@media print{details.dp-latex{display:none} h2.dp-section{break-before:page}
 h2.dp-section.dp-follows{break-before:auto}
 .dp-unverified{position:fixed}
 .derivpad .dp-math{overflow:visible!important}
 .derivpad mjx-container{overflow:visible!important;max-width:100%!important}
 .derivpad mjx-container svg{max-width:100%!important;height:auto!important}}
"""

_OPEN_ALL = ("<script>document.addEventListener('DOMContentLoaded',function(){"
             "document.querySelectorAll('details.dp-step, details.dp-form')"
             ".forEach(function(d){d.open=true})});</script>")


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _page_style(record: dict, page_size: str) -> str:
    """Print pages a checker can file: the paper size, and on every page the calc number,
    revision and title at the head and "page n of N" at the foot (CSS page-margin boxes)."""
    ident = f"{record['calc_number']} rev {record['revision']} — {record['title']}"
    quoted = ident.replace("\\", "\\\\").replace('"', '\\"')
    return ("@page{size:%s;margin:18mm 16mm 18mm 16mm;"
            "@top-left{content:\"%s\";font:8pt system-ui,sans-serif;color:#444}"
            "@bottom-right{content:\"page \" counter(page) \" of \" counter(pages);"
            "font:8pt system-ui,sans-serif;color:#444}}" % (page_size, quoted))


KEY_RESULTS = ("peak", "time_of_peak", "dynamic_load_factor", "settling_time_2pct",
               "final_value")
"""The results the first sheet shows (for systems, each unknown's and derived quantity's)."""


def _key_results(d) -> dict:
    """The derivation's key results, in KEY_RESULTS order (system keys carry a suffix)."""
    return {k: r for base in KEY_RESULTS for k, r in d.results.items()
            if k == base or k.startswith(base + "_")}


def _first_sheet(record, derivations) -> str:
    """Purpose, inputs, the key results against their acceptance criteria, and the status of
    each derivation's verification: what a checker reads first."""
    out = []
    if record.purpose:
        out.append(f"<p><b>Purpose.</b> {_e(record.purpose)}</p>")
    if record.inputs:
        out.append("<h3>Inputs</h3>" + inputs_html(record))
    renderer = HtmlRenderer()
    for i, d in enumerate(derivations, 1):
        name = f"Derivation {i}" + (f": {d.problem.text}" if d.problem.size == 1 else
                                     f" ({d.problem.size} coupled equations)")
        out.append(f"<h3>{_e(name)}</h3><p>{renderer.status(d.verification)}</p>")
        if d.acceptance:
            out.append(renderer.acceptance(d.acceptance))
        key = _key_results(d)
        shown = {k: r for k, r in key.items() if r.magnitude is not None}
        if shown:
            out.append(renderer.results(shown))
        if len(shown) < len(key):
            out.append("<p>Results that have no value here are listed with the derivation, "
                       "each with the reason.</p>")
    return '<div class="derivpad dp-first">' + "".join(out) + "</div>"


def _cases_sheet(cases) -> str:
    """Each load-case run on the first sheet: its size, forms, each criterion's outcome
    counts and the envelope of its key results."""
    out = []
    for i, c in enumerate(cases, 1):
        out.append(f"<h3>Load cases {i}: {c['cases']} cases ({_e(', '.join(c['forms']))})</h3>")
        lines = []
        for text, counts in c["outcomes"].items():
            bad = c["cases"] - counts.get("OK", 0)
            lines.append(f"{_e(text)}: " + ("<b>OK</b> in every case" if not bad else
                                            f'<b class="dp-bad">NOT OK</b> in {bad} of '
                                            f"{c['cases']} cases"))
        if lines:
            out.append("<ul>" + "".join(f"<li>{x}</li>" for x in lines) + "</ul>")
        rows = [r for r in c["envelope"] if str(r["result"]).split("_")[0] in
                {k.split("_")[0] for k in KEY_RESULTS} or str(r["result"]).endswith(
                    ": utilisation")]
        if rows:
            out.append("<table><tr><th>Result</th><th>Max</th><th>Case</th><th>Min</th>"
                       "<th>Case</th><th>Unit</th></tr>" + "".join(
                           f"<tr><td>{_e(r['result'])}</td><td>{_e(_num(r['max']))}</td>"
                           f"<td>{_e(r['case of max'])}</td><td>{_e(_num(r['min']))}</td>"
                           f"<td>{_e(r['case of min'])}</td><td>{_e(r['unit'])}</td></tr>"
                           for r in rows) + "</table>")
    return '<div class="derivpad dp-first">' + "".join(out) + "</div>" if out else ""


def _num(x) -> str:
    return f"{x:.6g}" if isinstance(x, (int, float)) else str(x)


def report_html(record: dict, derivations, fragments, *, verified: bool, created: str,
                page_size: str = "A4", cases=(), cases_fragments=(), cases_figures=(),
                spectra_fragments=(), signatures=()) -> str:
    """The report page: the first sheet (title block, purpose, inputs, key results against the
    acceptance criteria, status), contents, the rest of the record, the derivations with every
    step open, each load-case run with its figure (``cases_figures``: inline SVG), then
    assumptions, references and cautions; no heading without content."""
    status = ("VERIFIED: every derivation passed all its checks" if verified else
              "NOT VERIFIED: packaged with failed or unrun checks")
    cover = (f'<div class="dp-cover"><h1>{_e(record["title"])}</h1><table>'
             f'<tr><th>Calc number</th><td>{_e(record["calc_number"])}</td>'
             f'<th>Revision</th><td>{_e(record["revision"])}</td></tr>'
             f'<tr><th>Project</th><td colspan="3">{_e(record.get("project", ""))}</td></tr>'
             f'<tr><th>Prepared by</th><td>{_e(record.get("preparer", ""))}</td>'
             f'<th>Signature / date</th><td class="dp-sign">{_signed(signatures, "preparer")}'
             "</td></tr>"
             f'<tr><th>Checked by</th><td>{_e(record.get("checker", ""))}</td>'
             f'<th>Signature / date</th><td class="dp-sign">{_signed(signatures, "checker")}'
             "</td></tr>"
             + (f'<tr><th>Approved by</th><td></td><th>Signature / date</th>'
                f'<td class="dp-sign">{_signed(signatures, "approver")}</td></tr>'
                if any(g["role"] == "approver" for g in signatures) else "")
             + f'<tr><th>Status</th><td colspan="3" class="{"dp-status-ok" if verified else "dp-status-bad"}">'
             f"{_e(status)}</td></tr>"
             f'<tr><th>Packaged</th><td colspan="3">{_e(created)}</td></tr></table></div>')
    calc = _record_object(record)
    rest = record_details_html(calc)
    contents = ['<h2 class="dp-section">Contents</h2><ol>']
    if rest:
        contents.append('<li><a href="#record">Calc record: method and revisions</a></li>')
    contents += [f'<li><a href="#derivation-{i}">Derivation {i}: {_e(d.problem.text)}'
                 "</a></li>" for i, d in enumerate(derivations, 1)]
    contents += [f'<li><a href="#cases-{i}">Load cases {i}: {c["cases"]} cases</a></li>'
                 for i, c in enumerate(cases, 1)]
    contents += [f'<li><a href="#spectrum-{i}">Response spectrum {i}</a></li>'
                 for i in range(1, len(spectra_fragments) + 1)]
    assumptions = list(record.get("assumptions", []))
    for d in derivations:
        assumptions += [a for a in d.assumptions if a not in assumptions]
    references = list(record.get("references", []))
    for d in derivations:
        rules = {r.id: r for step in d.steps for r in step.all_rules}
        for rule in rules.values():
            text = f"{rule.name}: {rule.source}"
            if text not in references:
                references.append(text)
    if assumptions or references:
        contents.append('<li><a href="#assumptions">Assumptions and references</a></li>')
    contents.append('<li><a href="#cautions">Cautions</a></li></ol>')
    body = [("" if verified else '<div class="dp-unverified">NOT VERIFIED</div>'), cover,
            _first_sheet(calc, derivations), _cases_sheet(cases), "".join(contents)]
    if rest:
        body.append(f'<h2 class="dp-section dp-follows" id="record">Calc record</h2>{rest}')
    for i, (d, fragment) in enumerate(zip(derivations, fragments), 1):
        body.append(f'<h2 class="dp-section" id="derivation-{i}">Derivation {i}</h2>{fragment}')
    for i, fragment in enumerate(cases_fragments, 1):
        figure = ""
        if i <= len(cases_figures) and cases_figures[i - 1]:
            caption = (f"Load cases {i}: the governing result against each input, the governing "
                       f"case marked (figures/cases-{i}.svg in the package)")
            figure = (f'<div class="derivpad"><figure>{cases_figures[i - 1]}'
                      f"<figcaption>{_e(caption)}</figcaption></figure></div>")
        body.append(f'<h2 class="dp-section" id="cases-{i}">Load cases {i}</h2>{fragment}'
                    f"{figure}")
    body += [f'<h2 class="dp-section" id="spectrum-{i}">Response spectrum {i}</h2>{fragment}'
             f"<p>figures/spectrum-{i}.svg and spectra/spectrum-{i}.csv in the package</p>"
             for i, fragment in enumerate(spectra_fragments, 1)]
    if assumptions or references:
        part = ['<h2 class="dp-section" id="assumptions">Assumptions and references</h2>']
        for label, items in (("Assumptions", assumptions), ("References", references)):
            if items:
                part.append(f"<h3>{label}</h3><ul>" + "".join(f"<li>{_e(x)}</li>" for x in items)
                            + "</ul>")
        body.append("".join(part))
    body.append(f'<h2 class="dp-section" id="cautions">Cautions</h2><p>{_e(CAUTION)}</p>')
    page = standalone_page(f"<style>{STYLE}{_STYLE}{_page_style(record, page_size)}</style>"
                           f"{_OPEN_ALL}" + "\n".join(body),
                           f"{record['calc_number']} rev {record['revision']}: {record['title']}")
    return page


def _signed(signatures, role: str) -> str:
    """The signature cell of a role: each signer, date, key fingerprint and outcome."""
    rows = [g for g in signatures if g["role"] == role]
    if not rows:
        return "&nbsp;"
    return "<br>".join(f'{_e(g["signer"])}, {_e(g["signed_at"][:10])}, key '
                       f'{_e(g["fingerprint"][:16])}: {_e(g["outcome"])}' for g in rows)


def _record_object(record: dict):
    from ..core.reading.record import CalcRecord
    fields = dict(record)
    fields["inputs"] = [(i["name"], i["value"], i["source"]) for i in record.get("inputs", [])]
    fields["revision_history"] = [(r["revision"], r["date"], r["description"])
                                  for r in record.get("revision_history", [])]
    return CalcRecord(**fields)


def print_pdf(html_path: Path, pdf_path: Path, chromium: str = CHROMIUM,
              timeout: int = 120) -> str | None:
    """Print the report with headless Chromium; None when done, else why it was not printed.

    ``--virtual-time-budget`` lets the page's scripts (opening every section, MathJax
    typesetting) finish before printing.
    """
    html_path, pdf_path = Path(html_path).resolve(), Path(pdf_path).resolve()  # relative -o
    if not Path(chromium).exists():
        return (f"no PDF: Chromium is not installed at {chromium}; install Debian's package "
                "with: apt-get install -y chromium")
    with tempfile.TemporaryDirectory() as profile:
        cmd = [chromium, "--headless", "--no-sandbox", "--disable-gpu",
               "--disable-background-networking", "--disable-component-update", "--no-first-run",
               f"--user-data-dir={profile}", "--virtual-time-budget=30000",
               "--no-pdf-header-footer", f"--print-to-pdf={pdf_path}", html_path.as_uri()]
        try:
            subprocess.run(cmd, capture_output=True, timeout=timeout, check=False)
        except subprocess.TimeoutExpired:
            return f"no PDF: Chromium did not finish printing within {timeout} s"
    if not pdf_path.is_file() or pdf_path.stat().st_size == 0:
        return "no PDF: Chromium ran but wrote no file"
    return None

