"""Units: read quantities with pint, convert them to consistent SI, check homogeneity.

Values such as ``"800 N/m"`` or ``"250 ms"`` are split into an exact number and a unit; the unit
is read by pint's unit parser (never Python's eval) and the value converted to SI base units,
in which the derivation works. The equation is checked term by term: every top-level term
must have the dimension of the first, with t a time, y^(k) the unknown's dimension over
time^k, δ(t - c) one over time, and the arguments of exp, sin, cos, sinh, cosh dimensionless.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache

import sympy as sp

from ...errors import ParameterError, ParseError, UnitError
from .parse import check_number_text

__all__ = ["Quantity", "UnitContext", "read_quantity", "registry", "check_homogeneity",
           "dimension_of", "time_dimension", "dimension_text", "unit_text", "display_unit_for", "display_factor", "display_offset", "sign_cautions", "to_display"]

_NUMBER = re.compile(r"^\s*([-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)\s*(.*?)\s*$")

# Names for common SI dimensions, so results read "N" rather than "kg·m/s²".
_NAMED = ["N", "N*m", "Pa", "J", "W", "V", "A", "ohm", "F", "H", "C", "K", "N*s", "N/m",
          "N*s/m", "kg", "m", "s", "rad/s", "1/s", "m/s", "m/s**2", "kg*m**2", "N*m*s/rad",
          "J/K", "K/W", "W/K", "V/s", "A/s", "Wb", "S", "m**2", "m**3", "m**3/s", "Pa*s"]


@lru_cache(maxsize=1)
def registry():
    """The one pint registry (created on first use: pint is slow to load)."""
    import pint
    return pint.UnitRegistry()


@dataclass(frozen=True, slots=True)
class Quantity:
    """A parameter as given (text), its SI value (exact), its SI unit and its dimension."""

    name: str
    given: str
    si_value: sp.Expr
    si_unit: str
    dimensionality: object  # pint UnitsContainer

    @property
    def dimensionless(self) -> bool:
        return not dict(self.dimensionality)


@dataclass(frozen=True, slots=True)
class UnitContext:
    """The unknown's and time's units (SI working unit and display unit) and each dimension."""

    unknown_si: str
    unknown_display: str
    time_display: str
    forcing_si: str
    dimensions: tuple[tuple[str, object], ...]
    symbol_units: tuple[tuple[str, str], ...] = ()   # units= of parameters left symbolic

    def symbol_unit(self, name: str) -> str | None:
        """The unit a symbolic parameter was declared in (units=), if any."""
        return dict(self.symbol_units).get(name)

    def display(self, kind: str) -> str:
        return {"unknown": self.unknown_display, "time": self.time_display,
                "forcing": self.forcing_si}[kind]


def _clean(text: str) -> str:
    return text.replace("·", "*").replace("⋅", "*").replace("²", "**2").replace("³", "**3") \
        .replace("Ω", "ohm").replace("µ", "u").replace("μ", "u")


def _unit(text: str, name: str):
    if len(text) > 200 or any(len(n) > 3 or int(n) > 100 for n in re.findall(r"[0-9]+", text)):
        msg = (f"{name}: the unit {text[:40]!r} is too long or has a power above 100; write a "
               "unit such as 'kg', 'N/m' or 'm/s**2'")
        raise UnitError(msg, name=name)
    ureg = registry()
    try:
        return ureg.parse_units(_clean(text))
    except Exception as exc:  # pint raises several classes; all mean "not a unit"
        msg = (f"{name}: {text!r} is not a unit pint knows; write units such as 'kg', 'N/m', "
               "'N*s/m', 'ms', 'mm'")
        raise UnitError(msg, name=name) from exc


def read_quantity(value, name: str) -> Quantity | None:
    """A Quantity for a value with a unit (text or pint); None for a plain number."""
    if isinstance(value, str):
        return _read_text_quantity(value, name)
    return _read_quantity(value, name)


@lru_cache(maxsize=512)
def _read_text_quantity(value: str, name: str) -> Quantity | None:
    """Text quantities are read once: an explorer re-reads the same strings on every change."""
    return _read_quantity(value, name)


def _read_quantity(value, name: str) -> Quantity | None:
    ureg = registry() if not isinstance(value, (int, float, Fraction)) else None
    if ureg is not None and hasattr(value, "magnitude") and hasattr(value, "units"):
        magnitude, units, given = value.magnitude, value.units, f"{value:~P}"
    elif isinstance(value, str):
        m = _NUMBER.match(value)
        if not m or not m.group(2):
            return None
        try:
            check_number_text(m.group(1).lstrip("+-"), name)
        except ParseError as exc:
            raise ParameterError(f"{name}: {exc.reason}", name) from exc
        magnitude, units, given = Fraction(m.group(1)), _unit(m.group(2), name), value.strip()
    else:
        return None
    exact = Fraction(magnitude) if not isinstance(magnitude, float) else Fraction(repr(magnitude))
    if not ureg.Quantity(1, units)._is_multiplicative:
        # An absolute temperature (°C, °F): converted as pint converts it, with the offset
        # (20 °C is 293.15 K). Differences and coefficients (delta_degC, K/W, J/degC) are
        # multiplicative and take the branch below, without it.
        if len(dict(ureg.Quantity(1, units)._units)) != 1:
            msg = (f"{name}: {value!r} mixes a temperature scale with an offset into a compound "
                   "unit; write a temperature difference as delta_degC or K (e.g. 'J/K')")
            raise UnitError(msg, name=name)
        zero = ureg.Quantity(0.0, units).to_base_units()
        one = ureg.Quantity(1.0, units).to_base_units()
        offset = Fraction(repr(float(zero.magnitude))).limit_denominator(10 ** 6)
        scale = Fraction(repr(float(one.magnitude - zero.magnitude))).limit_denominator(10 ** 6)
        si = exact * scale + offset
        return Quantity(name, given, sp.Rational(si.numerator, si.denominator),
                        display_unit_for(one.dimensionality), one.dimensionality)
    q = ureg.Quantity(1, units).to_base_units()
    factor = Fraction(repr(float(q.magnitude))) if not float(q.magnitude).is_integer() else \
        Fraction(int(q.magnitude))
    si = exact * factor
    return Quantity(name, given, sp.Rational(si.numerator, si.denominator),
                    display_unit_for(q.dimensionality), q.dimensionality)


_NORMALLY_POSITIVE = (("mass", "kg"), ("stiffness", "N/m"), ("damping coefficient", "N*s/m"),
                      ("capacitance", "F"), ("inductance", "H"), ("resistance", "ohm"))


def sign_cautions(quantities) -> tuple[str, ...]:
    """A caution for each mass, stiffness, damping, capacitance, inductance or resistance given
    as zero or negative: the mathematics holds, but the value is likely a slip."""
    ureg = registry()
    out = []
    for q in quantities:
        for word, unit in _NORMALLY_POSITIVE:
            if q.dimensionality == ureg.Quantity(1, unit).dimensionality and q.si_value <= 0:
                sign = "zero" if q.si_value == 0 else "negative"
                out.append(f"caution: {q.name} = {q.given} is {sign}; a {word} is normally "
                           "positive, so check the value (the derivation holds for it)")
                break
    return tuple(out)


def unit_text(units) -> str:
    """A pint unit as compact text: 'kg / s ** 2' → 'kg/s²'."""
    text = f"{registry().Quantity(1, units).units:~P}"
    return text or "1"


def dimension_text(dim) -> str:
    """A pint dimensionality as text: '[mass] / [time] ** 2' → 'mass/time²'."""
    items = dict(dim)
    if not items:
        return "dimensionless"
    num = [f"{k.strip('[]')}{_sup(v)}" for k, v in items.items() if v > 0]
    den = [f"{k.strip('[]')}{_sup(-v)}" for k, v in items.items() if v < 0]
    out = "·".join(num) or "1"
    return out + ("/" + "·".join(den) if den else "")


def _sup(power) -> str:
    if power == 1:
        return ""
    table = str.maketrans("0123456789-/.", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻ᐟ·")
    return str(Fraction(power).limit_denominator(12)).translate(table)


def display_unit_for(dim) -> str:
    """A readable SI unit for a dimensionality: 'N' for force, 'N/m' for stiffness."""
    ureg = registry()
    for name in _NAMED:
        u = ureg.parse_units(name)
        if ureg.Quantity(1, u).dimensionality == dim:
            return f"{ureg.Quantity(1, u).units:~P}"
    return unit_text(ureg.Quantity(1, _base_from_dim(dim)).to_base_units().units)


def _base_from_dim(dim):
    ureg = registry()
    base = {"[mass]": "kg", "[length]": "m", "[time]": "s", "[current]": "A",
            "[temperature]": "K", "[substance]": "mol", "[luminosity]": "cd"}
    out = ureg.parse_units("")
    for k, v in dict(dim).items():
        out = out * ureg.parse_units(base[k]) ** v
    return out


def display_factor(si_unit: str, display: str) -> float:
    """The factor from an SI magnitude (or difference) to the display unit (1 when either is
    unknown); for a scale with an offset (°C, °F) add :func:`display_offset` to values."""
    if not si_unit or not display or si_unit == display:
        return 1.0
    return to_display(1.0, si_unit, display) - to_display(0.0, si_unit, display)


def display_offset(si_unit: str, display: str) -> float:
    """The display value of an SI zero: -273.15 for K shown in °C, 0 for every other unit."""
    if not si_unit or not display or si_unit == display:
        return 0.0
    return to_display(0.0, si_unit, display)


def to_display(si_value: float, si_unit: str, display: str) -> float:
    """Convert an SI magnitude to the display unit."""
    ureg = registry()
    return float(ureg.Quantity(si_value, ureg.parse_units(si_unit)).to(ureg.parse_units(display))
                 .magnitude)


# --- homogeneity --------------------------------------------------------------------------


def dimension_of(expr, dims: dict, unknown: str, where: str):
    """Dimension (pint UnitsContainer) of an expression, or raise UnitError."""
    ureg = registry()
    one = ureg.Quantity(1, "").dimensionality
    if expr.is_Number or expr in (sp.pi, sp.E):
        return one
    if isinstance(expr, sp.Symbol):
        return dims.get(expr.name, one)
    if isinstance(expr, sp.core.function.AppliedUndef):  # an unknown y(t) (of a system too)
        return dims.get(expr.func.__name__, dims.get(unknown))
    if isinstance(expr, sp.Derivative):
        return dims.get(expr.expr.func.__name__, dims.get(unknown)) / \
            dims["t"] ** expr.derivative_count
    if isinstance(expr, sp.Add):
        # A bare number in a sum takes the sum's dimension: numbers written in the equation
        # are in the SI unit of their place (u(t - 0.1) means 0.1 s).
        args = [a for a in expr.args if not a.is_number] or list(expr.args)
        parts = [dimension_of(a, dims, unknown, where) for a in args]
        for a, d in zip(args[1:], parts[1:]):
            if d != parts[0]:
                msg = (f"{where}: {sp.sstr(args[0])} is {dimension_text(parts[0])} but "
                       f"{sp.sstr(a)} is {dimension_text(d)}; a sum needs one dimension")
                raise UnitError(msg, terms=(sp.sstr(args[0]), sp.sstr(a)),
                                dimensions=(dimension_text(parts[0]), dimension_text(d)))
        return parts[0]
    if isinstance(expr, sp.Mul):
        out = one
        for a in expr.args:
            out = out * dimension_of(a, dims, unknown, where)
        return out
    if isinstance(expr, sp.Pow):
        base = dimension_of(expr.base, dims, unknown, where)
        if dimension_of(expr.exp, dims, unknown, where) != one or not expr.exp.is_number:
            if base == one:
                return one
            msg = f"{where}: the exponent of {sp.sstr(expr)} must be a plain number"
            raise UnitError(msg, terms=(sp.sstr(expr),))
        return base ** float(expr.exp) if not expr.exp.is_Integer else base ** int(expr.exp)
    if isinstance(expr, sp.Heaviside):
        dimension_of(expr.args[0], dims, unknown, where)
        return one
    if isinstance(expr, sp.DiracDelta):
        return one / dimension_of(expr.args[0], dims, unknown, where)
    if isinstance(expr, (sp.exp, sp.sin, sp.cos, sp.sinh, sp.cosh)):
        d = dimension_of(expr.args[0], dims, unknown, where)
        if d != one:
            msg = (f"{where}: the argument of {type(expr).__name__}({sp.sstr(expr.args[0])}) is "
                   f"{dimension_text(d)}; it must be dimensionless (e.g. ω·t with ω in rad/s)")
            raise UnitError(msg, terms=(sp.sstr(expr),), dimensions=(dimension_text(d),))
        return one
    return one


def has_units(expr, dims: dict) -> bool:
    """True when ``expr`` holds a parameter given with a unit (a dimension other than 1)."""
    one = registry().Quantity(1, "").dimensionality
    return any(x.name != "t" and dims.get(x.name) not in (None, one) for x in expr.free_symbols)


def _bound(expr, dims: dict) -> bool:
    """A term whose dimension is fixed by what was given: a parameter with a unit, or an
    unknown with a unit and no number written in front of it (4*y takes any dimension)."""
    if has_units(expr, dims):
        return True
    one = registry().Quantity(1, "").dimensionality
    coeff = expr.as_coeff_Mul()[0]
    names = {f.func.__name__ for f in expr.atoms(sp.core.function.AppliedUndef)}
    return abs(coeff) == 1 and any(dims.get(n) not in (None, one) for n in names)


def check_homogeneity(terms, dims: dict, unknown: str, text: str):
    """Every top-level term must share one dimension; returns that dimension."""
    found, free = [], []
    for term in (tm for tm in terms if tm.expr != 0):  # 0 has every dimension
        fragment = text[term.start:term.end] if text and term.end > term.start else sp.sstr(term.expr)
        pair = (fragment, dimension_of(term.expr, dims, unknown, f"in the term {fragment!r}"))
        # A term with no parameter of known unit (4*y, y'') has only numbers for coefficients,
        # and a number written in the equation is in the SI unit of its place: it takes the
        # dimension the equation needs, so it constrains nothing. A display unit of t or of
        # the unknown alone never makes such a term "wrong".
        (found if _bound(term.expr, dims) else free).append(pair)
    if not found:
        return free[0][1]
    first = found[0]
    bad = [(frag, d) for frag, d in found if d != first[1]]
    if bad:
        listing = "; ".join(f"{frag!r} is {dimension_text(d)}" for frag, d in [first] + bad)
        msg = (f"the equation is not dimensionally homogeneous: {listing}. Check the units of "
               "the parameters in these terms")
        raise UnitError(msg, terms=tuple(f for f, _ in [first] + bad),
                        dimensions=tuple(dimension_text(d) for _, d in [first] + bad))
    return first[1]


def time_dimension(units: dict) -> tuple[str, object]:
    """The display unit of t from ``units`` (default s) and its dimensionality; a unit that is
    not a time raises UnitError."""
    ureg = registry()
    time_unit = units.get("t", "s")
    tq = read_quantity(f"1 {time_unit}", "t")
    if tq.dimensionality != ureg.Quantity(1, "s").dimensionality:
        raise UnitError(f"t: {time_unit!r} is not a unit of time", name="t")
    return time_unit, tq.dimensionality
