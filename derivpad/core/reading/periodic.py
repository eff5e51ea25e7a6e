"""A load that repeats for ever: one period's load (in Heaviside form) and the period T.

``periodic(one_period, period)`` checks that the period's load acts only on 0 ≤ t ≤ T (it
must end by T: a pulse, a window, a table of points ending at zero) — the rest of time is that
load repeated, f(t) = Σ_k f₁(t − kT) u(t − kT).
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

from ...errors import ForcingError
from .forcing import Forcing, forcing_on_interval, heaviside_pieces, _num

__all__ = ["PeriodicLoad", "periodic"]


@dataclass(frozen=True, slots=True)
class PeriodicLoad:
    """A load repeated every ``period`` (exact): ``one_period`` acts on 0 ≤ t ≤ period."""

    one_period: Forcing
    period: sp.Expr

    @property
    def description(self) -> str:
        return (f"periodic load of period T = {self.period}: one period is "
                f"{self.one_period.description}")


def periodic(one_period: Forcing, period) -> PeriodicLoad:
    """A load that repeats ``one_period`` every ``period`` for ever, from t = 0.

    Parameters
    ----------
    one_period : Forcing
        The load over one period, ending by t = period: e.g. ``forcing.pulse(5, 0, 0.02)`` or
        ``forcing.table([(0, 0), (0.01, 4), (0.03, 0)])``.
    period : number
        T, in seconds (> 0).

    Raises
    ------
    ForcingError
        A period that is not a positive number, a one-period load that is not a derivpad
        forcing, that holds an impulse, or that goes on after t = T.

    Examples
    --------
    >>> from derivpad import forcing
    >>> pump = forcing.periodic(forcing.pulse(5000, 0, 0.01), period=0.05)
    """
    if not isinstance(one_period, Forcing):
        raise ForcingError("forcing.periodic takes one period's load as a derivpad forcing, e.g. "
                           "forcing.periodic(forcing.pulse(5, 0, 0.02), 0.1)", term="periodic")
    T = _num(period, "period")
    if not T.is_number or not T > 0:
        raise ForcingError(f"the period is {period!r}; give a positive number of seconds",
                           term="period")
    pieces, _ = heaviside_pieces(one_period.expr)
    if any(p.impulse for p in pieces):
        raise ForcingError("a periodic load of impulses is outside this form; give each pulse "
                           "its duration (forcing.pulse)", term="periodic")
    late = [p.delay for p in pieces if p.delay.is_number and p.delay > T]
    if late:
        raise ForcingError(f"one period's load switches at t = {late[0]}, after the period "
                           f"T = {T}; a period's load acts on 0 ≤ t ≤ T", term="periodic")
    after = sp.simplify(forcing_on_interval(one_period.expr, T + 1))
    if after != 0:
        raise ForcingError(f"one period's load goes on after t = T = {T} (there it is "
                           f"{after}); end it by T, e.g. with a pulse or a window",
                           term="periodic")
    return PeriodicLoad(one_period, T)
