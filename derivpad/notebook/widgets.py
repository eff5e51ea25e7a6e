"""The live parameter explorer: a thin ipywidgets shell over a derivation family.

``explore()`` builds a :class:`DerivationView`: one slider and one exact entry per controlled
parameter (with its unit), a status line, and the derivation's HTML (collapsible steps, checks,
results, figure). The mathematics lives in :class:`derivpad.core.family.DerivationFamily`: it
derives once in symbols for the controlled parameters and, on each change, puts the numbers in
and re-runs the checks and results; it re-derives (and says so) where a change crosses a
regime boundary. The view holds the current derivation in one trait and redraws when it
changes, reusing one figure. Sliders report on release (``continuous_update=False``), which
coalesces a drag into one update so the kernel keeps up. "Record these values" prints the
exact ``params={...}`` line for the calc record.
"""

from __future__ import annotations

from ..core.model.derivation import Derivation
from ..core.family import DerivationFamily, what_changed
from ..errors import DerivpadError, ParameterError, import_extra

__all__ = ["explore", "DerivationView"]


def _widgets():
    return import_extra(("ipywidgets", "traitlets"), "the explorer")


def _make_view_class():
    widgets, traitlets = _widgets()
    from ..render.figure import LiveFigure

    class DerivationView(widgets.VBox):
        """Controls, status and the derivation; ``derivation`` holds the current result."""

        derivation = traitlets.Instance(Derivation, allow_none=True,
                                        help="the derivation shown; replaced on every change")
        status = traitlets.Unicode("", help="what the last change did").tag(sync=True)

        def __init__(self, family: DerivationFamily, controls):
            self._family = family
            self._figure = LiveFigure()
            self._sliders = {}
            rows = []
            for name, (low, high) in controls.items():
                start, unit = family.start[name], family.units_of[name]
                if not low <= start <= high:
                    raise ParameterError(f"{name}: the starting value {start:g} lies outside "
                                         f"the control's range {low}..{high}", name)
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
            self._update("start")

        # -- behaviour: all of it goes through the family ---------------------------------
        def current_values(self) -> dict:
            return {name: slider.value for name, slider in self._sliders.items()}

        def current_params(self) -> dict:
            """The full params= mapping of what is shown (varied values with their units)."""
            return self._family.params_for(self.current_values())

        def _update(self, what: str) -> None:
            before = self.derivation
            try:
                member = self._family.at(self.current_values())
            except DerivpadError as exc:
                self.status = f"{what}: not derived: {exc}"
                self._status.value = self.status
                return
            notes = [f"{what}: {member.how}"] + what_changed(before, member.derivation)
            self.status = "; ".join(notes)
            self.derivation = member.derivation

        def _on_change(self, change) -> None:
            self._update(f"{change['owner'].description} = {change['new']:.6g}")

        def _on_record(self, _button=None) -> str:
            line = "params=" + repr(self.current_params())
            self._record_out.clear_output()
            with self._record_out:
                print(line)
            return line

        def _redraw(self, change) -> None:
            from ..render.html import to_html
            self._status.value = self.status
            self._html.value = (to_html(change["new"], figure_source=self._figure)
                                if change["new"] is not None else "")

    return DerivationView


_VIEW = None


def DerivationView(*args, **kwargs):  # noqa: N802 - a class made on first use
    """The explorer widget class (built on first use, so ipywidgets loads only then)."""
    global _VIEW
    if _VIEW is None:
        _VIEW = _make_view_class()
    return _VIEW(*args, **kwargs)


def explore(equation, ics=None, params=None, controls=None, *, unknown=None, units=None,
            regime: str = "underdamped", tolerances=None, window=None, derived=None):
    """A live explorer: sliders for ``controls`` ({name: (low, high)}), the derivation below.

    Parameters
    ----------
    equation, ics, params
        As for :func:`derivpad.derive`; each controlled parameter needs a starting value in
        ``params`` (a number, or a number with a unit: the slider then moves in that unit).
    controls : mapping
        Parameter name → (low, high) range of its slider.
    unknown, units, regime, tolerances, window, derived
        As for ``derive()``; a list of equations (a coupled system) takes the same route.
    """
    if not controls:
        raise ParameterError("explore() needs controls={'name': (low, high)} for at least one "
                             "parameter", "controls")
    family = DerivationFamily(equation, ics, params, vary=list(controls), unknown=unknown,
                              units=units, regime=regime, tolerances=tolerances, window=window,
                              derived=derived)
    return DerivationView(family, dict(controls))
