"""SHA-256 manifest of a calc package: write it, and audit a package (folder or zip) against it.

``MANIFEST.sha256`` lists every other file of the package, one ``<sha256>  <path>`` line each,
sorted by path, in the format ``sha256sum -c`` reads. The audit names every file that is listed
but missing, present but not listed, or present with another checksum.
"""

from __future__ import annotations

import hashlib
import zipfile
from dataclasses import dataclass
from pathlib import Path, PurePosixPath

from ..errors import ExportError, ManifestMismatchError

__all__ = ["MANIFEST_NAME", "ManifestAudit", "write_manifest", "audit_manifest",
           "package_files"]

MANIFEST_NAME = "MANIFEST.sha256"
SIGNATURES_DIR = "signatures"


@dataclass(frozen=True, slots=True)
class ManifestAudit:
    """The outcome of checking a package against its manifest."""

    listed: int
    missing: tuple[str, ...]
    extra: tuple[str, ...]
    altered: tuple[str, ...]

    @property
    def intact(self) -> bool:
        return not (self.missing or self.extra or self.altered)

    def rows(self) -> list[tuple[str, str]]:
        """(file, finding) rows for a review table; one 'intact' row when all holds."""
        if self.intact:
            return [(f"{self.listed} files", "intact: every file present and matching")]
        return ([(name, "MISSING") for name in self.missing]
                + [(name, "NOT IN MANIFEST") for name in self.extra]
                + [(name, "ALTERED (checksum differs)") for name in self.altered])

    def raise_if_broken(self) -> None:
        if not self.intact:
            msg = "the package does not match its manifest: " + "; ".join(
                f"{name}: {finding}" for name, finding in self.rows())
            raise ManifestMismatchError(msg, self.missing, self.extra, self.altered)


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def package_files(folder: Path, signatures: bool = False) -> dict[str, bytes]:
    """Every file below ``folder`` (POSIX relative path → bytes) but the manifest, and but the
    signatures (which have their own list) unless ``signatures``."""
    out = {}
    for path in sorted(folder.rglob("*")):
        if path.is_file():
            rel = path.relative_to(folder).as_posix()
            if rel != MANIFEST_NAME and (signatures or not rel.startswith(SIGNATURES_DIR + "/")):
                out[rel] = path.read_bytes()
    return out


def write_manifest(folder) -> Path:
    """Write ``MANIFEST.sha256`` for every other file below ``folder``; returns its path."""
    folder = Path(folder)
    lines = [f"{_digest(data)}  {rel}\n" for rel, data in sorted(package_files(folder).items())]
    path = folder / MANIFEST_NAME
    path.write_text("".join(lines), encoding="utf-8")
    return path


def _read_package(package) -> dict[str, bytes]:
    """All files of a package folder or zip, manifest included, by POSIX relative path."""
    package = Path(package)
    if package.is_dir():
        files = package_files(package, signatures=True)
        manifest = package / MANIFEST_NAME
        if manifest.is_file():
            files[MANIFEST_NAME] = manifest.read_bytes()
        return files
    if package.is_file() and zipfile.is_zipfile(package):
        with zipfile.ZipFile(package) as zf:
            names = [n for n in zf.namelist() if not n.endswith("/")]
            roots = {PurePosixPath(n).parts[0] for n in names}
            strip = len(roots) == 1 and all(len(PurePosixPath(n).parts) > 1 for n in names)
            out = {}
            for n in names:
                rel = "/".join(PurePosixPath(n).parts[1:]) if strip else n
                out[rel] = zf.read(n)
            return out
    raise ExportError(f"{package} is neither a package folder nor a zip file")


def audit_manifest(package) -> ManifestAudit:
    """Check a package (folder or .zip) against its manifest."""
    files = _read_package(package)
    if MANIFEST_NAME not in files:
        raise ManifestMismatchError(f"{package} has no {MANIFEST_NAME}", missing=(MANIFEST_NAME,))
    listed: dict[str, str] = {}
    for number, line in enumerate(files.pop(MANIFEST_NAME).decode("utf-8").splitlines(), 1):
        digest, sep, name = line.partition("  ")
        if not sep or len(digest) != 64:
            raise ManifestMismatchError(f"{MANIFEST_NAME} line {number} is not '<sha256>  <path>'")
        listed[name] = digest
    missing = tuple(sorted(n for n in listed if n not in files))
    # signatures/ is the signatures' own area, with its own list (export/signing.py): signing
    # adds files there without touching any file the manifest covers
    extra = tuple(sorted(n for n in files if n not in listed
                         and not n.startswith(SIGNATURES_DIR + "/")))
    altered = tuple(sorted(n for n in listed if n in files and _digest(files[n]) != listed[n]))
    return ManifestAudit(len(listed), missing, extra, altered)
