"""The Derivation value object: the steps, the solved transforms, the solution, its checks.

One class for one unknown or many (as python-control's one class for SISO and MIMO): the
mappings ``transforms``, ``solutions``, ``interval_map`` and ``parts`` are keyed by unknown,
and the properties ``transform``, ``solution``, ``intervals`` and ``transform_parts`` squeeze
them for a single equation (the expression itself) and return the mapping otherwise. Display
methods import ``derivpad.render`` inside their bodies, so loading the core never loads
printing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp

from .display_facade import DisplayFacade
from .evaluate import numpy_function
from .symbols import T
from .problem import Problem, derivative_name
from .steps import Step
from .checks import Verification

__all__ = ["Derivation"]


@dataclass(frozen=True, slots=True)
class Derivation(DisplayFacade):
    """A complete Laplace-transform derivation of linear ODEs, checked by the engine.

    Attributes
    ----------
    problem : Problem
    steps : tuple of Step, in order (problem, transform, derivatives, [matrix form,] solve,
        partial fractions, invert, assemble)
    transforms : unknown → its transform, delay factors e^{-cs} in front of their parts
    solutions : unknown → its solution for t ≥ 0 in Heaviside form
    interval_map : unknown → ((start, expression), ...), the solution on [start, next start)
    derived : derived quantity → expression in t
    determinant : Δ(s) = det A(s) (the characteristic polynomial P(s) for one unknown)
    verification : the engine's own checks and the independent ones
    results : engineering results by key (peak, dynamic_load_factor, damping_ratio, ...)
    acceptance : each stated limit on a result, judged: value, utilisation, OK / NOT OK
    values : numbers used for symbolic parameters in checks and results
    """

    problem: Problem
    steps: tuple[Step, ...]
    transforms: dict
    solutions: dict
    interval_map: dict
    impulses: tuple                  # ((equation index, time, area), ...)
    poles: tuple
    assumptions: tuple[str, ...]
    conditions: tuple[sp.Basic, ...]
    verification: Verification
    notes: tuple[str, ...] = ()
    results: object = None           # read-only mapping key → Result
    parts: dict = field(default_factory=dict)   # unknown → ((c, R_c(s)), ...)
    values: tuple = ()
    derived: dict = field(default_factory=dict)
    determinant: sp.Expr = sp.Integer(0)
    response_poles: dict = field(default_factory=dict)   # unknown → poles of its transform
    window: float | None = None      # the checks' window end (s), where the caller chose it
    value_rows: tuple = ()           # ((name, number, unit), ...): ``values`` in declared units
    acceptance: tuple = ()           # each acceptance criterion judged (checking/acceptance.py)
    _cache: dict = field(default_factory=dict, compare=False, repr=False)

    # -- squeezed views -------------------------------------------------------------------
    def _squeezed(self, mapping: dict):
        return mapping[self.problem.unknowns[0]] if self.problem.size == 1 else dict(mapping)

    @property
    def unknowns(self) -> tuple[str, ...]:
        return self.problem.unknowns

    @property
    def unknown(self) -> str:
        """The unknown's name (a single equation only)."""
        return self.problem.unknown

    @property
    def transform(self):
        """Y(s) for one unknown; {unknown: X_j(s)} for several."""
        return self._squeezed(self.transforms)

    @property
    def solution(self):
        """y(t) in Heaviside form for one unknown; {unknown: x_j(t)} for several."""
        return self._squeezed(self.solutions)

    @property
    def intervals(self):
        """((start, expression), ...) for one unknown; keyed by unknown for several."""
        return self._squeezed(self.interval_map)

    @property
    def transform_parts(self):
        """((c, R_c(s)), ...) with Y(s) = Σ e^{-cs} R_c(s); keyed by unknown for several."""
        return self._squeezed(self.parts)

    @property
    def breakpoints(self) -> tuple[sp.Expr, ...]:
        """Times after 0 where the forcing switches or strikes."""
        first = self.interval_map[self.problem.unknowns[0]]
        return tuple(c for c, _ in first[1:])

    def piecewise(self):
        """The solution as a Piecewise in t, interval by interval (valid for t ≥ 0); keyed by
        unknown for several."""
        out = {}
        for u, ivs in self.interval_map.items():
            args = [(e, T < ivs[i + 1][0]) if i + 1 < len(ivs) else (e, True)
                    for i, (_, e) in enumerate(ivs)]
            out[u] = sp.Piecewise(*args)
        return self._squeezed(out)

    # -- numbers ----------------------------------------------------------------------------
    def __call__(self, times):
        """Evaluate with NumPy at ``times`` (t ≥ 0; NaN before 0), compiled once: an array for
        one unknown, {name: array} of the unknowns and derived quantities for several. At a
        breakpoint the value from the right is returned."""
        values = self.values_at(times)
        return values[self.problem.unknowns[0]] if self.problem.size == 1 else values

    def values_at(self, times) -> dict:
        """{name: array} of every unknown and derived quantity at ``times``, for one unknown
        or many (the unsqueezed form of calling the derivation)."""
        given = dict(self.values)
        open_symbols = [n for n in self.problem.symbols if n not in given]
        if open_symbols:
            from ...errors import ParameterError
            msg = ("the solution still has symbolic parameters "
                   f"({', '.join(open_symbols)}); derive again with params= (or values=) "
                   "giving their values to evaluate it")
            raise ParameterError(msg)
        fns = self._cache.get("numpy")
        if fns is None:
            subs = {sp.Symbol(k, positive=True): v for k, v in self.values}
            fns = {name: numpy_function(expr.subs(subs)) for name, expr in
                   list(self.solutions.items()) + list(self.derived.items())}
            self._cache["numpy"] = fns
        return {name: fn(times) for name, fn in fns.items()}

    @property
    def evaluated_solutions(self) -> dict:
        """Each unknown's solution with the numbers of ``values`` put in for the symbolic
        parameters (the solutions themselves when there are none)."""
        if not self.values:
            return dict(self.solutions)
        out = self._cache.get("evaluated")
        if out is None:
            subs = {sp.Symbol(k, positive=True): v for k, v in self.values}
            out = {u: e.subs(subs) for u, e in self.solutions.items()}
            self._cache["evaluated"] = out
        return dict(out)

    @property
    def evaluated_solution(self):
        """The solution with ``values`` put in: the expression for one unknown, keyed by
        unknown for several."""
        return self._squeezed(self.evaluated_solutions)

    def __repr__(self) -> str:
        status = "verification passed" if self.verification.passed else "NOT VERIFIED"
        if self.problem.size == 1:
            return f"<Derivation {self.problem.text!r}: {len(self.steps)} steps, {status}>"
        return (f"<Derivation of {self.problem.size} unknowns ({', '.join(self.unknowns)}): "
                f"{len(self.steps)} steps, {status}>")

    @classmethod
    def from_dict(cls, data: dict) -> "Derivation":
        """The Derivation read back from its canonical JSON form (``to_dict()``, version 2);
        every expression is rebuilt from its tree, never from text. The figure's samples are
        not part of the JSON form."""
        from ..derivation_json import derivation_from_dict
        return derivation_from_dict(data)

    def describe_initial_conditions(self) -> tuple[str, ...]:
        """Plain text of the initial conditions, x(0⁻) = ..., unknown by unknown."""
        return tuple(f"{derivative_name(u, k)}(0-) = {sp.sstr(v)}"
                     for u, vals in zip(self.problem.unknowns, self.problem.initial_values)
                     for k, v in enumerate(vals))
