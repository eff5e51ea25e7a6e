"""Load cases: a calc evaluated for every case of a table, with the envelope and the governing
cases (the ``cases`` extra: pandas, pyarrow)."""

from .builders import case_grid, case_sample
from .results import CaseResults
from .run import load_cases

__all__ = ["CaseResults", "case_grid", "case_sample", "load_cases"]
