"""A self-contained HTML page: the derivation's HTML with the bundled MathJax inlined.

The page needs no network: MathJax 3 (tex-svg-full, pinned by SHA-256 in assets/README.md) is
inlined, so the math typesets offline. Closed ``<details>`` are typeset too.
"""

from __future__ import annotations

import hashlib
from functools import lru_cache
from importlib import resources

from ..errors import ExportError

__all__ = ["MATHJAX_SHA256", "mathjax_source", "standalone_page"]

MATHJAX_SHA256 = "a4354ff94fd868aea0cc6eaaa79a57fda0588646fc46ee3700a349ee0a11cbe6"

_CONFIG = """window.MathJax = {tex: {inlineMath: [['$', '$']], displayMath: [['$$', '$$']]},
  svg: {fontCache: 'global'}, options: {enableMenu: false}, startup: {typeset: true}};"""


@lru_cache(maxsize=1)
def mathjax_source() -> str:
    """The bundled MathJax file, checked against its pinned checksum."""
    data = resources.files("derivpad.render").joinpath("assets/tex-svg-full.js").read_bytes()
    digest = hashlib.sha256(data).hexdigest()
    if digest != MATHJAX_SHA256:
        msg = (f"the bundled MathJax file has SHA-256 {digest}, not the pinned "
               f"{MATHJAX_SHA256}; reinstall derivpad")
        raise ExportError(msg)
    return data.decode("utf-8")


def standalone_page(body_html: str, title: str) -> str:
    """An HTML document with MathJax inlined and the body given; opens offline."""
    from html import escape
    script = mathjax_source().replace("</script", "<\\/script")
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{escape(title)}</title>\n<script>{_CONFIG}</script>\n"
            f"<script>{script}</script>\n</head><body>\n{body_html}\n</body></html>\n")
