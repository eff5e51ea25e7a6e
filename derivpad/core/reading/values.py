"""Values as the user gives them: mappings, exact numbers, quantities with units.

A decimal is read as written (0.8 is 4/5), a SymPy object is taken as is (a user's own
``Symbol("t")`` becomes our t), text goes through the whitelisting parser, and a quantity with
a unit is converted to exact SI by pint.
"""

from __future__ import annotations

import math
from fractions import Fraction
from numbers import Number

import sympy as sp

from ...errors import EquationError, InitialConditionError, ParameterError, ParseError
from .parse import T, parse_value
from .units import read_quantity

__all__ = ["mapping_of", "read_parameter", "to_exact"]


def mapping_of(value, what: str, example: str) -> dict:
    """``value`` as a dict, or InitialConditionError/ParameterError naming the expected form."""
    if value is None:
        return {}
    if not hasattr(value, "items"):
        msg = (f"{what}= must be a mapping of names to values, e.g. {what}={example}, not a "
               f"{type(value).__name__}")
        if what == "ics":
            raise InitialConditionError(msg)
        raise ParameterError(msg, what)
    return dict(value)


def to_exact(value, name: str) -> sp.Expr:
    """A parameter or condition value as an exact SymPy number (decimals read as written)."""
    if isinstance(value, bool):
        raise ParameterError(f"{name}: {value!r} is not a number; give a number such as 2.5",
                             name)
    if isinstance(value, sp.Basic):
        expr = sp.sympify(value)  # safe: a SymPy object, never text
        # a user's own sympy.Symbol("t"), with or without assumptions, is our time
        expr = expr.xreplace({x: T for x in expr.free_symbols if x.name == "t" and x != T})
        if expr.has(sp.nan, sp.oo, -sp.oo, sp.zoo):
            raise ParameterError(f"{name}: {value} is not finite; give a finite number", name)
        if isinstance(expr, sp.Float):
            return sp.Rational(Fraction(str(expr)))
        return expr
    if isinstance(value, int):
        return sp.Integer(value)
    if isinstance(value, Fraction):
        return sp.Rational(value.numerator, value.denominator)
    if isinstance(value, float) or isinstance(value, Number):
        try:
            f = float(value)
        except (TypeError, ValueError):
            f = math.nan
        if not math.isfinite(f):
            raise ParameterError(f"{name}: {value!r} is not finite; give a finite number", name)
        # repr gives the shortest decimal that round-trips: 0.8 is read as 4/5.
        frac = Fraction(repr(f))
        return sp.Rational(frac.numerator, frac.denominator)
    if isinstance(value, str):
        try:
            expr = parse_value(value, what=f"value of {name}")
        except (ParseError, EquationError) as exc:
            reason = getattr(exc, "reason", None) or str(exc).splitlines()[0]
            raise ParameterError(f"{name}: cannot read {value!r} as a number: {reason}",
                                 name) from exc
        if expr.has(T):
            raise ParameterError(f"{name}: a value may not depend on t ({value!r})", name)
        return expr
    raise ParameterError(f"{name}: {value!r} ({type(value).__name__}) is not a number; give an "
                         "int, float, Fraction or numeric text", name)


def read_parameter(name: str, value, units: dict):
    """A parameter's exact SI value and its Quantity (None for a plain number); a plain
    number for a name in ``units`` is read in that unit."""
    if name in units and not isinstance(value, str):
        value = f"{value} {units[name]}"
    quantity = read_quantity(value, name)
    if quantity is not None:
        return quantity.si_value, quantity
    return to_exact(value, name), None
