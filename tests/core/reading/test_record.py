"""The calc record: required identity, validated inputs, immutability, display."""

import json

import pytest

from derivpad import CalcRecord, ParameterError, UnitError

BASE = dict(title="Skid isolator shock check", calc_number="C-101", revision="2",
            project="Pump house", purpose="Check isolator travel under a surge load.",
            method="Laplace-transform solution of the SDOF model, verified numerically.",
            preparer="A. Author", checker="B. Checker",
            inputs=[("m", "900 kg", "vendor datasheet"), ("k", "3.6 MN/m", "isolator catalogue")],
            references=["Vendor datasheet rev C"], assumptions=["rigid skid"],
            revision_history=[("1", "2026-10-01", "first issue"), ("2", "2026-11-20", "new load")])


def test_record_holds_the_fields_and_names_its_package():
    r = CalcRecord(**BASE)
    assert r.package_name == "C-101-rev2"
    assert r.inputs[1].value == "3.6 MN/m" and r.inputs[1].source == "isolator catalogue"
    assert r.revision_history[0].description == "first issue"
    assert json.loads(json.dumps(r.to_dict()))["inputs"][0]["name"] == "m"


def test_identity_fields_are_required():
    for key in ("title", "calc_number", "revision"):
        with pytest.raises(ParameterError, match="needs a"):
            CalcRecord(**{**BASE, key: " "})


def test_bad_inputs_are_refused():
    with pytest.raises(UnitError):
        CalcRecord(**{**BASE, "inputs": [("m", "900 kgg", "datasheet")]})
    with pytest.raises(ParameterError, match="source"):
        CalcRecord(**{**BASE, "inputs": [("m", "900 kg", "")]})
    with pytest.raises(ParameterError, match="listed twice"):
        CalcRecord(**{**BASE, "inputs": [("m", "1 kg", "a"), ("m", "2 kg", "b")]})
    with pytest.raises(ParameterError, match="folder name"):
        CalcRecord(**{**BASE, "calc_number": "C/101"})


def test_records_are_immutable_and_change_by_copy():
    r = CalcRecord(**BASE)
    with pytest.raises(AttributeError):
        r.revision = "3"
    r3 = r.copy_with(revision="3")
    assert r3.package_name == "C-101-rev3" and r.revision == "2"
    with pytest.raises(ParameterError, match="no field"):
        r.copy_with(colour="red")


def test_display_shows_a_header_block_with_cautions():
    bundle = CalcRecord(**BASE)._repr_mimebundle_()
    assert "<h2>Skid isolator shock check</h2>" in bundle["text/html"]
    assert "qualified engineer" in bundle["text/html"]
    assert "Calc C-101, revision 2" in bundle["text/plain"]


def test_the_records_criteria_are_read_and_kept_as_written():
    r = CalcRecord(title="t", calc_number="C-1", revision="0",
                   criteria=["peak <= 3 mm", " final_value >= 10 K "])
    assert r.criteria == ("peak <= 3 mm", "final_value >= 10 K")
    assert r.to_dict()["criteria"] == ["peak <= 3 mm", "final_value >= 10 K"]
    assert "acceptance criterion: peak <= 3 mm" in r._repr_mimebundle_()["text/plain"]
    with pytest.raises(ParameterError, match="cannot read the criterion 'peak < 3 mm'"):
        CalcRecord(title="t", calc_number="C-1", revision="0", criteria=["peak < 3 mm"])
    with pytest.raises(UnitError):
        CalcRecord(title="t", calc_number="C-1", revision="0", criteria=["peak <= 3 furlongz"])


def test_revision_history_may_name_who_made_each_revision():
    from derivpad import CalcRecord
    from derivpad.render.record import revisions_html
    r = CalcRecord(title="t", calc_number="C-1", revision="1",
                   revision_history=[("0", "2026-11-01", "first issue"),
                                     ("1", "2026-12-02", "k raised", "C. Checker")])
    assert r.revision_history[1].by == "C. Checker" and r.revision_history[0].by == ""
    assert [e.get("by") for e in r.to_dict()["revision_history"]] == [None, "C. Checker"]
    assert "<th>By</th>" in revisions_html(r) and "<td>C. Checker</td>" in revisions_html(r)
    with pytest.raises(ParameterError, match="revision, date, description"):
        CalcRecord(title="t", calc_number="C-1", revision="1", revision_history=[("0", "x")])
