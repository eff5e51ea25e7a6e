"""A derivation's numbers: the closed forms, the forcings and the transforms compiled once.

The numerical checks and the engineering results read :class:`Numbers` (and a
:class:`NumericModel` per unknown or derived quantity) and never touch SymPy.
:class:`ParametricNumbers` compiles a derivation once, with its symbolic parameters (if any)
as arguments; :meth:`ParametricNumbers.at` gives the numbers for values without SymPy, which is
what lets the explorer and load cases re-check a derivation on every change without deriving
or compiling again. One unknown and many take the same route.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import mpmath
import numpy as np
import sympy as sp

from ..model.evaluate import _heaviside, _no_impulse
from ..reading.forcing import forcing_on_interval
from .modes import ModeTable, NotAModeSum
from ..reading.parse import S, T

__all__ = ["NumericModel", "Numbers", "ParametricNumbers", "s_limits", "stable"]

_MPMATH = "mpmath"


@dataclass(frozen=True)
class NumericModel:
    """One unknown's (or derived quantity's) response as numbers and callables.

    ``closed_form`` and ``derivative`` map an array of times to an array (NaN before t = 0;
    impulses left out). ``parts`` are the delay parts (c, R_c) of its transform, each R_c
    callable on an mpmath number (none for a derived quantity). ``initial_value_limit`` is
    lim sX(s) as s → ∞; ``final_value_limit`` lim sX(s) as s → 0 (None where not finite).
    """

    name: str
    breakpoints: tuple[float, ...]
    system_poles: tuple[complex, ...]
    response_poles: tuple[complex, ...]
    closed_form: Callable
    derivative: Callable
    parts: tuple[tuple[float, Callable], ...]
    initial_value_limit: float
    final_value_limit: float | None
    modes: object = None          # the closed form as a sum of modes (None where it is not one)


@dataclass(frozen=True)
class Numbers:
    """A derivation's numbers: each quantity's model and the equations' first-order data.

    ``lead`` is E, the coefficients of each unknown's highest derivative; ``lower`` the other
    coefficients (i, j, k, a_ijk); ``static`` A(0), the coefficients of the unknowns
    themselves. Per equation: ``forcing`` (times → array), ``forcing_at`` (scalar, for an
    integrator), ``forcing_modes`` (None where not a sum of modes) and ``final_loads`` (the
    level after the last switch, None where the load does not settle). ``impulses`` are
    (equation, time, area).
    """

    unknowns: tuple[str, ...]
    models: dict
    lead: np.ndarray
    lower: tuple
    static: np.ndarray
    orders: tuple[int, ...]
    initial: tuple
    forcing: tuple
    forcing_at: tuple
    forcing_modes: tuple
    final_loads: tuple
    impulses: tuple
    breakpoints: tuple[float, ...]
    system_poles: tuple[complex, ...]
    operators: tuple = ()    # a_ijk as floats, operators[i][j][k]

    def coefficients(self, i: int, j: int) -> tuple[float, ...]:
        """a_ij0 … a_ijN: unknown j's coefficients in equation i, by derivative order."""
        return self.operators[i][j]

    def matrix(self, k: int) -> np.ndarray:
        """The n×n matrix of the coefficients of the k-th derivatives."""
        n = len(self.unknowns)
        return np.array([[self.operators[i][j][k] if k < len(self.operators[i][j]) else 0.0
                          for j in range(n)] for i in range(n)])

    @property
    def every_pole(self) -> list:
        """Every response pole of every unknown (for the window)."""
        return [z for u in self.unknowns for z in self.models[u].response_poles]


class _Compiled:
    """One expression in t compiled for the symbols: its modes, or (on first need) the whole
    expression and its derivative lambdified."""

    def __init__(self, expr, symbols, args):
        self.expr = expr
        self.args = args
        self.modes = _mode_table(expr, symbols)
        self._lambdified = None

    def functions(self, nums):
        """(closed form, derivative, modes) for numbers ``nums`` of the symbols."""
        modes = _modes_at(self.modes, nums)
        if modes is not None:  # mode by mode: stable for any poles and switching times
            return stable(modes), stable(modes.derivative()), modes
        if self._lambdified is None:
            d = sp.diff(self.expr, T)
            self._lambdified = ((_compile_numpy(self.expr, self.args),
                                 _compile_scalar(self.expr, self.args)),
                                (_compile_numpy(d, self.args), _compile_scalar(d, self.args)))
        closed, derivative = (_vector(vec, nums, one) for vec, one in self._lambdified)
        return closed, derivative, None


class ParametricNumbers:
    """A derivation in symbols for ``symbols``, compiled once; :meth:`at` puts in numbers.

    Everything that needs SymPy (derived quantities, s-limits, lambdified functions, mode
    tables) is done here, once; :meth:`at` only evaluates.
    """

    def __init__(self, problem, stages, symbols=()):
        self.symbols = tuple(symbols)
        args = tuple(sp.Symbol(n, positive=True) for n in self.symbols)
        self._args = args
        lam = lambda e: sp.lambdify(args, sp.Integer(0) + e, modules="math")  # noqa: E731
        self._lam = lam
        self.unknowns = problem.unknowns
        exprs = {**stages.solution, **stages.derived}
        self._quantities = {}
        for name, expr in exprs.items():
            parts = stages.parts.get(name, ())
            ivt, fvt = s_limits(parts) if parts else (sp.nan, sp.nan)
            self._quantities[name] = (
                _Compiled(expr, self.symbols, args),
                [(lam(c), _part_function(r, args)) for c, r in parts],
                self._pole_table(stages.response_poles.get(name, stages.system_poles)),
                lam(ivt) if parts else None,
                lam(fvt) if parts and not fvt.has(sp.zoo, sp.nan, sp.oo) else None)
        self._system = self._pole_table(stages.system_poles)
        self._breakpoints = [lam(b) for b in stages.breakpoints]
        self._impulses = [(i, lam(c), lam(a)) for i, c, a in stages.impulses]
        self._initial = [[lam(v) for v in vals] for vals in problem.initial_values]
        self._coefficients = [(i, j, k, lam(a)) for i, row in enumerate(problem.operators)
                              for j, coeffs in enumerate(row) for k, a in enumerate(coeffs)
                              if a != 0]
        self._shape = [[len(coeffs) for coeffs in row] for row in problem.operators]
        self._orders = problem.orders
        self._problem = problem
        self._batch_fns: dict = {}
        self._forcings = []
        for f in problem.forcings:
            smooth = _smooth(f)
            self._forcings.append((smooth, _compile_numpy(smooth, args),
                                   _compile_scalar(smooth, args),
                                   _mode_table(smooth, self.symbols)))

    def evaluate_many(self, what: str, exprs, columns) -> list:
        """Expressions of the symbols evaluated for arrays of numbers (one array per symbol,
        in the order of ``symbols``), compiled once per ``what``: load cases' route."""
        if what not in self._batch_fns:
            self._batch_fns[what] = sp.lambdify(self._args, [sp.Integer(0) + e for e in exprs],
                                                modules="numpy")
        n = len(columns[0]) if columns else 1
        with np.errstate(all="ignore"):
            out = self._batch_fns[what](*[np.asarray(c, dtype=float) for c in columns])
        return [np.broadcast_to(np.asarray(x, dtype=float), (n,)) for x in out]

    def mode_tables(self) -> tuple[dict, tuple]:
        """({quantity: its ModeTable or None}, (each equation's load ModeTable or None))."""
        return ({name: entry[0].modes for name, entry in self._quantities.items()},
                tuple(f[3] for f in self._forcings))

    def _pole_table(self, poles):
        return [(p, self._lam(p.value), self._lam(p.beta)) for p in poles]

    def at(self, values: dict) -> Numbers:
        """The numbers for ``values`` ({name: number}) of the symbols."""
        nums = tuple(float(values[n]) for n in self.symbols)
        exact = tuple(mpmath.mpf(x) for x in nums)  # a float is exact as an mpf; converted once
        bps = tuple(float(b(*nums)) for b in self._breakpoints)
        system = _poles(self._system, nums)
        models = {name: self._model(name, entry, nums, exact, bps, system)
                  for name, entry in self._quantities.items()}
        n = len(self.unknowns)
        lead, static = np.zeros((n, n)), np.zeros((n, n))
        lower = []
        operators = [[[0.0] * m for m in row] for row in self._shape]
        for i, j, k, a in self._coefficients:
            value = float(a(*nums))
            operators[i][j][k] = value
            if k == 0:
                static[i, j] = value
            if k == self._orders[j]:
                lead[i, j] = value
            elif value != 0.0:
                lower.append((i, j, k, value))
        subs = dict(zip(self._args, nums))
        loads = [_modes_at(table, nums) for _, _, _, table in self._forcings]
        return Numbers(
            unknowns=self.unknowns, models=models, lead=lead, lower=tuple(lower),
            static=static, orders=self._orders,
            initial=tuple(tuple(float(v(*nums)) for v in vals) for vals in self._initial),
            forcing=tuple(stable(load) if load is not None else _vector(vec, nums)
                          for (_, vec, _, _), load in zip(self._forcings, loads)),
            forcing_at=tuple(_guarded(lambda t, fn=one: fn(t, *nums), load)
                             for (_, _, one, _), load in zip(self._forcings, loads)),
            forcing_modes=tuple(loads),
            final_loads=tuple(_final_load(smooth.subs(subs), bps)
                              for smooth, _, _, _ in self._forcings),
            impulses=tuple((i, float(c(*nums)), float(a(*nums))) for i, c, a in self._impulses),
            breakpoints=bps, system_poles=system,
            operators=tuple(tuple(tuple(c) for c in row) for row in operators))

    def _model(self, name, entry, nums, exact, bps, system) -> NumericModel:
        compiled, parts, poles, ivt, fvt = entry
        closed, derivative, modes = compiled.functions(nums)
        final = None
        if fvt is not None:
            try:
                final = _finite(fvt(*nums))
            except (ZeroDivisionError, ValueError, OverflowError):
                final = None
        return NumericModel(
            name=name, breakpoints=bps, system_poles=system,
            response_poles=_poles(poles, nums), closed_form=closed, derivative=derivative,
            parts=tuple((float(c(*nums)), _bind(fn, exact)) for c, fn in parts),
            initial_value_limit=float(ivt(*nums)) if ivt is not None else math.nan,
            final_value_limit=final, modes=modes)


def _part_function(r, args):
    """R_c(s, *args) callable on mpmath numbers: Horner's rule on its coefficients."""
    fast = RationalPart.make(r, args)
    if fast is not None:
        return fast
    return sp.lambdify((S,) + args, r, modules=_MPMATH)


def _bind(fn, values: tuple):
    """R_c(s) with the arguments' values bound."""
    if isinstance(fn, RationalPart):
        return BoundRational(fn, values)
    return lambda s: fn(s, *values)


def _poles(table, nums) -> tuple:
    """Complex poles (conjugates included, each as often as its multiplicity)."""
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
        # sR = s·N/D read from the leading and the lowest coefficients of N and D (a common
        # factor of N and D changes neither ratio, so nothing needs cancelling)
        num, den = sp.fraction(r)
        pn, pd = sp.Poly(num, S), sp.Poly(den, S)
        if c == 0 and pn.degree() + 1 == pd.degree():
            at_infinity += pn.LC() / pd.LC()
        a, b = _lowest(pn), _lowest(pd)
        if a + 1 == b:
            at_zero += pn.nth(a) / pd.nth(b)
        elif a + 1 < b:
            at_zero += sp.zoo
    return at_infinity, at_zero


def _lowest(poly: sp.Poly) -> int:
    """The lowest power of s with a non-zero coefficient (the order of the root at 0)."""
    coeffs = poly.all_coeffs()[::-1]
    return next((k for k, c in enumerate(coeffs) if not (c == 0 or c.is_zero)), len(coeffs))


class RationalPart:
    """R(s, *args) = N(s)/D(s) as a function of mpmath numbers: numerator and denominator each
    evaluated by Horner's rule on their coefficients (what lambdify's printed expression costs
    many times over). The coefficients (numbers, or expressions of ``args``) are converted
    once per working precision and values of the arguments. :meth:`make` gives None where R
    is not a ratio of polynomials in s."""

    def __init__(self, numc, denc, args):
        self._split = len(numc)
        self._flat = numc + denc
        self._compiled = sp.lambdify(args, self._flat, modules=_MPMATH) if args else None
        self._cache: dict = {}

    @classmethod
    def make(cls, r: sp.Expr, args=()):
        num, den = sp.fraction(r)
        try:
            numc, denc = sp.Poly(num, S).all_coeffs(), sp.Poly(den, S).all_coeffs()
        except sp.PolynomialError:
            return None
        allowed = set(args)
        if any(not c.free_symbols <= allowed for c in numc + denc):
            return None
        return cls(numc, denc, args)

    def coefficients(self, prec: int, values) -> tuple[list, list]:
        """(numerator, denominator) coefficients as mpf at ``prec`` bits, highest power first."""
        key = (prec, values)
        if key not in self._cache:
            if self._compiled is not None:
                coeffs = [mpmath.mpmathify(c) for c in self._compiled(*values)]
            else:
                digits = int(prec * 0.30103) + 10
                coeffs = [mpmath.mpmathify(sp.N(c, digits)) for c in self._flat]
            if len(self._cache) > 64:
                self._cache.clear()
            self._cache[key] = (coeffs[:self._split], coeffs[self._split:])
        return self._cache[key]

    def __call__(self, s, *values):
        nc, dc = self.coefficients(mpmath.mp.prec, values)
        return mpmath.polyval(nc, s) / mpmath.polyval(dc, s)


@dataclass(frozen=True)
class BoundRational:
    """A :class:`RationalPart` with its arguments' values: callable on an mpmath number, and
    its coefficients at the working precision (what lets the inversion evaluate it in ball
    arithmetic, ``contour_inversion``)."""

    part: RationalPart
    values: tuple

    def __call__(self, s):
        return self.part(s, *self.values)

    def coefficients(self) -> tuple[list, list]:
        return self.part.coefficients(mpmath.mp.prec, self.values)


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
