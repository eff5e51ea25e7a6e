"""Check, Samples and Verification: what each check found, and the arrays a figure draws.

Plain value objects; the checks themselves live in core/own_check.py (the engine's own
back-substitution) and core/numeric_checks.py (the independent ones).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Check", "Samples", "Verification"]


@dataclass(frozen=True, slots=True)
class Check:
    """One check: what was checked, how, the tolerance, the measured error, and the outcome.

    ``ran`` is False when the check could not run (say so in ``detail``; it does not count as
    passed); ``applicable`` is False when the check's theorem does not apply to this problem
    (``detail`` says why; it counts neither way).
    """

    name: str
    method: str
    tolerance: float
    error: float
    passed: bool
    ran: bool = True
    detail: str = ""
    applicable: bool = True

    @property
    def status(self) -> str:
        if not self.applicable:
            return "not applicable"
        if not self.ran:
            return "not run"
        return "passed" if self.passed else "FAILED"

    def to_dict(self) -> dict:
        """JSON-safe: a check with no measured error (not run, not applicable) has null."""
        return {"name": self.name, "method": self.method, "tolerance": _finite(self.tolerance),
                "error": _finite(self.error), "passed": self.passed, "ran": self.ran,
                "applicable": self.applicable, "status": self.status, "detail": self.detail}


def _finite(x):
    return x if isinstance(x, (int, float)) and math.isfinite(x) else None


@dataclass(frozen=True, slots=True, eq=False)
class Samples:
    """Sampled arrays a verification figure needs: each unknown's closed form against the
    numerical integration, and each equation's forcing, on one grid of times."""

    times: "object"          # numpy array of t
    closed_form: dict        # unknown → x(t) from the derivation
    integrated: dict         # unknown → x(t) from the integrator
    forcing: dict            # equation label ("f", or "f1", "f2", ...) → f_i(t)
    breakpoints: tuple[float, ...]

    def difference(self, name: str):
        """|closed form - integration| of one unknown at each sample time."""
        return abs(self.closed_form[name] - self.integrated[name])


@dataclass(frozen=True, slots=True, eq=False)
class Verification:
    """All checks of one derivation; ``passed`` only when every applicable check ran and passed."""

    checks: tuple[Check, ...]
    samples: Samples | None = None

    @property
    def passed(self) -> bool:
        return bool(self.checks) and all(c.status in ("passed", "not applicable")
                                         for c in self.checks)

    @property
    def failed(self) -> tuple[Check, ...]:
        """Checks that ran and failed, or could not run."""
        return tuple(c for c in self.checks if c.status in ("FAILED", "not run"))

    def to_dict(self) -> dict:
        return {"passed": self.passed, "checks": [c.to_dict() for c in self.checks]}
