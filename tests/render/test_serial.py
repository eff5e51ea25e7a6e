"""The canonical JSON form (render/serial.py) and its inverse (core/derivation_json.py):
Derivation.to_dict() → JSON → Derivation.from_dict() gives back the same derivation, on every
example notebook's recorded output and on derivations of each kind; records of the previous
format version are still compared by the audit."""

import json
from pathlib import Path

import pytest
import sympy as sp

import derivpad
from derivpad import Derivation, ParseError, forcing
from derivpad.core.reading.parse import T
from derivpad.export.audit import _compare
from derivpad.export.package import record_of
from derivpad.render.mimebundle import DERIVATION_MIME_TYPE

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"
DATA = Path(__file__).resolve().parents[1] / "export" / "data"


def _recorded_derivations():
    for path in sorted(EXAMPLES.glob("*.ipynb")):
        nb = json.loads(path.read_text())
        for cell in nb["cells"]:
            for out in cell.get("outputs", []):
                data = out.get("data", {})
                if DERIVATION_MIME_TYPE in data:
                    yield path.stem, data[DERIVATION_MIME_TYPE]


RECORDED = list(_recorded_derivations())


def test_every_example_has_a_recorded_derivation():
    assert {name for name, _ in RECORDED} >= {"skid_surge_history", "relay_coil_current",
                                              "enclosure_heater_delay", "pump_tuned_absorber"}


@pytest.mark.parametrize("name, data", RECORDED, ids=[n for n, _ in RECORDED])
def test_each_recorded_example_reads_back_to_the_same_json(name, data):
    d = Derivation.from_dict(data)
    assert json.loads(json.dumps(d.to_dict())) == data
    assert d.verification.passed == data["verification"]["verified"]


def _pulse_pair():
    return derivpad.derive(
        ["m1*x1'' + c1*x1' + (k1 + k2)*x1 - k2*x2 = P", "m2*x2'' + k2*(x2 - x1) = 0"],
        {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
        {"m1": "2 kg", "m2": "1 kg", "k1": "800 N/m", "k2": "200 N/m", "c1": "4 N*s/m",
         "P": forcing.pulse(50, 0, 0.1)}, units={"x1": "mm", "x2": "mm"},
        derived={"stroke": "x2 - x1"})


@pytest.mark.parametrize("make", [
    lambda: derivpad.derive("y'' + 4*y' + 13*y = 2*u(t - 1)", {"y(0)": 0, "y'(0)": 0}),
    lambda: derivpad.derive("m*x'' + c*x' + k*x = F0*u(t - t1)", {"x(0)": 0, "x'(0)": 0},
                            {"m": "2 kg", "c": "16 N*s/m", "k": "800 N/m", "F0": "40 N"},
                            units={"x": "mm", "t1": "s"}, values={"t1": 0.1}),
    lambda: derivpad.derive("y^(5) + y' + y = u(t)",
                            {"y(0)": 0, "y'(0)": 0, "y''(0)": 0, "y'''(0)": 0, "y^(4)(0)": 0}),
    _pulse_pair,
], ids=["delayed step", "units and symbols", "numeric poles", "system with a load"])
def test_from_dict_inverts_to_dict(make):
    d = make()
    back = Derivation.from_dict(json.loads(json.dumps(d.to_dict())))
    assert back.to_dict() == d.to_dict()
    assert back.solutions == d.solutions and back.transforms == d.transforms
    assert [s.title for s in back.steps] == [s.title for s in d.steps]
    assert back.steps[0].lines == d.steps[0].lines
    assert [c.status for c in back.verification.checks] == \
        [c.status for c in d.verification.checks]
    assert {k: r.to_dict() for k, r in back.results.items()} == \
        {k: r.to_dict() for k, r in d.results.items()}
    # the solution read back evaluates like the original (no text was evaluated)
    u = back.problem.unknowns[0]
    assert float(back.solutions[u].subs(T, 0.37).subs(dict(
        (sp.Symbol(k, positive=True), v) for k, v in back.values))) == \
        pytest.approx(float(_at(d, u, 0.37)), rel=1e-12)


def _at(d, u, t):
    values = d([t])
    return values[u][0] if d.problem.size > 1 else values[0]


def test_json_of_another_kind_or_an_unknown_version_is_refused():
    with pytest.raises(ParseError, match="not a derivation"):
        Derivation.from_dict({"format": "something else"})
    v1 = json.loads((DATA / "derivation-v1-single.json").read_text())
    with pytest.raises(ParseError, match="version 1"):
        Derivation.from_dict(v1)


@pytest.mark.parametrize("fixture, make", [
    ("derivation-v1-single.json", lambda: derivpad.derive(
        "m*x'' + c*x' + k*x = F0*u(t - 0.1)", {"x(0)": 0, "x'(0)": 0},
        {"m": "2 kg", "c": "16 N*s/m", "k": "800 N/m", "F0": "40 N"}, units={"x": "mm"})),
    ("derivation-v1-system.json", lambda: derivpad.derive(
        ["m1*x1'' + (k1 + k2)*x1 - k2*x2 = F0*u(t)", "m2*x2'' + k2*(x2 - x1) = 0"],
        {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
        {"m1": 2, "m2": 1, "k1": 800, "k2": 200, "F0": 50})),
])
def test_the_audit_compares_a_previous_version_record_with_a_rerun(fixture, make):
    # a package written by format version 1 (fixture made by that version) against the same
    # problem derived now: same solution text, every shared result within the audit's tolerance
    old = record_of(json.loads((DATA / fixture).read_text()), 1)
    new = record_of(make().to_dict(), 1)
    assert old["format_version"] == 1 and new["format_version"] == 2
    moved = [row for row in _compare([old], [new], 1e-9) if "only in" not in row[1]]
    assert moved == []
