"""Notation as objects: the labels a derivation writes beside its expressions.

The transform operators 𝓛{…} and 𝓛⁻¹{…}, an initial value x'(0⁻), a polynomial of s such as P(s) or Δ(s), and a part X_0(s) of a
transform between delay factors are SymPy symbols of their own classes, carrying their parts as
attributes. The printers in ``derivpad.render.notation`` print each through its own
``_print_<Class>`` method (as SymPy's printers dispatch), so nothing decodes a name afterwards.
"""

from __future__ import annotations

import sympy as sp

__all__ = ["Coefficient", "InitialValue", "InverseLaplace", "Laplace", "PartLabel",
           "PolynomialLabel", "initial_value_label"]


class Laplace(sp.Function):
    """Display-only node for 𝓛{f}: never evaluates."""

    nargs = 1


class InverseLaplace(sp.Function):
    """Display-only node for 𝓛⁻¹{F}: never evaluates."""

    nargs = 1


class InitialValue(sp.Symbol):
    """The value of an unknown's k-th derivative just before t = 0: x^(k)(0⁻)."""

    def __new__(cls, unknown: str, order: int):
        name = unknown + ("'" * order if order <= 3 else f"^({order})") + "(0^-)"
        obj = super().__new__(cls, name)
        obj.unknown, obj.order = unknown, int(order)
        return obj

    def __getnewargs__(self):
        return (self.unknown, self.order)

    def _hashable_content(self):
        return (self.name, "InitialValue")


class PolynomialLabel(sp.Symbol):
    """A named polynomial of s: the characteristic polynomial P(s), the determinant Δ(s)."""

    def __new__(cls, letter: str):
        obj = super().__new__(cls, f"{letter}(s)")
        obj.letter = letter
        return obj

    def __getnewargs__(self):
        return (self.letter,)

    def _hashable_content(self):
        return (self.name, "PolynomialLabel")


class PartLabel(sp.Symbol):
    """Part ``index`` of a transform between delay factors: Y_0(s), X1_2(s)."""

    def __new__(cls, base: str, index: int):
        obj = super().__new__(cls, f"{base}_{index}(s)")
        obj.base, obj.index = base, int(index)
        return obj

    def __getnewargs__(self):
        return (self.base, self.index)

    def _hashable_content(self):
        return (self.name, "PartLabel")


class Coefficient(sp.Symbol):
    """A partial-fraction coefficient named by its term: ``A`` of pole k and power j
    (A_{k,j}), or B_k and C_k of a complex pair's square-completed term."""

    def __new__(cls, letter: str, pole: int, power: int | None = None):
        name = f"{letter}_{pole}" + (f",{power}" if power is not None else "")
        obj = super().__new__(cls, name)
        obj.letter, obj.pole, obj.power = letter, int(pole), power
        return obj

    def __getnewargs__(self):
        return (self.letter, self.pole, self.power)

    def _hashable_content(self):
        return (self.name, "Coefficient")


def initial_value_label(unknown: str, order: int) -> InitialValue:
    """x^(k)(0⁻) as a label object."""
    return InitialValue(unknown, order)
