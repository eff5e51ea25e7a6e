"""The live parameter explorer: a thin ipywidgets shell over ``derive()``.

``explore()`` builds a :class:`DerivationView`: one slider and one exact entry per controlled
parameter (with its unit), a status line, and the derivation's HTML (collapsible steps, checks,
results, figure). The view holds the current derivation in one trait; a control change calls
``derive()`` with the new values and assigns the result, and an observer redraws. No
mathematics here. Sliders report on release (``continuous_update=False``), which coalesces a
drag into one derivation so the kernel keeps up. "Record these values" prints the exact
``params={...}`` line for the calc record.
"""

from __future__ import annotations

import re

from ..core.derivation import Derivation
from ..core.engine import derive
from ..errors import DerivpadError, ParameterError, import_extra

__all__ = ["explore", "DerivationView"]

_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _widgets():
    return import_extra(("ipywidgets", "traitlets"), "the explorer")


def _split(value, name: str) -> tuple[float, str]:
    """A parameter value as (number, unit text)."""
    if isinstance(value, (int, float)):
        return float(value), ""
    m = _QUANTITY.match(str(value))
    if not m:
        raise ParameterError(f"{name}: the explorer needs a number (with an optional unit) to "
                             f"start from, not {value!r}", name)
    return float(m.group(1)), m.group(2)


def _make_view_class():
    widgets, traitlets = _widgets()

    class DerivationView(widgets.VBox):
        """Controls, status and the derivation; ``derivation`` holds the current result."""

        derivation = traitlets.Instance(Derivation, allow_none=True,
                                        help="the derivation shown; replaced on every change")
        status = traitlets.Unicode("", help="what the last change did").tag(sync=True)

        def __init__(self, equation, ics, params, controls, options):
            self._equation, self._ics, self._options = equation, dict(ics or {}), dict(options)
            self._params = dict(params or {})
            self._units: dict[str, str] = {}
            self._sliders = {}
            rows = []
            for name, (low, high) in controls.items():
                if name not in self._params:
                    raise ParameterError(f"control {name!r} has no starting value in params",
                                         name)
                start, unit = _split(self._params[name], name)
                if not low <= start <= high:
                    raise ParameterError(f"{name}: the starting value {start} lies outside the "
                                         f"control's range {low}..{high}", name)
                self._units[name] = unit
                slider = widgets.FloatSlider(value=start, min=low, max=high,
                                             step=(high - low) / 200, description=name,
                                             continuous_update=False, readout=False)
                entry = widgets.FloatText(value=start, layout=widgets.Layout(width="9em"))
                widgets.link((slider, "value"), (entry, "value"))
                slider.observe(self._on_change, names="value")
                self._sliders[name] = slider
                rows.append(widgets.HBox([slider, entry, widgets.Label(unit)]))
            self._status = widgets.Label()
            self._html = widgets.HTMLMath()
            self._record = widgets.Button(description="Record these values",
                                          tooltip="print the params= line for the calc record")
            self._record_out = widgets.Output()
            self._record.on_click(self._on_record)
            super().__init__(rows + [widgets.HBox([self._record, self._status]),
                                     self._record_out, self._html])
            self.observe(self._redraw, names="derivation")
            self._derive("derived")

        # -- behaviour: all of it goes through derive() -------------------------------
        def current_params(self) -> dict:
            out = dict(self._params)
            for name, slider in self._sliders.items():
                unit = self._units[name]
                out[name] = f"{slider.value!r} {unit}".strip() if unit else slider.value
            return out

        def _derive(self, how: str) -> None:
            before = self.derivation
            try:
                d = derive(self._equation, ics=self._ics, params=self.current_params(),
                           **self._options)
            except DerivpadError as exc:
                self.status = f"not derived: {exc}"
                self._status.value = self.status
                return
            note = how
            if before is not None and before.results and d.results:
                old = before.results.get("regime")
                new = d.results.get("regime")
                if old is not None and new is not None and old.magnitude != new.magnitude:
                    note += f"; regime changed: {old.magnitude} → {new.magnitude}"
            self.status = note
            self.derivation = d

        def _on_change(self, change) -> None:
            self._derive(f"re-derived for {change['owner'].description} = {change['new']:.6g}")

        def _on_record(self, _button=None) -> str:
            line = "params=" + repr(self.current_params())
            self._record_out.clear_output()
            with self._record_out:
                print(line)
            return line

        def _redraw(self, change) -> None:
            from ..render.html import to_html
            self._status.value = self.status
            self._html.value = to_html(change["new"]) if change["new"] is not None else ""

    return DerivationView


_VIEW = None


def DerivationView(*args, **kwargs):  # noqa: N802 - a class made on first use
    """The explorer widget class (built on first use, so ipywidgets loads only then)."""
    global _VIEW
    if _VIEW is None:
        _VIEW = _make_view_class()
    return _VIEW(*args, **kwargs)


def explore(equation, ics=None, params=None, controls=None, **options):
    """A live explorer: sliders for ``controls`` ({name: (low, high)}), the derivation below.

    Parameters
    ----------
    equation, ics, params
        As for :func:`derivpad.derive`; each controlled parameter needs a starting value in
        ``params`` (a number, or a number with a unit: the slider then moves in that unit).
    controls : mapping
        Parameter name → (low, high) range of its slider.
    **options
        Passed to ``derive()`` (units, values, regime, tolerances, window, checks).
    """
    if not controls:
        raise ParameterError("explore() needs controls={'name': (low, high)} for at least one "
                             "parameter", "controls")
    return DerivationView(equation, ics, params, dict(controls), options)
