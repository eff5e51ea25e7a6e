"""Compare two revisions of a calc package: what a reviewer pastes into the revision record.

Inputs that changed, results that moved (both values, the unit and the relative change),
acceptance outcomes that flipped, verification that changed, derivation steps whose content
differs (read from the derivations each package's notebook displayed, never by running it),
and differences of environment. The results are compared as an audit's re-run compares them
(export/audit.py), with no tolerance: any change is listed.
"""

from __future__ import annotations

import json
from pathlib import Path

from ..render.mimebundle import DERIVATION_MIME_TYPE
from .audit import _compare, _environment_rows
from .manifest import _read_package

__all__ = ["compare_packages", "comparison_table"]


def _json(files: dict, name: str, default):
    try:
        return json.loads(files[name].decode("utf-8"))
    except (KeyError, ValueError):
        return default


def _steps(files: dict) -> list[list[tuple[str, str]]]:
    """Per derivation the notebook displayed: (title, LaTeX) of every step, sub-steps too."""
    import nbformat
    notebooks = [n for n in files if n.endswith(".ipynb") and "/" not in n]
    if not notebooks:
        return []
    nb = nbformat.reads(files[notebooks[0]].decode("utf-8"), as_version=4)
    out = []
    for cell in nb.cells:
        for o in cell.get("outputs", []):
            data = o.get("data", {}) if o.get("output_type") in ("display_data",
                                                                 "execute_result") else {}
            if DERIVATION_MIME_TYPE in data:
                out.append(list(_flat(data[DERIVATION_MIME_TYPE]["steps"], "")))
    return out


def _flat(steps, prefix):
    for i, s in enumerate(steps, 1):
        number = f"{prefix}{i}"
        yield number + " " + s["title"], s.get("latex", "") + s.get("note", "")
        yield from _flat(s.get("substeps", []), number + ".")


def _input_rows(old: dict, new: dict) -> list[tuple[str, str, str]]:
    rows = []
    a = {str(r.get("name")): r for r in old.get("record", [])}
    b = {str(r.get("name")): r for r in new.get("record", [])}
    for name in sorted(set(a) | set(b)):
        if a.get(name) != b.get(name):
            rows.append(("input", name, f"{_show(a.get(name))} → {_show(b.get(name))}"))
    for i, (da, db) in enumerate(zip(old.get("derivations", []), new.get("derivations", [])),
                                 1):
        for key in sorted(set(da.get("given", {})) | set(db.get("given", {}))):
            ga, gb = da.get("given", {}).get(key), db.get("given", {}).get(key)
            if ga != gb:
                rows.append(("input", f"derivation-{i} {key}",
                             f"{(ga or {}).get('given', 'absent')} → "
                             f"{(gb or {}).get('given', 'absent')}"))
    return rows


def _show(row) -> str:
    return "absent" if row is None else str(row.get("value"))


def compare_packages(old, new) -> list[tuple[str, str, str]]:
    """(part, item, change) rows between two packages (folders or zips)."""
    fa, fb = _read_package(Path(old)), _read_package(Path(new))
    rec_a, rec_b = _json(fa, "record.json", {}), _json(fb, "record.json", {})
    rows = [("record", "revision", f"{rec_a.get('revision', '?')} → "
                                   f"{rec_b.get('revision', '?')}")]
    rows += _input_rows(_json(fa, "inputs.json", {}), _json(fb, "inputs.json", {}))
    rows += [("result", item, change) for item, change in
             _compare(_json(fa, "results.json", []), _json(fb, "results.json", []), 0.0)]
    for i, (sa, sb) in enumerate(zip(_steps(fa), _steps(fb)), 1):
        da, db = dict(sa), dict(sb)
        for title in [t for t, _ in sa] + [t for t, _ in sb if t not in da]:
            if da.get(title) != db.get(title):
                what = ("only in the old revision" if title not in db else
                        "only in the new revision" if title not in da else "content differs")
                rows.append(("step", f"derivation-{i} {title}", what))
    rows += [("environment", k, v) for k, v in
             _environment_rows(_json(fa, "environment.json", {}),
                               _json(fb, "environment.json", {}))]
    return rows


def comparison_table(rows) -> str:
    """The rows as a table a reviewer can paste into the revision record."""
    w1 = max([len("part")] + [len(r[0]) for r in rows])
    w2 = max([len("item")] + [len(r[1]) for r in rows])
    out = [f"| {'part':<{w1}} | {'item':<{w2}} | change |",
           f"|{'-' * (w1 + 2)}|{'-' * (w2 + 2)}|--------|"]
    out += [f"| {a:<{w1}} | {b:<{w2}} | {c} |" for a, b, c in rows]
    return "\n".join(out)


