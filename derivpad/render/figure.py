"""The verification figure: closed form over numerical integration, the forcing, the error.

It reads the samples the verification computed (``Verification.samples``) and draws them;
it computes nothing but the display scale of each axis. Axis labels carry the display units.
SVG output is deterministic (fixed hash salt, no date), so re-running a calc reproduces it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..core.units import display_factor, display_offset
from ..errors import ExportError, import_extra

__all__ = ["FIGURE_FORMATS", "LiveFigure", "figure_svg", "save_figure", "verification_figure"]

FIGURE_FORMATS = ("svg", "png", "pdf")


def _figure_class():
    # the Figure class needs no GUI backend
    (figure_module,) = import_extra(("matplotlib.figure",), "the verification figure")
    return figure_module.Figure


def _ticker():
    (ticker,) = import_extra(("matplotlib.ticker",), "the verification figure")
    return ticker


class _Panels:
    """The figure's three panels and their lines, made once; :meth:`fill` draws a derivation.

    Making axes and ticks is most of matplotlib's cost, so a view that redraws on every change
    keeps one ``_Panels`` and fills it again (see :class:`LiveFigure`).
    """

    def __init__(self, width: float, height: float):
        Figure = _figure_class()
        ticker = _ticker()
        self.fig = fig = Figure(figsize=(width, height))
        fig.subplots_adjust(left=0.12, right=0.98, top=0.95, bottom=0.08, hspace=0.12)
        self.ax_y, self.ax_f, self.ax_e = fig.subplots(3, 1, sharex=True,
                                                       height_ratios=[3, 1.3, 1.3])
        (self.integrated,) = self.ax_y.plot([], [], color="0.65", lw=3.2,
                                            label="numerical integration (odeint)")
        (self.closed,) = self.ax_y.plot([], [], color="#1f3f8f", lw=1.2,
                                        label="closed form (this derivation)")
        (self.forcing,) = self.ax_f.plot([], [], color="#8f3f1f", lw=1.2)
        self.ax_e.set_yscale("log")
        (self.error,) = self.ax_e.plot([], [], color="0.2", lw=0.8)
        # plain "1e-06" tick labels: the default 10^{-6} labels go through mathtext, which
        # costs more than all the rest of the figure
        self.ax_e.yaxis.set_major_formatter(ticker.LogFormatter(labelOnlyBase=True))
        self.ax_e.yaxis.set_minor_locator(ticker.NullLocator())  # 8 bare ticks per decade
        self.ax_e.yaxis.set_major_locator(ticker.LogLocator(numticks=6))
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            ax.grid(True, lw=0.3, color="0.85")
        self._marks: list = []

    def fill(self, d, t_max: float | None = None):
        samples = d.verification.samples
        if samples is None:
            msg = ("this derivation has no numerical samples (symbolic parameters without "
                   "values); derive again with values={...} to draw the figure")
            raise ExportError(msg)
        for mark in self._marks:
            mark.remove()
        self._marks = []
        units = d.problem.units
        y_unit = units.unknown_display if units else ""
        t_unit = units.time_display if units else ""
        f_unit = units.forcing_si if units else ""
        ys = display_factor(units.unknown_si, y_unit) if units else 1.0
        y0 = display_offset(units.unknown_si, y_unit) if units else 0.0
        ts = display_factor("s", t_unit) if units else 1.0
        t = samples.times * ts
        keep = t <= (t_max if t_max is not None else np.inf)
        self.integrated.set_data(t[keep], samples.integrated[keep] * ys + y0)
        self.closed.set_data(t[keep], samples.closed_form[keep] * ys + y0)
        self.forcing.set_data(t[keep], samples.forcing[keep])
        err = samples.difference * ys
        floor = max(float(np.max(np.abs(samples.closed_form))) * ys * 1e-17, 1e-300)
        self.error.set_data(t[keep], np.maximum(err[keep], floor))
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            ax.relim()
            ax.autoscale_view()
        self.ax_y.set_ylabel(f"{d.unknown}(t)" + (f" [{y_unit}]" if y_unit else ""))
        self.ax_f.set_ylabel("f(t)" + (f" [{f_unit}]" if f_unit else ""))
        self.ax_e.set_ylabel("|difference|" + (f" [{y_unit}]" if y_unit else ""))
        self.ax_e.set_xlabel("t" + (f" [{t_unit}]" if t_unit else ""))
        self._marks.append(self.ax_y.legend(loc="best", fontsize=8, frameon=False))
        for c, area in d.impulses:
            self._marks.append(self.ax_f.annotate(
                f"impulse {float(area):.4g}", (float(c) * ts, 0), fontsize=7, xytext=(2, 8),
                textcoords="offset points"))
            self._marks.append(self.ax_f.axvline(float(c) * ts, color="#8f3f1f", lw=0.8,
                                                 ls="--"))
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            for b in samples.breakpoints:
                self._marks.append(ax.axvline(b * ts, color="0.5", lw=0.6, ls=":"))
        status = "all checks passed" if d.verification.passed else "NOT VERIFIED"
        self.ax_y.set_title(f"{d.problem.text}  —  {status}", fontsize=9, loc="left")
        return self.fig


def verification_figure(d, *, t_max: float | None = None, width: float = 7.5,
                        height: float = 6.5):
    """A matplotlib Figure of the derivation's verification samples."""
    if isinstance(getattr(d.verification.samples, "closed_form", None), dict):
        return _system_figure(d, t_max, width, height)
    return _Panels(width, height).fill(d, t_max)


_COLOURS = ("#1f3f8f", "#8f3f1f", "#2e7d4f", "#6f2f8f", "#8f7f1f", "#1f7f8f")


def _system_figure(d, t_max, width, height):
    """A system's figure: every unknown's closed form over its integration, each equation's
    forcing, and each unknown's difference on a log axis (SI units)."""
    samples = d.verification.samples
    ticker = _ticker()
    fig = _figure_class()(figsize=(width, height))
    fig.subplots_adjust(left=0.12, right=0.98, top=0.95, bottom=0.08, hspace=0.12)
    ax_y, ax_f, ax_e = fig.subplots(3, 1, sharex=True, height_ratios=[3, 1.3, 1.3])
    ctx0 = d.problem.unit_context(d.unknowns[0]) if d.problem.units else None
    t_unit = ctx0.time_display if ctx0 else ""
    ts = display_factor("s", t_unit) if ctx0 else 1.0
    t = samples.times * ts
    keep = t <= (t_max if t_max is not None else np.inf)
    for i, u in enumerate(d.unknowns):
        colour = _COLOURS[i % len(_COLOURS)]
        ax_y.plot(t[keep], samples.integrated[u][keep], color="0.7", lw=3.0)
        ax_y.plot(t[keep], samples.closed_form[u][keep], color=colour, lw=1.2,
                  label=f"{u} (closed form)")
        floor = max(float(np.max(np.abs(samples.closed_form[u]))) * 1e-17, 1e-300)
        ax_e.plot(t[keep], np.maximum(samples.difference(u)[keep], floor), color=colour, lw=0.8)
    ax_y.plot([], [], color="0.7", lw=3.0, label="numerical integration (odeint)")
    ax_y.legend(loc="best", fontsize=8, frameon=False)
    units = sorted({d.problem.unit_context(u).unknown_si for u in d.unknowns}) if ctx0 else []
    ax_y.set_ylabel("unknowns" + (f" [{', '.join(units)}]" if units else ""))
    for i, (label, values) in enumerate(samples.forcing.items()):
        if np.any(values != 0):
            ax_f.plot(t[keep], values[keep], color=_COLOURS[i % len(_COLOURS)], lw=1.2,
                      label=label)
    if ax_f.lines:
        ax_f.legend(loc="best", fontsize=7, frameon=False)
    ax_f.set_ylabel("f_i(t)")
    ax_e.set_yscale("log")
    ax_e.yaxis.set_major_formatter(ticker.LogFormatter(labelOnlyBase=True))
    ax_e.yaxis.set_minor_locator(ticker.NullLocator())
    ax_e.yaxis.set_major_locator(ticker.LogLocator(numticks=6))
    ax_e.set_ylabel("|difference|")
    ax_e.set_xlabel("t" + (f" [{t_unit}]" if t_unit else ""))
    for ax in (ax_y, ax_f, ax_e):
        for b in samples.breakpoints:
            ax.axvline(b * ts, color="0.5", lw=0.6, ls=":")
        ax.grid(True, lw=0.3, color="0.85")
    status = "all checks passed" if d.verification.passed else "NOT VERIFIED"
    ax_y.set_title(f"{len(d.unknowns)} coupled equations  —  {status}", fontsize=9, loc="left")
    return fig


class LiveFigure:
    """The verification figure for a view that redraws on every change: one matplotlib
    figure, filled again with each derivation (same look and bytes as :func:`figure_svg`)."""

    def __init__(self, width: float = 7.5, height: float = 6.5):
        self._panels = None
        self._size = (width, height)

    def svg(self, d, t_max: float | None = None) -> str:
        if isinstance(getattr(d.verification.samples, "closed_form", None), dict):
            return figure_svg(d, t_max=t_max)  # a system: drawn afresh
        if self._panels is None:
            self._panels = _Panels(*self._size)
        return _svg_text(self._panels.fill(d, t_max))


_METADATA = {"svg": {"Date": None}, "pdf": {"CreationDate": None, "ModDate": None},
             "png": {"Software": None}}


def _write(fig, target, fmt: str) -> None:
    import matplotlib
    with matplotlib.rc_context({"svg.hashsalt": "derivpad", "svg.fonttype": "none"}):
        fig.savefig(target, format=fmt, metadata=_METADATA[fmt], dpi=150)


def _svg_text(fig) -> str:
    import io
    buffer = io.StringIO()
    _write(fig, buffer, "svg")
    text = buffer.getvalue()
    return text[text.index("<svg"):]


def figure_svg(d, **settings) -> str:
    """The figure as an inline SVG element (no XML prolog), deterministic."""
    return _svg_text(verification_figure(d, **settings))


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
