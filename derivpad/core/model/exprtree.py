"""A JSON-safe tree form of SymPy expressions, read back without evaluating any text.

``to_tree`` writes nested lists ``["Add", arg, ...]`` with numbers and symbols as small
objects; ``from_tree`` rebuilds the expression from a fixed table of allowed classes. It is
the machine-readable SymPy form in exported results (``srepr`` would need ``eval`` to read).
"""

from __future__ import annotations

import sympy as sp

from ...errors import ParseError
from .labels import (Coefficient, InitialValue, InverseLaplace, Laplace, PartLabel,
                     PolynomialLabel)

__all__ = ["to_tree", "from_tree"]

_FUNCS = {  # sums, products and powers as written: a derivation keeps e^{-cs}·F unevaluated
    "Add": lambda *a: sp.Add(*a, evaluate=False), "Mul": lambda *a: sp.Mul(*a, evaluate=False),
    "Pow": lambda *a: sp.Pow(*a, evaluate=False), "exp": sp.exp, "sin": sp.sin, "cos": sp.cos,
    "sinh": sp.sinh, "cosh": sp.cosh, "Heaviside": sp.Heaviside, "DiracDelta": sp.DiracDelta,
    "Abs": sp.Abs, "log": sp.log, "Tuple": sp.Tuple, "Derivative": sp.Derivative,
    "Equality": lambda lhs, rhs: sp.Eq(lhs, rhs, evaluate=False),
    "Laplace": Laplace, "InverseLaplace": InverseLaplace, "Subs": sp.Subs,
    "MatMul": lambda *args: sp.MatMul(*args, evaluate=False),
    "StrictGreaterThan": lambda a, b: sp.StrictGreaterThan(a, b, evaluate=False),
    "StrictLessThan": lambda a, b: sp.StrictLessThan(a, b, evaluate=False),
    "GreaterThan": lambda a, b: sp.GreaterThan(a, b, evaluate=False),
    "LessThan": lambda a, b: sp.LessThan(a, b, evaluate=False),
    "Unequality": lambda a, b: sp.Ne(a, b, evaluate=False),
}
_CONSTANTS = {"pi": sp.pi, "E": sp.E, "I": sp.I, "oo": sp.oo}


def to_tree(expr: sp.Basic):
    """The expression as nested JSON-safe lists and objects."""
    if isinstance(expr, sp.Integer):
        return {"int": str(expr)}
    if isinstance(expr, sp.Rational):
        return {"rat": [str(expr.p), str(expr.q)]}
    if isinstance(expr, sp.Float):
        # the decimal text for readers, and the exact binary value (mpmath's sign, mantissa,
        # exponent) with its precision in bits, so a 50-digit pole reads back bit for bit
        sign, man, exp, _ = expr._mpf_
        return {"float": sp.sstr(expr, full_prec=True), "digits": expr._prec and
                max(1, int(expr._prec * 0.30103)),
                "exact": [int(sign), str(man), int(exp)], "precision": int(expr._prec)}
    if isinstance(expr, InitialValue):
        return {"label": "initial value", "unknown": expr.unknown, "order": expr.order}
    if isinstance(expr, PolynomialLabel):
        return {"label": "polynomial", "letter": expr.letter}
    if isinstance(expr, PartLabel):
        return {"label": "part", "base": expr.base, "index": expr.index}
    if isinstance(expr, Coefficient):
        return {"label": "coefficient", "letter": expr.letter, "pole": expr.pole,
                "power": expr.power}
    if isinstance(expr, sp.MatrixBase):
        return ["Matrix", expr.rows, expr.cols] + [to_tree(a) for a in expr]
    if isinstance(expr, sp.Symbol):
        return {"sym": expr.name, "positive": bool(expr.is_positive),
                "real": bool(expr.is_real)}
    for name, const in _CONSTANTS.items():
        if expr == const:
            return {"const": name}
    if isinstance(expr, sp.core.function.AppliedUndef):
        return ["Function", expr.func.__name__] + [to_tree(a) for a in expr.args]
    name = type(expr).__name__
    if name == "NegativeOne":
        return {"int": "-1"}
    if name not in _FUNCS:
        raise ParseError(f"the expression class {name} has no tree form")
    return [name] + [to_tree(a) for a in expr.args]


def from_tree(tree) -> sp.Expr:
    """Rebuild an expression from ``to_tree`` output; refuses anything outside the table."""
    if isinstance(tree, dict):
        if "int" in tree:
            return sp.Integer(int(tree["int"]))
        if "rat" in tree:
            p, q = tree["rat"]
            return sp.Rational(int(p), int(q))
        if "exact" in tree:
            sign, man, exp = tree["exact"]
            man, prec = int(str(man)), int(tree["precision"])
            if not (0 < prec <= 4000 and man.bit_length() <= prec and abs(int(exp)) < 10 ** 6):
                raise ParseError("a float node's precision or exponent is out of range")
            return sp.Float._new((int(sign), man, int(exp), man.bit_length()), prec)
        if "float" in tree:
            return sp.Float(str(tree["float"]), int(tree.get("digits", 15)))
        if "sym" in tree:
            name = str(tree["sym"])
            if not name.isidentifier():
                raise ParseError(f"bad symbol name {name!r} in expression tree")
            if tree.get("positive"):
                return sp.Symbol(name, positive=True)
            return sp.Symbol(name, real=True) if tree.get("real") else sp.Symbol(name)
        if "const" in tree and tree["const"] in _CONSTANTS:
            return _CONSTANTS[tree["const"]]
        if "label" in tree:
            return _label(tree)
        raise ParseError(f"unreadable expression tree node {tree!r}")
    if isinstance(tree, list) and tree:
        head = tree[0]
        if head == "Function":
            name = str(tree[1])
            if not name.isidentifier():
                raise ParseError(f"bad function name {name!r} in expression tree")
            return sp.Function(name)(*[from_tree(a) for a in tree[2:]])
        if head == "Matrix" and len(tree) >= 3:
            rows, cols = int(tree[1]), int(tree[2])
            entries = [from_tree(a) for a in tree[3:]]
            if rows * cols != len(entries) or rows * cols > 10_000:
                raise ParseError("a matrix node's size does not match its entries")
            return sp.ImmutableMatrix(rows, cols, entries)
        if head in _FUNCS:
            return _FUNCS[head](*[from_tree(a) for a in tree[1:]])
    raise ParseError(f"unreadable expression tree node {tree!r}")


def _label(tree: dict) -> sp.Symbol:
    kind = tree["label"]
    if kind == "initial value":
        return InitialValue(_name(tree["unknown"]), int(tree["order"]))
    if kind == "polynomial":
        return PolynomialLabel(_name(tree["letter"]))
    if kind == "part":
        return PartLabel(_name(tree["base"]), int(tree["index"]))
    if kind == "coefficient":
        power = tree.get("power")
        return Coefficient(_name(tree["letter"]), int(tree["pole"]),
                           None if power is None else int(power))
    raise ParseError(f"unknown label kind {kind!r} in expression tree")


def _name(name) -> str:
    name = str(name)
    if not name.isidentifier():
        raise ParseError(f"bad name {name!r} in expression tree")
    return name
