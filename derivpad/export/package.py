"""Assemble a calc package: executed fresh, written in a temporary folder, then moved into place.

``<calc-number>-rev<R>/`` holds report.html (offline), report.pdf (headless Chromium), the
executed notebook, record.json, inputs.json, results.json, figures/, environment.json and MANIFEST.sha256
over every other file; ``<calc-number>-rev<R>.zip`` holds the same. Nothing is written where
the package goes until it is complete: an existing package of the same revision is never
overwritten (``force`` moves it aside first), and a failure leaves nothing behind.
"""

from __future__ import annotations

import csv
import datetime as _dt
import importlib.metadata as _md
import io
import json
import os
import platform
import shutil
import sys
import tempfile
import zipfile
from dataclasses import dataclass
from pathlib import Path

from ..errors import ExportError
from .manifest import MANIFEST_NAME, write_manifest
from .notebook_io import PackageRefusedError, execute_notebook
from .report import PAGE_SIZES, print_pdf, report_html

__all__ = ["PackageResult", "make_package"]

_ZIP_TIME = (1980, 1, 1, 0, 0, 0)  # fixed: the same files give the same archive
_PACKAGES = ("derivpad", "sympy", "numpy", "scipy", "mpmath", "pint", "matplotlib",
             "nbclient", "nbformat", "ipykernel", "ipython", "ipywidgets", "nbconvert")


@dataclass(frozen=True, slots=True)
class PackageResult:
    """Where the package went, whether it is verified, and anything that was left out."""

    folder: Path
    archive: Path
    verified: bool
    notes: tuple[str, ...]


def _json(data) -> str:
    return json.dumps(data, indent=2, sort_keys=True, ensure_ascii=False, allow_nan=False) + "\n"


def results_records(derivations) -> list:
    """Each derivation's entry of results.json (also what an audit re-run is compared on),
    from the Derivation objects read back from the notebook."""
    return [record_of(d.to_dict(), i) for i, d in enumerate(derivations, 1)]


def record_of(d: dict, i: int) -> dict:
    """The results.json entry of one derivation's canonical JSON form; version 1 forms (older
    packages) have the same entries, so an audit compares either."""
    p = d["problem"]
    return {
        "id": f"derivation-{i}", "format_version": d.get("version", 1),
        "equation": p["equation"], "unknown": p["unknown"],
        "initial_conditions": {k: v["text"] for k, v in p["initial_conditions"].items()},
        "parameters": {k: v["text"] for k, v in p["parameters"].items()},
        "parameters_given": (d.get("units") or {}).get("parameters", {}),
        "solution": {"latex": d["solution"]["latex"], "text": d["solution"]["text"],
                     "tree": d["solution"]["tree"]},
        "results": d["results"], "verification": d["verification"],
        "acceptance": d.get("acceptance", []), "assumptions": d["assumptions"]}


def _inputs(record, derivations) -> dict:
    from ..render.notation import text_expr
    return {"record": record.get("inputs", []),
            "derivations": [{"equation": d.problem.text,
                             "parameters": {k: text_expr(v) for k, v in d.problem.parameters},
                             "given": {q.name: {"given": q.given, "si_value": float(q.si_value),
                                                "si_unit": q.si_unit}
                                       for q in d.problem.quantities}}
                            for d in derivations]}


def environment_info(created: str) -> dict:
    """Python, platform and package versions, for environment.json."""
    versions = {}
    for name in _PACKAGES:
        try:
            versions[name] = _md.version(name)
        except _md.PackageNotFoundError:
            continue
    return {"created": created, "python": sys.version.split()[0],
            "implementation": platform.python_implementation(), "platform": platform.platform(),
            "machine": platform.machine(), "packages": versions}


def cases_records(cases) -> list:
    """Each load-case run's entry of cases.json (also what an audit re-run is compared on):
    its size, forms, inputs and units, what was verified, each criterion's outcome counts and
    the envelope with its governing cases."""
    out = []
    for i, c in enumerate(cases, 1):
        table = c["table"]
        outcomes = {col[: -len(": outcome")]: {v: table[col].count(v)
                                               for v in sorted(set(table[col]), key=str)}
                    for col in table if col.endswith(": outcome")}
        out.append({"id": f"cases-{i}", "format_version": c.get("format_version", 1),
                    "cases": len(table["case"]), "failed": table["form"].count("failed"),
                    "forms": sorted(set(table["form"])),
                    "inputs": c["inputs"], "units": c["units"], "verified": c["verified"],
                    "outcomes": outcomes, "envelope": c["envelope"]})
    return out


def _inline_figures(files: dict, runs: int) -> list[str]:
    """Each load-case run's figure file as an inline SVG element for the report."""
    out = []
    for i in range(1, runs + 1):
        text = files.get(f"figures/cases-{i}.svg", b"").decode("utf-8")
        out.append(text[text.find("<svg"):] if "<svg" in text else "")
    return out


def _case_files(cases) -> dict[str, bytes]:
    """Each load-case run's table as CSV (and as Parquet where pyarrow is installed), its
    envelope as CSV, under cases/, and its figure (the governing result against the inputs)
    under figures/."""
    from ..cases.results import CaseResults
    from ..render.figure import svg_file
    out = {}
    for i, c in enumerate(cases, 1):
        out[f"figures/cases-{i}.svg"] = svg_file(CaseResults.from_dict(c).figure())
        columns = list(c["table"])
        out[f"cases/cases-{i}.csv"] = _csv(columns, zip(*(c["table"][k] for k in columns)))
        env = list(c["envelope"][0]) if c["envelope"] else []
        out[f"cases/envelope-{i}.csv"] = _csv(env, ([r[k] for k in env] for r in c["envelope"]))
        try:
            import pyarrow as pa
            import pyarrow.parquet as pq
        except ImportError:
            continue
        sink = io.BytesIO()
        pq.write_table(pa.table({k: pa.array(v) for k, v in c["table"].items()}), sink)
        out[f"cases/cases-{i}.parquet"] = sink.getvalue()
    return out


def _csv(header, rows) -> bytes:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(["" if v is None else v for v in row] for row in rows)
    return buffer.getvalue().encode("utf-8")


def _figures(derivations) -> dict[str, bytes]:
    """Each derivation's verification figure, drawn from its samples: the checks are run
    again on the derivation read back from the notebook (deterministic, so the figure is the
    one the notebook showed). A derivation with symbolic parameters and no values has none."""
    from ..core.engine import recheck
    from ..render.figure import svg_file, verification_figure
    out = {}
    for i, d in enumerate(derivations, 1):
        if all(name in dict(d.values) for name in d.problem.symbols):
            # under a load record or a periodic load the JSON keeps the samples themselves
            drawn = d if d.verification.samples is not None else recheck(d)
            out[f"figures/derivation-{i}.svg"] = svg_file(verification_figure(drawn))
    return out


def _zip(folder: Path, archive: Path) -> None:
    with zipfile.ZipFile(archive, "w", compression=zipfile.ZIP_DEFLATED) as zf:
        for path in sorted(folder.rglob("*")):
            if path.is_file():
                info = zipfile.ZipInfo(f"{folder.name}/{path.relative_to(folder).as_posix()}",
                                       _ZIP_TIME)
                info.compress_type = zipfile.ZIP_DEFLATED
                zf.writestr(info, path.read_bytes())


def make_package(notebook, out_dir=".", *, allow_failed: bool = False, force: bool = False,
                 pdf: bool = True, progress=print, page_size: str = "A4") -> PackageResult:
    """Execute ``notebook`` fresh and write its calc package under ``out_dir``; the report is
    laid out for ``page_size`` paper ("A4" or "Letter").

    Raises
    ------
    PackageRefusedError
        A cell failed, the notebook has no CalcRecord, or a derivation is not verified (unless
        ``allow_failed``); the report names the cell and the check.
    ExportError
        The package of this revision exists already (pass ``force`` to replace it).
    """
    say = progress or (lambda *_: None)
    if page_size not in PAGE_SIZES:
        raise ExportError(f"page size must be one of {', '.join(PAGE_SIZES)}, not {page_size!r}")
    notebook = Path(notebook).resolve()
    out_dir = Path(out_dir).resolve()  # relative to the current folder, whatever runs later
    calc = execute_notebook(notebook, progress=say)
    verified = _packageable(calc, allow_failed)
    name = f"{calc.record['calc_number']}-rev{calc.record['revision']}"
    final, archive = out_dir / name, out_dir / f"{name}.zip"
    if (final.exists() or archive.exists()) and not force:
        raise ExportError(f"{final} already exists; a revision is never overwritten. Raise the "
                          "revision in the CalcRecord, or pass --force to replace it (the old "
                          "package is kept aside)")
    out_dir.mkdir(parents=True, exist_ok=True)
    created = _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat()
    cases = cases_records(calc.cases)
    notes = []
    with tempfile.TemporaryDirectory(prefix=f".{name}-", dir=out_dir) as work:
        stage = Path(work) / name
        stage.mkdir()
        files = _package_files(calc, cases, notebook.name, created)
        for rel, data in files.items():
            say(f"writing {rel}")
            (stage / rel).parent.mkdir(parents=True, exist_ok=True)
            (stage / rel).write_bytes(data)
        say("writing report.html")
        report = stage / "report.html"
        report.write_text(report_html(calc.record, calc.derivations, calc.html,
                                      verified=verified, created=created, page_size=page_size,
                                      cases=cases, cases_fragments=calc.cases_html,
                                      cases_figures=_inline_figures(files, len(cases)),
                                      spectra_fragments=calc.spectra_html),
                          encoding="utf-8")
        if pdf:
            say("printing report.pdf")
            why = print_pdf(report, stage / "report.pdf")
            if why:
                notes.append(why)
                say(why)
        say(f"writing {MANIFEST_NAME}")
        write_manifest(stage)
        staged_zip = Path(work) / f"{name}.zip"
        _zip(stage, staged_zip)
        if force:
            _set_aside(final, archive)
        os.replace(stage, final)
        os.replace(staged_zip, archive)
    say(f"package written: {final} and {archive}")
    return PackageResult(final, archive, verified, tuple(notes))


def _packageable(calc, allow_failed: bool) -> bool:
    """Refuse what cannot be packaged (a cell error, no record, nothing to package, an
    unverified derivation or a failed load case without ``allow_failed``); True when every
    derivation and case is verified."""
    errors = [f for f in calc.failures if not f.unverified]
    unverified = [f for f in calc.failures if f.unverified]
    if errors:
        raise PackageRefusedError("not packaged: " + "; ".join(
            f"code cell {f.cell}: {f.what}" for f in errors), errors)
    if calc.record is None:
        raise PackageRefusedError("not packaged: the notebook displays no derivpad.CalcRecord; "
                                  "put one (with calc_number and revision) in its first cell")
    if not calc.derivations and not calc.cases and not calc.spectra:
        raise PackageRefusedError("not packaged: the notebook displays no derivation, no load "
                                  "cases and no response spectrum")
    failed_cases = [(i, c["table"]["form"].count("failed")) for i, c in enumerate(calc.cases, 1)
                    if "failed" in c["table"]["form"]]
    if failed_cases and not allow_failed:
        raise PackageRefusedError("not packaged: " + "; ".join(
            f"load cases {i}: {n} case(s) could not be evaluated (form 'failed', the reason in "
            "the notes column)" for i, n in failed_cases)
            + ". Fix the table, or pass --allow-failed to package it marked NOT VERIFIED")
    if unverified and not allow_failed:
        raise PackageRefusedError("not packaged: " + "; ".join(
            f"code cell {f.cell}: {f.what}" for f in unverified)
            + ". Fix the calculation, or pass --allow-failed to package it marked NOT VERIFIED",
            unverified)
    # a load-case row that could not be evaluated (on_error="record") is not a verified case
    return not unverified and not failed_cases


def _package_files(calc, cases: list, notebook_name: str, created: str) -> dict[str, bytes]:
    """Every file of the package but the report, the PDF and the manifest."""
    return {"record.json": _json(calc.record).encode(),
            "results.json": _json(results_records(calc.derivations)).encode(),
            **({"cases.json": _json(cases).encode(), **_case_files(calc.cases)}
               if calc.cases else {}),
            "inputs.json": _json(_inputs(calc.record, calc.derivations)).encode(),
            "environment.json": _json(environment_info(created)).encode(),
            notebook_name: _notebook_bytes(calc.notebook),
            **_figures(calc.derivations), **_spectrum_files(calc.spectra)}


def _spectrum_files(spectra) -> dict[str, bytes]:
    """Each response spectrum's JSON (spectra.json), its table as CSV under spectra/, and its
    figure (SD, PSV, PSA against the period) under figures/."""
    if not spectra:
        return {}
    from ..render.figure import svg_file
    from ..render.spectrum import SpectrumData, spectrum_figure
    out = {"spectra.json": _json(list(spectra)).encode()}
    for i, sp in enumerate(spectra, 1):
        columns = ["period_s", "SD", "PSV", "PSA", "load_factor", "time_of_peak_s"]
        out[f"spectra/spectrum-{i}.csv"] = _csv(columns, zip(*(sp[k] for k in columns)))
        out[f"figures/spectrum-{i}.svg"] = svg_file(spectrum_figure(SpectrumData(sp)))
    return out


def _notebook_bytes(nb) -> bytes:
    import nbformat
    return (nbformat.writes(nb) + "\n").encode("utf-8")


def _set_aside(final: Path, archive: Path) -> None:
    """Move an existing package out of the way (never delete it): '<name>.replaced-<n>'."""
    n = 1
    while (final.with_name(f"{final.name}.replaced-{n}")).exists():
        n += 1
    if final.exists():
        shutil.move(str(final), str(final.with_name(f"{final.name}.replaced-{n}")))
    if archive.exists():
        shutil.move(str(archive), str(archive.with_name(f"{archive.stem}.replaced-{n}.zip")))
