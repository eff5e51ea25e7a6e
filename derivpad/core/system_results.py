"""Engineering results of a system: poles, natural frequencies and mode shapes, modal damping,
and the peak (with its time) and final value of each unknown and each derived quantity.

Natural frequencies and mode shapes come from the generalized eigenproblem K φ = ω² M φ
(``scipy.linalg.eigh``) where the system has the form M x'' + C x' + K x = f with symmetric
M (positive definite) and K; modal damping ratios ζ_r = φ_rᵀ C φ_r / (2 ω_r) (mass-normalized
φ) are stated only where the damping is proportional (Φᵀ C Φ diagonal).
"""

from __future__ import annotations

import math
from types import MappingProxyType

import numpy as np

import sympy as sp

from .results import Result, ResultWriter, _VIB, _CTRL, _quantity, response_results

__all__ = ["system_results"]

_MODES = ("generalized eigenproblem K φ = ω² M φ by scipy.linalg.eigh; mode shapes scaled to a "
          "largest component of +1 (structural dynamics texts, e.g. Chopra, Dynamics of "
          "Structures; from memory)")


def _mechanical(problem, values):
    if not problem.is_mechanical:
        return None
    import sympy as sp
    subs = {sp.Symbol(k, positive=True): v for k, v in values.items()}
    try:
        M, C, K = (np.array(m.subs(subs).evalf(), dtype=float) for m in problem.matrices())
    except (TypeError, ValueError):
        return None
    if not (np.allclose(M, M.T) and np.allclose(K, K.T)):
        return None
    if np.any(np.linalg.eigvalsh(M) <= 0):
        return None
    return M, C, K


def system_results(problem, numbers, t_end: float, values: dict,
                   definitions=None) -> MappingProxyType:
    """The results mapping (read-only) for a system with numbers for all parameters."""
    res: dict[str, Result] = {}
    ctx0 = problem.unit_context(problem.unknowns[0]) if problem.units else None

    def add(key, label, value, unit, formula, source, units=ctx0):
        res[key] = Result(key, label, _quantity(value, unit, units), unit, formula, source)

    zs = list(numbers.system_poles)
    add("poles", "poles (roots of det A(s))", tuple(zs), "1/s" if ctx0 else "",
        "roots of the characteristic determinant Δ(s) = det A(s)", "definition")
    stable = all(z.real < 0 for z in zs)
    marginal = all(z.real <= 1e-12 for z in zs) and not stable
    add("stability", "stability", "stable" if stable else ("marginal" if marginal else "unstable"),
        "", "stable when every pole is in the open left half-plane", _CTRL)
    pairs = sorted((z for z in zs if z.imag > 1e-12), key=abs)
    if pairs:
        add("pole_frequencies", "pole natural frequencies |p|", tuple(abs(z) for z in pairs),
            "rad/s" if ctx0 else "", "|p| of each complex pole pair", _VIB)
        add("pole_damping_ratios", "pole damping ratios", tuple(-z.real / abs(z) + 0.0 for z in pairs),
            "", "-Re p/|p| of each complex pole pair", _VIB)

    mech = _mechanical(problem, values)
    if mech is not None:
        from scipy.linalg import eigh
        M, C, K = mech
        w2, phi = eigh(K, M)
        if np.all(w2 > 0):
            omegas = np.sqrt(w2)
            shapes = []
            for r in range(phi.shape[1]):
                v = phi[:, r]
                v = v / v[np.argmax(np.abs(v))]
                shapes.append(tuple(float(x) for x in v))
            add("natural_frequencies", "undamped natural frequencies ω_r", tuple(map(float, omegas)),
                "rad/s" if ctx0 else "", "ω_r² = eigenvalues of K φ = ω² M φ", _MODES)
            add("natural_frequencies_hz", "undamped natural frequencies f_r",
                tuple(float(w / (2 * math.pi)) for w in omegas), "Hz" if ctx0 else "",
                "f_r = ω_r/(2π)", _MODES)
            add("mode_shapes", "mode shapes φ_r (" + ", ".join(problem.unknowns) + ")",
                tuple(shapes), "", "eigenvectors of K φ = ω² M φ, largest component +1", _MODES)
            modal_c = phi.T @ C @ phi
            diag = np.abs(np.diag(modal_c))
            off = np.abs(modal_c - np.diag(np.diag(modal_c)))
            if np.any(C != 0) and off.max(initial=0.0) <= 1e-9 * max(diag.max(initial=0.0), 1e-300):
                add("modal_damping_ratios", "modal damping ratios ζ_r",
                    tuple(float(c / (2 * w)) for c, w in zip(np.diag(modal_c), omegas)), "",
                    "ζ_r = φ_rᵀ C φ_r / (2 ω_r), mass-normalized φ (damping proportional: "
                    "Φᵀ C Φ diagonal)", _MODES)

    at_rest = not any(float(v.subs({sp.Symbol(k, positive=True): x for k, x in values.items()}))
                      for vals in problem.initial_values for v in vals)
    for name, model in numbers.models.items():
        w = ResultWriter(problem.unit_context(name) if problem.units else None, name,
                         key=lambda k, name=name: f"{k}_{name}")
        if model.modes is None:
            w.absent("peak", "peak", w.y_unit, "the closed form is not a sum of modes")
        else:
            response_results(w, model.modes, numbers.system_poles, at_rest=at_rest,
                             definitions=definitions)
        res.update(w.out)
    return MappingProxyType(res)
