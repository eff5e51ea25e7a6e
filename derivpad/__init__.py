"""derivpad: step-by-step, self-checked Laplace-transform derivations for engineering calc records.

The supported names are listed in ``__all__``; everything else is internal.
"""

from . import forcing
from .cases import CaseResults, case_grid, case_sample, load_cases
from .core.model.derivation import Derivation
from .core.engine import derive, derive_state_space
from .core.response_spectrum import ResponseSpectrum, response_spectrum
from .core.model.problem import Problem
from .core.reading.record import CalcRecord
from .core.model.result import Result
from .core.symbolic.rules import RULES
from .core.model.steps import Line, Rule, Step
from .core.model.checks import Check, Verification
from .errors import (DerivpadError, EquationError, ExportError, ForcingError, InitialConditionError,
                     LoadHistoryError,
                     ManifestMismatchError, MissingExtraError, NonlinearTermError,
                     PackageRefusedError, ParameterError, ParseError,
                     RenderSettingError, SignatureError, SolveError, UnitError, UnknownNameError,
                     UnsafeInputError, VariableCoefficientError, VerificationFailedError,
                     WorkerError)

__version__ = "0.1.0"

__all__ = sorted([
    "CalcRecord", "CaseResults", "Check", "Derivation", "DerivpadError", "EquationError", "ExportError", "ForcingError",
    "InitialConditionError", "Line", "LoadHistoryError", "ManifestMismatchError", "MissingExtraError", "NonlinearTermError",
    "PackageRefusedError", "ParameterError", "ParseError", "Problem", "RULES", "RenderSettingError", "ResponseSpectrum", "Result", "Rule",
    "SignatureError", "SolveError", "Step", "UnitError", "UnknownNameError", "UnsafeInputError",
    "VariableCoefficientError", "Verification", "VerificationFailedError", "WorkerError", "case_grid", "case_sample", "derive", "derive_state_space", "explore",
    "forcing", "load_cases", "load_ipython_extension", "response_spectrum",
])


def load_ipython_extension(ipython):
    """``%load_ext derivpad``: the ``%%derivation`` cell magic (see docs/notebook.md)."""
    from .notebook.display import load_ipython_extension as load
    load(ipython)


def explore(equation, ics=None, params=None, controls=None, **options):
    """A live parameter explorer (ipywidgets): see docs/notebook.md."""
    from .notebook.widgets import explore as build
    return build(equation, ics=ics, params=params, controls=controls, **options)
