"""The bundled MathJax file is the pinned one, and offline pages inline it without a CDN."""

import hashlib
from importlib import resources

from derivpad.render.offline import MATHJAX_SHA256, standalone_page


def test_bundled_mathjax_matches_its_pinned_checksum():
    # SHA-256 of es5/tex-svg-full.js in the npm package mathjax@3.2.2 (assets/README.md)
    data = resources.files("derivpad.render").joinpath("assets/tex-svg-full.js").read_bytes()
    assert hashlib.sha256(data).hexdigest() == MATHJAX_SHA256


def test_standalone_page_has_no_external_script():
    page = standalone_page("<p>$$x^2$$</p>", "t")
    assert "<script src=" not in page and page.count("<script>") == 2
