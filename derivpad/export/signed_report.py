"""``derivpad report PACKAGE``: the report rendered again from a signed package, with its
sign-off block filled — each signature's signer, role, date, key fingerprint and outcome.

The package's files are never touched (the signatures cover them): the report is rendered
from what the packaged notebook displayed (nothing is run) and written beside the package,
``<package>-signed-report.html`` (and ``.pdf``). A package that does not match its manifest
is not rendered.
"""

from __future__ import annotations

import json
from pathlib import Path

from .manifest import _read_package, audit_manifest
from .notebook_io import read_calc
from .report import print_pdf, report_html
from .signing import verify_signatures

__all__ = ["signed_report"]


def _signatures(package, trust) -> list[dict]:
    findings, problems = verify_signatures(package, trust)
    out = []
    for f in findings:
        outcome = f.outcome if trust is not None else "not verified here (audit with --trust)"
        if problems and f.valid:
            outcome = "valid, but the signatures' list does not hold: " + problems[0]
        out.append({"signer": f.signer, "role": f.role, "signed_at": f.signed_at,
                    "fingerprint": f.fingerprint, "outcome": outcome})
    return out


def signed_report(package, out_dir=None, *, trust=None, pdf: bool = True,
                  page_size: str = "A4") -> tuple[Path, str]:
    """Render the package's report with its signatures (verified against ``trust`` when
    given) beside the package; returns (the HTML path, a note on the PDF, "" when printed)."""
    import nbformat
    package = Path(package)
    audit_manifest(package).raise_if_broken()
    files = _read_package(package)
    notebooks = sorted(n for n in files if n.endswith(".ipynb") and "/" not in n)
    nb = nbformat.reads(files[notebooks[0]].decode("utf-8"), as_version=4)
    calc = read_calc(nb)
    created = json.loads(files["environment.json"].decode("utf-8")).get("created", "")
    cases = json.loads(files["cases.json"].decode("utf-8")) if "cases.json" in files else []
    figures = [files.get(f"figures/cases-{i}.svg", b"").decode("utf-8")
               for i in range(1, len(cases) + 1)]
    figures = [t[t.find("<svg"):] if "<svg" in t else "" for t in figures]
    verified = not [f for f in calc.failures]
    html = report_html(calc.record, calc.derivations, calc.html, verified=verified,
                       created=created, page_size=page_size, cases=cases,
                       cases_fragments=calc.cases_html, cases_figures=figures,
                       spectra_fragments=calc.spectra_html,
                       signatures=_signatures(package, trust))
    name = package.name[:-4] if package.suffix == ".zip" else package.name
    folder = Path(out_dir) if out_dir is not None else package.parent
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / f"{name}-signed-report.html"
    part = target.with_name(target.name + ".part")
    part.write_text(html, encoding="utf-8")
    part.replace(target)
    note = ""
    if pdf:
        note = print_pdf(target, target.with_suffix(".pdf")) or ""
    return target, note
