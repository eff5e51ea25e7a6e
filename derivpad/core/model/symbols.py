"""The symbols every stage shares: time t (real), the transform variable s, and τ, the time
since a switch, in which each delayed part of a solution is written."""

from __future__ import annotations

import sympy as sp

__all__ = ["S", "T", "TAU"]

T = sp.Symbol("t", real=True)
"""Time; real, so that sign checks on t - c are decidable."""
S = sp.Symbol("s")
"""The transform variable."""
TAU = sp.Symbol("tau", real=True)
"""Time since a part switched on: the solution is Σ g_c(t - c)·u(t - c), g_c written in τ."""
