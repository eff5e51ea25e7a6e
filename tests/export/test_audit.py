"""derivpad audit on real packages: tampering named, re-runs reproduce or list what moved."""

import shutil
from pathlib import Path

import nbformat
import pytest

from derivpad.cli import main
from derivpad.export.audit import audit_package
from derivpad.export.package import make_package

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"


@pytest.fixture(scope="module")
def package(tmp_path_factory):
    out = tmp_path_factory.mktemp("audited")
    return make_package(EXAMPLES / "enclosure_heater_delay.ipynb", out, pdf=False, progress=None)


def test_intact_package_holds_and_shows_the_record_status(package, capsys):
    report = audit_package(package.archive)
    assert report.holds
    status = dict(report.status_rows)
    assert status["calc number"] == "DEMO-003" and status["verified"] == "yes"
    assert main(["audit", str(package.folder)]) == 0
    assert "| record   | calc number | DEMO-003 |" in capsys.readouterr().out


def test_tamper_delete_and_add_are_each_named(package, tmp_path):
    copy = shutil.copytree(package.folder, tmp_path / package.folder.name)
    svg = copy / "figures" / "derivation-1.svg"
    data = bytearray(svg.read_bytes())
    data[200] ^= 0x01
    svg.write_bytes(bytes(data))
    (copy / "inputs.json").unlink()
    (copy / "extra.txt").write_text("x")
    report = audit_package(copy)
    findings = dict(report.manifest_rows)
    assert findings == {"inputs.json": "MISSING", "extra.txt": "NOT IN MANIFEST",
                        "figures/derivation-1.svg": "ALTERED (checksum differs)"}
    assert not report.holds
    refused = audit_package(copy, rerun=True)
    assert not refused.holds and "not executed" in refused.notes[0]


def test_rerun_reproduces_the_packaged_results(package):
    report = audit_package(package.folder, rerun=True)
    assert report.holds, report.table()
    assert "reproduced" in report.rerun_rows[0][1]


def test_rerun_with_a_changed_parameter_lists_what_moved(package, tmp_path):
    nb = nbformat.read(EXAMPLES / "enclosure_heater_delay.ipynb", as_version=4)
    for cell in nb.cells:
        cell.source = cell.source.replace('"P": "150 W"', '"P": "160 W"')
    changed = tmp_path / "enclosure_changed.ipynb"
    nbformat.write(nb, changed)
    report = audit_package(package.folder, rerun=True, notebook=changed)
    moved = dict(report.rerun_rows)
    assert not report.holds
    # final rise P·Rth: 75 K → 80 K (steady state of C T' + T/R = P; common practice)
    assert "moved 75 → 80 K" in moved["derivation-1 final_value"]
    assert "derivation-1 solution" in moved
