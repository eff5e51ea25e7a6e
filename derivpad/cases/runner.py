"""Where a load-case run's pure tasks run: in this process, on a pool of local worker
processes (Dask's process scheduler, one pool for the whole run), or on a Dask cluster."""

from __future__ import annotations

from ..errors import ParameterError, WorkerError
from .forms import warm

__all__ = ["Runner", "checked_workers"]

def checked_workers(workers, scheduler) -> int | None:
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


class Runner:
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
