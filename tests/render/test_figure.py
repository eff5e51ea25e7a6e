"""The verification figure: three panels, unit-bearing labels, deterministic files."""

import pytest

from derivpad import ExportError, derive
from derivpad.demo import demo


@pytest.fixture(scope="module")
def derivation():
    return demo()


def test_figure_panels_and_labels(derivation):
    fig = derivation.figure()
    axes = fig.get_axes()
    assert len(axes) == 3
    assert axes[0].get_ylabel() == "x(t) [mm]"
    assert axes[1].get_ylabel() == "f(t) [N]"
    assert axes[2].get_xlabel() == "t [s]" and axes[2].get_yscale() == "log"
    # breakpoints marked on every panel
    assert all(len(ax.get_lines()) >= 3 for ax in axes)


def test_svg_is_byte_for_byte_reproducible(derivation, tmp_path):
    a = derivation.save_figure(tmp_path / "a.svg").read_bytes()
    b = derivation.save_figure(tmp_path / "b.svg").read_bytes()
    assert a == b and a.startswith(b"<?xml")


def test_png_and_bad_suffix(derivation, tmp_path):
    assert derivation.save_figure(tmp_path / "f.png").read_bytes()[:4] == b"\x89PNG"
    with pytest.raises(ExportError, match=".svg, .png, .pdf"):
        derivation.save_figure(tmp_path / "f.jpeg")
    assert not list(tmp_path.glob("*.part"))


def test_symbolic_derivation_without_values_has_no_figure():
    d = derive("m*x'' + k*x = 1", ics={"x(0)": 0, "x'(0)": 0})
    with pytest.raises(ExportError, match="values="):
        d.figure()
