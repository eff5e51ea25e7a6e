"""Case tables built for the common designs: full-factorial grids and seeded random spreads.

Both return a pandas DataFrame whose headers carry the units (``k [kN/m]``), ready for
``load_cases(cases=...)``. A parameter is named by a keyword (``td=[...]``) or, with its unit,
by a mapping key (``{"td [ms]": [...]}``).
"""

from __future__ import annotations

import itertools
import math

import numpy as np

from ..errors import ParameterError
from .table import MAX_CASES, pandas

__all__ = ["case_grid", "case_sample"]

_DISTRIBUTIONS = {"normal": 2, "uniform": 2, "lognormal": 2, "triangular": 3}


def _columns(columns, named) -> dict:
    out = dict(columns or {})
    clash = sorted(set(out) & set(named))
    if clash:
        raise ParameterError(f"{clash[0]!r} is given twice", clash[0])
    out.update(named)
    if not out:
        raise ParameterError("name at least one parameter, e.g. case_grid(td=[0.1, 0.2])",
                             "cases")
    return out


def case_grid(columns=None, **named):
    """Every combination of the values given for each parameter (full factorial).

    Examples
    --------
    >>> case_grid({"td [ms]": [5, 10, 20]}, m=[900, 1200])   # 6 cases
    """
    spec = _columns(columns, named)
    values = {}
    for name, vals in spec.items():
        vals = np.atleast_1d(np.asarray(vals, dtype=float))
        if vals.ndim != 1 or not vals.size:
            raise ParameterError(f"{name!r}: give a list of numbers", name)
        if not np.all(np.isfinite(vals)):
            raise ParameterError(f"{name!r}: every value must be a finite number", name)
        values[name] = vals
    count = math.prod(len(v) for v in values.values())
    if count > MAX_CASES:
        raise ParameterError(f"the grid has {count:,} cases, more than the {MAX_CASES:,} one "
                             "call takes; use fewer values", "cases")
    rows = list(itertools.product(*values.values()))
    return pandas().DataFrame(rows, columns=list(values))


def case_sample(n: int, columns=None, *, seed: int, **named):
    """``n`` cases drawn at random (NumPy's default generator, seeded), each parameter from
    ``("normal", mean, sd)``, ``("uniform", low, high)``, ``("lognormal", median, sigma)``
    (sigma of the logarithm) or ``("triangular", low, mode, high)``.

    Examples
    --------
    >>> case_sample(1000, seed=1, m=("normal", 1200, 60), **{"k [kN/m]": ("uniform", 400, 560)})
    """
    if not isinstance(n, int) or isinstance(n, bool) or not 1 <= n <= MAX_CASES:
        raise ParameterError(f"n must be a whole number from 1 to {MAX_CASES:,}, not {n!r}", "n")
    spec = _columns(columns, named)
    rng = np.random.default_rng(seed)
    data = {}
    for name, dist in spec.items():
        if not isinstance(dist, (tuple, list)) or not dist or dist[0] not in _DISTRIBUTIONS \
                or len(dist) != 1 + _DISTRIBUTIONS[dist[0]]:
            kinds = ", ".join(f"({k!r}, {', '.join(['…'] * a)})"
                              for k, a in _DISTRIBUTIONS.items())
            raise ParameterError(f"{name!r}: give a distribution, one of {kinds}; not "
                                 f"{dist!r}", name)
        kind, *args = dist
        args = [float(a) for a in args]
        if kind == "normal":
            data[name] = rng.normal(args[0], _positive(args[1], name, "sd"), n)
        elif kind == "uniform":
            data[name] = rng.uniform(*_ordered(args, name), n)
        elif kind == "lognormal":
            data[name] = args[0] * np.exp(rng.normal(0.0, _positive(args[1], name, "sigma"), n))
        else:
            low, mode, high = args
            if not low <= mode <= high or low == high:
                raise ParameterError(f"{name!r}: triangular needs low ≤ mode ≤ high, "
                                     "low < high", name)
            data[name] = rng.triangular(low, mode, high, n)
    return pandas().DataFrame(data)


def _positive(x: float, name: str, what: str) -> float:
    if not x > 0:
        raise ParameterError(f"{name!r}: the {what} must be positive, not {x!r}", name)
    return x


def _ordered(args, name: str):
    low, high = args
    if not low < high:
        raise ParameterError(f"{name!r}: uniform needs low < high, not {low!r}, {high!r}", name)
    return low, high
