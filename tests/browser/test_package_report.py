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


# Every math, table, figure and code container, measured in the report's print layout at the
# A4 page column (210 mm less 2 × 16 mm margins = 178 mm = 673 CSS px at 96 px/in): none may
# stick out of the page column, and none may hide content behind a scrollbar.
MEASURE_JS = """() => {
  const column = document.body.getBoundingClientRect();
  const bad = [];
  for (const el of document.querySelectorAll(
      '.dp-math, mjx-container, table, figure, pre, .dp-row, .dp-cover')) {
    if (!el.getClientRects().length) continue;          // not displayed in print
    const r = el.getBoundingClientRect();
    const style = getComputedStyle(el);
    const hidden = el.scrollWidth > el.clientWidth + 1 && style.overflowX !== 'visible';
    if (r.left < column.left - 0.5 || r.right > column.right + 0.5 || hidden)
      bad.push(`${el.tagName}.${el.className} ${Math.round(r.left)}..${Math.round(r.right)}`
               + ` (column ${Math.round(column.left)}..${Math.round(column.right)})`
               + (hidden ? ' scrolls' : ''));
  }
  return {bad, checked: document.querySelectorAll('.dp-math, mjx-container, table').length};
}"""


def test_print_layout_keeps_every_container_inside_the_page_column(page, tmp_path):
    for name in ("skid_surge_history.ipynb", "pump_tuned_absorber.ipynb"):
        result = make_package(EXAMPLES / name, tmp_path / name, pdf=False, progress=None)
        page.set_viewport_size({"width": 673, "height": 1000})
        page.emulate_media(media="print")
        page.goto((result.folder / "report.html").as_uri())
        page.wait_for_function("document.querySelectorAll('mjx-container').length > 20",
                               timeout=60000)
        page.wait_for_timeout(500)
        assert page.evaluate("Array.from(document.querySelectorAll('details.dp-step'))"
                             ".every(d => d.open)")
        measured = page.evaluate(MEASURE_JS)
        assert measured["checked"] > 30
        assert measured["bad"] == [], (name, measured["bad"][:5])
    screenshot(page, "package-report-print-layout")
