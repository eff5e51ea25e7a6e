"""Benchmark packaging an example notebook, PDF included, and say where the time goes.

Run:  python benchmarks/bench_package.py [--notebook PATH]

The split comes from the packager's own progress messages, time-stamped: kernel start (until
the first cell runs), execution (all cells), rendering (the JSON files, figures and report),
the PDF, and the manifest and zip. The reference in the same run is a plain nbclient
execution of the same notebook, which any packaging must include. Target: under 20 s.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import nbformat  # noqa: E402
from nbclient import NotebookClient  # noqa: E402

from derivpad.export.package import make_package  # noqa: E402

EXAMPLE = Path(__file__).resolve().parents[1] / "example_notebooks" / "skid_surge_history.ipynb"


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--notebook", default=str(EXAMPLE))
    args = parser.parse_args(argv)
    marks = []
    start = time.perf_counter()

    def progress(message):
        marks.append((time.perf_counter() - start, message))

    with tempfile.TemporaryDirectory() as out:
        make_package(args.notebook, out, progress=progress)
    total = time.perf_counter() - start

    def at(prefix):
        return next(t for t, m in marks if m.startswith(prefix))

    phases = [("kernel start", 0.0, at("cell 1 ")),
              ("execution", at("cell 1 "), at("writing results.json")),
              ("rendering (JSON, figures, report)", at("writing results.json"),
               at("printing report.pdf") if any(m.startswith("printing") for _, m in marks)
               else at("writing MANIFEST")),
              ("PDF", at("printing report.pdf") if any(m.startswith("printing") for _, m in marks)
               else at("writing MANIFEST"), at("writing MANIFEST")),
              ("manifest and zip", at("writing MANIFEST"), total)]
    for name, a, b in phases:
        print(f"{name:<36} {b - a:7.2f} s")
    print(f"{'total':<36} {total:7.2f} s   (target < 20 s)")

    nb = nbformat.read(args.notebook, as_version=4)
    t0 = time.perf_counter()
    NotebookClient(nb, timeout=600, kernel_name="python3").execute()
    ref = time.perf_counter() - t0
    print(f"{'reference: plain nbclient execution':<36} {ref:7.2f} s   ratio {total / ref:5.2f}x")


if __name__ == "__main__":
    main()
