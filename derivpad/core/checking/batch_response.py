"""Suprema and limits of many responses of one form at once, as core/response.py finds them.

The same definitions as :mod:`derivpad.core.checking.response`, over arrays of cases: on each
interval between switching times the response is sampled (40 points per period of its fastest
oscillation, and geometrically after the switch for fast transients), every zero of y' between
samples that comes near the best value is refined by Newton's method kept inside its bracket,
and the interval's ends are taken (the left limit at the next switch). After the last switch
the search goes on until the bound on the decaying modes proves that no later value is larger,
or the value is reached only as t → ∞. A case that needs what only the one-case route does —
a growing or undamped response, too many oscillations, a zero of y' that does not converge —
is marked ``redo`` and never given a number here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .mode_batch import ModeBatch, Segment

__all__ = ["BatchExtreme", "batch_final_value", "batch_split_suprema", "batch_supremum"]

_POINTS_PER_PERIOD = 40
_MIN_POINTS = 33
_MAX_POINTS = 1 << 16
_NEAR = 0.05         # zeros of y' are refined where the samples come this near the best
_TAIL = 1e-10        # as response._TAIL
_CLUSTER = np.geomspace(1e-7, 1.0, 48)


@dataclass(frozen=True, eq=False)
class BatchExtreme:
    """Per case: the signed value of y at the supremum, its time (``math.inf`` when only
    approached as t → ∞), and ``redo`` where this route gives no value."""

    value: np.ndarray
    time: np.ndarray
    attained: np.ndarray
    redo: np.ndarray

    @property
    def size(self) -> np.ndarray:
        """|y| at the supremum."""
        return np.abs(self.value)


def _grid(seg: Segment, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sample times (cases × samples) over [lo, hi], and the cases whose oscillations need more
    samples than a search takes: 40 per period of the fastest oscillation (at least
    _MIN_POINTS), and, where the even spacing does not resolve the fastest rate, a geometric
    cluster after the start (as response._grid)."""
    span = np.maximum(hi - lo, 0.0)
    on = seg.amplitude > 0
    fast = np.max(np.where(on, seg.freq, 0.0), axis=1, initial=0.0)
    need = np.ceil(span * fast / (2 * math.pi) * _POINTS_PER_PERIOD) + 1
    points = int(min(max(_MIN_POINTS, np.max(need, initial=0.0)), _MAX_POINTS))
    u = np.linspace(0.0, 1.0, points)
    rate = np.max(np.where(on, np.maximum(np.abs(seg.rate), seg.freq), 0.0), axis=1, initial=0.0)
    if np.any(span / (points - 1) * rate > 0.05):
        u = np.unique(np.concatenate([u, _CLUSTER]))
    return lo[:, None] + span[:, None] * u[None, :], need > _MAX_POINTS


def _buckets(seg: Segment, lo, hi):
    """Cases grouped by the samples their interval needs (within a factor of 4), so that one
    fast case does not make every case sample finely."""
    fast = np.max(np.where(seg.amplitude > 0, seg.freq, 0.0), axis=1, initial=0.0)
    need = np.maximum(np.maximum(hi - lo, 0.0) * fast / (2 * math.pi) * _POINTS_PER_PERIOD, 1.0)
    level = np.floor(np.log(need) / np.log(4.0)).astype(int)
    for lv in np.unique(level):
        yield np.nonzero(level == lv)[0]


def _refine(seg: Segment, a: np.ndarray, b: np.ndarray, sign: float):
    """Zeros of sign·y' in brackets (a, b) with sign·y' > 0 at a and < 0 at b (one case per
    row of ``seg``): Newton's method, bisection where a step leaves the bracket. Returns the
    zeros and whether each converged."""
    x = 0.5 * (a + b)
    done = np.zeros(len(x), dtype=bool)
    for _ in range(40):
        live = np.nonzero(~done)[0]
        if not live.size:
            break
        xl, al, bl = x[live], a[live], b[live]
        _, d1, d2 = (v[:, 0] for v in seg.rows(live).values(xl[:, None], 2))
        f, fp = sign * d1, sign * d2
        al, bl = np.where(f > 0, xl, al), np.where(f > 0, bl, xl)
        with np.errstate(divide="ignore", invalid="ignore"):
            nxt = xl - f / fp
        inside = np.isfinite(nxt) & (nxt >= al) & (nxt <= bl)
        nxt = np.where(inside, nxt, 0.5 * (al + bl))
        done[live] = ((np.abs(nxt - xl) <= 1e-14 * np.abs(xl)) | (f == 0)
                      | (bl - al <= 1e-14 * np.abs(xl)))
        x[live] = np.where(f == 0, xl, nxt)
        a[live], b[live] = al, bl
    return x, done


def _on_interval(seg: Segment, lo, hi, best, when):
    """Update (best, when), each 2 × cases for the senses +1 and -1: max of sense·y over
    [lo, hi] on this segment for each case (the value at ``hi`` is the left limit there),
    both senses from one set of samples. Returns (best, when, redo)."""
    redo = np.zeros(len(lo), dtype=bool)
    best, when = best.copy(), when.copy()
    for idx in _buckets(seg, lo, hi):
        part = seg.rows(idx)
        t, over = _grid(part, lo[idx], hi[idx])
        redo[idx] |= over
        y, dy = part.values(t, 1)
        redo[idx] |= ~np.all(np.isfinite(y), axis=1)
        for k, sign in enumerate(_SIGNS):
            b, w, r = _best_of(part, t, sign * y, sign * dy, sign, best[k, idx], when[k, idx])
            best[k, idx], when[k, idx] = b, w
            redo[idx] |= r
    return best, when, redo


_SIGNS = (1.0, -1.0)


def _best_of(part: Segment, t, v, d, sign: float, best, when):
    """The samples' largest value and every zero of y' near it, refined."""
    rows_all = np.arange(len(best))
    i = np.argmax(np.where(np.isfinite(v), v, -np.inf), axis=1)
    top = v[rows_all, i]
    better = top > best
    best = np.where(better, top, best)
    when = np.where(better, t[rows_all, i], when)
    redo = np.zeros(len(best), dtype=bool)
    level = best - _NEAR * np.abs(best) - 1e-300
    cand = (d[:, :-1] > 0) & (d[:, 1:] < 0) & (np.maximum(v[:, :-1], v[:, 1:]) >= level[:, None])
    rows, cols = np.nonzero(cand)
    if not rows.size:
        return best, when, redo
    at = part.rows(rows)
    x, ok = _refine(at, t[rows, cols], t[rows, cols + 1], sign)
    val = sign * at.values(x[:, None], 0)[0][:, 0]
    redo[rows[~ok]] = True
    order = np.lexsort((val, rows))  # the largest refined value of each case last
    last = np.r_[rows[order][1:] != rows[order][:-1], True]
    r, xv, vv = rows[order][last], x[order][last], val[order][last]
    up = vv > best[r]
    best[r] = np.where(up, vv, best[r])
    when[r] = np.where(up, xv, when[r])
    return best, when, redo


def _interval_max(batch: ModeBatch, start, stop, segs):
    """max of ±y over [start, stop] (finite) for each case (2 × cases), segment by segment;
    the response is 0 before the first switching time."""
    n = len(batch)
    best = np.full((2, n), -np.inf)
    when = np.tile(np.asarray(start, dtype=float), (2, 1))
    redo = np.zeros(n, dtype=bool)
    best[:, batch.switches[:, 0] > start] = 0.0
    for seg in segs:
        lo = np.maximum(seg.start, start)
        hi = np.minimum(seg.end, stop)
        use = np.nonzero(hi >= lo)[0]
        if not use.size:
            continue
        b, w, r = _on_interval(seg.rows(use), lo[use], hi[use], best[:, use], when[:, use])
        best[:, use], when[:, use] = b, w
        redo[use] |= r
    return best, when, redo


def batch_supremum(batch: ModeBatch, sense: int = 0, start=0.0, stop=math.inf,
                   segs=None) -> BatchExtreme:
    """The supremum of |y| (sense 0) or of sense·y over [start, stop] for every case, as
    :func:`derivpad.core.checking.response.supremum`. ``start``/``stop``: numbers or arrays."""
    segs = segs if segs is not None else [batch.segment(j) for j in range(batch.segments)]
    return _extreme(_per_sign(batch, start, stop, segs, either=sense == 0), sense)


def batch_split_suprema(batch: ModeBatch, at, segs=None):
    """(over all t ≥ 0, over [0, at], over [at, ∞)) sup |y| per case, the first from the
    other two (each interval searched once): the larger of the two, the earlier on a tie, as
    one search over all t finds it; a case whose later part is only approached as t → ∞ is
    searched over all t again."""
    segs = segs if segs is not None else [batch.segment(j) for j in range(batch.segments)]
    before = _per_sign(batch, 0.0, at, segs)
    after = _per_sign(batch, at, math.inf, segs, either=True)
    first = before[0] >= after[0]
    whole = [np.where(first, b, a) for b, a in zip(before[:3], after[:3])] + [
        before[3] | after[3]]
    again = np.nonzero(~after[2].all(axis=0))[0]
    if again.size:
        rows = _per_sign(batch.rows(again), 0.0, math.inf, [g.rows(again) for g in segs],
                         either=True)
        for part, got in zip(whole[:3], rows[:3]):
            part[:, again] = got
        whole[3][again] |= rows[3]
    return _extreme(tuple(whole), 0), _extreme(before, 0), _extreme(after, 0)


def _per_sign(batch: ModeBatch, start, stop, segs, either: bool = False):
    """(best of ±y, its time, attained, redo): each 2 × cases but redo (cases)."""
    n = len(batch)
    start = np.broadcast_to(np.asarray(start, dtype=float), (n,))
    stop = np.broadcast_to(np.asarray(stop, dtype=float), (n,))
    if np.all(np.isfinite(stop)):
        best, when, redo = _interval_max(batch, start, stop, segs)
        return best, when, np.ones((2, n), dtype=bool), redo | batch.bad
    return _to_infinity(batch, start, segs, either)


def _extreme(per_sign, sense: int) -> BatchExtreme:
    """The per-sign search as the supremum of sense·y, or of |y| (sense 0: the larger side,
    the upper one on a tie)."""
    best, when, attained, redo = per_sign
    value = best * np.array(_SIGNS)[:, None]
    if sense:
        k = 0 if sense > 0 else 1
        return BatchExtreme(value[k], when[k], attained[k], redo)
    up = value[0] >= -value[1]
    return BatchExtreme(np.where(up, value[0], value[1]), np.where(up, when[0], when[1]),
                        np.where(up, attained[0], attained[1]), redo)


def _to_infinity(batch: ModeBatch, start, segs, either: bool = False):
    """sup of ±y over [start, ∞) (2 × cases): the intervals up to the last switch, then the
    last segment searched over spans that double until its decaying modes' bound proves the
    best value found (response.supremum's rule, case by case). ``either``: only the larger
    side is wanted (sup |y|), so a side is given up once the other is proven larger than
    anything it can still reach."""
    n = len(batch)
    last = segs[-1]
    growing, steady, decaying = last.classify()
    redo = batch.bad | growing.any(axis=1) | (steady & (last.freq > 0)).any(axis=1)
    const = np.sum(np.where(steady & (last.freq == 0), last.cos, 0.0), axis=1)
    steady_val = np.array(_SIGNS)[:, None] * const[None, :]
    begin = np.maximum(last.start, start)
    slow = np.min(np.where(decaying, -last.rate, np.inf), axis=1, initial=np.inf)
    osc = np.min(np.where(decaying & (last.freq > 0), last.freq, np.inf), axis=1,
                 initial=np.inf)
    two_periods = 4 * math.pi / osc
    span = np.minimum(5.0 / slow, np.where(two_periods > 0, two_periods, np.inf))
    span = np.where(np.isfinite(span) & (span > 0), span, 1.0)
    upper = begin + span
    best, when, r = _interval_max(batch, start, upper, segs)
    redo |= r
    value, time = best.copy(), when.copy()
    attained = np.ones((2, n), dtype=bool)
    # without decaying modes the response is a constant after the last switch, sampled above
    todo = np.tile(~redo & decaying.any(axis=1), (2, 1))
    for _ in range(80):
        idx = np.nonzero(todo.any(axis=0))[0]
        if not idx.size:
            break
        tail = last.rows(idx).tail_bound(upper[idx] - last.start[idx], decaying[idx])
        b, sv = best[:, idx], steady_val[:, idx]
        size = np.maximum(np.maximum(np.abs(sv), np.abs(b)), 1e-300)
        above = b > sv + 1e-12 * size
        proven = (b >= sv + tail) & above
        limit = ~proven & (tail <= _TAIL * size)
        reached = limit & ~above  # approached as t → ∞, not attained
        live = todo[:, idx]
        value[:, idx] = np.where(live, np.where(reached, sv, b), value[:, idx])
        time[:, idx] = np.where(live, np.where(reached, math.inf, when[:, idx]), time[:, idx])
        attained[:, idx] = np.where(live, ~reached, attained[:, idx])
        todo[:, idx] = live & ~(proven | limit)
        if either:
            _give_up(todo, idx, value, time, attained, b, np.maximum(b, sv + tail), when)
        more = np.nonzero(todo.any(axis=0))[0]
        if not more.size:
            break
        nxt = last.start[more] + 2 * (upper[more] - last.start[more])
        b, w, r = _on_interval(last.rows(more), upper[more], nxt, best[:, more], when[:, more])
        best[:, more], when[:, more] = b, w
        redo[more] |= r
        upper[more] = nxt
    redo |= todo.any(axis=0)
    return value, time, attained, redo


def _give_up(todo, idx, value, time, attained, best, bound, when) -> None:
    """For sup |y|: a side still searched whose bound is below the other side's settled
    value cannot be the answer; it keeps its best so far (smaller) and is searched no more."""
    for k in (0, 1):
        o = 1 - k
        lose = todo[k, idx] & ~todo[o, idx] & (value[o, idx] > bound[k])
        if lose.any():
            rows = idx[lose]
            value[k, rows], time[k, rows] = best[k, lose], when[k, rows]
            attained[k, rows] = True
            todo[k, rows] = False


def batch_final_value(batch: ModeBatch, segs=None):
    """(lim y as t → ∞, redo) per case: the constant terms after the last switch; a response
    that grows or keeps oscillating, or whose constants nearly but not exactly cancel, is left
    to the one-case route (which adds them in 40-digit arithmetic)."""
    last = segs[-1] if segs is not None else batch.segment(batch.segments - 1)
    growing, steady, _ = last.classify()
    redo = batch.bad | growing.any(axis=1) | (steady & (last.freq > 0)).any(axis=1)
    const = steady & (last.freq == 0)
    total = np.sum(np.where(const, last.cos, 0.0), axis=1)
    size = np.sum(np.where(const, np.abs(last.cos), 0.0), axis=1)
    redo |= (total != 0.0) & (np.abs(total) <= 1e-9 * size)
    return total, redo
