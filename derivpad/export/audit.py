"""Audit a calc package: manifest first, then the record's status, and optionally a re-run.

The re-run executes the packaged notebook (or a working copy given instead) in a fresh kernel
and compares each derivation's solution and results with the packaged ones, listing every
value that moved and by how much, and every difference of environment. The notebook is run
only after the manifest holds: a notebook whose checksum does not match is never executed.
"""

from __future__ import annotations

import json
import math
import tempfile
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

from .manifest import MANIFEST_NAME, audit_manifest

__all__ = ["PackageAudit", "audit_package", "RERUN_TOLERANCE"]

RERUN_TOLERANCE = 1e-9
"""Relative change above which a re-run value counts as moved."""


@dataclass(frozen=True, slots=True)
class PackageAudit:
    """Everything the audit found, as rows for a review record, and whether all holds."""

    manifest_rows: tuple
    status_rows: tuple = ()
    rerun_rows: tuple = ()
    environment_rows: tuple = ()
    signature_rows: tuple = ()
    holds: bool = False
    notes: tuple = field(default=())

    def table(self) -> str:
        rows = ([("manifest", f, s) for f, s in self.manifest_rows]
                + [("record", k, v) for k, v in self.status_rows]
                + [("signature", k, v) for k, v in self.signature_rows]
                + [("re-run", k, v) for k, v in self.rerun_rows]
                + [("environment", k, v) for k, v in self.environment_rows])
        w1 = max(len(r[0]) for r in rows)
        w2 = max(len(str(r[1])) for r in rows)
        out = [f"| {'part':<{w1}} | {'item':<{w2}} | finding |",
               f"|{'-' * (w1 + 2)}|{'-' * (w2 + 2)}|---------|"]
        out += [f"| {a:<{w1}} | {str(b):<{w2}} | {c} |" for a, b, c in rows]
        out.append("")
        out.append("audit: " + ("everything holds" if self.holds else "DOES NOT HOLD"))
        out += list(self.notes)
        return "\n".join(out)


def _unpacked(package: Path, work: Path) -> Path:
    if package.is_dir():
        return package
    with zipfile.ZipFile(package) as zf:
        zf.extractall(work)
    tops = [p for p in work.iterdir() if p.is_dir()]
    return tops[0] if len(tops) == 1 else work


def _numbers(value):
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return None
    if isinstance(value, (int, float)):
        return [float(value)]
    if isinstance(value, dict) and set(value) == {"re", "im"}:
        return [float(value["re"]), float(value["im"])]
    if isinstance(value, list):
        flat = []
        for v in value:
            n = _numbers(v)
            if n is None:
                return None
            flat += n
        return flat
    return None


def _compare(old: list, new: list, tolerance: float) -> list[tuple[str, str]]:
    rows = []
    if len(old) != len(new):
        return [("derivations", f"{len(old)} packaged, {len(new)} now")]
    for a, b in zip(old, new):
        tag = a["id"]
        if a["solution"]["text"] != b["solution"]["text"]:
            rows.append((f"{tag} solution", "CHANGED"))
        for key in sorted(set(a["results"]) | set(b["results"])):
            ra, rb = a["results"].get(key), b["results"].get(key)
            if ra is None or rb is None:
                rows.append((f"{tag} {key}", "only in " + ("the re-run" if ra is None else
                                                            "the package")))
                continue
            if ra.get("status") != rb.get("status"):  # e.g. a value now "unbounded"
                rows.append((f"{tag} {key}", f"{ra.get('status')} → {rb.get('status')}"))
                continue
            na, nb = _numbers(ra["value"]), _numbers(rb["value"])
            if na is None or nb is None:
                if ra["value"] != rb["value"]:
                    rows.append((f"{tag} {key}", f"{ra['value']} → {rb['value']}"))
                continue
            for x, y in zip(na, nb):
                scale = max(abs(x), abs(y), 1e-300)
                if abs(x - y) > tolerance * scale and not (math.isclose(x, y, abs_tol=1e-300)):
                    rows.append((f"{tag} {key}", f"moved {x:.6g} → {y:.6g} {ra['unit']} "
                                                f"({(y - x) / scale:+.2e} relative)"))
                    break
        old_ok = {c["text"]: c["outcome"] for c in a.get("acceptance", [])}
        new_ok = {c["text"]: c["outcome"] for c in b.get("acceptance", [])}
        for text in sorted(set(old_ok) | set(new_ok)):
            if old_ok.get(text) != new_ok.get(text):
                rows.append((f"{tag} criterion {text}",
                             f"{old_ok.get(text, 'absent')} → {new_ok.get(text, 'absent')}"))
        if a["verification"]["passed"] != b["verification"]["passed"]:
            rows.append((f"{tag} verification", f"{a['verification']['passed']} → "
                                                f"{b['verification']['passed']}"))
    return rows


def _compare_cases(old: list, new: list, tolerance: float) -> list[tuple[str, str]]:
    """Load-case runs: the number of cases, each criterion's outcome counts, and each
    envelope value and its governing case."""
    if len(old) != len(new):
        return [("load cases", f"{len(old)} runs packaged, {len(new)} now")]
    rows = []
    for a, b in zip(old, new):
        tag = a["id"]
        if a["cases"] != b["cases"]:
            rows.append((tag, f"{a['cases']} cases → {b['cases']}"))
            continue
        if a["outcomes"] != b["outcomes"]:
            rows.append((f"{tag} outcomes", f"{a['outcomes']} → {b['outcomes']}"))
        old_env = {r["result"]: r for r in a["envelope"]}
        new_env = {r["result"]: r for r in b["envelope"]}
        for key in sorted(set(old_env) | set(new_env)):
            ra, rb = old_env.get(key), new_env.get(key)
            if ra is None or rb is None:
                rows.append((f"{tag} {key}", "only in " + ("the re-run" if ra is None else
                                                            "the package")))
                continue
            for end in ("max", "min"):
                x, y = ra[end], rb[end]
                if ra[f"case of {end}"] != rb[f"case of {end}"]:
                    rows.append((f"{tag} {key} {end}", f"case {ra[f'case of {end}']} → "
                                                       f"{rb[f'case of {end}']}"))
                elif isinstance(x, float) and isinstance(y, float):
                    scale = max(abs(x), abs(y), 1e-300)
                    if abs(x - y) > tolerance * scale:
                        rows.append((f"{tag} {key} {end}", f"moved {x:.6g} → {y:.6g} "
                                                           f"({(y - x) / scale:+.2e} relative)"))
                elif x != y:
                    rows.append((f"{tag} {key} {end}", f"{x} → {y}"))
    return rows


def _environment_rows(old: dict, new: dict) -> list[tuple[str, str]]:
    rows = []
    for key in ("python", "implementation", "platform", "machine"):
        if old.get(key) != new.get(key):
            rows.append((key, f"{old.get(key)} → {new.get(key)}"))
    a, b = old.get("packages", {}), new.get("packages", {})
    for name in sorted(set(a) | set(b)):
        if a.get(name) != b.get(name):
            rows.append((name, f"{a.get(name, 'absent')} → {b.get(name, 'absent')}"))
    return rows


def signature_rows(package, trust=None, require=()) -> tuple[tuple, bool]:
    """(rows, holds) for the package's signatures: each signature's signer, role, time and
    outcome against the trusted keys, problems with the signatures' own list, and each
    required role; without ``trust`` the signatures are listed unchecked."""
    from ..errors import SignatureError
    from .signing import ROLES, verify_signatures
    bad_roles = [r for r in require if r not in ROLES]
    if bad_roles:
        raise SignatureError(f"--require names {bad_roles[0]!r}; the roles are "
                             f"{', '.join(ROLES)}", what="require")
    findings, problems = verify_signatures(package, trust)
    rows = []
    for f in findings:
        outcome = f.outcome if trust is not None else "not checked (give --trust KEYS)"
        rows.append((f.file, f"{f.signer}, {f.role}, {f.signed_at}, key {f.fingerprint[:16]}: "
                             f"{outcome}"))
    rows += [(p.split(":")[0], p.split(":", 1)[1].strip()) for p in problems]
    holds = not problems and (trust is None or all(f.valid for f in findings))
    for role in require:
        have = [f for f in findings if f.role == role and f.valid and trust is not None]
        rows.append((f"required: {role}", "signed (valid, trusted)" if have else
                     "MISSING: no valid signature by a trusted key in this role"))
        holds &= bool(have)
    if not rows and trust is not None:
        rows.append(("signatures", "none"))
    return tuple(rows), holds


def audit_package(package, *, rerun: bool = False, notebook=None,
                  tolerance: float = RERUN_TOLERANCE, trust=None,
                  require=()) -> PackageAudit:
    """Check the manifest, the signatures (against ``trust``; each role in ``require`` must
    have a valid trusted one), show the record's status, and (``rerun``) reproduce the
    results. A record whose package fails its manifest never shows its status as holding."""
    from .package import cases_records, environment_info, results_records  # as the package
    package = Path(package)
    manifest = audit_manifest(package)
    rows = tuple(manifest.rows())
    sig_rows, signed = signature_rows(package, trust, tuple(require))
    with tempfile.TemporaryDirectory() as tmp:
        folder = _unpacked(package, Path(tmp))
        record = json.loads((folder / "record.json").read_text()) \
            if (folder / "record.json").is_file() else {}
        results = json.loads((folder / "results.json").read_text()) \
            if (folder / "results.json").is_file() else []
        cases = json.loads((folder / "cases.json").read_text()) \
            if (folder / "cases.json").is_file() else []
        # a failed check stops a load-case run; a case that could not be evaluated is
        # recorded as failed (on_error="record") and leaves the package unverified
        verified = (bool(results or cases) and all(r["verification"]["passed"] for r in results)
                    and all(not c.get("failed") for c in cases))
        status = (("calc number", record.get("calc_number", "?")),
                  ("revision", record.get("revision", "?")),
                  ("title", record.get("title", "?")),
                  ("prepared by", record.get("preparer", "") or "—"),
                  ("checked by", record.get("checker", "") or "—"),
                  ("verified", ("yes" if verified else "NO") if manifest.intact else
                   "CANNOT BE RELIED ON: the package does not match its manifest"))
        if not rerun:
            return PackageAudit(rows, status, signature_rows=sig_rows,
                                holds=manifest.intact and verified and signed)
        if not manifest.intact:
            return PackageAudit(rows, status, signature_rows=sig_rows, holds=False, notes=(
                "re-run refused: the package does not match its manifest, so its notebook is "
                "not executed",))
        if notebook is None:
            candidates = [p for p in folder.glob("*.ipynb") if p.name != MANIFEST_NAME]
            notebook = candidates[0]
        from .notebook_io import execute_notebook
        calc = execute_notebook(notebook)
        new_results = results_records(calc.derivations)
        moved = tuple(_compare(results, new_results, tolerance)
                      + _compare_cases(cases, cases_records(calc.cases), tolerance))
        env_old = json.loads((folder / "environment.json").read_text())
        env_rows = tuple(_environment_rows(env_old, environment_info(env_old.get("created", ""))))
        errors = tuple((f"code cell {f.cell}", f.what) for f in calc.failures)
        rerun_rows = errors + moved or (("results", f"reproduced within {tolerance:g} "
                                                    "(relative)"),)
        return PackageAudit(rows, status, rerun_rows, env_rows, sig_rows,
                            holds=manifest.intact and verified and signed and not moved
                            and not errors)
