"""The %%derivation cell magic: its line syntax, and its registration in IPython."""

import pytest

from derivpad.errors import ParseError
from derivpad.notebook.display import parse_cell

CELL = """
m*x'' + k*x = F0*u(t - t1)
# inputs
x(0) = 0
x'(0) = 0
m = 2 kg
k = 800 N/m
F0 = 50 N
t1 = 250 ms
units: x = mm
"""


def test_cell_lines_become_derive_arguments():
    kw = parse_cell(CELL)
    assert kw["equation"] == "m*x'' + k*x = F0*u(t - t1)"
    assert kw["ics"] == {"x(0)": "0", "x'(0)": "0"}
    assert kw["params"]["k"] == "800 N/m" and kw["units"] == {"x": "mm"}


def test_unreadable_lines_are_named():
    with pytest.raises(ParseError, match="line 3"):
        parse_cell("y' + y = 1\ny(0) = 0\nthis is not a line")


def test_extension_registers_the_magic_and_displays():
    IPython = pytest.importorskip("IPython")
    from IPython.testing.globalipapp import start_ipython
    ip = start_ipython()
    ip.run_line_magic("load_ext", "derivpad")
    ip.run_cell_magic("derivation", "d", "y'' + 9*y = delta(t)\ny(0) = 0\ny'(0) = 0")
    import sympy as sp
    assert ip.user_ns["d"].solution == sp.sin(3 * sp.Symbol("t", real=True)) / 3
    assert IPython
