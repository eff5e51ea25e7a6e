"""The SystemDerivation value object: a coupled system's derivation, verification and results.

Each mapping is keyed by the unknown's name: ``solution["x1"]`` is x1(t) in Heaviside form,
``transform["x1"]`` is X1(s), ``intervals["x1"]`` its interval-by-interval form. ``derived``
holds the named derived quantities as expressions in t. Display goes through
``derivpad.render``, loaded lazily as for a single equation.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp

from .display_facade import DisplayFacade
from .parse import T

__all__ = ["SystemDerivation"]


@dataclass(frozen=True, slots=True)
class SystemDerivation(DisplayFacade):
    """A system's derivation (see the module docstring)."""

    problem: object                  # SystemProblem
    steps: tuple
    transform: dict
    solution: dict
    intervals: dict
    impulses: tuple
    poles: tuple
    assumptions: tuple
    conditions: tuple
    verification: object
    notes: tuple = ()
    results: object = None
    transform_parts: dict = field(default_factory=dict)
    values: tuple = ()
    derived: dict = field(default_factory=dict)
    determinant: sp.Expr = sp.Integer(0)
    _cache: dict = field(default_factory=dict, compare=False, repr=False)

    @property
    def unknowns(self) -> tuple[str, ...]:
        return self.problem.unknowns

    @property
    def breakpoints(self) -> tuple:
        first = self.intervals[self.unknowns[0]]
        return tuple(c for c, _ in first[1:])

    def __call__(self, times) -> dict:
        """NumPy values of every unknown and derived quantity at ``times`` (t ≥ 0), compiled
        once; a mapping name → array."""
        given = dict(self.values)
        open_symbols = [n for n in self.problem.symbols if n not in given]
        if open_symbols:
            from ..errors import ParameterError
            raise ParameterError("the solution still has symbolic parameters ("
                                 + ", ".join(open_symbols) + "); derive again with params= "
                                 "(or values=) giving their values to evaluate it")
        fns = self._cache.get("numpy")
        if fns is None:
            from .evaluate import numpy_function
            subs = {sp.Symbol(k, positive=True): v for k, v in self.values}
            fns = {name: numpy_function(expr.subs(subs)) for name, expr in
                   list(self.solution.items()) + list(self.derived.items())}
            self._cache["numpy"] = fns
        return {name: fn(times) for name, fn in fns.items()}

    def _values_units(self):
        return self.problem.unit_context(self.unknowns[0]) if self.problem.units else None

    @property
    def evaluated_solution(self) -> dict:
        """Each unknown's x_j(t) with ``values`` put in for the symbolic parameters."""
        if not self.values:
            return dict(self.solution)
        subs = {sp.Symbol(k, positive=True): v for k, v in self.values}
        return {u: e.subs(subs) for u, e in self.solution.items()}

    def __repr__(self) -> str:
        status = "verification passed" if self.verification.passed else "NOT VERIFIED"
        return (f"<SystemDerivation of {len(self.unknowns)} unknowns "
                f"({', '.join(self.unknowns)}): {len(self.steps)} steps, {status}>")

    def piecewise(self) -> dict:
        """Each unknown as a Piecewise in t, interval by interval (valid for t ≥ 0)."""
        out = {}
        for u, ivs in self.intervals.items():
            args = [(e, T < ivs[i + 1][0]) if i + 1 < len(ivs) else (e, True)
                    for i, (_, e) in enumerate(ivs)]
            out[u] = sp.Piecewise(*args)
        return out
