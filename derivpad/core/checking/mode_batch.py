"""One symbolic sum of modes evaluated for many sets of numbers at once (load cases).

A :class:`~derivpad.core.checking.modes.ModeTable` is compiled from one closed form; every
case of a load-case table that falls in the same form has the same modes with other numbers.
:class:`ModeBatch` holds them as arrays (cases × modes), and :meth:`ModeBatch.segment` gives,
between two switching times, the modes switched on so far re-written in the time since the
switch and added where they share a pole, exactly as :meth:`Modes.tail` does after the last
switch: on a segment a response is then a handful of terms τ^k e^{aτ}(A cos bτ + B sin bτ),
evaluated with their first and second derivatives for all cases in one NumPy expression.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["ModeBatch", "Segment"]

_FLOOR = 1e-13
"""A coefficient this small beside the terms that formed it has cancelled (as Modes.tail)."""


@dataclass(frozen=True, eq=False)
class Segment:
    """The modes acting on one interval between switching times, for every case: in
    τ = t - ``start``; ``power`` per term, the other arrays cases × terms; ``end`` is the next
    switching time (``math.inf`` after the last)."""

    start: np.ndarray
    end: np.ndarray
    power: np.ndarray
    rate: np.ndarray
    freq: np.ndarray
    cos: np.ndarray
    sin: np.ndarray

    def rows(self, idx) -> "Segment":
        """The segment for the cases ``idx`` only."""
        return Segment(self.start[idx], self.end[idx], self.power, self.rate[idx],
                       self.freq[idx], self.cos[idx], self.sin[idx])

    @property
    def amplitude(self) -> np.ndarray:
        """√(A² + B²) of each term (cases × terms)."""
        return np.hypot(self.cos, self.sin)

    def values(self, times: np.ndarray, order: int = 1):
        """(y, y', …) up to derivative ``order`` (≤ 2) at ``times`` (cases × samples, t ≥ start
        of each case's segment)."""
        tau = np.maximum(times - self.start[:, None], 0.0)
        out = [np.zeros_like(tau) for _ in range(order + 1)]
        with np.errstate(over="ignore", invalid="ignore"):
            for m, k in enumerate(self.power):
                A, B = self.cos[:, m:m + 1], self.sin[:, m:m + 1]
                if not (A.any() or B.any()):
                    continue  # a term cancelled in every case
                a, b = self.rate[:, m:m + 1], self.freq[:, m:m + 1]
                e = np.exp(a * tau) if a.any() else 1.0
                if b.any():
                    c, s = np.cos(b * tau), np.sin(b * tau)
                    g = [e * (A * c + B * s)]  # e^{aτ}(A cos + B sin) and its derivatives
                    for _ in range(order):
                        A, B = a * A + b * B, a * B - b * A
                        g.append(e * (A * c + B * s))
                else:  # no oscillation: e^{aτ} A, a e^{aτ} A, …
                    g = [e * A]
                    for _ in range(order):
                        g.append(a * g[-1])
                if not k:
                    for i in range(order + 1):
                        out[i] += g[i]
                    continue
                p = [tau ** k, k * tau ** (k - 1),
                     k * (k - 1) * tau ** (k - 2) if k > 1 else 0.0][:order + 1]
                out[0] += p[0] * g[0]
                if order >= 1:
                    out[1] += p[1] * g[0] + p[0] * g[1]
                if order >= 2:
                    out[2] += p[2] * g[0] + 2 * p[1] * g[1] + p[0] * g[2]
        return out

    def classify(self):
        """(growing, steady, decaying) masks (cases × terms) as :meth:`Modes.classify`."""
        amp = self.amplitude
        scale = np.max(amp, axis=1, initial=0.0)[:, None]
        on = amp > 1e-40 * np.maximum(scale, 1e-300)
        rate_scale = np.maximum(np.max(np.concatenate([np.abs(self.rate), self.freq], axis=1),
                                       axis=1, initial=0.0), 1.0)[:, None]
        steady_rate = np.abs(self.rate) <= 1e-11 * rate_scale
        k = self.power[None, :]
        growing = on & ((~steady_rate & (self.rate > 0)) | (steady_rate & (k > 0)))
        steady = on & steady_rate & (k == 0)
        decaying = on & ~steady_rate & (self.rate < 0)
        return growing, steady, decaying

    def tail_bound(self, tau: np.ndarray, decaying: np.ndarray) -> np.ndarray:
        """Per case, a bound of |Σ decaying terms| for every τ' ≥ ``tau`` (as Modes.tail_bound)."""
        total = np.zeros(len(tau))
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            for m, k in enumerate(self.power):
                a = self.rate[:, m]
                x = np.maximum(tau, k / -a) if k else tau
                term = self.amplitude[:, m] * (x ** k if k else 1.0) * np.exp(a * x)
                total += np.where(decaying[:, m], term, 0.0)
        return total


@dataclass(frozen=True, eq=False)
class ModeBatch:
    """The modes of one closed form for n cases.

    ``power``, ``switch_of`` (which switching time each mode starts at) and ``pole_of`` (which
    pole it has: modes of one pole share one symbolic rate and frequency) are the form's; the
    other arrays are cases × modes. ``switches`` holds each case's switching times (cases ×
    switches) in the form's order; ``bad`` marks the cases whose numbers the form cannot take
    (a value that is not a real number, switching times out of the form's order).
    """

    power: np.ndarray
    switch_of: np.ndarray
    pole_of: np.ndarray
    switches: np.ndarray
    rate: np.ndarray
    freq: np.ndarray
    cos: np.ndarray
    sin: np.ndarray
    bad: np.ndarray

    def __len__(self) -> int:
        return self.switches.shape[0]

    @property
    def segments(self) -> int:
        """How many intervals the switching times make (one after the last switch)."""
        return self.switches.shape[1]

    def rows(self, idx) -> "ModeBatch":
        """The batch for the cases ``idx`` only."""
        return ModeBatch(self.power, self.switch_of, self.pole_of, self.switches[idx],
                         self.rate[idx], self.freq[idx], self.cos[idx], self.sin[idx],
                         self.bad[idx])

    def segment(self, j: int) -> Segment:
        """The modes on [switch j, switch j+1): those switched on so far, shifted to switch j
        and added where they share a power of τ and a pole (cancelled terms set to zero)."""
        n = len(self)
        start = self.switches[:, j]
        end = self.switches[:, j + 1] if j + 1 < self.segments else np.full(n, math.inf)
        groups: dict = {}
        with np.errstate(over="ignore", invalid="ignore"):
            for m in np.nonzero(self.switch_of <= j)[0]:
                d = start - self.switches[:, self.switch_of[m]]
                a, b, A, B = self.rate[:, m], self.freq[:, m], self.cos[:, m], self.sin[:, m]
                ea, cb, sb = np.exp(a * d), np.cos(b * d), np.sin(b * d)
                A1, B1 = A * cb + B * sb, B * cb - A * sb
                k = int(self.power[m])
                for q in range(k + 1):
                    w = math.comb(k, q) * d ** (k - q) * ea
                    key = (q, int(self.pole_of[m]))
                    if key not in groups:
                        groups[key] = [np.zeros(n), np.zeros(n), np.zeros(n), a, b]
                    g = groups[key]
                    g[0] = g[0] + w * A1
                    g[1] = g[1] + w * B1
                    g[2] = g[2] + np.abs(w * A1) + np.abs(w * B1)
        keys = list(groups)
        if not keys:
            z = np.zeros((n, 0))
            return Segment(start, end, np.zeros(0, dtype=int), z, z, z, z)
        col = lambda i: np.stack([groups[k][i] for k in keys], axis=1)  # noqa: E731
        A, B, size = col(0), col(1), col(2)
        A = np.where(np.abs(A) <= _FLOOR * size, 0.0, A)
        B = np.where(np.abs(B) <= _FLOOR * size, 0.0, B)
        return Segment(start, end, np.array([k[0] for k in keys], dtype=int), col(3), col(4),
                       A, B)

    def at(self, times: np.ndarray, since: np.ndarray) -> np.ndarray:
        """y at ``times`` (cases × samples) inside an interval that starts at ``since`` (per
        case) and holds no switch: every mode switched on at or before ``since`` counts, so
        the interval's start is its right value and its end the left limit."""
        out = np.zeros(np.shape(times))
        with np.errstate(over="ignore", invalid="ignore"):
            for m, k in enumerate(self.power):
                c = self.switches[:, self.switch_of[m]][:, None]
                on = c <= since[:, None]
                tau = np.where(on, times - c, 0.0)
                v = np.exp(self.rate[:, m:m + 1] * tau) * (tau ** k if k else 1.0)
                w = self.freq[:, m:m + 1] * tau
                v = v * (self.cos[:, m:m + 1] * np.cos(w) + self.sin[:, m:m + 1] * np.sin(w))
                out += np.where(on, v, 0.0)
        return out

    def fragile(self) -> np.ndarray:
        """Cases with two distinct poles nearly equal (as :attr:`Modes.fragile`): their
        coefficients are large and opposite, and floats lose digits; they take the one-case
        route, which re-adds such terms in 40-digit arithmetic."""
        out = np.zeros(len(self), dtype=bool)
        poles = sorted(set(self.pole_of.tolist()))
        first = [int(np.nonzero(self.pole_of == p)[0][0]) for p in poles]
        for x, i in enumerate(first):
            for j in first[x + 1:]:
                pi = self.rate[:, i] + 1j * self.freq[:, i]
                pj = self.rate[:, j] + 1j * self.freq[:, j]
                gap = np.abs(pi - pj)
                out |= gap <= 1e-6 * np.maximum(np.abs(pi), np.abs(pj))
        return out
