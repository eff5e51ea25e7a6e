"""The SystemProblem value object: coupled linear constant-coefficient ODEs in several unknowns.

``make_system_problem`` turns a list of equations (text or SymPy ``Eq``), initial conditions
keyed by each unknown, parameter values and units into a checked :class:`SystemProblem`: as
many equations as unknowns (the names written with primes), every equation linear in the
unknowns with constant coefficients, one initial condition per order below each unknown's
highest derivative, every equation dimensionally homogeneous with one dimension per unknown.
``state_space_problem`` builds the same object from matrices A, B, C, D.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import sympy as sp

from ..errors import EquationError, InitialConditionError, ParameterError, ParseError, UnitError
from .parse import RESERVED_NAMES, T, parse_equation, parse_expression, primed_names
from .problem import _IC_KEY, _ZERO_POINTS, _ic_value, _terms_from_eq, classify_terms, \
    derivative_name, mapping_of, read_parameter, to_exact
from .units import (UnitContext, check_homogeneity, dimension_of, display_unit_for,
                    read_quantity, registry, time_dimension)

__all__ = ["SystemProblem", "make_system_problem", "state_space_problem"]


@dataclass(frozen=True, slots=True)
class SystemProblem:
    """Equations Σ_j Σ_k a_ijk x_j^(k) = f_i(t), i = 1..n, for t > 0, with x_j^(k)(0⁻) given.

    ``operators[i][j]`` holds a_ij0 … a_ijN (the coefficients of unknown j in equation i, by
    derivative order); ``orders[j]`` is unknown j's highest derivative over all equations;
    ``initial_values[j]`` its values at 0⁻ for orders below that. ``derived`` are named
    expressions of the unknowns (a stroke x1 - x2, a spring force k2 (x2 - x1)).
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
    quantities: tuple = ()
    units: tuple = ()          # ((unknown or derived name, UnitContext), ...) when units apply

    @property
    def text(self) -> str:
        return "; ".join(self.texts)

    def function(self, j: int) -> sp.Expr:
        return sp.Function(self.unknowns[j])(T)

    def functions(self) -> tuple[sp.Expr, ...]:
        return tuple(self.function(j) for j in range(len(self.unknowns)))

    def lhs(self, i: int) -> sp.Expr:
        """Σ_j Σ_k a_ijk x_j^(k) of equation i."""
        out = sp.Integer(0)
        for j, coeffs in enumerate(self.operators[i]):
            x = self.function(j)
            for k, a in enumerate(coeffs):
                if a != 0:
                    out += a * (x.diff(T, k) if k else x)
        return out

    def equation(self, i: int) -> sp.Eq:
        return sp.Eq(self.lhs(i), self.forcings[i], evaluate=False)

    def unit_context(self, name: str):
        """The UnitContext of an unknown or a derived quantity (None without units)."""
        return dict(self.units).get(name)

    @property
    def is_mechanical(self) -> bool:
        """True when every equation is second order in the form M x'' + C x' + K x = f."""
        return all(o == 2 for o in self.orders) and all(
            len(c) <= 3 for row in self.operators for c in row)

    def matrices(self):
        """(M, C, K) as SymPy matrices for a second-order system (see ``is_mechanical``)."""
        n = len(self.unknowns)
        out = []
        for k in (2, 1, 0):
            out.append(sp.Matrix(n, n, lambda i, j: self.operators[i][j][k]
                                 if k < len(self.operators[i][j]) else 0))
        return tuple(out)


_EQ_NUMBER = "equation {}"


def _unknowns_of(texts) -> list[str]:
    names: list[str] = []
    for text in texts:
        for name in primed_names(text):
            if name not in names:
                names.append(name)
    return names


def _normalise_eqs(eqs):
    """A list of SymPy Eq: the unknowns (applied functions), the Eqs in our t, parameter names."""
    funcs = []
    user_t = None
    for eq in eqs:
        if not isinstance(eq, sp.Eq):
            raise ParseError(f"a system is a list of equations (text or SymPy Eq), not "
                             f"{type(eq).__name__}")
        for f in sorted(eq.atoms(sp.core.function.AppliedUndef), key=str):
            if len(f.args) != 1 or not isinstance(f.args[0], sp.Symbol):
                raise ParseError(f"each unknown must be written as x(t), found {f}")
            if user_t is not None and f.args[0] != user_t:
                raise ParseError("all unknowns must be functions of the same time symbol")
            user_t = f.args[0]
            if f.func.__name__ not in funcs:
                funcs.append(f.func.__name__)
    if user_t is None:
        raise ParseError("the equations have no applied unknown functions such as x1(t)")
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


def _ic_target(key, unknowns) -> tuple[int, int]:
    """(unknown index, derivative order) that an initial-condition key names."""
    if isinstance(key, sp.Basic):
        if isinstance(key, sp.Subs) and isinstance(key.expr, sp.Derivative):
            f, order, point = key.expr.expr, key.expr.derivative_count, key.point[0]
        elif isinstance(key, sp.core.function.AppliedUndef) and len(key.args) == 1:
            f, order, point = key, 0, key.args[0]
        else:
            raise InitialConditionError(f"cannot read the initial-condition key {key}; use "
                                        "x1(0) or x1(t).diff(t).subs(t, 0)", key=str(key))
        name = f.func.__name__ if isinstance(f, sp.core.function.AppliedUndef) else str(f)
        if point != 0:
            raise InitialConditionError(f"initial condition {key} is given at t = {point}; the "
                                        "Laplace method needs the values at t = 0 (0⁻)",
                                        key=str(key))
    else:
        if not isinstance(key, str):
            raise InitialConditionError(f"initial-condition key {key!r} must be text such as "
                                        "\"x1'(0)\"", key=str(key))
        m = _IC_KEY.match(key)
        if not m:
            raise InitialConditionError(f"cannot read the initial-condition key {key!r}; write "
                                        "it as \"x1(0)\" or \"x1'(0)\"", key=key)
        name, primes, number, point = m.groups()
        order = int(number) if number is not None else len(primes)
        if point.replace(" ", "") not in _ZERO_POINTS:
            raise InitialConditionError(
                f"initial condition {key!r} is given at t = {point}; the Laplace method needs "
                "the values at t = 0 (just before it, 0⁻)", key=key)
    if name not in unknowns:
        raise InitialConditionError(f"initial condition {key!r} names {name!r}, which is not an "
                                    f"unknown of the system ({', '.join(unknowns)})", key=str(key))
    return unknowns.index(name), order


def make_system_problem(equations, ics=None, params=None, units=None,
                        derived=None) -> SystemProblem:
    """Check a coupled system and build a :class:`SystemProblem`.

    Parameters
    ----------
    equations : list of str or sympy.Eq
        One equation per unknown, e.g. ``["m1*x1'' + (k1 + k2)*x1 - k2*x2 = F0*u(t)",
        "m2*x2'' - k2*x1 + k2*x2 = 0"]``; the unknowns are the names written with primes.
    ics : mapping
        ``{"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0}``.
    params, units
        As for a single equation; ``units`` may name each unknown (``{"x1": "mm"}``).
    derived : mapping, optional
        Named expressions of the unknowns, ``{"stroke": "x1 - x2"}``.

    Raises
    ------
    ParseError, EquationError, InitialConditionError, ParameterError, UnitError
    """
    equations = list(equations)
    if not equations:
        raise EquationError("the system has no equations")
    if all(isinstance(e, sp.Eq) for e in equations):
        unknowns, eqs, names = _normalise_eqs(equations)
        texts = [sp.sstr(e.lhs) + " = " + sp.sstr(e.rhs) for e in eqs]
        term_lists = [_terms_from_eq(e) for e in eqs]
        positions = [""] * len(eqs)
    elif all(isinstance(e, str) for e in equations):
        unknowns = _unknowns_of(equations)
        if not unknowns:
            raise ParseError("no derivative of an unknown found in the system; write "
                             "derivatives with primes (x1', x2'')")
        texts, term_lists, positions, names = [], [], [], []
        for text in equations:
            parsed = parse_equation(text, unknowns=tuple(unknowns))
            texts.append(parsed.text)
            term_lists.append(parsed.terms)
            positions.append(parsed.text)
            names += [n for n in parsed.names if n not in names]
    else:
        raise ParseError("give the system as a list of equation texts or a list of SymPy Eq, "
                         "not a mixture")
    n = len(unknowns)
    if len(equations) != n:
        more = "more" if len(equations) > n else "fewer"
        raise EquationError(
            f"the system has {len(equations)} equations but {n} unknown(s) ({', '.join(unknowns)}):"
            f" {more} equations than unknowns. Each unknown is a name written with primes in "
            "some equation; names without derivatives are parameters")
    funcs = tuple(sp.Function(u)(T) for u in unknowns)
    raw = []
    for i, (terms, text) in enumerate(zip(term_lists, positions)):
        coeffs, forcing = classify_terms(terms, text, funcs)
        raw.append(({key: v for key, v in coeffs.items() if sp.simplify(v) != 0}, forcing))
    orders = []
    for j, u in enumerate(unknowns):
        used = [k for coeffs, _ in raw for (jj, k) in coeffs if jj == j]
        if not used or max(used) == 0:
            raise EquationError(f"the unknown {u} has no derivative in any equation; the system "
                                "is then partly algebraic, which this method does not solve")
        orders.append(int(max(used)))

    # initial conditions
    ic_values: dict = {}
    ic_quantities: dict = {}
    ic_names: set = set()
    for key, value in mapping_of(ics, "ics", '{"y(0)": 0, "y\'(0)": 0}').items():
        j, k = _ic_target(key, unknowns)
        label = derivative_name(unknowns[j], k) + "(0)"
        if (j, k) in ic_values:
            raise InitialConditionError(f"{label} is given twice", key=str(key))
        if k >= orders[j]:
            raise InitialConditionError(
                f"{unknowns[j]} is of order {orders[j]} in the system; conditions go up to "
                f"{derivative_name(unknowns[j], orders[j] - 1)}(0): remove {label}", key=str(key))
        v, q = _ic_value(value, label)
        if q is not None:
            ic_quantities[(j, k)] = q
        ic_names |= {s.name for s in v.free_symbols}
        ic_values[(j, k)] = v
    missing = [derivative_name(u, k) + "(0)" for j, u in enumerate(unknowns)
               for k in range(orders[j]) if (j, k) not in ic_values]
    if missing:
        raise InitialConditionError(
            "each unknown needs its initial values up to one order below its highest "
            f"derivative; missing: {', '.join(missing)}. Give them in ics=, e.g. ics={{"
            + ", ".join(repr(m) + ": 0" for m in missing) + "}", missing=missing)

    # parameters
    params = mapping_of(params, "params", "{'k': 800}")
    units = mapping_of(units, "units", "{'x': 'mm'}")
    known = set(names) | ic_names
    values: dict = {}
    quantities: dict = {}
    for name, value in params.items():
        name = str(name)
        if name not in known:
            raise ParameterError(f"parameter {name!r} does not appear in the equations or the "
                                 f"initial conditions (their names are: "
                                 f"{', '.join(sorted(known)) or 'none'})", name)
        values[name], q = read_parameter(name, value, units)
        if q is not None:
            quantities[name] = q
    subs = {sp.Symbol(k, positive=True): v for k, v in values.items()}
    operators = []
    forcings = []
    for i, (coeffs, forcing) in enumerate(raw):
        row = []
        for j in range(n):
            top = max([k for (jj, k) in coeffs if jj == j], default=-1)
            row.append(tuple(sp.expand(sp.Add(coeffs.get((j, k), 0)).subs(subs))
                             for k in range(top + 1)))
        operators.append(tuple(row))
        forcings.append(sp.expand(forcing.subs(subs)))
    initial = tuple(tuple(ic_values[(j, k)].subs(subs) for k in range(orders[j]))
                    for j in range(n))

    derived_exprs = []
    derived_raw = []   # before the values go in: what the units are read from
    for name, text in dict(derived or {}).items():
        if not re.fullmatch(r"[A-Za-z][A-Za-z_0-9 ]*", str(name)) or name in unknowns:
            raise ParameterError(f"derived quantity name {name!r}: use a plain name that is "
                                 "not an unknown's", str(name))
        expr = text if isinstance(text, sp.Basic) else parse_expression(
            str(text), tuple(unknowns), f"derived quantity {name!r}")
        stray = {s.name for s in expr.free_symbols} - known - {"t"}
        if stray:
            raise ParameterError(f"derived quantity {name!r} uses {', '.join(sorted(stray))}, "
                                 "which the system does not have", str(name))
        derived_raw.append((str(name), expr))
        derived_exprs.append((str(name), sp.expand(expr.subs(subs))))

    contexts = ()
    if quantities or ic_quantities or units:
        contexts = _unit_contexts(term_lists, positions, unknowns, names, quantities,
                                  ic_quantities, units, derived_raw)
    free = set()
    for row in operators:
        for c in row:
            for a in c:
                free |= a.free_symbols
    for f in forcings:
        free |= f.free_symbols
    for vals in initial:
        for v in vals:
            free |= v.free_symbols
    symbols = tuple(nm for nm in list(names) + sorted(ic_names - set(names))
                    if nm not in values and sp.Symbol(nm, positive=True) in free)
    return SystemProblem(texts=tuple(texts), unknowns=tuple(unknowns),
                         operators=tuple(operators), forcings=tuple(forcings),
                         orders=tuple(orders), initial_values=initial,
                         parameters=tuple(values.items()), symbols=symbols,
                         derived=tuple(derived_exprs), quantities=tuple(quantities.values()),
                         units=contexts)


def _unit_contexts(term_lists, positions, unknowns, names, quantities, ic_quantities, units,
                   derived):
    """One dimension per unknown (declared, from a condition, or inferred equation by
    equation), every equation homogeneous; a UnitContext for each unknown and derived name."""
    ureg = registry()
    one = ureg.Quantity(1, "").dimensionality
    time_unit, time_dim = time_dimension(units)
    for key in units:
        if key not in unknowns and key != "t" and key not in names and \
                key not in dict(derived):
            raise UnitError(f"units= names {key!r}, which is neither an unknown "
                            f"({', '.join(unknowns)}), t, nor a parameter", name=key)
    dims = {"t": time_dim}
    symbol_units = []
    for name in names:
        if name in quantities:
            dims[name] = quantities[name].dimensionality
        elif name in units:
            dims[name] = read_quantity(f"1 {units[name]}", name).dimensionality
            symbol_units.append((name, units[name]))
        else:
            dims[name] = one
    known: dict = {}
    for j, u in enumerate(unknowns):
        if u in units:
            known[u] = read_quantity(f"1 {units[u]}", u).dimensionality
        elif (j, 0) in ic_quantities:
            known[u] = ic_quantities[(j, 0)].dimensionality
    funcs = [sp.Function(u)(T) for u in unknowns]
    progress = True
    while progress and len(known) < len(unknowns):
        progress = False
        for terms in term_lists:
            eq_dim = None
            for tm in terms:
                inside = [u for u, f in zip(unknowns, funcs) if tm.expr.has(f)]
                if tm.expr != 0 and all(u in known for u in inside):
                    eq_dim = dimension_of(tm.expr, {**dims, **known}, "", "")
                    break
            if eq_dim is None:
                continue
            for tm in terms:
                inside = [u for u, f in zip(unknowns, funcs) if tm.expr.has(f)]
                if len(inside) == 1 and inside[0] not in known:
                    per = dimension_of(tm.expr, {**dims, **known, inside[0]: one}, "", "")
                    known[inside[0]] = eq_dim / per
                    progress = True
    for u in unknowns:
        known.setdefault(u, one)
    dims.update(known)
    forcing_dims = []
    for i, (terms, text) in enumerate(zip(term_lists, positions)):
        try:
            forcing_dims.append(check_homogeneity(terms, dims, unknowns[0], text))
        except UnitError as exc:
            raise UnitError(f"equation {i + 1}: {exc}", terms=exc.terms,
                            dimensions=exc.dimensions) from exc
    for (j, k), q in ic_quantities.items():
        want = dims[unknowns[j]] / dims["t"] ** k
        if q.dimensionality != want:
            raise UnitError(f"{derivative_name(unknowns[j], k)}(0) is given in {q.given!r}, "
                            "which does not match the dimension of "
                            f"{unknowns[j]}{' per time' * k}", name=derivative_name(unknowns[j], k))
    out = []
    table = tuple((k, v) for k, v in dims.items())
    for j, u in enumerate(unknowns):
        si = display_unit_for(dims[u])
        out.append((u, UnitContext(unknown_si=si, unknown_display=units.get(u, si),
                                   time_display=time_unit,
                                   forcing_si=display_unit_for(forcing_dims[j]),
                                   dimensions=table, symbol_units=tuple(symbol_units))))
    for name, expr in derived:
        d = dimension_of(expr, dims, unknowns[0], f"derived quantity {name!r}")
        si = display_unit_for(d)
        like = [units[u] for u in unknowns if u in units and dims[u] == d]
        out.append((name, UnitContext(unknown_si=si,
                                      unknown_display=units.get(name, like[0] if like else si),
                                      time_display=time_unit, forcing_si="",
                                      dimensions=table, symbol_units=tuple(symbol_units))))
    return tuple(out)


def state_space_problem(A, B, u, x0, outputs=None, D=None, names=None) -> SystemProblem:
    """x' = A x + B u(t), x(0⁻) = x0, outputs y = C x + D u as derived quantities.

    ``A`` (n×n), ``B`` (n×m), ``C`` (p×n), ``D`` (p×m) are NumPy or SymPy matrices (or nested
    lists); ``u`` is a list of m inputs in the forcing library's form (text such as
    ``"u(t) - u(t - 1)"``, a SymPy expression in t, or a ``derivpad.forcing`` load).
    """
    A = _matrix(A, "A")
    n = A.shape[0]
    if A.shape != (n, n):
        raise ParameterError(f"A must be square, not {A.shape[0]}×{A.shape[1]}", "A")
    B = _matrix(B, "B") if B is not None else sp.zeros(n, 0)
    if B.shape[0] != n:
        raise ParameterError(f"B must have {n} rows (one per state), not {B.shape[0]}", "B")
    inputs = [_input(v, k) for k, v in enumerate(list(u) if u is not None else [])]
    if len(inputs) != B.shape[1]:
        raise ParameterError(f"B has {B.shape[1]} columns but {len(inputs)} input(s) were "
                             "given; give one input per column of B", "u")
    x0 = list(x0) if x0 is not None else [0] * n
    if len(x0) != n:
        raise ParameterError(f"x0 must have {n} values (one per state), not {len(x0)}", "x0")
    names = list(names) if names else [f"x{j + 1}" for j in range(n)]
    texts, operators, forcings = [], [], []
    for i in range(n):
        row = []
        for j in range(n):
            a = -A[i, j]
            row.append((a, sp.Integer(1)) if i == j else (a,))
        operators.append(tuple(row))
        f = sp.expand(sum((B[i, k] * inputs[k] for k in range(len(inputs))), sp.Integer(0)))
        forcings.append(f)
        rhs = " + ".join(f"({sp.sstr(A[i, j])})*{names[j]}" for j in range(n) if A[i, j] != 0)
        texts.append(f"{names[i]}' = " + (rhs or "0") + (f" + {sp.sstr(f)}" if f != 0 else ""))
    derived = []
    if outputs is not None:
        C = _matrix(outputs, "C")
        if C.shape[1] != n:
            raise ParameterError(f"C must have {n} columns, not {C.shape[1]}", "C")
        Dm = _matrix(D, "D") if D is not None else sp.zeros(C.shape[0], len(inputs))
        if Dm.shape != (C.shape[0], len(inputs)):
            raise ParameterError(f"D must be {C.shape[0]}×{len(inputs)}", "D")
        xs = [sp.Function(v)(T) for v in names]
        for r in range(C.shape[0]):
            y = sum((C[r, j] * xs[j] for j in range(n)), sp.Integer(0)) + \
                sum((Dm[r, k] * inputs[k] for k in range(len(inputs))), sp.Integer(0))
            derived.append((f"y{r + 1}", sp.expand(y)))
    initial = tuple((to_exact(v, f"x0[{j}]"),) for j, v in enumerate(x0))
    free = set().union(*[e.free_symbols for e in list(A) + list(B) + forcings]) - {T}
    return SystemProblem(texts=tuple(texts), unknowns=tuple(names), operators=tuple(operators),
                         forcings=tuple(forcings), orders=tuple([1] * n), initial_values=initial,
                         parameters=(), symbols=tuple(sorted(s.name for s in free)),
                         derived=tuple(derived))


def _ours(expr: sp.Expr) -> sp.Expr:
    """A user's SymPy expression in our symbols: t real, parameters positive."""
    repl = {}
    for sym in expr.free_symbols:
        if sym.name == "t":
            repl[sym] = T
        elif sym.name in RESERVED_NAMES:
            raise ParseError(f"the symbol {sym.name!r} is reserved; rename it")
        else:
            repl[sym] = sp.Symbol(sym.name, positive=True)
    return expr.xreplace(repl)


def _matrix(value, name: str) -> sp.Matrix:
    try:
        rows = value.tolist() if hasattr(value, "tolist") else value
        m = sp.Matrix(rows)
    except (TypeError, ValueError, sp.SympifyError) as exc:
        raise ParameterError(f"{name} must be a matrix of numbers (NumPy array, SymPy Matrix or "
                             f"nested lists): {exc}", name) from exc
    if m.shape[0] == 0:
        raise ParameterError(f"{name} is empty", name)
    if any(x.has(sp.Symbol("t")) or x.has(T) for x in m):
        raise ParameterError(f"{name} may not depend on t: the coefficients must be constant",
                             name)
    return m.applyfunc(lambda x: to_exact(x if not isinstance(x, sp.Float) else float(x),
                                          name) if x.is_number else _ours(x))


def _input(value, k: int) -> sp.Expr:
    if hasattr(value, "expr") and hasattr(value, "description"):
        return value.expr
    if isinstance(value, str):
        return parse_expression(value, (), f"input u[{k}]")
    if isinstance(value, sp.Basic):
        return _ours(value)
    if isinstance(value, (int, float)):
        return to_exact(value, f"u[{k}]") * sp.Heaviside(T)
    raise ParameterError(f"input u[{k}] must be text, a SymPy expression in t or a "
                         "derivpad.forcing load", f"u[{k}]")
