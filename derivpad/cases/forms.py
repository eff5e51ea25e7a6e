"""The forms of a load-case run in each process: its DerivationFamily made once, each form's
reference results (the shape every case of the form shares), and one case through the
one-case route as a table row. Workers of any scheduler call these for every chunk."""

from __future__ import annotations

import math
import weakref

import numpy as np

from ..core.checking.results import engineering_results
from ..core.family import DerivationFamily

__all__ = ["FAMILIES", "FORMS", "family_for", "one_case", "reference_results", "row_of_results",
           "verify_forms", "warm"]

FORMS = ("underdamped", "overdamped")


FAMILIES: dict = {}  # per process: the family of each problem, derived once


def family_for(spec: dict) -> DerivationFamily:
    """The problem's DerivationFamily, made once per process (a worker reuses it for every
    chunk of the same problem)."""
    key = repr(sorted(spec.items(), key=lambda kv: kv[0]))
    if key not in FAMILIES:
        if len(FAMILIES) > 8:
            FAMILIES.clear()
        args = dict(spec)
        FAMILIES[key] = DerivationFamily(args.pop("equation"), args.pop("ics"),
                                          args.pop("params"), **args)
    return FAMILIES[key]


REFERENCES = weakref.WeakKeyDictionary()  # family → {form: one case's results (its shape)}


def reference_results(family, form: str, case):
    """One case's results in ``form`` (through the one-case route), kept per family: the
    shape every case of the form shares; None where that case is not evaluated in the form."""
    known = REFERENCES.setdefault(family, {})
    if form not in known:
        got_form, numbers, _ = family.numbers_at(dict(zip(family.vary, map(float, case))))
        known[form] = (engineering_results(family.problem, numbers, None)
                       if got_form == form else None)
    return known[form]


def one_case(family, values: dict):
    """(form, results) of one case: through its form's closed form, or derived with its
    numbers (every check run) where no symbolic form covers it."""
    form, got, _ = family.numbers_at(values)
    if form is None:
        return "derived with its numbers", got.derivation.results
    return form, engineering_results(family.problem, got, None)


def row_of_results(results, judgements) -> tuple[dict, str]:
    """One case's results as {key: number in its display unit} (inf unbounded, NaN where a
    result does not apply, the reasons gathered in the note), with each criterion judged."""
    row, why = {}, []
    for key, r in results.items():
        m = r.magnitude
        if isinstance(m, (tuple, list, str)):
            continue
        if m is None:
            row[key] = (math.nan, r.unit)
            why.append(f"{key}: {r.reason}")
        else:
            row[key] = (float(m), r.unit)
            if math.isinf(float(m)):
                why.append(f"{key}: {r.reason or r.note}")
    for j in judgements:
        text = j.criterion.text
        row[f"{text}: utilisation"] = (j.utilisation if j.utilisation is not None
                                       else math.nan, "")
        row[f"{text}: outcome"] = (j.outcome, "")
    return row, "; ".join(why)


def verify_forms(family, table, forms, coded=None) -> list:
    """The forms the cases took, each form derived in symbols checked in full (for .forms)
    at its first case."""
    if coded is None:
        kinds = list(dict.fromkeys(forms))
        first = {f: forms.index(f) for f in kinds}
    else:
        names, codes = coded
        kinds = [n for i, n in enumerate(names) if (codes == i).any()]
        first = {n: int(np.argmax(codes == i)) for i, n in enumerate(names) if n in kinds}
    for form in kinds:
        if form in FORMS and form not in family.verified:
            family.numbers_at(table.case(first[form]))
    return kinds


WARM_CASES = 400


def warm(spec: dict, values) -> None:
    """A worker's first task: the forms its cases will need derived and checked (as a
    chunk's first cases would), while the calling process derives them too."""
    family = family_for(spec)
    columns = family.si_columns(np.asarray(values, dtype=float))
    if columns is None:
        return
    forms = family.forms_of(columns)
    for form in FORMS:
        idx = np.nonzero(forms == form)[0]
        if idx.size:
            reference_results(family, form, np.asarray(values, dtype=float)[idx[0]])
