"""Checks independent of the derivation: numerical integration, numerical inversion, limits.

* Numerical integration: all equations as one first-order system z' = A z + G f(t), marched
  over the grid in the time domain: each step exact for the free motion (the matrix
  exponential e^{Ah}, SciPy ``expm``, Padé with scaling and squaring) plus the forcing's
  convolution ∫ e^{A(h−τ)} G f dτ with f interpolated on each substep (9 and 12 Chebyshev
  nodes agreeing to 1e-11, substeps halved until they do) and the exponential integrated
  exactly, so that stiff systems need no small steps; restarted at every breakpoint, impulses
  applied as jumps E⁻¹J in the highest state derivatives (A/a_n in y^(n-1) for one ODE); the
  forcing is the problem's own expression. No transform, pole or partial fraction is used.
  Compared with the closed form on a grid.
* Numerical inversion: each delay part R_c(s) of Y(s) inverted by Talbot's method (the fixed
  contour mpmath uses, its nodes cached across times: ``contour_inversion``) and by Cohen's
  (mpmath ``invertlaplace``), then placed at t = c (second shifting theorem). The partial
  fractions are not used.
* Limit theorems: y(0⁺) = lim_{s→∞} sY(s) (initial value); lim_{t→∞} y = lim_{s→0} sY(s)
  (final value) only where every pole of sY(s) is in the open left half-plane.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
from scipy.linalg import expm

from ...errors import SolveError
from .contour_inversion import cohen, talbot
from .numeric_model import Numbers, NumericModel
from ..symbolic.transform import Ysym
from ..model.checks import Check, Samples

__all__ = ["INDEPENDENT_CHECKS", "NUMERIC_TOLERANCES", "independent_checks", "integrate_piecewise",
           "integration_check", "segment_cuts", "inversion_check", "limit_checks", "missing_values", "not_run"]

NUMERIC_TOLERANCES = {
    "integration": 1e-7,   # max |closed form - time-domain integration| / peak |y|
    "inversion": 1e-7,     # max |closed form - numerical inverse| / peak |y|
    "limits": 1e-9,        # |theorem - solution limit| / max(peak |y|, |value|)
}
"""Default tolerances of the independent checks (relative to the response's peak)."""

INDEPENDENT_CHECKS = ("Numerical integration", "Numerical inversion of Y(s)",
                      "Initial-value theorem", "Final-value theorem")
GRID_POINTS = 1500
INTERPOLATION_NODES = (9, 12)
MAX_SUBSTEPS = 500_000
INVERSION_TIMES = 5
_INVERSION_DIGITS = 20
_METHODS = {"talbot": talbot, "cohen": cohen}


def not_run(name: str, method: str, tolerance: float, why: str) -> Check:
    """A check that could not run: says why, and does not count as passed."""
    return Check(name, method, tolerance, math.nan, False, ran=False, detail=why)


def grid(t_end: float, breakpoints) -> np.ndarray:
    """Sample times over [0, t_end], with each breakpoint and the instant after it."""
    base = np.linspace(0.0, t_end, GRID_POINTS)
    extra = [b for b in breakpoints if 0 < b < t_end]
    return np.unique(np.concatenate([base, extra]))


def segment_cuts(times, breakpoints, kicks) -> list[float]:
    """0, the breakpoints and impulse times inside the window, and its end: where to restart."""
    end = float(times[-1])
    return sorted({0.0, end} | {float(b) for b in breakpoints if 0 < b < end}
                  | {c for c in kicks if c < end})


def _exponential_weights(system: np.ndarray, h: float, nodes: int):
    """e^{Ah}, the interpolation nodes θ_q on [0, 1] (Chebyshev) and matrices W_q with
    ∫₀^h e^{A(h−τ)} p(τ) dτ = Σ_q W_q p(θ_q h) exactly for every polynomial p of degree below
    ``nodes``, however stiff A is.

    The exponential integrals of the basis (θ−½)^k/k! are sums of the φ-functions
    φ_j(Ah) = ∫₀¹ e^{Ah(1−θ)} θ^{j−1}/(j−1)! dθ, read off one matrix exponential of a block
    matrix with A·h in the corner and identities above the diagonal (Van Loan, IEEE Trans.
    Autom. Control 23, 1978; Al-Mohy & Higham, SIAM J. Sci. Comput. 33, 2011, Thm 2.1 — from
    memory). The centred basis keeps the node matrix well conditioned.
    """
    d = system.shape[0]
    block = np.zeros((d * (nodes + 1), d * (nodes + 1)))
    block[:d, :d] = system * h
    for k in range(nodes):
        block[k * d:(k + 1) * d, (k + 1) * d:(k + 2) * d] = np.eye(d)
    full = expm(block)
    phi = [full[:d, (j + 1) * d:(j + 2) * d] for j in range(nodes)]
    basis = [sum((-0.5) ** (k - j) / math.factorial(k - j) * phi[j] for j in range(k + 1))
             for k in range(nodes)]
    theta = (1.0 - np.cos((2 * np.arange(nodes) + 1) * np.pi / (2 * nodes))) / 2.0
    values = np.array([[(t - 0.5) ** k / math.factorial(k) for k in range(nodes)] for t in theta])
    to_basis = np.linalg.inv(values)          # basis coefficients from the node values
    weights = np.stack([h * sum(basis[k] * to_basis[k, q] for k in range(nodes))
                        for q in range(nodes)])
    return full[:d, :d], theta, weights


def _step_groups(steps: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Equal steps grouped (to 1e-12 relative): each group's mean step, and each step's group.

    The mean keeps the marched time on the given times at each group's end; within a group
    the steps differ only by rounding of the times themselves."""
    keys = np.round(steps / np.max(steps), 12)
    unique, which = np.unique(keys, return_inverse=True)
    means = np.array([float(np.mean(steps[which == g])) for g in range(len(unique))])
    return means, which


def _pushes(system, loads, starts, h, nodes: int, r: int) -> np.ndarray:
    """∫₀^h e^{A(h−τ)} G f(t_j + τ) dτ for each start t_j, with the forcing interpolated at
    ``nodes`` points on each of r equal substeps; shape (J, dim)."""
    hs = h / r
    sub, theta, weights = _exponential_weights(system, hs, nodes)
    acc = np.zeros((len(starts), system.shape[0]))
    for m in range(r):
        at = starts[:, None] + (m + theta[None, :]) * hs           # (J, nodes)
        load = sum(np.einsum("jq,qd->jd", np.broadcast_to(f(at.ravel()), at.size).reshape(at.shape),
                             weights @ column)
                   for column, f in loads)
        acc = acc @ sub.T + load
    return acc


def _convolution(system, loads, starts, h, size, first) -> np.ndarray:
    """The forcing's part of each step (:func:`_pushes`), with substeps doubled until two
    interpolation orders (INTERPOLATION_NODES) agree to 1e-11 of ``size`` (per state
    component); ``first`` is the lower order without substeps, already computed. A difference
    that no longer shrinks when the substeps halve is the forcing's own rounding (a load
    written as many cancelling step terms): accepted below 1e-9."""
    r, before = 1, np.inf
    low_order, high_order = INTERPOLATION_NODES
    while r * len(starts) <= MAX_SUBSTEPS:
        low = first if r == 1 else _pushes(system, loads, starts, h, low_order, r)
        high = _pushes(system, loads, starts, h, high_order, r)
        gap = float(np.max(np.abs(high - low) / size))
        if gap <= 1e-11 or (gap <= 1e-9 and gap > before / 2):
            return high
        r, before = 2 * r, gap
    raise SolveError(f"the forcing's convolution did not converge on steps of {h:.6g} s "
                     f"within {MAX_SUBSTEPS} substeps (a forcing too rough to integrate)")


def _segment_plan(system, loads, at: np.ndarray):
    """A segment's steps grouped by length, and a first estimate of each step's push (the
    lower order, no substeps), which sets the scale of each state component."""
    means, which = _step_groups(np.diff(at))
    first = np.zeros((len(at) - 1, system.shape[0]))
    if loads:
        for g, h in enumerate(means):
            first[which == g] = _pushes(system, loads, at[:-1][which == g], h,
                                        INTERPOLATION_NODES[0], 1)
    return means, which, first


def march_segment(system, loads, z, at: np.ndarray, plan, size) -> np.ndarray:
    """The state at the times ``at`` (increasing; no switch inside), from z at ``at[0]``:
    each step exact for the free motion (e^{Ah} by SciPy expm) plus the forcing's part
    (:func:`_convolution`, to ``size`` per state component). Shape (len(at), dim)."""
    means, which, first = plan
    out = np.empty((len(at), len(z)))
    out[0] = z
    transitions = expm(np.stack([system * h for h in means]))
    pushes = np.zeros((len(at) - 1, len(z)))
    if loads:
        for g, h in enumerate(means):
            mine = which == g
            pushes[mine] = _convolution(system, loads, at[:-1][mine], h, size, first[mine])
    for j in range(len(at) - 1):
        z = transitions[which[j]] @ z + pushes[j]
        out[j + 1] = z
    return out


def integrate_piecewise(system, loads, z, times, cuts, kicks, kick) -> np.ndarray:
    """The state at ``times`` marched between successive ``cuts`` (:func:`march_segment`),
    with ``kick(t, state)`` applied where ``kicks`` has an impulse; shape (len(times), dim).
    The error test of the forcing's part is relative to each state component's largest push
    over the whole window, so that a load that is zero but for rounding needs no refining."""
    segments = []
    for left, right in zip(cuts, cuts[1:]):
        sel = (times > left) & (times < right)
        at = np.concatenate([[left], times[sel], [right]])
        segments.append((left, sel, at, _segment_plan(system, loads, at)))
    size = np.maximum(np.max(np.abs(np.concatenate([plan[2] for *_, plan in segments])),
                             axis=0), 1e-300)
    out = np.empty((len(times), len(z)))
    for left, sel, at, plan in segments:
        if left in kicks:
            z = kick(left, z)
        states = march_segment(system, loads, z, at, plan, size)
        out[sel] = states[1:-1]
        out[times == left] = states[0]
        z = states[-1]
    out[times == cuts[-1]] = z
    return out


def first_order_form(lead, lower, orders):
    """(A, G, T, E⁻¹, offsets) of the equations E x^(N) + Σ a_ijk x_j^(k) = f as the
    first-order system z' = A z + G f, z the unknowns and their derivatives below the highest
    (T places E⁻¹'s rows in the highest state derivatives). ``lead`` E may be stacked for
    many cases (…, n, n), each a_ijk of ``lower`` ((i, j, k, a)) then an array over them."""
    n = len(orders)
    einv = np.linalg.inv(lead)
    offsets = np.cumsum([0] + list(orders))
    dim = int(offsets[-1])
    L = np.zeros(np.shape(lead)[:-2] + (n, dim))
    for i, j, k, a in lower:
        L[..., i, offsets[j] + k] += a
    shift_m = np.zeros((dim, dim))
    top = np.zeros((dim, n))
    for j in range(n):
        for m in range(orders[j] - 1):
            shift_m[offsets[j] + m, offsets[j] + m + 1] = 1.0
        top[offsets[j] + orders[j] - 1, j] = 1.0
    return shift_m - top @ einv @ L, top @ einv, top, einv, offsets


def integrate(numbers: Numbers, times: np.ndarray) -> dict:
    """Each unknown at ``times``, integrated in the time domain on the first-order form of the
    equations, z' = A z + G f(t), restarted at every breakpoint; an impulse J_i in equation i
    makes the highest state derivatives jump by E⁻¹J (E: the coefficients of the highest
    derivatives). Each step is exact for the free motion (the matrix exponential, SciPy
    ``expm``: no poles, no transform) plus the forcing's convolution, the forcing
    interpolated and the exponential integrated exactly, with its own error test.
    """
    n = len(numbers.unknowns)
    system, gain, top, einv, offsets = first_order_form(numbers.lead, numbers.lower,
                                                        numbers.orders)
    # only the loaded equations' forcings are evaluated
    loads = [(gain[:, i].copy(), f) for i, (f, modes) in
             enumerate(zip(numbers.forcing, numbers.forcing_modes))
             if modes is None or len(modes) or numbers.final_loads[i] != 0.0]
    kicks: dict = {}
    for i, c, a in numbers.impulses:
        kicks.setdefault(c, np.zeros(n))[i] += a
    z = np.concatenate([np.array(v, dtype=float) for v in numbers.initial])
    out = integrate_piecewise(system, loads, z, times,
                              segment_cuts(times, numbers.breakpoints, kicks), kicks,
                              lambda at, state: state + top @ (einv @ kicks[at]))
    return {u: out[:, offsets[j]] for j, u in enumerate(numbers.unknowns)}


def integration_check(numbers: Numbers, t_end: float, tolerance: float):
    """Every unknown's closed form against the integration on a grid over the window; also
    the figure's samples."""
    bps = list(numbers.breakpoints)
    times = grid(t_end, bps)
    ours = {u: numbers.models[u].closed_form(times) for u in numbers.unknowns}
    forcing = {_equation_label(numbers, i): f(times) for i, f in enumerate(numbers.forcing)}
    one = len(numbers.unknowns) == 1
    how = ("each step exact for the free motion (matrix exponential, SciPy expm) plus the "
           "forcing's convolution, the forcing interpolated (9 and 12 nodes agreeing to 1e-11) "
           "and the exponential integrated exactly, restarted at breakpoints")
    method = (f"The ODE in first-order form integrated in the time domain: {how}, impulses as "
              "jumps in y^(n-1)" if one else
              f"The whole system integrated in the time domain as one first-order system: "
              f"{how}, impulses as jumps E⁻¹J")
    empty = {u: np.full_like(times, np.nan) for u in numbers.unknowns}
    if not np.all(np.isfinite(numbers.lead)) or \
            np.linalg.matrix_rank(numbers.lead) < len(numbers.unknowns):
        return not_run("Numerical integration", method + ".", tolerance,
                       "the coefficients of the highest derivatives form a singular matrix (a "
                       "differential-algebraic system); not integrated"), \
            Samples(times, ours, empty, forcing, tuple(bps))
    finite = [v[np.isfinite(v)] for v in ours.values()]
    scale = max((float(np.max(np.abs(v))) for v in finite if v.size), default=1.0)
    try:
        ref = integrate(numbers, times)
    except SolveError as exc:
        return not_run("Numerical integration", method + ".", tolerance, str(exc)), \
            Samples(times, ours, empty, forcing, tuple(bps))
    # At a breakpoint the closed form gives the value from the right; the integrator arrives
    # from the left. Compare at the grid points off the breakpoints.
    off = np.ones_like(times, dtype=bool)
    for b in bps:
        off &= times != b
    worst, detail = 0.0, []
    for u in numbers.unknowns:
        peak = max(float(np.max(np.abs(ref[u]))), float(np.max(np.abs(ours[u]))), 1e-300)
        abs_err = float(np.max(np.abs(ours[u][off] - ref[u][off])))
        rel = abs_err / max(peak, scale * 1e-3)
        worst = max(worst, rel)
        detail.append(f"max abs error {abs_err:.3e}; max relative error {rel:.3e}" if one
                      else f"{u} {rel:.3e}")
    check = Check("Numerical integration",
                  f"{method}, compared on {int(off.sum())} grid points to t = {t_end:.4g}.",
                  tolerance, worst, worst <= tolerance,
                  detail=detail[0] if one else "max relative error: " + ", ".join(detail))
    return check, Samples(times, ours, ref, forcing, tuple(bps))


def _equation_label(numbers: Numbers, i: int) -> str:
    return "f" if len(numbers.unknowns) == 1 else f"f{i + 1}"


def _inversion_times(t_end: float, breakpoints) -> list[float]:
    times = []
    cuts = sorted(float(b) for b in breakpoints)
    for k in range(INVERSION_TIMES):
        t = t_end * (0.07 + 0.86 * k / (INVERSION_TIMES - 1))
        for b in cuts:  # keep away from switching times, where the inversion converges slowly
            if abs(t - b) < 0.02 * t_end:
                t = b + 0.02 * t_end
        times.append(t)
    return times


def _invert(fns, t: float, method: str, digits: int):
    invert = _METHODS[method]
    with mpmath.workdps(digits):
        value = mpmath.mpf(0)
        for c, fn in fns:
            if t > c:
                value += invert(fn, t - c, digits)
        return float(value)


def _converged_inversion(fns, t: float, resolution: float) -> dict:
    """The inverse at t by both methods, with the precision raised until they agree.

    Talbot's contour needs more digits as t·|Im p| grows; two unrelated methods agreeing is
    the sign that both have converged.
    """
    values = {}
    for digits in (_INVERSION_DIGITS, 30, 50, 80, 120):
        values = {m: _invert(fns, t, m, digits) for m in ("talbot", "cohen")}
        if abs(values["talbot"] - values["cohen"]) <= resolution:
            break
    return values


def inversion_horizon(poles, t_end: float, breakpoints) -> float:
    """Where the inversion samples: at most ~3 oscillations of the fastest pole past the last
    breakpoint, since the contour methods lose accuracy as t·|Im p| grows (``poles``: complex
    numbers, conjugates included)."""
    freqs = [abs(z.imag) for z in poles if abs(z.imag) > 1e-12]
    last = max((float(b) for b in breakpoints), default=0.0)
    if not freqs:
        return t_end
    return min(t_end, last + 20.0 / max(freqs))


def _group_samples(parts, modes, horizon: float):
    """Per delay group: (R_c, τ, the closed form's own part for that group at c + τ), at three
    τ within ~3 oscillations of the group's fastest pole, where the contour methods are
    reliable. The closed form's part of a group is its modes switched on at c."""
    out = []
    for c, fn in parts:
        group = modes.subset(np.isclose(modes.delay, c, rtol=1e-12, atol=1e-15))
        freqs = group.freq[group.freq > 0]
        span = horizon - c if horizon > c else horizon
        if freqs.size:
            span = min(span, 20.0 / float(np.max(freqs)))
        for k in range(3):
            tau = span * (0.07 + 0.43 * k)
            out.append((fn, tau, float(group(np.array([c + tau]))[0]) if len(group) else 0.0))
    return out


def inversion_check(parts, closed_form, horizon: float, breakpoints, peak: float,
                    tolerance: float, modes=None) -> Check:
    """Closed form against the numerical inverse (Talbot, Cohen) of each delay part R_c(s).

    ``parts`` are (c, R_c) with R_c callable on an mpmath number (``NumericModel.parts``).
    With the closed form's ``modes`` and several delay parts (a pulse train), each part is
    inverted on its own, near its switching time, and compared with the closed form's modes
    of that group: the contour methods stay where they are reliable however long the train.
    A time at which the two methods never agree (up to 120 digits) is not judged; if no time
    can be judged the check is not applicable, with the reason.
    """
    fns = [(float(c), fn) for c, fn in parts]
    method = ("Each delay part of the transform inverted numerically by Talbot's method (the "
              "fixed contour of Abate & Valkó, as in mpmath) and by Cohen's (mpmath "
              f"invertlaplace), precision raised from {_INVERSION_DIGITS} digits until they "
              "agree")
    if modes is not None and len(fns) > 1:
        samples = _group_samples(fns, modes, horizon)
        scale = max(peak, max((abs(y) for _, _, y in samples), default=0.0), 1e-300)
        jobs = [([(0.0, fn)], tau, y) for fn, tau, y in samples]
        method += (f" per delay group at {len(samples)} times near its own switching time, "
                   "against the closed form's modes of that group")
    else:
        times = _inversion_times(horizon, breakpoints)
        ours = closed_form(np.array(times))
        scale = max(peak, 1e-300)
        jobs = [(fns, t, float(y)) for t, y in zip(times, ours)]
        method += f" at {len(times)} times and shifted by its delay"
    method += "; the partial fractions are not used."
    worst = {"talbot": 0.0, "cohen": 0.0}
    resolution = tolerance * scale / 100
    judged = 0
    for group_fns, t, y in jobs:
        values = _converged_inversion(group_fns, t, resolution)
        if abs(values["talbot"] - values["cohen"]) > resolution:
            continue  # the two methods disagree: this time cannot be judged
        judged += 1
        for name, value in values.items():
            worst[name] = max(worst[name], abs(value - y))
    if not judged:
        return Check("Numerical inversion of Y(s)", method, tolerance, math.nan, False,
                     applicable=False, detail="cannot judge: Talbot's and Cohen's methods did "
                     "not agree at any sample time, even at 120 digits")
    rel = max(worst.values()) / scale
    skipped = len(jobs) - judged
    return Check("Numerical inversion of Y(s)", method, tolerance, rel, rel <= tolerance,
                 detail="max abs error: " + ", ".join(f"{m} {e:.3e}" for m, e in worst.items())
                 + (f"; {skipped} of {len(jobs)} times not judged (the methods disagree there)"
                    if skipped else ""))


def limit_checks(model: NumericModel, initial_value: float, late_value, peak: float,
                 tolerance: float) -> tuple[Check, Check]:
    """Initial-value theorem always; final-value theorem only where it applies."""
    scale = max(peak, 1e-300)
    ivt = model.initial_value_limit
    err = abs(ivt - initial_value) / max(scale, abs(ivt))
    first = Check("Initial-value theorem",
                  "y(0+) from the solution against lim s·Y(s) as s → ∞.", tolerance, err,
                  err <= tolerance, detail=f"theorem {ivt:.6g}, solution {initial_value:.6g}")
    zs = model.response_poles
    at_zero = sum(1 for z in zs if abs(z) < 1e-14)
    bad = [z for z in zs if z.real >= -1e-14 and abs(z) >= 1e-14]
    method = "lim y(t) as t → ∞ from the solution against lim s·Y(s) as s → 0."
    fvt = model.final_value_limit
    if not bad and (at_zero > 1 or fvt is None):
        # each delay part has poles at s = 0 that cancel only in the sum (a load table's
        # ramps): the theorem is judged on the whole transform Y(s) = Σ e^{-cs} R_c(s)
        fvt = whole_transform_limit(model.parts)
        if fvt is not None:
            method = ("lim y(t) as t → ∞ from the solution against lim s·Y(s) as s → 0 of the "
                      "whole transform Σ e^{-cs} R_c(s) (its parts' poles at s = 0 cancel in "
                      "the sum), in 80-digit arithmetic.")
            late = float(late_value())
            err = abs(fvt - late) / max(scale, abs(fvt))
            return first, Check("Final-value theorem", method, tolerance, err, err <= tolerance,
                                detail=f"theorem {fvt:.6g}, solution far out {late:.6g}")
    if bad or at_zero > 1 or fvt is None:
        why = ("poles of sY(s) on or right of the imaginary axis: "
               + ", ".join(f"{z.real:.4g}{z.imag:+.4g}i" for z in bad[:4])) if bad else \
            "a pole of sY(s) at s = 0"
        final = Check("Final-value theorem", method, tolerance, math.nan, False,
                      applicable=False, detail=f"does not apply: {why}; y(t) has no limit")
        return first, final
    late = float(late_value())
    err = abs(fvt - late) / max(scale, abs(fvt))
    final = Check("Final-value theorem", method, tolerance, err, err <= tolerance,
                  detail=f"theorem {fvt:.6g}, solution far out {late:.6g}")
    return first, final


def whole_transform_limit(parts) -> float | None:
    """lim s·Σ e^{-cs} R_c(s) as s → 0, in 80-digit arithmetic at s = 1e-20, 1e-24, 1e-28:
    finite where the differences shrink as s does (s·Y(s) = L + O(s)); None where they do not
    (the sum itself has a pole at 0) or a part cannot be evaluated."""
    if not parts:
        return None
    with mpmath.workdps(80):
        def at(x):
            s = mpmath.mpf(x)
            return s * mpmath.fsum(mpmath.exp(-mpmath.mpf(c) * s) * r(s) for c, r in parts)
        try:
            c, a, b = at("1e-20"), at("1e-24"), at("1e-28")
        except (ZeroDivisionError, ValueError, TypeError):
            return None
        if not all(mpmath.isfinite(x) for x in (a, b, c)):
            return None
        if abs(b - a) > mpmath.mpf("1e-3") * abs(a - c):
            return None
        return float(b)


def independent_checks(numbers: Numbers, tolerances, t_end: float):
    """The independent checks of a derivation's numbers: the integration of all equations,
    then the inversion and the limit theorems per unknown. Returns the checks and the samples
    for the figure."""
    tol = {**NUMERIC_TOLERANCES, **(tolerances or {})}
    bps = list(numbers.breakpoints)
    integration, samples = integration_check(numbers, t_end, tol["integration"])
    checks = [integration]
    one = len(numbers.unknowns) == 1
    for u in numbers.unknowns:
        m = numbers.models[u]
        ours = samples.closed_form[u]
        peak = max(float(np.max(np.abs(ours[np.isfinite(ours)]), initial=0.0)), 1e-300)
        if not m.parts:
            continue
        inversion = inversion_check(m.parts, m.closed_form,
                                    inversion_horizon(m.response_poles, t_end, bps), bps, peak,
                                    tol["inversion"], m.modes)
        decays = [-z.real for z in m.response_poles if z.real < 0]
        far = max(bps, default=0.0) + (60.0 / min(decays) if decays else t_end)
        ivt, fvt = limit_checks(m, float(m.closed_form(np.array([0.0]))[0]),
                                lambda m=m, far=far: m.closed_form(np.array([far]))[0], peak,
                                tol["limits"])
        if one:  # the transform's own name, X(s) for x(t); the theorems need no suffix
            checks += [_renamed(inversion, f"Numerical inversion of {Ysym(u)}"), ivt, fvt]
        else:
            checks += [_renamed(inversion, f"Numerical inversion of {Ysym(u)}"),
                       _renamed(ivt, f"Initial-value theorem ({u})"),
                       _renamed(fvt, f"Final-value theorem ({u})")]
    return tuple(checks), samples


def _renamed(check: Check, name: str) -> Check:
    return Check(name, check.method, check.tolerance, check.error, check.passed, check.ran,
                 check.detail, check.applicable)


def missing_values(symbols, values, tolerances) -> tuple[Check, ...]:
    """The independent checks marked not run, for symbolic parameters without numbers."""
    tol = {**NUMERIC_TOLERANCES, **(tolerances or {})}
    missing = [n for n in symbols if n not in values]
    why = ("symbolic parameters without values (" + ", ".join(missing) + "); pass "
           "values={...} to derive() to run the numerical checks")
    keys = ("integration", "inversion", "limits", "limits")
    return tuple(not_run(n, "", tol[k], why) for n, k in zip(INDEPENDENT_CHECKS, keys))
