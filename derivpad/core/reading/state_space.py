"""A state-space model x' = A x + B u(t), y = C x + D u read as a Problem of first-order
equations, one per state; the outputs are derived quantities y1, y2, ...
"""

from __future__ import annotations

import sympy as sp

from ...errors import ParameterError, ParseError
from .parse import RESERVED_NAMES, T, parse_expression
from ..model.problem import Problem
from .values import to_exact

__all__ = ["state_space_problem"]


def state_space_problem(A, B, u, x0, outputs=None, D=None, names=None) -> Problem:
    """x' = A x + B u(t), x(0⁻) = x0, outputs y = C x + D u as derived quantities.

    ``A`` (n×n), ``B`` (n×m), ``C`` (p×n), ``D`` (p×m) are NumPy or SymPy matrices (or nested
    lists); ``u`` is a list of m inputs in the forcing library's form (text such as
    ``"u(t) - u(t - 1)"``, a SymPy expression in t, or a ``derivpad.forcing`` load).
    """
    A = _matrix(A, "A")
    n = A.shape[0]
    if A.shape != (n, n):
        raise ParameterError(f"A must be square, not {A.shape[0]}×{A.shape[1]}", "A")
    B = _matrix(B, "B") if B is not None else sp.zeros(n, 0)
    if B.shape[0] != n:
        raise ParameterError(f"B must have {n} rows (one per state), not {B.shape[0]}", "B")
    inputs = [_input(v, k) for k, v in enumerate(list(u) if u is not None else [])]
    if len(inputs) != B.shape[1]:
        raise ParameterError(f"B has {B.shape[1]} columns but {len(inputs)} input(s) were "
                             "given; give one input per column of B", "u")
    x0 = list(x0) if x0 is not None else [0] * n
    if len(x0) != n:
        raise ParameterError(f"x0 must have {n} values (one per state), not {len(x0)}", "x0")
    names = list(names) if names else [f"x{j + 1}" for j in range(n)]
    texts, operators, forcings = [], [], []
    for i in range(n):
        row = []
        for j in range(n):
            a = -A[i, j]
            row.append((a, sp.Integer(1)) if i == j else (a,))
        operators.append(tuple(row))
        f = sp.expand(sum((B[i, k] * inputs[k] for k in range(len(inputs))), sp.Integer(0)))
        forcings.append(f)
        rhs = " + ".join(f"({sp.sstr(A[i, j])})*{names[j]}" for j in range(n) if A[i, j] != 0)
        texts.append(f"{names[i]}' = " + (rhs or "0") + (f" + {sp.sstr(f)}" if f != 0 else ""))
    derived = []
    if outputs is not None:
        C = _matrix(outputs, "C")
        if C.shape[1] != n:
            raise ParameterError(f"C must have {n} columns, not {C.shape[1]}", "C")
        Dm = _matrix(D, "D") if D is not None else sp.zeros(C.shape[0], len(inputs))
        if Dm.shape != (C.shape[0], len(inputs)):
            raise ParameterError(f"D must be {C.shape[0]}×{len(inputs)}", "D")
        xs = [sp.Function(v)(T) for v in names]
        for r in range(C.shape[0]):
            y = sum((C[r, j] * xs[j] for j in range(n)), sp.Integer(0)) + \
                sum((Dm[r, k] * inputs[k] for k in range(len(inputs))), sp.Integer(0))
            derived.append((f"y{r + 1}", sp.expand(y)))
    initial = tuple((to_exact(v, f"x0[{j}]"),) for j, v in enumerate(x0))
    free = set().union(*[e.free_symbols for e in list(A) + list(B) + forcings]) - {T}
    return Problem(texts=tuple(texts), unknowns=tuple(names), operators=tuple(operators),
                         forcings=tuple(forcings), orders=tuple([1] * n), initial_values=initial,
                         parameters=(), symbols=tuple(sorted(s.name for s in free)),
                         derived=tuple(derived))


def _ours(expr: sp.Expr) -> sp.Expr:
    """A user's SymPy expression in our symbols: t real, parameters positive."""
    repl = {}
    for sym in expr.free_symbols:
        if sym.name == "t":
            repl[sym] = T
        elif sym.name in RESERVED_NAMES:
            raise ParseError(f"the symbol {sym.name!r} is reserved; rename it")
        else:
            repl[sym] = sp.Symbol(sym.name, positive=True)
    return expr.xreplace(repl)


def _matrix(value, name: str) -> sp.Matrix:
    try:
        rows = value.tolist() if hasattr(value, "tolist") else value
        m = sp.Matrix(rows)
    except (TypeError, ValueError, sp.SympifyError) as exc:
        raise ParameterError(f"{name} must be a matrix of numbers (NumPy array, SymPy Matrix or "
                             f"nested lists): {exc}", name) from exc
    if m.shape[0] == 0:
        raise ParameterError(f"{name} is empty", name)
    if any(x.has(sp.Symbol("t")) or x.has(T) for x in m):
        raise ParameterError(f"{name} may not depend on t: the coefficients must be constant",
                             name)
    return m.applyfunc(lambda x: to_exact(x if not isinstance(x, sp.Float) else float(x),
                                          name) if x.is_number else _ours(x))


def _input(value, k: int) -> sp.Expr:
    if hasattr(value, "expr") and hasattr(value, "description"):
        return value.expr
    if isinstance(value, str):
        return parse_expression(value, (), f"input u[{k}]")
    if isinstance(value, sp.Basic):
        return _ours(value)
    if isinstance(value, (int, float)):
        return to_exact(value, f"u[{k}]") * sp.Heaviside(T)
    raise ParameterError(f"input u[{k}] must be text, a SymPy expression in t or a "
                         "derivpad.forcing load", f"u[{k}]")
