"""The public API: ``__all__`` is exactly the supported namespace; importing stays light."""

import subprocess
import sys

import derivpad


def test_all_is_sorted_and_matches_the_namespace():
    assert derivpad.__all__ == sorted(derivpad.__all__)
    public = {name for name in vars(derivpad) if not name.startswith("_")}
    modules = {"core", "errors", "render", "cli", "demo", "notebook", "export", "cases"}
    assert public - modules == set(derivpad.__all__)


def test_every_error_is_in_the_family():
    from derivpad import errors
    for name in errors.__all__:
        assert issubclass(getattr(errors, name), derivpad.DerivpadError)
        assert name in derivpad.__all__


def test_import_does_not_load_notebook_or_plotting_libraries():
    code = ("import sys, derivpad; d = derivpad.derive(\"y' + y = 1\", ics={'y(0)': 0}); "
            "bad = [m for m in ('IPython', 'ipywidgets', 'matplotlib', 'pandas') if m in sys.modules]; "
            "print(bad)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_core_does_not_load_rendering_until_asked():
    code = ("import sys, derivpad; d = derivpad.derive(\"y' + y = 1\", ics={'y(0)': 0}); "
            "print(any(m.startswith('derivpad.render') for m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
