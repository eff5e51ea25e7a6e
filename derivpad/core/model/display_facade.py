"""The derivation's display façade: each method hands the derivation to ``derivpad.render``
through core/display_hook.py, so the core never loads printing, plotting or the notebook."""

from __future__ import annotations

from . import display_hook

__all__ = ["DisplayFacade"]


class DisplayFacade:
    """Display methods of the Derivation (a frozen dataclass)."""

    __slots__ = ()

    def value_table(self) -> tuple[tuple[str, float, str], ...]:
        """The numbers used for symbolic parameters, each in its declared unit:
        ((name, number, unit), ...) (SI numbers and no unit where none was declared)."""
        return self.value_rows

    def figure(self, **settings):
        """The verification figure (matplotlib): closed form over integration, forcing, error."""
        return display_hook.figure(self, **settings)

    def save_figure(self, path, **settings):
        """Write the verification figure; the format (svg, png, pdf) comes from the suffix."""
        return display_hook.save_figure(self, path, **settings)

    def to_dict(self) -> dict:
        """The canonical JSON-safe form: text, LaTeX and a SymPy-readable form of each result."""
        return display_hook.to_dict(self)

    def to_latex(self, **settings) -> str:
        """The whole derivation as a LaTeX document body."""
        return display_hook.latex(self, **settings)

    def to_html(self, **settings) -> str:
        """The whole derivation as an HTML fragment with collapsible steps."""
        return display_hook.html(self, **settings)

    def to_text(self, **settings) -> str:
        """The whole derivation as readable terminal text."""
        return display_hook.text(self, **settings)

    def _repr_mimebundle_(self, include=None, exclude=None):
        """Rich display: HTML, LaTeX, text and derivpad's own JSON type; never raises."""
        try:
            return display_hook.bundle(self, include, exclude)
        except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
            return {"text/plain": f"derivpad could not display the derivation: {exc}"}
