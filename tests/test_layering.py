"""Imports flow errors ← core ← render ← cases ← export, and notebook, export ← cli, read from
the import graph."""

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1] / "derivpad"

# package part -> parts it may import at module level or inside functions
ALLOWED = {
    "errors": set(),
    "core": {"errors", "core"},
    "render": {"errors", "core", "render"},
    "notebook": {"errors", "core", "render", "notebook"},
    "cases": {"errors", "core", "render", "cases"},
    "export": {"errors", "core", "render", "cases", "export"},
    "forcing": {"core"},
    "demo": {"core"},
    "__init__": {"core", "errors", "forcing", "cases"},
    "cli": {"errors", "core", "render", "notebook", "export", "cases", "demo", "cli",
            "__init__"},
    "__main__": {"cli"},
}
# Inside core/, the folders in the order data flows: model objects (0) ← reading input (1) ←
# the symbolic stages (2) ← checking: numbers, checks, results (3) ← the engine on top (4).
CORE_LAYERS = {"model": 0, "reading": 1, "symbolic": 2, "checking": 3}
CORE_TOP = 4   # core/engine.py, core/family.py, core/derivation_json.py, core/__init__.py
# The core reaches render/ lazily, inside function bodies, from core/display_hook.py only.
LAZY_EXCEPTIONS = {("core", "render"), ("__init__", "notebook")}


def _part(path: Path) -> str:
    rel = path.relative_to(ROOT)
    return rel.parts[0] if len(rel.parts) > 1 else rel.stem


def _targets(path: Path, root: Path = ROOT):
    """(dotted module path inside derivpad, imported at module level?) for every import of
    ours: relative, absolute (``from derivpad.x import``, ``import derivpad.x``) and
    ``importlib.import_module("derivpad.x")`` calls."""
    tree = ast.parse(path.read_text())
    top_level = {id(n) for n in tree.body}
    for node in ast.walk(tree):
        top = id(node) in top_level
        if isinstance(node, ast.ImportFrom) and node.level > 0:
            base = list(path.relative_to(root).parent.parts)
            base = base[: len(base) - (node.level - 1)] if node.level > 1 else base
            target = base + (node.module.split(".") if node.module else [])
            if not node.module:  # from . import name: a module, or a name of the package
                name = node.names[0].name
                here = root.joinpath(*target) if target else root
                is_module = (here / f"{name}.py").exists() or (here / name).is_dir()
                target = target + [name if is_module else "__init__"]
            yield (target or [node.names[0].name]), top
        elif isinstance(node, ast.ImportFrom) and (node.module or "").startswith("derivpad."):
            yield node.module.split(".")[1:], top
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("derivpad."):
                    yield alias.name.split(".")[1:], top
        elif isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(
                node.func, "id", "")) == "import_module" and node.args and \
                isinstance(node.args[0], ast.Constant) and \
                str(node.args[0].value).startswith("derivpad."):
            yield str(node.args[0].value).split(".")[1:], top


def _imports(path: Path, root: Path = ROOT):
    for target, top in _targets(path, root):
        yield target[0], top


def violations(root: Path = ROOT) -> list[str]:
    """Every import against the package's direction, and inside core/ against the pipeline
    order (model and reading ← stages ← checking ← engine)."""
    bad = []
    for path in root.rglob("*.py"):
        rel = path.relative_to(root)
        part = rel.parts[0] if len(rel.parts) > 1 else rel.stem
        for target, top in _targets(path, root):
            name = target[0]
            lazy_ok = (part, name) in LAZY_EXCEPTIONS and not top and \
                (part != "core" or rel.as_posix() == "core/model/display_hook.py")
            if name not in ALLOWED.get(part, set()) and not lazy_ok:
                bad.append(f"{rel} imports {name}")
            if part == "core" and name == "core" and len(target) > 1:
                own = CORE_LAYERS.get(rel.parts[1], CORE_TOP) if len(rel.parts) > 2 \
                    else CORE_TOP
                other = CORE_LAYERS.get(target[1], CORE_TOP)
                # the one upward hook: Derivation.from_dict reads JSON through the engine's
                # reader, imported inside the method (as the display hook reaches render/)
                hook = rel.as_posix() == "core/model/derivation.py" and \
                    target[1:2] == ["derivation_json"] and not top
                if other > own and not hook:
                    bad.append(f"{rel} (core layer {own}) imports core.{'.'.join(target[1:])} "
                               f"(layer {other})")
    return bad


def test_import_directions():
    assert violations() == []


def test_the_check_catches_each_kind_of_violation(tmp_path):
    import shutil
    copy = tmp_path / "derivpad"
    shutil.copytree(ROOT, copy)
    plants = {
        "notebook/widgets.py": "from derivpad.export import package\n",   # absolute
        "export/report.py": "from ..notebook import display\n",            # relative
        "render/base.py": "import importlib\nimportlib.import_module('derivpad.cli')\n",
        "core/reading/parse.py": "from ..engine import derive\n",          # core order
        "core/reading/units.py": "def f():\n    from ...render import text\n",  # lazy, not hook
    }
    for rel, line in plants.items():
        with open(copy / rel, "a") as fh:
            fh.write("\n" + line)
    found = "\n".join(violations(copy))
    assert "notebook/widgets.py imports export" in found
    assert "export/report.py imports notebook" in found
    assert "render/base.py imports cli" in found
    assert "core/reading/parse.py (core layer 1) imports core.engine" in found
    assert "core/reading/units.py imports render" in found


def test_core_never_imports_jupyter_or_plotting():
    for path in (ROOT / "core").rglob("*.py"):
        text = path.read_text()
        for lib in ("IPython", "ipywidgets", "matplotlib"):
            assert f"import {lib}" not in text and f"from {lib}" not in text, path
