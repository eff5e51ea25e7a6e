"""Export an executed notebook to one self-contained HTML file that opens offline.

nbconvert's HTML exporter with derivpad's template (``templates/derivpad_offline``): the lab
layout, no CDN script, MathJax inlined. The file is written beside its target and renamed
into place, so a failed export leaves nothing half-written.
"""

from __future__ import annotations

from pathlib import Path

from ..errors import ExportError, import_extra
from ..render.offline import mathjax_source

__all__ = ["export_html", "TEMPLATE_DIR"]

TEMPLATE_DIR = Path(__file__).resolve().parent / "templates"


def export_html(notebook, out_path) -> Path:
    """Write ``notebook`` (a path or an nbformat node) as offline HTML at ``out_path``."""
    nbformat, nbconvert = import_extra(("nbformat", "nbconvert"), "exporting")
    HTMLExporter = nbconvert.HTMLExporter
    if isinstance(notebook, (str, Path)):
        path = Path(notebook)
        if not path.is_file():
            raise ExportError(f"no notebook at {path}")
        node = nbformat.read(path, as_version=4)
        title = path.stem
    else:
        node, title = notebook, "notebook"
    exporter = HTMLExporter(template_name="derivpad_offline",
                            extra_template_basedirs=[str(TEMPLATE_DIR)])
    body, _ = exporter.from_notebook_node(
        node, resources={"derivpad_mathjax": mathjax_source(), "metadata": {"name": title}})
    page = body.replace(mathjax_source(), "")  # MathJax's own code names URLs it never loads here
    if "cdn." in page or "unpkg.com" in page or "cdnjs" in page or "<script src=" in page:
        raise ExportError("the exported page still refers to a CDN; the template is out of date")
    out = Path(out_path)
    tmp = out.with_name(out.name + ".part")
    tmp.write_text(body, encoding="utf-8")
    tmp.replace(out)
    return out
