"""Calc packages: made from a fresh run, atomic, never overwriting, audited."""

import json
import math
import shutil
from pathlib import Path

import nbformat
import pytest

from derivpad.errors import ExportError
from derivpad.export import package as package_module
from derivpad.export.manifest import audit_manifest
from derivpad.export.notebook_io import PackageRefusedError
from derivpad.export.package import make_package

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"
quiet = dict(progress=None)


@pytest.fixture(scope="module")
def packaged(tmp_path_factory):
    out = tmp_path_factory.mktemp("packages")
    result = make_package(EXAMPLES / "relay_coil_current.ipynb", out, **quiet)
    return result


def test_package_has_every_part_and_an_intact_manifest(packaged):
    folder = packaged.folder
    assert folder.name == "DEMO-002-rev0" and packaged.archive.name == "DEMO-002-rev0.zip"
    for name in ("report.html", "results.json", "inputs.json", "environment.json",
                 "relay_coil_current.ipynb", "figures/derivation-1.svg", "MANIFEST.sha256"):
        assert (folder / name).is_file(), name
    assert audit_manifest(folder).intact and audit_manifest(packaged.archive).intact
    results = json.loads((folder / "results.json").read_text())
    assert results[0]["verification"]["passed"] is True
    assert results[0]["results"]["peak"]["unit"] == "mA"
    html = (folder / "report.html").read_text()
    assert "DEMO-002" in html and "qualified engineer" in html and "<script src=" not in html
    # the figure file is drawn from the checks' samples, run again on the derivation read
    # back from the notebook: the very figure the notebook showed inline
    svg = (folder / "figures" / "derivation-1.svg").read_text()
    assert svg[svg.index("<svg"):].strip() in html


def test_pdf_has_pages_and_the_calc_number(packaged):
    pdf = packaged.folder / "report.pdf"
    if not pdf.exists():
        pytest.skip("Chromium not installed: " + "; ".join(packaged.notes))
    pypdf = pytest.importorskip("pypdf")
    reader = pypdf.PdfReader(str(pdf))
    assert len(reader.pages) >= 3
    assert "DEMO-002" in reader.pages[0].extract_text()
    text = "".join(page.extract_text() for page in reader.pages)
    assert "$$" not in text and "\\begin{aligned}" not in text  # math typeset before printing
    # every page: the calc number and revision at its head, "page n of N" at its foot; A4
    n = len(reader.pages)
    for i, page in enumerate(reader.pages, 1):
        words = " ".join(page.extract_text().split())
        assert "DEMO-002 rev 0" in words and f"page {i} of {n}" in words, i
    width, height = (float(x) for x in reader.pages[0].mediabox[2:])
    assert round(width / 72 * 25.4) == 210 and round(height / 72 * 25.4) == 297   # ISO 216
    assert "brings down a power of s" in text  # a step's note: the steps were opened
    # the first sheet: one title block, the purpose, the key results and the status; the
    # derivation only after it
    first = " ".join(reader.pages[0].extract_text().split()).replace("ﬁ", "fi")  # ligature
    assert "Purpose." in first and "peak" in first and "Verified:" in first
    assert text.count("Calc number") == 1                     # one title block
    assert "Problem" not in first


def test_results_are_deterministic(packaged, tmp_path):
    again = make_package(EXAMPLES / "relay_coil_current.ipynb", tmp_path, pdf=False, **quiet)
    for name in ("results.json", "figures/derivation-1.svg"):
        assert (again.folder / name).read_bytes() == (packaged.folder / name).read_bytes()


def test_existing_revision_is_not_overwritten_and_force_keeps_it_aside(packaged, tmp_path):
    shutil.copytree(packaged.folder, tmp_path / packaged.folder.name)
    shutil.copy(packaged.archive, tmp_path / packaged.archive.name)
    with pytest.raises(ExportError, match="never overwritten"):
        make_package(EXAMPLES / "relay_coil_current.ipynb", tmp_path, pdf=False, **quiet)
    make_package(EXAMPLES / "relay_coil_current.ipynb", tmp_path, pdf=False, force=True, **quiet)
    assert (tmp_path / "DEMO-002-rev0.replaced-1" / "report.pdf").exists()
    assert (tmp_path / "DEMO-002-rev0").is_dir()


def test_a_failure_midway_leaves_nothing_behind(tmp_path, monkeypatch):
    def broken(*args, **kwargs):
        raise RuntimeError("disk full while writing the report")

    monkeypatch.setattr(package_module, "report_html", broken)
    with pytest.raises(RuntimeError):
        make_package(EXAMPLES / "relay_coil_current.ipynb", tmp_path, pdf=False, **quiet)
    assert list(tmp_path.iterdir()) == []


def _notebook(tmp_path, body: str, record: str = "") -> Path:
    nb = nbformat.v4.new_notebook()
    nb.cells = [nbformat.v4.new_code_cell(
        "import derivpad\nderivpad.CalcRecord(title='t', calc_number='T-1', revision='0'"
        + record + ")"),
        nbformat.v4.new_code_cell(body)]
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    path = tmp_path / "calc.ipynb"
    nbformat.write(nb, path)
    return path


def test_failing_verification_is_refused_naming_cell_and_check(tmp_path):
    path = _notebook(tmp_path, "derivpad.derive(\"y'' + 4*y = u(t)\", ics={'y(0)': 0, "
                               "\"y'(0)\": 0}, tolerances={'integration': 1e-30}, on_failure='return')")
    with pytest.raises(PackageRefusedError) as err:
        make_package(path, tmp_path / "out", pdf=False, **quiet)
    assert "code cell 2" in str(err.value) and "Numerical integration: FAILED" in str(err.value)
    result = make_package(path, tmp_path / "out", pdf=False, allow_failed=True, **quiet)
    assert not result.verified
    assert "NOT VERIFIED" in (result.folder / "report.html").read_text()


def test_a_cell_error_is_refused(tmp_path):
    path = _notebook(tmp_path, "1/0")
    with pytest.raises(PackageRefusedError, match="code cell 2: ZeroDivisionError"):
        make_package(path, tmp_path / "out", pdf=False, **quiet)


DEMO_CELL = ("from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS\n"
             "derivpad.derive(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS, "
             "criteria=['peak <= 12 mm'])")


def test_the_records_criteria_are_judged_on_every_derivation_with_the_result(tmp_path):
    # the demo's peak is 11.107 mm at 121.3 ms (tests/core/checking/test_results.py); the
    # record's limits: 10 mm (NOT OK, utilisation 1.11) and 200 ms (OK, 0.607)
    from derivpad.export.audit import audit_package
    path = _notebook(tmp_path, DEMO_CELL, record=", criteria=['peak <= 10 mm', "
                     "'time_of_peak <= 200 ms', 'peak <= 12 mm']")
    result = make_package(path, tmp_path / "out", pdf=False, **quiet)
    judged = json.loads((result.folder / "results.json").read_text())[0]["acceptance"]
    assert [(j["text"], j["outcome"]) for j in judged] == [
        ("peak <= 12 mm", "OK"), ("peak <= 10 mm", "NOT OK"), ("time_of_peak <= 200 ms", "OK")]
    assert judged[1]["utilisation"] == pytest.approx(1.1107, abs=1e-4)
    assert judged[2]["utilisation"] == pytest.approx(0.6067, abs=1e-3)
    sheet = (result.folder / "report.html").read_text().split('<h2 class="dp-section">Contents</h2>')[0]
    assert "<td>≤ 10 mm</td>" in sheet and "<td>≤ 200 ms</td>" in sheet
    assert "<b>NOT OK</b>" in sheet
    assert audit_package(result.folder, rerun=True).holds


def test_a_record_criterion_no_derivation_answers_is_refused(tmp_path):
    path = _notebook(tmp_path, DEMO_CELL, record=", criteria=['peek <= 3 mm']")
    with pytest.raises(PackageRefusedError, match=r"code cell 1: the calc record's criteria"
                                                  r".*'peek'.*no derivation"):
        make_package(path, tmp_path / "out", pdf=False, **quiet)


def test_a_system_calc_packages_and_audits(tmp_path):
    # the pump-absorber example: one SystemDerivation, re-run and compared by the audit
    from derivpad.export.audit import audit_package
    result = make_package(EXAMPLES / "pump_tuned_absorber.ipynb", tmp_path, pdf=False, **quiet)
    assert result.verified
    entry = json.loads((result.folder / "results.json").read_text())[0]
    assert entry["unknown"] == "x1, x2"
    assert entry["results"]["peak_stroke"]["unit"] == "mm"
    assert set(entry["solution"]["tree"]) == {"x1", "x2"}
    html = (result.folder / "report.html").read_text()
    assert "Matrix form" in html and "Cramer" in html
    report = audit_package(result.folder, rerun=True)
    assert report.holds, report.table()


def test_relative_paths_as_the_docs_write_them(tmp_path, monkeypatch):
    # `derivpad package calc.ipynb -o out`, run in the notebook's folder (README, package.md):
    # the PDF printer gets absolute paths, and the audit reads the relative folder
    from derivpad.cli import main
    shutil.copy(EXAMPLES / "relay_coil_current.ipynb", tmp_path / "calc.ipynb")
    monkeypatch.chdir(tmp_path)
    assert main(["package", "calc.ipynb", "-o", "out"]) == 0
    assert (tmp_path / "out" / "DEMO-002-rev0" / "MANIFEST.sha256").is_file()
    if Path("/usr/bin/chromium").exists():
        assert (tmp_path / "out" / "DEMO-002-rev0" / "report.pdf").stat().st_size > 0
    assert main(["audit", "out/DEMO-002-rev0"]) == 0


def test_page_style_names_the_calc_and_the_paper():
    from derivpad.export.report import _page_style
    css = _page_style({"calc_number": "C-1", "revision": "2", "title": 'A "quoted" title'},
                      "Letter")
    assert "size:Letter" in css and 'C-1 rev 2 — A \\"quoted\\" title' in css
    assert 'counter(page) " of " counter(pages)' in css
    with pytest.raises(ExportError, match="page size"):
        make_package(EXAMPLES / "relay_coil_current.ipynb", ".", page_size="A3", **quiet)


def test_a_load_case_calc_packages_its_table_envelope_and_audits(tmp_path):
    # the cabinet example: nine cases; the package holds the table (CSV, Parquet), the
    # envelope, cases.json and a report with the cases on the first sheet; a re-run compares
    # the envelope and the criteria's outcomes
    from derivpad.export.audit import audit_package
    result = make_package(EXAMPLES / "mount_shock_cases.ipynb", tmp_path, pdf=False, **quiet)
    assert result.verified
    folder = result.folder
    (entry,) = json.loads((folder / "cases.json").read_text())
    assert entry["cases"] == 9 and entry["forms"] == ["underdamped"]
    assert entry["outcomes"] == {"peak <= 4 mm": {"OK": 9}}
    peak = next(r for r in entry["envelope"] if r["result"] == "peak")
    assert peak["case of max"] == "bump, soft" and peak["unit"] == "mm"
    csv_text = (folder / "cases" / "cases-1.csv").read_text().splitlines()
    assert csv_text[0].startswith("case,F0,td,k,") and len(csv_text) == 10
    assert (folder / "cases" / "cases-1.parquet").stat().st_size > 0
    assert (folder / "figures" / "cases-1.svg").read_text().startswith("<?xml")
    html = (folder / "report.html").read_text()
    assert "Load cases 1: 9 cases (underdamped)" in html and 'id="cases-1"' in html
    section = html[html.index('id="cases-1"'):]
    assert section.index("<svg") < section.index("figures/cases-1.svg in the package")
    report = audit_package(folder, rerun=True)
    assert report.holds, report.table()


def test_load_cases_with_a_failed_row_are_refused_unless_allowed(tmp_path):
    path = _notebook(tmp_path, "import pandas as pd\nderivpad.load_cases(\"m*x'' + k*x = F0*(u(t)"
                               " - u(t - td))\", {'x(0)': 0, \"x'(0)\": 0}, {'m': '1 kg', 'k': "
                               "'39.478 N/m', 'F0': '1 N'}, cases=pd.DataFrame({'td [s]': "
                               "[0.2, None]}), on_error='record')")
    with pytest.raises(PackageRefusedError, match="load cases 1: 1 case"):
        make_package(path, tmp_path / "out", pdf=False, **quiet)
    result = make_package(path, tmp_path / "out", pdf=False, allow_failed=True, **quiet)
    assert not result.verified
    assert json.loads((result.folder / "cases.json").read_text())[0]["failed"] == 1


def test_a_record_and_its_spectrum_package(tmp_path):
    # a derivation under a load record and a response spectrum: the derivation's figure drawn
    # from the samples its JSON keeps, the spectrum's table and figure as files, both in the
    # report
    path = _notebook(tmp_path, (
        "import numpy as np\nfrom derivpad import forcing\n"
        "t = np.linspace(0, 0.05, 26)\nrec = forcing.history(t, 1000 * np.sin(60 * t))\n"
        "derivpad.derive(\"m*x'' + c*x' + k*x = F\", {'x(0)': 0, \"x'(0)\": 0}, "
        "{'m': 10, 'c': 300, 'k': 4e5, 'F': rec})\n"))
    nb = nbformat.read(path, as_version=4)
    nb.cells.append(nbformat.v4.new_code_cell(
        "derivpad.response_spectrum(forcing.history([0, 0.1], [1.0, 1.0]), [0.1, 0.2, 0.4], "
        "0.0, kind='force')"))
    nbformat.write(nb, path)
    result = make_package(path, tmp_path / "out", pdf=False, **quiet)
    folder = result.folder
    assert result.verified
    rows = (folder / "spectra" / "spectrum-1.csv").read_text().splitlines()
    assert rows[0].startswith("period_s,SD,PSV,PSA,load_factor")
    # rectangular pulse of 0.1 s, undamped: t_d/T = 1, 0.5, 0.25 give the load factors 2, 2,
    # 2 sin(π/4) (J. M. Biggs, Introduction to Structural Dynamics; from memory)
    factors = [float(r.split(",")[4]) for r in rows[1:]]
    assert factors == pytest.approx([2.0, 2.0, 2 * math.sin(math.pi / 4)], rel=1e-9)
    assert (folder / "figures" / "spectrum-1.svg").read_text().startswith("<?xml")
    assert (folder / "figures" / "derivation-1.svg").read_text().startswith("<?xml")
    html = (folder / "report.html").read_text()
    assert 'id="spectrum-1"' in html and "From knot to knot" in html
    assert audit_manifest(folder).intact
