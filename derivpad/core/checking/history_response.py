"""Suprema of a response to a load record over the whole response: the record and after it.

Every segment of the record is one case of the generic segment's closed form (load
F_i + Ḟ_i·τ from the state the march gives at its start), so a segment's supremum is found by
the same rules as any response (core/checking/batch_response.py over arrays, the one-case
route where that route cannot stand behind a case). Only the segments that can hold the peak
are searched: those whose ends come near the best value at the knots with y' changing sign
between them, and those too long for their ends to bound the inside (longer than 1/40 of the
period of the system's fastest rate). After the record the response is the generic form from
the last state under the load that follows (zero, or the last value held), searched over all
later t as any response is.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .batch_response import batch_supremum
from .response import Extreme, SearchLimit, final_value, growth, supremum

__all__ = ["RecordExtremes", "best_of", "candidates", "record_extremes", "segment_extremes",
           "tail_extremes", "whole_of"]

_NEAR = 0.05
_SHORT = 2 * math.pi / 40


@dataclass(frozen=True, slots=True)
class RecordExtremes:
    """One quantity's figures: sup |y| over the whole response (``whole``; None where the time
    after the record could not be searched), while the record acts (``during``: 0 ≤ t ≤ t_end)
    and after it (``after``), and lim y as t → ∞ (None with ``final_note`` saying why); times
    are absolute."""

    whole: Extreme | None
    during: Extreme
    after: Extreme | None
    grows: object
    final: float | None
    final_note: str


def segment_extremes(table, columns: list, lengths: np.ndarray):
    """sup |y| on [0, h] of each candidate segment (values, local times)."""
    batch = table.batch(columns)
    got = batch_supremum(batch, 0, 0.0, lengths)
    value, time = got.value.copy(), got.time.copy()
    for i in np.nonzero(got.redo)[0]:
        modes = table.at(tuple(float(c[i]) for c in columns))
        ext = supremum(modes, 0.0, float(lengths[i]))
        value[i], time[i] = ext.value, ext.time
    return value, time


def _reach(table, columns: list, lengths: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """An upper bound of |y| on [0, h] for each segment: the larger end plus h²/8·max|y''|
    (the error of the chord through the ends), max|y''| ≤ Σ |A_m| |λ_m|² max(1, e^{a h})
    over its exponential modes (a constant or linear term has y'' = 0); a mode with a power
    of τ adds its whole size instead."""
    seg = table.batch(columns).segment(0)
    amp = seg.amplitude
    h = lengths[:, None]
    with np.errstate(over="ignore", invalid="ignore"):
        grow = np.exp(np.maximum(seg.rate, 0.0) * h)
        lam2 = seg.rate ** 2 + seg.freq ** 2
        plain = (seg.power[None, :] == 0)
        curve = np.sum(np.where(plain, amp * lam2 * grow, 0.0), axis=1) * lengths ** 2 / 8
        powered = (seg.power[None, :] > 0) & ((lam2 > 0) | (seg.power[None, :] >= 2))
        whole = np.sum(np.where(powered, amp * grow * np.maximum(h ** seg.power[None, :], 1.0),
                                0.0), axis=1)
        bound = ends + curve + whole
    return np.where(np.isfinite(bound), bound, np.inf)


def candidates(table, segment_columns, knots, node_values, slopes_at, lengths_ok, rate):
    """(the live segments that can hold the peak, the best knot (value, time)): segments
    whose ends come near the best knot with y' changing sign between them, and long ones
    whose modes' bound can reach it (see the module docstring)."""
    starts, lengths = lengths_ok
    y = np.asarray(node_values, dtype=float)
    size = np.abs(y)
    k = int(np.argmax(size))
    ends = np.maximum(size[starts], size[starts + 1])
    d0, d1 = slopes_at
    turning = (np.sign(d0) * np.sign(d1) < 0) | (d0 == 0) | (d1 == 0)
    near = turning & (ends >= (1 - _NEAR) * size[k])
    long = np.nonzero(~near & (lengths * rate > _SHORT))[0]
    if long.size:  # a long segment is searched only where its modes could reach the best
        reach = _reach(table, segment_columns(long), lengths[long], ends[long])
        near[long[reach >= size[k]]] = True
    return np.nonzero(near)[0], (float(y[k]), float(knots[k]))


def best_of(node_best, starts_at, values, times) -> Extreme:
    """The larger of the best knot and the best candidate segment (times absolute)."""
    best_v, best_t = node_best
    if len(values):
        j = int(np.argmax(np.abs(values)))
        if abs(values[j]) > abs(best_v):
            best_v, best_t = float(values[j]), float(starts_at[j] + times[j])
    return Extreme(best_v, best_t)


def tail_extremes(table, tail_columns: list, ends) -> list:
    """sup |y| after the record for each case (``tail_columns``: one array per symbol), over
    arrays where that route can stand behind a case, else one case at a time; None where the
    search cannot be made. Times absolute (``ends``: each record's end)."""
    got = batch_supremum(table.batch(tail_columns), 0, 0.0, math.inf)
    out = []
    for i in range(len(ends)):
        if got.redo[i]:
            try:
                ext = supremum(table.at(tuple(float(c[i]) for c in tail_columns)), 0.0)
            except SearchLimit:
                out.append(None)
                continue
        else:
            ext = Extreme(float(got.value[i]), float(got.time[i]), bool(got.attained[i]))
        out.append(Extreme(ext.value, float(ends[i]) + ext.time, ext.attained, ext.note))
    return out


def record_extremes(table, segment_columns, knots, node_values, slopes_at,
                    lengths_ok, rate, tail_columns, system_poles) -> RecordExtremes:
    """The figures of one quantity from its values at the knots (``node_values``), y' at each
    live segment's two ends (``slopes_at``: (start, end) arrays), the candidate segments'
    generic-form numbers (``segment_columns(idx)`` → columns in the order of ``symbols``) and
    the numbers after the record (``tail_columns``). ``lengths_ok``: (live segment index into
    knots, length) of the segments of positive length; ``rate``: the system's fastest |λ|."""
    starts, lengths = lengths_ok
    found, node_best = candidates(table, segment_columns, knots, node_values, slopes_at,
                                  lengths_ok, rate)
    values, times = (segment_extremes(table, segment_columns(found), lengths[found])
                     if found.size else ((), ()))
    during = best_of(node_best, knots[starts[found]], values, times)
    tail = table.at(tuple(tail_columns))
    (after,) = tail_extremes(table, [np.array([x]) for x in tail_columns], [knots[-1]])
    final, why = final_value(tail, system_poles)
    grows = growth(tail, system_poles)
    return RecordExtremes(whole_of(during, after, grows), during, after, grows, final, why)


def whole_of(during: Extreme, after, grows) -> Extreme | None:
    """sup |y| over all t ≥ 0 from the two parts; None where the time after the record could
    not be searched (no number is better than a wrong one)."""
    if grows is not None:
        return Extreme(math.inf, math.inf, False, "unbounded")
    if after is None:
        return None
    return after if after.size > during.size else during
