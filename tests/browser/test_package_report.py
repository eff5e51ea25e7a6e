"""A packaged report, opened offline in Chromium: every step open, math typeset."""

from pathlib import Path

from derivpad.export.package import make_package

from .conftest import screenshot

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"


def test_package_report_opens_offline_with_math_typeset(page, tmp_path):
    result = make_package(EXAMPLES / "skid_surge_history.ipynb", tmp_path, pdf=False,
                          progress=None)
    page.goto((result.folder / "report.html").as_uri())
    page.wait_for_function("document.querySelectorAll('mjx-container').length > 20",
                           timeout=60000)
    assert page.evaluate("Array.from(document.querySelectorAll('details.dp-step'))"
                         ".every(d => d.open)")
    assert "DEMO-001" in page.locator(".dp-cover").inner_text()
    assert "$$" not in page.locator(".derivpad").first.inner_text()
    assert page.blocked == []
    screenshot(page, "package-report")
