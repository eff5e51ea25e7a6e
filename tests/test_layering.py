"""Imports flow errors ← core ← render ← notebook, export ← cli, read from the import graph."""

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1] / "derivpad"

# package part -> parts it may import at module level or inside functions
ALLOWED = {
    "errors": set(),
    "core": {"errors", "core"},
    "render": {"errors", "core", "render"},
    "notebook": {"errors", "core", "render", "notebook"},
    "export": {"errors", "core", "render", "export"},
    "forcing": {"core"},
    "demo": {"core"},
    "__init__": {"core", "errors", "forcing"},
    "cli": {"errors", "core", "render", "notebook", "export", "demo", "cli"},
    "__main__": {"cli"},
}
# The core's display façade reaches render/ lazily, inside method bodies only.
LAZY_EXCEPTIONS = {("core", "render"), ("__init__", "notebook")}


def _part(path: Path) -> str:
    rel = path.relative_to(ROOT)
    return rel.parts[0] if len(rel.parts) > 1 else rel.stem


def _imports(path: Path):
    tree = ast.parse(path.read_text())
    top_level = {id(n) for n in tree.body}
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.level > 0:
            base = list(path.relative_to(ROOT).parent.parts)
            base = base[: len(base) - (node.level - 1)] if node.level > 1 else base
            target = (base + (node.module.split(".") if node.module else []))
            yield (target[0] if target else (node.names[0].name)), id(node) in top_level
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("derivpad."):
                    yield alias.name.split(".")[1], id(node) in top_level


def test_import_directions():
    bad = []
    for path in ROOT.rglob("*.py"):
        part = _part(path)
        for target, top in _imports(path):
            if target in ALLOWED.get(part, set()):
                continue
            if (part, target) in LAZY_EXCEPTIONS and not top:
                continue
            bad.append(f"{path.relative_to(ROOT)} imports {target}")
    assert bad == []


def test_core_never_imports_jupyter_or_plotting():
    for path in (ROOT / "core").rglob("*.py"):
        text = path.read_text()
        for lib in ("IPython", "ipywidgets", "matplotlib"):
            assert f"import {lib}" not in text and f"from {lib}" not in text, path
