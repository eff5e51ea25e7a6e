"""Engineering results from the closed form: poles, damping, peak, dynamic load factor, settling.

Each result says how it was found and where the formula comes from. A result is stated only
where it means something: damping figures for oscillatory or second-order systems, the
dynamic load factor where the load has a peak and the system a static stiffness (a_0 ≠ 0),
settling, overshoot and rise time where the response settles to a non-zero final value.
Peaks are found at zeros of y'(t), bracketed on a fine grid and refined by Brent's method,
not read off the grid.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from scipy.optimize import brentq

from .numeric_model import NumericModel

__all__ = ["Result", "engineering_results"]

_VIB = "single-degree-of-freedom vibration theory (e.g. Thomson, Theory of Vibration; from memory)"
_CTRL = "second-order system time-response definitions (control texts, e.g. Ogata; from memory)"
_BIGGS = ("dynamic load factor: peak response over the static response to the peak load "
          "(J. M. Biggs, Introduction to Structural Dynamics; from memory)")
_REFINE = "zero of y'(t) bracketed on a 20 000-point grid, refined by Brent's method (scipy.optimize.brentq)"


@dataclass(frozen=True, slots=True)
class Result:
    """One engineering result: value (a pint Quantity where a unit applies), unit, how, source."""

    key: str
    label: str
    value: object
    unit: str
    formula: str
    source: str

    @property
    def magnitude(self):
        """The plain number (or tuple of numbers) without its unit."""
        return getattr(self.value, "magnitude", self.value)

    def to_dict(self) -> dict:
        mag = _json_value(self.magnitude)
        return {"key": self.key, "label": self.label, "value": mag, "unit": self.unit,
                "formula": self.formula, "source": self.source}


def _json_value(v):
    """Numbers, tuples of numbers and tuples of tuples (mode shapes) as JSON values."""
    if isinstance(v, (list, tuple)):
        return [_json_value(x) for x in v]
    return _json_number(v)


def _json_number(v):
    if isinstance(v, complex):
        return {"re": v.real, "im": v.imag}
    if isinstance(v, (bool, str)):
        return v
    v = float(v)
    return v if math.isfinite(v) else None


def _quantity(value, unit: str, units):
    """value in SI → pint Quantity in the unit given (when the problem has units)."""
    if units is None or not unit or isinstance(value, (tuple, list, str)):
        return value
    from .units import registry
    ureg = registry()
    return ureg.Quantity(value, ureg.parse_units(unit))


def _polynomial_text(a) -> str:
    """a_n s^n + ... + a_0 as readable text: '1200 s² + 2400 s + 480000'."""
    sup = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
    parts = []
    for k in range(len(a) - 1, -1, -1):
        if a[k] == 0:
            continue
        power = "" if k == 0 else ("s" if k == 1 else "s" + str(k).translate(sup))
        coef = f"{a[k]:.6g}"
        parts.append(power if coef == "1" and k else f"{coef} {power}".strip())
    return " + ".join(parts).replace("+ -", "- ")


def _zeros(f, times) -> list[float]:
    """Roots of f on the grid's sign changes, refined by Brent's method."""
    values = f(times)
    finite = np.isfinite(values[:-1]) & np.isfinite(values[1:])
    exact = np.nonzero(finite & (values[:-1] == 0))[0]
    change = np.nonzero(finite & (values[:-1] * values[1:] < 0))[0]
    out = [float(times[i]) for i in exact]
    out += [brentq(lambda x: float(f(np.array([x]))[0]), times[i], times[i + 1],
                   xtol=1e-14, rtol=1e-13, maxiter=200) for i in change]
    return sorted(out)


def engineering_results(model: NumericModel, t_end: float, units=None):
    """The results mapping (read-only) from a derivation's numeric model."""
    res: dict[str, Result] = {}
    y_unit = units.unknown_display if units else ""
    y_si = units.unknown_si if units else ""
    t_unit = units.time_display if units else ""

    def to_y(v):
        if units is None:
            return v
        from .units import to_display
        return to_display(v, y_si, y_unit)

    def to_t(v):
        if units is None:
            return v
        from .units import to_display
        return to_display(v, "s", t_unit)

    def add(key, label, value, unit, formula, source):
        res[key] = Result(key, label, _quantity(value, unit, units), unit, formula, source)

    a = list(model.coefficients)
    n = len(a) - 1
    zs = list(model.system_poles)
    breakpoints, impulses = model.breakpoints, model.impulses
    char = _polynomial_text(a)
    add("characteristic_polynomial", "characteristic polynomial", char, "",
        "P(s) = Σ a_k s^k from the ODE's coefficients", "definition")
    add("poles", "poles", tuple(zs), "1/s" if units else "",
        "roots of P(s) (the derivation's factorisation)", "definition")
    stable = all(z.real < 0 for z in zs)
    marginal = all(z.real <= 1e-12 for z in zs) and not stable
    add("stability", "stability", "stable" if stable else ("marginal" if marginal else "unstable"),
        "", "stable when every pole is in the open left half-plane", _CTRL)
    decays = []
    for rate in sorted(-z.real for z in zs if z.real < 0):
        if not decays or rate > decays[-1] * (1 + 1e-9):  # a conjugate pair has one rate
            decays.append(rate)
    if decays:
        add("time_constants", "time constants", tuple(to_t(1 / d) for d in decays), t_unit,
            "τ = 1/|Re p| for each decaying pole", _CTRL)

    # Damping figures: the ODE's own for order 2, the dominant complex pair otherwise.
    wn = zeta = None
    if n == 2 and a[0] > 0 and a[2] != 0 and a[0] * a[2] > 0:
        wn = math.sqrt(a[0] / a[2])
        zeta = a[1] / (2 * math.sqrt(a[0] * a[2]))
        how, which = "ω_n = √(a_0/a_2), ζ = a_1/(2√(a_0 a_2))", ""
    else:
        pairs = [z for z in zs if z.imag > 1e-12]
        if pairs:
            dom = max(pairs, key=lambda z: z.real)
            wn, zeta = abs(dom), -dom.real / abs(dom)
            how, which = "ω_n = |p|, ζ = -Re p/|p| of the dominant complex pair", " (dominant pair)"
    if wn is not None:
        add("natural_frequency", "natural frequency ω_n" + which, wn, "rad/s" if units else "",
            how, _VIB)
        add("natural_frequency_hz", "natural frequency f_n" + which, wn / (2 * math.pi),
            "Hz" if units else "", "f_n = ω_n/(2π)", _VIB)
        add("damping_ratio", "damping ratio" + which, zeta, "", how, _VIB)
        if zeta < 1:
            add("damped_frequency", "damped frequency ω_d" + which, wn * math.sqrt(1 - zeta ** 2),
                "rad/s" if units else "", "ω_d = ω_n √(1 - ζ²)", _VIB)
        regime = ("undamped" if abs(zeta) < 1e-12 else "underdamped" if zeta < 1 - 1e-9 else
                  "critically damped" if abs(zeta - 1) <= 1e-9 else "overdamped")
        add("regime", "damping regime" + which, regime, "", "from ζ: 0, < 1, = 1, > 1", _VIB)

    y, dy = model.closed_form, model.derivative
    times = np.linspace(0.0, t_end, 20001)
    candidates = [0.0, t_end] + [float(b) for b in breakpoints if 0 < b < t_end]
    candidates += _zeros(dy, times)
    values = y(np.array(candidates))
    # just before a breakpoint, for a response whose derivative jumps there
    left = [b - 1e-12 * max(1.0, b) for b in breakpoints if 0 < b < t_end]
    if left:
        candidates += left
        values = np.concatenate([values, y(np.array(left))])
    i = int(np.nanargmax(np.abs(values)))
    peak, t_peak = float(values[i]), float(candidates[i])
    add("peak", "peak response", to_y(peak), y_unit, "max |y(t)| over the window; " + _REFINE,
        "closed form of the derivation")
    add("time_of_peak", "time of peak", to_t(t_peak), t_unit, _REFINE, "closed form of the derivation")

    # Loads: final level and peak level (impulses aside).
    far = max([float(b) for b in breakpoints] + [0.0]) + 1.0
    f_grid = model.forcing(times)
    f_peak = float(np.max(np.abs(f_grid))) if f_grid.size else 0.0
    settles = model.final_load is not None
    if a[0] != 0 and settles:
        static = model.final_load / a[0]
        add("static_response", "static response to the final load", to_y(static), y_unit,
            "f(∞)/a_0: the final load level over the stiffness term", _VIB)
    if a[0] != 0 and f_peak > 0 and not impulses:
        static_peak = f_peak / a[0]
        add("static_response_peak_load", "static response to the peak load", to_y(static_peak),
            y_unit, "max|f(t)|/a_0", _BIGGS)
        add("dynamic_load_factor", "dynamic load factor", abs(peak) / static_peak, "",
            "|y|max / (max|f|/a_0)", _BIGGS)

    # Final value and the step-response figures, where the response settles.
    all_stable = stable and settles
    if all_stable:
        decay = min(decays) if decays else 1.0
        t_far = far + 60.0 / decay
        final = float(y(np.array([t_far]))[0])
        if abs(final) <= 1e-12 * max(abs(peak), 1e-300):
            final = 0.0  # the response dies away: what is left is rounding
        add("final_value", "final value", to_y(final), y_unit,
            "lim y(t), t → ∞ (the closed form far past the last breakpoint)",
            "closed form of the derivation")
        if final != 0.0:
            y0 = float(y(np.array([0.0]))[0])
            over = (peak - final) / final * 100 if np.sign(peak) == np.sign(final) else 0.0
            add("percent_overshoot", "percent overshoot", max(0.0, over), "%" if units else "",
                "100·(y_peak - y_∞)/y_∞", _CTRL)
            band = 0.02 * abs(final)
            long = np.linspace(0.0, t_far, 40001)
            outside = np.nonzero(np.abs(y(long) - final) > band)[0]
            if outside.size and outside[-1] + 1 < long.size:
                k = outside[-1]
                g = lambda x: abs(float(y(np.array([x]))[0]) - final) - band  # noqa: E731
                ts = brentq(g, long[k], long[k + 1], xtol=1e-13) if g(long[k]) * g(long[k + 1]) < 0 \
                    else float(long[k + 1])
                add("settling_time_2pct", "2 % settling time", to_t(ts), t_unit,
                    "last time |y - y_∞| > 2 % of |y_∞|, refined by Brent's method", _CTRL)
            lo, hi = y0 + 0.1 * (final - y0), y0 + 0.9 * (final - y0)
            t10 = _first_crossing(y, long, lo)
            t90 = _first_crossing(y, long, hi)
            if t10 is not None and t90 is not None and t90 > t10:
                add("rise_time", "10–90 % rise time", to_t(t90 - t10), t_unit,
                    "time from 10 % to 90 % of the change to the final value", _CTRL)
    return MappingProxyType(res)


def _first_crossing(y, ts, level):
    g = y(ts) - level
    idx = np.nonzero(np.sign(g[:-1]) * np.sign(g[1:]) <= 0)[0]
    if not idx.size:
        return None
    k = idx[0]
    a, b = ts[k], ts[k + 1]
    f = lambda x: float(y(np.array([x]))[0]) - level  # noqa: E731
    return brentq(f, a, b, xtol=1e-13) if f(a) * f(b) < 0 else float(a)
