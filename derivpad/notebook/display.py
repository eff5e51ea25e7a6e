"""IPython integration: ``%load_ext derivpad`` and the ``%%derivation`` cell magic.

Rich display needs no registration (``Derivation._repr_mimebundle_``); the extension adds the
cell magic, in which the equation, the initial conditions and the parameters are written one
per line::

    %%derivation
    m*x'' + c*x' + k*x = F0*u(t - t1)
    x(0) = 0
    x'(0) = 0
    m = 1200 kg
    k = 480 kN/m
    ...
    units: x = mm
    criteria: peak <= 3 mm

The first line is the equation. A line ``name(0) = value`` (with primes) is an initial
condition; ``name = value`` a parameter; ``units: a = u, b = v`` display units;
``values: a = 1`` numbers for symbolic parameters; ``criteria: peak <= 3 mm, ...`` acceptance
criteria. Blank lines and lines starting with ``#``
are skipped. The magic's line may name a variable to store the derivation in:
``%%derivation d``.
"""

from __future__ import annotations

import re

from ..core.engine import derive
from ..errors import DerivpadError, ParseError, import_extra, in_syntax

__all__ = ["load_ipython_extension", "parse_cell", "derivation_magic", "show"]

_IC = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*(?:'*|\^\(\d+\))\s*\(\s*0\s*[-⁻]?\s*\))\s*=\s*(.+)$")
_ASSIGN = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*)\s*=\s*(.+?)\s*$")


def _pairs(text: str, lineno: int, what: str) -> dict:
    out = {}
    for item in text.split(","):
        m = _ASSIGN.match(item)
        if not m:
            raise ParseError(f"line {lineno}: cannot read {item.strip()!r} in the {what} line; "
                             f"write '{what}: name = value, name = value'")
        out[m.group(1)] = m.group(2)
    return out


def parse_cell(cell: str) -> dict:
    """The keyword arguments of derive() from the magic's cell text (never evaluated)."""
    lines = [(i, line.strip()) for i, line in enumerate(cell.splitlines(), 1)]
    lines = [(i, line) for i, line in lines if line and not line.startswith("#")]
    if not lines:
        raise ParseError("the cell is empty: write the equation on the first line")
    (_, equation), rest = lines[0], lines[1:]
    # further equation lines (a coupled system): they carry primes and are not conditions
    equations = [equation]
    while rest and "'" in rest[0][1] and not _IC.match(rest[0][1]):
        equations.append(rest[0][1])
        rest = rest[1:]
    kwargs = {"equation": equations if len(equations) > 1 else equation, "ics": {},
              "params": {}, "units": {}, "values": {}, "criteria": []}
    for i, line in rest:
        head, colon, tail = line.partition(":")
        if colon and head.strip() == "criteria":
            kwargs["criteria"] += [c.strip() for c in tail.split(",") if c.strip()]
            continue
        if colon and head.strip() in ("units", "values"):
            kwargs[head.strip()].update(_pairs(tail, i, head.strip()))
            continue
        m = _IC.match(line)
        if m:
            kwargs["ics"][m.group(1).replace(" ", "")] = m.group(2).strip()
            continue
        m = _ASSIGN.match(line)
        if m:
            kwargs["params"][m.group(1)] = m.group(2)
            continue
        raise ParseError(f"line {i}: cannot read {line!r}; write an initial condition "
                         "'y(0) = 0', a parameter 'k = 800 N/m', or 'units: x = mm'")
    return kwargs


def _ipython():
    (ipython_display,) = import_extra(("IPython.display",), "the notebook side")
    return ipython_display.display


def show(derivation) -> None:
    """Display a derivation in the notebook (the same as leaving it as a cell's last value)."""
    _ipython()(derivation)


def derivation_magic(line: str, cell: str, shell=None):
    """%%derivation [name]: derive from the cell's lines and display (errors as one message)."""
    display = _ipython()
    try:
        d = derive(**parse_cell(cell))
    except DerivpadError as exc:
        print(f"derivpad: {in_syntax(str(exc), 'cell')}")
        return None
    name = line.strip()
    if name:
        if not name.isidentifier():
            print(f"derivpad: {name!r} is not a variable name")
            return None
        if shell is not None:
            shell.user_ns[name] = d
    display(d)
    return None


def load_ipython_extension(ipython) -> None:
    """Called by ``%load_ext derivpad``: registers the ``%%derivation`` cell magic."""
    ipython.register_magic_function(
        lambda line, cell: derivation_magic(line, cell, ipython), magic_kind="cell",
        magic_name="derivation")
