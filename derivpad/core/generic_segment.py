"""What a load record and a periodic load share: one generic piece of time derived once.

Both routes derive the same equations over one generic piece — a segment of a record, one
period of a periodic load — from a state given as symbols (x_i, xdot_i, … or x_k, xdot_k, …),
by the ordinary stages; then put numbers in for every piece. This module builds that generic
problem beside the problem as given (whose initial values start the first piece), reads the
caller's values, and assembles the result as a Derivation subclass whose checks, results and
acceptance are the whole response's.
"""

from __future__ import annotations

import dataclasses
from types import MappingProxyType

import sympy as sp

from ..errors import ParameterError
from .checking.acceptance import judge, unjudged
from .engine import parameter_values, refuse_failed, withheld
from .reading.forcing import Forcing
from .reading.read_problem import make_problem

__all__ = ["assembled", "generic_problems", "outcome", "state_names", "user_values"]


def _suffix(k: int) -> str:
    return {0: "", 1: "dot", 2: "ddot"}.get(k, f"d{k}")


def state_names(problem, tag: str) -> list[list[str]]:
    """The state's symbols, per unknown: x_i, xdot_i, xddot_i, … (``tag`` "i" or "k")."""
    return [[f"{u}{_suffix(k)}_{tag}" for k in range(problem.orders[j])]
            for j, u in enumerate(problem.unknowns)]


def generic_problems(equation, ics, params, name: str, piece_load: Forcing, tag: str,
                     unknown, units, derived, reserved=()):
    """(the problem as given with ``name``'s load set to zero — its initial values start the
    first piece —, the generic piece's problem under ``piece_load`` from a symbolic state,
    the state's symbols per unknown). ``reserved``: more names the generic piece uses."""
    rest = {k: v for k, v in params.items() if str(k) != name}
    given = make_problem(equation, ics, {**rest, name: Forcing(sp.Integer(0), "none")},
                         unknown, units, derived)
    state = state_names(given, tag)
    taken = set(given.symbols) | {p for p, _ in given.parameters} | set(given.unknowns)
    clash = sorted(taken & ({s for row in state for s in row} | set(reserved)))
    if clash:
        raise ParameterError(f"the name {clash[0]!r} is used by the generic piece of the load; "
                             "rename that parameter", clash[0])
    generic_ics = {f"{u}{chr(39) * k}(0)": state[j][k] for j, u in enumerate(given.unknowns)
                   for k in range(given.orders[j])}
    generic = make_problem(equation, generic_ics, {**rest, name: piece_load}, unknown, units,
                           derived)
    return given, generic, state


def user_values(problem, values, generic_names, what: str) -> dict:
    """The caller's values= for the problem's own symbolic parameters; every one must have a
    number (``what`` names the load in the message)."""
    own = dataclasses.replace(problem, symbols=tuple(s for s in problem.symbols
                                                     if s not in set(generic_names)))
    user = parameter_values(own, values)
    missing = [s for s in own.symbols if s not in user]
    if missing:
        raise ParameterError(f"{what} needs a number for every parameter; "
                             f"{', '.join(missing)} has none (give it in params=)", missing[0])
    return user


def outcome(verification, checks: str, on_failure: str, text: str, results_of, criteria):
    """(results, acceptance) of the whole response, as derive() gives them: refused when a
    check failed (unless on_failure="return"), none with checks="engine"."""
    if checks == "all":  # checks="engine" returns, as derive() does, marked not verified
        refuse_failed(verification, text, on_failure)
    if checks == "engine":
        return MappingProxyType({}), unjudged(criteria, "checks='engine': no results")
    if not verification.passed:
        return withheld(verification), unjudged(criteria, "verification failed: no results")
    results = results_of()
    return results, judge(criteria, results)


def assembled(cls, piece, generic_names, steps, verification, results, acceptance, **extra):
    """The generic piece's derivation as ``cls`` with the whole response's steps, checks,
    results and acceptance; its assumptions say the state and load symbols are any reals."""
    fields = {f.name: getattr(piece, f.name) for f in dataclasses.fields(piece)
              if f.name not in ("steps", "verification", "results", "acceptance", "_cache",
                                "assumptions")}
    assumptions = tuple(a for a in piece.assumptions
                        if not a.startswith("symbolic parameters (")) + (
        f"the generic piece's state and load ({', '.join(generic_names)}) are any real "
        "numbers: its closed form is linear in them",)
    return cls(**fields, assumptions=assumptions, steps=steps, verification=verification,
               results=results, acceptance=acceptance, **extra)
