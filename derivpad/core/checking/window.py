"""The time window a response is looked at over: checks, results and figures share it.

Past the last breakpoint: five time constants of the slowest decaying pole (the response
is then within 1 % of its end state), and at least two periods of the slowest oscillation,
but no more than 200 periods of the fastest (a lightly damped oscillator would otherwise be
integrated over millions of cycles); a growing response is looked at for at least three and
at most ten growth times. The engineering results do not depend on the window: they hold over
all t ≥ 0 (core/response.py).
"""

from __future__ import annotations

import math

__all__ = ["numeric_poles", "time_window", "window_end"]

_EPS = 1e-12


def numeric_poles(poles) -> list[complex]:
    """Every pole as a complex number, conjugates included, with multiplicity."""
    out = []
    for p in poles:
        a = complex(p.value)
        for _ in range(p.multiplicity):
            if p.kind == "real":
                out.append(complex(a.real, 0.0))
            else:
                b = float(p.beta)
                out += [complex(a.real, b), complex(a.real, -b)]
    return out


def time_window(poles, breakpoints=(), t_end: float | None = None) -> float:
    """End of the window for the derivation's poles (see :func:`window_end`)."""
    return window_end(numeric_poles(poles), breakpoints, t_end)


def window_end(zs, breakpoints=(), t_end: float | None = None) -> float:
    """End of the window: last breakpoint plus five slowest time constants or two periods
    (``zs``: the poles as complex numbers, conjugates included; ``t_end`` overrides)."""
    if t_end is not None:
        return float(t_end)
    last = max((float(b) for b in breakpoints), default=0.0)
    decays = [-z.real for z in zs if z.real < -_EPS]
    growths = [z.real for z in zs if z.real > _EPS]
    freqs = [abs(z.imag) for z in zs if abs(z.imag) > _EPS]
    spans = []
    if decays:
        spans.append(5.0 / min(decays))
    if freqs:
        spans.append(2 * 2 * math.pi / min(freqs))
    if growths:
        spans.append(3.0 / max(growths))
    if not spans:  # integrators only: look as far again as the forcing lasts
        spans.append(max(1.0, last))
    span = max(spans)
    if freqs:  # a lightly damped oscillation: the checks look at 200 periods of its fastest
        span = min(span, max(200 * 2 * math.pi / max(freqs), 2 * 2 * math.pi / min(freqs)))
    if growths:  # a growing response: do not look so far that it swamps the picture
        span = min(span, 10.0 / max(growths))
    return last + span
