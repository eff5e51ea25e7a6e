"""What a response does over all t ≥ 0, read from its modes: growth, supremum, limit, settling.

No figure here is read at the end of a window. After the last switching time a response is a
finite sum of modes (see :mod:`derivpad.core.modes`): the growing ones make it unbounded (the
law and the cause are named), the steady ones (a constant, undamped oscillations) are what is
left as t → ∞, and the decaying ones are bounded after any time t₀ by Σ|A_m| τ^k e^{aτ}
(taken at τ = t₀ - c_m, or at the top of τ^k e^{aτ}). A search over [0, T] proves the largest
value it finds is the supremum once that value is at least the steady part's supremum plus
the bound at T; otherwise T is doubled. The same functions serve every unknown and every
derived quantity of a system.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction

import numpy as np
from scipy.optimize import brentq

from .modes import Modes

__all__ = ["Extreme", "Growth", "crossing_time", "final_value", "growth", "settling_time",
           "supremum"]

_POINTS_PER_PERIOD = 40
_CHUNK = 100_000
_MAX_POINTS = 4_000_000
_MAX_SCAN = 40_000_000
"""Samples a settling or rise-time search may take, piece by piece (a few seconds)."""
_TAIL = 1e-10
"""The bound on what is left after T, relative to the values found, below which a supremum
approached as t → ∞ is reported as reached in the limit."""


@dataclass(frozen=True, slots=True)
class Growth:
    """How an unbounded response grows and why: the law (e^{at}, t·sin ωt, t) and the cause."""

    law: str
    reason: str
    resonance: bool = False


@dataclass(frozen=True, slots=True)
class Extreme:
    """The supremum of s·y (or of |y|) over an interval: the signed value of y, the time
    (``math.inf`` when approached only as t → ∞), whether it is attained, and a note."""

    value: float
    time: float
    attained: bool = True
    note: str = ""

    @property
    def size(self) -> float:
        return abs(self.value)


class SearchLimit(ArithmeticError):
    """The response oscillates too often over the span a search must cover."""


def _fmt(x: float) -> str:
    return f"{x:.6g}"


def growth(modes: Modes, system_poles=()) -> Growth | None:
    """None for a bounded response; else the fastest-growing mode's law and its cause."""
    modes = modes.tail()
    growing, _, _ = modes.classify()
    if not growing.any():
        return None
    idx = np.nonzero(growing)[0]
    steady = modes.is_steady()
    # fastest first: exponential rate, then the power of t
    m = max(idx, key=lambda i: (0.0 if steady[i] else modes.rate[i], modes.power[i]))
    a, b, k = (0.0 if steady[m] else float(modes.rate[m])), float(modes.freq[m]), int(modes.power[m])
    power = "" if k == 0 else ("t·" if k == 1 else f"t^{k}·")
    trig = ("sin t" if b == 1 else f"sin({_fmt(b)} t)") if b else ""
    if a > 0:
        law = f"{power}e^({_fmt(a)} t)".replace("e^(1 t)", "e^t") + (f"·{trig}" if trig else "")
        where = f"{_fmt(a)} ± {_fmt(b)}i" if b else _fmt(a)
        own = _multiplicity(system_poles, complex(a, b))
        reason = (f"a pole with positive real part at s = {where} (unstable): the response "
                  f"grows like {law}" if own else
                  f"the load grows like {law} and the response with it")
        return Growth(law, reason)
    law = (f"{power}{trig}" if trig else ("t" if k == 1 else f"t^{k}"))
    own = _multiplicity(system_poles, complex(0.0, b))
    if b:
        if own >= k + 1:
            reason = (f"a repeated pole on the imaginary axis at s = ±{_fmt(b)}i (multiplicity "
                      f"{own}): the oscillation grows like {law}")
            return Growth(law, reason)
        reason = (f"resonance: the forcing's frequency {_fmt(b)} rad/s equals a natural frequency "
                  f"of the undamped system; the response grows like {law}")
        return Growth(law, reason, resonance=True)
    if own >= k + 1:
        reason = (f"a pole of order {own} at s = 0 (no restoring stiffness): the response "
                  f"grows like {law}")
    elif own:
        reason = (f"a load that does not settle to zero acting on a pole at s = 0 (no restoring "
                  f"stiffness): the response grows like {law}")
    else:
        reason = f"the load grows without bound (a ramp that never stops): the response grows like {law}"
    return Growth(law, reason)


def _multiplicity(poles, z: complex) -> int:
    scale = max([abs(p) for p in poles] + [abs(z), 1.0])
    return sum(1 for p in poles if abs(complex(p) - z) <= 1e-7 * scale)


# -- the limit ------------------------------------------------------------------------------

def final_value(modes: Modes, system_poles=()) -> tuple[float | None, str]:
    """(lim y, "") where the limit exists; (None, reason) where it does not.

    The limit is the sum of the constant modes, added in 40-digit arithmetic from the exact
    coefficients, so a response that returns to rest gives 0, not rounding.
    """
    g = growth(modes, system_poles)
    if g is not None:
        return None, "unbounded: " + g.reason
    modes = modes.tail()
    _, steady, _ = modes.classify()
    osc = steady & (modes.freq > 0)
    if osc.any():
        w = sorted({float(x) for x in modes.freq[osc]})
        return None, ("the response keeps oscillating (a steady oscillation at "
                      + ", ".join(_fmt(x) for x in w) + " rad/s, from the load or an undamped mode): it has no final value")
    const = np.nonzero(steady & (modes.freq == 0))[0]
    if not const.size:
        return 0.0, ""
    if modes.exact:
        import mpmath
        with mpmath.workdps(40):
            total = mpmath.fsum(modes.exact[3][i] for i in const)
            size = mpmath.fsum(abs(modes.exact[3][i]) for i in const)
            if abs(total) <= mpmath.mpf(10) ** -30 * size:
                return 0.0, ""
            return float(mpmath.re(total)), ""
    total = float(np.sum(modes.cos[const]))
    size = float(np.sum(np.abs(modes.cos[const])))
    return (0.0 if abs(total) <= 1e-13 * size else total), ""


# -- suprema -------------------------------------------------------------------------------

def _fastest(modes: Modes) -> tuple[float, float]:
    """(largest frequency, largest decay or growth rate) among the present modes."""
    on = modes.present()
    b = float(np.max(modes.freq[on], initial=0.0))
    a = float(np.max(np.abs(modes.rate[on]), initial=0.0))
    return b, a


def _grid(modes: Modes, lo: float, hi: float) -> np.ndarray:
    """Sample times over [lo, hi]: 40 per period of the fastest oscillation (at least 2,001),
    geometric clusters after each switching time for fast transients, the switches themselves."""
    b, a = _fastest(modes)
    n = 2001
    if b > 0:
        n = max(n, int(math.ceil((hi - lo) * b / (2 * math.pi) * _POINTS_PER_PERIOD)) + 1)
    if n > _MAX_POINTS:
        msg = (f"{n:,} samples would be needed to search [{_fmt(lo)}, {_fmt(hi)}] at "
               f"{_POINTS_PER_PERIOD} per period of {_fmt(b)} rad/s")
        raise SearchLimit(msg)
    parts = [np.linspace(lo, hi, n)]
    fast = max(a, b, 1e-300)
    spacing = (hi - lo) / max(n - 1, 1)
    if spacing * fast > 0.05:  # the even grid does not resolve the fastest mode: cluster
        switches = [lo] + [c for c in modes.breakpoints if lo < c < hi]
        for c in switches:
            h = min(1.0 / (1000.0 * fast), (hi - c) / 1e6) if hi > c else 0.0
            if h > 0:
                parts.append(c + np.geomspace(h, hi - c, 400))
    parts.append(np.array([c for c in modes.breakpoints if lo <= c <= hi]))
    out = np.unique(np.concatenate(parts))
    return out[(out >= lo) & (out <= hi)]


def _sampled(modes: Modes, slope: Modes, lo: float, hi: float, cache) -> list:
    """(t, y, y') chunks over [lo, hi], evaluated once per interval (both signs share them)."""
    key = (lo, hi)
    if cache is not None and key in cache:
        return cache[key]
    quiet = float(np.min(modes.delay)) if len(modes) else hi
    out = []
    if quiet > lo:  # nothing is switched on before the first switch: y = 0 there
        out.append((np.array([lo]), np.zeros(1), np.zeros(1)))
        lo = min(quiet, hi)
    ts = _grid(modes, lo, hi)
    for start in range(0, ts.size, _CHUNK):
        t = ts[max(0, start - 1): start + _CHUNK]
        out.append((t, modes(t), slope(t)))
    if cache is not None:
        cache[key] = out
    return out


def _on_interval(modes: Modes, slope: Modes, lo: float, hi: float, sign: float, cache=None):
    """max of sign·y over [lo, hi] (right values; left limits at switches inside (lo, hi]),
    as (value of sign·y, time)."""
    best = (-math.inf, lo)
    for t, y, dy in _sampled(modes, slope, lo, hi, cache):
        v = sign * y
        d = sign * dy
        i = int(np.nanargmax(v)) if np.isfinite(v).any() else 0
        if v[i] > best[0]:
            best = (float(v[i]), float(t[i]))
        # a zero of y' between two samples whose values come near the best found
        level = best[0] - 0.05 * abs(best[0]) - 1e-300
        cand = np.nonzero((np.sign(d[:-1]) > 0) & (np.sign(d[1:]) < 0)
                          & (np.maximum(v[:-1], v[1:]) >= level))[0]
        for j in cand:
            f = lambda x: sign * float(slope(np.array([x]))[0])  # noqa: E731
            try:
                x = brentq(f, t[j], t[j + 1], xtol=1e-15, rtol=1e-15, maxiter=200)
            except ValueError:
                continue
            val = sign * float(modes(np.array([x]))[0])
            if val > best[0]:
                best = (val, x)
    inside = [c for c in modes.breakpoints if lo < c <= hi]
    if inside:
        left = sign * modes(np.array(inside), strict=True)
        i = int(np.nanargmax(left))
        if left[i] > best[0]:
            best = (float(left[i]), float(inside[i]))
    return best


def _period(freqs) -> float | None:
    """The common period of oscillations at ``freqs`` (rad/s), or None where the ratios are not
    fractions with denominators up to 1000, or the period exceeds 1000 cycles of the slowest.
    Without one, the amplitudes' sum bounds the oscillation; with a ratio p/q, q > 1000, that
    bound exceeds the true supremum by less than about (π/q)²/2 of an amplitude."""
    freqs = sorted(freqs)
    base = freqs[0]
    dens = 1
    for f in freqs[1:]:
        r = Fraction(f / base).limit_denominator(1000)
        if abs(float(r) - f / base) > 1e-9 * (f / base):
            return None
        dens = dens * r.denominator // math.gcd(dens, r.denominator)
    period = 2 * math.pi * dens / base
    return period if period <= 1000 * 2 * math.pi / base else None


def _steady_sup(modes: Modes, steady, sign: float, t0: float, cache=None):
    """sup of sign·(steady part) over t ≥ t0: (value, attained?, a time it is reached).
    ``cache`` holds the steady part and its samples for the other sign."""
    if cache is not None and "part" in cache:
        part, slope = cache["part"]
    else:
        part = modes.subset(steady)
        slope = part.derivative()
        if cache is not None:
            cache["part"] = (part, slope)
    const = float(np.sum(part.cos[part.freq == 0]))
    osc = part.freq > 0
    if not osc.any():
        return sign * const, True, t0
    period = _period({float(x) for x in part.freq[osc]})
    if period is None:
        return sign * const + float(np.sum(part.amplitude[osc])), False, math.inf
    val, when = _on_interval(part, slope, t0, t0 + period, sign, cache)
    return val, True, when


def supremum(modes: Modes, start: float = 0.0, stop: float = math.inf, sense: int = 0,
             slope: Modes | None = None, cache: dict | None = None) -> Extreme:
    """The supremum of |y| (sense 0) or of sense·y (±1) over [start, stop].

    Over a finite interval it is a maximum, found at a zero of y', a switching time or an
    end. Over [start, ∞) the search is extended until no later value can exceed the one found;
    a supremum approached only as t → ∞ has time ``math.inf``; an unbounded response has value
    ``math.inf``. Raises :class:`SearchLimit` when the oscillations are too many to search.
    """
    if sense == 0:
        cache = {} if cache is None else cache  # both signs read one set of samples
        hi = supremum(modes, start, stop, 1, slope, cache)
        lo = supremum(modes, start, stop, -1, slope, cache)
        return hi if hi.value >= -lo.value else lo
    sign = float(sense)
    slope = slope if slope is not None else modes.derivative()
    if math.isfinite(stop):
        v, t = _on_interval(modes, slope, start, stop, sign, cache)
        return Extreme(sign * v, t)
    after = modes.tail()  # what acts after the last switch, with cancelling modes gone
    growing, steady, decaying = after.classify()
    if growing.any():
        return Extreme(sign * math.inf, math.inf, False, "unbounded")
    last = max([start] + list(modes.breakpoints))
    b, a = _fastest(modes)
    rates = np.abs(after.rate[decaying])
    span = 1.0
    if rates.size:
        span = 5.0 / float(np.min(rates))
    if b > 0:
        span = min(span, 200 * 2 * math.pi / b) if rates.size else 2 * 2 * math.pi / b
        low = float(np.min(after.freq[steady & (after.freq > 0)], initial=math.inf))
        if math.isfinite(low):
            span = max(span, 2 * 2 * math.pi / low)
    upper = last + span
    best = _on_interval(modes, slope, start, upper, sign, cache)
    # the steady part's samples apart from the response's: their intervals may coincide
    steady_cache = None if cache is None else cache.setdefault(("steady", upper), {})
    steady_val, attained, steady_time = _steady_sup(after, steady, sign, upper, steady_cache)
    if not decaying.any() and attained:
        # after the last switch the response is periodic (or constant): its largest value
        # recurs every period, and one period from `upper` holds it
        if best[0] >= steady_val:
            return Extreme(sign * best[0], best[1])
        return Extreme(sign * steady_val, steady_time)
    size = max(abs(steady_val), abs(best[0]), 1e-300)
    # a value found late, where only rounding separates y from its steady part, is the steady
    # value approached, not a peak attained
    rounding = 1e-12 * size if decaying.any() else 0.0
    for _ in range(80):
        tail = after.tail_bound(upper, decaying)
        size = max(abs(steady_val), abs(best[0]), 1e-300)
        above = best[0] > steady_val + rounding
        if best[0] >= steady_val + tail and (above or not decaying.any()):
            return Extreme(sign * best[0], best[1])
        if tail <= _TAIL * size:
            if above:
                return Extreme(sign * best[0], best[1])
            note = ("approached as t → ∞, not attained" if attained else
                    "supremum, not attained: the undamped oscillations' frequencies have no "
                    "common period within 1000 cycles, so their amplitudes add up in the limit "
                    "(to within 1e-5 of an amplitude)")
            return Extreme(sign * steady_val, math.inf, False, note)
        nxt = last + 2 * (upper - last)
        more = _on_interval(modes, slope, upper, nxt, sign, cache)
        if more[0] > best[0]:
            best = more
        upper = nxt
    raise SearchLimit("the decaying part does not die away within 2^80 spans")


# -- step-response figures ------------------------------------------------------------------

def settled_after(modes: Modes, band: float) -> float:
    """A time after which the decaying modes stay within ``band`` (past every switch)."""
    after = modes.tail()
    _, _, decaying = after.classify()
    last = max([0.0] + list(modes.breakpoints))
    rates = np.abs(after.rate[decaying])
    upper = last + (1.0 / float(np.min(rates)) if rates.size else 1.0)
    for _ in range(200):
        if after.tail_bound(upper, decaying) <= band:
            return upper
        upper = last + 1.5 * (upper - last)
    raise SearchLimit("the response does not settle within the search span")


def _chunks(modes: Modes, lo: float, hi: float, forward: bool = True):
    """Sample grids over consecutive pieces of [lo, hi] (each a grid of :func:`_grid`, the
    pieces sharing their ends), in time order or backwards; refused beyond _MAX_SCAN samples."""
    b, _ = _fastest(modes)
    per_second = b / (2 * math.pi) * _POINTS_PER_PERIOD
    total = (hi - lo) * per_second
    pieces = max(1, int(math.ceil(total / _CHUNK)))
    edges = np.linspace(lo, hi, pieces + 1)
    order = range(pieces) if forward else range(pieces - 1, -1, -1)
    taken = 0
    for i in order:
        grid = _grid(modes, float(edges[i]), float(edges[i + 1]))
        taken += grid.size
        if taken > _MAX_SCAN:  # counted as the search goes: an early answer costs little
            msg = (f"more than {_MAX_SCAN:,} samples would be needed to search "
                   f"[{_fmt(lo)}, {_fmt(hi)}] at {_POINTS_PER_PERIOD} per period of "
                   f"{_fmt(b)} rad/s")
            raise SearchLimit(msg)
        yield grid


def settling_time(modes: Modes, final: float, band: float) -> float:
    """The last time |y - y∞| exceeds ``band`` (exact from the modes, however late): searched
    backwards from a time after which the decaying modes' bound keeps y inside the band."""
    upper = settled_after(modes, 0.5 * band)
    f = lambda x: abs(float(modes(np.array([x]))[0]) - final) - band  # noqa: E731
    for ts in _chunks(modes, 0.0, upper, forward=False):
        g = np.abs(modes(ts) - final) - band
        out = np.nonzero(g > 0)[0]
        if not out.size:
            continue
        k = int(out[-1])
        if k + 1 >= ts.size:
            return float(ts[k])
        try:
            return float(brentq(f, ts[k], ts[k + 1], xtol=1e-15, rtol=1e-15))
        except ValueError:
            return float(ts[k + 1])
    return 0.0


def crossing_time(modes: Modes, level: float, sign: float, upper: float) -> float | None:
    """The first time sign·y reaches sign·level, searched forwards over [0, upper]."""
    f = lambda x: sign * (float(modes(np.array([x]))[0]) - level)  # noqa: E731
    for ts in _chunks(modes, 0.0, upper):
        g = sign * (modes(ts) - level)
        idx = np.nonzero(g >= 0)[0]
        if not idx.size:
            continue
        k = int(idx[0])
        if k == 0:
            return float(ts[0])
        try:
            return float(brentq(f, ts[k - 1], ts[k], xtol=1e-15, rtol=1e-15))
        except ValueError:
            return float(ts[k])
    return None
