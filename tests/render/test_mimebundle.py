"""render/mimebundle.py: the display bundle has HTML, LaTeX, text and our vendor JSON (the
canonical form, which reads back), honours include/exclude, and never raises."""

import derivpad
from derivpad import Derivation
from derivpad.render.mimebundle import DERIVATION_MIME_TYPE, mimebundle


def test_bundle_types_and_filters():
    d = derivpad.derive("y' + 2*y = 4*u(t - 1)", {"y(0)": 1})
    bundle = d._repr_mimebundle_()
    assert sorted(bundle) == sorted([DERIVATION_MIME_TYPE, "text/html", "text/latex",
                                     "text/plain"])
    assert Derivation.from_dict(bundle[DERIVATION_MIME_TYPE]).solution == d.solution
    assert list(d._repr_mimebundle_(include=["text/plain"])) == ["text/plain"]
    assert "text/html" not in d._repr_mimebundle_(exclude=["text/html"])


def test_a_failing_display_falls_back_to_text():
    class Broken:
        def to_text(self):
            return "plain"
    out = mimebundle(Broken())
    assert list(out) == ["text/plain"] and "could not display" in out["text/plain"]
