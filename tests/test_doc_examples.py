"""Every Python example in README.md and docs/ runs as written: the blocks of one page in order,
in one namespace with ``derivpad`` imported (as the README's first example does), from a scratch
folder."""

import re
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PAGES = [ROOT / "README.md"] + sorted((ROOT / "docs").glob("*.md"))
BLOCK = re.compile(r"```python\n(.*?)```", re.S)


def _pages_with_examples():
    return [p for p in PAGES if BLOCK.search(p.read_text())]


@pytest.mark.parametrize("page", _pages_with_examples(), ids=lambda p: p.name)
def test_examples_on_the_page_run(page, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    # the files a page's examples open: a user's executed calc notebook
    shutil.copy(ROOT / "example_notebooks" / "relay_coil_current.ipynb", tmp_path / "calc.ipynb")
    import derivpad
    namespace: dict = {"__name__": "doc_example", "derivpad": derivpad}  # as after the README
    for i, block in enumerate(BLOCK.findall(page.read_text()), 1):
        try:
            exec(compile(block, f"{page.name} example {i}", "exec"), namespace)  # noqa: S102
        except Exception as exc:  # noqa: BLE001 - name the page and the block
            pytest.fail(f"{page.name}, example {i} fails: {type(exc).__name__}: {exc}")
