"""Benchmark the verification of the demo problem: the time of each check, and the total.

Run:  python benchmarks/bench_checks.py [--repeat N]

Each check is timed on its own (median of N runs, SymPy's cache cleared before each) and the
split printed. The reference in the same run is one plain ``scipy.integrate.solve_ivp`` solution
of the demo ODE over the same window at the same tolerance: the ratio says how many plain
integrations the whole verification costs. Target: all checks together under 1 s median.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import numpy as np  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402

from timing import median_time  # noqa: E402
from derivpad.core.checking import numeric_checks as nc  # noqa: E402
from derivpad.core.engine import derive  # noqa: E402
from derivpad.core.engine import compile_numbers  # noqa: E402
from derivpad.core.symbolic.stages import solve_stages  # noqa: E402
from derivpad.core.reading.forcing import TAU  # noqa: E402
from derivpad.core.reading.parse import T  # noqa: E402
from derivpad.core.checking.own_check import self_check  # noqa: E402
from derivpad.core.checking.window import time_window  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    args = parser.parse_args(argv)
    d = derive(DEMO_EQUATION, ics=DEMO_ICS, params=DEMO_PARAMS, units=DEMO_UNITS)
    p = d.problem
    bps = [float(b) for b in d.breakpoints]
    end = time_window(d.poles, bps)
    stages = solve_stages(p)
    numbers = compile_numbers(p, stages).at({})
    model = numbers.models[p.unknown]
    closed = model.closed_form
    peak = float(np.max(np.abs(closed(np.linspace(0, end, 2000)))))
    timings = {
        "back-substitution, ICs, jumps": lambda: self_check(p, stages),
        "numerical integration": lambda: nc.integration_check(numbers, end, 1e-7),
        "numerical inversion": lambda: nc.inversion_check(
            model.parts, closed, nc.inversion_horizon(model.response_poles, end, bps), bps,
            peak, 1e-7),
        "limit theorems": lambda: nc.limit_checks(
            model, 0.0, lambda: closed(np.array([60.0]))[0], peak, 1e-9),
    }
    split = {name: median_time(fn, args.repeat) for name, fn in timings.items()}
    total = sum(split.values())
    a = [float(c) for c in p.coefficients]

    def reference():
        def rhs(t, z):
            f = 6000.0 if 0.02 <= t < 0.07 else 0.0
            return [z[1], (f - a[1] * z[1] - a[0] * z[0]) / a[2]]
        solve_ivp(rhs, (0, end), [0.0, 0.0], method="DOP853", rtol=1e-10, atol=1e-13)

    ref = median_time(reference, args.repeat)
    for name, value in split.items():
        print(f"{name:<32} {value * 1e3:8.1f} ms")
    print(f"{'all checks':<32} {total * 1e3:8.1f} ms   (target < 1000 ms)")
    print(f"{'reference: one solve_ivp run':<32} {ref * 1e3:8.1f} ms   ratio {total / ref:6.1f}x")


if __name__ == "__main__":
    main()
