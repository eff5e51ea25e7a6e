"""Benchmark a large load-case run kept in a store: time and peak memory, in one run.

Run:  python benchmarks/bench_cases_memory.py [--cases N] [--scheduler processes|none]

The demo isolator (m, k, c varied across critical damping, seeded) over N cases with
``store=`` a temporary folder, on all local cores through Dask's process scheduler (the
scale extra) or in this process. Reported: the time, the peak resident memory of this
process (``resource.getrusage``) and, sampled every 0.2 s (psutil), of each worker process
and of this process and its workers together, with this process's memory after building the
input table as the reference the run's own memory is measured against. The issue's target:
10,000,000 cases with peak memory under 2 GiB.
"""

from __future__ import annotations

import argparse
import resource
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import derivpad  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def _peak_mib(who) -> float:
    return resource.getrusage(who).ru_maxrss / 1024  # kilobytes on Linux


class _Watch(threading.Thread):
    """Samples the resident memory of this process's children (the workers) and of all
    together every 0.2 s, keeping the largest of each."""

    def __init__(self):
        super().__init__(daemon=True)
        import psutil
        self.me = psutil.Process()
        self.worker = self.total = 0.0
        self.done = threading.Event()

    def run(self):
        while not self.done.wait(0.2):
            try:
                kids = [k.memory_info().rss for k in self.me.children(recursive=True)]
                total = self.me.memory_info().rss + sum(kids)
            except Exception:  # noqa: BLE001 - a worker ending between the calls
                continue
            self.worker = max([self.worker] + [k / 2 ** 20 for k in kids])
            self.total = max(self.total, total / 2 ** 20)


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=10_000_000)
    parser.add_argument("--scheduler", default="processes")
    args = parser.parse_args(argv)
    scheduler = None if args.scheduler == "none" else args.scheduler
    cases = derivpad.case_sample(args.cases, seed=3, **{
        "m [kg]": ("normal", 1200, 60), "k [kN/m]": ("uniform", 400, 560),
        "c [kN*s/m]": ("uniform", 20, 80)})
    inputs = _peak_mib(resource.RUSAGE_SELF)
    watch = _Watch()
    watch.start()
    with tempfile.TemporaryDirectory() as folder:
        start = time.perf_counter()
        r = derivpad.load_cases(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS,
                                cases=cases, store=folder, progress=False, scheduler=scheduler)
        took = time.perf_counter() - start
        size = (Path(folder) / "cases.parquet").stat().st_size / 2 ** 20
        peak_row = r.envelope[r.envelope["result"] == "peak"].iloc[0]
    watch.done.set()
    main_peak = _peak_mib(resource.RUSAGE_SELF)
    print(f"{r.cases:,} cases, scheduler {args.scheduler}: {took:.1f} s "
          f"({took / r.cases * 1e3:.4f} ms per case); cases.parquet {size:.0f} MiB")
    print(f"peak memory: this process {main_peak:.0f} MiB (the input table and Python: "
          f"{inputs:.0f} MiB before the run); largest worker process {watch.worker:.0f} MiB; "
          f"all processes together {watch.total:.0f} MiB (sampled every 0.2 s)")
    print(f"peak of the envelope: {peak_row['max']:.6g} {peak_row['unit']} "
          f"(case {peak_row['case of max']})")
    print("target (issue): 10,000,000 cases with peak memory under 2 GiB")


if __name__ == "__main__":
    main()
