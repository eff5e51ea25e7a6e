"""The verification figure: closed form over numerical integration, the forcing, the error.

It reads the samples the verification computed (``Verification.samples``) and draws them;
it computes nothing but the display scale of each axis. Axis labels carry the display units.
SVG output is deterministic (fixed hash salt, no date), so re-running a calc reproduces it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..core.reading.units import display_factor, display_offset
from ..errors import ExportError, import_extra

__all__ = ["FIGURE_FORMATS", "LiveFigure", "figure_svg", "save_figure", "svg_file",
           "verification_figure"]

FIGURE_FORMATS = ("svg", "png", "pdf")


def _figure_class():
    # the Figure class needs no GUI backend
    (figure_module,) = import_extra(("matplotlib.figure",), "the verification figure")
    return figure_module.Figure


def _ticker():
    (ticker,) = import_extra(("matplotlib.ticker",), "the verification figure")
    return ticker


_COLOURS = ("#1f3f8f", "#8f3f1f", "#2e7d4f", "#6f2f8f", "#8f7f1f", "#1f7f8f")


class _Panels:
    """The figure's three panels, made once; :meth:`fill` draws a derivation.

    Making axes and ticks is most of matplotlib's cost, so a view that redraws on every change
    keeps one ``_Panels`` and fills it again (see :class:`LiveFigure`); the lines of each
    unknown and each equation's forcing are made on first need and reused.
    """

    def __init__(self, width: float, height: float):
        Figure = _figure_class()
        ticker = _ticker()
        self.fig = fig = Figure(figsize=(width, height))
        fig.subplots_adjust(left=0.12, right=0.98, top=0.95, bottom=0.08, hspace=0.12)
        self.ax_y, self.ax_f, self.ax_e = fig.subplots(3, 1, sharex=True,
                                                       height_ratios=[3, 1.3, 1.3])
        self.ax_e.set_yscale("log")
        # plain "1e-06" tick labels: the default 10^{-6} labels go through mathtext, which
        # costs more than all the rest of the figure
        self.ax_e.yaxis.set_major_formatter(ticker.LogFormatter(labelOnlyBase=True))
        self.ax_e.yaxis.set_minor_locator(ticker.NullLocator())  # 8 bare ticks per decade
        self.ax_e.yaxis.set_major_locator(ticker.LogLocator(numticks=6))
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            ax.grid(True, lw=0.3, color="0.85")
            # the y labels at one fixed place, clear of tick labels up to eight characters
            # wide: aligned across the panels, and matplotlib need not measure every tick
            # label of every panel to place them (a third of a redraw's cost)
            ax.yaxis.set_label_coords(-0.115, 0.5)
        self._lines: list = []    # per unknown: (integrated, closed, error)
        self._forcing: list = []  # per equation
        self._marks: list = []
        self._legends: dict = {}  # axes → (labels, Legend): kept while the labels stay

    def _unknown_lines(self, i: int):
        while len(self._lines) <= i:
            colour = _COLOURS[len(self._lines) % len(_COLOURS)]
            (integrated,) = self.ax_y.plot([], [], color="0.65", lw=3.2)
            (closed,) = self.ax_y.plot([], [], color=colour, lw=1.2)
            (error,) = self.ax_e.plot([], [], color=colour if self._lines else "0.2", lw=0.8)
            self._lines.append((integrated, closed, error))
        return self._lines[i]

    def _forcing_line(self, i: int):
        while len(self._forcing) <= i:
            colour = ("#8f3f1f", "#2e7d4f", "#6f2f8f", "#1f3f8f")[len(self._forcing) % 4]
            self._forcing.append(self.ax_f.plot([], [], color=colour, lw=1.2)[0])
        return self._forcing[i]

    def fill(self, d, t_max: float | None = None):
        samples = d.verification.samples
        if samples is None:
            msg = ("this derivation has no numerical samples (symbolic parameters without "
                   "values); derive again with values={...} to draw the figure")
            raise ExportError(msg)
        for mark in self._marks:
            mark.remove()
        self._marks = []
        p = d.problem
        one = p.size == 1
        t_unit = p.units.time_display if p.units else ""
        ts = display_factor("s", t_unit) if p.units else 1.0
        t = samples.times * ts
        keep = t <= (t_max if t_max is not None else np.inf)
        for line in (x for trio in self._lines for x in trio):
            line.set_data([], [])
        for line in self._forcing:
            line.set_data([], [])
        y_units = []
        for i, u in enumerate(p.unknowns):
            ctx = p.unit_context(u)
            y_unit = ctx.unknown_display if ctx else ""
            ys = display_factor(ctx.unknown_si, y_unit) if ctx else 1.0
            y0 = display_offset(ctx.unknown_si, y_unit) if ctx else 0.0
            y_units.append(y_unit)
            integrated, closed, error = self._unknown_lines(i)
            closed_form = samples.closed_form[u]
            integrated.set_data(t[keep], samples.integrated[u][keep] * ys + y0)
            closed.set_data(t[keep], closed_form[keep] * ys + y0)
            floor = max(float(np.nanmax(np.abs(closed_form))) * ys * 1e-17, 1e-300)
            error.set_data(t[keep], np.maximum(samples.difference(u)[keep] * ys, floor))
            closed.set_label("closed form (this derivation)" if one else f"{u} (closed form)")
            integrated.set_label("numerical integration (time domain)" if i == 0 else "_")
        for i, (label, values) in enumerate(samples.forcing.items()):
            line = self._forcing_line(i)
            if one or np.any(values != 0):
                line.set_data(t[keep], values[keep])
            line.set_label(label)
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            ax.relim()
            ax.autoscale_view()
        self._labels(p, y_units, t_unit)
        self._legend(self.ax_y, 8)
        if not one:
            self._legend(self.ax_f, 7)
        elif self.ax_f in self._legends:
            self._legends.pop(self.ax_f)[1].remove()
        self._mark_switches(d, samples, ts)
        status = "all checks passed" if d.verification.passed else "NOT VERIFIED"
        title = p.text if one else f"{p.size} coupled equations"
        # y given: no search for top-side decorations to clear (there are none)
        self.ax_y.set_title(f"{title}  —  {status}", fontsize=9, loc="left", y=1.0)
        return self.fig

    def _legend(self, ax, size: int) -> None:
        """The panel's legend at the best place; one already there with the same labels stays
        (it is drawn again, at the best place for the new data)."""
        handles, labels = ax.get_legend_handles_labels()
        kept = self._legends.get(ax)
        if kept is not None and kept[0] == tuple(labels):
            return
        if kept is not None:
            kept[1].remove()
        self._legends[ax] = (tuple(labels), ax.legend(handles, labels, loc="best",
                                                      fontsize=size, frameon=False))

    def _labels(self, p, y_units, t_unit) -> None:
        shown = sorted({u for u in y_units if u})
        unit_text = f" [{', '.join(shown)}]" if shown else ""
        f_unit = p.units.forcing_si if p.units and p.size == 1 else ""
        self.ax_y.set_ylabel((f"{p.unknowns[0]}(t)" if p.size == 1 else "unknowns") + unit_text)
        self.ax_f.set_ylabel(("f(t)" if p.size == 1 else "f_i(t)")
                             + (f" [{f_unit}]" if f_unit else ""))
        self.ax_e.set_ylabel("|difference|" + unit_text)
        self.ax_e.set_xlabel("t" + (f" [{t_unit}]" if t_unit else ""))

    def _mark_switches(self, d, samples, ts) -> None:
        for _, c, area in d.impulses:
            self._marks.append(self.ax_f.annotate(
                f"impulse {float(area):.4g}", (float(c) * ts, 0), fontsize=7, xytext=(2, 8),
                textcoords="offset points"))
            self._marks.append(self.ax_f.axvline(float(c) * ts, color="#8f3f1f", lw=0.8,
                                                 ls="--"))
        for ax in (self.ax_y, self.ax_f, self.ax_e):
            for b in samples.breakpoints:
                self._marks.append(ax.axvline(b * ts, color="0.5", lw=0.6, ls=":"))


def verification_figure(d, *, t_max: float | None = None, width: float = 7.5,
                        height: float = 6.5):
    """A matplotlib Figure of the derivation's verification samples."""
    return _Panels(width, height).fill(d, t_max)


class LiveFigure:
    """The verification figure for a view that redraws on every change: one matplotlib
    figure, filled again with each derivation (same look and bytes as :func:`figure_svg`)."""

    def __init__(self, width: float = 7.5, height: float = 6.5):
        self._panels = None
        self._size = (width, height)

    def svg(self, d, t_max: float | None = None) -> str:
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


def svg_file(fig) -> bytes:
    """A matplotlib figure as a deterministic SVG file (with its XML prolog)."""
    return ('<?xml version="1.0" encoding="utf-8" standalone="no"?>\n' + _svg_text(fig)
            + "\n").encode("utf-8")


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
