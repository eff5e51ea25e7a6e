"""Our notation for steps in LaTeX and plain text: SymPy printers with a few overrides.

SymPy prints the unit step as θ(t - c); engineers read u(t - c). The impulse is δ(t - c),
delay factors e^{-cs} stand in front of their rational part, derivatives of the unknown are
primes, and floating-point numbers show a set number of significant digits.
"""

from __future__ import annotations


import mpmath
import sympy as sp
from sympy.printing.latex import LatexPrinter
from sympy.printing.str import StrPrinter

from ..core.reading.parse import S

__all__ = ["NotationLatexPrinter", "NotationTextPrinter", "format_value", "latex_expr",
           "text_expr"]



def _split_delay(expr: sp.Mul):
    """A Mul's delay exponent -cs (None if it has no factor e^{-cs}) and the rest of it."""
    delay, rest = None, []
    for f in expr.args:
        if delay is None and isinstance(f, sp.exp) and f.args[0].has(S) and not f.args[0].has(sp.I):
            delay = f.args[0]
        else:
            rest.append(f)
    tail = sp.Mul(*rest, evaluate=False) if len(rest) > 1 else (rest[0] if rest else sp.Integer(1))
    return delay, tail


def _prime_name(name: str, order: int, latex: bool) -> str:
    if order <= 3:
        return name + "'" * order
    return f"{name}^{{({order})}}" if latex else f"{name}^({order})"


def _derivative_order(term) -> int:
    ders = [d.derivative_count for d in term.atoms(sp.Derivative)]
    return max(ders) if ders else (0 if term.atoms(sp.core.function.AppliedUndef) else -1)


def _switch_time(term):
    """The time a term switches on: c of u(t - c), or of a delay factor e^{-cs}; else None."""
    shifts = [-(h.args[0].subs(sp.Symbol("t", real=True), 0)) for h in term.atoms(sp.Heaviside)]
    shifts += [-(e.args[0] / S) for e in term.atoms(sp.exp)
               if e.args[0].has(S) and (e.args[0] / S).is_number]
    return max((float(x) for x in shifts if x.is_number), default=None)


def _ordered(printer_cls, self, expr, order=None):
    """Sums in reading order: a_n y^(n) first; switched terms u(t - c) by increasing c."""
    terms = list(expr.args) if isinstance(expr, sp.Add) else [expr]
    switched = [_switch_time(t) for t in terms]
    if len(terms) > 1 and sum(x is not None for x in switched) >= len(terms) - 1:
        keyed = [(-1.0 if x is None else x, i) for i, x in enumerate(switched)]
        return [terms[i] for _, i in sorted(keyed)]
    if any(isinstance(t, sp.Derivative) or t.atoms(sp.Derivative) for t in terms) and \
            all(_derivative_order(t) >= 0 for t in terms if t.atoms(sp.core.function.AppliedUndef)):
        with_y = sorted((t for t in terms if _derivative_order(t) >= 0),
                        key=lambda t: -_derivative_order(t))
        rest = [t for t in terms if _derivative_order(t) < 0]
        if not rest:
            return with_y
        return with_y + list(printer_cls._as_ordered_terms(self, sp.Add(*rest), order))
    return printer_cls._as_ordered_terms(self, expr, order)


def _format_float(x: sp.Float, digits: int) -> str:
    return mpmath.nstr(mpmath.mpf(x), digits, min_fixed=-4, max_fixed=7)


def _written(printer, value) -> str | None:
    """The decimal the user wrote for this rational (``decimals`` setting), else None."""
    decimals = printer._settings.get("decimals")
    if not decimals or not isinstance(value, sp.Rational):
        return None
    text = decimals.get(abs(value))
    return None if text is None else ("-" + text if value < 0 else text)


def _written_coefficient(printer, expr: sp.Mul):
    """(sign, decimal, rest) where a product's rational coefficient was written as a decimal
    (125.66·t, not 6283t/50); None otherwise."""
    coeff, rest = expr.as_coeff_Mul()
    if rest == 1 or not isinstance(coeff, sp.Rational) or coeff.is_Integer:
        return None
    text = _written(printer, abs(coeff))
    if text is None:
        return None
    return ("-" if coeff < 0 else ""), text, rest


class NotationLatexPrinter(LatexPrinter):
    """LaTeX of step expressions in engineering notation."""

    _default_settings = {**LatexPrinter._default_settings, "float_digits": 6, "decimals": None}

    def _as_ordered_terms(self, expr, order=None):
        return _ordered(LatexPrinter, self, expr, order)

    def _print_Heaviside(self, expr, exp=None):
        tex = r"u(%s)" % self._print(expr.args[0])
        return tex if exp is None else r"u(%s)^{%s}" % (self._print(expr.args[0]), exp)

    def _print_DiracDelta(self, expr, exp=None):
        tex = r"\delta(%s)" % self._print(expr.args[0])
        return tex if exp is None else r"\delta(%s)^{%s}" % (self._print(expr.args[0]), exp)

    def _print_Laplace(self, expr, exp=None):
        return r"\mathcal{L}\left\{%s\right\}" % self._print(expr.args[0])

    def _print_InverseLaplace(self, expr, exp=None):
        return r"\mathcal{L}^{-1}\left\{%s\right\}" % self._print(expr.args[0])

    def _print_Derivative(self, expr):
        inner = expr.expr
        if isinstance(inner, sp.core.function.AppliedUndef) and len(expr.variables) >= 1:
            name = self._print(sp.Symbol(inner.func.__name__))
            return _prime_name(name, expr.derivative_count, True) + "(%s)" % self._print(inner.args[0])
        return super()._print_Derivative(expr)

    def _print_Function(self, expr, exp=None):
        if isinstance(expr, sp.core.function.AppliedUndef):
            name = super()._print_Symbol(sp.Symbol(expr.func.__name__))
            tex = "%s(%s)" % (name, ", ".join(self._print(a) for a in expr.args))
            return tex if exp is None else "%s^{%s}" % (tex, exp)
        return super()._print_Function(expr, exp)

    def _print_InitialValue(self, expr, style="plain"):
        name = super()._print_Symbol(sp.Symbol(expr.unknown), style)
        return _prime_name(name, expr.order, True) + "(0^{-})"

    def _print_PolynomialLabel(self, expr, style="plain"):
        return super()._print_Symbol(sp.Symbol(expr.letter), style) + "(s)"

    def _print_PartLabel(self, expr, style="plain"):
        base = super()._print_Symbol(sp.Symbol(expr.base), style)
        if "_" in base:  # X1 prints as X_{1}: brace it so the part's index is a second level
            base = "{%s}" % base
        return "%s_{%d}(s)" % (base, expr.index)

    def _print_Coefficient(self, expr, style="plain"):
        sub = str(expr.pole) + (f",{expr.power}" if expr.power is not None else "")
        return "%s_{%s}" % (expr.letter, sub)

    def _print_Float(self, expr):
        text = _format_float(expr, self._settings["float_digits"])
        if "e" in text:
            mant, ex = text.split("e")
            return r"%s \cdot 10^{%d}" % (mant, int(ex))
        return text

    def _print_Rational(self, expr):
        text = _written(self, expr)
        return text if text is not None else super()._print_Rational(expr)

    def _print_Mul(self, expr):
        delay, tail = _split_delay(expr)
        if delay is None:
            written = _written_coefficient(self, expr)
            if written is not None:
                sign, text, rest = written
                body = self._print(rest)
                return sign + text + " " + (r"\left(%s\right)" % body
                                            if isinstance(rest, sp.Add) else body)
            return super()._print_Mul(expr)
        body = self._print(tail)
        return r"e^{%s}\,%s" % (self._print(delay), r"\left(%s\right)" % body
                                if isinstance(tail, sp.Add) else body)


class NotationTextPrinter(StrPrinter):
    """One-line plain text of step expressions, for the terminal."""

    _default_settings = {**StrPrinter._default_settings, "float_digits": 6, "decimals": None,
                         "imaginary_unit": "i"}

    def _print_ImaginaryUnit(self, expr):
        return self._settings["imaginary_unit"]

    def _as_ordered_terms(self, expr, order=None):
        return _ordered(StrPrinter, self, expr, order)

    def _print_Heaviside(self, expr):
        return "u(%s)" % self._print(expr.args[0])

    def _print_DiracDelta(self, expr):
        return "delta(%s)" % self._print(expr.args[0])

    def _print_Laplace(self, expr):
        # the script ℒ: no parameter can take the name (an inductance L stands beside it)
        return "ℒ{%s}" % self._print(expr.args[0])

    def _print_InitialValue(self, expr):
        return _prime_name(expr.unknown, expr.order, False) + "(0-)"

    def _print_PolynomialLabel(self, expr):
        return {"Delta": "Δ"}.get(expr.letter, expr.letter) + "(s)"

    def _print_PartLabel(self, expr):
        return "%s_%d(s)" % (expr.base, expr.index)

    def _print_Coefficient(self, expr):
        return expr.name

    def _print_Subs(self, expr):
        inner, (var,), (point,) = expr.args
        return "[%s] at %s = %s" % (self._print(inner), self._print(var), self._print(point))

    def _print_InverseLaplace(self, expr):
        return "ℒ^-1{%s}" % self._print(expr.args[0])

    def _print_Derivative(self, expr):
        inner = expr.expr
        if isinstance(inner, sp.core.function.AppliedUndef):
            return _prime_name(inner.func.__name__, expr.derivative_count, False) + \
                "(%s)" % self._print(inner.args[0])
        (var, count), = expr.variable_count
        power = "" if count == 1 else "^%d" % count
        return "d%s/d%s%s(%s)" % (power, self._print(var), power, self._print(inner))

    def _print_Float(self, expr):
        return _format_float(expr, self._settings["float_digits"])

    def _print_Rational(self, expr):
        text = _written(self, expr)
        return text if text is not None else super()._print_Rational(expr)

    def _print_Mul(self, expr):
        delay, tail = _split_delay(expr)
        if delay is None:
            written = _written_coefficient(self, expr)
            if written is not None:
                sign, text, rest = written
                body = self._print(rest)
                return sign + text + "*" + ("(%s)" % body if isinstance(rest, sp.Add) else body)
            return super()._print_Mul(expr)
        sign = ""
        if tail.could_extract_minus_sign():  # StrPrinter's sums read a leading '-' as the sign
            sign, tail = "-", -tail
        body = self._print(tail)
        return "%sexp(%s)*%s" % (sign, self._print(delay), "(%s)" % body
                                 if isinstance(tail, sp.Add) else body)


def format_value(value, digits: int = 6) -> str:
    """A result value as text: numbers to ``digits`` significant figures (trailing zeros
    kept, so every figure shows its precision), tuples listed."""
    if isinstance(value, (list, tuple)):
        if value and all(isinstance(v, (list, tuple)) for v in value):  # mode shapes
            return "; ".join("(" + format_value(v, digits) + ")" for v in value)
        return ", ".join(format_value(v, digits) for v in value)
    if isinstance(value, complex):
        if abs(value.imag) < 1e-300:
            return format_value(value.real, digits)
        sign = "+" if value.imag >= 0 else "-"
        return f"{format_value(value.real, digits)} {sign} {format_value(abs(value.imag), digits)}i"
    if isinstance(value, float):
        # the same number of significant figures everywhere (11.1070 beside 0.121346)
        return mpmath.nstr(mpmath.mpf(value), digits, min_fixed=-4, max_fixed=7,
                           strip_zeros=False)
    return str(value)


def result_parts(result, digits: int = 6) -> tuple[str, str, str]:
    """(value, unit, remark) of a Result in words: "unbounded" with its reason, "none" with
    why it does not apply, a value with a note such as "approached as t → ∞, not attained"."""
    import math
    m = result.magnitude
    if m is None:
        return "none", "", result.reason
    if isinstance(m, float) and math.isinf(m):
        word = "∞" if result.key.startswith("time_of") else "unbounded"
        return word, ("" if word == "unbounded" else result.unit), result.reason or result.note
    return format_value(m, digits), result.unit, result.note


IMAGINARY_UNITS = ("i", "j")
"""How the imaginary unit is written: i, or j as electrical engineers write it."""


def judgement_parts(judgement, digits: int = 6) -> tuple[str, str, str]:
    """(value with unit, limit with its relation, utilisation) of a judged acceptance criterion
    as text; "—" where the result could not be judged. The limit reads as the user wrote it
    (12 mm, not 12.0000 mm)."""
    c = judgement.criterion
    unit = f" {c.unit}" if c.unit else ""
    value = format_value(judgement.value, digits) + unit if judgement.value is not None else "—"
    limit = ("≤ " if c.upper else "≥ ") + f"{c.limit:g}" + unit  # the limit as written
    use = format_value(judgement.utilisation, 3) if judgement.utilisation is not None else "—"
    return value, limit, use


def latex_expr(expr, **settings) -> str:
    """LaTeX of one expression in our notation (``imaginary_unit``: "i" or "j")."""
    return NotationLatexPrinter(settings).doprint(expr)


def text_expr(expr, **settings) -> str:
    """Plain text of one expression in our notation (``imaginary_unit``: "i" or "j")."""
    return NotationTextPrinter(settings).doprint(expr)

