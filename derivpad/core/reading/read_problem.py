"""Reading a problem: one equation or a list of them (text or SymPy ``Eq``) into a Problem.

``make_problem`` is the one reader for one unknown or many: it finds the unknowns (the names
written with primes, or ``unknown=``), sorts each term into a_ijk x_j^(k) or forcing (refusing
nonlinear and time-varying terms), reads the initial conditions at 0⁻ and the parameters
(numbers, quantities with units, or ``derivpad.forcing`` loads on a right side), and checks the
units equation by equation.
"""

from __future__ import annotations

import re

import sympy as sp

from ...errors import (EquationError, ForcingError, InitialConditionError, NonlinearTermError,
                      ParameterError, ParseError, UnknownNameError, VariableCoefficientError)
from .parse import RESERVED_NAMES, T, Term, parse_equation, parse_expression, primed_names
from ..model.problem import Problem, derivative_name
from .values import mapping_of, read_parameter, to_exact
from .problem_units import unit_contexts
from .units import read_quantity

__all__ = ["classify_terms", "make_problem"]


def make_problem(equations, ics=None, params=None, unknown: str | None = None, units=None,
                 derived=None) -> Problem:
    """Check the input and build a :class:`Problem`.

    Parameters
    ----------
    equations : str, sympy.Eq, or a list of them
        One ODE (``"y'' + 4*y' + 13*y = 2*u(t - 1)"``) or a coupled system, one equation per
        unknown; the unknowns are the names written with primes.
    ics : mapping
        Initial values at 0⁻, ``{"y(0)": 0, "y'(0)": 1}`` (text keys or SymPy objects).
    params : mapping, optional
        Values for parameters: numbers, numeric text, quantities with units, or a
        ``derivpad.forcing`` load for a name on a right side; the others stay symbolic.
    unknown : str, optional
        For one equation: the unknown's name when no name carries primes.
    units : mapping, optional
        Display units of the unknowns and of t (``{"x": "mm", "t": "ms"}``), or units for
        parameters given as plain numbers (``{"k": "N/m"}``).
    derived : mapping, optional
        Named expressions of the unknowns to report, ``{"stroke": "x1 - x2"}``.

    Raises
    ------
    ParseError, EquationError, InitialConditionError, ParameterError, UnitError, ForcingError
    """
    read = _read_equations(equations, unknown)
    unknowns, texts, term_lists, positions, names = read
    funcs = tuple(sp.Function(u)(T) for u in unknowns)
    raw = [classify_terms(terms, text, funcs) for terms, text in zip(term_lists, positions)]
    raw = [({key: v for key, v in coeffs.items() if sp.simplify(v) != 0}, forcing)
           for coeffs, forcing in raw]
    orders = _orders(unknowns, raw, texts)
    params = mapping_of(params, "params", "{'k': 800}")
    units = mapping_of(units, "units", "{'x': 'mm'}")
    if "e" in names and "e" not in params:
        text = positions[0]
        raise UnknownNameError(
            "'e' would be read as a symbolic parameter; for the exponential write exp(...), as "
            "in exp(-2*t), or give e a value in params", "e", text,
            _name_position(text, "e") if text else None)
    ic_values, ic_quantities, ic_names = _initial_conditions(ics, unknowns, orders)
    known = set(names) | ic_names
    values, loads, quantities = _read_params(params, known, raw, units)
    subs = {sp.Symbol(k, positive=True): v for k, v in values.items()}
    derived_raw, derived_exprs = _derived(derived, unknowns, known, subs)
    contexts = ()
    if quantities or ic_quantities or units:
        contexts = unit_contexts(term_lists, positions, unknowns, names, quantities,
                                 ic_quantities, units, derived_raw, loads)
    load_subs = {sp.Symbol(k, positive=True): f.expr for k, f in loads.items()}
    if load_subs:  # a derived quantity may name a load (absolute acceleration z'' + a_g)
        derived_exprs = [(n, sp.expand(e.subs(load_subs))) for n, e in derived_exprs]
    operators, forcings = _substituted(raw, len(unknowns), subs, load_subs, texts)
    _check_order_kept(unknowns, operators, orders)
    initial = tuple(tuple(ic_values[(j, k)].subs(subs) for k in range(orders[j]))
                    for j in range(len(unknowns)))
    names = [n for n in names if n not in loads]
    symbols = _remaining(names, ic_names, values, operators, forcings, initial)
    return Problem(texts=tuple(texts), unknowns=tuple(unknowns), operators=operators,
                   forcings=forcings, orders=tuple(orders), initial_values=initial,
                   parameters=tuple(values.items()), symbols=symbols,
                   derived=tuple(derived_exprs),
                   loads=tuple((n, f.description, f.expr) for n, f in loads.items()),
                   quantities=tuple(quantities.values()), unit_contexts=contexts)


def _read_equations(equations, unknown):
    """(unknowns, texts, term lists, texts for positions, parameter names) of the input."""
    single = isinstance(equations, (str, sp.Eq)) or not isinstance(equations, (list, tuple))
    if not single and unknown is not None:
        raise ParameterError("unknown= is for a single equation; a system's unknowns are the "
                             "names written with primes", "unknown")
    eqs = [equations] if single else list(equations)
    if not eqs:
        raise EquationError("the system has no equations")
    if all(isinstance(e, sp.Eq) for e in eqs):
        unknowns, fixed, names = _normalise_eqs(eqs, unknown)
        texts = [sp.sstr(e.lhs) + " = " + sp.sstr(e.rhs) for e in fixed]
        term_lists = [_terms_from_eq(e) for e in fixed]
        positions = [""] * len(fixed)
    elif single:
        parsed = parse_equation(eqs[0], unknown)
        unknowns, names = [parsed.unknown], list(parsed.names)
        texts, term_lists, positions = [parsed.text], [parsed.terms], [parsed.text]
    elif all(isinstance(e, str) for e in eqs):
        unknowns = _unknowns_of(eqs)
        if not unknowns:
            raise ParseError("no derivative of an unknown found in the system; write "
                             "derivatives with primes (x1', x2'')")
        texts, term_lists, positions, names = [], [], [], []
        for text in eqs:
            parsed = parse_equation(text, unknowns=tuple(unknowns))
            texts.append(parsed.text)
            term_lists.append(parsed.terms)
            positions.append(parsed.text)
            names += [n for n in parsed.names if n not in names]
    else:
        raise ParseError("give the system as a list of equation texts or a list of SymPy Eq, "
                         "not a mixture")
    if len(eqs) != len(unknowns):
        more = "more" if len(eqs) > len(unknowns) else "fewer"
        raise EquationError(
            f"the system has {len(eqs)} equations but {len(unknowns)} unknown(s) "
            f"({', '.join(unknowns)}): {more} equations than unknowns. Each unknown is a name "
            "written with primes in some equation; names without derivatives are parameters")
    return unknowns, texts, term_lists, positions, names


def _unknowns_of(texts) -> list[str]:
    names: list[str] = []
    for text in texts:
        for name in primed_names(text):
            if name not in names:
                names.append(name)
    return names


def _normalise_eqs(eqs, unknown=None):
    """SymPy Eqs: the unknowns (applied functions), the Eqs in our t, the parameter names."""
    funcs: list[str] = []
    user_t = None
    for eq in eqs:
        for f in sorted(eq.atoms(sp.core.function.AppliedUndef), key=str):
            if unknown is not None and f.func.__name__ != unknown:
                continue
            if len(f.args) != 1 or not isinstance(f.args[0], sp.Symbol):
                raise ParseError(f"each unknown must be written as x(t), found {f}")
            if user_t is not None and f.args[0] != user_t:
                raise ParseError("all unknowns must be functions of the same time symbol")
            user_t = f.args[0]
            if f.func.__name__ not in funcs:
                funcs.append(f.func.__name__)
    if user_t is None:
        where = f"an applied function {unknown}(t)" if unknown else \
            "applied unknown functions such as y(t)"
        raise ParseError(f"the equation has no {where}")
    if len(eqs) == 1 and len(funcs) != 1:
        raise ParseError("the SymPy equation must contain exactly one applied unknown function "
                         f"such as y(t); found {sorted(funcs)}: pass unknown='y'")
    repl = {user_t: T}
    names: list[str] = []
    for eq in eqs:
        for sym in sorted(eq.free_symbols - {user_t}, key=lambda x: x.name):
            if sym.name in RESERVED_NAMES:
                raise ParseError(f"the symbol {sym.name!r} is reserved; rename it")
            repl[sym] = sp.Symbol(sym.name, positive=True)
            if sym.name not in names:
                names.append(sym.name)
    fixed = [sp.Eq(eq.lhs.xreplace(repl), eq.rhs.xreplace(repl), evaluate=False) for eq in eqs]
    return funcs, fixed, names


def _terms_from_eq(eq: sp.Eq) -> tuple[Term, ...]:
    terms = [Term(a, 0, 0, "lhs") for a in sp.Add.make_args(sp.expand(eq.lhs))]
    terms += [Term(a, 0, 0, "rhs") for a in sp.Add.make_args(sp.expand(eq.rhs))]
    return tuple(terms)


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
        where = (fragment, text, term.start, term.end - term.start)
        if any(flat.has(y) for y in ys):
            raise NonlinearTermError(f"the term {fragment!r} is not linear in {names}", *where)
        present = [dummies[key] for key in found]
        for key in found:
            a = sp.expand(sp.diff(flat, dummies[key]))
            if a.has(*present):
                raise NonlinearTermError(
                    f"the term {fragment!r} is nonlinear in the unknown"
                    + ("s" if len(ys) > 1 else "") + ": products, powers and functions of "
                    "the unknowns cannot be solved by the Laplace transform", *where)
            if a.has(T):
                raise VariableCoefficientError(
                    f"the term {fragment!r} has a coefficient that varies with t; the Laplace "
                    "method here needs constant coefficients", *where)
            coeffs[key] = coeffs.get(key, 0) + sign * a
        rest = flat.subs({d: 0 for d in present}) if present else flat
        forcing -= sign * rest
    return coeffs, forcing


def _orders(unknowns, raw, texts) -> list[int]:
    """Each unknown's highest derivative over all equations; an unknown without one makes the
    problem algebraic."""
    orders = []
    for j, u in enumerate(unknowns):
        used = [k for coeffs, _ in raw for (jj, k) in coeffs if jj == j]
        if not used or max(used) == 0:
            if len(unknowns) == 1:
                raise EquationError(f"the equation has no derivative of {u}; it is algebraic, "
                                    "not an ODE", text=texts[0])
            raise EquationError(f"the unknown {u} has no derivative in any equation; the system "
                                "is then partly algebraic, which this method does not solve")
        orders.append(int(max(used)))
    return orders


# -- initial conditions ---------------------------------------------------------------------
_IC_KEY = re.compile(r"^\s*([A-Za-z][A-Za-z_0-9]*)\s*('*|\^\(\s*(\d+)\s*\))\s*\(\s*(.*?)\s*\)\s*$")
_ZERO_POINTS = {"0", "0-", "0^-", "0⁻", "-0"}


def _initial_conditions(ics, unknowns, orders):
    """({(j, k): value}, {(j, k): Quantity}, names in the values), each unknown complete."""
    values: dict = {}
    quantities: dict = {}
    names: set = set()
    for key, value in mapping_of(ics, "ics", '{"y(0)": 0, "y\'(0)": 0}').items():
        j, k = _ic_target(key, unknowns)
        label = derivative_name(unknowns[j], k) + "(0)"
        if (j, k) in values:
            raise InitialConditionError(f"{label} is given twice", key=str(key))
        if k >= orders[j]:
            top = derivative_name(unknowns[j], orders[j] - 1) + "(0)"
            msg = (f"an order-{orders[j]} ODE takes conditions only up to {top}; remove {label}"
                   if len(unknowns) == 1 else
                   f"{unknowns[j]} is of order {orders[j]} in the system; conditions go up to "
                   f"{top}: remove {label}")
            raise InitialConditionError(msg, key=str(key), extra=[label])
        v, q = _ic_value(value, label)
        if q is not None:
            quantities[(j, k)] = q
        names |= {s.name for s in v.free_symbols}
        values[(j, k)] = v
    missing = [derivative_name(u, k) + "(0)" for j, u in enumerate(unknowns)
               for k in range(orders[j]) if (j, k) not in values]
    if missing:
        example = "ics={" + ", ".join(repr(m) + ": 0" for m in missing) + "}"
        if len(unknowns) == 1:
            u, n = unknowns[0], orders[0]
            msg = (f"an order-{n} ODE needs {n} initial condition(s), {u}(0) to "
                   f"{derivative_name(u, n - 1)}(0); missing: {', '.join(missing)}. Give them "
                   f"in ics=, e.g. {example}")
        else:
            msg = ("each unknown needs its initial values up to one order below its highest "
                   f"derivative; missing: {', '.join(missing)}. Give them in ics=, e.g. "
                   f"{example}")
        raise InitialConditionError(msg, missing=missing)
    return values, quantities, names


def _ic_target(key, unknowns) -> tuple[int, int]:
    """(unknown index, derivative order) that an initial-condition key names, at t = 0."""
    if isinstance(key, sp.Basic):
        name, order, point = _sympy_ic_key(key, unknowns)
        shown = str(key)
    elif isinstance(key, str):
        m = _IC_KEY.match(key)
        if not m:
            u = unknowns[0]
            raise InitialConditionError(
                f"cannot read the initial-condition key {key!r}; write it as \"{u}(0)\", "
                f"\"{u}'(0)\", \"{u}''(0)\" or \"{u}^(3)(0)\"", key=key)
        name, primes, number, point = m.groups()
        order = int(number) if number is not None else len(primes)
        shown = repr(key)
        if point.replace(" ", "") not in _ZERO_POINTS:
            raise InitialConditionError(
                f"initial condition {key!r} is given at t = {point}; the Laplace method needs "
                "the values at t = 0 (just before it, 0⁻). Shift time so the conditions are at "
                "0, or solve for the values at 0 first", key=key)
    else:
        raise InitialConditionError(
            f"initial-condition key {key!r} must be text such as \"{unknowns[0]}'(0)\" or a "
            f"SymPy object such as {unknowns[0]}(0)", key=str(key))
    if name not in unknowns:
        msg = (f"initial condition {shown} names {name!r}, but the unknown is {unknowns[0]!r}"
               if len(unknowns) == 1 else
               f"initial condition {shown} names {name!r}, which is not an unknown of the "
               f"system ({', '.join(unknowns)})")
        raise InitialConditionError(msg, key=str(key))
    return unknowns.index(name), order


def _sympy_ic_key(key: sp.Basic, unknowns):
    if isinstance(key, sp.Subs) and isinstance(key.expr, sp.Derivative):
        f, order, point = key.expr.expr, key.expr.derivative_count, key.point[0]
    elif isinstance(key, sp.core.function.AppliedUndef) and len(key.args) == 1:
        f, order, point = key, 0, key.args[0]
    else:
        u = unknowns[0]
        raise InitialConditionError(f"cannot read the initial-condition key {key}; use {u}(0) "
                                    f"or {u}(t).diff(t).subs(t, 0)", key=str(key))
    if point != 0:
        raise InitialConditionError(f"initial condition {key} is given at t = {point}; the "
                                    "Laplace method needs the values at t = 0 (0⁻)",
                                    key=str(key))
    name = f.func.__name__ if isinstance(f, sp.core.function.AppliedUndef) else str(f)
    return name, order, point


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


# -- parameters -----------------------------------------------------------------------------
def _read_params(params: dict, known: set, raw, units: dict):
    """params= read and checked: (exact values, loads given as derivpad.forcing, quantities
    with units). A name must be in the equations or the conditions; a value may name other
    parameters, and may depend on t only as a load on a right side."""
    values: dict = {}
    loads: dict = {}
    quantities: dict = {}
    right = set().union(*[f.free_symbols for _, f in raw])
    left = set().union(*[(sp.Integer(0) + c).free_symbols for coeffs, _ in raw
                         for c in coeffs.values()])
    for name, value in params.items():
        name = str(name)
        if name not in known:
            raise ParameterError(
                f"parameter {name!r} does not appear in the equation or the initial conditions "
                f"(its names are: {', '.join(sorted(known)) or 'none'})", name)
        symbol = sp.Symbol(name, positive=True)
        if hasattr(value, "expr") and hasattr(value, "description"):  # a forcing.Forcing
            if symbol not in right or symbol in left:
                raise ParameterError(f"{name!r} is given a load history but is not a load on "
                                     "the right side (it must stand in the forcing only)", name)
            loads[name] = value
            continue
        values[name], quantity = read_parameter(name, value, units)
        if values[name].has(T) and symbol in left:
            raise ParameterError(f"{name}: a value that depends on t is a load; it may stand on "
                                 "the right side only (a time-varying coefficient is outside "
                                 "the method)", name)
        stray = sorted(x.name for x in values[name].free_symbols
                       if x.name not in known and x != T)
        if stray:
            msg = (f"{name}: {value!r} is not a number, and {stray[0]!r} is not a parameter of "
                   f"the equation; give a number such as 2.5 or a quantity such as '2 kg' "
                   f"(params={{{name!r}: 2.5}})")
            raise ParameterError(msg, name)
        if quantity is not None:
            quantities[name] = quantity
    return values, loads, quantities


def _substituted(raw, n: int, subs: dict, load_subs: dict, texts):
    """The operators and forcings with the values (and loads) put in, checked real."""
    operators, forcings = [], []
    for i, (coeffs, forcing) in enumerate(raw):
        row = []
        for j in range(n):
            top = max([k for (jj, k) in coeffs if jj == j], default=-1)
            row.append(tuple(sp.expand(sp.Add(coeffs.get((j, k), 0)).subs(subs))
                             for k in range(top + 1)))
        for coeffs_j in row:
            for c in coeffs_j:
                if c.has(sp.I) or (c.is_number and c.is_real is False):
                    raise EquationError(f"a coefficient is {c}, which is not a real number (a "
                                        "square root of a negative value?); the model needs "
                                        "real coefficients", term=str(c), text=texts[i])
        f = forcing.subs(load_subs) if load_subs else forcing
        f = sp.expand(f.subs(subs)) if subs else sp.expand(f)
        if f.has(sp.I, sp.zoo, sp.nan, sp.oo):
            raise ForcingError(f"the forcing {f} is not a real, finite function of t", str(f))
        operators.append(tuple(row))
        forcings.append(f)
    return tuple(operators), tuple(forcings)


def _check_order_kept(unknowns, operators, orders) -> None:
    """With the values in, each unknown's highest derivative still appears somewhere."""
    for j, u in enumerate(unknowns):
        top = [row[j][orders[j]] for row in operators if len(row[j]) > orders[j]]
        if all(c == 0 for c in top):
            msg = (f"with these values the coefficient of {derivative_name(u, orders[j])} is "
                   "zero; the ODE's order drops: check the values")
            raise ParameterError(msg, "")


def _derived(derived, unknowns, known, subs):
    """derived=: (name, expression) before and after the values go in."""
    raw, out = [], []
    for name, text in mapping_of(derived, "derived", "{'stroke': 'x1 - x2'}").items():
        if not re.fullmatch(r"[A-Za-z][A-Za-z_0-9 ]*", str(name)) or name in unknowns:
            raise ParameterError(f"derived quantity name {name!r}: use a plain name that is "
                                 "not an unknown's", str(name))
        expr = text if isinstance(text, sp.Basic) else parse_expression(
            str(text), tuple(unknowns), f"derived quantity {name!r}")
        stray = {s.name for s in expr.free_symbols} - known - {"t"}
        if stray:
            raise ParameterError(f"derived quantity {name!r} uses {', '.join(sorted(stray))}, "
                                 "which the problem does not have", str(name))
        raw.append((str(name), expr))
        out.append((str(name), sp.expand(expr.subs(subs))))
    return raw, out


def _remaining(names, ic_names, values, operators, forcings, initial) -> tuple[str, ...]:
    """The parameter names left symbolic that the problem still contains, in order."""
    free: set = set()
    for row in operators:
        for c in row:
            for a in c:
                free |= a.free_symbols
    for f in forcings:
        free |= f.free_symbols
    for vals in initial:
        for v in vals:
            free |= v.free_symbols
    order = list(names) + sorted(ic_names - set(names))
    return tuple(n for n in order if n not in values and sp.Symbol(n, positive=True) in free)


def _name_position(text: str, name: str) -> int | None:
    m = re.search(rf"(?<![A-Za-z_0-9]){re.escape(name)}(?![A-Za-z_0-9])", text)
    return m.start() if m else None
