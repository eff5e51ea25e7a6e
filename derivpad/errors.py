"""The one exception family of derivpad: every failure a user can cause is one of these.

Each class stores the facts of the failure as attributes (the position in the equation text,
the offending term, the parameter name), so the command line and the widgets never parse
messages. Messages say what is wrong, where, and how to fix it.

    DerivpadError                      base of everything raised on purpose
    ├── ParseError (ValueError)        malformed equation or value text; .text, .position
    │   └── UnsafeInputError           text that tries to reach Python (attributes, calls, dunders)
    ├── EquationError (ValueError)     a well-formed equation the method does not cover
    │   ├── NonlinearTermError         y*y', sin(y), y**2 ...; .term, .position
    │   ├── VariableCoefficientError   t*y' ...; .term, .position
    │   └── UnknownNameError           a name that is neither t, the unknown, a parameter nor a function
    ├── InitialConditionError (ValueError)   missing, extra, malformed or not-at-zero conditions
    ├── ForcingError (ValueError)      forcing whose transform the engine cannot form
    │   └── LoadHistoryError           a measured load record that cannot be used; .row, .column
    ├── ParameterError (ValueError)    a parameter value that is not a number or cannot be used
    ├── UnitError (ValueError)         unknown unit text, incompatible units, inhomogeneous terms
    ├── ExportError (OSError)          a file cannot be written as asked (format, place)
    │   ├── PackageRefusedError        a notebook that cannot be packaged (cell error, unverified)
    │   ├── ManifestMismatchError      a package's files do not match its MANIFEST.sha256
    │   └── SignatureError             a key, a signature or a trust list that cannot be used
    ├── MissingExtraError (ImportError)   an optional dependency (figures: matplotlib) is missing
    ├── RenderSettingError (ValueError)   a renderer setting that does not exist or is out of range
    ├── SolveError (ArithmeticError)   Y(s) or its poles cannot be found in the form asked for
    ├── VerificationFailedError (ArithmeticError)  the engine's own check rejected a solution
    └── WorkerError (RuntimeError)     a worker process of a load-case run stopped or was lost
"""

from __future__ import annotations

__all__ = [
    "DerivpadError",
    "EquationError",
    "ExportError",
    "ForcingError",
    "InitialConditionError",
    "LoadHistoryError",
    "ManifestMismatchError",
    "MissingExtraError",
    "NonlinearTermError",
    "ParameterError",
    "PackageRefusedError",
    "ParseError",
    "RenderSettingError",
    "SignatureError",
    "SolveError",
    "UnitError",
    "UnknownNameError",
    "UnsafeInputError",
    "VariableCoefficientError",
    "VerificationFailedError",
    "WorkerError",
]


_OPTION = {"cli": {"params": "--param {k}={v}", "values": "--value {k}={v}",
                   "units": "--unit {k}={v}", "ics": '--ic "{k}={v}"'},
           "cell": {"params": "a line '{k} = {v}'", "values": "a line 'values: {k} = {v}'",
                    "units": "a line 'units: {k} = {v}'", "ics": "a line '{k} = {v}'"}}
_BARE = {"cli": {"params=": "--param NAME=VALUE", "values=": "--value NAME=VALUE",
                 "ics=": '--ic "y(0)=0"', "units=": "--unit NAME=UNIT",
                 'on_failure="return"': "the command line, which prints it marked NOT VERIFIED "
                                        "(exit status 3)"},
         "cell": {"params=": "a line 'NAME = VALUE'", "values=": "a line 'values: NAME = VALUE'",
                  "ics=": "a line 'y(0) = 0'", "units=": "a line 'units: NAME = UNIT'",
                  'on_failure="return"': 'derive(..., on_failure="return") in Python'}}


def in_syntax(message: str, where: str) -> str:
    """A message whose fix is written in Python (``params={'m': 2.5}``) with the fix in the
    syntax of where the user typed: ``"cli"`` (``--param m=2.5``) or ``"cell"`` (the
    %%derivation magic's line ``m = 2.5``). Messages carry their facts as attributes; this
    only rewrites the example of a fix."""
    import re

    def options(m):
        form = _OPTION[where][m.group(1)]
        pairs = re.findall(r"""(["'])(.+?)\1\s*:\s*([^,]+)""", m.group(2))
        return " ".join(form.format(k=k, v=v.strip().strip("'\"")) for _, k, v in pairs) or \
            _BARE[where][m.group(1) + "="]
    message = re.sub(r"\b(params|values|units|ics)=\{([^{}]*)\}", options, message)
    for python, other in _BARE[where].items():
        message = re.sub(r"\b" + re.escape(python) if python[0].isalpha() else re.escape(python),
                         other, message)
    return message


def _located(message: str, text: str, position: int | None, length: int = 1) -> str:
    """The message with the column and two lines showing where in ``text`` the problem is."""
    if position is None or not text:
        return message
    marks = "^" * max(1, length)
    return f"{message} (at column {position + 1})\n    {text}\n    {' ' * position}{marks}"


class DerivpadError(Exception):
    """Base class of every error derivpad raises on purpose."""


class ParseError(DerivpadError, ValueError):
    """The equation or value text is malformed; ``position`` is the 0-based column."""

    def __init__(self, message: str, text: str = "", position: int | None = None, length: int = 1):
        self.text = text
        self.position = position
        self.length = length
        self.reason = message
        super().__init__(_located(message, text, position, length))


class UnsafeInputError(ParseError):
    """The text uses Python constructs (attributes, dunders, lambdas, indexing) that are never run."""


class EquationError(DerivpadError, ValueError):
    """A well-formed equation outside the linear constant-coefficient class."""

    def __init__(self, message: str, term: str = "", text: str = "", position: int | None = None,
                 length: int = 1):
        self.term = term
        self.text = text
        self.position = position
        super().__init__(_located(message, text, position, length))


class NonlinearTermError(EquationError):
    """A term is nonlinear in the unknown (a product or a function of it)."""


class VariableCoefficientError(EquationError):
    """A derivative of the unknown is multiplied by a function of t."""


class UnknownNameError(EquationError):
    """A name is neither t, the unknown, a known function nor a declared parameter."""

    def __init__(self, message: str, name: str, text: str = "", position: int | None = None):
        self.name = name
        super().__init__(message, term=name, text=text, position=position, length=len(name))


class InitialConditionError(DerivpadError, ValueError):
    """Initial conditions are missing, extra, malformed, or given at a point other than t = 0."""

    def __init__(self, message: str, key: str | None = None, missing: tuple = (), extra: tuple = ()):
        self.key = key
        self.missing = tuple(missing)
        self.extra = tuple(extra)
        super().__init__(message)


class ForcingError(DerivpadError, ValueError):
    """The forcing has a term whose Laplace transform the rule table cannot form."""

    def __init__(self, message: str, term: str = ""):
        self.term = term
        super().__init__(message)


class LoadHistoryError(ForcingError):
    """A measured load record that cannot be used as given: ``row`` is the point's index (arrays
    and tables) or the file's line number, ``column`` the column where one applies."""

    def __init__(self, message: str, row: int | None = None, column: str = ""):
        self.row = row
        self.column = column
        super().__init__(message, term="history")


class ParameterError(DerivpadError, ValueError):
    """A parameter value is not a finite number (or a valid expression of other parameters)."""

    def __init__(self, message: str, name: str = ""):
        self.name = name
        super().__init__(message)


class UnitError(DerivpadError, ValueError):
    """A unit that pint does not know, or terms of the equation with different dimensions."""

    def __init__(self, message: str, name: str = "", terms: tuple = (), dimensions: tuple = ()):
        self.name = name
        self.terms = tuple(terms)
        self.dimensions = tuple(dimensions)
        super().__init__(message)


class ExportError(DerivpadError, OSError):
    """An output cannot be produced or written as asked (format, missing samples, place)."""


class PackageRefusedError(ExportError):
    """The notebook cannot be packaged as it is: a cell failed, or a derivation is not verified."""

    def __init__(self, message: str, failures: tuple = ()):
        self.failures = tuple(failures)
        super().__init__(message)


class ManifestMismatchError(ExportError):
    """A package's files differ from its manifest: names each missing, extra or altered file."""

    def __init__(self, message: str, missing: tuple = (), extra: tuple = (), altered: tuple = ()):
        self.missing = tuple(missing)
        self.extra = tuple(extra)
        self.altered = tuple(altered)
        super().__init__(message)


class SignatureError(ExportError):
    """A key, a signature or a trust list that cannot be used as given (a wrong passphrase, a
    role the key may not sign, a file that is not a derivpad key); ``what`` names the part."""

    def __init__(self, message: str, what: str = ""):
        self.what = what
        super().__init__(message)


class MissingExtraError(DerivpadError, ImportError):
    """An optional dependency is not installed; the message gives the pip command."""

    def __init__(self, message: str, extra: str = ""):
        self.extra = extra
        super().__init__(message)


def import_extra(names, what: str, extra: str = "notebook") -> tuple:
    """Import optional modules, or raise MissingExtraError naming the pip command for ``what``."""
    import importlib
    try:
        return tuple(importlib.import_module(name) for name in names)
    except ImportError as exc:
        msg = f"{what} needs {exc.name or names[0]}; install it with: {install_command(extra)}"
        raise MissingExtraError(msg, extra=extra) from exc


def install_command(extra: str) -> str:
    """The pip command for an extra that works from where derivpad is: from a source checkout
    (a pyproject.toml beside the package) the checkout's own path, else the published name."""
    import json
    from importlib import metadata
    from pathlib import Path
    from urllib.parse import unquote, urlparse
    root = Path(__file__).resolve().parents[1]
    if not (root / "pyproject.toml").is_file():
        try:  # installed from a local folder: pip records where (PEP 610, direct_url.json)
            url = json.loads(metadata.distribution("derivpad").read_text("direct_url.json")
                             or "{}").get("url", "")
        except (metadata.PackageNotFoundError, ValueError, OSError):
            url = ""
        root = Path(unquote(urlparse(url).path)) if url.startswith("file:") else None
    if root is not None and (root / "pyproject.toml").is_file():
        return f'pip install "{root}[{extra}]"'
    return f'pip install "derivpad[{extra}]"'


class RenderSettingError(DerivpadError, ValueError):
    """A renderer was given a setting it does not have, or a value it does not allow."""

    def __init__(self, message: str, setting: str):
        self.setting = setting
        super().__init__(message)


class SolveError(DerivpadError, ArithmeticError):
    """Y(s), its poles or its partial fractions cannot be found in the form asked for."""


class VerificationFailedError(DerivpadError, ArithmeticError):
    """The engine's own check found that a solution does not satisfy the problem."""

    def __init__(self, message: str, checks: tuple = ()):
        self.checks = tuple(checks)
        super().__init__(message)


class WorkerError(DerivpadError, RuntimeError):
    """A worker process of a load-case run stopped before its chunk was done (a script that
    starts workers without a ``__main__`` guard, memory running out, the process killed)."""

    def __init__(self, message: str, scheduler=None):
        self.scheduler = scheduler
        super().__init__(message)
