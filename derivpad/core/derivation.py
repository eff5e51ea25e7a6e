"""The Derivation value object: the steps, the solved transform, the solution, its checks.

It is plain data with one canonical JSON-safe form (``to_dict``). Display methods
(``to_latex``, ``to_text``) import ``derivpad.render`` inside their bodies, so loading the core
never loads printing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp

from .display_facade import DisplayFacade
from .evaluate import numpy_function
from .parse import T
from .problem import Problem, derivative_name
from .steps import Step
from .verify import Verification

__all__ = ["Derivation"]


@dataclass(frozen=True, slots=True)
class Derivation(DisplayFacade):
    """A complete Laplace-transform derivation of one linear ODE, checked by the engine.

    Attributes
    ----------
    problem : Problem
    steps : tuple of Step, in order (problem, transform, derivatives, solve, decompose,
        invert, assemble)
    transform : the solved transform Y(s), delay factors e^{-cs} in front of their parts
    solution : y(t) for t ≥ 0 in Heaviside form
    intervals : ((start, expression), ...): the solution on [start, next start)
    assumptions : stated assumptions, as sentences
    verification : the engine's own checks and the independent ones
    results : engineering results by key (peak, dynamic_load_factor, damping_ratio, ...)
    """

    problem: Problem
    steps: tuple[Step, ...]
    transform: sp.Expr
    solution: sp.Expr
    intervals: tuple[tuple[sp.Expr, sp.Expr], ...]
    impulses: tuple[tuple[sp.Expr, sp.Expr], ...]
    poles: tuple
    assumptions: tuple[str, ...]
    conditions: tuple[sp.Basic, ...]
    verification: Verification
    notes: tuple[str, ...] = ()
    results: object = None           # read-only mapping key → Result
    transform_parts: tuple = ()      # ((c, R_c(s)), ...): Y(s) = Σ e^{-cs} R_c(s)
    values: tuple = ()               # numbers used for symbolic parameters in checks and results
    _cache: dict = field(default_factory=dict, compare=False, repr=False)

    # -- values -------------------------------------------------------------------------
    @property
    def unknown(self) -> str:
        return self.problem.unknown

    @property
    def breakpoints(self) -> tuple[sp.Expr, ...]:
        """Times after 0 where the forcing switches or strikes."""
        return tuple(c for c, _ in self.intervals[1:])

    def piecewise(self) -> sp.Piecewise:
        """The solution as a Piecewise in t, interval by interval (valid for t ≥ 0)."""
        args = []
        for i, (start, expr) in enumerate(self.intervals):
            if i + 1 < len(self.intervals):
                args.append((expr, T < self.intervals[i + 1][0]))
            else:
                args.append((expr, True))
        return sp.Piecewise(*args)

    def __call__(self, times):
        """Evaluate y(t) with NumPy at the given times (t ≥ 0; NaN before 0), compiled once.

        At a breakpoint the value from the right is returned.
        """
        given = dict(self.values)
        open_symbols = [n for n in self.problem.symbols if n not in given]
        if open_symbols:
            from ..errors import ParameterError
            msg = ("the solution still has symbolic parameters "
                   f"({', '.join(open_symbols)}); derive again with params= (or values=) "
                   "giving their values to evaluate it")
            raise ParameterError(msg)
        fn = self._cache.get("numpy")
        if fn is None:
            fn = numpy_function(self.evaluated_solution)
            self._cache["numpy"] = fn
        return fn(times)

    def _values_units(self):
        return self.problem.units

    @property
    def evaluated_solution(self) -> sp.Expr:
        """y(t) with the numbers of ``values`` put in for the symbolic parameters (the solution
        itself when there are none)."""
        if not self.values:
            return self.solution
        out = self._cache.get("evaluated")
        if out is None:
            out = self.solution.subs({sp.Symbol(k, positive=True): v for k, v in self.values})
            self._cache["evaluated"] = out
        return out

    def __repr__(self) -> str:
        return (f"<Derivation {self.problem.text!r}: {len(self.steps)} steps, "
                f"verification {'passed' if self.verification.passed else 'FAILED'}>")

    def describe_initial_conditions(self) -> tuple[str, ...]:
        """Plain text of the initial conditions, y(0⁻) = ...."""
        return tuple(f"{derivative_name(self.unknown, k)}(0-) = {sp.sstr(v)}"
                     for k, v in enumerate(self.problem.initial_values))

