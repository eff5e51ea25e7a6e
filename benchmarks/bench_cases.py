"""Benchmark load cases against one derive() per case, in one run.

Run:  python benchmarks/bench_cases.py [--cases N] [--repeat R]

The demo isolator (m, k, t_d varied, the damping crossing critical so that both forms occur)
over N random cases (seeded): ``derivpad.load_cases`` in this process, and on all local cores
through Dask's process scheduler (when the scale extra is installed), each form's cases
evaluated over arrays; the time of the run is also given without its seeded sample of
independent checks (at least 1 % of the cases, each integrated and found again one case at a
time), which the run always makes; against the reference,
one full ``derivpad.derive`` per case (all checks, as the cases would cost without the
derivation family), timed on R of the cases and scaled per case. Reported: seconds per case
and the ratio. The issue's targets for 100,000 cases (under 10 s, at least 1,000× faster than
one derive() per case) are printed beside them.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import derivpad  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=20000)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    cases = derivpad.case_sample(args.cases, seed=3, **{
        "m [kg]": ("normal", 1200, 60), "k [kN/m]": ("uniform", 400, 560),
        "c [kN*s/m]": ("uniform", 20, 80)})  # critical damping 2√(km) ≈ 44–52 kN·s/m
    import derivpad.cases.run as run
    sample = run._integration_sample
    spent = []

    def timed(*a):
        t0 = time.perf_counter()
        out = sample(*a)
        spent.append(time.perf_counter() - t0)
        return out
    run._integration_sample = timed
    start = time.perf_counter()
    r = derivpad.load_cases(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS, cases=cases,
                            progress=False)
    here = time.perf_counter() - start
    checks = spent[-1]
    forms = dict(r.table["form"].value_counts())
    times = []
    for i in range(args.repeat):
        row = cases.iloc[i]
        params = dict(DEMO_PARAMS, m=f"{float(row['m [kg]'])!r} kg", k=f"{float(row['k [kN/m]'])!r} kN/m",
                      c=f"{float(row['c [kN*s/m]'])!r} kN*s/m")
        t0 = time.perf_counter()
        derivpad.derive(DEMO_EQUATION, DEMO_ICS, params, units=DEMO_UNITS)
        times.append(time.perf_counter() - t0)
    per_derive = statistics.median(times)
    print(f"{args.cases} cases of the demo form ({', '.join(f'{k} {v}' for k, v in forms.items())})")
    print(f"load_cases, this process        {here:8.2f} s   {here / args.cases * 1e3:7.3f} ms per "
          f"case   {per_derive * args.cases / here:6.1f}x faster than one derive() per case")
    rest = here - checks
    print(f"  of which the sampled checks   {checks:8.2f} s; the rest {rest:6.2f} s   "
          f"{rest / args.cases * 1e3:7.3f} ms per case   {per_derive * args.cases / rest:6.1f}x")
    try:
        import distributed  # noqa: F401
    except ImportError:
        print("load_cases on all cores           (the scale extra is not installed)")
    else:
        start = time.perf_counter()
        derivpad.load_cases(DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, units=DEMO_UNITS, cases=cases,
                            progress=False, scheduler="processes")
        cores = time.perf_counter() - start
        print(f"load_cases, all local cores     {cores:8.2f} s   {cores / args.cases * 1e3:7.3f} ms "
              f"per case   {per_derive * args.cases / cores:6.1f}x faster than one derive() per "
              "case")
    print(f"reference: one derive() per case          {per_derive * 1e3:7.1f} ms per case "
          f"(median of {args.repeat})")
    print("targets (issue, 100,000 cases): under 10 s, i.e. 0.1 ms per case; >= 1000x faster "
          "than one derive() per case")


if __name__ == "__main__":
    main()
