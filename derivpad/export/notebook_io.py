"""Execute a calculation notebook fresh, and read back what it showed.

The notebook runs in a new kernel (nbclient); stored outputs are never trusted. From the
executed cells the packager reads the calc record and every derivation through derivpad's
own MIME types, and the HTML the notebook displayed for each, so the package holds exactly
what a reader of the notebook saw. The record's own acceptance criteria are judged here on
every derivation that has the result, so that the package, its results and a re-run audit
all read the same judgements.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from ..core.checking.acceptance import judge_calc
from ..core.model.derivation import Derivation
from ..errors import DerivpadError, ExportError, PackageRefusedError, import_extra
from ..render.cases import CASES_MIME_TYPE
from ..render.mimebundle import DERIVATION_MIME_TYPE
from ..render.record import RECORD_MIME_TYPE
from ..render.spectrum import SPECTRUM_MIME_TYPE

__all__ = ["ExecutedCalc", "CellFailure", "execute_notebook", "read_calc",
           "PackageRefusedError"]


@dataclass(frozen=True, slots=True)
class CellFailure:
    """Where packaging found a problem: the cell (1-based, code cells counted) and what."""

    cell: int
    what: str
    unverified: bool = False     # a derivation whose checks did not all pass (not an error)


@dataclass(frozen=True, slots=True)
class ExecutedCalc:
    """An executed notebook: its node, the record, and each derivation's JSON and HTML."""

    notebook: object
    record: dict | None
    derivations: tuple            # Derivation objects, read back from the vendor MIME JSON
    html: tuple[str, ...]
    cells: tuple[int, ...]        # the code cell each derivation came from
    failures: tuple[CellFailure, ...]
    cases: tuple = ()             # each load-case run's JSON form (CaseResults.to_dict)
    cases_html: tuple = ()        # and the HTML the notebook displayed for it
    spectra: tuple = ()           # each response spectrum's JSON form
    spectra_html: tuple = ()      # and the HTML the notebook displayed for it (figure, table)


def _libs():
    nbformat, nbclient = import_extra(("nbformat", "nbclient"), "packaging")
    return nbformat, nbclient.NotebookClient


def execute_notebook(path, progress=None, timeout: int = 600) -> ExecutedCalc:
    """Run every cell in a fresh kernel; collect record, derivations and failures."""
    nbformat, NotebookClient = _libs()
    path = Path(path)
    if not path.is_file():
        raise ExportError(f"no notebook at {path}")
    nb = nbformat.read(path, as_version=4)
    for cell in nb.cells:
        if cell.cell_type == "code":
            cell.outputs, cell.execution_count = [], None
    code_cells = [c for c in nb.cells if c.cell_type == "code"]
    client = NotebookClient(nb, timeout=timeout, kernel_name="python3", allow_errors=True,
                            resources={"metadata": {"path": str(path.parent)}})
    failures = []
    with client.setup_kernel():
        for n, cell in enumerate(code_cells, 1):
            if progress:
                progress(f"cell {n} of {len(code_cells)}")
            client.execute_cell(cell, nb.cells.index(cell))
            for out in cell.outputs:
                if out.output_type == "error":
                    failures.append(CellFailure(n, f"{out.ename}: {out.evalue}"))
    return read_calc(nb, failures)


def read_calc(nb, failures=()) -> ExecutedCalc:
    """The calc a notebook's stored outputs show (record, derivations, load cases, spectra),
    without running it: what the package holds, and what a re-rendered report shows."""
    failures = list(failures)
    code_cells = [c for c in nb.cells if c.cell_type == "code"]
    record, record_cell, derivations, html, cells = None, 0, [], [], []
    cases, cases_html, spectra, spectra_html = [], [], [], []
    for n, cell in enumerate(code_cells, 1):
        for out in cell.outputs:
            data = out.get("data", {}) if out.get("output_type") in ("display_data",
                                                                  "execute_result") else {}
            if RECORD_MIME_TYPE in data and record is None:
                record, record_cell = dict(data[RECORD_MIME_TYPE]), n
            if CASES_MIME_TYPE in data:
                cases.append(dict(data[CASES_MIME_TYPE]))
                cases_html.append(data.get("text/html", ""))
            if SPECTRUM_MIME_TYPE in data:
                spectra.append(dict(data[SPECTRUM_MIME_TYPE]))
                spectra_html.append(data.get("text/html", ""))
                if not spectra[-1].get("verified", False):
                    failures.append(CellFailure(n, "response spectrum not verified (its "
                                                   "generic oscillator's checks)",
                                                unverified=True))
            if DERIVATION_MIME_TYPE in data:
                d = Derivation.from_dict(dict(data[DERIVATION_MIME_TYPE]))
                derivations.append(d)
                html.append(data.get("text/html", ""))
                cells.append(n)
                if not d.verification.passed:
                    what = "; ".join(f"{c.name}: {c.status}"
                                     + (f" (error {c.error:.3g} > {c.tolerance:.0g})"
                                        if c.status == "FAILED" else "")
                                     for c in d.verification.failed)
                    failures.append(CellFailure(n, f"derivation of {d.problem.text!r} not "
                                                   f"verified: {what}", unverified=True))
    derivations, problems = _judged_on_record(record, record_cell, derivations)
    return ExecutedCalc(nb, record, tuple(derivations), tuple(html), tuple(cells),
                        tuple(failures + problems), tuple(cases), tuple(cases_html),
                        tuple(spectra), tuple(spectra_html))


def _judged_on_record(record, cell: int, derivations):
    """Each derivation with the record's criteria that its results answer added to its own
    (a criterion it states itself is not repeated); a criterion no derivation answers, or
    one that cannot be judged (a limit in the wrong unit), is a failure of the record's cell."""
    texts = (record or {}).get("criteria") or []
    if not texts:
        return derivations, []
    where = "the calc record's criteria (CalcRecord(criteria=[...]))"
    try:
        per, missing = judge_calc(texts, [d.results for d in derivations])
    except DerivpadError as exc:
        return derivations, [CellFailure(cell, f"{where}: {exc}")]
    out = []
    for d, extra in zip(derivations, per):
        own = {j.criterion.text for j in d.acceptance}
        extra = tuple(j for j in extra if j.criterion.text not in own)
        out.append(replace(d, acceptance=d.acceptance + extra) if extra else d)
    keys = sorted({k for d in derivations for k in (d.results or {})})
    problems = [CellFailure(cell, f"{where}: {c.text!r} names the result {c.key!r}, which no "
                                  f"derivation of this calc has; use one of "
                                  f"{', '.join(keys[:10])}, …")
                for c in missing]
    return out, problems
