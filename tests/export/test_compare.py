"""derivpad compare: two revisions of a calc with one parameter changed list exactly the values
that moved, checked against the two packages' own results.json."""

import json

import nbformat
import pytest

from derivpad.cli import main
from derivpad.errors import ExportError
from derivpad.export.compare import compare_packages
from derivpad.export.package import make_package


def _calc(tmp_path, revision: str, k: str):
    nb = nbformat.v4.new_notebook()
    nb.cells = [nbformat.v4.new_code_cell(
        "import derivpad\nderivpad.CalcRecord(title='isolator', calc_number='CMP-1', "
        f"revision={revision!r}, inputs=[('k', {k!r}, 'catalogue')])"),
        nbformat.v4.new_code_cell(
        "derivpad.derive(\"m*x'' + c*x' + k*x = F0*u(t)\", {'x(0)': 0, \"x'(0)\": 0}, "
        f"{{'m': '2 kg', 'c': '4 N*s/m', 'k': {k!r}, 'F0': '50 N'}}, units={{'x': 'mm'}}, "
        "criteria=['peak <= 100 mm'])")]
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    path = tmp_path / f"calc{revision}.ipynb"
    nbformat.write(nb, path)
    return make_package(path, tmp_path / "out", pdf=False, progress=None).folder


def _moved(old, new) -> set:
    """The result keys whose values differ between two results.json files (the reference)."""
    a = json.loads((old / "results.json").read_text())[0]["results"]
    b = json.loads((new / "results.json").read_text())[0]["results"]
    return {k for k in set(a) | set(b) if a.get(k, {}).get("value") != b.get(k, {}).get("value")}


def _relay_revision(tmp_path, revision: str, inductance: str):
    """The relay example notebook as a revision of its own, with the coil's inductance set."""
    from pathlib import Path
    source = Path(__file__).resolve().parents[2] / "example_notebooks" / "relay_coil_current.ipynb"
    nb = nbformat.read(source, as_version=4)
    for cell in nb.cells:
        cell.source = (cell.source.replace("revision='0'", f"revision={revision!r}")
                       .replace("0.8 H", inductance))
    path = tmp_path / f"relay{revision}.ipynb"
    nbformat.write(nb, path)
    return make_package(path, tmp_path / "out", pdf=False, progress=None).folder


def test_two_revisions_of_an_example_list_exactly_the_moved_values(tmp_path):
    # the relay example, Rev 0 with L = 0.8 H and Rev 1 with L = 0.9 H: the results listed as
    # moved are exactly those whose values differ in the two packages' own results.json
    old, new = _relay_revision(tmp_path, "0", "0.8 H"), _relay_revision(tmp_path, "1", "0.9 H")
    rows = compare_packages(old, new)
    listed = {item.split(" ", 1)[1] for part, item, _ in rows if part == "result"
              and item.startswith("derivation-1 ") and not item.endswith(" solution")}
    assert listed == _moved(old, new) and "time_constants" in listed
    assert ("input", "L", "0.8 H → 0.9 H") in rows


def test_a_changed_parameter_lists_exactly_the_moved_values(tmp_path, capsys):
    old, new = _calc(tmp_path, "0", "800 N/m"), _calc(tmp_path, "1", "900 N/m")
    rows = compare_packages(old, new)
    listed = {item.split(" ", 1)[1] for part, item, _ in rows if part == "result"
              and item.startswith("derivation-1 ") and not item.endswith(" solution")}
    assert listed == _moved(old, new) and listed
    assert ("input", "k", "800 N/m → 900 N/m") in rows
    assert ("record", "revision", "0 → 1") in rows
    assert any(part == "step" for part, _, _ in rows)
    assert main(["compare", str(old), str(new), "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"part": "input", "item": "k", "change": "800 N/m → 900 N/m"} in data


def test_a_package_compared_with_itself_lists_nothing_but_its_revision(tmp_path):
    old = _calc(tmp_path, "0", "800 N/m")
    rows = compare_packages(old, old)
    assert [r[0] for r in rows] == ["record"]
    with pytest.raises(ExportError, match="neither a package folder nor a zip"):
        compare_packages(old, tmp_path / "no-such-package")
