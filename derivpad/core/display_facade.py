"""The derivation's display façade and value table. Every method imports ``derivpad.render`` in
its body, so the core never loads printing, plotting or the notebook."""

from __future__ import annotations

__all__ = ["DisplayFacade"]


class DisplayFacade:
    """Display methods of the Derivation (a frozen dataclass)."""

    __slots__ = ()

    def _values_units(self):
        """The UnitContext that declares the symbolic parameters' units (None without)."""
        raise NotImplementedError

    def value_table(self) -> tuple[tuple[str, float, str], ...]:
        """The numbers used for symbolic parameters, each in its declared unit:
        ((name, number, unit), ...) (SI numbers and no unit where none was declared)."""
        ctx = self._values_units()
        out = []
        for name, v in self.values:
            unit = ctx.symbol_unit(name) if ctx else None
            if unit:
                from .units import display_unit_for, to_display
                si = display_unit_for(dict(ctx.dimensions)[name])
                out.append((name, to_display(float(v), si, unit), unit))
            else:
                out.append((name, float(v), ""))
        return tuple(out)

    def figure(self, **settings):
        """The verification figure (matplotlib): closed form over integration, forcing, error."""
        from ..render.figure import verification_figure  # lazy: matplotlib is an extra
        return verification_figure(self, **settings)

    def save_figure(self, path, **settings):
        """Write the verification figure; the format (svg, png, pdf) comes from the suffix."""
        from ..render.figure import save_figure
        return save_figure(self, path, **settings)

    def to_dict(self) -> dict:
        """The canonical JSON-safe form: text, LaTeX and a SymPy-readable form of each result."""
        from ..render.serial import derivation_to_dict  # lazy: printing lives in render/
        return derivation_to_dict(self)

    def to_latex(self, **settings) -> str:
        """The whole derivation as a LaTeX document body."""
        from ..render.latex import to_latex
        return to_latex(self, **settings)

    def to_html(self, **settings) -> str:
        """The whole derivation as an HTML fragment with collapsible steps."""
        from ..render.html import to_html
        return to_html(self, **settings)

    def to_text(self, **settings) -> str:
        """The whole derivation as readable terminal text."""
        from ..render.text import to_text
        return to_text(self, **settings)

    def _repr_mimebundle_(self, include=None, exclude=None):
        """Rich display: HTML, LaTeX, text and derivpad's own JSON type; never raises."""
        try:
            from ..render.mimebundle import mimebundle
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"derivpad could not load its display code: {exc}"}
        return mimebundle(self, include, exclude)
