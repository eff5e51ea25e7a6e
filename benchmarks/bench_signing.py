"""Benchmark signing and verifying a calc package, in one run.

Run:  python benchmarks/bench_signing.py [--repeat R]

Packages the example notebook relay_coil_current.ipynb once (not timed), then times, each the
median of R runs (after a warm-up, benchmarks/timing.py) on a fresh copy: `sign_package`
(the manifest audited, the statement signed,
the signature and its list written) and `audit_package` with `--trust` (the manifest, every
signature verified, the record's status; the re-run is not part of it). The reference in the
same run is the manifest audit alone (`audit_manifest`), which signing and verifying both
contain: the ratio says what the signatures add. Target (issue 15): under 1 s each.
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from derivpad.export.audit import audit_package  # noqa: E402
from derivpad.export.manifest import audit_manifest  # noqa: E402
from derivpad.export.package import make_package  # noqa: E402
from derivpad.export.signing import generate_keys, sign_package  # noqa: E402
from timing import median_time  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        pkg = make_package(ROOT / "example_notebooks" / "relay_coil_current.ipynb", tmp / "out",
                           pdf=False, progress=None).folder
        generate_keys(tmp / "keys" / "carl", "C. Checker", ["checker"])
        trust = tmp / "keys" / "carl.pub"
        copies = []

        def fresh():
            target = tmp / f"copy{len(copies)}"
            shutil.copytree(pkg, target)
            copies.append(target)
            return target
        targets = [fresh() for _ in range(args.repeat + 1)]  # one more: the warm-up signs one
        it = iter(targets)
        sign = median_time(lambda: sign_package(next(it), tmp / "keys" / "carl", "checker"),
                           args.repeat)
        verify = median_time(lambda: audit_package(targets[0], trust=trust, require=("checker",)),
                        args.repeat)
        manifest = median_time(lambda: audit_manifest(targets[0]), args.repeat)
        files = sum(1 for p in pkg.rglob("*") if p.is_file())
        print(f"package of {files} files: sign {sign:.3f} s, audit with trust {verify:.3f} s "
              f"(target: under 1 s each); the manifest audit alone {manifest:.3f} s (ratio "
              f"{sign / manifest:.1f} and {verify / manifest:.1f})")


if __name__ == "__main__":
    main()
