"""The Derivation value object: the steps, the solved transform, the solution, its checks.

It is plain data with one canonical JSON-safe form (``to_dict``). Display methods
(``to_latex``, ``to_text``) import ``derivpad.render`` inside their bodies, so loading the core
never loads printing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp

from .evaluate import numpy_function
from .parse import T
from .problem import Problem, derivative_name
from .steps import Step
from .verify import Verification

__all__ = ["Derivation"]


@dataclass(frozen=True, slots=True)
class Derivation:
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

    def value_table(self) -> tuple[tuple[str, float, str], ...]:
        """The numbers used for symbolic parameters, each in its declared unit:
        ((name, number, unit), ...) (SI numbers and no unit where none was declared)."""
        ctx = self.problem.units
        out = []
        for name, v in self.values:
            unit = ctx.symbol_unit(name) if ctx else None
            if unit:
                from .units import display_unit_for, to_display
                si = display_unit_for(dict(ctx.dimensions)[name])
                out.append((name, to_display(float(v), si, unit), unit))
            else:
                out.append((name, float(v), ""))
        return tuple(out)

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

    def figure(self, **settings):
        """The verification figure (matplotlib): closed form over integration, forcing, error."""
        from ..render.figure import verification_figure  # lazy: matplotlib is an extra
        return verification_figure(self, **settings)

    def save_figure(self, path, **settings):
        """Write the verification figure; the format (svg, png, pdf) comes from the suffix."""
        from ..render.figure import save_figure
        return save_figure(self, path, **settings)

    # -- serialisation ------------------------------------------------------------------
    def to_dict(self) -> dict:
        """The canonical JSON-safe form: text, LaTeX and a SymPy-readable form of each result."""
        from ..render.serial import derivation_to_dict  # lazy: printing lives in render/
        return derivation_to_dict(self)

    # -- display façade -----------------------------------------------------------------
    def to_latex(self, **settings) -> str:
        """The whole derivation as a LaTeX document body."""
        from ..render.latex import to_latex
        return to_latex(self, **settings)

    def to_html(self, **settings) -> str:
        """The whole derivation as an HTML fragment with collapsible steps."""
        from ..render.html import to_html
        return to_html(self, **settings)

    def _repr_mimebundle_(self, include=None, exclude=None):
        """Rich display: HTML, LaTeX, text and derivpad's own JSON type; never raises."""
        try:
            from ..render.mimebundle import mimebundle
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"derivpad could not load its display code: {exc}"}
        return mimebundle(self, include, exclude)

    def to_text(self, **settings) -> str:
        """The whole derivation as readable terminal text."""
        from ..render.text import to_text
        return to_text(self, **settings)

    def __repr__(self) -> str:
        return (f"<Derivation {self.problem.text!r}: {len(self.steps)} steps, "
                f"verification {'passed' if self.verification.passed else 'FAILED'}>")

    def describe_initial_conditions(self) -> tuple[str, ...]:
        """Plain text of the initial conditions, y(0⁻) = ...."""
        return tuple(f"{derivative_name(self.unknown, k)}(0-) = {sp.sstr(v)}"
                     for k, v in enumerate(self.problem.initial_values))

