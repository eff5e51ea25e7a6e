"""Forcing in Heaviside form: the builders engineers use, and the normaliser the engine uses.

Builders (``step``, ``ramp``, ``pulse``, ``triangle``, ``table``, ``impulse``, ``switched_sine``,
``switched_cosine``, ``switched_exp``, ``window``) return a :class:`Forcing`: a SymPy expression
in unit steps and impulses plus a one-line description the derivation prints. Forcings add.

``heaviside_pieces`` takes any admissible forcing expression (including SymPy ``Piecewise``)
and splits it into delayed pieces ``g(t - c) u(t - c)`` and impulses ``A δ(t - c)``, which is
the form the second shifting theorem needs.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

from ...errors import ForcingError, ParameterError
from .parse import T
from ..model.symbols import TAU

__all__ = ["Forcing", "ForcingPiece", "forcing_on_interval", "heaviside_pieces",
           "piecewise_to_heaviside", "TAU",
           "step", "ramp", "pulse", "triangle", "table", "impulse", "switched_sine",
           "switched_cosine", "switched_exp", "window"]

"""Local time after a delay, τ = t - c."""

u = sp.Heaviside


def _num(value, name: str) -> sp.Expr:
    from .values import to_exact  # local: problem imports parse, which this module shares
    try:
        return to_exact(value, name)
    except ParameterError as exc:
        raise ForcingError(str(exc), term=name) from exc


@dataclass(frozen=True, slots=True)
class Forcing:
    """A forcing function in Heaviside form with a plain description; ``a + b`` adds them."""

    expr: sp.Expr
    description: str
    dimension: object = None   # a measured record's dimension (pint), where it has a unit

    def __add__(self, other: "Forcing") -> "Forcing":
        if not isinstance(other, Forcing):
            return NotImplemented
        return Forcing(self.expr + other.expr, f"{self.description}; {other.description}")

    def __mul__(self, factor) -> "Forcing":
        k = _num(factor, "scale factor")
        return Forcing(k * self.expr, f"{k} × ({self.description})")

    __rmul__ = __mul__

    def __neg__(self) -> "Forcing":
        return self * -1


def step(size=1, start=0) -> Forcing:
    """A load of ``size`` applied suddenly at ``start`` and held: size·u(t - start)."""
    a, c = _num(size, "step size"), _num(start, "step start")
    _check_start(c, "step start")
    return Forcing(a * u(T - c), f"step of {a} at t = {c}")


def ramp(slope=1, start=0) -> Forcing:
    """A load growing at ``slope`` from ``start``: slope·(t - start)·u(t - start)."""
    k, c = _num(slope, "ramp slope"), _num(start, "ramp start")
    _check_start(c, "ramp start")
    return Forcing(k * (T - c) * u(T - c), f"ramp of slope {k} from t = {c}")


def pulse(size, start, duration) -> Forcing:
    """A rectangular pulse: size on start < t < start + duration, as two steps."""
    a, c, d = _num(size, "pulse size"), _num(start, "pulse start"), _num(duration, "pulse duration")
    _check_start(c, "pulse start")
    _check_positive(d, "pulse duration")
    return Forcing(a * (u(T - c) - u(T - c - d)),
                   f"rectangular pulse of {a} from t = {c} for {d}")


def triangle(peak, start, duration) -> Forcing:
    """A symmetric triangular pulse rising to ``peak`` at mid-duration, as three ramps."""
    a, c, d = _num(peak, "triangle peak"), _num(start, "triangle start"), \
        _num(duration, "triangle duration")
    _check_start(c, "triangle start")
    _check_positive(d, "triangle duration")
    k = 2 * a / d
    expr = k * ((T - c) * u(T - c) - 2 * (T - c - d / 2) * u(T - c - d / 2)
                + (T - c - d) * u(T - c - d))
    return Forcing(expr, f"triangular pulse peaking at {a}, from t = {c} for {d}")


def table(points, *, hold_last: bool = False) -> Forcing:
    """A piecewise-linear load history through (time, value) points, exactly as ramps and steps.

    Before the first point and after the last the load is zero, unless ``hold_last`` keeps
    the last value. Equal successive times make a jump (a step).
    """
    pts = [(_num(tp, f"table time #{i}"), _num(v, f"table value #{i}"))
           for i, (tp, v) in enumerate(_pairs(points))]
    if len(pts) < 2:
        raise ForcingError("a load table needs at least two (time, value) points", term="table")
    for i in range(1, len(pts)):
        if pts[i][0].is_number and pts[i - 1][0].is_number and pts[i][0] < pts[i - 1][0]:
            raise ForcingError(f"load table times must not decrease: point #{i} at t = "
                               f"{pts[i][0]} comes after t = {pts[i - 1][0]}", term="table")
    _check_start(pts[0][0], "first table time")
    expr = sp.Integer(0)
    value, slope, t_prev = sp.Integer(0), sp.Integer(0), pts[0][0]
    for i, (ti, vi) in enumerate(pts):
        predicted = value + slope * (ti - t_prev)   # where the last segment arrives
        if vi != predicted:
            expr += (vi - predicted) * u(T - ti)    # a jump
        if i + 1 < len(pts) and pts[i + 1][0] != ti:
            new_slope = (pts[i + 1][1] - vi) / (pts[i + 1][0] - ti)
        else:
            new_slope = sp.Integer(0)               # last point, or a jump comes next
        if new_slope != slope:
            expr += (new_slope - slope) * (T - ti) * u(T - ti)
        value, slope, t_prev = vi, new_slope, ti
    if not hold_last and value != 0:
        expr += -value * u(T - t_prev)
    t0, t1 = pts[0][0], pts[-1][0]
    return Forcing(expr, f"piecewise-linear load table of {len(pts)} points from t = {t0} "
                         f"to t = {t1}" + (", last value held" if hold_last else ""))


MAX_TABLE_POINTS = 100
"""Points a load table may have: each adds terms to the symbolic derivation (100 points take
about a minute with every check; see docs/forcing.md)."""


def _pairs(points):
    try:
        pairs = []
        for p in points:
            pairs.append(tuple(p))
            if len(pairs) > MAX_TABLE_POINTS:
                raise ForcingError(f"a load table of more than {MAX_TABLE_POINTS} points; each "
                                   "point adds terms to the derivation: thin the record to the "
                                   "points that shape the load, or split it into load cases",
                                   term="table")
    except TypeError as exc:
        raise ForcingError("a load table is a sequence of (time, value) pairs",
                           term="table") from exc
    for i, p in enumerate(pairs):
        if len(p) != 2:
            raise ForcingError(f"load table point #{i} is {p!r}; each point is (time, value)",
                               term="table")
    return pairs


def impulse(area=1, at=0) -> Forcing:
    """An impulse of the given area (N·s for a force) at time ``at``: area·δ(t - at)."""
    a, c = _num(area, "impulse area"), _num(at, "impulse time")
    _check_start(c, "impulse time")
    return Forcing(a * sp.DiracDelta(T - c), f"impulse of area {a} at t = {c}")


def switched_sine(amplitude, omega, start=0, phase=0) -> Forcing:
    """A sinusoid switched on at ``start``: A·sin(ω(t - start) + φ)·u(t - start)."""
    a, w, c, p = (_num(amplitude, "amplitude"), _num(omega, "angular frequency"),
                  _num(start, "switch-on time"), _num(phase, "phase"))
    _check_start(c, "switch-on time")
    return Forcing(a * sp.sin(w * (T - c) + p) * u(T - c),
                   f"sine of amplitude {a}, {w} rad per unit time, switched on at t = {c}")


def switched_cosine(amplitude, omega, start=0) -> Forcing:
    """A cosine switched on at ``start``: A·cos(ω(t - start))·u(t - start)."""
    a, w, c = _num(amplitude, "amplitude"), _num(omega, "angular frequency"), \
        _num(start, "switch-on time")
    _check_start(c, "switch-on time")
    return Forcing(a * sp.cos(w * (T - c)) * u(T - c),
                   f"cosine of amplitude {a}, {w} rad per unit time, switched on at t = {c}")


def switched_exp(amplitude, rate, start=0) -> Forcing:
    """An exponential switched on at ``start``: A·exp(rate·(t - start))·u(t - start)."""
    a, r, c = _num(amplitude, "amplitude"), _num(rate, "rate"), _num(start, "switch-on time")
    _check_start(c, "switch-on time")
    return Forcing(a * sp.exp(r * (T - c)) * u(T - c),
                   f"exponential {a}·exp({r}(t - {c})) switched on at t = {c}")


def window(coefficients, start, end) -> Forcing:
    """A polynomial load Σ c_k (t - start)^k acting only on start < t < end."""
    cs = [_num(cf, f"window coefficient #{k}") for k, cf in enumerate(coefficients)]
    a, b = _num(start, "window start"), _num(end, "window end")
    _check_start(a, "window start")
    _check_positive(b - a, "window length")
    poly = sp.Add(*[cf * (T - a) ** k for k, cf in enumerate(cs)])
    expr = poly * u(T - a) - poly * u(T - b)
    return Forcing(expr, f"polynomial window of degree {len(cs) - 1} on {a} < t < {b}")


def _check_start(c, what):
    if c.is_number and c < 0:
        raise ForcingError(f"{what} is {c}; loads start at t ≥ 0 (the conditions are at 0⁻)",
                           term=what)


def _check_positive(d, what):
    if d.is_number and not d > 0:
        raise ForcingError(f"{what} is {d}; it must be positive", term=what)


# --- normalisation -----------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class ForcingPiece:
    """``shape(τ)`` switched on at t = delay (τ = t - delay); or an impulse of area ``shape``."""

    delay: sp.Expr
    shape: sp.Expr
    impulse: bool = False


def piecewise_to_heaviside(expr: sp.Expr) -> sp.Expr:
    """Rewrite each Piecewise in t as f_1 + Σ (f_{i+1} - f_i) u(t - t_i)."""
    pieces = list(expr.atoms(sp.Piecewise))
    for pw in pieces:
        expr = expr.xreplace({pw: _one_piecewise(pw)})
    return expr


def _one_piecewise(pw: sp.Piecewise) -> sp.Expr:
    thresholds, values = [], []
    for value, cond in pw.args:
        values.append(value)
        if cond == sp.true:
            break
        if isinstance(cond, (sp.StrictLessThan, sp.LessThan)) and cond.lhs == T:
            thresholds.append(cond.rhs)
        elif isinstance(cond, (sp.StrictGreaterThan, sp.GreaterThan)) and cond.rhs == T:
            thresholds.append(cond.lhs)
        else:
            raise ForcingError(
                f"cannot convert the Piecewise condition {cond} to unit steps: write the pieces "
                "as (f1, t < t1), (f2, t < t2), ..., (fn, True) with increasing t_i, or use "
                "derivpad.forcing.table", term=str(pw))
    else:
        values.append(sp.Integer(0))  # no True branch: zero beyond the last threshold
    for a, b in zip(thresholds, thresholds[1:]):
        if (b - a).is_number and b < a:
            raise ForcingError(f"Piecewise thresholds must increase; {b} comes after {a}",
                               term=str(pw))
    out = values[0]
    for ti, (f_prev, f_next) in zip(thresholds, zip(values, values[1:])):
        out += (f_next - f_prev) * u(T - ti)
    return out


def forcing_on_interval(expr: sp.Expr, point: sp.Expr) -> sp.Expr:
    """The forcing on the open interval between breakpoints that contains ``point``.

    Each step u(t - c) becomes its value there (0 or 1) and impulses vanish (they act only at
    their instants).
    """
    expr = piecewise_to_heaviside(expr)
    repl = {}
    for h in expr.atoms(sp.Heaviside):
        repl[h] = sp.Integer(1) if h.args[0].subs(T, point) > 0 else sp.Integer(0)
    repl.update({d: sp.Integer(0) for d in expr.atoms(sp.DiracDelta)})
    return expr.xreplace(repl)


def _threshold(arg: sp.Expr, what: str) -> tuple[sp.Expr, int]:
    """For u(a t + b) or δ(a t + b): the switching time -b/a and the sign of a."""
    poly = sp.Poly(arg, T) if arg.is_polynomial(T) else None
    if poly is None or poly.degree() != 1:
        raise ForcingError(f"{what}({arg}) switches at a time that is not a fixed point; write "
                           f"{what}(t - c) with a constant c", term=str(arg))
    a, b = poly.all_coeffs()
    if a.is_number:
        sign = 1 if a > 0 else -1
    elif a.is_positive:
        sign = 1
    elif a.is_negative:
        sign = -1
    else:
        raise ForcingError(f"the sign of the slope in {what}({arg}) is unknown; write "
                           f"{what}(t - c)", term=str(arg))
    return sp.simplify(-b / a), sign


def heaviside_pieces(expr: sp.Expr) -> tuple[list[ForcingPiece], list[str]]:
    """Split a forcing for t > 0 into delayed pieces and impulses; also return the notes.

    Each additive term becomes ``g(t - c) u(t - c)`` (c = 0 for terms acting from the start)
    or ``A δ(t - c)``. Steps with c ≤ 0 act from t = 0; impulses before 0 are dropped with a
    note; an impulse at 0 acts after the 0⁻ conditions.
    """
    notes: list[str] = []
    expr = sp.expand(piecewise_to_heaviside(expr), power_exp=False, log=False, trig=False)
    pieces: list[ForcingPiece] = []
    for term in sp.Add.make_args(expr):
        for factor_term in _distribute_steps(term):
            pieces.extend(_term_pieces(factor_term, notes))
    switches = {p.delay for p in pieces}
    if len(switches) > MAX_SWITCHES:
        msg = (f"the forcing switches at {len(switches)} different times; the limit is "
               f"{MAX_SWITCHES} (each switching time is a part of the derivation): combine "
               "pulses, or split the load into load cases")
        raise ForcingError(msg, term="forcing")
    return _group(pieces), notes


MAX_SWITCHES = 120
"""Distinct switching times a forcing may have (120 steps derive and verify in about ten
seconds on one core; see docs/forcing.md)."""


def _distribute_steps(term: sp.Expr) -> list[sp.Expr]:
    """u(c - t) = 1 - u(t - c): expand so every step in a term switches on."""
    out = [sp.Integer(1)]
    for factor in sp.Mul.make_args(term):
        base, exp = factor.as_base_exp()
        if isinstance(base, sp.Heaviside) and exp.is_Integer and exp > 0:
            c, sign = _threshold(base.args[0], "u")
            normal = u(T - c) if sign > 0 else 1 - u(T - c)
            out = [o * normal for o in out]  # u² = u for t ≠ c
        else:
            out = [o * factor for o in out]
    return [t for o in out for t in sp.Add.make_args(sp.expand(o, power_exp=False, trig=False))]


def _term_pieces(term: sp.Expr, notes: list[str]) -> list[ForcingPiece]:
    steps, deltas, rest = [], [], []
    for factor in sp.Mul.make_args(term):
        base, exp = factor.as_base_exp()
        if isinstance(base, sp.Heaviside):
            steps.append(_threshold(base.args[0], "u")[0])
        elif isinstance(base, sp.DiracDelta):
            if len(base.args) > 1:
                raise ForcingError("derivatives of the impulse (doublets) are not supported",
                                   term=str(factor))
            if exp != 1:
                raise ForcingError(f"a power of an impulse ({factor}) has no meaning",
                                   term=str(factor))
            c, sign = _threshold(base.args[0], "delta")
            a = sp.Poly(base.args[0], T).all_coeffs()[0]
            deltas.append((c, 1 / abs(a)))
        else:
            rest.append(factor)
    g = sp.Mul(*rest)
    start = sp.Integer(0)
    for c in steps:
        start = _later(start, c)
    if deltas:
        if len(deltas) > 1:
            raise ForcingError(f"a product of impulses ({term}) has no meaning", term=str(term))
        c, scale = deltas[0]
        if c.is_number and c < 0:
            notes.append(f"the impulse at t = {c} lies before t = 0 and does not act")
            return []
        if steps and c.is_number and start.is_number:
            if c < start:
                return []
            if c == start and start != 0:
                raise ForcingError(f"an impulse at t = {c} multiplied by a step switching at the "
                                   "same time is ambiguous", term=str(term))
        area = sp.simplify(scale * g.subs(T, c))
        if area.has(T):
            raise ForcingError(f"cannot read the impulse term {term}", term=str(term))
        return [ForcingPiece(c if not (c.is_number and c < 0) else sp.Integer(0), area, True)]
    if start.is_number and start < 0:
        start = sp.Integer(0)
    shape = sp.expand(g.subs(T, TAU + start), power_exp=False, trig=False)
    return [ForcingPiece(start, shape, False)]


def _later(a: sp.Expr, b: sp.Expr) -> sp.Expr:
    """The later of two switching times (u(t-a) u(t-b) = u(t - max(a, b)))."""
    diff = sp.simplify(b - a)
    if diff.is_nonnegative:
        return b
    if diff.is_nonpositive:
        return a
    if diff.is_number:
        return b if diff >= 0 else a
    raise ForcingError(f"cannot tell which of the switching times {a} and {b} is later; give "
                       "their values", term=f"u(t - {a})*u(t - {b})")


def _group(pieces: list[ForcingPiece]) -> list[ForcingPiece]:
    """Sum pieces of the same delay and kind; drop those that cancel."""
    grouped: dict[tuple, sp.Expr] = {}
    for p in pieces:
        key = (p.delay, p.impulse)
        grouped[key] = grouped.get(key, 0) + p.shape
    out = []
    for (delay, imp), shape in grouped.items():
        shape = sp.expand(shape, power_exp=False, trig=False)
        if shape != 0:
            out.append(ForcingPiece(delay, shape, imp))
    return sorted(out, key=lambda p: (_sort_key(p.delay), p.impulse))


def _sort_key(c):
    return (0, float(c), "") if c.is_number else (1, 0.0, sp.sstr(c))
