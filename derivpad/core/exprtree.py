"""A JSON-safe tree form of SymPy expressions, read back without evaluating any text.

``to_tree`` writes nested lists ``["Add", arg, ...]`` with numbers and symbols as small
objects; ``from_tree`` rebuilds the expression from a fixed table of allowed classes. It is
the machine-readable SymPy form in exported results (``srepr`` would need ``eval`` to read).
"""

from __future__ import annotations

import sympy as sp

from ..errors import ParseError

__all__ = ["to_tree", "from_tree"]

_FUNCS = {
    "Add": sp.Add, "Mul": sp.Mul, "Pow": sp.Pow, "exp": sp.exp, "sin": sp.sin, "cos": sp.cos,
    "sinh": sp.sinh, "cosh": sp.cosh, "Heaviside": sp.Heaviside, "DiracDelta": sp.DiracDelta,
    "Abs": sp.Abs, "log": sp.log, "Tuple": sp.Tuple, "Derivative": sp.Derivative,
    "Equality": lambda lhs, rhs: sp.Eq(lhs, rhs, evaluate=False),
}
_CONSTANTS = {"pi": sp.pi, "E": sp.E, "I": sp.I, "oo": sp.oo}


def to_tree(expr: sp.Basic):
    """The expression as nested JSON-safe lists and objects."""
    if isinstance(expr, sp.Integer):
        return {"int": str(expr)}
    if isinstance(expr, sp.Rational):
        return {"rat": [str(expr.p), str(expr.q)]}
    if isinstance(expr, sp.Float):
        return {"float": sp.sstr(expr, full_prec=True), "digits": expr._prec and
                max(1, int(expr._prec * 0.30103))}
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
        raise ParseError(f"unreadable expression tree node {tree!r}")
    if isinstance(tree, list) and tree:
        head = tree[0]
        if head == "Function":
            name = str(tree[1])
            if not name.isidentifier():
                raise ParseError(f"bad function name {name!r} in expression tree")
            return sp.Function(name)(*[from_tree(a) for a in tree[2:]])
        if head in _FUNCS:
            return _FUNCS[head](*[from_tree(a) for a in tree[1:]])
    raise ParseError(f"unreadable expression tree node {tree!r}")
