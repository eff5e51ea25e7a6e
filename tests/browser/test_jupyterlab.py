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
    entry.fill("1200")
    entry.press("Enter")
    page.wait_for_function(
        "Array.from(document.querySelectorAll('.widget-label'))"
        ".some(e => e.innerText.includes('re-derived for k = 1200'))", timeout=60000)
    assert page.locator(".widget-label").all_inner_texts() != before
    page.locator(".widget-slider").last.scroll_into_view_if_needed()
    screenshot(page, "jupyterlab-explorer")
    assert not [u for u in page.blocked if "127.0.0.1" in u]
