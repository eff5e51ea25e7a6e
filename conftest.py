"""Test-session set-up shared by tests/ and example_notebooks/.

Matplotlib builds its font cache on first use and says so on stderr; in a fresh environment
that would land in the first notebook cell that draws a figure and make nbval see an output
the stored notebook does not have. Building the cache here, before any notebook runs, keeps
that one-time message out of the comparison.

Every notebook kernel runs with one BLAS thread: the last digits of a check's measured error
(a value of the order of 1e-16 relative) depend on how many threads a sum is split over, and a
kernel inherits the session's environment — which other tests may change (Dask's workers set
one thread). tools/build_example_notebooks.py writes the stored outputs the same way.
"""

import os

for _name in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_name] = "1"

try:
    import matplotlib.font_manager  # noqa: F401  (building the cache is the point)
except ImportError:  # the notebook extra is not installed; the notebooks will say so
    pass
