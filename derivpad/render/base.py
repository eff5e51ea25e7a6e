"""Renderer base: dispatch ``_render_<ClassName>`` over the argument's MRO, validated settings.

``Renderer.render(obj)`` walks ``type(obj).__mro__`` and calls the first ``_render_<Name>``
method it finds, else ``_render_fallback``. Subclasses declare ``_default_settings``; an
unknown setting, or a value outside a setting's allowed list, raises at construction.
"""

from __future__ import annotations

from ..errors import RenderSettingError

__all__ = ["Renderer"]


class Renderer:
    """Base of the text, LaTeX and HTML renderers."""

    _default_settings: dict = {}
    _allowed: dict = {}  # setting -> tuple of allowed values

    def __init__(self, **settings):
        unknown = sorted(set(settings) - set(self._default_settings))
        if unknown:
            msg = (f"Unknown setting {unknown[0]!r} for {type(self).__name__}; the settings are "
                   + ", ".join(sorted(self._default_settings)))
            raise RenderSettingError(msg, unknown[0])
        self.settings = {**self._default_settings, **settings}
        for key, allowed in self._allowed.items():
            if self.settings[key] not in allowed:
                msg = (f"setting {key!r} of {type(self).__name__} must be one of "
                       f"{', '.join(map(repr, allowed))}, not {self.settings[key]!r}")
                raise RenderSettingError(msg, key)

    def render(self, obj, *args, **kwargs):
        for cls in type(obj).__mro__:
            method = getattr(self, "_render_" + cls.__name__, None)
            if method is not None:
                return method(obj, *args, **kwargs)
        return self._render_fallback(obj, *args, **kwargs)

    def _render_fallback(self, obj, *args, **kwargs):
        return str(obj)
