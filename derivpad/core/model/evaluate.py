"""Numerical evaluation of expressions in t: NumPy for arrays, right-continuous steps."""

from __future__ import annotations

import numpy as np
import sympy as sp

from .symbols import T

__all__ = ["numpy_function"]


def _heaviside(x, *args):
    """u(x) with u(0) = 1: the value just after a switching time."""
    return np.heaviside(x, 1.0)


def _no_impulse(x, *args):
    """δ(x) away from its instant: derivatives of step forms carry δ terms that vanish there."""
    return np.zeros_like(np.asarray(x, dtype=float))


def numpy_function(expr: sp.Expr):
    """f(times) → float array for an expression in t (NaN before t = 0; impulses not shown)."""
    fn = sp.lambdify(T, expr, modules=[{"Heaviside": _heaviside, "DiracDelta": _no_impulse},
                                       "numpy"])

    def evaluate(times):
        t = np.asarray(times, dtype=float)
        with np.errstate(invalid="ignore", over="ignore"):
            out = np.asarray(fn(t), dtype=float) * np.ones_like(t)
        return np.where(t >= 0, out, np.nan)

    return evaluate
