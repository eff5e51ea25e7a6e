"""Engineering results of many cases of one form at once (load cases' vectorised route).

A form's results have one shape for every case it covers: the same keys, units and reasons
for the figures that do not apply. That shape is read from one case's results found by
:func:`derivpad.core.checking.results.engineering_results` (the ``reference``); the numbers
of every case are then found with the array routines of ``batch_response`` by the same
definitions (a peak is the supremum over all t ≥ 0, the dynamic load factor the peak over the
static response to the peak load, the primary and residual peaks those while and after a pulse
acts). A case whose results would take another shape (a response that grows or keeps
oscillating, a limit that nearly cancels, a figure this route does not find, such as the rise
and settling of a step response) is marked ``redo``: it takes the one-case route, so no case
is given a number this route cannot stand behind.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from .batch_response import batch_final_value, batch_split_suprema, batch_supremum

__all__ = ["BatchResults", "batch_engineering_results"]


@dataclass(frozen=True, eq=False)
class BatchResults:
    """Per result key, an array of values in the result's display unit (NaN where it does not
    apply, as in the form's reference); ``redo`` marks the cases left to the one-case route
    (among them every case with an unbounded value or a peak only approached as t → ∞)."""

    columns: dict
    units: dict
    redo: np.ndarray


class _Writer:
    """Columns in the reference's keys and units; a key the reference lacks, or whose
    reference value is of another kind (absent, unbounded), sends every case back."""

    def __init__(self, reference, n: int):
        self.reference = reference
        self.n = n
        self.columns: dict = {}
        self.redo = np.zeros(n, dtype=bool)

    def put(self, key: str, values) -> None:
        """A figure's values for every case; a case without a finite value is sent back."""
        r = self.reference.get(key)
        if r is None or r.magnitude is None or isinstance(r.magnitude, (tuple, list, str)):
            self.redo[:] = True
            return
        values = np.asarray(values, dtype=float)
        self.redo |= ~np.isfinite(values)  # unbounded or lost: the one-case route says why
        self.columns[key] = values

    def absent_as_reference(self, key: str) -> None:
        """A figure the reference has without a value: the same for every case of the form."""
        r = self.reference.get(key)
        if r is None or r.magnitude is not None:
            self.redo[:] = True
            return
        self.columns[key] = np.full(self.n, math.nan)


def _display(writer_of, name: str):
    """(to display unit of y, of t) as affine maps over arrays, from the results' writer."""
    w = writer_of(name)
    y0, y1 = w.to_y(0.0), w.to_y(1.0)
    t0, t1 = w.to_t(0.0), w.to_t(1.0)
    return (lambda v: y0 + (y1 - y0) * v), (lambda v: t0 + (t1 - t0) * v)


def batch_engineering_results(problem, model, columns, reference, writer_of) -> BatchResults:
    """The results of the cases ``columns`` (an array per symbol of ``model``) of one form.

    ``reference`` is the results mapping of one case of the form (its shape: keys, units,
    figures that do not apply); ``writer_of(name)`` the results' ResultWriter of a quantity
    (its display units and key).
    """
    n = len(columns[0])
    out = _Writer(reference, n)
    tables, loads = model.mode_tables()
    single = problem.size == 1
    if single:
        _damping(out, problem, model, columns)
    statics = _static_rows(out, problem, model, columns)
    load = _load(out, loads, columns)
    at_rest = _at_rest(problem, model, columns)
    for name, table in tables.items():
        w = writer_of(name)
        if table is None:
            out.redo[:] = True
            continue
        batch = table.batch(columns)
        out.redo |= batch.bad | batch.fragile()
        y, t = _display(writer_of, name)
        key = w.key
        segs = [batch.segment(j) for j in range(batch.segments)]
        split = None
        if key("peak_primary") in reference and load.ends is not None:
            ends = np.where(np.isfinite(load.ends), load.ends, 0.0)
            peak, *split = batch_split_suprema(batch, ends, segs)
        else:
            peak = batch_supremum(batch, segs=segs)
        out.redo |= peak.redo
        out.put(key("peak"), y(peak.value))
        out.put(key("time_of_peak"), np.where(peak.attained, t(peak.time), math.inf))
        final, redo = batch_final_value(batch, segs)
        out.redo |= redo
        out.put(key("final_value"), y(final))
        row = statics.get(name)
        _load_factor(out, key, y, t, split, peak, row, load)
        _step_figures(out, key, final, at_rest)
    for key in reference:  # a numeric figure this route did not find: the one-case route
        r = reference[key]
        if key not in out.columns and not isinstance(r.magnitude, (tuple, list, str)):
            out.redo[:] = True
    return BatchResults(out.columns, {k: reference[k].unit for k in out.columns}, out.redo)


def _damping(out: _Writer, problem, model, columns) -> None:
    """ω_n, f_n, ζ (and ω_d below critical) of a second-order ODE from its coefficients."""
    if "natural_frequency" not in out.reference:
        return
    coeffs = problem.operators[0][0]
    if len(coeffs) != 3:
        out.redo[:] = True  # the dominant pair of a higher order: the one-case route
        return
    a0, a1, a2 = model.evaluate_many("damping", list(coeffs), columns)
    ok = (a0 > 0) & (a2 != 0) & (a0 * a2 > 0)
    out.redo |= ~ok
    with np.errstate(all="ignore"):
        wn = np.sqrt(a0 / a2)
        zeta = a1 / (2 * np.sqrt(a0 * a2))
    out.put("natural_frequency", wn)
    out.put("natural_frequency_hz", wn / (2 * math.pi))
    out.put("damping_ratio", zeta)
    if "damped_frequency" in out.reference:
        out.redo |= ~(np.abs(zeta) < 1)
        with np.errstate(all="ignore"):
            out.put("damped_frequency", wn * np.sqrt(1 - zeta ** 2))
    else:
        out.redo |= np.abs(zeta) < 1


def _static_rows(out: _Writer, problem, model, columns) -> dict:
    """Per unknown, row j of A(0)⁻¹ (cases × n), A(0) the static stiffness matrix; a case
    whose A(0) is (nearly) singular takes the one-case route."""
    n = len(problem.unknowns)
    entries = [(i, j, a) for i, row in enumerate(problem.operators)
               for j, coeffs in enumerate(row) for k, a in enumerate(coeffs) if k == 0 and a != 0]
    if not entries:
        return {}
    values = model.evaluate_many("static", [a for _, _, a in entries], columns)
    A = np.zeros((len(columns[0]), n, n))
    for (i, j, _), v in zip(entries, values):
        A[:, i, j] = v
    with np.errstate(all="ignore"):
        cond = np.linalg.cond(A)
    singular = ~(cond < 1e12)
    if singular.all():
        return {}
    out.redo |= singular
    inverse = np.linalg.inv(np.where(singular[:, None, None], np.eye(n), A))
    return {u: inverse[:, j, :] for j, u in enumerate(problem.unknowns)}


@dataclass(frozen=True, eq=False)
class _LoadFigures:
    """The one loaded equation's load: its supremum |f|, final level and end (NaN where a
    pulse does not end), per case; ``index`` the equation (None: no single load)."""

    index: int | None
    peak: np.ndarray | None = None
    final: np.ndarray | None = None
    ends: np.ndarray | None = None
    finals: tuple = ()


def _load(out: _Writer, loads, columns) -> _LoadFigures:
    """Each equation's final load level (NaN where it does not settle to a constant), and for
    the one loaded equation its supremum |f| and, for a pulse, when it ends."""
    n = len(columns[0])
    finals, batches = [], []
    for table in loads:
        if table is None:
            finals.append(np.full(n, math.nan))
            batches.append(None)
            continue
        b = table.batch(columns)
        segs = [b.segment(j) for j in range(b.segments)]
        level, redo = batch_final_value(b, segs)
        _, steady, _ = segs[-1].classify()
        moving = (segs[-1].amplitude > 0) & ~(steady & (segs[-1].freq == 0))
        finals.append(np.where(moving.any(axis=1), math.nan, level))
        batches.append((b, segs))
        out.redo |= redo
    loaded = [i for i, t in enumerate(loads) if t is None or len(t)]
    if len(loaded) != 1 or loads[loaded[0]] is None:
        return _LoadFigures(None, finals=tuple(finals))
    b, segs = batches[loaded[0]]
    peak = batch_supremum(b, segs=segs)
    out.redo |= peak.redo | b.bad
    final = finals[loaded[0]]
    last = np.max(np.where(b.switches > 0, b.switches, -np.inf), axis=1)
    ends = np.where((final == 0.0) & np.isfinite(last) & (peak.size > 0), last, math.nan)
    return _LoadFigures(loaded[0], peak.size, final, ends, tuple(finals))


def _at_rest(problem, model, columns) -> np.ndarray:
    exprs = [v for vals in problem.initial_values for v in vals]
    n = len(columns[0])
    if not exprs:
        return np.ones(n, dtype=bool)
    values = model.evaluate_many("initial", exprs, columns)
    return ~np.any(np.stack(values) != 0, axis=0)


def _load_factor(out: _Writer, key, y, t, split, peak, row, load: _LoadFigures):
    """Static responses, the dynamic load factor and its primary and residual parts."""
    ref = out.reference
    if row is not None and key("static_response") in ref:
        finals = np.stack(load.finals, axis=1)
        out.put(key("static_response"), y(np.sum(row * finals, axis=1)))
    if key("dynamic_load_factor") not in ref:
        return
    if ref[key("dynamic_load_factor")].magnitude is None:  # absent for the form's reason
        out.absent_as_reference(key("dynamic_load_factor"))
        if row is not None and load.index is not None:
            out.redo |= (load.peak * np.abs(row[:, load.index])) > 0
        return
    if row is None or load.index is None:
        out.redo[:] = True
        return
    gain = np.abs(row[:, load.index])
    static_peak = load.peak * gain
    out.redo |= ~(static_peak > 0)
    with np.errstate(all="ignore"):
        out.put(key("static_response_peak_load"), y(static_peak))
        out.put(key("dynamic_load_factor"), peak.size / static_peak)
    if key("peak_primary") not in ref:
        out.redo |= np.isfinite(load.ends)
        return
    out.redo |= ~np.isfinite(load.ends)
    parts = zip(("primary", "residual"), split)
    for part, ext in parts:
        out.redo |= ext.redo
        out.put(key(f"peak_{part}"), y(ext.value))
        out.put(key(f"time_of_peak_{part}"), np.where(ext.attained, t(ext.time), math.inf))
        with np.errstate(all="ignore"):
            out.put(key(f"dynamic_load_factor_{part}"), ext.size / static_peak)


def _step_figures(out: _Writer, key, final, at_rest) -> None:
    """Overshoot, rise and settling: found here only where they do not apply (a response
    back to rest, or not from rest), as in the reference; else the one-case route."""
    ref = out.reference
    settling = re.compile(re.escape(key("settling_time_@")).replace("@", r"[0-9.e+-]+pct") + "$")
    keys = [k for k in ref if k in (key("percent_overshoot"), key("rise_time"))
            or settling.match(k)]
    if not keys:
        return
    if any(ref[k].magnitude is not None for k in keys):
        out.redo[:] = True  # a step response's rise and settling: the one-case route
        return
    reason = ref[keys[0]].reason
    back = reason.startswith("the response returns to zero")
    moving = reason.startswith("the response does not start from rest")
    same = (final == 0.0) if back else (~at_rest & (final != 0.0)) if moving else None
    if same is None:
        out.redo[:] = True
        return
    out.redo |= ~same
    for k in keys:
        out.absent_as_reference(k)
