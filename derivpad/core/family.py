"""One derivation for many values: derive in symbols once, put numbers in on each change.

A :class:`DerivationFamily` keeps the parameters that vary symbolic. It derives the problem in
symbols once per form the answer can take (a quadratic factor's roots complex or real), checks
the derivation once, and compiles it once; :meth:`DerivationFamily.at` then re-runs only what
depends on the numbers — the independent checks and the engineering results — on the same
steps. Where the numbers leave the form's stated conditions (damping through critical, a
switching time past another), the family re-derives in the other form and says so; where no
symbolic form holds (exactly critical damping) or the quick route does not verify, it derives
with the numbers, as :func:`derivpad.derive` would.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import sympy as sp

from ..errors import DerivpadError, ParameterError
from .model.derivation import Derivation
from .engine import (check_options, compile_numbers, complete, derive, engine_check, form_holds,
                     parameter_values)
from .reading.read_problem import make_problem
from .symbolic.stages import solve_stages

__all__ = ["DerivationFamily", "FamilyMember", "what_changed"]

_REGIMES = ("underdamped", "overdamped")
_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


@dataclass(frozen=True)
class FamilyMember:
    """The derivation for one set of values, and how it was obtained (one sentence)."""

    derivation: Derivation
    how: str
    rederived: bool


def split_quantity(value, name: str) -> tuple[float, str]:
    """A starting value as (number, unit text): 480, "kN/m" for "480 kN/m"."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value), ""
    m = _QUANTITY.match(str(value))
    if not m:
        raise ParameterError(f"{name}: a varied parameter needs a number (with an optional "
                             f"unit) to start from, not {value!r}", name)
    return float(m.group(1)), m.group(2)


class DerivationFamily:
    """``derive(equation, ics, params)`` for many values of the parameters named in ``vary``.

    Each varied parameter needs a starting value in ``params`` (a number, or a number with a
    unit, which is then the unit its values are given in). Other options as for ``derive()``.
    """

    def __init__(self, equation, ics=None, params=None, *, vary, unknown=None, units=None,
                 regime: str = "underdamped", tolerances=None, window=None, derived=None):
        params = dict(params or {})
        self.vary = tuple(vary)
        if not self.vary:
            raise ParameterError("a derivation family needs at least one parameter to vary",
                                 "vary")
        units = dict(units or {})
        self.units_of: dict[str, str] = {}
        start: dict[str, float] = {}
        for name in self.vary:
            if name not in params:
                raise ParameterError(f"{name!r} is to vary but has no starting value in params",
                                     name)
            number, unit = split_quantity(params[name], name)
            unit = unit or units.get(name, "")
            self.units_of[name] = unit
            start[name] = number
            if unit:
                units[name] = unit
        self._args = dict(equation=equation, ics=ics, unknown=unknown, units=units or None,
                          tolerances=tolerances, window=window, derived=derived)
        self._params = params
        self._tolerances = check_options("all", tolerances)
        fixed = {k: v for k, v in params.items() if k not in self.vary}
        self.problem = make_problem(equation, ics, fixed, unknown, units or None, derived)
        stray = [n for n in self.vary if n not in self.problem.symbols]
        if stray:
            raise ParameterError(f"{stray[0]!r} does not appear in the problem once the other "
                                 "values are in; nothing would change", stray[0])
        self._regime = regime if regime in _REGIMES else _REGIMES[0]
        self._forms: dict = {}
        self._why_not = ""
        self._compiled: dict = {}
        self.verified: dict = {}  # form → its derivation, checked in full at its first values
        self._tests: dict = {}    # form → its conditions compiled for numbers
        self.start = start
        # symbolic switching times are ordered as at the starting values
        self._order = parameter_values(self.problem, start)

    # -- the values ----------------------------------------------------------------------
    def params_for(self, values: dict) -> dict:
        """The full params= mapping for ``values`` of the varied parameters (with units)."""
        out = dict(self._params)
        for name in self.vary:
            v = float(values[name])
            unit = self.units_of[name]
            out[name] = f"{v!r} {unit}" if unit else v
        return out

    def _exact(self, values: dict) -> dict:
        missing = [n for n in self.vary if n not in values]
        if missing:
            raise ParameterError(f"no value for {missing[0]!r}; give every varied parameter "
                                 f"({', '.join(self.vary)})", missing[0])
        return parameter_values(self.problem, {n: float(values[n]) for n in self.vary})

    def si_columns(self, values) -> list | None:
        """Cases × varied parameters (numbers in the parameters' units) as one array per
        varied parameter in the units the derivation's symbols take; None where a unit's
        conversion is not a plain factor (a scale with an offset)."""
        if not hasattr(self, "_factors"):
            one = self._exact({n: 1.0 for n in self.vary})
            two = self._exact({n: 2.0 for n in self.vary})
            f = {n: float(one[n]) for n in self.vary}
            plain = all(abs(float(two[n]) - 2 * f[n]) <= 1e-12 * abs(f[n]) for n in self.vary)
            self._factors = f if plain else None
        if self._factors is None:
            return None
        values = np.asarray(values, dtype=float)
        return [values[:, j] * self._factors[n] for j, n in enumerate(self.vary)]

    def compiled(self, form: str):
        """The form's derivation compiled for numbers (ParametricNumbers), once it has served
        a case; None before."""
        got = self._compiled.get(form)
        return None if got is None else got[1]

    def forms_of(self, columns) -> np.ndarray:
        """The form each case (columns from :meth:`si_columns`) is evaluated in, as
        :meth:`numbers_at` would choose it where every margin is plain; "" where only the
        exact test or a derivation with the numbers can tell."""
        n = len(columns[0])
        out = np.full(n, "", dtype=object)
        open_ = np.ones(n, dtype=bool)
        for regime in (self._regime,) + tuple(r for r in _REGIMES if r != self._regime):
            stages = self._stages(regime)
            if stages is None:
                continue
            if regime not in self._tests:
                self._tests[regime] = _FormTest(stages, self.vary)
            verdict = self._tests[regime].many(dict(zip(self.vary, columns)))
            out[open_ & (verdict == 1)] = regime
            open_ &= verdict == 0
        return out

    # -- the forms -----------------------------------------------------------------------
    def _stages(self, regime: str):
        """The symbolic stages of one form (None where the problem has no such form)."""
        if regime not in self._forms:
            try:
                self._forms[regime] = solve_stages(self.problem, regime, self._order)
            except DerivpadError as exc:  # e.g. roots of a symbolic cubic: derive with numbers
                self._forms[regime] = None
                self._why_not = str(exc).split(";")[0]
        return self._forms[regime]

    def _derived_in_symbols(self, regime: str, value_map: dict):
        """The form's derivation at these values, or None where the form does not hold or
        does not verify there."""
        stages = self._stages(regime)
        if stages is None or not self._holds(regime, stages, value_map):
            return None
        if regime not in self._compiled:  # checked and compiled once, at values it holds for
            own = engine_check(self.problem, stages, self._tolerances.get("back_substitution"),
                               value_map)
            self._compiled[regime] = (own, compile_numbers(self.problem, stages, self.vary))
        own, model = self._compiled[regime]
        d = complete(self.problem, stages, own, value_map, tolerances=self._tolerances,
                     window=self._args["window"], model=model, on_failure="return")
        return d if d.verification.passed else None

    def _holds(self, regime: str, stages, value_map: dict) -> bool:
        """``form_holds`` decided in floating point where the margin is plain, exactly (SymPy)
        where a condition or two switching times come within 1e-9 of equality: a form is
        never taken on its boundary (exactly critical damping) by rounding."""
        if regime not in self._tests:
            self._tests[regime] = _FormTest(stages, tuple(value_map))
        verdict = self._tests[regime](value_map)
        return form_holds(stages, value_map) if verdict is None else verdict

    def numbers_at(self, values: dict):
        """The numbers of the derivation at ``values`` without building its record: (form,
        Numbers, value map) through a form derived in symbols whose conditions hold there and
        which verified in full at the first values it served (kept in :attr:`verified`), or
        (None, FamilyMember, value map) where no such form holds (derived with the numbers).
        What load cases evaluate case by case."""
        value_map = self._exact(values)
        order = (self._regime,) + tuple(r for r in _REGIMES if r != self._regime)
        for regime in order:
            stages = self._stages(regime)
            if stages is None or not self._holds(regime, stages, value_map):
                continue
            if regime not in self.verified:
                d = self._derived_in_symbols(regime, value_map)
                if d is None:
                    continue
                self.verified[regime] = d
            return regime, self._compiled[regime][1].at(value_map), value_map
        return None, self.at(values), value_map

    def at(self, values: dict) -> FamilyMember:
        """The derivation for ``values`` ({name: number in the parameter's unit})."""
        value_map = self._exact(values)
        first = not self._compiled
        d = self._derived_in_symbols(self._regime, value_map)
        if d is not None:
            how = (f"derived in symbols for {', '.join(self.vary)}; values put in" if first
                   else "values put into the symbolic derivation (no re-derivation)")
            return FamilyMember(d, how, first)
        for regime in _REGIMES:
            if regime == self._regime:
                continue
            known = regime in self._compiled
            d = self._derived_in_symbols(regime, value_map)
            if d is not None:
                old, self._regime = self._regime, regime
                if first:
                    how = f"derived in symbols for {', '.join(self.vary)} ({regime} form)"
                elif known:
                    how = (f"these values leave the {old} form: the {regime} form applies "
                           "(derived in symbols earlier; values put in)")
                else:
                    how = (f"these values leave the {old} form: re-derived in symbols for "
                           f"the {regime} form")
                return FamilyMember(d, how, not known)
        d = derive(params=self.params_for(values), regime=self._regime, **self._args)
        if all(self._forms.get(r, 0) is None for r in _REGIMES):
            return FamilyMember(d, "no form in symbols could be derived ("
                                + self._why_not + "): derived with the numbers", True)
        return FamilyMember(d, "no symbolic form holds at these values (e.g. exactly on a "
                               "regime boundary): derived with the numbers", True)


class _FormTest:
    """A form's stated conditions and switching times compiled once for numbers: True or
    False where every margin is plain, None where one is within 1e-9 of equality (then the
    exact test decides)."""

    _RELATIONS = {sp.StrictLessThan: lambda d: d < 0, sp.LessThan: lambda d: d <= 0,
                  sp.StrictGreaterThan: lambda d: d > 0, sp.GreaterThan: lambda d: d >= 0,
                  sp.Unequality: lambda d: d != 0}

    def __init__(self, stages, names: tuple):
        args = [sp.Symbol(n, positive=True) for n in names]
        self._names = names
        self._conditions = []
        self._symbolic = []
        self._exact_only = False
        for c in stages.conditions:
            test = self._RELATIONS.get(type(c))
            if test is None:
                self._exact_only = True
                continue
            diff = c.lhs - c.rhs
            self._conditions.append((sp.lambdify(args, diff, modules="math"),
                                     sp.lambdify(args, _size(diff), modules="math"), test))
            self._symbolic.append((diff, _size(diff)))
        self._times = [sp.lambdify(args, sp.Integer(0) + b, modules="math")
                       for b in stages.breakpoints]
        self._args = args
        self._breakpoints = stages.breakpoints
        self._arrays = None

    def many(self, by_name: dict) -> np.ndarray:
        """The test for many cases at once (``by_name``: an array of values per parameter):
        1 holds, 0 does not, -1 where a margin is within 1e-9 (the exact test
        decides), each case as :meth:`__call__` would judge it."""
        columns = [by_name[name] for name in self._names]
        n = len(columns[0])
        if self._exact_only:
            return np.full(n, -1)
        if self._arrays is None:
            flat = [e for pair in self._symbolic for e in pair] + [
                sp.Integer(0) + b for b in self._breakpoints]
            self._arrays = sp.lambdify(self._args, flat, modules="numpy")
        with np.errstate(all="ignore"):
            vals = [np.broadcast_to(np.asarray(v, dtype=float), (n,))
                    for v in self._arrays(*[np.asarray(c, dtype=float) for c in columns])]
        out = np.ones(n, dtype=int)
        open_ = np.ones(n, dtype=bool)
        for k, (_, _, test) in enumerate(self._conditions):
            d, size = vals[2 * k], vals[2 * k + 1]
            undecided = open_ & ~(np.abs(d) > 1e-9 * np.abs(size))
            out[undecided] = -1
            open_ &= ~undecided
            fails = open_ & ~test(d)
            out[fails] = 0
            open_ &= ~fails
        times = vals[2 * len(self._conditions):]
        if times:
            t = np.stack(times, axis=1)
            a, b = t[:, :-1], t[:, 1:]
            near = ~(np.abs(b - a) > 1e-9 * np.maximum(np.abs(a), np.abs(b)))
            undecided = open_ & (near.any(axis=1) | ~(t[:, 0] > 0))
            out[undecided] = -1
            open_ &= ~undecided
            out[open_ & ~np.all(b > a, axis=1)] = 0
        return out

    def __call__(self, value_map: dict):
        if self._exact_only:
            return None
        try:
            nums = [float(value_map[n]) for n in self._names]
            for value, size, test in self._conditions:
                d = float(value(*nums))
                if not abs(d) > 1e-9 * abs(float(size(*nums))):
                    return None
                if not test(d):
                    return False
            times = [float(t(*nums)) for t in self._times]
        except (KeyError, TypeError, ValueError, ZeroDivisionError, OverflowError):
            return None
        gaps = [b - a for a, b in zip(times, times[1:])]
        if any(not abs(g) > 1e-9 * max(abs(a), abs(b)) for g, a, b in
               zip(gaps, times, times[1:])) or any(not t > 0 for t in times[:1]):
            return None
        return all(g > 0 for g in gaps)


def _size(expr: sp.Expr) -> sp.Expr:
    """Σ|terms| of an expression: the scale its value is judged against."""
    terms = sp.Add.make_args(sp.expand(expr))
    return sp.Add(*[sp.Abs(t) for t in terms])


def what_changed(before: Derivation | None, after: Derivation) -> list[str]:
    """Regime and stability changes between two derivations, as short sentences."""
    if before is None or not before.results or not after.results:
        return []
    out = []
    for key, label in (("regime", "regime"), ("stability", "stability")):
        old, new = before.results.get(key), after.results.get(key)
        if old is not None and new is not None and old.magnitude != new.magnitude:
            out.append(f"{label} changed: {old.magnitude} → {new.magnitude}")
    return out
