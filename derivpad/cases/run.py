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
import random
import weakref
from pathlib import Path

import numpy as np

from ..core.checking.acceptance import judge, judge_columns, read_criteria
from ..core.checking.batch_integration import integrate_cases
from ..core.checking.batch_results import batch_engineering_results
from ..core.checking.numeric_checks import NUMERIC_TOLERANCES, independent_checks
from ..core.checking.results import engineering_results, writer_for
from ..core.checking.window import window_end
from ..core.family import DerivationFamily
from ..core.reading.read_problem import make_problem
from ..errors import DerivpadError, ParameterError, VerificationFailedError, WorkerError
from .chunk import Chunk, ChunkBuilder, ChunkSummary, joined
from .results import CaseResults, envelope_of
from .store import ChunkStore, StoredTable, publish, write_stored_table
from .table import pandas, read_cases

__all__ = ["load_cases"]

SAMPLE_FRACTION = 0.01
SAMPLE_MINIMUM = 20
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
    runner = _Runner(scheduler, _workers(workers, scheduler))
    try:
        runner.warm(spec, table.values[:_WARM_CASES])  # workers derive while this process does
        family = _family(spec)
        found = _evaluate(spec, family, table, judged, on_error, progress, runner, chunks)
        if store is None:
            return _results(spec, family, table, found, seed, runner)
        result = _stored_results(spec, family, table, found, seed, runner, chunks)
    finally:
        runner.close()
    # the whole run published, each file by a rename
    publish(Path(store) / "envelope.csv", lambda p: result.envelope.to_csv(p, index=False))
    return result


def _results(spec, family, table, found: Chunk, seed: int, runner) -> CaseResults:
    """The CaseResults of the evaluated cases held in memory: the table, its envelope and
    what was checked (the forms, the sampled integration)."""
    forms = found.forms
    kinds = _verify_forms(family, table, forms)
    frame = _frame(table, found)
    units_of = _units_of(table, found.units)
    envelope = envelope_of(frame, units_of, table.ids, table.names)
    evaluated = np.nonzero(np.array([f != "failed" for f in forms], dtype=bool))[0]
    checked = _integration_sample(spec, table, forms, evaluated, kinds, envelope, seed, runner,
                                  lambda i: frame.iloc[i])
    used = tuple((f, d) for f, d in family.verified.items() if f in kinds)
    return CaseResults(frame, envelope, used, units_of, checked, table.names)


def _stored_results(spec, family, table, summaries, seed, runner, chunks) -> CaseResults:
    """The CaseResults of a run whose rows are in its store: the envelope from the chunks'
    summaries, ``cases.parquet`` written from the chunk files one at a time, the table read
    from it only when used; memory bounded by a chunk, not by the number of cases."""
    store = ChunkStore(*chunks)
    names = tuple(dict.fromkeys(f for s in summaries for f in s.form_names))
    code = {f: i for i, f in enumerate(names)}
    codes = np.concatenate([np.array([code[f] for f in s.form_names], dtype=np.int16)[s.forms]
                            for s in summaries])
    forms = _Forms(codes, names)
    kinds = _verify_forms(family, table, forms, (names, codes))
    keys = tuple(dict.fromkeys(k for s in summaries for k in s.keys))
    units_of = _units_of(table, {k: u for s in summaries for k, u in s.units.items()})
    envelope = _envelope_of_chunks(summaries, keys, units_of, table)
    path = write_stored_table(store.folder / "cases.parquet", store, summaries, table, keys,
                              units_of)
    rows = _StoredRows(store, summaries, table)
    evaluated = np.flatnonzero(codes != code.get("failed", -1)).astype(np.int32 if len(codes)
                                                                        < 2 ** 31 else np.int64)
    checked = _integration_sample(spec, table, forms, evaluated, kinds, envelope, seed, runner,
                                  rows.row)
    used = tuple((f, d) for f, d in family.verified.items() if f in kinds)
    return CaseResults(StoredTable(path, len(table)), envelope, used, units_of, checked,
                       table.names)


class _Forms:
    """Each case's form as a small code, read as its name (``forms[i]``)."""

    def __init__(self, codes, names):
        self.codes, self.names = codes, names

    def __getitem__(self, i):
        return self.names[self.codes[i]]

    def __len__(self) -> int:
        return len(self.codes)


class _StoredRows:
    """Rows of a stored run read back from their chunk files (the last file kept)."""

    def __init__(self, store, summaries, table):
        self.store, self.summaries, self.table = store, summaries, table
        self.starts = np.cumsum([0] + [s.size for s in summaries])
        self._open = (None, None)

    def row(self, i: int):
        """Case ``i``'s results as a pandas Series (key → value)."""
        k = int(np.searchsorted(self.starts, i, side="right")) - 1
        s = self.summaries[k]
        if self._open[0] != s.key:
            import pyarrow.parquet as pq
            self._open = (s.key, pq.read_table(self.store.chunks / f"{s.key}.parquet"))
        part = self._open[1]
        j = i - int(self.starts[k])
        pd = pandas()
        return pd.Series({c[2:]: part.column(c)[j].as_py() for c in part.column_names
                          if c.startswith("r:")})


def _verify_forms(family, table, forms, coded=None) -> list:
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
        if form in _FORMS and form not in family.verified:
            family.numbers_at(table.case(first[form]))
    return kinds


def _units_of(table, found: dict) -> dict:
    units = dict(zip(table.names, table.units))
    for key, unit in found.items():
        units.setdefault(key, unit)
    return units


def _envelope_of_chunks(summaries, keys, units: dict, table):
    """The envelope (as :func:`envelope_of`) from the chunks' extremes: the largest value the
    first case that has it, as over the whole table."""
    pd = pandas()
    rows = []
    starts = np.cumsum([0] + [s.size for s in summaries])
    for key in keys:
        if key.endswith(": outcome"):
            continue
        best = None
        for start, s in zip(starts, summaries):
            e = s.extremes.get(key)
            if e is None:
                continue
            hi, at_hi, lo, at_lo, count = e
            if best is None:
                best = [hi, start + at_hi, lo, start + at_lo, count]
                continue
            if hi > best[0]:
                best[0], best[1] = hi, start + at_hi
            if lo < best[2]:
                best[2], best[3] = lo, start + at_lo
            best[4] += count
        if best is not None:
            rows.append({"result": key, "unit": units.get(key, ""), "max": best[0],
                         "case of max": table.ids[int(best[1])], "min": best[2],
                         "case of min": table.ids[int(best[3])], "cases with a value": best[4]})
    return pd.DataFrame(rows, columns=["result", "unit", "max", "case of max", "min",
                                       "case of min", "cases with a value"])


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
_FORMS = ("underdamped", "overdamped")
_FAMILIES: dict = {}  # per process: the family of each problem, derived once


def _family(spec: dict) -> DerivationFamily:
    """The problem's DerivationFamily, made once per process (a worker reuses it for every
    chunk of the same problem)."""
    key = repr(sorted(spec.items(), key=lambda kv: kv[0]))
    if key not in _FAMILIES:
        if len(_FAMILIES) > 8:
            _FAMILIES.clear()
        args = dict(spec)
        _FAMILIES[key] = DerivationFamily(args.pop("equation"), args.pop("ics"),
                                          args.pop("params"), **args)
    return _FAMILIES[key]


def evaluate_chunk(spec: dict, ids, values, failed: dict, criteria, on_error: str) -> Chunk:
    """A chunk of cases, by column (:class:`Chunk`). A pure function of its arguments, so that
    any worker can run any chunk; the family is derived once per process. The cases of each
    form are evaluated together over arrays (:func:`batched`); a case that route leaves, on its
    own through its form's closed form or derived with its numbers."""
    family = _family(spec)
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
            form, results = _case(family, dict(zip(names, (float(v) for v in values[i]))))
        except DerivpadError as exc:
            why = f"case {case}: {exc}"
            if on_error == "raise":
                exc.args = (why,)
                exc.case = case
                raise
            out.row(i, {}, why, "failed")
            continue
        row, note = _row(results, judge(criteria, results))
        out.row(i, row, note, form)
    return out.finish()


_REFERENCES = weakref.WeakKeyDictionary()  # family → {form: one case's results (its shape)}


def batched(family, values: np.ndarray, criteria):
    """The cases evaluated over arrays, form by form
    (:func:`derivpad.core.checking.batch_results.batch_engineering_results`): for each form,
    (indices into ``values``, {key: values}, {key: unit}, notes, form); the cases left out
    take the one-case route."""
    columns = family.si_columns(values)
    if columns is None or len(values) < 2:
        return
    forms = family.forms_of(columns)
    for form in _FORMS:
        idx = np.nonzero(forms == form)[0]
        if not idx.size:
            continue
        reference = _reference(family, form, values[idx[0]])
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


def _reference(family, form: str, case):
    """One case's results in ``form`` (through the one-case route), kept per family: the
    shape every case of the form shares; None where that case is not evaluated in the form."""
    known = _REFERENCES.setdefault(family, {})
    if form not in known:
        got_form, numbers, _ = family.numbers_at(dict(zip(family.vary, map(float, case))))
        known[form] = (engineering_results(family.problem, numbers, None)
                       if got_form == form else None)
    return known[form]


def _batch_notes(reference, got, keys, keep) -> list:
    """Each kept case's note as :func:`_row` writes it: each figure without a value, with the
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


def _workers(workers, scheduler) -> int | None:
    """``workers=`` checked: a whole number of processes, for the local process pool."""
    if workers is None:
        return None
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        raise ParameterError(f"workers= must be a whole number of processes (1 or more), not "
                             f"{workers!r}", "workers")
    if scheduler not in (None, "processes"):
        raise ParameterError("workers= sets the local process pool; a Dask cluster "
                             f"({scheduler!r}) has its own workers: give one or the other",
                             "workers")
    return workers


_WARM_CASES = 400


def warm(spec: dict, values) -> None:
    """A worker's first task: the forms its cases will need derived and checked (as a
    chunk's first cases would), while the calling process derives them too."""
    family = _family(spec)
    columns = family.si_columns(np.asarray(values, dtype=float))
    if columns is None:
        return
    forms = family.forms_of(columns)
    for form in _FORMS:
        idx = np.nonzero(forms == form)[0]
        if idx.size:
            _reference(family, form, np.asarray(values, dtype=float)[idx[0]])


class _Runner:
    """Where pure tasks run: here (``scheduler=None``), on all local cores through Dask's
    process scheduler ("processes", one pool of worker processes for the whole run, so that
    each worker derives the forms once), or on a Dask cluster (an address or a
    ``distributed.Client``)."""

    def __init__(self, scheduler, workers: int | None = None):
        if workers is not None and scheduler is None:
            scheduler = "processes"
        self.scheduler = scheduler
        self._client = self._pool = None
        if scheduler is None:
            return
        from ..errors import import_extra
        (self._dask,) = import_extra(("dask",), "load cases on Dask", "scale")
        if scheduler == "processes":
            import multiprocessing
            from concurrent.futures import ProcessPoolExecutor
            import os
            self._count = workers or os.cpu_count() or 1
            self._pool = ProcessPoolExecutor(max_workers=self._count,
                                             mp_context=multiprocessing.get_context("spawn"))
        elif isinstance(scheduler, str):
            (distributed,) = import_extra(("distributed",), "a Dask cluster", "scale")
            self._client = distributed.Client(scheduler)

    def warm(self, spec: dict, values) -> None:
        """Start each local worker process on :func:`warm` (nothing elsewhere: a cluster's
        workers derive the forms with their first chunk)."""
        if self._pool is not None:
            for _ in range(self._count):
                self._pool.submit(warm, spec, values)

    def compute(self, tasks) -> list:
        """The results of ``tasks`` ((function, arguments) pairs), in order."""
        if self.scheduler is None:
            return [fn(*args) for fn, args in tasks]
        dask = self._dask
        jobs = [dask.delayed(fn, pure=True)(*args) for fn, args in tasks]
        if self._pool is not None:
            from concurrent.futures.process import BrokenProcessPool
            try:
                return list(dask.compute(*jobs, scheduler="processes", pool=self._pool))
            except BrokenProcessPool as exc:
                msg = ("a worker process stopped before its chunk of cases was done. In a "
                       "script, put the call to load_cases (or whatever starts it) under "
                       "'if __name__ == \"__main__\":' — each worker process starts by "
                       "importing the script; otherwise memory may have run out: use fewer "
                       "workers, or store= so that a new run resumes from the finished chunks")
                raise WorkerError(msg, self.scheduler) from exc
        return list(dask.compute(*jobs, scheduler=self._client or self.scheduler))

    def close(self) -> None:
        """Shut the pool of worker processes, or the client this runner opened."""
        if self._pool is not None:
            self._pool.shutdown()
        if self._client is not None:
            self._client.close()


def _case(family, values: dict):
    """(form, results) of one case: through its form's closed form, or derived with its
    numbers (every check run) where no symbolic form covers it."""
    form, got, _ = family.numbers_at(values)
    if form is None:
        return "derived with its numbers", got.derivation.results
    return form, engineering_results(family.problem, got, None)


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


def _row(results, judgements) -> tuple[dict, str]:
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


def _same_as_one_case(case, found, again: dict) -> None:
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


def _sample(n: int, seed: int) -> list[int]:
    size = min(n, max(SAMPLE_MINIMUM, math.ceil(SAMPLE_FRACTION * n)))
    return sorted(random.Random(seed).sample(range(n), size))


def _integration_sample(spec, table, forms, evaluated, kinds, envelope, seed, scheduler,
                        row_of):
    """The independent integration of a seeded random sample and of the governing cases
    against their closed forms (on the scheduler where there is one), and some of them found
    again one case at a time and compared with the table; returns what was checked, in
    words, and raises on any disagreement."""
    family = _family(spec)
    sample = [int(evaluated[k]) for k in _sample(len(evaluated), seed)]
    where = [table.position(c) for c in envelope["case of max"].tolist()
             + envelope["case of min"].tolist()]
    tops = {i for i in where if i is not None and forms[i] != "failed"}
    chosen = sorted(set(sample) | tops)
    groups = [chosen[k::_SAMPLE_TASKS] for k in range(_SAMPLE_TASKS)] if \
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
            _same_as_one_case(table.ids[i], row_of(i),
                              _row(engineering_results(family.problem, numbers, None), ())[0])
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


_SAMPLE_TASKS = 8  # groups the sampled cases are integrated in, on a scheduler


def sample_errors(spec: dict, ids, values: np.ndarray, forms) -> np.ndarray:
    """Each case's integration error relative to its peak (NaN: derived with its numbers,
    every check run then): each form's cases integrated together (:func:`integrate_cases`),
    a case that route cannot take checked on its own; a disagreement stops the run naming
    the case. A pure function of its arguments (any worker can run it)."""
    family = _family(spec)
    tol = {**NUMERIC_TOLERANCES, **(spec["tolerances"] or {})}
    out = np.full(len(ids), math.nan)
    forms = np.asarray(forms, dtype=object)
    alone = [k for k in range(len(ids)) if forms[k] not in _FORMS]
    for form in _FORMS:
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
        out[k] = _checked_alone(family, ids[k], dict(zip(family.vary, map(float, values[k]))),
                                tol)
    return out


def _checked_alone(family, case, values: dict, tol: dict) -> float:
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
