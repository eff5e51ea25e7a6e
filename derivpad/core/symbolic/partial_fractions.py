"""Partial fractions of one rational part N(s)/D(s) over the reals, with each coefficient's work.

For a pole p of multiplicity m, the coefficients of 1/(s - p)^k are the Taylor coefficients at
p of N(s)/G(s), G = D/(s - p)^m (the cover-up method for m = 1, derivatives for m > 1). They are
found by series arithmetic at p: N and G expanded in h = s - p, then one series division,
which is the same for exact and for 50-digit numerical poles.

A complex pair α ± iβ is worked with real placeholder symbols for α and β, so the real and
imaginary parts of the coefficient are plain algebra; the pair is then written with the
square completed, (B(s - α) + Cβ)/((s - α)² + β²), B = 2 Re A, C = -2 Im A.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from math import factorial

import mpmath
import sympy as sp
from sympy.polys.domains import QQ, QQ_I

from ...errors import SolveError
from ..model.labels import Coefficient
from .algebra import WORKING_DIGITS, Pole, PoleSet
from ..reading.parse import S
from .rules import rule
from ..model.steps import Line, Step

__all__ = ["FractionTerm", "partial_fractions", "fraction_steps"]

_ALPHA = sp.Symbol("alpha_p", real=True)
_BETA = sp.Symbol("beta_p", positive=True)


@dataclass(frozen=True, slots=True)
class FractionTerm:
    """A/(s - p)^k for a real pole; for a complex pair, A = re + i·im belongs to α + iβ."""

    pole: Pole
    power: int
    re: sp.Expr
    im: sp.Expr = sp.Integer(0)

    @property
    def expr(self) -> sp.Expr:
        """The term as a function of s (a complex pair with k = 1: square completed)."""
        p, k = self.pole, self.power
        if p.kind == "real":
            return self.re / (S - p.value) ** k
        a, b = p.alpha, p.beta
        if k == 1:
            B, C = 2 * self.re, -2 * self.im
            return (B * (S - a) + C * b) / ((S - a) ** 2 + b ** 2)
        A = self.re + sp.I * self.im
        Abar = self.re - sp.I * self.im
        return A / (S - a - sp.I * b) ** k + Abar / (S - a + sp.I * b) ** k


def _taylor(coeffs: list, p, m: int, zero=0) -> list:
    """First m Taylor coefficients at p of the polynomial with coefficients (highest first)."""
    out = []
    c = list(coeffs)
    for _ in range(m):
        if not c:
            out.append(zero)
            continue
        acc, q = zero, []
        for a in c:
            acc = acc * p + a
            q.append(acc)
        out.append(q[-1])
        c = q[:-1]
    return out


def _mul(a: list, b: list, m: int) -> list:
    zero = a[0] - a[0]
    out = [zero] * m
    for i, x in enumerate(a[:m]):
        if x == 0:
            continue
        for j, y in enumerate(b[:m - i]):
            out[i + j] += x * y
    return out


def _power(base: list, n: int, m: int, one=1) -> list:
    out = [one] + [one - one] * (m - 1)
    for _ in range(n):
        out = _mul(out, base, m)
    return out


def _divide(num: list, den: list, m: int) -> list:
    q = []
    for k in range(m):
        acc = num[k]
        for j in range(1, min(k + 1, len(den))):
            acc = acc - den[j] * q[k - j]
        q.append(acc / den[0])
    return q


def _coefficients(num_coeffs, poles: PoleSet, target: Pole, p, own_factor, lead,
                  one=1) -> list:
    """Laurent coefficients [A_m, ..., A_1] at root p of N/D (D given by its poles); ``one``
    is the unit of the number system the arithmetic runs in (1, or a domain's one)."""
    m = target.multiplicity
    zero = one - one
    g = [lead] + [zero] * (m - 1)
    for q in poles.poles:
        if q is target:
            continue
        d = p - q.value
        if q.kind == "real":
            g = _mul(g, _power([d, one], q.multiplicity, m, one), m)
        else:
            g = _mul(g, _power([d * d + q.beta * q.beta, 2 * d, one], q.multiplicity, m, one),
                     m)
    if own_factor is not None:  # the conjugate root of the target's own pair: (s - p̄)^m
        g = _mul(g, _power([own_factor, one], m, m, one), m)
    n = _taylor(num_coeffs, p, m, zero)
    return _divide(n, g, m)


def _re_im(expr: sp.Expr) -> tuple[sp.Expr, sp.Expr]:
    """Real and imaginary parts of an expression in which every symbol is real."""
    num, den = sp.fraction(sp.together(expr))
    den_c = den.subs(sp.I, -sp.I)
    n = sp.expand(num * den_c)
    d = sp.expand(den * den_c)
    n_c = n.subs(sp.I, -sp.I)
    return sp.expand((n + n_c) / 2) / d, sp.expand((n - n_c) / (2 * sp.I)) / d


def _tidy(expr: sp.Expr, symbolic: bool) -> sp.Expr:
    """Exact coefficients in their plainest form: factored if symbolic, radicals rationalised."""
    expr = sp.cancel(expr)
    return sp.factor(expr) if symbolic else sp.radsimp(expr)


def partial_fractions(numerator: sp.Expr, poles: PoleSet) -> list[FractionTerm]:
    """Every term of N(s)/D(s) = Σ over poles Σ_k A_k/(s - p)^k (complex pairs combined)."""
    N = sp.Poly(sp.expand(numerator), S)
    deg_d = sum(p.multiplicity * (1 if p.kind == "real" else 2) for p in poles.poles)
    if N.degree() >= deg_d:
        raise SolveError(f"the transform is not strictly proper (numerator degree {N.degree()}, "
                         f"denominator degree {deg_d}); the forcing would need derivatives of "
                         "the impulse")
    if N.is_zero:
        return []
    if poles.numeric or any(c.has(sp.Float) for c in N.all_coeffs()):
        return _numeric_fractions(N, poles)
    symbolic = bool(N.free_symbols - {S}) or any(
        (p.value.free_symbols or p.beta.free_symbols) for p in poles.poles)
    if not symbolic and _rational(list(N.all_coeffs()) + [poles.leading] + [
            x for q in poles.poles for x in (q.value, q.beta)]):
        return _domain_fractions(N, poles)
    coeffs = N.all_coeffs()
    terms: list[FractionTerm] = []
    for target in poles.poles:
        m = target.multiplicity
        if target.kind == "real":
            A = _coefficients(coeffs, poles, target, target.value, None, poles.leading)
            for j, a in enumerate(A):
                value = _tidy(a, symbolic)
                if value != 0:
                    terms.append(FractionTerm(target, m - j, value))
        else:
            p = _ALPHA + sp.I * _BETA
            place = {_ALPHA: target.alpha, _BETA: target.beta}
            A = _coefficients(coeffs, poles, target, p, 2 * sp.I * _BETA, poles.leading)
            for j, a in enumerate(A):
                re, im = _re_im(sp.cancel(a))
                re = _tidy(sp.cancel(re).subs(place), symbolic)
                im = _tidy(sp.cancel(im).subs(place), symbolic)
                if re != 0 or im != 0:
                    terms.append(FractionTerm(target, m - j, re, im))
    return terms


def _rational(values) -> bool:
    return all((sp.Integer(0) + v).is_Rational for v in values)


def _domain_fractions(N: sp.Poly, poles: PoleSet) -> list[FractionTerm]:
    """The same coefficients where every number is rational, in SymPy's Gaussian-rational
    domain QQ_I: the series arithmetic then costs what the algebra costs (no expression
    simplification), and the results are exact."""
    K = QQ_I
    one = K.one
    coeffs = [K.from_sympy(c) for c in N.all_coeffs()]
    dom = PoleSet(K.from_sympy(poles.leading), tuple(
        Pole(q.kind, K.from_sympy(q.value), K.from_sympy(q.beta), q.multiplicity)
        for q in poles.poles))
    terms = []
    for target_sym, target in zip(poles.poles, dom.poles):
        m = target.multiplicity
        if target.kind == "real":
            A = _coefficients(coeffs, dom, target, target.value, None, dom.leading, one)
        else:
            p = target.value + K.from_sympy(sp.I) * target.beta
            A = _coefficients(coeffs, dom, target, p, K.from_sympy(2 * sp.I) * target.beta,
                              dom.leading, one)
        for j, a in enumerate(A):
            re, im = QQ.to_sympy(a.x), QQ.to_sympy(a.y)
            if target.kind == "real":
                im = sp.Integer(0)
            if re != 0 or im != 0:
                terms.append(FractionTerm(target_sym, m - j, re, im))
    return terms


def _numeric_fractions(N: sp.Poly, poles: PoleSet) -> list[FractionTerm]:
    if N.free_symbols - {S}:
        return _linear_in_symbols(N, poles)
    with mpmath.workdps(WORKING_DIGITS):
        mp = lambda x: mpmath.mpmathify(sp.N(x, WORKING_DIGITS + 5))  # noqa: E731
        coeffs = [mp(c) for c in N.all_coeffs()]
        num_poles = PoleSet(mp(poles.leading), tuple(
            Pole(q.kind, mp(q.value), mp(q.beta), q.multiplicity, True) for q in poles.poles))
        terms = []
        for target_sym, target in zip(poles.poles, num_poles.poles):
            m = target.multiplicity
            if target.kind == "real":
                A = _coefficients(coeffs, num_poles, target, target.value, None, num_poles.leading)
                for j, a in enumerate(A):
                    terms.append(FractionTerm(target_sym, m - j, _float(mpmath.re(a))))
            else:
                p = mpmath.mpc(target.value, target.beta)
                A = _coefficients(coeffs, num_poles, target, p, 2j * target.beta,
                                  num_poles.leading)
                for j, a in enumerate(A):
                    terms.append(FractionTerm(target_sym, m - j, _float(mpmath.re(a)),
                                              _float(mpmath.im(a))))
    return [t for t in terms if t.re != 0 or t.im != 0]


def _linear_in_symbols(N: sp.Poly, poles: PoleSet) -> list[FractionTerm]:
    """Numerical poles and a numerator with symbolic coefficients n_i (a load's size, say):
    N/D = Σ_i n_i · s^i/D, so each coefficient is Σ_i n_i times that of the numerical split
    of s^i/D — exact in the symbols, the numbers to the working precision."""
    if any(q.value.free_symbols or q.beta.free_symbols for q in poles.poles):
        names = sorted(str(x) for x in N.free_symbols - {S})
        raise SolveError("numerical poles need numerical parameter values where the "
                         "parameters move the poles; give values for " + ", ".join(names))
    coeffs = N.all_coeffs()[::-1]
    total: dict = {}
    order: list = []
    for i, n_i in enumerate(coeffs):
        if n_i == 0:
            continue
        for term in _numeric_fractions(sp.Poly(S ** i, S), poles):
            key = (id(term.pole), term.power)
            if key not in total:
                total[key] = [term.pole, sp.Integer(0), sp.Integer(0)]
                order.append(key)
            total[key][1] += n_i * term.re
            total[key][2] += n_i * term.im
    return [FractionTerm(pole, power, sp.expand(re), sp.expand(im))
            for (_, power), (pole, re, im) in ((k, total[k]) for k in order)]


def _float(x) -> sp.Float:
    return sp.Float(x, 20)


def _pole_text(p: Pole) -> str:
    """'s = -2', 's = -1 ± 3i', 's = ±23.5829i': exact numbers as they are, numerical ones to
    six significant figures (the step's working keeps every digit)."""
    if p.kind == "real":
        return f"s = {_number_text(p.value)}"
    beta = _number_text(p.beta)
    imaginary = "i" if p.beta == 1 else (f"{beta}i" if re.fullmatch(r"[0-9.e+-]+", beta)
                                         else f"i·{beta}")
    if p.alpha == 0:
        return f"s = ±{imaginary}"
    return f"s = {_number_text(p.alpha)} ± {imaginary}"


def _number_text(x) -> str:
    x = sp.Integer(0) + x
    if x.has(sp.Float):
        x = x.xreplace({f: sp.Float(mpmath.nstr(mpmath.mpf(f), 6), 6) for f in x.atoms(sp.Float)})
        if x.is_Float:
            return mpmath.nstr(mpmath.mpf(x), 6)
    text = sp.sstr(x)
    return f"({text})" if " " in text else text


def _covered(numerator: sp.Expr, poles: PoleSet, target: Pole) -> tuple[sp.Expr, sp.Expr]:
    """(s - p)^m N(s)/D(s) written out, and the point p (α + iβ for a complex pair)."""
    rest = [q.factor ** q.multiplicity for q in poles.poles if q is not target]
    if target.kind == "real":
        point = target.value
    else:
        point = target.alpha + sp.I * target.beta
        rest.append((S - target.alpha + sp.I * target.beta) ** target.multiplicity)
    den = sp.Mul(poles.leading, *rest, evaluate=False) if rest or poles.leading != 1 else 1
    return numerator / den, point


def _coefficient_formula(covered: sp.Expr, point: sp.Expr, order: int) -> sp.Expr:
    """1/j! · d^j/ds^j [covered] at s = p, unevaluated, as the step shows it."""
    inner = sp.Derivative(covered, (S, order)) if order else covered
    at = sp.Subs(inner, S, point)
    return sp.Mul(sp.Rational(1, factorial(order)), at, evaluate=False) if order > 1 else at


def fraction_steps(label: sp.Symbol, numerator: sp.Expr, poles: PoleSet,
                   terms: list[FractionTerm]) -> Step:
    """The decomposition of one rational part as a step, one sub-step per pole; each
    coefficient named by its pole and power (A_{k,j}; B_k, C_k for a complex pair), each
    sub-step headed by the rule it used, and the step by exactly the rules of its sub-steps."""
    subs = []
    used: dict = {}
    kinds = []
    for k, pole in enumerate((q for q in poles.poles if any(t.pole is q for t in terms)), 1):
        own = [t for t in terms if t.pole is pole]
        r, lines, note = _pole_working(k, pole, own, numerator, poles)
        used[r.id] = r
        kinds.append(r.name.split(": ")[-1])
        if pole.numeric:
            note += f" The pole was found numerically ({WORKING_DIGITS} digits)."
            used["numeric_roots"] = rule("numeric_roots")
        subs.append(Step(f"Pole {k}: {_pole_text(pole)}" + (
            f" (multiplicity {pole.multiplicity})" if pole.multiplicity > 1 else ""),
            r, lines, note, rules_used=(rule("numeric_roots"),) if pole.numeric else ()))
    total = sp.Add(*[t.expr for t in terms]) if terms else sp.Integer(0)
    lines = (Line(label, numerator / poles.factored, "="),
             Line(label, total, "="))
    own_rules = [r for r in used.values() if r.id != "numeric_roots"]
    return Step(f"Partial fractions of {label}", own_rules[0] if len(own_rules) == 1 else None,
                lines, "One term for each pole and power: " + "; ".join(dict.fromkeys(kinds))
                + ". Each coefficient is worked in its own sub-step.", tuple(subs),
                tuple(used.values()))


def _pole_working(k: int, pole: Pole, own, numerator, poles):
    """(rule, lines, note) of one pole's coefficients."""
    covered, point = _covered(numerator, poles, pole)
    m = pole.multiplicity
    if pole.kind == "real":
        r = rule("pf_simple" if m == 1 else "pf_repeated")
        names = {t.power: Coefficient("A", k, t.power if m > 1 else None) for t in own}
        lines = tuple(Line(names[t.power], _coefficient_formula(covered, point, m - t.power),
                           "=", "cover-up" if m == t.power else
                           f"derivative of order {m - t.power}") for t in own) + tuple(
            Line(names[t.power], t.re, "=") for t in own)
        note = ("Simple real pole: the coefficient is the rest of the fraction evaluated at "
                "the pole (cover-up)." if m == 1 else
                f"Real pole of multiplicity {m}: coefficients from derivatives of the "
                "covered-up fraction.")
        return r, lines, note
    r = rule("pf_complex_pair")
    lines = []
    for t in own:
        a = Coefficient("A", k, t.power if m > 1 else None)
        lines.append(Line(a, _coefficient_formula(covered, point, m - t.power), "=",
                          "residue at the pole with β > 0"))
        lines.append(Line(a, t.re + sp.I * t.im, "="))
        if t.power == 1:
            lines.append(Line(Coefficient("B", k), 2 * t.re, "=", "2 Re A"))
            lines.append(Line(Coefficient("C", k), -2 * t.im, "=", "-2 Im A"))
    note = ("Complex-conjugate pair: the conjugate pole has the conjugate coefficient; together "
            "they make one real quadratic term with the square completed.")
    return r, tuple(lines), note
