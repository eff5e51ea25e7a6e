"""Signed sign-off of a calc package: keys, signatures over a statement, verification with trust.

A key pair is Ed25519 (the ``cryptography`` package, the signing extra). The private key is a
PEM file (mode 0600, optionally encrypted with a passphrase); the public key, ``PATH.pub``, is a
small JSON document naming its holder and the roles the key may sign, with the raw key and its
fingerprint (SHA-256 of the raw 32 bytes).

A signature signs a *statement* (JSON, canonical: sorted keys, no spaces) in the layout of an
in-toto attestation (https://in-toto.io, Statement v1): the subject is the package's manifest
by its SHA-256, and the predicate says who signed which calc and revision, in which role, with
which key, when, and the record's own verification status. Signatures live in ``signatures/``:
one JSON file per signature (the statement and the signature), and ``signatures/SIGNED.sha256``
listing them, so that a signature file swapped or removed is seen. Signing never alters a file
the manifest covers, so earlier signatures stay valid; the manifest's audit leaves
``signatures/`` to this module.
"""

from __future__ import annotations

import base64
import datetime as _dt
import hashlib
import json
import os
import shutil
import tempfile
import zipfile
from dataclasses import dataclass
from pathlib import Path

from ..errors import ExportError, SignatureError, import_extra
from .manifest import MANIFEST_NAME, SIGNATURES_DIR, _read_package

__all__ = ["ROLES", "SIGNATURES", "STATEMENT_TYPE", "PREDICATE_TYPE", "Signer",
           "SignatureFinding", "generate_keys", "sign_package", "verify_signatures"]

ROLES = ("preparer", "checker", "approver")
SIGNATURES = SIGNATURES_DIR
SIGNED_LIST = f"{SIGNATURES}/SIGNED.sha256"
STATEMENT_TYPE = "https://in-toto.io/Statement/v1"
PREDICATE_TYPE = "derivpad.calc-sign-off/v1"
KEY_FORMAT = "derivpad.public-key/v1"


def _crypto():
    (ed,) = import_extra(("cryptography.hazmat.primitives.asymmetric.ed25519",),
                         "signing and verifying calc packages", extra="signing")
    from cryptography.hazmat.primitives import serialization
    return ed, serialization


def fingerprint(raw: bytes) -> str:
    """SHA-256 of a raw public key, hex: how a key is named in statements and trust lists."""
    return hashlib.sha256(raw).hexdigest()


def _canonical(obj) -> bytes:
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False).encode()


@dataclass(frozen=True, slots=True)
class Signer:
    """A public key as its .pub file gives it: holder, the roles it may sign, raw key."""

    name: str
    roles: tuple[str, ...]
    key: bytes

    @property
    def fingerprint(self) -> str:
        return fingerprint(self.key)


def _roles(roles) -> tuple[str, ...]:
    roles = (roles,) if isinstance(roles, str) else tuple(roles)
    bad = [r for r in roles if r not in ROLES]
    if bad or not roles:
        raise SignatureError(f"a role is one of {', '.join(ROLES)}, not {bad[0] if bad else ''!r}"
                             "; give e.g. --role checker", what="role")
    return roles


def generate_keys(path, name: str, roles, passphrase: str | None = None) -> tuple[Path, Path]:
    """Write an Ed25519 key pair: the private key at ``path`` (PEM, mode 0600, encrypted with
    ``passphrase`` if given) and the public key at ``path``.pub (JSON: holder, roles, key,
    fingerprint). Refuses to overwrite either file."""
    ed, ser = _crypto()
    roles = _roles(roles)
    if not name or not name.strip():
        raise SignatureError("a key names its holder: give --name \"A. Engineer\"", what="name")
    path = Path(path)
    pub = path.with_name(path.name + ".pub")
    for p in (path, pub):
        if p.exists():
            raise ExportError(f"{p} exists already; a key is never overwritten (choose another "
                              "path, or move the old key away)")
    key = ed.Ed25519PrivateKey.generate()
    enc = (ser.BestAvailableEncryption(passphrase.encode()) if passphrase
           else ser.NoEncryption())
    pem = key.private_bytes(ser.Encoding.PEM, ser.PrivateFormat.PKCS8, enc)
    raw = key.public_key().public_bytes(ser.Encoding.Raw, ser.PublicFormat.Raw)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    with os.fdopen(fd, "wb") as fh:
        fh.write(pem)
    pub.write_text(json.dumps({"format": KEY_FORMAT, "name": name.strip(), "roles": list(roles),
                               "key": base64.b64encode(raw).decode(),
                               "fingerprint": fingerprint(raw)}, indent=2) + "\n")
    return path, pub


def read_public_key(path) -> Signer:
    """A .pub file read and checked (its fingerprint must match its key)."""
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        raw = base64.b64decode(data["key"], validate=True)
        signer = Signer(str(data["name"]), _roles(data["roles"]), raw)
    except (OSError, ValueError, KeyError, TypeError) as exc:
        raise SignatureError(f"{path} is not a derivpad public key ({exc}); give a .pub file "
                             "written by derivpad keygen", what="key") from exc
    if data.get("format") != KEY_FORMAT or len(raw) != 32 or \
            data.get("fingerprint") != signer.fingerprint:
        raise SignatureError(f"{path} is not a valid derivpad public key (format, length or "
                             "fingerprint)", what="key")
    return signer


def _private_key(path, passphrase):
    ed, ser = _crypto()
    try:
        data = Path(path).read_bytes()
    except OSError as exc:
        raise SignatureError(f"the key {path} cannot be read ({exc})", what="key") from exc
    try:
        key = ser.load_pem_private_key(data, passphrase.encode() if passphrase else None)
    except TypeError as exc:
        raise SignatureError(f"the key {path} is protected by a passphrase: give it "
                             "(--passphrase-file, or passphrase=)", what="passphrase") from exc
    except ValueError as exc:
        raise SignatureError(f"the key {path} cannot be opened: a wrong passphrase, or the file "
                             "is damaged or truncated", what="key") from exc
    if not isinstance(key, ed.Ed25519PrivateKey):
        raise SignatureError(f"{path} is not an Ed25519 key; make one with derivpad keygen",
                             what="key")
    return key


def _record_of(files: dict) -> dict:
    try:
        return json.loads(files["record.json"].decode("utf-8"))
    except (KeyError, ValueError) as exc:
        raise SignatureError("the package has no readable record.json; only a derivpad calc "
                             "package can be signed", what="package") from exc


def _statement(files, role, signer: Signer, comment, when) -> dict:
    """The statement a signature signs: every file of the manifest as a subject (the manifest
    itself first), and a predicate with the calc's identity, the sign-off, the inputs, the
    environment, each derivation's verification and each criterion's outcome."""
    record = _record_of(files)

    def loaded(name, default):
        try:
            return json.loads(files[name].decode("utf-8"))
        except (KeyError, ValueError):
            return default
    results = loaded("results.json", [])
    environment = loaded("environment.json", {})
    subjects = [{"name": MANIFEST_NAME,
                 "digest": {"sha256": hashlib.sha256(files[MANIFEST_NAME]).hexdigest()}}]
    for line in files[MANIFEST_NAME].decode("utf-8").splitlines():
        digest, _, name = line.partition("  ")
        subjects.append({"name": name, "digest": {"sha256": digest}})
    verification = [{"id": r.get("id"), "equation": r.get("equation"),
                     "passed": bool(r.get("verification", {}).get("passed"))} for r in results]
    return {"_type": STATEMENT_TYPE, "subject": subjects, "predicateType": PREDICATE_TYPE,
            "predicate": {"format_version": 1,
                          "calc_number": record.get("calc_number"),
                          "revision": record.get("revision"), "title": record.get("title"),
                          "role": role, "signer": signer.name,
                          "key_fingerprint": signer.fingerprint, "signed_at": when,
                          "comment": comment or "",
                          "record_verified": bool(verification) and all(
                              v["passed"] for v in verification),
                          "inputs": loaded("inputs.json", {}).get("record", []),
                          "environment": {k: environment.get(k) for k in
                                          ("python", "platform", "packages")},
                          "verification": verification,
                          "acceptance": [{"id": r.get("id"), "criterion": a.get("text"),
                                          "outcome": a.get("outcome")}
                                         for r in results for a in r.get("acceptance", [])]}}


def sign_package(package, key, role: str, *, comment: str = "", passphrase=None,
                 now=None) -> Path:
    """Add a signature for ``role`` with the private ``key`` (its .pub beside it names the
    holder and the roles it may sign). The manifest must hold first. Folder or zip; the
    package is rewritten aside and moved into place, never half-written."""
    from .manifest import audit_manifest
    (role,) = _roles(role)
    package = Path(package)
    signer = read_public_key(Path(str(key) + ".pub"))
    if role not in signer.roles:
        raise SignatureError(f"the key of {signer.name} may sign as {', '.join(signer.roles)}, "
                             f"not as {role}", what="role")
    private = _private_key(key, passphrase)
    if fingerprint(_raw(private.public_key())) != signer.fingerprint:
        raise SignatureError(f"{key} and {key}.pub are not one key pair", what="key")
    audit_manifest(package).raise_if_broken()
    files = _read_package(package)
    when = (now or _dt.datetime.now(_dt.timezone.utc)).replace(microsecond=0).isoformat()
    statement = _statement(files, role, signer, comment, when)
    body = _canonical(statement)
    signed = {"statement": statement,
              "signature": base64.b64encode(private.sign(body)).decode(),
              "algorithm": "Ed25519"}
    existing = sorted(n for n in files if n.startswith(SIGNATURES + "/") and n != SIGNED_LIST)
    name = f"{SIGNATURES}/{len(existing) + 1:03d}-{role}-{signer.fingerprint[:12]}.json"
    new = {name: (json.dumps(signed, indent=2, ensure_ascii=False) + "\n").encode()}
    listing = {n: files[n] for n in existing}
    listing.update(new)
    new[SIGNED_LIST] = "".join(f"{hashlib.sha256(d).hexdigest()}  {n}\n"
                               for n, d in sorted(listing.items())).encode()
    _write_into(package, new)
    return package / name if package.is_dir() else package


def _raw(public) -> bytes:
    _, ser = _crypto()
    return public.public_bytes(ser.Encoding.Raw, ser.PublicFormat.Raw)


def _write_into(package: Path, new: dict) -> None:
    """Put ``new`` files into a package folder (each written aside, then renamed) or zip (the
    whole zip written aside with them, then renamed)."""
    if package.is_dir():
        for rel, data in new.items():
            target = package / rel
            target.parent.mkdir(parents=True, exist_ok=True)
            tmp = target.with_name(target.name + ".part")
            tmp.write_bytes(data)
            tmp.replace(target)
        return
    fd, tmp = tempfile.mkstemp(suffix=".zip", dir=package.parent)
    os.close(fd)
    try:
        with zipfile.ZipFile(package) as old, zipfile.ZipFile(tmp, "w",
                                                             zipfile.ZIP_DEFLATED) as out:
            names = old.namelist()
            root = names[0].split("/")[0] + "/" if names and all(
                n.split("/")[0] == names[0].split("/")[0] for n in names) else ""
            for info in old.infolist():
                if info.filename[len(root):] not in new:
                    out.writestr(info, old.read(info.filename))
            for rel, data in new.items():
                out.writestr(zipfile.ZipInfo(root + rel, (2026, 1, 1, 0, 0, 0)), data)
        shutil.move(tmp, package)
    finally:
        if os.path.exists(tmp):
            os.remove(tmp)


@dataclass(frozen=True, slots=True)
class SignatureFinding:
    """One signature as the audit found it."""

    file: str
    signer: str
    role: str
    signed_at: str
    fingerprint: str
    outcome: str          # "valid" or what is wrong

    @property
    def valid(self) -> bool:
        return self.outcome == "valid"


def _trusted(trust) -> dict[str, Signer]:
    if trust is None:
        return {}
    trust = Path(trust)
    paths = sorted(trust.glob("*.pub")) if trust.is_dir() else [trust]
    if not paths:
        raise SignatureError(f"{trust} holds no .pub files to trust", what="trust")
    return {s.fingerprint: s for s in map(read_public_key, paths)}


def _changed_subjects(statement: dict, files: dict) -> list[str]:
    """The signed files (the statement's subjects after the manifest) that are missing now or
    whose SHA-256 differs from the one signed."""
    out = []
    for sub in (statement.get("subject") or [])[1:]:
        name, digest = sub.get("name"), (sub.get("digest") or {}).get("sha256")
        if name not in files or hashlib.sha256(files[name]).hexdigest() != digest:
            out.append(str(name))
    return out


def _check_one(name, data: bytes, manifest_digest: str, trusted: dict,
               files: dict) -> SignatureFinding:
    ed, _ = _crypto()
    try:
        signed = json.loads(data.decode("utf-8"))
        st = signed["statement"]
        pred = st["predicate"]
        sig = base64.b64decode(signed["signature"], validate=True)
        fp, role = str(pred["key_fingerprint"]), str(pred["role"])
        who, when = str(pred["signer"]), str(pred["signed_at"])
    except (ValueError, KeyError, TypeError):
        return SignatureFinding(name, "?", "?", "?", "?", "NOT A SIGNATURE FILE")

    def found(outcome):
        return SignatureFinding(name, who, role, when, fp, outcome)
    signer = trusted.get(fp)
    if signer is None:
        return found("UNTRUSTED KEY (not in --trust)")
    try:
        ed.Ed25519PublicKey.from_public_bytes(signer.key).verify(sig, _canonical(st))
    except Exception:  # noqa: BLE001 - cryptography's InvalidSignature and malformed input
        return found("INVALID SIGNATURE (the statement or the signature was changed)")
    if signer.name != who:
        return found(f"SIGNER NAME {who!r} IS NOT THE KEY'S ({signer.name!r})")
    if role not in signer.roles:
        return found(f"ROLE {role} NOT ALLOWED FOR THIS KEY ({', '.join(signer.roles)})")
    changed = _changed_subjects(st, files)
    if changed:
        return found(f"A SIGNED FILE CHANGED OR WENT MISSING: {', '.join(changed[:3])}")
    subject = st.get("subject") or [{}]
    if subject[0].get("digest", {}).get("sha256") != manifest_digest:
        return found("SIGNED AN OLDER OR OTHER MANIFEST")
    return found("valid")


def verify_signatures(package, trust=None) -> tuple[list[SignatureFinding], list[str]]:
    """Every signature of the package checked against the trusted keys (a folder of .pub
    files, or one): (the findings, problems with the signatures' own list)."""
    files = _read_package(package)
    trusted = _trusted(trust)
    digest = hashlib.sha256(files.get(MANIFEST_NAME, b"")).hexdigest()
    names = sorted(n for n in files if n.startswith(SIGNATURES + "/") and n != SIGNED_LIST)
    problems = []
    listed: dict[str, str] = {}
    if SIGNED_LIST in files:
        for line in files[SIGNED_LIST].decode("utf-8", "replace").splitlines():
            d, _, n = line.partition("  ")
            listed[n] = d
    elif names:
        problems.append(f"{SIGNED_LIST} is missing: the signature files cannot be checked as "
                        "a set")
    for n in sorted(set(listed) - set(names)):
        problems.append(f"{n}: listed but MISSING (a signature was removed)")
    for n in names:
        if n not in listed:
            problems.append(f"{n}: NOT LISTED in {SIGNED_LIST} (a signature was added aside)")
        elif hashlib.sha256(files[n]).hexdigest() != listed[n]:
            problems.append(f"{n}: ALTERED or SWAPPED (checksum differs from the list)")
    findings = [_check_one(n, files[n], digest, trusted, files) for n in names]
    return findings, problems

