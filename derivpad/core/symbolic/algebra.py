"""Solve for the transform over a vector of unknowns, and find the poles of its denominators.

The transformed problem is A(s)·X(s) = B(s), with A a square matrix of polynomials in s (1×1 for
one ODE). ``solve_system`` solves it by Cramer's rule, giving each X_i as a numerator over
det A(s), the characteristic polynomial.

``poles_of`` factors a polynomial in s over the rationals (or over the parameters' field):
linear factors give real poles; quadratics give a real pair or a complex pair α ± iβ with the
square completed; anything of higher degree with numeric coefficients gets numerical roots by
mpmath.polyroots at 50 digits (an irreducible factor over Q has simple roots, so no clustering
is needed). Where a symbolic discriminant's sign decides the form, the chosen case is returned
as an assumption.
"""

from __future__ import annotations

from dataclasses import dataclass

import mpmath
import sympy as sp

from ...errors import SolveError
from ..reading.parse import S

__all__ = ["Pole", "PoleSet", "characteristic_polynomial", "initial_condition_polynomial",
           "solve_system", "poles_of", "merge_poles", "WORKING_DIGITS"]

WORKING_DIGITS = 50
"""Decimal digits for numerical roots and residues."""


@dataclass(frozen=True, slots=True)
class Pole:
    """A real pole ``value``, or a complex pair alpha ± i·beta (beta > 0), with multiplicity."""

    kind: str            # "real" or "complex"
    value: sp.Expr       # real pole (kind "real") or alpha (kind "complex")
    beta: sp.Expr        # 0 for a real pole
    multiplicity: int
    numeric: bool = False

    @property
    def alpha(self) -> sp.Expr:
        return self.value

    def with_multiplicity(self, m: int) -> "Pole":
        return Pole(self.kind, self.value, self.beta, m, self.numeric)

    @property
    def factor(self) -> sp.Expr:
        """The monic real factor this pole contributes: s - r, or (s - α)² + β²."""
        if self.kind == "real":
            return S - self.value
        return (S - self.value) ** 2 + self.beta ** 2


@dataclass(frozen=True, slots=True)
class PoleSet:
    """A polynomial's leading coefficient and poles; the assumptions its form rests on."""

    leading: sp.Expr
    poles: tuple[Pole, ...]
    assumptions: tuple[str, ...] = ()
    conditions: tuple[sp.Basic, ...] = ()
    numeric: bool = False

    @property
    def factored(self) -> sp.Expr:
        """The polynomial as leading coefficient × Π factors^m (unevaluated, for display)."""
        parts = [p.factor ** p.multiplicity if p.multiplicity > 1 else p.factor
                 for p in self.poles]
        if self.leading != 1:
            parts.insert(0, self.leading)
        return sp.Mul(*parts, evaluate=False) if len(parts) > 1 else (parts[0] if parts else
                                                                      self.leading)


def characteristic_polynomial(coefficients) -> sp.Expr:
    """P(s) = Σ a_k s^k."""
    return sp.expand(sp.Add(*[a * S ** k for k, a in enumerate(coefficients)]))


def initial_condition_polynomial(coefficients, initial) -> sp.Expr:
    """Q(s) = Σ_k a_k Σ_{j<k} s^{k-1-j} y^(j)(0⁻): what the initial conditions add to B(s)."""
    return sp.expand(sp.Add(*[a * S ** (k - 1 - j) * initial[j]
                              for k, a in enumerate(coefficients) for j in range(k)]))


def solve_system(A: sp.Matrix, B: sp.Matrix) -> tuple[sp.Expr, tuple[sp.Expr, ...]]:
    """det A(s) and the numerators det A_i(s) of Cramer's rule, X_i = det A_i / det A."""
    det = sp.expand(A.det(method="berkowitz"))
    if det == 0:
        raise SolveError("the transformed system is singular (det A(s) is identically zero): "
                         "the equations are dependent; check that each unknown has its own "
                         "equation")
    numerators = []
    for i in range(A.shape[0]):
        Ai = A.copy()
        Ai[:, i] = B
        numerators.append(sp.expand(Ai.det(method="berkowitz")))
    return det, tuple(numerators)


def _sign(expr: sp.Expr):
    """+1, -1, 0, or None when the sign of a symbolic expression is not decided."""
    if expr.is_zero:
        return 0
    if expr.is_positive:
        return 1
    if expr.is_negative:
        return -1
    return None


def _sign_numerator(disc: sp.Expr) -> sp.Expr:
    """The part of a discriminant whose sign matters (positive denominators removed)."""
    num, den = sp.fraction(sp.together(disc))
    if not den.is_positive:
        num = num * den
    return sp.factor_terms(sp.expand(num))


def poles_of(poly: sp.Expr, regime: str = "underdamped") -> PoleSet:
    """Poles of a polynomial in s, exactly where a closed form is plain, else to 50 digits.

    ``regime`` picks the case for a symbolic quadratic whose discriminant has unknown sign:
    "underdamped" (complex pair) or "overdamped" (two real poles); the choice is an assumption.
    """
    P = sp.Poly(sp.expand(poly), S)
    if P.degree() < 1:
        raise SolveError(f"the polynomial {poly} has no poles")
    lead = P.LC()
    symbolic = bool(P.free_symbols - {S})
    try:
        content, factors = sp.factor_list(P.as_expr(), S)
    except sp.PolynomialError as exc:
        raise SolveError(f"cannot factor {poly}: {exc}") from exc
    poles: list[Pole] = []
    assumptions: list[str] = []
    conditions: list = []
    numeric_any = False
    for f, mult in factors:
        fp = sp.Poly(f, S)
        deg = fp.degree()
        if deg == 0:
            continue
        monic = [sp.cancel(c / fp.LC()) for c in fp.all_coeffs()]
        if deg == 1:
            poles.append(Pole("real", sp.simplify(-monic[1]), sp.Integer(0), mult))
        elif deg == 2:
            p, q = monic[1], monic[2]
            alpha = sp.simplify(-p / 2)
            disc = sp.simplify(p ** 2 / 4 - q)  # roots α ± sqrt(disc)
            sign = _sign(disc)
            if sign is None:
                key = _sign_numerator(disc)
                if regime == "underdamped":
                    sign = -1
                    assumptions.append(f"underdamped: {sp.sstr(key)} < 0 (complex poles)")
                    conditions.append(sp.StrictLessThan(key, 0))
                elif regime == "overdamped":
                    sign = 1
                    assumptions.append(f"overdamped: {sp.sstr(key)} > 0 (real poles)")
                    conditions.append(sp.StrictGreaterThan(key, 0))
                else:
                    raise SolveError(f"regime must be 'underdamped' or 'overdamped', not {regime!r}")
            if sign < 0:
                beta = sp.sqrt(sp.factor(-disc))
                beta = sp.simplify(beta) if symbolic else sp.radsimp(beta)
                poles.append(Pole("complex", alpha, beta, mult))
            else:
                root = sp.sqrt(disc)
                poles.append(Pole("real", sp.simplify(alpha + root), sp.Integer(0), mult))
                poles.append(Pole("real", sp.simplify(alpha - root), sp.Integer(0), mult))
        else:
            if symbolic:
                raise SolveError(
                    f"the factor {sp.sstr(f)} of degree {deg} has symbolic coefficients and no "
                    "closed-form roots the method can use; give numerical values for the "
                    f"parameters {', '.join(sorted(str(x) for x in f.free_symbols - {S}))}")
            numeric_any = True
            poles.extend(_numeric_poles(monic, mult))
    if symbolic:  # symbolic poles that could coincide (a ≠ b): the form assumes they do not
        for i, p in enumerate(poles):
            for q in poles[i + 1:]:
                if p.kind == q.kind and _same(p, q) is None:
                    diff = sp.simplify(p.value - q.value) if p.kind == "real" else \
                        sp.simplify(p.beta - q.beta)
                    text = f"distinct poles: {sp.sstr(diff)} ≠ 0"
                    if text not in assumptions:
                        assumptions.append(text)
                        conditions.append(sp.Ne(diff, 0))
    poles.sort(key=_pole_order)
    return PoleSet(lead, tuple(poles), tuple(assumptions), tuple(conditions), numeric_any)


def _numeric_poles(monic, mult: int) -> list[Pole]:
    with mpmath.workdps(WORKING_DIGITS):
        coeffs = [mpmath.mpf(sp.Rational(c).p) / sp.Rational(c).q for c in monic]
        try:
            roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=4 * WORKING_DIGITS)
        except mpmath.libmp.NoConvergence as exc:
            raise SolveError(f"the numerical root finder did not converge for the polynomial "
                             f"with coefficients {monic}") from exc
        out = []
        for r in roots:
            scale = max(mpmath.mpf(1), abs(r))
            if abs(mpmath.im(r)) <= mpmath.mpf(10) ** (-WORKING_DIGITS + 10) * scale:
                out.append(Pole("real", sp.Float(mpmath.re(r), WORKING_DIGITS), sp.Integer(0),
                                mult, True))
            elif mpmath.im(r) > 0:
                out.append(Pole("complex", sp.Float(mpmath.re(r), WORKING_DIGITS),
                                sp.Float(mpmath.im(r), WORKING_DIGITS), mult, True))
    return out


def _pole_order(p: Pole):
    """Order poles for display: by real part descending (slowest first), real before complex."""
    try:
        key = -float(p.value)
    except TypeError:
        key = 0.0
    return (key, p.kind != "real", sp.default_sort_key(p.value))


def merge_poles(base: PoleSet, extra: list[Pole]) -> PoleSet:
    """Add the forcing's poles to the characteristic ones, raising multiplicity where they meet.

    Where a symbolic pole may or may not coincide (resonance), they are taken as distinct and
    that is returned as an assumption.
    """
    poles = list(base.poles)
    assumptions = list(base.assumptions)
    conditions = list(base.conditions)
    for q in extra:
        for i, p in enumerate(poles):
            if p.kind != q.kind:
                continue
            same = _same(p, q)
            if same is None:
                text = (f"non-resonant: {sp.sstr(q.beta if q.kind == 'complex' else q.value)} ≠ "
                        f"{sp.sstr(p.beta if p.kind == 'complex' else p.value)}")
                if text not in assumptions:
                    assumptions.append(text)
                    conditions.append(sp.Ne(q.beta - p.beta if q.kind == "complex"
                                            else q.value - p.value, 0))
                continue
            if same:
                poles[i] = p.with_multiplicity(p.multiplicity + q.multiplicity)
                break
        else:
            poles.append(q)
    poles.sort(key=_pole_order)
    numeric = base.numeric or any(p.numeric for p in poles)
    return PoleSet(base.leading, tuple(poles), tuple(assumptions), tuple(conditions), numeric)


def _same(p: Pole, q: Pole):
    """True, False, or None (undecided) for whether two poles coincide."""
    d1 = sp.simplify(p.value - q.value)
    d2 = sp.simplify(p.beta - q.beta)
    if p.numeric or q.numeric:
        tol = sp.Float(10) ** (-WORKING_DIGITS + 15) * (1 + abs(sp.Float(p.value)) + abs(sp.Float(p.beta)))
        return bool(abs(sp.Float(d1)) < tol and abs(sp.Float(d2)) < tol)
    z1, z2 = d1.is_zero, d2.is_zero
    if z1 is False or z2 is False:
        return False
    if z1 and z2:
        return True
    return None
