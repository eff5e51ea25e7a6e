"""The LaTeX output compiles with plain pdflatex (Debian's texlive, installed by .ci/run):
every example notebook's derivation, the demo, and a system with a load and a derived
quantity."""

import json
import shutil
import subprocess
from pathlib import Path

import pytest

import derivpad
from derivpad import Derivation, forcing
from derivpad.render.mimebundle import DERIVATION_MIME_TYPE

EXAMPLES = Path(__file__).resolve().parents[2] / "example_notebooks"
pytestmark = pytest.mark.skipif(shutil.which("pdflatex") is None,
                                reason="pdflatex not installed (apt-get install texlive-latex-base)")


def _recorded():
    for path in sorted(EXAMPLES.glob("*.ipynb")):
        for cell in json.loads(path.read_text())["cells"]:
            for out in cell.get("outputs", []):
                if DERIVATION_MIME_TYPE in out.get("data", {}):
                    yield path.stem, out["data"][DERIVATION_MIME_TYPE]


def _compiles(tex: str, folder: Path) -> None:
    (folder / "calc.tex").write_text(tex)
    proc = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "calc.tex"],
                          cwd=folder, capture_output=True, text=True, timeout=120)
    errors = [line for line in proc.stdout.splitlines() if line.startswith("!")]
    assert proc.returncode == 0 and (folder / "calc.pdf").stat().st_size > 1000, errors[:3]


@pytest.mark.parametrize("name, data", list(_recorded()), ids=lambda x: x if isinstance(x, str)
                         else "")
def test_every_example_compiles(name, data, tmp_path):
    _compiles(Derivation.from_dict(data).to_latex(document=True), tmp_path)


def test_the_demo_and_a_system_compile(tmp_path):
    from derivpad.demo import demo
    _compiles(demo().to_latex(document=True), tmp_path)
    system = derivpad.derive(["m1*x1'' + c1*x1' + (k1 + k2)*x1 - k2*x2 = P",
                              "m2*x2'' + k2*(x2 - x1) = 0"],
                             {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
                             {"m1": "2 kg", "m2": "1 kg", "k1": "800 N/m", "k2": "200 N/m",
                              "c1": "4 N*s/m", "P": forcing.pulse(50, 0, 0.1)},
                             units={"x1": "mm", "x2": "mm"}, derived={"stroke": "x2 - x1"})
    _compiles(system.to_latex(document=True), tmp_path)
