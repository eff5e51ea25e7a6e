"""A derivation's numbers: the closed form, the forcing and Y(s) compiled for evaluation.

The numerical checks and the engineering results read a :class:`NumericModel` and never
touch SymPy. A :class:`ParametricModel` compiles a
derivation once, with its symbolic parameters (if any) as arguments; :meth:`ParametricModel.at`
gives the :class:`NumericModel` for numbers without SymPy, which is what lets the explorer
re-check a derivation on every change without deriving or compiling again.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import mpmath
import numpy as np
import sympy as sp

from .evaluate import _heaviside, _no_impulse
from .forcing import forcing_on_interval
from .modes import ModeTable, NotAModeSum
from .parse import S, T

__all__ = ["NumericModel", "ParametricModel", "s_limits", "stable"]

_MPMATH = "mpmath"


@dataclass(frozen=True)
class NumericModel:
    """Everything the numerical checks and the results need, as numbers and callables.

    ``closed_form``, ``derivative`` and ``forcing`` map an array of times to an array (NaN
    before t = 0; impulses left out); ``forcing_at`` is the scalar form for an integrator's
    right-hand side. ``parts`` are the delay parts (c, R_c) of Y(s), each R_c callable on an
    mpmath number. ``initial_value_limit`` is lim sY(s) as s → ∞; ``final_value_limit`` is
    lim sY(s) as s → 0 (None where it is not finite). ``final_load`` is the forcing's level after the last
    breakpoint, or None where the forcing does not settle to a constant.
    """

    coefficients: tuple[float, ...]
    initial: tuple[float, ...]
    breakpoints: tuple[float, ...]
    impulses: tuple[tuple[float, float], ...]
    system_poles: tuple[complex, ...]
    response_poles: tuple[complex, ...]
    closed_form: Callable
    derivative: Callable
    forcing: Callable
    forcing_at: Callable
    parts: tuple[tuple[float, Callable], ...]
    initial_value_limit: float
    final_value_limit: float | None
    final_load: float | None
    modes: object = None          # the closed form as a sum of modes (None where it is not one)
    forcing_modes: object = None  # the forcing (impulses left out) as a sum of modes


def _scalar_heaviside(x, *args):
    return 1.0 if x >= 0 else 0.0


def _vector(fn, extra=(), scalar=None):
    """times → float array from fn(t, *extra); NaN before t = 0.

    ``scalar`` (the same expression compiled for the math module) serves one-point calls:
    a root finder calls the function one time at a time, where NumPy's overhead dominates.
    """
    def evaluate(times):
        t = np.asarray(times, dtype=float)
        if scalar is not None and t.shape == (1,) and t[0] >= 0:
            try:
                return np.array([float(scalar(float(t[0]), *extra))])
            except (ValueError, TypeError, OverflowError, ZeroDivisionError):
                pass  # the array form handles what the math module cannot
        with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
            out = np.asarray(fn(t, *extra), dtype=float) * np.ones_like(t)
        return np.where(t >= 0, out, np.nan)
    return evaluate


def _compile_numpy(expr, args):
    return sp.lambdify((T,) + tuple(args), expr,
                       modules=[{"Heaviside": _heaviside, "DiracDelta": _no_impulse}, "numpy"])


def _compile_scalar(expr, args):
    return sp.lambdify((T,) + tuple(args), expr,
                       modules=[{"Heaviside": _scalar_heaviside,
                                 "DiracDelta": lambda *_: 0.0}, "math"])


def _smooth(forcing: sp.Expr) -> sp.Expr:
    return forcing.replace(sp.DiracDelta, lambda *args: sp.Integer(0))


def s_limits(parts) -> tuple[sp.Expr, sp.Expr]:
    """lim sY(s) as s → ∞ and as s → 0, from the delay parts (c, R_c(s)) of Y(s).

    Delayed parts vanish as s → ∞ (e^{-cs} → 0); at s = 0 every part counts. The s → 0 value
    is only meaningful where the final-value theorem applies (the caller decides).
    """
    at_infinity, at_zero = sp.Integer(0), sp.Integer(0)
    for c, r in parts:
        num, den = sp.fraction(sp.cancel(sp.together(S * r)))
        pn, pd = sp.Poly(num, S), sp.Poly(den, S)
        if c == 0 and pn.degree() == pd.degree():
            at_infinity += pn.LC() / pd.LC()
        at_zero += num.subs(S, 0) / den.subs(S, 0)
    return at_infinity, at_zero


def _finite(value) -> float | None:
    try:
        v = complex(value)
    except (TypeError, ValueError):
        return None
    if not (math.isfinite(v.real) and math.isfinite(v.imag)):
        return None
    return v.real


def _final_load(smooth: sp.Expr, breakpoints) -> float | None:
    far = max([float(b) for b in breakpoints] + [0.0]) + 1.0
    level = forcing_on_interval(smooth, sp.Float(far) + 10 ** 6)
    return None if level.has(T) else float(level)


class ParametricModel:
    """A derivation in symbols for ``symbols``, compiled once; :meth:`at` puts in numbers.

    Everything that needs SymPy (the derivative of the solution, the s-limits, the lambdified
    functions) is done here, once; :meth:`at` only evaluates.
    """

    def __init__(self, problem, solution, parts, response_poles, system_poles, breakpoints,
                 impulses, symbols):
        self.symbols = tuple(symbols)
        args = tuple(sp.Symbol(n, positive=True) for n in self.symbols)
        self._args = args
        smooth = _smooth(problem.forcing)
        self._smooth = smooth
        lam = lambda e: sp.lambdify(args, e, modules="math")  # noqa: E731
        self._coefficients = [lam(c) for c in problem.coefficients]
        self._initial = [lam(v) for v in problem.initial_values]
        self._breakpoints = [lam(sp.Integer(0) + b) for b in breakpoints]
        self._impulses = [(lam(sp.Integer(0) + c), lam(sp.Integer(0) + a)) for c, a in impulses]
        self._system = [(p, lam(p.value), lam(p.beta)) for p in system_poles]
        self._response = [(p, lam(p.value), lam(p.beta)) for p in response_poles]
        self._solution = solution
        self._lambdified = None  # the closed form compiled as one expression, only if needed
        self._forcing = _compile_numpy(smooth, args)
        self._forcing_at = _compile_scalar(smooth, args)
        self._parts = [(lam(sp.Integer(0) + c), sp.lambdify((S,) + args, r, modules=_MPMATH))
                       for c, r in parts]
        self._modes = _mode_table(solution, self.symbols)
        self._forcing_modes = _mode_table(smooth, self.symbols)
        ivt, fvt = s_limits(parts)
        self._ivt = lam(ivt)
        self._fvt = lam(fvt) if not fvt.has(sp.zoo, sp.nan, sp.oo) else None

    def _as_expression(self):
        """The closed form and its derivative lambdified whole (array and one-point forms),
        for a solution that is not a sum of modes; compiled on first need."""
        if self._lambdified is None:
            d = sp.diff(self._solution, T)
            self._lambdified = ((_compile_numpy(self._solution, self._args),
                                 _compile_scalar(self._solution, self._args)),
                                (_compile_numpy(d, self._args), _compile_scalar(d, self._args)))
        return self._lambdified

    def at(self, values: dict) -> NumericModel:
        """The model for numbers ``values`` ({name: number}) of the symbols."""
        nums = tuple(float(values[n]) for n in self.symbols)
        bps = tuple(float(b(*nums)) for b in self._breakpoints)

        def poles(table):
            out = []
            for p, value, beta in table:
                a = complex(value(*nums))
                for _ in range(p.multiplicity):
                    if p.kind == "real":
                        out.append(complex(a.real, 0.0))
                    else:
                        b = float(beta(*nums))
                        out += [complex(a.real, b), complex(a.real, -b)]
            return tuple(out)

        exact = tuple(mpmath.mpf(x) for x in nums)  # a float is exact as an mpf; converted once

        def part(fn):
            return lambda s: fn(s, *exact)

        def scalar(fn):
            return lambda t: fn(t, *nums)

        fvt = None
        if self._fvt is not None:
            try:
                fvt = _finite(self._fvt(*nums))
            except (ZeroDivisionError, ValueError, OverflowError):
                fvt = None
        subs = dict(zip(self._args, nums))
        modes = _modes_at(self._modes, nums)
        load = _modes_at(self._forcing_modes, nums)
        if modes is not None:  # evaluated mode by mode: stable for any poles and switching times
            closed, derivative = stable(modes), stable(modes.derivative())
        else:
            closed, derivative = (_vector(vec, nums, one) for vec, one in self._as_expression())
        return NumericModel(
            coefficients=tuple(float(c(*nums)) for c in self._coefficients),
            initial=tuple(float(v(*nums)) for v in self._initial),
            breakpoints=bps,
            impulses=tuple((float(c(*nums)), float(a(*nums))) for c, a in self._impulses),
            system_poles=poles(self._system), response_poles=poles(self._response),
            closed_form=closed, derivative=derivative,
            forcing=stable(load) if load is not None else _vector(self._forcing, nums),
            forcing_at=_guarded(scalar(self._forcing_at), load),
            parts=tuple((float(c(*nums)), part(fn)) for c, fn in self._parts),
            initial_value_limit=float(self._ivt(*nums)), final_value_limit=fvt,
            final_load=_final_load(self._smooth.subs(subs), bps),
            modes=modes, forcing_modes=load)


def _mode_table(expr, symbols):
    """The modes of ``expr`` compiled for ``symbols``; None where it is not a sum of modes."""
    try:
        return ModeTable(expr, symbols)
    except NotAModeSum:
        return None


def _modes_at(table, nums):
    if table is None:
        return None
    try:
        return table.at(nums)
    except NotAModeSum:
        return None


def _guarded(fast, load):
    """The forcing at one time: the math-module form, or the modes where a factor such as
    e^{750 - 750 t} overflows before its switch."""
    if load is None:
        return fast

    def at(t):
        try:
            return fast(t)
        except (OverflowError, ValueError, ZeroDivisionError):
            return float(load(np.array([t]))[0])
    return at


def stable(modes):
    """times → values of a sum of modes, each at its own shifted time (NaN before t = 0)."""
    def evaluate(times):
        return modes(np.asarray(times, dtype=float))
    return evaluate
