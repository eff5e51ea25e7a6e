"""The MIME bundle a notebook displays: text/plain, text/latex, text/html and our own JSON.

The vendor type carries the derivation's canonical JSON form, so an exported notebook can be
read back by machine. Display never raises into the notebook: on any failure the bundle falls
back to text/plain with the message.
"""

from __future__ import annotations

__all__ = ["DERIVATION_MIME_TYPE", "mimebundle", "FORMATS"]

DERIVATION_MIME_TYPE = "application/vnd.derivpad.derivation+json"

FORMATS = ("text/plain", "text/latex", "text/html", DERIVATION_MIME_TYPE)


def _build(d, mime: str):
    if mime == "text/plain":
        return d.to_text()
    if mime == "text/latex":
        return d.to_latex()
    if mime == "text/html":
        from .html import to_html
        return to_html(d)
    return d.to_dict()


def mimebundle(d, include=None, exclude=None) -> dict:
    """The bundle for ``Derivation._repr_mimebundle_``, honouring include / exclude."""
    wanted = [m for m in FORMATS if (include is None or m in include)
              and (exclude is None or m not in exclude)]
    bundle = {}
    try:
        for mime in wanted:
            bundle[mime] = _build(d, mime)
    except Exception as exc:  # noqa: BLE001 - display must never raise into the notebook
        text = f"derivpad could not display this derivation ({type(exc).__name__}: {exc})"
        try:
            text += "\n\n" + d.to_text()
        except Exception:  # noqa: BLE001
            pass
        return {"text/plain": text}
    return bundle
