"""In a real JupyterLab: run an example notebook through the UI, check what the user sees."""

from pathlib import Path

import nbformat

from .conftest import screenshot

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"

EXPLORER_CELL = (
    "import derivpad\n"
    "view = derivpad.explore(\"m*x'' + c*x' + k*x = F0*u(t - 0.1)\", {\"x(0)\": 0, \"x'(0)\": 0},\n"
    "                        {\"m\": \"2 kg\", \"c\": \"4 N*s/m\", \"k\": \"800 N/m\", \"F0\": \"50 N\"},\n"
    "                        controls={\"k\": (400, 1600)}, units={\"x\": \"mm\"})\n"
    "view")


CONTRAST_JS = """() => {
  const rgb = s => s.match(/\\d+(\\.\\d+)?/g).slice(0, 3).map(Number);
  const lum = c => { const v = c.map(x => { x /= 255;
      return x <= 0.03928 ? x / 12.92 : Math.pow((x + 0.055) / 1.055, 2.4); });
    return 0.2126 * v[0] + 0.7152 * v[1] + 0.0722 * v[2]; };
  const ratio = (a, b) => { const [x, y] = [lum(rgb(a)), lum(rgb(b))].sort((p, q) => q - p);
    return (x + 0.05) / (y + 0.05); };
  const back = el => { for (; el; el = el.parentElement) {
      const c = getComputedStyle(el).backgroundColor;
      if (c && !c.startsWith('rgba(0, 0, 0, 0)') && c !== 'transparent') return c; }
    return 'rgb(255, 255, 255)'; };
  const pick = sel => document.querySelector(sel);
  const text = pick('.derivpad .dp-head'), rule = pick('.derivpad .dp-ref'),
        badge = pick('.derivpad .dp-ok');
  return {text: ratio(getComputedStyle(text).color, back(text)),
          rule: ratio(getComputedStyle(rule).color, back(rule)),
          badge: ratio(getComputedStyle(badge).color, back(badge))};
}"""


def _notebook(root: Path) -> str:
    nb = nbformat.read(EXAMPLES / "relay_coil_current.ipynb", as_version=4)
    for cell in nb.cells:
        if cell.cell_type == "code":
            cell.outputs, cell.execution_count = [], None
    nb.cells.append(nbformat.v4.new_code_cell(EXPLORER_CELL))
    nbformat.write(nb, root / "browser_check.ipynb")
    return "browser_check.ipynb"


def test_notebook_runs_live_with_collapsible_typeset_steps_and_a_working_explorer(page, jupyterlab):
    name = _notebook(jupyterlab["root"])
    page.goto(f"{jupyterlab['url']}/lab/tree/{name}?token={jupyterlab['token']}")
    page.wait_for_selector(".jp-Notebook", timeout=60000)
    # A fresh server may ask which kernel to start: take the notebook's own (Python 3).
    try:
        page.wait_for_selector(".jp-Dialog .jp-mod-accept", timeout=8000)
        page.click(".jp-Dialog .jp-mod-accept")
    except Exception:  # noqa: BLE001 - no dialog: the kernel started by itself
        pass
    page.click("li.lm-MenuBar-item:has-text('Run')")
    page.click("li.lm-Menu-item:has-text('Run All Cells')")
    try:
        page.wait_for_selector(".derivpad details.dp-step", state="attached", timeout=90000)
    finally:
        screenshot(page, "jupyterlab-after-run-all")
    page.wait_for_selector(".widget-slider", timeout=90000)

    # The steps are collapsible and open on click.
    steps = page.locator(".derivpad > details.dp-step")
    assert steps.count() >= 7
    first = steps.nth(0)
    assert first.get_attribute("open") is None
    first.locator("summary").first.click()
    assert first.get_attribute("open") is not None

    # The math was typeset: MathJax nodes present, no raw $$ left in the derivation.
    page.wait_for_function("document.querySelectorAll('.derivpad mjx-container').length > 3",
                           timeout=60000)
    text = page.locator(".derivpad").first.inner_text()
    assert "$$" not in text
    screenshot(page, "jupyterlab-derivation")

    # The explorer's control exists; changing it re-derives the displayed derivation.
    entry = page.locator(".widget-text input").last
    before = page.locator(".widget-label").all_inner_texts()
    shown = page.locator(".widget-htmlmath").last.inner_html()
    entry.fill("1200")
    entry.press("Enter")
    page.wait_for_function(
        "Array.from(document.querySelectorAll('.widget-label'))"
        ".some(e => e.innerText.includes('k = 1200: values put into the symbolic derivation'))",
        timeout=60000)
    assert page.locator(".widget-label").all_inner_texts() != before
    page.wait_for_function(  # the redrawn derivation arrives after the status line
        "old => { const all = document.querySelectorAll('.widget-htmlmath');"
        " return all[all.length - 1].innerHTML !== old; }", arg=shown, timeout=60000)
    page.locator(".widget-htmlmath .dp-head").last.scroll_into_view_if_needed()
    screenshot(page, "jupyterlab-explorer")

    # Dark theme, switched through the Settings menu: the derivation's text, reference column
    # and status keep
    # enough contrast on the dark background (WCAG 2.1 §1.4.3: 4.5:1 for text, 3:1 for large
    # or bold text and graphics).
    page.click("li.lm-MenuBar-item:has-text('Settings')")
    page.hover("li.lm-Menu-item:has-text('Theme')")
    page.click("li.lm-Menu-item:has-text('JupyterLab Dark')")
    page.wait_for_function("document.body.dataset.jpThemeLight === 'false'", timeout=30000)
    page.wait_for_timeout(500)
    page.locator(".derivpad .dp-head").first.scroll_into_view_if_needed()
    screenshot(page, "jupyterlab-dark")
    ratios = page.evaluate(CONTRAST_JS)
    assert ratios["text"] >= 4.5, ratios
    assert ratios["rule"] >= 4.5, ratios
    assert ratios["badge"] >= 3.0, ratios
    # the verification figure is drawn for white paper: in the dark theme it is shown
    # inverted (hue kept), not as a white block
    figure = page.locator(".derivpad figure svg").first
    assert "invert" in figure.evaluate("e => getComputedStyle(e).filter")
    figure.scroll_into_view_if_needed()
    screenshot(page, "jupyterlab-dark-figure")
    assert not [u for u in page.blocked if "127.0.0.1" in u]
