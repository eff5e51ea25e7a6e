"""An executed example exported with derivpad's nbconvert template opens offline, math typeset."""

from pathlib import Path

from derivpad.export.notebook_html import export_html

from .conftest import screenshot

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"


def test_exported_notebook_typesets_math_with_the_network_cut(page, tmp_path):
    out = export_html(EXAMPLES / "relay_coil_current.ipynb", tmp_path / "relay.html")
    text = out.read_text()
    assert "<script src=" not in text
    page.goto(out.as_uri())
    page.wait_for_function("document.querySelectorAll('mjx-container').length > 10",
                           timeout=60000)
    step = page.locator(".derivpad > details.dp-step").nth(3)
    step.locator("summary").first.click()
    assert step.get_attribute("open") is not None
    # aligned environments inside <details> typeset too
    assert step.locator("mjx-container").count() >= 2
    assert "$$" not in page.locator(".derivpad").first.inner_text()
    assert page.blocked == []  # nothing tried to reach the network
    screenshot(page, "offline-export")
