"""Engineering results of a response to a load record, each over the whole response.

The system's own figures (poles, damping, natural frequencies, modes) are those of any
derivation (results.system_results). Each unknown's and derived quantity's peak is the
supremum of |y| over all t ≥ 0 (history_response.record_extremes), split into the part while
the record acts and the part after it, as the shock-response texts split primary and residual
response; the dynamic load factor divides the peak by the static response to the record's
largest load; the final value is the limit after the record.
"""

from __future__ import annotations

import math
from types import MappingProxyType

import numpy as np

from .history_response import (best_of, candidates, record_extremes, segment_extremes,
                               tail_extremes, whole_of)
from .response import growth
from .history_march import fastest_rate
from .results import _BIGGS, _MODES, _REFINE, _SHOCK, system_results, writer_for

__all__ = ["many_peaks", "quantity_extremes", "record_results", "segment_columns",
           "tail_modes"]

_WHOLE = ("sup |y(t)| over t ≥ 0: every segment of the record that can hold it searched in the "
          "generic segment's closed form (" + _REFINE + "), and all t after the record")


def segment_columns(symbols, value_map, rm, state, load, knots, slopes) -> list:
    """The generic segment's numbers for the segments starting at ``knots`` (one array per
    symbol, in the order of ``symbols``): load F_i and slope Ḟ_i, the state at the start."""
    flat = {s: m for m, s in enumerate(x for row in state for x in row)}
    n = len(knots)
    cols = []
    for s in symbols:
        if s == load[0]:
            cols.append(rm.knot_loads[knots].astype(float))
        elif s == load[1]:
            cols.append(np.asarray(slopes, dtype=float))
        elif s in flat:
            cols.append(rm.states[knots, flat[s]])
        else:
            cols.append(np.full(n, float(value_map[s])))
    return cols


def _tail_columns(symbols, value_map, rm, state, load) -> list:
    last = len(rm.knot_times) - 1
    cols = segment_columns(symbols, value_map, rm, state, load, np.array([last]), [0.0])
    cols[list(symbols).index(load[0])] = np.array([rm.final_level])
    return [float(c[0]) for c in cols]


def tail_modes(model, rm, name, state, load, value_map):
    """The closed form after the record (from the last state, under the load that follows)
    as modes; None where it is not a sum of modes."""
    table = model.mode_tables()[0].get(name)
    if table is None:
        return None
    return table.at(tuple(_tail_columns(model.symbols, value_map, rm, state, load)))


def _live(rm):
    kt, kf = rm.knot_times, rm.knot_loads
    starts = np.nonzero(np.diff(kt) > 0)[0]
    lengths = kt[starts + 1] - kt[starts]
    slopes = (kf[starts + 1] - kf[starts]) / lengths
    return starts, lengths, slopes


def _slopes_at(rm, name, starts, slopes):
    """y' at the start and at the end of each live segment: C(Az + g f + c) + D ḟ."""
    C, D, _ = rm.outputs[name]
    row = C @ rm.system
    gc, cc = float(C @ rm.drive), float(C @ rm.constant)
    kf = rm.knot_loads
    d0 = rm.states[starts] @ row + gc * kf[starts] + cc + D * slopes
    d1 = rm.states[starts + 1] @ row + gc * kf[starts + 1] + cc + D * slopes
    return d0, d1


def quantity_extremes(model, rm, name, state, load, value_map, system_poles):
    """record_extremes of one quantity (None where its closed form is not a sum of modes)."""
    table = model.mode_tables()[0].get(name)
    if table is None:
        return None
    starts, lengths, slopes = _live(rm)
    symbols = model.symbols

    def columns(idx):
        return segment_columns(symbols, value_map, rm, state, load, starts[idx], slopes[idx])
    return record_extremes(table, columns, rm.knot_times, rm.node_values(name),
                           _slopes_at(rm, name, starts, slopes), (starts, lengths),
                           fastest_rate(rm.system),
                           _tail_columns(symbols, value_map, rm, state, load),
                           tuple(system_poles))


def many_peaks(model, cases, name, state, load) -> list:
    """sup |y| over the whole response for many cases of one generic form — ``cases``: (the
    march, the values, the system's poles) each, e.g. the oscillators of a response spectrum
    — with every case's candidate segments searched in one pass over arrays, and every
    case's time after the record in another. None where a case's peak cannot be found."""
    table = model.mode_tables()[0].get(name)
    if table is None:
        return [None] * len(cases)
    symbols = model.symbols
    found, cols, lengths, offsets, nodes = [], [], [], [0], []
    for rm, values, _ in cases:
        starts, seg_lengths, slopes = _live(rm)

        def columns(idx, rm=rm, values=values, starts=starts, slopes=slopes):
            return segment_columns(symbols, values, rm, state, load, starts[idx], slopes[idx])
        idx, node_best = candidates(table, columns, rm.knot_times, rm.node_values(name),
                                    _slopes_at(rm, name, starts, slopes),
                                    (starts, seg_lengths), fastest_rate(rm.system))
        found.append(rm.knot_times[starts[idx]])
        cols.append(columns(idx))
        lengths.append(seg_lengths[idx])
        offsets.append(offsets[-1] + len(idx))
        nodes.append(node_best)
    joined = [np.concatenate([c[i] for c in cols]) for i in range(len(symbols))]
    values, times = (segment_extremes(table, joined, np.concatenate(lengths))
                     if offsets[-1] else (np.zeros(0), np.zeros(0)))
    tails = [_tail_columns(symbols, v, rm, state, load) for rm, v, _ in cases]
    after = tail_extremes(table, [np.array(c) for c in zip(*tails)],
                          [rm.knot_times[-1] for rm, _, _ in cases])
    out = []
    for i, (rm, values_i, poles) in enumerate(cases):
        part = slice(offsets[i], offsets[i + 1])
        during = best_of(nodes[i], found[i], values[part], times[part])
        out.append(whole_of(during, after[i], growth(table.at(tuple(tails[i])), poles)))
    return out


def _static_gain(rm, name) -> tuple[float | None, str]:
    """y per unit of the record's load held for ever: C(−A⁻¹g) + D; None with the reason."""
    if np.any(rm.constant != 0):
        return None, "other constant loads act beside the record"
    try:
        z = -np.linalg.solve(rm.system, rm.drive)
    except np.linalg.LinAlgError:
        return None, "the system has no static response (a pole at s = 0)"
    C, D, _ = rm.outputs[name]
    gain = float(C @ z + D)
    if gain == 0.0:
        return None, "the record does not act statically on this quantity (zero static gain)"
    return gain, ""


def record_results(problem, numbers, model, rm, state, load, value_map):
    """The results mapping (read-only) of a derivation under a load record."""
    out = system_results(problem, numbers)
    peak_load = float(np.max(np.abs(rm.knot_loads)))
    end = float(rm.knot_times[-1])
    for name in problem.names:
        w = writer_for(problem, name)
        ext = quantity_extremes(model, rm, name, state, load, value_map,
                                numbers.system_poles)
        if ext is None:
            w.absent("peak", "peak response", w.y_unit, "the closed form is not a sum of modes")
            out.update(w.out)
            continue
        _peaks(w, ext, end)
        gain, why = _static_gain(rm, name)
        if gain is None or peak_load == 0.0:
            w.absent("dynamic_load_factor", "dynamic load factor", "",
                     why or "the record's load is zero throughout")
        elif ext.grows is None and ext.whole is not None:
            static = abs(gain) * peak_load
            how = "max|f|·|static gain|: the record's largest load held statically"
            w.add("static_response_peak_load", "static response to the peak load",
                  w.to_y(static), w.y_unit, how, _BIGGS)
            w.add("dynamic_load_factor", "dynamic load factor", ext.whole.size / static, "",
                  f"DLF = sup|y| / ({how})", _BIGGS, note=ext.whole.note)
        if ext.final is None:
            w.absent("final_value", "final value", w.y_unit, ext.final_note)
        else:
            w.add("final_value", "final value", w.to_y(ext.final), w.y_unit,
                  "lim y(t) as t → ∞ after the record: the constant modes of the generic "
                  "segment's closed form from the last state", _MODES)
        out.update(w.out)
    return MappingProxyType(out)


def _peaks(w, ext, end: float) -> None:
    if ext.whole is None and ext.grows is None:
        why = ("not found: the free vibration after the record has too many oscillations to "
               "search")
        w.absent("peak", "peak response", w.y_unit, why)
        w.absent("time_of_peak", "time of peak", w.t_unit, why)
    elif ext.grows is not None:
        w.add("peak", "peak response", math.inf, w.y_unit, "sup |y(t)| over t ≥ 0", _MODES,
              reason="unbounded: " + ext.grows.reason)
        w.add("time_of_peak", "time of peak", math.inf, w.t_unit, "", _MODES,
              reason="unbounded: the response grows without limit")
    else:
        w.add("peak", "peak response", w.to_y(ext.whole.value), w.y_unit, _WHOLE, _MODES,
              note=ext.whole.note)
        w.add("time_of_peak", "time of peak",
              w.to_t(ext.whole.time) if ext.whole.attained else math.inf, w.t_unit, _REFINE,
              _MODES, note=ext.whole.note)
    shown = f"{w.to_t(end):.6g} {w.t_unit or 's'}"
    parts = [("primary", ext.during, f"while the record acts, 0 ≤ t ≤ {shown}")]
    if ext.after is not None and ext.grows is None:
        parts.append(("residual", ext.after, f"after the record, t ≥ {shown}"))
    for part, e, when in parts:
        w.add(f"peak_{part}", f"{part} peak ({when})", w.to_y(e.value), w.y_unit,
              f"sup |y(t)| {when}", _SHOCK, note=e.note)
        w.add(f"time_of_peak_{part}", f"time of {part} peak",
              w.to_t(e.time) if e.attained else math.inf, w.t_unit, _REFINE, _SHOCK,
              note=e.note)
