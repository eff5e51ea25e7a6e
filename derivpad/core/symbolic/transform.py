"""Transform both sides of the ODE: forcing term by term through the rule table, derivatives
with the initial conditions inserted.

A forcing piece's shape g(τ) is rewritten in the exponential basis τ^n e^{aτ}·{1, cos bτ, sin bτ}
(``table_terms``); each basis function has one table pair, the first shifting theorem covers
e^{aτ}, and the second shifting theorem turns the delay into e^{-cs}. Transforms are kept as
numerator polynomial over a product of known factors, so the algebra stage never has to
rediscover the forcing's poles.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

from ...errors import ForcingError
from ..reading.forcing import TAU, ForcingPiece
from ..reading.parse import S, T
from ..model.labels import Laplace
from .rules import rule
from ..model.problem import decimal_text
from ..model.steps import Line, Rule, Step

__all__ = ["TableTerm", "TransformedTerm", "ForcingGroup", "table_terms", "time_text", "transform_piece",
           "derivative_transform", "Laplace", "Ysym", "real_factor", "complex_factor",
           "transform_term", "transform_groups", "delayed"]


def time_text(c) -> str:
    """A switching time for a heading: a decimal where it terminates (0.02, not 1/50)."""
    return decimal_text(c) or sp.sstr(c)


def Ysym(unknown: str) -> sp.Expr:
    """The transform of the unknown, Y(s) for y(t), as an applied function for display."""
    return sp.Function(unknown.upper() if unknown.islower() else unknown + "_L")(S)


def delayed(delay: sp.Expr, expr: sp.Expr) -> sp.Expr:
    """e^{-cs}·F(s) kept unevaluated, for display; a negative F puts its sign in front, so a
    sum prints '- e^{-cs} F' rather than '+ e^{-cs}(-F)'."""
    if delay == 0:
        return expr
    if expr.could_extract_minus_sign():
        return sp.Mul(-1, sp.Mul(sp.exp(-delay * S), -expr, evaluate=False), evaluate=False)
    return sp.Mul(sp.exp(-delay * S), expr, evaluate=False)


def real_factor(a: sp.Expr) -> sp.Expr:
    """Monic linear factor s - a, for a real pole a."""
    return sp.expand(S - a)


def complex_factor(a: sp.Expr, b: sp.Expr) -> sp.Expr:
    """Monic quadratic (s - a)² + b², for the pole pair a ± ib, expanded (its dictionary key)."""
    return sp.expand((S - a) ** 2 + b ** 2)


@dataclass(frozen=True, slots=True)
class TableTerm:
    """coefficient · τ^n · e^{aτ} · {1, cos bτ, sin bτ}: one entry of the transform table."""

    coefficient: sp.Expr
    n: int
    a: sp.Expr
    b: sp.Expr
    kind: str  # "one", "cos", "sin"

    @property
    def time_function(self) -> sp.Expr:
        trig = {"one": sp.Integer(1), "cos": sp.cos(self.b * TAU), "sin": sp.sin(self.b * TAU)}
        return TAU ** self.n * sp.exp(self.a * TAU) * trig[self.kind]

    @property
    def rule(self) -> Rule:
        n, a, kind = self.n, self.a, self.kind
        if kind == "one":
            if a == 0:
                return rule("pair_step" if n == 0 else "pair_power")
            return rule("pair_exp" if n == 0 else "pair_power_exp")
        if n == 0:
            return rule(f"pair_{kind}" if a == 0 else f"pair_exp_{kind}")
        return rule("pair_power_trig")


@dataclass(frozen=True, slots=True)
class TransformedTerm:
    """A table term with its transform numerator / Π factors^power (factor → multiplicity)."""

    term: TableTerm
    numerator: sp.Expr
    factors: tuple[tuple[sp.Expr, int], ...]

    @property
    def expr(self) -> sp.Expr:
        den = sp.Mul(*[f ** m for f, m in self.factors])
        return self.numerator / den


@dataclass(frozen=True, slots=True)
class ForcingGroup:
    """Every piece switching on at one delay c: its transform e^{-cs} Σ terms (+ impulse area)."""

    delay: sp.Expr
    terms: tuple[TransformedTerm, ...]
    impulse_area: sp.Expr


def table_terms(shape: sp.Expr) -> list[TableTerm]:
    """Rewrite g(τ) as a sum of τ^n e^{aτ}{1, cos bτ, sin bτ} terms, or refuse with the term."""
    expo = sp.expand(shape.rewrite(sp.exp), power_exp=True, mul=True, multinomial=True)
    acc: dict[tuple, sp.Expr] = {}
    for term in sp.Add.make_args(expo):
        coeff, n, lam = sp.Integer(1), 0, sp.Integer(0)
        for factor in sp.Mul.make_args(term):
            if not factor.has(TAU):
                coeff *= factor
                continue
            base, exp = factor.as_base_exp()
            if base == TAU and exp.is_Integer and exp > 0:
                n += int(exp)
            elif isinstance(base, sp.exp) or base is sp.E:
                arg = base.args[0] * exp if isinstance(base, sp.exp) else exp
                poly = sp.Poly(arg, TAU) if arg.is_polynomial(TAU) else None
                if poly is None or poly.degree() > 1:
                    raise ForcingError(_no_pair(shape, factor), term=str(factor))
                k1, k0 = poly.coeff_monomial(TAU), poly.coeff_monomial(1)
                lam += k1
                coeff *= sp.exp(k0)
            else:
                raise ForcingError(_no_pair(shape, factor), term=str(factor))
        key = (n, sp.expand(lam))
        acc[key] = acc.get(key, 0) + coeff
    out: list[TableTerm] = []
    done = set()
    for (n, lam), c in acc.items():
        if (n, lam) in done:
            continue
        a, b = (sp.expand(part) for part in lam.as_real_imag())
        if b == 0:
            c = sp.expand(c)
            if c != 0:
                out.append(TableTerm(c, n, a, sp.Integer(0), "one"))
            done.add((n, lam))
            continue
        partner = sp.expand(lam - 2 * sp.I * b)
        c_minus = acc.get((n, partner), 0)
        done |= {(n, lam), (n, partner)}
        if b.could_extract_minus_sign():
            b, c, c_minus = -b, c_minus, c
        # exp(i·φ) constants from phase shifts become cos φ + i sin φ, and the i's cancel.
        cos_c = sp.expand(sp.expand_complex(c + c_minus))
        sin_c = sp.expand(sp.expand_complex(sp.I * (c - c_minus)))
        for kind, value in (("cos", cos_c), ("sin", sin_c)):
            if value != 0:
                out.append(TableTerm(value, n, a, b, kind))
    return sorted(out, key=lambda tt: (tt.n, sp.default_sort_key(tt.a), tt.kind))


def _no_pair(shape, factor) -> str:
    hint = ""
    if isinstance(factor, sp.Pow) and factor.base.is_Symbol and factor.base.name == "e":
        hint = "; write exp(...) for the exponential function"
    return (f"the forcing contains {factor} (in {shape}), which has no pair in the transform "
            "table; the table covers polynomials in t, exponentials, sines and cosines, and their "
            f"products, switched by u(t - c), and impulses delta(t - c){hint}")


_SR = sp.Symbol("sigma_real", real=True)


def transform_term(term: TableTerm) -> TransformedTerm:
    """The Laplace transform of one table term, as numerator over its pole factors."""
    n, a, b, c = term.n, term.a, term.b, term.coefficient
    fact = sp.factorial(n)
    if term.kind == "one":
        return TransformedTerm(term, c * fact, ((real_factor(a), n + 1),))
    # Re/Im of (s - a + ib)^(n+1) with s real give the cosine and sine numerators.
    z = sp.expand((_SR - a + sp.I * b) ** (n + 1))
    re, im = z.as_real_imag()
    part = re if term.kind == "cos" else im
    numerator = sp.expand(c * fact * part.subs(_SR, S))
    return TransformedTerm(term, numerator, ((complex_factor(a, b), n + 1),))


def transform_piece(piece: ForcingPiece) -> list[TransformedTerm]:
    """Transforms of a non-impulse piece's table terms (the e^{-cs} is applied by the caller)."""
    return [transform_term(tt) for tt in table_terms(piece.shape)]


def derivative_transform(unknown: str, k: int, initial: tuple) -> sp.Expr:
    """𝓛{y^(k)} = s^k Y(s) - Σ_{j<k} s^{k-1-j} y^(j)(0⁻)."""
    Y = Ysym(unknown)
    return S ** k * Y - sp.Add(*[S ** (k - 1 - j) * initial[j] for j in range(k)])


def transform_groups(pieces: list[ForcingPiece]) -> tuple[list[ForcingGroup], list[Step]]:
    """Group the forcing's pieces by delay, transform each, and write one sub-step per piece."""
    by_delay: dict = {}
    substeps: list[Step] = []
    for piece in pieces:
        entry = by_delay.setdefault(piece.delay, {"terms": [], "area": sp.Integer(0)})
        shifted = piece.delay != 0
        if piece.impulse:
            entry["area"] += piece.shape
            f = piece.shape * sp.DiracDelta(T - piece.delay)
            substeps.append(Step(
                f"Impulse at t = {sp.sstr(piece.delay)}", rule("pair_delta"),
                (Line(Laplace(f), piece.shape * sp.exp(-piece.delay * S)),),
                "An impulse transforms to its area times the delay factor; at t = 0 it acts "
                "after the 0⁻ initial conditions."))
            continue
        terms = transform_piece(piece)
        entry["terms"].extend(terms)
        shape_t = piece.shape.subs(TAU, T)
        lines = []
        for tr in terms:
            lines.append(Line(Laplace(tr.term.coefficient * tr.term.time_function.subs(TAU, T)),
                              tr.expr, "=", tr.term.rule.name))
        used = tuple({tr.term.rule.id: tr.term.rule for tr in terms}.values())
        if shifted:
            g = sp.Mul(shape_t.subs(T, T - piece.delay), sp.Heaviside(T - piece.delay),
                       evaluate=False)
            lines.insert(0, Line(Laplace(g), delayed(piece.delay, Laplace(shape_t)),
                                 "=", "second shifting theorem"))
            used = (rule("second_shift"),) + used
        if any(tr.term.a != 0 for tr in terms):
            used = used + (rule("first_shift"),)
        title = ("Forcing from t = 0" if not shifted
                 else f"Forcing switched on at t = {time_text(piece.delay)}")
        note = ("Each term is a table pair" + (", shifted to its switch-on time by the delay factor exp(-cs)."
                                                if shifted else "."))
        substeps.append(Step(title, used[0] if used else None, tuple(lines), note, (), used))
    groups = [ForcingGroup(c, tuple(v["terms"]), v["area"]) for c, v in by_delay.items()]
    return groups, substeps
