"""The exact response to a piecewise-linear load record, marched from point to point.

The equations in first-order form, z' = A z + g f(t) + c (g: how the record enters, c: the
constant loads), have on a segment of length h with load a + b·s the exact solution

    z(h) = e^{Ah} z(0) + K₀(h) (g a + c) + K₁(h) g b,
    K₀(h) = ∫₀ʰ e^{Aσ} dσ,   K₁(h) = ∫₀ʰ e^{Aσ} (h − σ) dσ,

the interpolation-of-excitation recurrence (N. C. Nigam and P. C. Jennings, Bull. Seism. Soc.
Am. 59, 1969; A. K. Chopra, Dynamics of Structures, §5.2) for any number of unknowns. The three
blocks come from one matrix exponential of [[A, I, 0], [0, 0, I], [0, 0, 0]]·h (C. F. Van Loan,
IEEE Trans. Automat. Control 23, 1978). Segments of nearly equal length (the
rounding of recorded times, a jittering clock) share one exponential, carried to each length
by its Taylor series in the difference, summed to far below rounding. The march itself
composes the segments' affine maps pairwise (a work-efficient
scan), so the whole record is a few dozen array operations, not one Python step per point.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import expm

__all__ = ["Transitions", "fastest_rate", "march", "output_rows", "record_values", "transitions"]

_GAP = 0.05         # segment lengths within _GAP/‖M‖ of each other share one exponential
_TAYLOR = 14        # terms of the Taylor series in the gap: (0.05)^14/14! < 1e-28
_SEQUENTIAL = 32    # below this many maps the scan composes them one by one


@dataclass(frozen=True, eq=False)
class Transitions:
    """Each segment's affine map z ↦ Φ z + q (segments × d × d and segments × d)."""

    phi: np.ndarray
    q: np.ndarray


def _augmented(system: np.ndarray) -> np.ndarray:
    d = len(system)
    m = np.zeros((3 * d, 3 * d))
    m[:d, :d] = system
    m[:d, d:2 * d] = np.eye(d)
    m[d:2 * d, 2 * d:] = np.eye(d)
    return m


def _clusters(h: np.ndarray, norm: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(representative of each segment's length, the gap to it, the representatives): lengths
    within _GAP/‖M‖ of a bin's shortest share its exponential (a uniform record whose times
    carry rounding, or a jittering clock, needs only a few)."""
    uniq = np.unique(h)
    bins = np.floor((uniq - uniq[0]) * (norm / _GAP)).astype(np.int64)
    starts = np.nonzero(np.diff(bins, prepend=-1))[0]
    reps = uniq[starts]
    idx = np.searchsorted(reps, h, side="right") - 1
    return idx, h - reps[idx], reps


def _terms(r: float) -> int:
    """Terms of the Taylor series in the gap for r = gap·‖M‖ ≤ _GAP: the first left out is
    below 1e-20 of the sum (1 term when every gap is zero)."""
    k, size = 1, r
    while size > 1e-20 and k < _TAYLOR:
        k += 1
        size *= r / k
    return k


def transitions(system, drive, constant, lengths, start_values, slopes) -> Transitions:
    """The affine map of every segment (lengths > 0) for loads a + b·s (``start_values`` a,
    ``slopes`` b): Φ = e^{Ah}, q = K₀(g a + c) + K₁ g b."""
    a_mat = np.asarray(system, dtype=float)
    d = len(a_mat)
    m = _augmented(a_mat)
    norm = float(np.linalg.norm(m, 1))
    lengths = np.asarray(lengths, dtype=float)
    idx, gap, reps = _clusters(lengths, norm)
    tops = expm(reps[:, None, None] * m[None])[:, :d, :]          # reps × d × 3d
    g = np.asarray(drive, dtype=float)
    c = np.asarray(constant, dtype=float)
    a = np.asarray(start_values, dtype=float)
    b = np.asarray(slopes, dtype=float)
    n = len(lengths)
    phi = np.zeros((n, d, d))
    q = np.zeros((n, d))
    term = np.eye(3 * d)
    # E(h₀ + δ) = E(h₀)·e^{Mδ} = Σ_k δ^k E(h₀) M^k / k!, each power's blocks gathered per segment
    for k in range(_terms(float(np.max(gap, initial=0.0)) * norm)):
        w = tops @ term                                            # reps × d × 3d
        x = gap ** k if k else np.ones(n)
        phi += x[:, None, None] * w[idx, :, :d]
        k0 = w[:, :, d:2 * d]
        q += x[:, None] * ((k0 @ g)[idx] * a[:, None] + (k0 @ c)[idx]
                           + (w[:, :, 2 * d:] @ g)[idx] * b[:, None])
        term = term @ m / (k + 1)
    return Transitions(phi, q)


def _compose(phi: np.ndarray, q: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The maps from the start to the end of each segment: (Φ_i⋯Φ_0, Q_i) with
    z_{i+1} = Φ_i⋯Φ_0 z_0 + Q_i. Pairs are composed, the half as many maps scanned the same
    way, and the maps in between filled in: about 2n small products in all."""
    n = len(phi)
    if n <= _SEQUENTIAL:
        cp, cq = phi.copy(), q.copy()
        for i in range(1, n):
            cp[i] = phi[i] @ cp[i - 1]
            cq[i] = phi[i] @ cq[i - 1] + q[i]
        return cp, cq
    odd = slice(1, n - (n % 2), 2)
    even = slice(0, n - (n % 2), 2)
    pp = phi[odd] @ phi[even]
    pq = np.einsum("nij,nj->ni", phi[odd], q[even]) + q[odd]
    sp_, sq = _compose(pp, pq)
    cp, cq = np.empty_like(phi), np.empty_like(q)
    cp[odd], cq[odd] = sp_, sq
    cp[0], cq[0] = phi[0], q[0]
    rest = slice(2, n, 2)
    prev = slice(1, n - 1, 2)
    cp[rest] = phi[rest] @ cp[prev]
    cq[rest] = np.einsum("nij,nj->ni", phi[rest], cq[prev]) + q[rest]
    return cp, cq


def march(system, drive, constant, z0, times, values) -> np.ndarray:
    """The state at every knot of the load (knots × d), for the load linear between knots
    (``times``, ``values``; a repeated time is a jump, where the state does not change)."""
    t = np.asarray(times, dtype=float)
    f = np.asarray(values, dtype=float)
    z0 = np.asarray(z0, dtype=float)
    h = np.diff(t)
    live = np.nonzero(h > 0)[0]
    states = np.empty((len(t), len(z0)))
    states[0] = z0
    if live.size:
        with np.errstate(over="ignore", invalid="ignore"):  # the caller judges what overflows
            slopes = (f[live + 1] - f[live]) / h[live]
            tr = transitions(system, drive, constant, h[live], f[live], slopes)
            cp, cq = _compose(tr.phi, tr.q)
            ends = np.einsum("nij,j->ni", cp, z0) + cq
        # the state after each live segment holds through the zero-length jumps that follow
        after = np.zeros(len(t), dtype=int)
        after[live + 1] = np.arange(1, live.size + 1)
        after = np.maximum.accumulate(after)
        full = np.vstack([z0[None, :], ends])
        states = full[after]
    return states


def output_rows(system, drive, constant, picks) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(C, D, E) of quantities y = C z + D f + E written as Σ coefficient · (state index or the
    derivative of one): ``picks`` per quantity is a list of (coefficient, state index,
    differentiated?) — a differentiated state is read from z' = A z + g f + c, and index -1
    is the load f itself."""
    a = np.asarray(system, dtype=float)
    g = np.asarray(drive, dtype=float)
    c = np.asarray(constant, dtype=float)
    C = np.zeros((len(picks), len(a)))
    D = np.zeros(len(picks))
    E = np.zeros(len(picks))
    for r, terms in enumerate(picks):
        for coeff, index, differentiated in terms:
            if index < 0:
                D[r] += coeff
            elif differentiated:
                C[r] += coeff * a[index]
                D[r] += coeff * g[index]
                E[r] += coeff * c[index]
            else:
                C[r, index] += coeff
    return C, D, E


def fastest_rate(system) -> float:
    """The largest |λ| of A: the rate that sets how finely a segment is searched."""
    lam = np.linalg.eigvals(np.asarray(system, dtype=float))
    return float(np.max(np.abs(lam), initial=0.0)) if len(lam) else 0.0




def record_values(rm, times) -> dict:
    """Every quantity of a :class:`~derivpad.core.model.history.RecordMarch` at ``times`` (NaN
    before 0; the value from the right at a knot): the state at the knot before each time
    carried exactly over the rest by the segment's own map."""
    t = np.atleast_1d(np.asarray(times, dtype=float))
    kt, kf = rm.knot_times, rm.knot_loads
    last = len(kt) - 1
    i = np.clip(np.searchsorted(kt, t, side="right") - 1, 0, last)
    nxt = np.minimum(i + 1, last)
    span = kt[nxt] - kt[i]
    inside = (span > 0) & (i < last)
    slope = np.where(inside, (kf[nxt] - kf[i]) / np.where(span > 0, span, 1.0), 0.0)
    start = np.where(i < last, kf[i], rm.final_level)
    sigma = np.maximum(t - kt[i], 0.0)
    z = rm.states[i].copy()
    go = np.nonzero(sigma > 0)[0]
    if go.size:
        tr = transitions(rm.system, rm.drive, rm.constant, sigma[go], start[go], slope[go])
        z[go] = np.einsum("nij,nj->ni", tr.phi, z[go]) + tr.q
    load = start + slope * sigma
    return {name: np.where(t < 0, np.nan, z @ C + D * load + E)
            for name, (C, D, E) in rm.outputs.items()}
