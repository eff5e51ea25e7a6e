"""The core's one way into ``derivpad.render``: each function imports its renderer inside its
body, so loading the core never loads printing, plotting or the notebook (as SymPy's
``Printable`` imports its printer inside the method). Nothing else in core/ imports render/."""

from __future__ import annotations

__all__ = ["bundle", "figure", "html", "latex", "record_bundle", "save_figure", "spectrum_bundle",
           "spectrum_dict", "spectrum_figure", "spectrum_text", "step_latex", "text", "to_dict"]


def step_latex(step) -> str:
    from ...render.latex import step_math_latex
    return step_math_latex(step)


def record_bundle(record, include=None, exclude=None) -> dict:
    from ...render.record import record_bundle as build
    return build(record, include, exclude)


def figure(derivation, **settings):
    from ...render.figure import verification_figure  # matplotlib is an extra
    return verification_figure(derivation, **settings)


def save_figure(derivation, path, **settings):
    from ...render.figure import save_figure as save
    return save(derivation, path, **settings)


def to_dict(derivation) -> dict:
    from ...render.serial import derivation_to_dict
    return derivation_to_dict(derivation)


def latex(obj, **settings) -> str:
    from ...render.latex import to_latex
    return to_latex(obj, **settings)


def html(obj, **settings) -> str:
    from ...render.html import to_html
    return to_html(obj, **settings)


def text(obj, **settings) -> str:
    from ...render.text import to_text
    return to_text(obj, **settings)


def bundle(obj, include=None, exclude=None) -> dict:
    from ...render.mimebundle import mimebundle
    return mimebundle(obj, include, exclude)


def spectrum_figure(spectrum, **settings):
    from ...render.spectrum import spectrum_figure as draw  # matplotlib is an extra
    return draw(spectrum, **settings)


def spectrum_text(spectrum, width: int = 80) -> str:
    from ...render.spectrum import spectrum_text as write
    return write(spectrum, width)


def spectrum_bundle(spectrum) -> dict:
    from ...render.spectrum import spectrum_bundle as build
    return build(spectrum)


def spectrum_dict(spectrum) -> dict:
    from ...render.spectrum import spectrum_to_dict
    return spectrum_to_dict(spectrum)
