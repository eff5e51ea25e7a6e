"""Benchmark the stages' algebra against SymPy's own routes, in one run.

Run:  python benchmarks/bench_algebra.py [--repeat N]

1. Partial fractions of 2/(s·P(s)), P of order 6, 8 and 10 with Gaussian-rational roots
   (P = Π_k ((s + k)² + k²)): ``partial_fractions`` against the same exact residues computed
   directly in SymPy's QQ_I polynomial domain (N/D' at each simple root), and against
   ``sympy.apart``. Target: within 5× of the domain route.
2. The engine's own back-substitution check of the order-10 ODE P(D) y = 2 u(t) from rest,
   against SymPy's ``checkodesol``-free reference: the solution differentiated ten times by
   ``sympy.diff`` and substituted (what the check did before). Target: under 1 s.
SymPy's cache is cleared before every run.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import sympy as sp  # noqa: E402
from sympy.polys.domains import QQ_I  # noqa: E402

from timing import median_time  # noqa: E402
from derivpad.core.checking.own_check import self_check  # noqa: E402
from derivpad.core.model.symbols import S, T, TAU  # noqa: E402
from derivpad.core.reading.read_problem import make_problem  # noqa: E402
from derivpad.core.symbolic.algebra import poles_of  # noqa: E402
from derivpad.core.symbolic.partial_fractions import partial_fractions  # noqa: E402
from derivpad.core.symbolic.stages import solve_stages  # noqa: E402


def p_of(m: int) -> sp.Expr:
    return sp.expand(sp.Mul(*[(S + k) ** 2 + k ** 2 for k in range(1, m + 1)]))


def domain_route(den: sp.Expr) -> list:
    """Residues N/D'(p) at each root of D, in QQ_I (roots known: 0 and -k ± ik)."""
    D = sp.Poly(den, S, domain=QQ_I)
    dD = D.diff(S)
    roots = [QQ_I.from_sympy(sp.Integer(0))] + [QQ_I.from_sympy(-k + sign * k * sp.I)
                                                for k in range(1, (D.degree() - 1) // 2 + 1)
                                                for sign in (1, -1)]
    two = QQ_I.from_sympy(sp.Integer(2))
    return [two / dD.rep.eval(r) if hasattr(dD.rep, "eval") else two / dD.eval(r)
            for r in roots]


def cleared(fn):
    def run():
        sp.core.cache.clear_cache()
        return fn()
    return run


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    for m in (3, 4, 5):
        den = sp.expand(S * p_of(m))
        ours = median_time(cleared(lambda: partial_fractions(sp.Integer(2), poles_of(den))),
                           args.repeat)
        dom = median_time(cleared(lambda: domain_route(den)), args.repeat)
        apart = median_time(cleared(lambda: sp.apart(2 / den, S)), args.repeat)
        print(f"partial fractions, order {2 * m}: {ours * 1e3:8.1f} ms; QQ_I residues "
              f"{dom * 1e3:7.1f} ms (ratio {ours / dom:5.1f}, target ≤ 5); sympy.apart "
              f"{apart * 1e3:7.1f} ms")
    c = sp.Poly(p_of(5), S).all_coeffs()[::-1]
    terms = " + ".join(f"{a}*y" + ("'" * k if k <= 3 else f"^({k})") for k, a in enumerate(c))
    ics = {"y" + ("'" * k if k <= 3 else f"^({k})") + "(0)": 0 for k in range(10)}
    problem = make_problem(terms + " = 2*u(t)", ics)
    stages = solve_stages(problem)
    own = median_time(cleared(lambda: self_check(problem, stages)), args.repeat)
    (_, g), = stages.delayed_solutions["y"]

    def by_diff():
        y = g.subs(TAU, T)
        out = sum(a * sp.diff(y, T, k) for k, a in enumerate(c))
        return sp.expand(out.rewrite(sp.exp))
    ref = median_time(cleared(by_diff), args.repeat)
    print(f"own check, order-10 ODE: {own:6.3f} s (target < 1 s); substituting sympy.diff "
          f"derivatives {ref:6.3f} s (ratio {own / ref:5.2f})")


if __name__ == "__main__":
    main()
