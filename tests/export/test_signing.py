"""Signed sign-off: keys, signatures over the package's statement, audit with trust.

Known answer: Ed25519 against RFC 8032 §7.1, TEST 1 (the published secret key, public key,
empty message and signature), to show the library is used as the standard defines it. Every
attack the audit must name is made on a real package.
"""

import json
import os
import shutil
import zipfile
from pathlib import Path

import pytest

pytest.importorskip("cryptography")

from derivpad import SignatureError  # noqa: E402
from derivpad.export.audit import audit_package  # noqa: E402
from derivpad.export.manifest import write_manifest  # noqa: E402
from derivpad.export.signing import generate_keys, sign_package, verify_signatures  # noqa: E402


def test_ed25519_known_answer_rfc8032_test_1():
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey
    from cryptography.hazmat.primitives.serialization import Encoding, PublicFormat
    secret = bytes.fromhex("9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60")
    public = bytes.fromhex("d75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a")
    signature = bytes.fromhex(
        "e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e065224901555fb8821590a33bacc61e3970"
        "1cf9b46bd25bf5f0595bbe24655141438e7a100b")
    key = Ed25519PrivateKey.from_private_bytes(secret)
    assert key.public_key().public_bytes(Encoding.Raw, PublicFormat.Raw) == public
    assert key.sign(b"") == signature


def _package(tmp_path: Path, name="C-1-rev0") -> Path:
    """A minimal package: a record, results and a manifest (what signing reads)."""
    folder = tmp_path / name
    folder.mkdir()
    (folder / "record.json").write_text(json.dumps({"calc_number": "C-1", "revision": "0",
                                                    "title": "test calc"}))
    (folder / "results.json").write_text(json.dumps([{"verified": True,
                                                      "verification": {"passed": True}}]))
    (folder / "report.html").write_text("<p>report</p>")
    write_manifest(folder)
    return folder


@pytest.fixture()
def keys(tmp_path):
    out = {}
    for who, roles in (("Ann Preparer", ["preparer"]), ("Carl Checker", ["checker"]),
                       ("Mallory", ["checker"])):
        path = tmp_path / "keys" / who.split()[0].lower()
        generate_keys(path, who, roles)
        out[who.split()[0].lower()] = path
    trust = tmp_path / "trusted"
    trust.mkdir()
    for who in ("ann", "carl"):
        shutil.copy(str(out[who]) + ".pub", trust / f"{who}.pub")
    out["trust"] = trust
    return out


def test_keys_are_private_and_never_overwritten(tmp_path, keys):
    assert oct(os.stat(keys["ann"]).st_mode & 0o777) == "0o600"
    with pytest.raises(Exception, match="never overwritten"):
        generate_keys(keys["ann"], "Ann", ["preparer"])


def test_sign_and_audit_round_trip_folder(tmp_path, keys):
    pkg = _package(tmp_path)
    sign_package(pkg, keys["ann"], "preparer")
    sign_package(pkg, keys["carl"], "checker", comment="checked against hand calc")
    result = audit_package(pkg, trust=keys["trust"], require=("preparer", "checker"))
    assert result.holds, result.table()
    assert "Carl Checker, checker" in result.table()


def test_sign_and_audit_round_trip_zip(tmp_path, keys):
    pkg = _package(tmp_path)
    archive = tmp_path / "C-1-rev0.zip"
    with zipfile.ZipFile(archive, "w") as zf:
        for p in sorted(pkg.rglob("*")):
            zf.write(p, f"C-1-rev0/{p.relative_to(pkg).as_posix()}")
    sign_package(archive, keys["ann"], "preparer")
    sign_package(archive, keys["carl"], "checker")
    assert audit_package(archive, trust=keys["trust"], require=("preparer", "checker")).holds


def test_a_byte_changed_after_signing_fails_manifest_and_signature(tmp_path, keys):
    pkg = _package(tmp_path)
    sign_package(pkg, keys["carl"], "checker")
    (pkg / "report.html").write_text("<p>report, changed</p>")
    result = audit_package(pkg, trust=keys["trust"], require=("checker",))
    table = result.table()
    assert not result.holds and "CANNOT BE RELIED ON" in table
    assert "A SIGNED FILE CHANGED OR WENT MISSING: report.html" in table
    write_manifest(pkg)  # the manifest regenerated after the change: the signature fails
    result = audit_package(pkg, trust=keys["trust"], require=("checker",))
    assert not result.holds and "A SIGNED FILE CHANGED" in result.table()
    (pkg / "report.html").write_text("<p>report</p>")  # the file back, the new manifest kept:
    write_manifest(pkg)                               # the signature holds again
    assert audit_package(pkg, trust=keys["trust"], require=("checker",)).holds


def test_untrusted_key_and_role_not_allowed(tmp_path, keys):
    pkg = _package(tmp_path)
    sign_package(pkg, keys["mallory"], "checker")
    table = audit_package(pkg, trust=keys["trust"], require=("checker",)).table()
    assert "UNTRUSTED KEY" in table and "MISSING: no valid signature" in table
    with pytest.raises(SignatureError, match="may sign as preparer, not as checker"):
        sign_package(pkg, keys["ann"], "checker")


def test_signature_removed_or_swapped_between_packages(tmp_path, keys):
    one, two = _package(tmp_path, "one"), _package(tmp_path, "two")
    (two / "report.html").write_text("<p>another calc</p>")
    write_manifest(two)
    sign_package(one, keys["carl"], "checker")
    sign_package(two, keys["carl"], "checker")
    (name,) = [p.name for p in (one / "signatures").glob("0*.json")]
    shutil.copy(two / "signatures" / name, one / "signatures" / name)
    findings, problems = verify_signatures(one, keys["trust"])
    assert any("ALTERED or SWAPPED" in p for p in problems)
    assert not findings[0].valid  # it signs the other package's manifest
    (one / "signatures" / name).unlink()
    _, problems = verify_signatures(one, keys["trust"])
    assert any("MISSING" in p for p in problems)


def test_truncated_key_and_wrong_passphrase(tmp_path):
    path = tmp_path / "k"
    generate_keys(path, "Pat", ["approver"], passphrase="correct horse")
    pkg = _package(tmp_path)
    with pytest.raises(SignatureError, match="wrong passphrase"):
        sign_package(pkg, path, "approver", passphrase="wrong")
    with pytest.raises(SignatureError, match="protected by a passphrase"):
        sign_package(pkg, path, "approver")
    path.write_bytes(path.read_bytes()[:40])
    with pytest.raises(SignatureError, match="damaged or truncated"):
        sign_package(pkg, path, "approver", passphrase="correct horse")


def test_report_of_a_signed_package_fills_the_sign_off_and_touches_nothing(tmp_path, keys):
    # a real package (the relay example), signed by the preparer and the checker; the report
    # is rendered beside it with both signatures, and the package still audits as it was
    from derivpad.cli import main
    from derivpad.export.package import make_package
    root = Path(__file__).resolve().parents[2]
    pkg = make_package(root / "example_notebooks" / "relay_coil_current.ipynb", tmp_path / "out",
                       pdf=False, progress=None).folder
    sign_package(pkg, keys["ann"], "preparer")
    sign_package(pkg, keys["carl"], "checker")
    before = {p: p.read_bytes() for p in pkg.rglob("*") if p.is_file()}
    assert main(["report", str(pkg), "--trust", str(keys["trust"]), "--no-pdf"]) == 0
    html = (pkg.parent / f"{pkg.name}-signed-report.html").read_text()
    for who, role in (("Ann Preparer", "preparer"), ("Carl Checker", "checker")):
        fp = json.loads(Path(str(keys[who.split()[0].lower()]) + ".pub").read_text())
        assert f"{who}, " in html and fp["fingerprint"][:16] in html
    assert html.count(": valid") == 2
    (first,) = [p for p in (pkg / "signatures").glob("001-*.json")]
    statement = json.loads(first.read_text())["statement"]
    names = [sub["name"] for sub in statement["subject"]]
    assert names[0] == "MANIFEST.sha256" and "report.html" in names and "results.json" in names
    pred = statement["predicate"]
    assert pred["calc_number"] == "DEMO-002" and pred["role"] == "preparer"
    assert pred["verification"] and all(v["passed"] for v in pred["verification"])
    assert {p: p.read_bytes() for p in pkg.rglob("*") if p.is_file()} == before
    assert audit_package(pkg, trust=keys["trust"], require=("preparer", "checker")).holds


def test_a_trusted_key_whose_roles_do_not_include_the_signed_one(tmp_path, keys):
    # the team's trust list lets Carl's key sign as approver only: his checker signature is
    # named as a role the key may not hold
    pkg = _package(tmp_path)
    sign_package(pkg, keys["carl"], "checker")
    pub = json.loads((keys["trust"] / "carl.pub").read_text())
    pub["roles"] = ["approver"]
    (keys["trust"] / "carl.pub").write_text(json.dumps(pub))
    table = audit_package(pkg, trust=keys["trust"], require=("checker",)).table()
    assert "ROLE checker NOT ALLOWED FOR THIS KEY (approver)" in table
    assert not audit_package(pkg, trust=keys["trust"]).holds
