"""Test-session set-up shared by tests/ and example_notebooks/.

Matplotlib builds its font cache on first use and says so on stderr; in a fresh environment
that would land in the first notebook cell that draws a figure and make nbval see an output
the stored notebook does not have. Building the cache here, before any notebook runs, keeps
that one-time message out of the comparison.
"""

try:
    import matplotlib.font_manager  # noqa: F401  (building the cache is the point)
except ImportError:  # the notebook extra is not installed; the notebooks will say so
    pass
