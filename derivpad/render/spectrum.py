"""A response spectrum drawn and tabulated: reads a ResponseSpectrum, computes nothing."""

from __future__ import annotations

import html as _html

from .figure import _figure_class, _svg_text
from .latex import CAUTION

__all__ = ["SPECTRUM_MIME_TYPE", "SpectrumData", "spectrum_bundle", "spectrum_figure",
           "spectrum_text", "spectrum_to_dict"]

SPECTRUM_MIME_TYPE = "application/vnd.derivpad.spectrum+json"
"""Our own type for a response spectrum in a notebook's outputs (read by the packager)."""

_COLUMNS = (("periods", "period_s"), ("frequencies", "frequency_hz"), ("displacement", "SD"),
            ("pseudo_velocity", "PSV"),
            ("pseudo_acceleration", "PSA"), ("load_factor", "load_factor"),
            ("peak_times", "time_of_peak_s"))

_ROWS = (("SD", "displacement", "spectral displacement SD", "m"),
         ("PSV", "pseudo_velocity", "pseudo-velocity PSV", "m/s"),
         ("PSA", "pseudo_acceleration", "pseudo-acceleration PSA", "m/s²"))


def _units(spec) -> tuple[str, str, str]:
    """SD, PSV, PSA units (SI, or none where the record's values had no unit)."""
    return tuple(spec.units)


class SpectrumData:
    """A spectrum read back from its JSON form (a package's): the attributes the figure and
    the table read."""

    def __init__(self, data: dict):
        for attr, key in _COLUMNS:
            setattr(self, attr, [float("nan") if x is None else float(x) for x in data[key]])
        self.damping, self.kind = float(data["damping"]), str(data["kind"])
        self.units, self.points = tuple(data["units"]), int(data["record"]["points"])


def spectrum_to_dict(spec) -> dict:
    """The spectrum's JSON form: every column, the record's fingerprint, the generic
    oscillator's verification."""
    import math
    out = {"format_version": 1, "kind": spec.kind, "damping": spec.damping,
           "units": list(spec.units),
           "record": {"points": spec.points, "sha256": spec.record.sha256,
                      "source": spec.record.source, "unit": spec.record.unit},
           "verified": bool(spec.derivation.verification.passed),
           "checks": [c.to_dict() for c in spec.derivation.verification.checks],
           "caution": CAUTION}
    for attr, key in _COLUMNS:
        out[key] = [float(x) if math.isfinite(x) else None for x in getattr(spec, attr)]
    return out


def spectrum_figure(spec, width: float = 7.5, height: float = 7.0):
    """SD, PSV and PSA against the natural period, each on log-log axes."""
    fig = _figure_class()(figsize=(width, height))
    fig.subplots_adjust(left=0.13, right=0.97, top=0.93, bottom=0.08, hspace=0.12)
    axes = fig.subplots(3, 1, sharex=True)
    units = _units(spec)
    for ax, (short, attr, label, _), unit in zip(axes, _ROWS, units):
        ax.loglog(spec.periods, getattr(spec, attr), color="#1f3f8f", lw=1.3)
        ax.set_ylabel(f"{short} [{unit}]" if unit else short)
        ax.grid(True, which="both", lw=0.3, color="0.85")
    axes[-1].set_xlabel("natural period T [s]")
    kind = "support acceleration" if spec.kind == "support" else "force per unit mass"
    axes[0].set_title(f"Response spectrum of the {kind} record, ζ = {spec.damping:g}",
                      fontsize=10, loc="left")
    return fig


def spectrum_text(spec, width: int = 80) -> str:
    """The spectrum as a table: period, frequency, SD, PSV, PSA, load factor, time of peak."""
    units = _units(spec)
    head = (f"Response spectrum, ζ = {spec.damping:g} ({spec.kind} record of "
            f"{spec.points} points); each value the supremum over the whole response")
    cols = ["T [s]", "f [Hz]"] + [f"{s} [{u}]" if u else s for (s, *_), u in
                                  zip(_ROWS, units)] + ["load factor", "t_peak [s]"]
    lines = [head, "  ".join(f"{c:>12}" for c in cols)]
    for i, t in enumerate(spec.periods):
        row = [t, spec.frequencies[i], spec.displacement[i], spec.pseudo_velocity[i],
               spec.pseudo_acceleration[i], spec.load_factor[i], spec.peak_times[i]]
        lines.append("  ".join(f"{x:12.6g}" for x in row))
    lines += [f"Note: {n}" for n in getattr(spec, "notes", ())]
    return "\n".join(lines)


def spectrum_bundle(spec) -> dict:
    """The display bundle: the figure (SVG, where matplotlib is installed), the table, the
    cautions, and the spectrum's JSON under our own type (read back by the packager)."""
    text = spectrum_text(spec)
    out = {"text/plain": text + "\n" + CAUTION}
    try:
        svg = _svg_text(spectrum_figure(spec))
    except ImportError:
        svg = ""
    status = ("the generic oscillator's derivation passed all its checks"
              if spec.derivation.verification.passed else "NOT VERIFIED")
    from .html import to_html
    generic = (f"<details><summary>The generic oscillator x'' + 2ζωx' + ω²x = "
               f"{'−a' if spec.kind == 'support' else 'a'}(t) on one segment of the record, ω "
               f"symbolic: its derivation and checks</summary>{to_html(spec.derivation)}"
               "</details>")
    out["text/html"] = (f'<div class="derivpad dp-spectrum">{svg}<p>{_html.escape(status)}</p>'
                        f"<pre>{_html.escape(text)}</pre>{generic}"
                        f"<p>{_html.escape(CAUTION)}</p></div>")
    out[SPECTRUM_MIME_TYPE] = spectrum_to_dict(spec)
    return out
