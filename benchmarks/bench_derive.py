"""Benchmark derive() against SymPy's dsolve on the same problems, in one run.

Run:  python benchmarks/bench_derive.py [--repeat N] [--dsolve-timeout SECONDS]

Prints, for each problem, the median time of derive() with every step and the engine's own
check (``checks="engine"``; the independent checks are timed by bench_checks.py), SymPy's
cache cleared before every run so no run profits from an earlier identical one; then the
median time of dsolve, and their ratio. dsolve runs in a child process so that a case where
it does not answer can be stopped at the time-out. Targets: the demo derives in under
150 ms median; derive is at least 10x faster than dsolve on a second-order ODE with a
delayed step; an irreducible quintic solves in under 2 s.
"""

from __future__ import annotations

import argparse
import multiprocessing as mp
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import sympy as sp  # noqa: E402

from timing import median_time  # noqa: E402
from derivpad import derive  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS  # noqa: E402

t = sp.Symbol("t", real=True)
y = sp.Function("y")


def _dsolve_job(name, queue):
    case = CASES[name]
    ode, ics = case["sympy"]()
    start = time.perf_counter()
    sp.dsolve(ode, y(t), ics=ics)
    queue.put(time.perf_counter() - start)


def _delayed_step():
    ode = sp.Eq(y(t).diff(t, 2) + 4 * y(t).diff(t) + 13 * y(t), 2 * sp.Heaviside(t - 1))
    return ode, {y(0): 0, y(t).diff(t).subs(t, 0): 0}


def _quintic():
    lhs = (y(t).diff(t, 5) + 2 * y(t).diff(t, 4) + 3 * y(t).diff(t, 3) + 2 * y(t).diff(t, 2)
           + y(t).diff(t) + 3 * y(t))
    return sp.Eq(lhs, sp.Heaviside(t - 1)), {y(t).diff(t, k).subs(t, 0) if k else y(0): 0
                                             for k in range(5)}


def _demo_sympy():
    m, c, k, F0 = (sp.Integer(v) for v in (1200, 2400, 480000, 6000))  # the demo in SI
    x = y
    ode = sp.Eq(m * x(t).diff(t, 2) + c * x(t).diff(t) + k * x(t),
                F0 * (sp.Heaviside(t - sp.Rational(1, 50)) - sp.Heaviside(t - sp.Rational(7, 100))))
    return ode, {x(0): 0, x(t).diff(t).subs(t, 0): 0}


CASES = {
    "demo (pulse on a damped isolator, all steps)": {
        "derive": lambda: derive(DEMO_EQUATION, ics=DEMO_ICS, params=DEMO_PARAMS,
                                 checks="engine"),
        "sympy": _demo_sympy, "target": "median < 150 ms"},
    "second order, delayed step": {
        "derive": lambda: derive("y'' + 4*y' + 13*y = 2*u(t - 1)", ics={"y(0)": 0, "y'(0)": 0},
                                 checks="engine"),
        "sympy": _delayed_step, "target": ">= 10x faster than dsolve"},
    "irreducible quintic, delayed step": {
        "derive": lambda: derive("y^(5) + 2*y^(4) + 3*y''' + 2*y'' + y' + 3*y = u(t - 1)",
                                 ics={f"y^({k})(0)": 0 for k in range(5)}, checks="engine"),
        "sympy": _quintic, "target": "median < 2 s"},
}




def _median_dsolve(name, repeat, timeout):
    times = []
    ctx = mp.get_context("spawn")
    for _ in range(repeat):
        queue = ctx.Queue()
        proc = ctx.Process(target=_dsolve_job, args=(name, queue))
        proc.start()
        proc.join(timeout)
        if proc.is_alive():
            proc.terminate()
            proc.join()
            return None
        times.append(queue.get())
    return statistics.median(times)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--dsolve-repeat", type=int, default=3)
    parser.add_argument("--dsolve-timeout", type=float, default=60.0)
    args = parser.parse_args(argv)
    print(f"{'problem':<46} {'derive':>10} {'dsolve':>12} {'ratio':>8}  target")
    for name, case in CASES.items():
        ours = median_time(case["derive"], args.repeat)
        ref = _median_dsolve(name, args.dsolve_repeat, args.dsolve_timeout)
        ref_text = f"{ref * 1e3:9.1f} ms" if ref is not None else f"> {args.dsolve_timeout:.0f} s"
        ratio = f"{ref / ours:7.1f}x" if ref is not None else "   n/a"
        print(f"{name:<46} {ours * 1e3:7.1f} ms {ref_text:>12} {ratio:>8}  {case['target']}")


if __name__ == "__main__":
    main()
