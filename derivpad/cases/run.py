"""Load cases: one derivation per form, evaluated for every case of a table.

The problem is derived once in symbols for the parameters the table varies (the explorer's
``DerivationFamily``), once per form the cases fall into (underdamped, overdamped, …); each
form is checked in full at the first case it serves. Every case is then evaluated through that
form's compiled closed form with its own numbers: its membership in the form's conditions is
checked, and its engineering results are found as for a single derivation (suprema over the
whole response, not grid maxima). A case that no symbolic form covers (exactly critical
damping) is derived with its numbers, with every check. An independent time-domain integration
of a seeded random sample of the cases (at least 1 % and at least 20) and of every governing
case is compared with the closed form; any disagreement stops the run, naming the case.
"""

from __future__ import annotations

import hashlib
import math
from pathlib import Path

import numpy as np

from ..core.checking.acceptance import judge, judge_columns, read_criteria
from ..core.checking.batch_results import batch_engineering_results
from ..core.checking.results import writer_for
from ..core.reading.read_problem import make_problem
from ..errors import DerivpadError, ParameterError
from .chunk import Chunk, ChunkBuilder, ChunkSummary, joined
from .forms import FAMILIES, FORMS, family_for, one_case, reference_results, row_of_results
from .forms import WARM_CASES, verify_forms
from .results import CaseResults, envelope_of
from .runner import Runner, checked_workers
from .sampled_checks import sampled_checks
from .store import ChunkStore, publish
from .stored import stored_results, units_of
from .table import pandas, read_cases

__all__ = ["load_cases"]

_FAMILIES = FAMILIES  # the per-process families (tests clear it to start afresh)
PROGRESS_FROM = 500  # cases from which a run shows a progress bar (progress=None)


def load_cases(equation, ics=None, params=None, *, cases, criteria=None, units=None,
               unknown=None, derived=None, regime: str = "underdamped", tolerances=None,
               window=None, seed: int = 0, on_error: str = "raise", progress=None,
               scheduler=None, workers: int | None = None, store=None) -> CaseResults:
    """Evaluate a calc for every case of a table; the envelope and its governing cases.

    Parameters
    ----------
    equation, ics, params, units, unknown, derived, regime, tolerances, window
        As for :func:`derivpad.derive`; ``params`` holds the values the table does not vary.
    cases : pandas.DataFrame or path
        One row per case; a column per varied parameter, its header with the unit its values
        are in (``k [kN/m]``); an optional ``case`` column names the cases.
    criteria : list of str, optional
        Acceptance criteria judged for every case (``["peak <= 3 mm"]``).
    seed : int
        Seed of the random sample of cases checked by numerical integration.
    on_error : {"raise", "record"}
        A case that cannot be evaluated (a bad value, a value no derivation holds for) stops
        the run naming it ("raise"), or is kept as a row marked failed with the reason.
    progress : None, bool or callable
        None: a progress bar (tqdm) from 500 cases; True/False: always/never; a callable is
        called with (cases done, cases).
    workers : int, optional
        With ``scheduler="processes"`` (taken as that where no scheduler is given): how many
        worker processes (default: one per core).
    scheduler : None, "processes", str or distributed.Client
        Where the chunks of cases run: in this process (None); on all local cores through
        Dask's process scheduler ("processes"); on a Dask cluster, by its address
        ("tcp://host:8786") or a ``distributed.Client`` (the scale extra).
    store : path, optional
        A folder that keeps every finished chunk (Parquet, each written whole or not at all):
        a run that stops and is started again with the same folder computes only the chunks
        not yet done. The finished table is published there as ``cases.parquet`` and the
        envelope as ``envelope.csv``. On a cluster the workers must see the folder.

    Returns
    -------
    CaseResults

    Raises
    ------
    ParameterError, UnitError
        A bad table, a column that is no parameter of the problem, a bad criterion.
    VerificationFailedError
        A form's checks, or a sampled case's numerical integration, disagree with the closed
        form (the case is named).
    """
    table = read_cases(cases, on_error)
    judged = read_criteria(criteria)
    spec = _problem_spec(table, dict(equation=equation, ics=ics, params=params,
                                      unknown=unknown, units=units, regime=regime,
                                      tolerances=tolerances, window=window, derived=derived))
    chunks = None
    if store is not None:
        chunks = (str(store), _run_key(spec, judged, on_error))
        ChunkStore(*chunks)  # the folder made (or refused) before any work
    runner = Runner(scheduler, checked_workers(workers, scheduler))
    try:
        runner.warm(spec, table.values[:WARM_CASES])  # workers derive while this process does
        family = family_for(spec)
        found = _evaluate(spec, family, table, judged, on_error, progress, runner, chunks)
        if store is None:
            return _results(spec, family, table, found, seed, runner)
        result = stored_results(spec, family, table, found, seed, runner, chunks)
    finally:
        runner.close()
    # the whole run published, each file by a rename
    publish(Path(store) / "envelope.csv", lambda p: result.envelope.to_csv(p, index=False))
    return result


def _results(spec, family, table, found: Chunk, seed: int, runner) -> CaseResults:
    """The CaseResults of the evaluated cases held in memory: the table, its envelope and
    what was checked (the forms, the sampled integration)."""
    forms = found.forms
    kinds = verify_forms(family, table, forms)
    frame = _frame(table, found)
    units = units_of(table, found.units)
    envelope = envelope_of(frame, units, table.ids, table.names)
    evaluated = np.nonzero(np.array([f != "failed" for f in forms], dtype=bool))[0]
    checked = sampled_checks(spec, table, forms, evaluated, kinds, envelope, seed, runner,
                             lambda i: frame.iloc[i])
    used = tuple((f, d) for f, d in family.verified.items() if f in kinds)
    return CaseResults(frame, envelope, used, units, checked, table.names)


def _problem_spec(table, options: dict) -> dict:
    """The family's arguments: the table's columns checked against the problem's parameters,
    each varied parameter started at the first case that can be evaluated, in its column's
    unit."""
    names = make_problem(options["equation"], options["ics"], None, options["unknown"], None,
                         options["derived"]).symbols
    stray = [n for n in table.names if n not in names]
    if stray:
        msg = (f"column {stray[0]!r} of the case table is not a parameter of the problem "
               f"(its parameters: {', '.join(names) or 'none'})")
        raise ParameterError(msg, stray[0])
    good = [i for i in range(len(table)) if i not in table.failed]
    if not good:
        raise ParameterError("no case of the table can be evaluated: "
                             + next(iter(table.failed.values())), "cases")
    params = dict(options["params"] or {})
    units = dict(options["units"] or {})
    for j, (name, unit) in enumerate(zip(table.names, table.units)):
        if unit:
            units[name] = unit
        params[name] = f"{float(table.values[good[0]][j])!r} {unit}".strip()
    return {**options, "params": params, "units": units or None, "vary": table.names}


CHUNK = 4000  # cases per chunk at most: the unit of work of a worker


def evaluate_chunk(spec: dict, ids, values, failed: dict, criteria, on_error: str) -> Chunk:
    """A chunk of cases, by column (:class:`Chunk`). A pure function of its arguments, so that
    any worker can run any chunk; the family is derived once per process. The cases of each
    form are evaluated together over arrays (:func:`batched`); a case that route leaves, on its
    own through its form's closed form or derived with its numbers."""
    family = family_for(spec)
    names = spec["vary"]
    out = ChunkBuilder(len(ids))
    good = np.array([i for i in range(len(ids)) if i not in failed], dtype=int)
    done = np.zeros(len(ids), dtype=bool)
    if good.size:
        for idx, columns, units, notes, form in batched(family, np.asarray(values, float)[good],
                                                         criteria):
            out.rows(good[idx], columns, units, notes, form)
            done[good[idx]] = True
    for i, case in enumerate(ids):
        if i in failed:
            out.row(i, {}, failed[i], "failed")
            continue
        if done[i]:
            continue
        try:
            form, results = one_case(family, dict(zip(names, (float(v) for v in values[i]))))
        except DerivpadError as exc:
            why = f"case {case}: {exc}"
            if on_error == "raise":
                exc.args = (why,)
                exc.case = case
                raise
            out.row(i, {}, why, "failed")
            continue
        row, note = row_of_results(results, judge(criteria, results))
        out.row(i, row, note, form)
    return out.finish()


def batched(family, values: np.ndarray, criteria):
    """The cases evaluated over arrays, form by form
    (:func:`derivpad.core.checking.batch_results.batch_engineering_results`): for each form,
    (indices into ``values``, {key: values}, {key: unit}, notes, form); the cases left out
    take the one-case route."""
    columns = family.si_columns(values)
    if columns is None or len(values) < 2:
        return
    forms = family.forms_of(columns)
    for form in FORMS:
        idx = np.nonzero(forms == form)[0]
        if not idx.size:
            continue
        reference = reference_results(family, form, values[idx[0]])
        if reference is None:
            continue
        got = batch_engineering_results(family.problem, family.compiled(form),
                                        [c[idx] for c in columns], reference,
                                        lambda name: writer_for(family.problem, name))
        keep = np.nonzero(~got.redo)[0]
        keys = [k for k in reference if k in got.columns]
        out = {k: got.columns[k][keep] for k in keys}
        units = {k: got.units[k] for k in keys}
        for text, (use, outcome) in judge_columns(criteria, got.columns, reference).items():
            out[f"{text}: utilisation"] = use[keep]
            out[f"{text}: outcome"] = outcome[keep]
        yield idx[keep], out, units, _batch_notes(reference, got, keys, keep), form


def _batch_notes(reference, got, keys, keep) -> list:
    """Each kept case's note as :func:`row_of_results` writes it: each figure without a value, with the
    form's reason (a case with an unbounded or only approached value is never kept)."""
    parts = []
    for k in keys:
        absent = np.isnan(got.columns[k][keep])
        if absent.any():
            parts.append(np.where(absent, f"{k}: {reference[k].reason}", ""))
    if not parts:
        return [""] * len(keep)
    return ["; ".join(x for x in texts if x) for texts in zip(*parts)]


def run_chunk(spec: dict, ids, values, failed: dict, criteria, on_error: str, store=None):
    """A chunk through the store (``(folder, run key)``): loaded if it was finished before,
    else evaluated and kept, and only its :class:`ChunkSummary` returned (the rows stay in
    the store); without a store, evaluated and returned whole."""
    if store is None:
        return evaluate_chunk(spec, ids, values, failed, criteria, on_error)
    chunks = ChunkStore(*store)
    key = chunks.key(ids, values, failed)
    found = chunks.load(key)
    if found is None:
        found = evaluate_chunk(spec, ids, values, failed, criteria, on_error)
        chunks.save(key, found)
    return ChunkSummary.of(found, key)


def _run_key(spec: dict, criteria, on_error: str) -> str:
    """What a chunk's results depend on besides its rows, as a hash."""
    from importlib import metadata
    try:
        version = metadata.version("derivpad")
    except metadata.PackageNotFoundError:  # run from a checkout that is not installed
        version = "checkout"
    text = repr((sorted(spec.items(), key=lambda kv: kv[0]), [c.text for c in criteria],
                 on_error, version))
    return hashlib.sha256(text.encode()).hexdigest()


def _chunks(table):
    """The table in chunks of at most CHUNK cases, at least 16 chunks where the table allows
    (25 cases or more each), so that every core of a machine gets work."""
    size = min(CHUNK, max(25, math.ceil(len(table) / 16)))
    for start in range(0, len(table), size):
        stop = min(start + size, len(table))
        failed = {i - start: why for i, why in table.failed.items() if start <= i < stop}
        yield table.ids[start:stop], table.values[start:stop], failed


def _evaluate(spec, family, table, criteria, on_error, progress, scheduler, store) -> Chunk:
    """Every case, chunk by chunk: here (``scheduler=None``), or on Dask — "processes" for
    all local cores, a scheduler address or a ``distributed.Client`` for a cluster."""
    done: list = []
    tick = _progress(progress, len(table))
    count = lambda: sum(len(c) for c in done)  # noqa: E731
    if scheduler.scheduler is None:
        for ids, values, failed in _chunks(table):
            tick(count())
            done.append(run_chunk(spec, ids, values, failed, criteria, on_error, store))
        tick(count())
        return joined(done) if store is None else done
    tasks = [(run_chunk, (spec, ids, values, failed, criteria, on_error, store))
             for ids, values, failed in _chunks(table)]
    for chunk in scheduler.compute(tasks):
        done.append(chunk)
        tick(count())
    return joined(done) if store is None else done


def _progress(progress, total: int):
    """A callable ticked with the cases done: the caller's, a progress bar (tqdm, in the
    terminal and the notebook) for long runs, or nothing."""
    if callable(progress):
        return lambda done: progress(done, total)
    if progress is False or (progress is None and total < PROGRESS_FROM):
        return lambda done: None
    from ..errors import import_extra
    (auto,) = import_extra(("tqdm.auto",), "the progress bar", "cases")
    bar = auto.tqdm(total=total, unit="case", desc="load cases")
    shown = [0]

    def tick(done: int) -> None:
        if done - shown[0] >= 100 or done == total:
            bar.update(done - shown[0])
            shown[0] = done
            if done == total:
                bar.close()
    return tick


def _frame(table, found: Chunk):
    pd = pandas()
    data = {"case": list(table.ids)}
    for j, name in enumerate(table.names):
        data[name] = table.values[:, j]
    for key in found.keys:
        data[key] = found.columns[key]
    data["form"] = found.forms
    data["notes"] = found.notes
    return pd.DataFrame(data)
