"""Benchmark the engineering results of the demo problem against two references in one run.

Run:  python benchmarks/bench_results.py [--repeat N]

Timed (median of N runs, SymPy's cache cleared before each):

* ``engineering_results`` on the demo's numeric model: peak, primary and residual peaks, DLF,
  final value and the step-response figures, each over all t ≥ 0 from the modes;
* reference 1, a window scan written out here as the results were read before: a 20,001-point
  grid over the analysis window, the zeros of y' bracketed on it and refined by Brent's method,
  the largest |y| kept (what the issue's "within 1.2× of today's cost" is measured against);
* reference 2, the independent checks (integration, inversion, limit theorems) of the same model.

Targets: results / window scan ≤ 1.2, and results / checks < 1 (the supremum search costs
less than the verification).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import numpy as np  # noqa: E402
from scipy.optimize import brentq  # noqa: E402

from timing import median_time  # noqa: E402
from derivpad.core.checking import numeric_checks as nc  # noqa: E402
from derivpad.core.engine import compile_numbers, derive  # noqa: E402
from derivpad.core.symbolic.stages import solve_stages  # noqa: E402
from derivpad.core.checking.results import engineering_results  # noqa: E402
from derivpad.core.checking.window import time_window  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def window_scan(model, end):
    """The earlier way: max |y| over [0, end] from a grid and the zeros of y' on it."""
    ts = np.linspace(0.0, end, 20001)
    dy = model.derivative(ts)
    cand = [0.0, end]
    for i in np.nonzero(dy[:-1] * dy[1:] < 0)[0]:
        cand.append(brentq(lambda x: float(model.derivative(np.array([x]))[0]), ts[i], ts[i + 1],
                           xtol=1e-14))
    values = model.closed_form(np.array(cand))
    return float(np.max(np.abs(values)))


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    args = parser.parse_args(argv)
    d = derive(DEMO_EQUATION, ics=DEMO_ICS, params=DEMO_PARAMS, units=DEMO_UNITS)
    p = d.problem
    numbers = compile_numbers(p, solve_stages(p)).at({})
    model = numbers.models[p.unknown]
    bps = [float(b) for b in d.breakpoints]
    end = time_window(d.poles, bps)
    results = median_time(lambda: engineering_results(p, numbers), args.repeat)
    scan = median_time(lambda: window_scan(model, end), args.repeat)
    checks = median_time(lambda: nc.independent_checks(numbers, {}, end), args.repeat)
    print(f"{'engineering results (all t ≥ 0)':<36} {results * 1e3:8.1f} ms")
    print(f"{'reference: window scan (peak only)':<36} {scan * 1e3:8.1f} ms   "
          f"ratio {results / scan:5.2f}   (target ≤ 1.2)")
    print(f"{'reference: independent checks':<36} {checks * 1e3:8.1f} ms   "
          f"ratio {results / checks:5.2f}   (target < 1)")


if __name__ == "__main__":
    main()
