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
import numpy as np  # noqa: E402
from derivpad.demo import DEMO_EQUATION, DEMO_ICS, DEMO_PARAMS, DEMO_UNITS  # noqa: E402


def hand_written_peaks(m, k, c, F0=6e3, t1=0.02, t2=0.07):
    """The reference: the demo's closed form written out by hand in NumPy for every case at
    once — x(t) = (F0/k)[s(t - t1) - s(t - t2)] with s the unit step response (damped or
    overdamped: single-degree-of-freedom vibration theory, from memory) — its peak |x| from a
    grid of 161 points over two damped periods (or five time constants) after t1, refined by
    Newton's method on x'(t) = (F0/k)[h(t - t1) - h(t - t2)], h = s'. The damped and the
    overdamped cases are evaluated apart, each in its own form. Returns peak |x| in m and its
    time."""
    peaks, times = np.empty(len(m)), np.empty(len(m))
    under = c < 2 * np.sqrt(k * m)
    for part, damped in ((under, True), (~under, False)):
        if part.any():
            peaks[part], times[part] = _peaks_of(m[part], k[part], c[part], F0, t1, t2, damped)
    return peaks, times


def _peaks_of(m, k, c, F0, t1, t2, damped: bool):
    """hand_written_peaks for cases all below (damped) or all above critical damping, in the
    cos/sin or the cosh/sinh form (both free of cancellation near critical damping)."""
    wn = np.sqrt(k / m)
    z = c / (2 * np.sqrt(k * m))
    wd = wn * np.sqrt(np.abs(1 - z ** 2))  # damped frequency, or the overdamped rate gap
    cos, sin = (np.cos, np.sin) if damped else (np.cosh, np.sinh)

    def parts(tau, order):
        tau = np.maximum(tau, 0.0)
        e = np.exp(-z * wn * tau)
        co, sn = cos(wd * tau), sin(wd * tau)
        if order == 0:
            out = 1 - e * (co + z * wn / wd * sn)
        elif order == 1:
            out = e * wn ** 2 / wd * sn
        else:
            out = e * wn ** 2 / wd * (wd * co - z * wn * sn)
        return np.where(tau > 0, out, 0.0)

    def x(t, order=0):
        return F0 / k * (parts(t - t1, order) - parts(t - t2, order))

    slow = z * wn - (0.0 if damped else wd)  # the slowest decay rate
    span = np.minimum(2 * 2 * np.pi / wd, 5 / slow) if damped else 5 / slow
    t = t1 + span * np.linspace(0.0, 1.0, 161)[:, None]
    y = np.abs(x(t))
    i = np.argmax(y, axis=0)
    cols = np.arange(len(m))
    best = y[i, cols]
    lo, hi = t[np.maximum(i - 1, 0), cols], t[np.minimum(i + 1, len(t) - 1), cols]
    s = np.sign(x(t[i, cols]))
    tt = t[i, cols]
    for _ in range(8):  # Newton on x'(t) = 0 inside the bracket
        step = x(tt, 1) / x(tt, 2)
        nxt = tt - step
        tt = np.where((nxt > lo) & (nxt < hi) & np.isfinite(nxt), nxt, tt)
    return np.maximum(best, s * x(tt)), tt


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=20000)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    cases = derivpad.case_sample(args.cases, seed=3, **{
        "m [kg]": ("normal", 1200, 60), "k [kN/m]": ("uniform", 400, 560),
        "c [kN*s/m]": ("uniform", 20, 80)})  # critical damping 2√(km) ≈ 44–52 kN·s/m
    import derivpad.cases.run as run
    sample = run.sampled_checks
    spent = []

    def timed(*a):
        t0 = time.perf_counter()
        out = sample(*a)
        spent.append(time.perf_counter() - t0)
        return out
    run.sampled_checks = timed
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
    m = cases["m [kg]"].to_numpy(float)
    k = cases["k [kN/m]"].to_numpy(float) * 1e3
    c = cases["c [kN*s/m]"].to_numpy(float) * 1e3
    t0 = time.perf_counter()
    peaks, _ = hand_written_peaks(m, k, c)
    hand = time.perf_counter() - t0
    ours = np.abs(r.table["peak"].to_numpy(float)) / 1e3
    gap = float(np.max(np.abs(peaks - ours) / ours))
    print(f"reference: hand-written NumPy peaks      {hand:8.2f} s   {hand / args.cases * 1e3:7.4f} "
          f"ms per case; load_cases takes {here / hand:5.1f}x as long (the whole run: the forms "
          f"derived and checked, every result, the sampled checks); peaks agree to {gap:.1e}")
    print("targets (issue, 100,000 cases): under 10 s, i.e. 0.1 ms per case; >= 1000x faster "
          "than one derive() per case")


if __name__ == "__main__":
    main()
