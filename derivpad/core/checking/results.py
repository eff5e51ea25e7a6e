"""Engineering results from the closed form: poles, damping, peak, dynamic load factor, settling.

Each result says how it was found and where the formula comes from. Every figure of the
response holds over all t ≥ 0, read from the closed form's modes (core/response.py): a
supremum proven by a bound on what is left, ``math.inf`` for an unbounded response with its
cause, ``None`` with the reason where a figure does not apply (a settling time of a response
that returns to rest, a dynamic load factor without static stiffness). Damping figures are
given for oscillatory or second-order systems.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from .numeric_model import Numbers
from ..model.result import Result
from .response import SearchLimit, crossing_time, final_value, growth, settled_after, settling_time, supremum

__all__ = ["Result", "ResultWriter", "engineering_results", "response_results", "system_results",
           "writer_for"]

_VIB = "single-degree-of-freedom vibration theory (e.g. Thomson, Theory of Vibration; from memory)"
_CTRL = "second-order system time-response definitions (control texts, e.g. Ogata; from memory)"
_BIGGS = ("dynamic load factor: peak response over the static response to the peak load "
          "(J. M. Biggs, Introduction to Structural Dynamics; from memory)")
_REFINE = ("zero of y'(t) bracketed on a grid of 40 points per period, refined by Brent's method "
           "(scipy.optimize.brentq)")
_MODES = ("closed form of the derivation, over all t ≥ 0: searched until the bound on its "
          "decaying modes proves no later value is larger")
_SHOCK = ("primary (load acting) and residual (after it) response; shock-response texts, e.g. "
          "Harris' Shock and Vibration Handbook, ch. 8 (from memory)")


def _quantity(value, unit: str, units):
    """value in SI → pint Quantity in the unit given (when the problem has units); None (does
    not apply) and math.inf (unbounded) stay plain."""
    if units is None or not unit or value is None or isinstance(value, (tuple, list, str)):
        return value
    if isinstance(value, float) and math.isinf(value):
        return value
    from ..reading.units import registry
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


class ResultWriter:
    """Collects the Results of one response in its display units: ``units`` is the unit
    context (None without units), ``name`` and ``key`` label a system's unknown."""

    def __init__(self, units=None, name: str = "", key=lambda k: k):
        self.units = units
        self.y_unit = units.unknown_display if units else ""
        self.t_unit = units.time_display if units else ""
        self.of = f" of {name}" if name else ""
        self.key = key
        self.out: dict[str, Result] = {}

    def to_y(self, v):
        """A value of the response, SI → display unit."""
        if self.units is None:
            return v
        from ..reading.units import to_display
        return to_display(v, self.units.unknown_si, self.y_unit)

    def to_t(self, v):
        """A time, s → display unit."""
        if self.units is None:
            return v
        from ..reading.units import to_display
        return to_display(v, "s", self.t_unit)

    def add(self, k, label, value, unit, formula, source, reason="", note=""):
        key = self.key(k)
        self.out[key] = Result(key, label + self.of, _quantity(value, unit, self.units), unit,
                               formula, source, reason, note)

    def absent(self, k, label, unit, reason):
        """A result that does not apply or cannot be given: value None and the reason."""
        self.add(k, label, None, unit, "", "", reason=reason)


def writer_for(problem, name: str) -> ResultWriter:
    """The ResultWriter of one quantity: its display units, and its keys suffixed with its
    name (``peak_x2``) except for the one unknown of a single equation."""
    plain = problem.size == 1 and name == problem.unknowns[0]
    return ResultWriter(problem.unit_context(name), "" if plain else name,
                        key=(lambda k: k) if plain else (lambda k: f"{k}_{name}"))


def system_results(problem, numbers: Numbers) -> dict:
    """The figures of the system itself, whatever loads it: poles, stability, time constants,
    damping and natural frequencies, and a mechanical system's modes."""
    w = ResultWriter(problem.units)
    zs = list(numbers.system_poles)
    single = problem.size == 1
    _pole_results(w, numbers.coefficients(0, 0) if single else None, zs)
    if single:
        _damping_results(w, numbers.coefficients(0, 0), zs)
    else:
        _pair_results(w, zs)
        _modal_results(w, problem, numbers)
    return dict(w.out)


def engineering_results(problem, numbers: Numbers, definitions=None):
    """The results mapping (read-only) of a derivation with numbers for every parameter: the
    poles and their figures, the modal figures of a mechanical system, then each unknown's
    and derived quantity's response figures (keys suffixed ``_<name>`` except for the one
    unknown of a single equation). Each figure of a response holds over all t ≥ 0."""
    out = system_results(problem, numbers)
    at_rest = not any(v for vals in numbers.initial for v in vals)
    statics = _static_gains(numbers)
    loads: dict = {}  # each load's figures, found once for all the unknowns it loads
    for name, model in numbers.models.items():
        r = writer_for(problem, name)
        if model.modes is None:
            for key, label in (("peak", "peak response"), ("final_value", "final value")):
                r.absent(key, label, r.y_unit, "the closed form is not a sum of modes, so its "
                         "behaviour over all t cannot be bounded")
        else:
            _response_of(r, model, numbers, statics.get(name), at_rest, definitions, loads)
        out.update(r.out)
    return MappingProxyType(out)


def _response_of(w: ResultWriter, model, numbers: Numbers, static, at_rest, definitions,
                 loads: dict):
    """One response's figures, with its static response to the load where there is one
    (``loads``: the load figures found so far, by equation)."""
    row, loaded, note = static if static is not None else (
        None, None, "the dynamic load factor is given for the unknowns, not derived quantities")
    load, static_peak = None, None
    finals = numbers.final_loads
    if row is not None and all(f is not None for f in finals):
        w.add("static_response", "static response to the final load",
              w.to_y(float(sum(g * f for g, f in zip(row, finals)))), w.y_unit,
              _STATIC_FINAL[len(row) > 1], _VIB)
    if loaded is not None:
        if loaded not in loads:
            loads[loaded] = _load_figures(numbers.forcing_modes[loaded])
        load = loads[loaded]
        note = _load_note(numbers, loaded, load)
        if not note and abs(row[loaded]) > 0:
            static_peak = load.peak * abs(row[loaded])
        elif not note:
            note = "the load does not act statically on this unknown (zero static gain)"
    response_results(w, model.modes, numbers.system_poles, at_rest=at_rest,
                     static_peak=static_peak, load=load, definitions=definitions,
                     load_note=note, static_how=_STATIC_PEAK[len(numbers.unknowns) > 1])


_STATIC_FINAL = ("f(∞)/a_0: the final load level over the stiffness term",
                 "A(0)⁻¹ f(∞): the final loads through the static stiffness matrix A(0)")
_STATIC_PEAK = ("max|f|/a_0", "max|f_i|·|(A(0)⁻¹)_ji|, the one loaded equation i")


def _static_gains(numbers: Numbers) -> dict:
    """Per unknown: (row j of A(0)⁻¹ or None, the one loaded equation or None, why there is
    no dynamic load factor ("" where there is one))."""
    n = len(numbers.unknowns)
    if np.linalg.matrix_rank(numbers.static) < n:
        why = ("the system has no static stiffness (a_0 = 0): no static response to compare "
               "with" if n == 1 else "the static stiffness matrix A(0) is singular: no static "
               "response to compare with")
        return {u: (None, None, why) for u in numbers.unknowns}
    inverse = np.linalg.inv(numbers.static)
    loaded = [i for i, f in enumerate(numbers.forcing_modes)
              if f is None or len(f) or numbers.final_loads[i] != 0.0]
    if not loaded:
        loaded = sorted({i for i, _, _ in numbers.impulses})
    why = ""
    if len(loaded) > 1:
        why = ("loads act in more than one equation: the dynamic load factor is defined for "
               "one load")
    elif not loaded:
        why = "there is no load (the response comes from the initial values alone)"
    return {u: (tuple(float(x) for x in inverse[j]), None if why else loaded[0], why)
            for j, u in enumerate(numbers.unknowns)}


def _pole_results(w: ResultWriter, a, zs) -> None:
    """Characteristic polynomial (``a``: a single ODE's coefficients, else None), poles,
    stability and time constants."""
    units = w.units
    if a is not None:
        w.add("characteristic_polynomial", "characteristic polynomial", _polynomial_text(a),
              "", "P(s) = Σ a_k s^k from the ODE's coefficients", "definition")
    w.add("poles", "poles", tuple(zs), "1/s" if units else "",
          "roots of P(s) (the derivation's factorisation)" if a is not None else
          "roots of the characteristic determinant Δ(s) = det A(s)", "definition")
    stable = all(z.real < 0 for z in zs)
    marginal = all(z.real <= 1e-12 for z in zs) and not stable
    w.add("stability", "stability",
          "stable" if stable else ("marginal" if marginal else "unstable"),
          "", "stable when every pole is in the open left half-plane", _CTRL)
    decays = []
    for rate in sorted(-z.real for z in zs if z.real < 0):
        if not decays or rate > decays[-1] * (1 + 1e-9):  # a conjugate pair has one rate
            decays.append(rate)
    if decays:
        w.add("time_constants", "time constants", tuple(w.to_t(1 / d) for d in decays),
              w.t_unit, "τ = 1/|Re p| for each decaying pole", _CTRL)


def _damping_results(w: ResultWriter, a, zs) -> None:
    """Damping figures: the ODE's own for order 2, the dominant complex pair otherwise."""
    units = w.units
    wn = zeta = None
    if len(a) == 3 and a[0] > 0 and a[2] != 0 and a[0] * a[2] > 0:
        wn = math.sqrt(a[0] / a[2])
        zeta = a[1] / (2 * math.sqrt(a[0] * a[2]))
        how, which = "ω_n = √(a_0/a_2), ζ = a_1/(2√(a_0 a_2))", ""
    else:
        pairs = [z for z in zs if z.imag > 1e-12]
        if pairs:
            dom = max(pairs, key=lambda z: z.real)
            wn, zeta = abs(dom), -dom.real / abs(dom)
            how, which = "ω_n = |p|, ζ = -Re p/|p| of the dominant complex pair", " (dominant pair)"
    if wn is None:
        return
    w.add("natural_frequency", "natural frequency ω_n" + which, wn, "rad/s" if units else "",
          how, _VIB)
    w.add("natural_frequency_hz", "natural frequency f_n" + which, wn / (2 * math.pi),
          "Hz" if units else "", "f_n = ω_n/(2π)", _VIB)
    w.add("damping_ratio", "damping ratio" + which, zeta, "", how, _VIB)
    if abs(zeta) < 1:
        w.add("damped_frequency", "damped frequency ω_d" + which, wn * math.sqrt(1 - zeta ** 2),
              "rad/s" if units else "", "ω_d = ω_n √(1 - ζ²)", _VIB)
    regime = ("negatively damped (unstable)" if zeta < -1e-12 else
              "undamped" if abs(zeta) < 1e-12 else "underdamped" if zeta < 1 - 1e-9 else
              "critically damped" if abs(zeta - 1) <= 1e-9 else "overdamped")
    w.add("regime", "damping regime" + which, regime, "", "from ζ: 0, < 1, = 1, > 1", _VIB)


@dataclass(frozen=True, slots=True)
class LoadFigures:
    """The load's supremum |f|, its final level, and (for a pulse) when it stops acting."""

    peak: float | None
    final: float | None
    ends: float | None
    reason: str = ""


def _load_figures(fm) -> LoadFigures:
    """The load's figures from its modes (``fm``; None where the load is not a sum of modes)."""
    if fm is None:
        return LoadFigures(None, None, None, "the load is not a sum of modes")
    final, why = final_value(fm)
    try:
        peak = supremum(fm).size if len(fm) else 0.0
    except SearchLimit as exc:
        return LoadFigures(None, final, None, str(exc))
    ends = None
    if final == 0.0 and fm.breakpoints and peak > 0:
        ends = fm.breakpoints[-1]
    return LoadFigures(peak, final, ends, why)


def _load_note(numbers: Numbers, loaded: int, load: LoadFigures) -> str:
    """Why the dynamic load factor of load ``loaded`` is not given ("" where it is)."""
    if any(i == loaded for i, _, _ in numbers.impulses):
        return "the load includes impulses, which have no peak level"
    if load.peak is None:
        return "the load's peak cannot be found: " + load.reason
    if math.isinf(load.peak):
        return "the load grows without bound"
    if load.peak == 0:
        return "there is no load (the response comes from the initial values alone)"
    return ""


DEFAULT_DEFINITIONS = MappingProxyType({"settling_band": 0.02, "rise": (0.1, 0.9)})
"""Settling band (fraction of |y∞|) and rise-time levels (fractions of y∞); python-control's
step_info uses the same defaults (SettlingTimeThreshold 0.02, RiseTimeLimits (0.1, 0.9))."""


def definitions_of(definitions) -> dict:
    """The step-response definitions, defaults filled in and each checked."""
    from ...errors import ParameterError
    out = dict(DEFAULT_DEFINITIONS)
    for key, value in dict(definitions or {}).items():
        if key not in out:
            raise ParameterError(f"unknown definition {key!r}; the keys are settling_band "
                                 "(e.g. 0.02) and rise (e.g. (0.1, 0.9))", key)
        out[key] = value
    band = out["settling_band"]
    if not (isinstance(band, (int, float)) and 0 < band < 1):
        raise ParameterError(f"settling_band must be a fraction between 0 and 1 (e.g. 0.02 for "
                             f"2 %), not {band!r}", "settling_band")
    rise = out["rise"]
    if not (isinstance(rise, (tuple, list)) and len(rise) == 2
            and all(isinstance(x, (int, float)) for x in rise) and 0 <= rise[0] < rise[1] <= 1):
        raise ParameterError(f"rise must be two fractions (low, high) with 0 ≤ low < high ≤ 1, "
                             f"e.g. (0.1, 0.9), not {rise!r}", "rise")
    out["rise"] = (float(rise[0]), float(rise[1]))
    return out


def _pct(x: float) -> str:
    return f"{100 * x:g}"


def response_results(w: ResultWriter, modes, system_poles, *, at_rest, static_peak=None,
                     load=None, definitions=None, load_note="", static_how="max|f|/a_0") -> None:
    """Peak, time of peak, final value, overshoot, rise and settling (and, with a static
    response to the peak load, the dynamic load factor with its primary and residual parts)
    of one response into ``w``, each over all t ≥ 0 from its modes; absent with the reason
    where it does not apply. One equation and each unknown of a system alike."""
    defs = definitions_of(definitions)
    grows = growth(modes, system_poles)
    slope = modes.derivative()
    samples: dict = {}  # the peak and the overshoot search read the same samples
    peak = _peak_results(w, modes, slope, grows, samples)
    if static_peak is not None and peak is not None:
        _load_factor_results(w, modes, slope, grows, peak, static_peak, load, static_how)
    elif load_note and peak is not None:
        w.absent("dynamic_load_factor", "dynamic load factor", "", load_note)
    final, why = final_value(modes, system_poles)
    if final is None:
        w.absent("final_value", "final value", w.y_unit, why)
    else:
        w.add("final_value", "final value", w.to_y(final), w.y_unit,
              "lim y(t) as t → ∞: the constant modes of the closed form, added exactly", _MODES)
    _step_figures(w, modes, slope, samples, final, why, at_rest, defs)


def _peak_results(w: ResultWriter, modes, slope, grows, samples):
    """Peak and time of peak over t ≥ 0; the Extreme found (None where the search failed)."""
    try:
        peak = supremum(modes, slope=slope, cache=samples)
    except SearchLimit as exc:
        w.absent("peak", "peak response", w.y_unit, f"not found: {exc}")
        w.absent("time_of_peak", "time of peak", w.t_unit, f"not found: {exc}")
        return None
    if grows is not None:
        w.add("peak", "peak response", math.inf, w.y_unit, "sup |y(t)| over t ≥ 0", _MODES,
              reason="unbounded: " + grows.reason)
        w.add("time_of_peak", "time of peak", math.inf, w.t_unit, "", _MODES,
              reason="unbounded: the response grows without limit")
    else:
        w.add("peak", "peak response", w.to_y(peak.value), w.y_unit,
              "sup |y(t)| over t ≥ 0; " + _REFINE, _MODES, note=peak.note)
        w.add("time_of_peak", "time of peak", w.to_t(peak.time) if peak.attained else math.inf,
              w.t_unit, _REFINE, _MODES, note=peak.note)
    return peak


def _load_factor_results(w: ResultWriter, modes, slope, grows, peak, static_peak, load,
                         static_how):
    """The dynamic load factor, and for a pulse load its primary and residual parts."""
    dlf_how = (f"DLF = sup|y| / ({static_how}): the peak over the static response to the peak "
               "load")
    w.add("static_response_peak_load", "static response to the peak load",
          w.to_y(static_peak), w.y_unit, static_how, _BIGGS)
    if grows is not None:
        w.add("dynamic_load_factor", "dynamic load factor", math.inf, "", dlf_how, _BIGGS,
              reason="unbounded: " + grows.reason)
        return
    w.add("dynamic_load_factor", "dynamic load factor", peak.size / static_peak, "", dlf_how,
          _BIGGS, note=peak.note)
    if load is None or load.ends is None:
        return
    primary = supremum(modes, 0.0, load.ends, slope=slope)
    residual = supremum(modes, load.ends, slope=slope)
    for part, ext, when in (("primary", primary, "while the load acts, 0 ≤ t ≤ t_d"),
                            ("residual", residual, "after the load ends, t ≥ t_d")):
        w.add(f"peak_{part}", f"{part} peak ({when})", w.to_y(ext.value), w.y_unit,
              f"sup |y(t)| {when}, t_d = {load.ends:.6g} s", _SHOCK, note=ext.note)
        w.add(f"time_of_peak_{part}", f"time of {part} peak",
              w.to_t(ext.time) if ext.attained else math.inf, w.t_unit, _REFINE, _SHOCK,
              note=ext.note)
        w.add(f"dynamic_load_factor_{part}", f"{part} dynamic load factor",
              ext.size / static_peak, "", f"{part} peak / ({static_how})", _SHOCK, note=ext.note)


def _step_figures(w: ResultWriter, modes, slope, samples, final, why, at_rest, defs) -> None:
    """Overshoot, rise and settling of a response from rest to a non-zero final value;
    otherwise each absent with the reason."""
    band = defs["settling_band"]
    lo, hi = defs["rise"]
    figures = (("percent_overshoot", "percent overshoot", "%" if w.units else ""),
               ("rise_time", f"{_pct(lo)}–{_pct(hi)} % rise time", w.t_unit),
               (f"settling_time_{_pct(band)}pct", f"{_pct(band)} % settling time", w.t_unit))
    reason = ""
    if final is None:
        reason = ("unbounded: no rise, overshoot or settling" if why.startswith("unbounded")
                  else "the response has no final value: no rise, overshoot or settling")
    elif final == 0.0:
        reason = "the response returns to zero: no rise, overshoot or settling to a new level"
    elif not at_rest:
        reason = ("the response does not start from rest (non-zero initial values): overshoot, "
                  "rise and settling are defined for a response from rest to a new level")
    if reason:
        for k, label, unit in figures:
            w.absent(k, label, unit, reason)
        return
    sign = 1.0 if final > 0 else -1.0
    try:
        top = supremum(modes, sense=int(sign), slope=slope, cache=samples)
        over = max(0.0, (abs(top.value) - abs(final)) / abs(final) * 100) \
            if np.sign(top.value) == sign else 0.0
        w.add(*figures[0][:2], over, figures[0][2],
              "100·(y_max - y∞)/y∞, y_max the supremum on the side of y∞", _CTRL)
        upper = settled_after(modes, 0.5 * band * abs(final))
        t_lo = crossing_time(modes, lo * final, sign, upper)
        t_hi = crossing_time(modes, hi * final, sign, upper)
        if t_lo is not None and t_hi is not None and t_hi >= t_lo:
            w.add(*figures[1][:2], w.to_t(t_hi - t_lo), w.t_unit,
                  f"time from {_pct(lo)} % to {_pct(hi)} % of the change to y∞ (first "
                  "crossings)", _CTRL)
        else:
            w.absent(*figures[1], "the levels are not crossed")
        ts = settling_time(modes, final, band * abs(final))
        w.add(*figures[2][:2], w.to_t(ts), w.t_unit,
              f"last time |y - y∞| > {_pct(band)} % of |y∞|, from the modes (the decaying part "
              "is bounded after it), refined by Brent's method", _CTRL)
    except SearchLimit as exc:
        for k, label, unit in figures:
            if w.key(k) not in w.out:
                w.absent(k, label, unit, f"not found: {exc}")


def _pair_results(w: ResultWriter, zs) -> None:
    """Natural frequency and damping ratio of each complex pole pair."""
    pairs = sorted((z for z in zs if z.imag > 1e-12), key=abs)
    if pairs:
        w.add("pole_frequencies", "pole natural frequencies |p|", tuple(abs(z) for z in pairs),
              "rad/s" if w.units else "", "|p| of each complex pole pair", _VIB)
        w.add("pole_damping_ratios", "pole damping ratios",
              tuple(-z.real / abs(z) + 0.0 for z in pairs), "",
              "-Re p/|p| of each complex pole pair", _VIB)


_EIGEN = ("generalized eigenproblem K φ = ω² M φ by scipy.linalg.eigh; mode shapes scaled to a "
          "largest component of +1 (structural dynamics texts, e.g. Chopra, Dynamics of "
          "Structures; from memory)")


def _mechanical(problem, numbers: Numbers):
    """(M, C, K) of a second-order system with symmetric M (positive definite) and K."""
    if not problem.is_mechanical:
        return None
    M, C, K = (numbers.matrix(k) for k in (2, 1, 0))
    if not (np.allclose(M, M.T) and np.allclose(K, K.T)):
        return None
    if np.any(np.linalg.eigvalsh(M) <= 0):
        return None
    return M, C, K


def _modal_results(w: ResultWriter, problem, numbers: Numbers) -> None:
    """Undamped natural frequencies and mode shapes of M x'' + C x' + K x = f (symmetric M
    positive definite, symmetric K); modal damping ratios where the damping is proportional.

    Frequencies come from the generalized eigenproblem K φ = ω² M φ (``scipy.linalg.eigh``);
    ζ_r = φ_rᵀ C φ_r / (2 ω_r) with mass-normalized φ, stated only where Φᵀ C Φ is diagonal.
    """
    mech = _mechanical(problem, numbers)
    if mech is None:
        return
    from scipy.linalg import eigh
    M, C, K = mech
    w2, phi = eigh(K, M)
    if not np.all(w2 > 0):
        return
    omegas = np.sqrt(w2)
    shapes = []
    for r in range(phi.shape[1]):
        v = phi[:, r]
        shapes.append(tuple(float(x) for x in v / v[np.argmax(np.abs(v))]))
    rad, hz = ("rad/s", "Hz") if w.units else ("", "")
    w.add("natural_frequencies", "undamped natural frequencies ω_r", tuple(map(float, omegas)),
          rad, "ω_r² = eigenvalues of K φ = ω² M φ", _EIGEN)
    w.add("natural_frequencies_hz", "undamped natural frequencies f_r",
          tuple(float(om / (2 * math.pi)) for om in omegas), hz, "f_r = ω_r/(2π)", _EIGEN)
    w.add("mode_shapes", "mode shapes φ_r (" + ", ".join(problem.unknowns) + ")",
          tuple(shapes), "", "eigenvectors of K φ = ω² M φ, largest component +1", _EIGEN)
    modal_c = phi.T @ C @ phi
    diag = np.abs(np.diag(modal_c))
    off = np.abs(modal_c - np.diag(np.diag(modal_c)))
    if np.any(C != 0) and off.max(initial=0.0) <= 1e-9 * max(diag.max(initial=0.0), 1e-300):
        w.add("modal_damping_ratios", "modal damping ratios ζ_r",
              tuple(float(c / (2 * om)) for c, om in zip(np.diag(modal_c), omegas)), "",
              "ζ_r = φ_rᵀ C φ_r / (2 ω_r), mass-normalized φ (damping proportional: "
              "Φᵀ C Φ diagonal)", _EIGEN)
