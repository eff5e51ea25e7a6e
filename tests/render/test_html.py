"""The HTML fragment and the MIME bundle: structure, determinism, fallback."""

import json

import pytest

from derivpad import derive
from derivpad.render.html import to_html
from derivpad.render.mimebundle import DERIVATION_MIME_TYPE


@pytest.fixture(scope="module")
def d():
    return derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics={"y(0)": 0, "y'(0)": 0})


def test_steps_are_sheet_rows_collapsible_with_number_title_and_rule_in_the_summary(d):
    page = to_html(d, figure=False)
    assert page.count('<details class="dp-step"') == sum(1 + _count(s) for s in d.steps)
    assert ('<summary class="dp-row"><span class="dp-no">1.</span><span class="dp-title">Problem'
            '</span><span class="dp-ref"><span class="dp-rulename">Laplace transform (0⁻ form)'
            in page)
    # the open step's reference column: the rule's statement and its published source
    assert '<div class="dp-ref"><div class="dp-statement">' in page
    assert "Abramowitz &amp; Stegun" in page
    assert "Expand all" not in page and "dp-badge" not in page
    assert '<span class="dp-ok">Verified: 7 checks passed</span>' in page
    assert '<span class="dp-no">Given</span>' in page and '<span class="dp-no">Result</span>' in page
    assert "$$\\begin{aligned}y(t) &amp;= " in page and r"\theta" not in page
    assert '<details class="dp-latex"><summary>LaTeX</summary><pre>' in page


def _count(step):
    return sum(1 + _count(s) for s in step.substeps)


def test_html_is_deterministic(d):
    again = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics={"y(0)": 0, "y'(0)": 0})
    assert to_html(d) == to_html(again)


def test_failed_verification_shows_in_the_badge():
    bad = derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics={"y(0)": 0, "y'(0)": 0},
                 tolerances={"integration": 1e-30}, on_failure="return")
    page = to_html(bad, figure=False)
    assert '<span class="dp-bad">NOT VERIFIED' in page and "Numerical integration: FAILED" in page


def test_mimebundle_has_all_types_and_honours_include_exclude(d):
    bundle = d._repr_mimebundle_()
    assert set(bundle) == {"text/plain", "text/latex", "text/html", DERIVATION_MIME_TYPE}
    assert json.dumps(bundle[DERIVATION_MIME_TYPE])
    assert set(d._repr_mimebundle_(include=["text/plain"])) == {"text/plain"}
    assert "text/html" not in d._repr_mimebundle_(exclude=["text/html"])


def test_display_never_raises(d, monkeypatch):
    from derivpad.render import mimebundle

    def broken(*args, **kwargs):
        raise RuntimeError("renderer broke")

    monkeypatch.setattr(mimebundle, "_build", broken)
    bundle = d._repr_mimebundle_()
    assert list(bundle) == ["text/plain"] and "renderer broke" in bundle["text/plain"]


def test_vendor_json_is_strict_json_even_with_checks_that_did_not_run():
    d = derive("y'' + 4*y = u(t)", ics={"y(0)": 0, "y'(0)": 0})  # final-value theorem n/a
    data = d._repr_mimebundle_(include=[DERIVATION_MIME_TYPE])[DERIVATION_MIME_TYPE]
    text = json.dumps(data, allow_nan=False)
    assert '"status": "not applicable"' in text and '"error": null' in text
