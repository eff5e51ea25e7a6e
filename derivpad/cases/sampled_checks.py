"""The checks of a load-case run at scale: a seeded random sample of the cases (at least 1 %
and at least 20) and every governing case integrated independently of the derivation, each
form's cases together (core/checking/batch_integration.py) and a case that route cannot take
on its own with every independent check; and some of them found again one case at a time and
compared with their rows of the table. Any disagreement stops the run, naming the case."""

from __future__ import annotations

import math
import random

import numpy as np

from ..core.checking.batch_integration import integrate_cases
from ..core.checking.numeric_checks import NUMERIC_TOLERANCES, independent_checks
from ..core.checking.results import engineering_results
from ..core.checking.window import window_end
from ..errors import VerificationFailedError
from .forms import FORMS, family_for, row_of_results

__all__ = ["SAMPLE_FRACTION", "SAMPLE_MINIMUM", "sample_errors", "sampled_checks",
           "seeded_sample"]

SAMPLE_FRACTION = 0.01


SAMPLE_MINIMUM = 20


def same_as_one_case(case, found, again: dict) -> None:
    """A case's table row against its results found again through the one-case route (the
    table's rows are mostly found over arrays of cases); any difference stops the run."""
    for key, (value, _) in again.items():
        if key not in found.index:
            continue
        a, b = float(found[key]), float(value)
        same = (math.isnan(a) and math.isnan(b)) or a == b or (
            math.isfinite(a) and math.isfinite(b) and abs(a - b) <= 1e-8 * max(abs(a), abs(b))
            + 1e-14)
        if not same:
            msg = (f"case {case}: {key} is {a!r} in the table but {b!r} found for the case on "
                   "its own; the load-case results are not verified")
            raise VerificationFailedError(msg)


def seeded_sample(n: int, seed: int) -> list[int]:
    size = min(n, max(SAMPLE_MINIMUM, math.ceil(SAMPLE_FRACTION * n)))
    return sorted(random.Random(seed).sample(range(n), size))


def sampled_checks(spec, table, forms, evaluated, kinds, envelope, seed, scheduler,
                        row_of):
    """The independent integration of a seeded random sample and of the governing cases
    against their closed forms (on the scheduler where there is one), and some of them found
    again one case at a time and compared with the table; returns what was checked, in
    words, and raises on any disagreement."""
    family = family_for(spec)
    sample = [int(evaluated[k]) for k in seeded_sample(len(evaluated), seed)]
    where = [table.position(c) for c in envelope["case of max"].tolist()
             + envelope["case of min"].tolist()]
    tops = {i for i in where if i is not None and forms[i] != "failed"}
    chosen = sorted(set(sample) | tops)
    groups = [chosen[k::SAMPLE_TASKS] for k in range(SAMPLE_TASKS)] if \
        scheduler.scheduler is not None else [chosen]
    found = scheduler.compute([(sample_errors, (spec, [table.ids[i] for i in g], table.values[g],
                                                [forms[i] for i in g])) for g in groups if g])
    errors = np.concatenate(found) if found else np.zeros(0)
    worst = float(np.max(errors[np.isfinite(errors)], initial=0.0))
    again = sorted(set(random.Random(seed).sample(sample, min(SAMPLE_MINIMUM, len(sample))))
                   | tops)
    for i in again:
        form, numbers, _ = family.numbers_at(table.case(i))
        if form is not None:
            same_as_one_case(table.ids[i], row_of(i),
                              row_of_results(engineering_results(family.problem, numbers, None), ())[0])
    kinds = sorted(kinds)
    return (f"{len(kinds)} form(s): {', '.join(kinds)}; each form derived in symbols was "
            "checked in full (back-substitution, initial and jump conditions, numerical "
            "integration and inversion, limit theorems) at the first case it served",
            f"every case's values checked against its form's conditions ({len(table)} cases)",
            f"an independent numerical integration of {len(chosen)} cases (a seeded random "
            f"sample, seed {seed}, at least {SAMPLE_FRACTION:.0%} and at least "
            f"{SAMPLE_MINIMUM}, and every governing case): each form's cases integrated "
            "together (SciPy solve_ivp, DOP853, each case restarted at its own switches), a "
            "case that route cannot take on its own with numerical inversion and the limit "
            f"theorems too; largest integration error {worst:.2e} of the peak",
            f"{len(again)} of these cases' results found again one case at a time and "
            "compared with the table (evaluated over arrays of cases)")


SAMPLE_TASKS = 8  # groups the sampled cases are integrated in, on a scheduler


def sample_errors(spec: dict, ids, values: np.ndarray, forms) -> np.ndarray:
    """Each case's integration error relative to its peak (NaN: derived with its numbers,
    every check run then): each form's cases integrated together (:func:`integrate_cases`),
    a case that route cannot take checked on its own; a disagreement stops the run naming
    the case. A pure function of its arguments (any worker can run it)."""
    family = family_for(spec)
    tol = {**NUMERIC_TOLERANCES, **(spec["tolerances"] or {})}
    out = np.full(len(ids), math.nan)
    forms = np.asarray(forms, dtype=object)
    alone = [k for k in range(len(ids)) if forms[k] not in FORMS]
    for form in FORMS:
        idx = np.nonzero(forms == form)[0]
        if not idx.size:
            continue
        if family.compiled(form) is None:  # a worker that has not met the form yet
            family.numbers_at(dict(zip(family.vary, map(float, values[idx[0]]))))
        columns = family.si_columns(values[idx])
        got = None if columns is None else integrate_cases(
            family.problem, family.compiled(form), columns)
        if got is None:
            alone += idx.tolist()
            continue
        rel, ran = got
        bad = np.nonzero(ran & ~(rel <= tol["integration"]))[0]
        if bad.size:
            msg = (f"case {ids[idx[bad[0]]]}: the numerical integration disagrees with the "
                   f"closed form (relative error {rel[bad[0]]:.3e} > {tol['integration']:g}); "
                   "the load-case results are not verified")
            raise VerificationFailedError(msg)
        out[idx[ran]] = rel[ran]
        alone += idx[~ran].tolist()
    for k in alone:
        out[k] = checked_alone(family, ids[k], dict(zip(family.vary, map(float, values[k]))),
                                tol)
    return out


def checked_alone(family, case, values: dict, tol: dict) -> float:
    """One case's independent checks (integration, inversion, limit theorems) on its own; the
    integration error relative to the peak (NaN for a case derived with its numbers, which
    ran every check when it was derived)."""
    form, numbers, _ = family.numbers_at(values)
    if form is None:
        return math.nan
    end = window_end(numbers.every_pole, list(numbers.breakpoints), family._args["window"])
    checks, _ = independent_checks(numbers, tol, end)
    worst = 0.0
    for c in checks:
        if c.applicable and c.ran and not c.passed:
            msg = (f"case {case}: {c.name} disagrees with the closed form "
                   f"({c.detail or c.status}); the load-case results are not verified")
            raise VerificationFailedError(msg)
        if c.name == "Numerical integration" and c.ran:
            worst = max(worst, float(c.error))
    return worst
