"""The verification figure: closed form over numerical integration, the forcing, the error.

It reads the samples the verification computed (``Verification.samples``) and draws them;
it computes nothing but the display scale of each axis. Axis labels carry the display units.
SVG output is deterministic (fixed hash salt, no date), so re-running a calc reproduces it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..core.units import display_factor
from ..errors import ExportError, import_extra

__all__ = ["verification_figure", "save_figure", "figure_svg", "FIGURE_FORMATS"]

FIGURE_FORMATS = ("svg", "png", "pdf")


def _figure_class():
    # the Figure class needs no GUI backend
    (figure_module,) = import_extra(("matplotlib.figure",), "the verification figure")
    return figure_module.Figure


def verification_figure(d, *, t_max: float | None = None, width: float = 7.5,
                        height: float = 6.5):
    """A matplotlib Figure of the derivation's verification samples."""
    samples = d.verification.samples
    if samples is None:
        msg = ("this derivation has no numerical samples (symbolic parameters without values); "
               "derive again with values={...} to draw the figure")
        raise ExportError(msg)
    Figure = _figure_class()
    units = d.problem.units
    y_unit = units.unknown_display if units else ""
    t_unit = units.time_display if units else ""
    f_unit = units.forcing_si if units else ""
    ys = display_factor(units.unknown_si, y_unit) if units else 1.0
    ts = display_factor("s", t_unit) if units else 1.0
    t = samples.times * ts
    keep = t <= (t_max if t_max is not None else np.inf)
    name = d.unknown

    fig = Figure(figsize=(width, height))
    fig.subplots_adjust(left=0.12, right=0.98, top=0.95, bottom=0.08, hspace=0.12)
    ax_y, ax_f, ax_e = fig.subplots(3, 1, sharex=True, height_ratios=[3, 1.3, 1.3])
    ax_y.plot(t[keep], samples.integrated[keep] * ys, color="0.65", lw=3.2,
              label="numerical integration (solve_ivp)")
    ax_y.plot(t[keep], samples.closed_form[keep] * ys, color="#1f3f8f", lw=1.2,
              label="closed form (this derivation)")
    ax_y.set_ylabel(f"{name}(t)" + (f" [{y_unit}]" if y_unit else ""))
    ax_y.legend(loc="best", fontsize=8, frameon=False)
    ax_f.plot(t[keep], samples.forcing[keep], color="#8f3f1f", lw=1.2)
    for c, area in d.impulses:
        ax_f.annotate(f"impulse {float(area):.4g}", (float(c) * ts, 0), fontsize=7,
                      xytext=(2, 8), textcoords="offset points")
        ax_f.axvline(float(c) * ts, color="#8f3f1f", lw=0.8, ls="--")
    ax_f.set_ylabel("f(t)" + (f" [{f_unit}]" if f_unit else ""))
    err = samples.difference * ys
    floor = max(float(np.max(np.abs(samples.closed_form))) * ys * 1e-17, 1e-300)
    ax_e.semilogy(t[keep], np.maximum(err[keep], floor), color="0.2", lw=0.8)
    ax_e.set_ylabel("|difference|" + (f" [{y_unit}]" if y_unit else ""))
    ax_e.set_xlabel("t" + (f" [{t_unit}]" if t_unit else ""))
    for ax in (ax_y, ax_f, ax_e):
        for b in samples.breakpoints:
            ax.axvline(b * ts, color="0.5", lw=0.6, ls=":")
        ax.grid(True, lw=0.3, color="0.85")
    status = "all checks passed" if d.verification.passed else "NOT VERIFIED"
    ax_y.set_title(f"{d.problem.text}  —  {status}", fontsize=9, loc="left")
    return fig


_METADATA = {"svg": {"Date": None}, "pdf": {"CreationDate": None, "ModDate": None},
             "png": {"Software": None}}


def _write(fig, target, fmt: str) -> None:
    import matplotlib
    with matplotlib.rc_context({"svg.hashsalt": "derivpad", "svg.fonttype": "none"}):
        fig.savefig(target, format=fmt, metadata=_METADATA[fmt], dpi=150)


def figure_svg(d, **settings) -> str:
    """The figure as an inline SVG element (no XML prolog), deterministic."""
    import io
    buffer = io.StringIO()
    _write(verification_figure(d, **settings), buffer, "svg")
    text = buffer.getvalue()
    return text[text.index("<svg"):]


def save_figure(d, path, **settings) -> Path:
    """Write the figure to ``path``; the suffix picks the format (svg, png, pdf)."""
    path = Path(path)
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in FIGURE_FORMATS:
        msg = (f"cannot tell the figure format from {path.name!r}; end the name with one of "
               + ", ".join("." + f for f in FIGURE_FORMATS))
        raise ExportError(msg)
    fig = verification_figure(d, **settings)
    tmp = path.with_name(path.name + ".part")  # written aside, then renamed: never half-written
    _write(fig, tmp, fmt)
    tmp.replace(path)
    return path
