"""Benchmark coupled systems: a 3-DOF chain with a delayed step, a 6-DOF chain, against SymPy.

Run:  python benchmarks/bench_systems.py [--repeat N] [--sympy-timeout S]

Times ``derivpad.derive`` on spring-mass-damper chains (all steps, every check, the results)
and, in the same run, SymPy's own route to the same answer: solve the transformed system
A(s) X(s) = B(s) with ``sympy.linsolve`` and call ``inverse_laplace_transform`` on each
X_j(s). The SymPy route runs in a child process with a time limit; when it does not finish,
the ratio is reported as a bound. Targets: 3-DOF under 2 s, 6-DOF under 10 s, 8-DOF under 4 s.
"""

from __future__ import annotations

import argparse
import multiprocessing as mp
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from timing import median_time  # noqa: E402

import derivpad  # noqa: E402


def chain(n: int):
    """n masses in a chain, grounded at the first, damped at each spring (numbers of our own);
    a force 100·u(t - 0.05) on the last mass."""
    eqs = []
    for j in range(1, n + 1):
        terms = [f"{j + 1}*x{j}''"]
        left = "x{}".format(j - 1) if j > 1 else None
        right = "x{}".format(j + 1) if j < n else None
        k_left, k_right = 1000 * j, 1000 * (j + 1)
        if left:
            terms.append(f"{k_left}*(x{j} - {left}) + {k_left // 100}*(x{j}' - {left}')")
        else:
            terms.append(f"{k_left}*x{j} + {k_left // 100}*x{j}'")
        if right:
            terms.append(f"{k_right}*(x{j} - {right}) + {k_right // 100}*(x{j}' - {right}')")
        force = "100*u(t - 1/20)" if j == n else "0"
        eqs.append(" + ".join(terms) + f" = {force}")
    ics = {f"x{j}(0)": 0 for j in range(1, n + 1)} | {f"x{j}'(0)": 0 for j in range(1, n + 1)}
    return eqs, ics


def _sympy_route(n: int, queue) -> None:
    import sympy as sp
    from derivpad.core.reading.parse import S, T
    from derivpad.core.reading.read_problem import make_problem
    eqs, ics = chain(n)
    p = make_problem(eqs, ics)
    X = sp.symbols(f"X1:{n + 1}")
    rows = []
    for i in range(n):
        lhs = sum(sum(a * S ** k for k, a in enumerate(c)) * X[j]
                  for j, c in enumerate(p.operators[i]))
        rhs = sp.laplace_transform(p.forcings[i], T, S, noconds=True) if p.forcings[i] != 0 \
            else 0
        rows.append(sp.Eq(lhs, rhs))
    start = time.perf_counter()
    (sol,) = sp.linsolve(rows, X)
    t = sp.Symbol("t", positive=True)
    for xj in sol:
        sp.inverse_laplace_transform(xj, S, t)
    queue.put(time.perf_counter() - start)


def sympy_time(n: int, limit: float) -> float | None:
    queue = mp.Queue()
    proc = mp.Process(target=_sympy_route, args=(n, queue))
    proc.start()
    proc.join(limit)
    if proc.is_alive():
        proc.terminate()
        proc.join()
        return None
    return queue.get() if not queue.empty() else None


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--sympy-timeout", type=float, default=120.0)
    args = parser.parse_args(argv)
    for n, target in ((3, 2.0), (6, 10.0), (8, 4.0)):
        eqs, ics = chain(n)
        d = derivpad.derive(eqs, ics)
        assert d.verification.passed
        ours = median_time(lambda: derivpad.derive(eqs, ics), args.repeat)
        ref = sympy_time(n, args.sympy_timeout)
        ref_text = f"{ref:8.2f} s" if ref is not None else f"> {args.sympy_timeout:.0f} s"
        ratio = (f"{ref / ours:6.1f}x faster" if ref is not None else
                 f"> {args.sympy_timeout / ours:.1f}x faster")
        print(f"{n}-DOF chain, delayed step: derivpad {ours:6.2f} s (target < {target:.0f} s); "
              f"SymPy linsolve + inverse_laplace_transform {ref_text}; {ratio}")


if __name__ == "__main__":
    main()
