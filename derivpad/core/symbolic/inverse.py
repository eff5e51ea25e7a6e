"""Term-by-term inversion through the rule table and the shifting theorems.

Each partial-fraction term has one table pair (first shifting theorem for a pole off the
origin); a term of a group delayed by c is shifted by the second shifting theorem,
f(t) → f(t - c)·u(t - c).
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

from .algebra import Pole
from ..reading.forcing import TAU
from ..reading.parse import T
from .partial_fractions import FractionTerm
from ..model.labels import InverseLaplace
from .rules import rule
from ..model.steps import Line, Rule, Step
from .transform import delayed, time_text

__all__ = ["InverseTerm", "invert_term", "inversion_step", "shift"]


@dataclass(frozen=True, slots=True)
class InverseTerm:
    """One partial-fraction term and its time function f(τ), with the rules used."""

    fraction: FractionTerm
    time: sp.Expr
    rules: tuple[Rule, ...]


def invert_term(term: FractionTerm) -> InverseTerm:
    """𝓛⁻¹ of one partial-fraction term, as a function of the local time τ."""
    p, k = term.pole, term.power
    fact = sp.factorial(k - 1)
    if p.numeric:  # 50 digits were for the residues; 20 keep the solution readable and exact enough
        p = Pole(p.kind, sp.Float(p.value, 20), sp.Float(p.beta, 20), p.multiplicity, True)
    if p.kind == "real":
        r = p.value
        f = term.re * TAU ** (k - 1) / fact * sp.exp(r * TAU)
        if r == 0:
            rules = (rule("pair_step" if k == 1 else "pair_power"),)
        else:
            rules = (rule("pair_exp" if k == 1 else "pair_power_exp"),)
        return InverseTerm(term, f, rules)
    a, b = p.alpha, p.beta
    if k == 1:
        B, C = 2 * term.re, -2 * term.im
        f = sp.exp(a * TAU) * (B * sp.cos(b * TAU) + C * sp.sin(b * TAU))
        # the pairs of the terms that are there: a pure sine is cited as the sine pair only
        cos_id, sin_id = ("pair_cos", "pair_sin") if a == 0 else ("pair_exp_cos", "pair_exp_sin")
        rules = tuple(rule(i) for i, c in ((cos_id, B), (sin_id, C)) if c != 0) + \
            ((rule("first_shift"),) if a != 0 else ())
        return InverseTerm(term, f, rules)
    f = (2 * TAU ** (k - 1) / fact * sp.exp(a * TAU)
         * (term.re * sp.cos(b * TAU) - term.im * sp.sin(b * TAU)))
    return InverseTerm(term, f, (rule("pair_power_trig"),))


def shift(f: sp.Expr, delay: sp.Expr) -> sp.Expr:
    """f(τ) placed at t = delay: f(t - c)·u(t - c), or f(t) when c = 0."""
    if delay == 0:
        return f.subs(TAU, T)
    return f.subs(TAU, T - delay) * sp.Heaviside(T - delay)


def inversion_step(label: sp.Symbol, delay: sp.Expr, inverses: list[InverseTerm]) -> Step:
    """One step listing each term's pair and, for a delayed group, the second shift."""
    lines = []
    used: dict[str, Rule] = {}
    for inv in inverses:
        lines.append(Line(InverseLaplace(inv.fraction.expr), inv.time.subs(TAU, T), "=",
                          " + ".join(r.name for r in inv.rules)))
        for r in inv.rules:
            used.setdefault(r.id, r)
    g = sp.Add(*[inv.time for inv in inverses]).subs(TAU, T)
    note = "Each term inverts by its table pair."
    if delay != 0:
        shifted = shift(sp.Add(*[inv.time for inv in inverses]), delay)
        lines.append(Line(InverseLaplace(delayed(delay, label)), shifted, "=",
                          rule("second_shift").name))
        used = {"second_shift": rule("second_shift"), **used}
        note += (f" The delay factor e^(-{time_text(delay)} s) shifts the result to start at "
                 f"t = {time_text(delay)}.")
    else:
        lines.append(Line(InverseLaplace(label), g, "="))
    title = f"Invert {label}" + (f" (delayed by {time_text(delay)})" if delay != 0 else "")
    first = next(iter(used.values()), None)
    return Step(title, first, tuple(lines), note, (), tuple(used.values()))

