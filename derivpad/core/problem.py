"""The Problem value object: one linear constant-coefficient ODE with its initial conditions.

``make_problem`` turns user input (text or a SymPy ``Eq``; conditions keyed by text or SymPy
objects; parameter values) into a checked :class:`Problem`: linear in the unknown, constant
coefficients, one condition for each order below the ODE's, all at t = 0⁻.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from fractions import Fraction
from numbers import Number

import sympy as sp

from ..errors import (EquationError, ForcingError, InitialConditionError, NonlinearTermError, ParameterError,
                      ParseError, UnitError, UnknownNameError, VariableCoefficientError)
from .parse import RESERVED_NAMES, T, Term, parse_equation, parse_value
from .units import (UnitContext, dimension_of, check_homogeneity, has_units, dimension_text, display_unit_for,
                    read_quantity, registry, time_dimension)

__all__ = ["Problem", "classify_terms", "derivative_name", "make_problem", "read_parameter",
           "to_exact"]


def derivative_name(unknown: str, order: int) -> str:
    """Plain-text name of a derivative: y, y', y'', y''', y^(4)."""
    return unknown + ("'" * order if order <= 3 else f"^({order})")


@dataclass(frozen=True, slots=True)
class Problem:
    """A linear ODE a_n y^(n) + ... + a_0 y = f(t) for t > 0 with y^(k)(0⁻) given.

    ``coefficients`` run from a_0 to a_n; ``parameters`` are the values substituted;
    ``symbols`` are the parameter names left symbolic (taken as positive reals).
    """

    text: str
    unknown: str
    coefficients: tuple[sp.Expr, ...]
    forcing: sp.Expr
    initial_values: tuple[sp.Expr, ...]
    parameters: tuple[tuple[str, sp.Expr], ...]
    symbols: tuple[str, ...]
    loads: tuple[tuple[str, str, sp.Expr], ...] = ()  # (name, description, Heaviside form)
    quantities: tuple = ()      # units.Quantity for each parameter given with a unit
    units: object = None        # units.UnitContext when any unit was given, else None

    @property
    def order(self) -> int:
        return len(self.coefficients) - 1

    @property
    def function(self) -> sp.Expr:
        """The unknown as an applied SymPy function y(t)."""
        return sp.Function(self.unknown)(T)

    @property
    def lhs(self) -> sp.Expr:
        """Σ a_k y^(k), the left side with parameter values substituted."""
        y = self.function
        return sp.Add(*[a * (y.diff(T, k) if k else y)
                        for k, a in reversed(list(enumerate(self.coefficients))) if a != 0])

    @property
    def equation(self) -> sp.Eq:
        return sp.Eq(self.lhs, self.forcing, evaluate=False)

    def copy_with(self, **changes) -> "Problem":
        """A new Problem with some fields replaced (problems are immutable)."""
        fields = {name: getattr(self, name) for name in self.__dataclass_fields__}
        fields.update(changes)
        return Problem(**fields)


def mapping_of(value, what: str, example: str) -> dict:
    """``value`` as a dict, or InitialConditionError/ParameterError naming the expected form."""
    if value is None:
        return {}
    if not hasattr(value, "items"):
        msg = (f"{what}= must be a mapping of names to values, e.g. {what}={example}, not a "
               f"{type(value).__name__}")
        if what == "ics":
            raise InitialConditionError(msg)
        raise ParameterError(msg, what)
    return dict(value)


def to_exact(value, name: str) -> sp.Expr:
    """A parameter or condition value as an exact SymPy number (decimals read as written)."""
    if isinstance(value, bool):
        raise ParameterError(f"{name}: {value!r} is not a number; give a number such as 2.5",
                             name)
    if isinstance(value, sp.Basic):
        expr = sp.sympify(value)  # safe: a SymPy object, never text
        # a user's own sympy.Symbol("t"), with or without assumptions, is our time
        expr = expr.xreplace({x: T for x in expr.free_symbols if x.name == "t" and x != T})
        if expr.has(sp.nan, sp.oo, -sp.oo, sp.zoo):
            raise ParameterError(f"{name}: {value} is not finite; give a finite number", name)
        if isinstance(expr, sp.Float):
            return sp.Rational(Fraction(str(expr)))
        return expr
    if isinstance(value, int):
        return sp.Integer(value)
    if isinstance(value, Fraction):
        return sp.Rational(value.numerator, value.denominator)
    if isinstance(value, float) or isinstance(value, Number):
        try:
            f = float(value)
        except (TypeError, ValueError):
            f = math.nan
        if not math.isfinite(f):
            raise ParameterError(f"{name}: {value!r} is not finite; give a finite number", name)
        # repr gives the shortest decimal that round-trips: 0.8 is read as 4/5.
        frac = Fraction(repr(f))
        return sp.Rational(frac.numerator, frac.denominator)
    if isinstance(value, str):
        try:
            expr = parse_value(value, what=f"value of {name}")
        except (ParseError, EquationError) as exc:
            reason = getattr(exc, "reason", None) or str(exc).splitlines()[0]
            raise ParameterError(f"{name}: cannot read {value!r} as a number: {reason}",
                                 name) from exc
        if expr.has(T):
            raise ParameterError(f"{name}: a value may not depend on t ({value!r})", name)
        return expr
    raise ParameterError(f"{name}: {value!r} ({type(value).__name__}) is not a number; give an "
                         "int, float, Fraction or numeric text", name)


_IC_KEY = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*)\s*('*|\^\(\s*(\d+)\s*\))\s*\(\s*(.*?)\s*\)\s*$")
_ZERO_POINTS = {"0", "0-", "0^-", "0⁻", "-0"}


def _ic_key_order(key, unknown: str) -> int:
    """The derivative order an initial-condition key names; checks it is the unknown at 0."""
    if isinstance(key, sp.Basic):
        return _sympy_ic_order(key, unknown)
    if not isinstance(key, str):
        raise InitialConditionError(
            f"initial-condition key {key!r} must be text such as \"{unknown}'(0)\" or a SymPy "
            f"object such as {unknown}(0)", key=str(key))
    m = _IC_KEY.match(key)
    if not m:
        raise InitialConditionError(
            f"cannot read the initial-condition key {key!r}; write it as \"{unknown}(0)\", "
            f"\"{unknown}'(0)\", \"{unknown}''(0)\" or \"{unknown}^(3)(0)\"", key=key)
    name, primes, number, point = m.groups()
    if name != unknown:
        raise InitialConditionError(
            f"initial condition {key!r} names {name!r}, but the unknown is {unknown!r}", key=key)
    if point.replace(" ", "") not in _ZERO_POINTS:
        raise InitialConditionError(
            f"initial condition {key!r} is given at t = {point}; the Laplace method needs the "
            f"values at t = 0 (just before it, 0⁻). Shift time so the conditions are at 0, or "
            "solve for the values at 0 first", key=key)
    return int(number) if number is not None else len(primes)


def _sympy_ic_order(key: sp.Basic, unknown: str) -> int:
    order, point, fname = None, None, None
    if isinstance(key, sp.Subs) and isinstance(key.expr, sp.Derivative):
        der = key.expr
        fname = der.expr.func.__name__ if isinstance(der.expr, sp.core.function.AppliedUndef) else None
        order = der.derivative_count
        point = key.point[0]
    elif isinstance(key, sp.core.function.AppliedUndef) and len(key.args) == 1:
        fname, order, point = key.func.__name__, 0, key.args[0]
    if fname is None:
        raise InitialConditionError(
            f"cannot read the initial-condition key {key}; use {unknown}(0) or "
            f"{unknown}(t).diff(t).subs(t, 0)", key=str(key))
    if fname != unknown:
        raise InitialConditionError(
            f"initial condition {key} names {fname!r}, but the unknown is {unknown!r}", key=str(key))
    if point != 0:
        raise InitialConditionError(
            f"initial condition {key} is given at t = {point}; the Laplace method needs the "
            "values at t = 0 (0⁻)", key=str(key))
    return order


def _classify(terms: tuple[Term, ...], text: str, y: sp.Expr):
    """Sort each top-level term into a_k y^(k) or forcing; refuse nonlinear or t-dependent ones."""
    coeffs, forcing = classify_terms(terms, text, (y,))
    return {k: v for (_, k), v in coeffs.items()}, forcing


def classify_terms(terms: tuple[Term, ...], text: str, ys):
    """Sort each top-level term into a_jk y_j^(k) or forcing, for the unknowns ``ys``
    (applied functions y_j(t)); refuse terms nonlinear in the unknowns (products of two
    unknowns included) or with coefficients varying in t.

    Returns ({(j, k): a_jk}, forcing) with the forcing moved to the right side.
    """
    dummies: dict = {}
    coeffs: dict = {}
    forcing = sp.Integer(0)
    names = ", ".join(str(y.func) for y in ys)
    for term in terms:
        sign = 1 if term.side == "lhs" else -1
        expr = term.expr
        repl = {}
        found = []
        for j, y in enumerate(ys):
            orders = sorted({d.derivative_count for d in expr.atoms(sp.Derivative)
                             if d.expr == y} | ({0} if expr.has(y) else set()), reverse=True)
            for k in orders:
                dummies.setdefault((j, k), sp.Dummy(f"D{j}_{k}"))
                repl[y.diff(T, k) if k else y] = dummies[(j, k)]
                found.append((j, k))
        flat = expr.subs(repl) if repl else expr
        fragment = text[term.start:term.end] if text else str(expr)
        if any(flat.has(y) for y in ys):
            raise NonlinearTermError(f"the term {fragment!r} is not linear in {names}",
                                     fragment, text, term.start, term.end - term.start)
        present = [dummies[key] for key in found]
        for key in found:
            a = sp.expand(sp.diff(flat, dummies[key]))
            if a.has(*present):
                raise NonlinearTermError(
                    f"the term {fragment!r} is nonlinear in the unknown"
                    + ("s" if len(ys) > 1 else "") + ": products, powers and functions of "
                    "the unknowns cannot be solved by the Laplace transform",
                    fragment, text, term.start, term.end - term.start)
            if a.has(T):
                raise VariableCoefficientError(
                    f"the term {fragment!r} has a coefficient that varies with t; the Laplace "
                    "method here needs constant coefficients", fragment, text, term.start,
                    term.end - term.start)
            coeffs[key] = coeffs.get(key, 0) + sign * a
        rest = flat.subs({d: 0 for d in present}) if present else flat
        forcing -= sign * rest
    return coeffs, forcing


def _terms_from_eq(eq: sp.Eq) -> tuple[Term, ...]:
    terms = [Term(a, 0, 0, "lhs") for a in sp.Add.make_args(sp.expand(eq.lhs))]
    terms += [Term(a, 0, 0, "rhs") for a in sp.Add.make_args(sp.expand(eq.rhs))]
    return tuple(terms)


def _normalise_eq(eq: sp.Eq, unknown: str | None):
    """From a user's SymPy Eq: the unknown's name, terms in our t, parameter names."""
    if not isinstance(eq, sp.Eq):
        raise ParseError(f"expected a SymPy Eq, not {type(eq).__name__}")
    funcs = {f for f in eq.atoms(sp.core.function.AppliedUndef)}
    if unknown is None:
        names = {f.func.__name__ for f in funcs}
        if len(names) != 1:
            raise ParseError(
                "the SymPy equation must contain exactly one applied unknown function such as "
                f"y(t); found {sorted(names) or 'none'}: pass unknown='y'")
        unknown = names.pop()
    user_t = None
    for f in funcs:
        if f.func.__name__ == unknown:
            if len(f.args) != 1 or not isinstance(f.args[0], sp.Symbol):
                raise ParseError(f"the unknown must be written {unknown}(t), found {f}")
            user_t = f.args[0]
    if user_t is None:
        raise ParseError(f"the equation has no applied function {unknown}(t)")
    repl = {user_t: T}
    names = []
    for sym in sorted(eq.free_symbols - {user_t}, key=lambda x: x.name):
        if sym.name in RESERVED_NAMES:
            raise ParseError(f"the symbol {sym.name!r} is reserved; rename it")
        repl[sym] = sp.Symbol(sym.name, positive=True)
        names.append(sym.name)
    new = sp.Eq(eq.lhs.xreplace(repl), eq.rhs.xreplace(repl), evaluate=False)
    return unknown, new, tuple(names)


def make_problem(equation, ics=None, params=None, unknown: str | None = None,
                 units=None) -> Problem:
    """Check the input and build a :class:`Problem`.

    Parameters
    ----------
    equation : str or sympy.Eq
        The ODE, e.g. ``"y'' + 4*y' + 13*y = 2*u(t - 1)"``.
    ics : mapping
        ``{"y(0)": 0, "y'(0)": 1}`` or keyed by SymPy objects; one per order below n.
    params : mapping, optional
        Values for parameters named in the equation; the others stay symbolic.
    unknown : str, optional
        The unknown's name when no name carries primes.
    units : mapping, optional
        Display units of the unknown and of time (``{"x": "mm", "t": "s"}``), or units for
        parameters given as plain numbers (``{"k": "N/m"}``).

    Raises
    ------
    ParseError, EquationError, InitialConditionError, ParameterError, UnitError
    """
    if isinstance(equation, sp.Eq):
        unknown, eq, names = _normalise_eq(equation, unknown)
        text = sp.sstr(eq.lhs) + " = " + sp.sstr(eq.rhs)
        terms = _terms_from_eq(eq)
        positions = ""
    else:
        parsed = parse_equation(equation, unknown)
        unknown, text, terms, names = parsed.unknown, parsed.text, parsed.terms, parsed.names
        positions = text
    y = sp.Function(unknown)(T)
    coeffs, forcing = _classify(terms, positions, y)
    coeffs = {k: v for k, v in coeffs.items() if sp.simplify(v) != 0}
    if not coeffs or max(coeffs) == 0:
        raise EquationError(
            f"the equation has no derivative of {unknown}; it is algebraic, not an ODE", text=text)
    order = max(coeffs)

    params = mapping_of(params, "params", "{'k': 800}")
    if "e" in names and "e" not in params:
        raise UnknownNameError(
            "'e' would be read as a symbolic parameter; for the exponential write exp(...), as "
            "in exp(-2*t), or give e a value in params", "e", positions,
            _name_position(positions, "e") if positions else None)
    ic_names: set[str] = set()
    ic_values: dict[int, sp.Expr] = {}
    ic_quantities: dict = {}
    units = mapping_of(units, "units", "{'x': 'mm'}")
    for key, value in mapping_of(ics, "ics", '{"y(0)": 0, "y\'(0)": 0}').items():
        k = _ic_key_order(key, unknown)
        label = derivative_name(unknown, k) + "(0)"
        if k in ic_values:
            raise InitialConditionError(f"{label} is given twice", key=str(key))
        v, q = _ic_value(value, label)
        if q is not None:
            ic_quantities[k] = q
        ic_names |= {s.name for s in v.free_symbols}
        ic_values[k] = v
    missing = [derivative_name(unknown, k) + "(0)" for k in range(order) if k not in ic_values]
    extra = [derivative_name(unknown, k) + "(0)" for k in sorted(ic_values) if k >= order]
    if missing:
        raise InitialConditionError(
            f"an order-{order} ODE needs {order} initial condition(s), {unknown}(0) to "
            f"{derivative_name(unknown, order - 1)}(0); missing: {', '.join(missing)}. Give them "
            f"in ics=, e.g. ics={{{', '.join(repr(m) + ': 0' for m in missing)}}}", missing=missing)
    if extra:
        raise InitialConditionError(
            f"an order-{order} ODE takes conditions only up to "
            f"{derivative_name(unknown, order - 1)}(0); remove {', '.join(extra)}", extra=extra)

    known = set(names) | ic_names
    values, loads, quantities = _read_params(params, known, forcing, coeffs, units)
    context = None
    if quantities or ic_quantities or units:
        context = _unit_context(terms, positions, unknown, names, quantities, ic_quantities,
                                units, loads)
    subs = {sp.Symbol(n, positive=True): v for n, v in values.items()}
    if loads:
        forcing = forcing.subs({sp.Symbol(n, positive=True): f.expr for n, f in loads.items()})
        names = tuple(n for n in names if n not in loads)
    coefficients = tuple(sp.expand(sp.Add(coeffs.get(k, 0)).subs(subs)) for k in range(order + 1))
    if coefficients[-1] == 0:
        raise ParameterError(
            f"with these values the coefficient of {derivative_name(unknown, order)} is zero; "
            "the ODE's order drops: check the values", "")
    forcing = sp.expand(forcing.subs(subs)) if subs else sp.expand(forcing)
    for k, c in enumerate(coefficients):
        if c.has(sp.I) or (c.is_number and c.is_real is False):
            raise EquationError(f"the coefficient of {derivative_name(unknown, k)} is {c}, which "
                                "is not a real number (a square root of a negative value?); "
                                "the model needs real coefficients", term=str(c), text=text)
    if forcing.has(sp.I, sp.zoo, sp.nan, sp.oo):
        raise ForcingError(f"the forcing {forcing} is not a real, finite function of t", str(forcing))
    initial = tuple(ic_values[k].subs(subs) for k in range(order))
    remaining = tuple(n for n in list(names) + sorted(ic_names - set(names)) if n not in values)
    remaining = tuple(n for n in remaining
                      if any(sp.Symbol(n, positive=True) in e.free_symbols
                             for e in coefficients + initial + (forcing,)))
    return Problem(text=text, unknown=unknown, coefficients=coefficients, forcing=forcing,
                   initial_values=initial, parameters=tuple(values.items()), symbols=remaining,
                   loads=tuple((n, f.description, f.expr) for n, f in loads.items()),
                   quantities=tuple(quantities.values()), units=context)


def _read_params(params: dict, known: set, forcing, coeffs: dict, units: dict):
    """params= read and checked: (exact values, loads given as derivpad.forcing, quantities
    with units). A name must be in the equation or the conditions; a value may name other
    parameters, and may depend on t only as a load on the right side."""
    values: dict[str, sp.Expr] = {}
    loads: dict[str, sp.Expr] = {}
    quantities: dict = {}
    for name, value in params.items():
        if not isinstance(name, str):
            name = str(name)
        if name not in known:
            raise ParameterError(
                f"parameter {name!r} does not appear in the equation or the initial conditions "
                f"(its names are: {', '.join(sorted(known)) or 'none'})", name)
        if hasattr(value, "expr") and hasattr(value, "description"):  # a forcing.Forcing
            if sp.Symbol(name, positive=True) not in forcing.free_symbols:
                raise ParameterError(f"{name!r} is given a load history but is not in the "
                                     "forcing (the right side)", name)
            loads[name] = value
            continue
        values[name], quantity = read_parameter(name, value, units)
        stray = sorted(x.name for x in values[name].free_symbols
                       if x.name not in known and x != T)
        if values[name].has(T) and any(sp.Symbol(name, positive=True) in
                                       (sp.Integer(0) + c).free_symbols
                                       for c in coeffs.values()):
            raise ParameterError(f"{name}: a value that depends on t is a load; it may stand on "
                                 "the right side only (a time-varying coefficient is outside "
                                 "the method)", name)
        if stray:
            msg = (f"{name}: {value!r} is not a number, and {stray[0]!r} is not a parameter of "
                   f"the equation; give a number such as 2.5 or a quantity such as '2 kg' "
                   f"(params={{{name!r}: 2.5}})")
            raise ParameterError(msg, name)
        if quantity is not None:
            quantities[name] = quantity
    return values, loads, quantities


def read_parameter(name: str, value, units: dict):
    """A parameter's exact SI value and its Quantity (None for a plain number); a plain
    number for a name in ``units`` is read in that unit."""
    if name in units and not isinstance(value, str):
        value = f"{value} {units[name]}"
    quantity = read_quantity(value, name)
    if quantity is not None:
        return quantity.si_value, quantity
    return to_exact(value, name), None


def _name_position(text: str, name: str) -> int | None:
    m = re.search(rf"(?<![A-Za-z_0-9]){re.escape(name)}(?![A-Za-z_0-9])", text)
    return m.start() if m else None


def _ic_value(value, label: str):
    """The condition's SI value, and its Quantity when it was given with a unit."""
    q = read_quantity(value, label)
    if q is not None:
        return q.si_value, q
    try:
        v = to_exact(value, label)
    except ParameterError as exc:
        raise InitialConditionError(str(exc), key=label) from exc
    if v.has(T):
        raise InitialConditionError(f"{label} may not depend on t", key=label)
    return v, None


def _unit_context(terms, text, unknown, names, quantities, ic_quantities, units, loads):
    """Dimensions of everything, the unknown's dimension inferred, homogeneity checked."""
    ureg = registry()
    one = ureg.Quantity(1, "").dimensionality
    time_unit, time_dim = time_dimension(units)
    for key in units:
        if key not in (unknown, "t") and key not in names:
            raise UnitError(f"units= names {key!r}, which is neither the unknown {unknown!r}, "
                            "t, nor a parameter of the equation", name=key)
    dims = {"t": time_dim}
    symbol_units = []
    for name in names:
        if name in quantities:
            dims[name] = quantities[name].dimensionality
        elif name in units and name not in loads:  # a symbolic parameter with a declared unit
            dims[name] = read_quantity(f"1 {units[name]}", name).dimensionality
            symbol_units.append((name, units[name]))
        else:
            dims[name] = one
    for name in loads:
        dims[name] = None  # a load history: takes the dimension the equation needs
    declared = None
    if unknown in units:
        declared = read_quantity(f"1 {units[unknown]}", unknown).dimensionality
    elif 0 in ic_quantities:
        declared = ic_quantities[0].dimensionality
    forcing_terms = [tm for tm in terms
                     if tm.expr != 0 and not tm.expr.has(sp.Function(unknown)(T).func)]
    y_terms = [tm for tm in terms if tm.expr.has(sp.Function(unknown)(T).func)]
    load_free = [tm for tm in forcing_terms
                 if not any(sp.Symbol(n, positive=True) in tm.expr.free_symbols for n in loads)]
    if declared is None:
        dims[unknown] = one
        # only terms with a parameter given in a unit say what the unknown is: a term with
        # numbers alone takes whatever dimension the equation needs
        f_named = [tm for tm in load_free if has_units(tm.expr, dims)]
        y_named = [tm for tm in y_terms if has_units(tm.expr, dims)]
        if f_named and y_named:
            f_dim = dimension_of(f_named[0].expr, {**dims, **{n: one for n in loads}}, unknown, "")
            per_y = dimension_of(y_named[0].expr, dims, unknown, "")
            declared = f_dim / per_y
        else:
            declared = one
    dims[unknown] = declared
    for name in loads:  # a load history carries the dimension of the equation's terms
        dims[name] = dimension_of(y_terms[0].expr, dims, unknown, "")
    forcing_dim = check_homogeneity(terms, dims, unknown, text)
    for k, q in ic_quantities.items():
        want = declared / dims["t"] ** k
        if q.dimensionality != want:
            raise UnitError(f"{derivative_name(unknown, k)}(0) is given in {q.given!r}, which is "
                            f"{dimension_text(q.dimensionality)}; it must be {dimension_text(want)}",
                            name=derivative_name(unknown, k) + "(0)")
    unknown_si = display_unit_for(declared)
    display = units.get(unknown, unknown_si)
    return UnitContext(unknown_si=unknown_si, unknown_display=display, time_display=time_unit,
                       forcing_si=display_unit_for(forcing_dim),
                       dimensions=tuple((k, v) for k, v in dims.items()),
                       symbol_units=tuple(symbol_units))
