"""Benchmark the live explorer: a control change to a fully regenerated output, at the callback.

Run:  python benchmarks/bench_explorer.py [--repeat N]

Moves the demo explorer's stiffness slider N times and times each change from the callback to
the redrawn HTML (derivation, all checks, results, figure). The reference in the same run is
the bare derivation with the engine's own check only (``checks="engine"``), which bounds what
any regeneration must cost. Target: median under 250 ms.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from timing import median_time  # noqa: E402

import derivpad  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    args = parser.parse_args(argv)
    view = derivpad.explore(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, controls={"k": (200, 1000)},
                            units=DEMO_UNITS)
    slider = view._sliders["k"]
    times = []
    for i in range(args.repeat):
        start = time.perf_counter()
        slider.value = 300.0 + 50.0 * i          # the observer re-derives and redraws
        times.append(time.perf_counter() - start)
    change = statistics.median(times)
    params = dict(DEMO_PARAMS, k="650 kN/m")
    ref = median_time(lambda: derivpad.derive(DEMO_EQUATION, ics=DEMO_ICS, params=params,
                                              units=DEMO_UNITS, checks="engine"), args.repeat)
    print(f"control change → regenerated output   {change * 1e3:8.1f} ms median (target < 250 ms)")
    print(f"reference: derivation, own check only {ref * 1e3:8.1f} ms   ratio {change / ref:5.1f}x")


if __name__ == "__main__":
    main()
