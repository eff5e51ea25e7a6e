"""Numerical inversion of a Laplace transform at one time, by two unrelated methods.

* Talbot's method on the fixed contour of Abate & Valkó (Int. J. Numer. Meth. Engng 60,
  2004, "Multi-precision Laplace transform inversion"), the contour mpmath's
  ``invertlaplace(method="talbot")`` uses: s_k = δ_k / t with δ_k = r θ_k (cot θ_k + i),
  θ_k = kπ/M, r = 2M/5, and f(t) ≈ (2/5t) Re Σ' w_k F(s_k). The nodes δ_k and weights w_k do
  not depend on t, so they are computed once per precision and reused for every time and
  every transform (mpmath recomputes them on each call).
* Cohen's method (H. Cohen, Numerical Approximation Methods, Springer 2007; the form in
  mpmath's ``invertlaplace(method="cohen")``): the Bromwich integral on the line Re s = α/2t
  summed as an alternating series with Cohen–Rodriguez Villegas–Zagier acceleration.

Both keep mpmath's degree and working precision for the requested digits, so each gives
mpmath's value to its working precision (tested against mpmath). A transform that is a ratio
of polynomials (every delay part of Y(s) is one; see ``numeric_model.BoundRational``) is
evaluated in FLINT's ball arithmetic (python-flint), twenty times faster than mpmath's
Python arithmetic, which was most of the check's cost; any other callable goes through
mpmath.
"""

from __future__ import annotations

from functools import lru_cache

import mpmath
from mpmath.libmp import dps_to_prec

__all__ = ["cohen", "talbot"]


def _talbot_size(digits: int) -> tuple[int, int]:
    work = int(1.72 * digits)
    return work, max(12, int(1.38 * work))


def _cohen_size(digits: int) -> tuple[int, int]:
    work = int(1.74 * digits)
    return work, max(22, int(1.31 * work))


@lru_cache(maxsize=8)
def _talbot_rule(digits: int):
    """(working digits, nodes δ_k, weights w_k) of the fixed Talbot contour for ``digits``
    requested digits, as mpmath numbers."""
    work, degree = _talbot_size(digits)
    with mpmath.workdps(work):
        r = mpmath.mpf(2) * degree / 5
        nodes, weights = [r], [mpmath.exp(r) / 2]
        for k in range(1, degree):
            theta = mpmath.pi * k / degree
            cot = mpmath.cot(theta)
            delta = r * theta * mpmath.mpc(cot, 1)
            nodes.append(delta)
            weights.append(mpmath.exp(delta) * mpmath.mpc(1, theta * (1 + cot ** 2) - cot))
        return work, tuple(nodes), tuple(weights)


def talbot(fn, t: float, digits: int) -> float:
    """f(t) from F = ``fn`` by Talbot's fixed contour (``digits`` requested digits)."""
    if hasattr(fn, "coefficients"):
        return _talbot_balls(fn, t, digits)
    work, nodes, weights = _talbot_rule(digits)
    with mpmath.workdps(work):
        t = mpmath.mpf(t)
        total = mpmath.fsum(w * fn(d / t) for d, w in zip(nodes, weights))
        return float((2 * total / (5 * t)).real)


def cohen(fn, t: float, digits: int) -> float:
    """f(t) from F = ``fn`` by Cohen's method (``digits`` requested digits)."""
    if hasattr(fn, "coefficients"):
        return _cohen_balls(fn, t, digits)
    with mpmath.workdps(digits):
        return float(mpmath.invertlaplace(fn, t, method="cohen"))


# -- the same two rules in FLINT ball arithmetic, for a ratio of polynomials ----------------

def _flint():
    import flint  # a core dependency; imported here so that `import derivpad` stays light
    return flint


def _arb(x):
    """An mpmath mpf as an exact FLINT arb (mantissa · 2^exponent); ±inf and NaN (a mantissa
    of zero with a non-zero exponent in mpmath's form) as NaN, never as zero."""
    sign, man, exp, _ = x._mpf_
    if not man:
        return _flint().arb(0) if not exp else _flint().arb("nan")
    return _flint().arb((-int(man) if sign else int(man), int(exp)))


def _acb(z):
    """An mpmath number (real or complex) as a FLINT acb, to its full precision (no
    re-rounding to mpmath's current precision on the way)."""
    return _flint().acb(_arb(z.real), _arb(z.imag))


def _polynomials(fn, work: int):
    """Numerator and denominator of ``fn`` as FLINT polynomials at ``work`` digits (the
    coefficients converted at that precision: FLINT rounds to its working precision)."""
    flint = _flint()
    with mpmath.workdps(work), flint.ctx.workprec(dps_to_prec(work)):
        num, den = fn.coefficients()  # highest power first
        return (flint.acb_poly([_arb(c) for c in reversed(num)]),
                flint.acb_poly([_arb(c) for c in reversed(den)]))


@lru_cache(maxsize=8)
def _talbot_ball_rule(digits: int):
    work, nodes, weights = _talbot_rule(digits)
    with _flint().ctx.workprec(dps_to_prec(work)):
        return tuple(_acb(d) for d in nodes), tuple(_acb(w) for w in weights)


def _talbot_balls(fn, t: float, digits: int) -> float:
    flint = _flint()
    work, _ = _talbot_size(digits)
    nodes, weights = _talbot_ball_rule(digits)
    num, den = _polynomials(fn, work)
    with flint.ctx.workprec(dps_to_prec(work)):
        tt = flint.arb(t)
        total = flint.acb(0)
        for d, w in zip(nodes, weights):
            z = d / tt
            total += w * num(z) / den(z)
        return float((2 * total / (5 * tt)).real.mid())


def _cohen_balls(fn, t: float, digits: int) -> float:
    flint = _flint()
    work, n = _cohen_size(digits)
    num, den = _polynomials(fn, work)
    with flint.ctx.workprec(dps_to_prec(work)):
        arb = flint.arb
        tt = arb(t)
        alpha = arb(2) / 3 * (work * arb(10).log() + (2 * tt).log())
        start, rise = alpha / (2 * tt), flint.acb(0, arb.pi() / tt)
        values = []
        for k in range(n + 1):
            z = start + k * rise
            values.append((num(z) / den(z)).real)
        d = (3 + arb(8).sqrt()) ** n
        d = (d + 1 / d) / 2
        b, c, total = arb(-1), -d, arb(0)
        for k in range(n):
            c = b - c
            total += c * values[k + 1]
            b = 2 * (k + n) * (k - n) * b / ((2 * k + 1) * (k + 1))
        return float(((alpha / 2).exp() / tt * (values[0] / 2 - total / d)).mid())
