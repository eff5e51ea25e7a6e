"""The package manifest: written in sha256sum's format, and an audit that names each fault."""

import hashlib
import shutil
import subprocess
import zipfile

import pytest

from derivpad.errors import ExportError, ManifestMismatchError
from derivpad.export.manifest import MANIFEST_NAME, audit_manifest, write_manifest


@pytest.fixture
def package(tmp_path):
    root = tmp_path / "C-101-rev2"
    (root / "figures").mkdir(parents=True)
    (root / "results.json").write_text('{"peak": 1.5}\n')
    (root / "figures" / "d1.svg").write_bytes(b"<svg>...</svg>")
    (root / "report.html").write_text("<html></html>")
    write_manifest(root)
    return root


def test_manifest_is_checkable_by_sha256sum(package):
    # coreutils sha256sum -c is the outside reference for the format (common practice)
    if shutil.which("sha256sum") is None:
        pytest.skip("sha256sum not installed")
    proc = subprocess.run(["sha256sum", "-c", MANIFEST_NAME], cwd=package, capture_output=True,
                          text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    first = (package / MANIFEST_NAME).read_text().splitlines()[0]
    assert first == hashlib.sha256(b"<svg>...</svg>").hexdigest() + "  figures/d1.svg"


def test_intact_package_passes(package):
    audit = audit_manifest(package)
    assert audit.intact and audit.listed == 3


def test_tampered_deleted_and_added_files_are_each_named(package):
    svg = package / "figures" / "d1.svg"
    data = bytearray(svg.read_bytes())
    data[0] ^= 1                      # one byte changed
    svg.write_bytes(bytes(data))
    (package / "report.html").unlink()
    (package / "notes.txt").write_text("added later")
    audit = audit_manifest(package)
    assert audit.altered == ("figures/d1.svg",)
    assert audit.missing == ("report.html",)
    assert audit.extra == ("notes.txt",)
    with pytest.raises(ManifestMismatchError) as err:
        audit.raise_if_broken()
    assert err.value.missing == ("report.html",) and "notes.txt: NOT IN MANIFEST" in str(err.value)


def test_zip_of_the_package_audits_the_same(package, tmp_path):
    archive = tmp_path / "C-101-rev2.zip"
    with zipfile.ZipFile(archive, "w") as zf:
        for path in sorted(package.rglob("*")):
            if path.is_file():
                zf.write(path, f"C-101-rev2/{path.relative_to(package).as_posix()}")
    assert audit_manifest(archive).intact


def test_not_a_package(tmp_path):
    with pytest.raises(ExportError, match="neither a package folder nor a zip"):
        audit_manifest(tmp_path / "nothing.bin")
    with pytest.raises(ManifestMismatchError, match="has no MANIFEST"):
        audit_manifest(tmp_path)
