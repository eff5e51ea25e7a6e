"""The Problem value object: linear constant-coefficient ODEs in one or several unknowns.

A single ODE is the one-unknown case of a system: ``operators[i][j]`` holds the coefficients of
unknown j in equation i by derivative order, ``forcings[i]`` the right side of equation i,
``initial_values[j]`` unknown j's values at 0⁻. For one unknown the properties ``unknown``,
``order``, ``coefficients`` and ``forcing`` give the single equation's parts directly (the
squeeze happens here, at the edge).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp

from .symbols import T

__all__ = ["Problem", "derivative_name", "decimal_text"]

_DECIMAL = re.compile(r"(?<![\w.])(\d+\.\d*|\.\d+)(?:[eE][-+]?\d+)?(?![\w.])")


def decimal_text(value) -> str | None:
    """A rational with a terminating decimal expansion of at most 12 significant figures, as
    that decimal ("125.66" for 6283/50); None for integers and other numbers."""
    if not isinstance(value, sp.Rational) or value.is_Integer:
        return None
    q = int(value.q)
    twos = fives = 0
    while q % 2 == 0:
        q, twos = q // 2, twos + 1
    while q % 5 == 0:
        q, fives = q // 5, fives + 1
    if q != 1:
        return None
    places = max(twos, fives)
    digits = abs(int(value.p)) * 10 ** places // int(value.q)
    if len(str(digits).strip("0")) > 12:
        return None
    sign = "-" if value < 0 else ""
    text = str(digits).rjust(places + 1, "0")
    return f"{sign}{text[:-places]}.{text[-places:]}"


def derivative_name(unknown: str, order: int) -> str:
    """Plain-text name of a derivative: y, y', y'', y''', y^(4)."""
    return unknown + ("'" * order if order <= 3 else f"^({order})")


@dataclass(frozen=True, slots=True)
class Problem:
    """Equations Σ_j Σ_k a_ijk x_j^(k) = f_i(t), i = 1..n, for t > 0, with x_j^(k)(0⁻) given.

    ``orders[j]`` is unknown j's highest derivative over all equations; ``parameters`` are the
    values put in; ``symbols`` the names left symbolic (positive reals). ``derived`` are named
    expressions of the unknowns (a stroke x1 - x2); ``loads`` the loads given as
    ``derivpad.forcing`` values, (name, description, Heaviside form); ``unit_contexts`` one
    UnitContext per unknown and derived name when any unit was given.
    """

    texts: tuple[str, ...]
    unknowns: tuple[str, ...]
    operators: tuple[tuple[tuple[sp.Expr, ...], ...], ...]
    forcings: tuple[sp.Expr, ...]
    orders: tuple[int, ...]
    initial_values: tuple[tuple[sp.Expr, ...], ...]
    parameters: tuple[tuple[str, sp.Expr], ...]
    symbols: tuple[str, ...]
    derived: tuple[tuple[str, sp.Expr], ...] = ()
    loads: tuple[tuple[str, str, sp.Expr], ...] = ()
    quantities: tuple = ()
    unit_contexts: tuple = ()

    # -- the vector ------------------------------------------------------------------------
    @property
    def size(self) -> int:
        """The number of unknowns (and of equations)."""
        return len(self.unknowns)

    @property
    def text(self) -> str:
        return "; ".join(self.texts)

    @property
    def names(self) -> tuple[str, ...]:
        """Every reported quantity: the unknowns, then the derived quantities."""
        return self.unknowns + tuple(name for name, _ in self.derived)

    def function(self, j: int = 0) -> sp.Expr:
        """Unknown j as an applied SymPy function x_j(t)."""
        return sp.Function(self.unknowns[j])(T)

    def functions(self) -> tuple[sp.Expr, ...]:
        return tuple(self.function(j) for j in range(self.size))

    def lhs(self, i: int = 0) -> sp.Expr:
        """Σ_j Σ_k a_ijk x_j^(k) of equation i."""
        out = []
        for j, coeffs in enumerate(self.operators[i]):
            x = self.function(j)
            out += [a * (x.diff(T, k) if k else x) for k, a in reversed(list(enumerate(coeffs)))
                    if a != 0]
        return sp.Add(*out)

    def equation(self, i: int = 0) -> sp.Eq:
        return sp.Eq(self.lhs(i), self.forcings[i], evaluate=False)

    def unit_context(self, name: str):
        """The UnitContext of an unknown or a derived quantity (None without units)."""
        return dict(self.unit_contexts).get(name)

    @property
    def units(self):
        """The first unknown's UnitContext (time and the parameters' declared units are common
        to all), or None when no unit was given."""
        return self.unit_contexts[0][1] if self.unit_contexts else None

    def operator_matrix(self, k: int) -> sp.Matrix:
        """The n×n matrix of the coefficients of the k-th derivatives."""
        n = self.size
        return sp.Matrix(n, n, lambda i, j: self.operators[i][j][k]
                         if k < len(self.operators[i][j]) else 0)

    def lead_matrix(self) -> sp.Matrix:
        """E: the coefficients of each unknown's highest derivative, equation by equation."""
        n = self.size
        return sp.Matrix(n, n, lambda i, j: self.operators[i][j][self.orders[j]]
                         if self.orders[j] < len(self.operators[i][j]) else 0)

    @property
    def is_mechanical(self) -> bool:
        """True when every equation is second order in the form M x'' + C x' + K x = f."""
        return all(o == 2 for o in self.orders) and all(
            len(c) <= 3 for row in self.operators for c in row)

    def matrices(self):
        """(M, C, K) as SymPy matrices for a second-order system (see ``is_mechanical``)."""
        return tuple(self.operator_matrix(k) for k in (2, 1, 0))

    # -- the one-unknown case ---------------------------------------------------------------
    def _single(self, what: str) -> None:
        if self.size != 1:
            msg = (f"{what} belongs to a single equation; this problem has {self.size} unknowns "
                   f"({', '.join(self.unknowns)}): read it per unknown")
            raise AttributeError(msg)

    @property
    def unknown(self) -> str:
        """The unknown's name (one unknown only)."""
        self._single("unknown")
        return self.unknowns[0]

    @property
    def order(self) -> int:
        """The ODE's order (one unknown only)."""
        self._single("order")
        return self.orders[0]

    @property
    def coefficients(self) -> tuple[sp.Expr, ...]:
        """a_0 … a_n of the single ODE."""
        self._single("coefficients")
        return self.operators[0][0]

    @property
    def forcing(self) -> sp.Expr:
        """The single ODE's right side."""
        self._single("forcing")
        return self.forcings[0]

    @property
    def written_decimals(self) -> tuple[tuple[sp.Rational, str], ...]:
        """Numbers the user gave as decimals, with the text to show them by: the decimal
        literals in the equations as written, and every given value (parameters, quantities in
        SI, initial values) that is a terminating decimal. The algebra keeps them exact (125.66
        is 6283/50); the printers show them as decimals."""
        found: dict = {}
        for text in self.texts:
            for match in _DECIMAL.finditer(text):
                literal = match.group(0)
                try:
                    value = sp.Rational(Fraction(literal))
                except (ValueError, ZeroDivisionError):
                    continue
                if not value.is_Integer:
                    found.setdefault(value, decimal_text(value) or literal)
        given = [v for _, v in self.parameters] + [q.si_value for q in self.quantities] + [
            v for vals in self.initial_values for v in vals]
        for value in given:
            text = decimal_text(value)
            if text is not None:
                found.setdefault(abs(value), text.lstrip("-"))
        return tuple(found.items())

    def copy_with(self, **changes) -> "Problem":
        """A new Problem with some fields replaced (problems are immutable)."""
        fields = {name: getattr(self, name) for name in self.__dataclass_fields__}
        fields.update(changes)
        return Problem(**fields)
