"""Response spectra: the peak response of a family of single-degree-of-freedom oscillators.

Each oscillator x'' + 2ζω x' + ω² x = s·a(t) (s = −1 for a support acceleration record, the
relative displacement x; s = +1 for a force per unit mass) is the generic oscillator derived
once with ω symbolic, by the same stages as any derivation (its steps are the spectrum's
record); every period is that form with its own ω, marched through the record exactly and
searched over the whole response — the record and all the free vibration after it — as any
response to a record is (core/checking/history_response.py). The spectrum gives the
spectral displacement SD = sup|x|, the pseudo-velocity PSV = ω·SD and the pseudo-acceleration
PSA = ω²·SD (the trade's definitions, e.g. A. K. Chopra, Dynamics of Structures, §6.6, from
memory), and the load factor PSA / max|a| (the peak over the static response to the peak
load, the shock-spectrum ordinate of a force pulse).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import sympy as sp

from ..errors import ParameterError
from .checking.history_results import many_peaks
from .engine import compile_numbers, stages_for_values
from .model import display_hook
from .model.history import LoadHistory

__all__ = ["ResponseSpectrum", "response_spectrum"]

_KINDS = {"support": "-a", "force": "a"}

MAX_PERIODS = 2000
_GROUP_POINTS = 4_000_000
"""Knots of all the oscillators marched and searched together (their states held at once)."""


@dataclass(frozen=True, eq=False)
class ResponseSpectrum:
    """A response spectrum: per natural period, SD, PSV, PSA (SI), the load factor and the
    time of each peak; ``derivation`` is the generic oscillator's (its steps and checks)."""

    periods: np.ndarray
    damping: float
    kind: str
    displacement: np.ndarray
    pseudo_velocity: np.ndarray
    pseudo_acceleration: np.ndarray
    load_factor: np.ndarray
    peak_times: np.ndarray
    record: LoadHistory
    derivation: object = None
    notes: tuple = field(default=())

    @property
    def units(self) -> tuple[str, str, str]:
        """SD, PSV and PSA units: SI where the record is an acceleration in a unit, else none
        (the numbers then are in the record's own units)."""
        return ("m", "m/s", "m/s²") if self.record.unit == "m/s²" else ("", "", "")

    @property
    def frequencies(self) -> np.ndarray:
        """The natural frequencies 1/T (Hz)."""
        return 1.0 / self.periods

    @property
    def points(self) -> int:
        """The record's number of points."""
        return len(self.record)

    def to_dict(self) -> dict:
        """The JSON form: every column, the record's fingerprint, the checks."""
        return display_hook.spectrum_dict(self)

    def table(self):
        """The spectrum as a pandas DataFrame (the cases extra), one row per period."""
        from ..errors import import_extra
        (pd,) = import_extra(("pandas",), "the spectrum table")
        return pd.DataFrame({"period [s]": self.periods,
                             "frequency [Hz]": self.frequencies,
                             "SD": self.displacement, "PSV": self.pseudo_velocity,
                             "PSA": self.pseudo_acceleration, "load factor": self.load_factor,
                             "time of peak [s]": self.peak_times})

    def figure(self, **settings):
        """SD, PSV and PSA against the period (matplotlib, the figures extra)."""
        return display_hook.spectrum_figure(self, **settings)

    def to_text(self, width: int = 80) -> str:
        """The spectrum as a plain-text table."""
        return display_hook.spectrum_text(self, width)

    def _repr_mimebundle_(self, include=None, exclude=None):
        try:
            return display_hook.spectrum_bundle(self)
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"derivpad could not display the spectrum: {exc}"}


def _periods(periods) -> np.ndarray:
    try:
        p = np.asarray(periods, dtype=float).ravel()
    except (TypeError, ValueError) as exc:
        raise ParameterError("periods must be numbers (seconds), e.g. "
                             "numpy.geomspace(0.02, 5, 200)", "periods") from exc
    if p.size == 0 or p.size > MAX_PERIODS:
        raise ParameterError(f"give between 1 and {MAX_PERIODS} periods, not {p.size}",
                             "periods")
    bad = np.nonzero(~np.isfinite(p) | (p <= 0))[0]
    if bad.size:
        raise ParameterError(f"period #{int(bad[0])} is {p[bad[0]]!r}; periods are positive "
                             "numbers of seconds", "periods")
    return p


def _damping(damping) -> float:
    ok = isinstance(damping, (int, float)) and not isinstance(damping, bool)
    if not ok or not math.isfinite(damping) or not 0 <= damping < 1:
        raise ParameterError(f"damping is a ratio ζ with 0 ≤ ζ < 1 (e.g. 0.05), not "
                             f"{damping!r}", "damping")
    return float(damping)


def response_spectrum(record: LoadHistory, periods, damping: float = 0.05, *,
                      kind: str = "support") -> ResponseSpectrum:
    """The response spectrum of a load record over ``periods`` (s) at damping ratio ζ.

    Parameters
    ----------
    record : LoadHistory
        ``forcing.history(...)`` or ``forcing.read_history(...)``: a support acceleration
        (kind "support", in m/s² or a unit of acceleration) or a force per unit mass
        (kind "force"); a pulse shape is a record of its corners (a rectangle is exact, a
        half-sine as finely sampled as wanted).
    periods : sequence of float
        Natural periods in seconds (at most 2000), e.g. ``numpy.geomspace(0.02, 5, 200)``.
    damping : float
        The damping ratio ζ, 0 ≤ ζ < 1 (default 0.05).
    kind : {"support", "force"}
        u'' + 2ζωu' + ω²u = −a_g(t) (relative displacement of a supported oscillator) or
        = a(t).

    Returns
    -------
    ResponseSpectrum

    Raises
    ------
    ParameterError, UnitError
    """
    from .history_engine import equation_loads, generic_problems, record_march
    if not isinstance(record, LoadHistory):
        raise ParameterError("response_spectrum takes a load record: forcing.history(times, "
                             "values) or forcing.read_history(path)", "record")
    if kind not in _KINDS:
        raise ParameterError(f"kind must be 'support' or 'force', not {kind!r}", "kind")
    p = _periods(periods)
    zeta = _damping(damping)
    equation = f"x'' + 2*zeta*w*x' + w**2*x = {_KINDS[kind]}"
    rest = {"x(0)": 0, "x'(0)": 0}
    given, problem, state, load = generic_problems(equation, rest, {"zeta": zeta, "a": record}, "a",
                                           record, None, None, None)
    probe = {"w": sp.Integer(1), **{s: sp.Integer(0) for row in state for s in row},
             load[0]: sp.Integer(0), load[1]: sp.Integer(0)}
    stages = stages_for_values(problem, "underdamped" if zeta < 1 else "overdamped", probe)
    model = compile_numbers(problem, stages, problem.symbols)
    loads = equation_loads(problem, probe, load)
    peaks = []
    group = max(1, _GROUP_POINTS // len(record))  # oscillators searched together, memory kept
    for first in range(0, p.size, group):
        cases = []
        for period in p[first:first + group]:
            values = {**probe, "w": 2 * math.pi / period}
            numbers = model.at(values)
            cases.append((record_march(problem, numbers, loads, load, given, record), values,
                          numbers.system_poles))
        peaks += many_peaks(model, cases, "x", state, load)
    sd = np.array([e.size if e is not None else math.nan for e in peaks])
    when = np.array([e.time if e is not None else math.nan for e in peaks])
    omega = 2 * math.pi / p
    peak_load = float(np.max(np.abs(record.values)))
    psa = omega ** 2 * sd
    factor = psa / peak_load if peak_load > 0 else np.full(p.size, math.nan)
    derivation = _generic_derivation(problem, stages, model, state, load, p)
    missing = p[~np.isfinite(sd)]
    notes = (f"no value (NaN) at {missing.size} period(s) from T = {missing.min():.4g} s: the "
             "free vibration after the record has too many oscillations to search",) \
        if missing.size else ()
    return ResponseSpectrum(p, zeta, kind, sd, omega * sd, psa, factor, when, record,
                            derivation, notes)


def _generic_derivation(problem, stages, model, state, load, periods):
    """The generic oscillator's derivation, checked with the middle period's ω and a unit
    segment (its steps are what the spectrum shows)."""
    from .engine import complete
    from .checking.own_check import self_check
    values = {"w": sp.Rational(2 * math.pi / float(np.median(periods))),
              **{s: sp.Integer(1) for row in state for s in row},
              load[0]: sp.Integer(1), load[1]: sp.Integer(1)}
    own = self_check(problem, stages, None, values)
    return complete(problem, stages, own, values, tolerances={}, window=None, checks="all",
                    model=model, on_failure="return")
