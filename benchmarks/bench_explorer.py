"""Benchmark the live explorer: a control change to a fully regenerated output, at the callback.

Run:  python benchmarks/bench_explorer.py [--repeat N]

Moves the demo explorer's stiffness slider N times and times each change from the callback to
the redrawn HTML (all steps, the four independent checks, results, figure). The explorer
derives once in symbols and puts the numbers in on each change. References in the same run:
a full ``derive()`` with all checks plus a fresh HTML render (what a change would cost without
the symbolic family), and the bare derivation with the engine's own check only. Also timed: a
change across critical damping, which re-derives. Target: median under 250 ms. Then the same
for a damped two-degree-of-freedom system (the pump example) with its load's slider.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from sympy.core.cache import clear_cache  # noqa: E402
from timing import median_time  # noqa: E402

import derivpad  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402
from derivpad.render.html import to_html  # noqa: E402


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

    def full():
        d = derivpad.derive(DEMO_EQUATION, ics=DEMO_ICS, params=params, units=DEMO_UNITS)
        to_html(d)

    rederive = median_time(full, args.repeat)
    ref = median_time(lambda: derivpad.derive(DEMO_EQUATION, ics=DEMO_ICS, params=params,
                                              units=DEMO_UNITS, checks="engine"), args.repeat)
    damped = derivpad.explore(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, controls={"c": (0, 100)},
                              units=DEMO_UNITS)
    crossings = []
    for i in range(args.repeat):  # critical damping is 2·√(k m) = 48 kN·s/m
        start = time.perf_counter()
        damped._sliders["c"].value = 60.0 + i if i % 2 == 0 else 20.0 + i
        crossings.append(time.perf_counter() - start)
    print(f"control change → regenerated output   {change * 1e3:8.1f} ms median (target < 250 ms)")
    print(f"reference: derive() + fresh HTML       {rederive * 1e3:8.1f} ms   "
          f"ratio {change / rederive:5.2f}x")
    print(f"reference: derivation, own check only {ref * 1e3:8.1f} ms   ratio {change / ref:5.2f}x")
    print(f"change across critical damping         {statistics.median(crossings) * 1e3:8.1f} ms "
          "median (re-derives the first time each way)")
    two_dof(args.repeat)


PUMP = (["m1*x1'' + (k1 + k2)*x1 - k2*x2 - c2*(x2' - x1') = F0*sin(w*t)*u(t)",
         "m2*x2'' + c2*(x2' - x1') + k2*(x2 - x1) = 0"],
        {"x1(0)": 0, "x1'(0)": 0, "x2(0)": 0, "x2'(0)": 0},
        {"m1": "400 kg", "k1": "6.4 MN/m", "m2": "40 kg", "k2": "632 kN/m", "c2": "200 N*s/m",
         "F0": "1.5 kN", "w": "125.66 rad/s"})
PUMP_OPTIONS = {"units": {"x1": "mm", "x2": "mm", "t": "s"}, "derived": {"stroke": "x2 - x1"}}


def two_dof(repeat: int) -> None:
    """The pump and tuned absorber of example_notebooks/pump_tuned_absorber.ipynb (2 DOF,
    damped): the unbalance force's slider, derived once in symbols; against a full derive()
    and a fresh HTML render at the same values. Targets: median under 250 ms, at least 5×
    faster than the full re-derivation."""
    eqs, ics, params = PUMP
    view = derivpad.explore(eqs, ics, params, controls={"F0": (0.5, 3.0)}, **PUMP_OPTIONS)
    slider = view._sliders["F0"]

    def full():
        d = derivpad.derive(eqs, ics, dict(params, F0="2.2 kN"), **PUMP_OPTIONS)
        to_html(d)
    full()  # warm-up
    # a change and a full re-derivation in turn, SymPy's cache cleared before each, so that a
    # slow spell of the machine weighs on both sides of the ratio alike
    times, fulls = [], []
    for i in range(repeat):
        clear_cache()
        start = time.perf_counter()
        slider.value = 1.0 + 0.2 * i
        times.append(time.perf_counter() - start)
        clear_cache()
        start = time.perf_counter()
        full()
        fulls.append(time.perf_counter() - start)
    change, rederive = statistics.median(times), statistics.median(fulls)
    print(f"2-DOF (pump + absorber), F0 slider → output {change * 1e3:8.1f} ms median "
          f"(target < 250 ms); {view.status.split(':')[-1].strip()[:60]}")
    print(f"reference: 2-DOF derive() + fresh HTML   {rederive * 1e3:8.1f} ms   ratio "
          f"{rederive / change:5.1f}x faster (target ≥ 5x)")


if __name__ == "__main__":
    main()
