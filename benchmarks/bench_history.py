"""Benchmark responses to long load records against scipy.signal.lsim, in one run.

Run:  python benchmarks/bench_history.py [--points N] [--repeat R]

A single-degree-of-freedom system (m = 2 kg, c = 4 N·s/m, k = 8000 N/m) under a seeded random
record on a uniform grid (1 ms). Timed, each the median of R runs after a warm-up
(benchmarks/timing.py):
- the response at every point of the record by the exact recurrence (derivpad's march), and
  the reference, scipy.signal.lsim with interp=True on the same grid (the same first-order-hold
  exactness); their ratio, and their largest difference;
- derive() of the same problem with every check (the generic segment's derivation, the march,
  the peak over the whole response, the independent integration of every segment);
- the same for 1,000,000 points (march and derive());
- the memory the march takes (tracemalloc peak) at N and 10 N: linear in N means a ratio near
  10;
- a response spectrum of 200 periods (0.05 to 5 s, ζ = 0.05) of a 10,000-point record.
The issue's targets (response under 0.5 s and within 3× of lsim at 100,000 points, 1,000,000
points under 5 s, the spectrum under 2 s) are printed beside them.
"""

from __future__ import annotations

import argparse
import sys
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import numpy as np  # noqa: E402
from scipy import signal  # noqa: E402

import derivpad  # noqa: E402
from derivpad import forcing  # noqa: E402
from derivpad.core.checking.history_march import march  # noqa: E402
from timing import median_time  # noqa: E402

M, C, K = 2.0, 4.0, 8000.0
A = np.array([[0.0, 1.0], [-K / M, -C / M]])
G = np.array([0.0, 1.0 / M])


def record(n: int):
    rng = np.random.default_rng(7)
    t = np.arange(n) * 1e-3
    return t, 500 * np.sin(2 * np.pi * 1.3 * t) + 50 * rng.normal(size=n)


def ours(t, f):
    return march(A, G, np.zeros(2), np.zeros(2), t, f)[:, 0]


def reference(t, f):
    system = signal.StateSpace(A, G[:, None], np.array([[1.0, 0.0]]), np.zeros((1, 1)))
    return signal.lsim(system, f, t, interp=True)[1]


def derive_time(t, f, repeat: int) -> float:
    rec = forcing.history(t, f, unit="N")
    return median_time(lambda: derivpad.derive(
        "m*x'' + c*x' + k*x = F", {"x(0)": 0, "x'(0)": 0},
        {"m": "2 kg", "c": "4 N*s/m", "k": "8000 N/m", "F": rec}), repeat)


def march_memory(n: int) -> int:
    t, f = record(n)
    tracemalloc.start()
    ours(t, f)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--points", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    n = args.points
    t, f = record(n)
    diff = np.max(np.abs(ours(t, f) - reference(t, f))) / np.max(np.abs(reference(t, f)))
    mine = median_time(lambda: ours(t, f), args.repeat)
    ref = median_time(lambda: reference(t, f), args.repeat)
    print(f"{n:,} points: march {mine:.3f} s, scipy lsim {ref:.3f} s, ratio march/lsim "
          f"{mine / ref:.2f} (target: under 0.5 s and at most 3); largest difference "
          f"{diff:.2e} of the peak")
    print(f"{n:,} points: derive() with every check {derive_time(t, f, args.repeat):.2f} s")
    t1, f1 = record(10 * n)
    big = median_time(lambda: ours(t1, f1), args.repeat)
    print(f"{10 * n:,} points: march {big:.2f} s, derive() "
          f"with every check {derive_time(t1, f1, 1):.2f} s (target: under 5 s)")
    small, big = march_memory(n), march_memory(10 * n)
    print(f"march memory (tracemalloc peak): {small / 2**20:.1f} MiB at {n:,} points, "
          f"{big / 2**20:.1f} MiB at {10 * n:,}: ratio {big / small:.1f} (linear: about 10)")
    rng = np.random.default_rng(0)
    ts = np.arange(10_000) * 0.005
    ag = rng.normal(size=ts.size) * np.exp(-((ts - 15) / 8) ** 2) * 3
    rec = forcing.history(ts, ag, unit="m/s**2")
    periods = np.geomspace(0.05, 5.0, 200)
    spec = median_time(lambda: derivpad.response_spectrum(rec, periods, 0.05), args.repeat)
    print(f"response spectrum, 200 periods of a 10,000-point record: {spec:.2f} s "
          "(target: under 2 s)")


if __name__ == "__main__":
    main()
