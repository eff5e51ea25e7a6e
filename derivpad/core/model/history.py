"""LoadHistory: a measured load record, piecewise linear between its points.

Times are in seconds and values in SI units (converted once when the record is read, see
core/reading/history.py); both are read-only arrays. Two successive points at the same time
make a jump. Before the first point the load is zero; after the last it is zero too, unless
``hold_last`` keeps the last value (as ``forcing.table`` does).
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass

import numpy as np

from .derivation import Derivation

__all__ = ["HistoryDerivation", "LoadHistory", "PeriodicDerivation", "RecordMarch"]


def _frozen(x) -> np.ndarray:
    a = np.array(x, dtype=float)
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class LoadHistory:
    """A load record: ``times`` (s) and ``values`` (SI), its unit as given and as SI, and
    where it came from (``source``: a file and its columns, an array, a pandas table)."""

    times: np.ndarray
    values: np.ndarray
    hold_last: bool = False
    unit: str = ""          # SI unit of the values ("N"); "" for plain numbers
    given_unit: str = ""    # the unit the record was written in ("kN")
    time_unit: str = "s"    # the unit its times were written in
    source: str = "array"
    name: str = ""          # the value column's name, where the record named it

    def __post_init__(self):
        object.__setattr__(self, "times", _frozen(self.times))
        object.__setattr__(self, "values", _frozen(self.values))

    def __len__(self) -> int:
        return len(self.times)

    @property
    def duration(self) -> float:
        """The time of the last point (s)."""
        return float(self.times[-1])

    @property
    def sha256(self) -> str:
        """SHA-256 of the times and values (SI, float64): the record's fingerprint in a calc
        package, so that a re-run can prove it read the same record."""
        return hashlib.sha256(np.ascontiguousarray(self.times).tobytes()
                              + np.ascontiguousarray(self.values).tobytes()).hexdigest()

    @property
    def jumps(self) -> int:
        """How many times the record jumps (two points at one time)."""
        return int(np.count_nonzero(np.diff(self.times) == 0.0))

    @property
    def final_level(self) -> float:
        """The load after the record: its last value if held, else zero."""
        return float(self.values[-1]) if self.hold_last else 0.0

    @property
    def description(self) -> str:
        unit = f" {self.unit}" if self.unit else ""
        held = ", last value held" if self.hold_last else ", zero after the last point"
        return (f"measured load history of {len(self)} points from t = {self.times[0]:.6g} s to "
                f"t = {self.duration:.6g} s ({self.source}), values {self.values.min():.6g} to "
                f"{self.values.max():.6g}{unit}, linear between points{held}")

    def knots(self) -> tuple[np.ndarray, np.ndarray]:
        """(times, values) of the load from t = 0: a zero-load start where the record starts
        later, and the drop to zero at the end unless the last value is held. Between knots
        the load is linear; a repeated time is a jump."""
        t, f = self.times, self.values
        if t[0] > 0.0:
            t, f = np.concatenate([[0.0, t[0]], t]), np.concatenate([[0.0, 0.0], f])
        if not self.hold_last and f[-1] != 0.0:
            t, f = np.concatenate([t, [t[-1]]]), np.concatenate([f, [0.0]])
        return t, f

    def at(self, times) -> np.ndarray:
        """The load at ``times`` (right-continuous at a jump; zero before 0)."""
        t = np.asarray(times, dtype=float)
        kt, kf = self.knots()
        i = np.clip(np.searchsorted(kt, t, side="right") - 1, 0, len(kt) - 2)
        span = kt[i + 1] - kt[i]
        with np.errstate(invalid="ignore", divide="ignore"):
            inside = kf[i] + (kf[i + 1] - kf[i]) * np.where(span > 0, (t - kt[i]) / span, 0.0)
        out = np.where(t >= kt[-1], self.final_level, inside)
        return np.where(t < 0, 0.0, out)


@dataclass(frozen=True, eq=False)
class RecordMarch:
    """The record's response at its knots and what evaluating it between them needs: the
    first-order system z' = A z + g f(t) + c, the knots (times and load values), the state at
    each knot, and each reported quantity as y = C z + D f + E (``outputs``: name → (C, D, E))."""

    system: np.ndarray
    drive: np.ndarray
    constant: np.ndarray
    knot_times: np.ndarray
    knot_loads: np.ndarray
    states: np.ndarray
    outputs: dict
    final_level: float

    def node_values(self, name: str) -> np.ndarray:
        """The quantity at every knot (both sides of a jump)."""
        C, D, E = self.outputs[name]
        return self.states @ C + D * self.knot_loads + E


@dataclass(frozen=True, slots=True)
class HistoryDerivation(Derivation):
    """The derivation of a response to a measured load record.

    Its steps show the record, the derivation for one generic segment (load F_i + Ḟ_i·τ from
    the state at the segment's start, τ the time since it), the recurrence that carries the
    state from knot to knot, and the first and last knots. ``solution`` is the generic
    segment's closed form in τ; calling the derivation evaluates the record's response itself
    (exactly, from the state at the knot before each time). ``record`` is the LoadHistory,
    ``march`` the states at its knots (:class:`RecordMarch`).
    """

    record: LoadHistory | None = None
    march: RecordMarch | None = None
    load_name: str = ""

    def values_at(self, times) -> dict:
        """{name: array} of every unknown and derived quantity at ``times``: the record's
        response, every quantity from one evaluation of the state (the engine leaves the
        evaluator in the cache); the generic segment's closed form where it is absent (a
        derivation read back from JSON has no record)."""
        evaluate = self._cache.get("record_values")
        return evaluate(times) if evaluate is not None else Derivation.values_at(self, times)

    def __repr__(self) -> str:
        status = "verification passed" if self.verification.passed else "NOT VERIFIED"
        return (f"<Derivation of {self.problem.text!r} under a load record of "
                f"{len(self.record)} points: {len(self.steps)} steps, {status}>")


@dataclass(frozen=True, slots=True)
class PeriodicDerivation(Derivation):
    """The derivation of a response to a load that repeats for ever.

    Its steps show the periodic load's transform, one generic period (the period's load from
    the state it starts in), the map from period to period, the periodic steady state and
    the transient. ``solution`` is the generic period's closed form in τ; calling the
    derivation evaluates the whole response y_ss(t − kT) + y_tr(t).
    """

    periodic_load: object = None
    load_name: str = ""
    period_map: tuple = ()        # (Φ_T, q_T)
    steady_state: tuple = ()      # z_ss, the state each steady period starts in

    def __repr__(self) -> str:
        status = "verification passed" if self.verification.passed else "NOT VERIFIED"
        return (f"<Derivation of {self.problem.text!r} under a periodic load (T = "
                f"{self.periodic_load.period}): {len(self.steps)} steps, {status}>")
