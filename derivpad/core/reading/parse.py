"""Safe whitelisting parser: equation text → SymPy objects, with source positions.

The text is never evaluated. A tokenizer accepts only numbers, names, primes and the
operators ``+ - * / ** ^ ( ) , =``; a recursive-descent parser builds SymPy objects directly
from the tokens. Anything else (attribute access, indexing, strings, keywords, names starting
with an underscore) is refused with :class:`~derivpad.errors.UnsafeInputError` before any
object is built, so no user text ever reaches ``eval``, ``exec`` or ``sympify``.

Grammar (``^`` and ``**`` are the same operator, right-associative)::

    equation := expr "=" expr
    expr     := ["+"|"-"] term (("+"|"-") term)*
    term     := factor (("*"|"/") factor | implicit factor)*     implicit: number followed by name or "("
    factor   := ("+"|"-") factor | power
    power    := atom [("^"|"**") factor]
    atom     := NUMBER | "(" expr ")" | NAME primes? ["^(" INT ")"] ["(" args ")"]

The unknown is the one name written with primes (``y'``, ``y''``) or with a parenthesised
order (``y^(4)``); ``y^(4)`` of the unknown is its fourth derivative, ``y^4`` its fourth power.

Size limits (``LIMITS``) are checked on the tokens and while parsing, before any arithmetic, so
no text can make the parser build a huge number or recurse without end: the text's length, a
literal's digits and decimal exponent, the nesting depth, a power of a power, a power's
exponent and the size of a number a power would make, and the derivative order.
"""

from __future__ import annotations

import keyword
import re
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp

from ...errors import ParseError, UnknownNameError, UnsafeInputError
from ..model.symbols import S, T

__all__ = ["LIMITS", "check_number_text", "ParsedEquation", "Term", "parse_equation", "parse_expression", "parse_value", "primed_names", "T", "S",
           "FUNCTIONS", "RESERVED_NAMES"]


FUNCTIONS = {
    "u": sp.Heaviside,
    "delta": sp.DiracDelta,
    "exp": sp.exp,
    "sin": sp.sin,
    "cos": sp.cos,
    "sinh": sp.sinh,
    "cosh": sp.cosh,
    "sqrt": sp.sqrt,
}
"""The only functions the text may call, by name."""

CONSTANTS = {"pi": sp.pi}

LIMITS = {
    "length": 5000,        # characters of one equation or value
    "digits": 40,          # digits of one number literal
    "exponent": 300,       # |decimal exponent| of a literal: 1e300 is the largest
    "depth": 60,           # nested brackets, function calls and signs
    "power": 100,          # |exponent| of a power with a whole or fractional number exponent
    "number_digits": 400,  # digits of a number a power of numbers would make
    "order": 12,           # highest derivative order
    "names": 30,           # distinct parameter names in one equation
}
"""What the parser accepts; beyond each, a ParseError names the limit and the column."""

_NOT_FINITE = {"nan", "inf", "infinity", "oo", "zoo"}
RESERVED_NAMES = frozenset({"t", "s"}) | set(FUNCTIONS) | set(CONSTANTS)

_TOKEN = re.compile(
    r"""
    (?P<ws>\s+)
  | (?P<number>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)
  | (?P<name>[A-Za-z_][A-Za-z_0-9]*)
  | (?P<op>\*\*|[-+*/^(),=])
  | (?P<prime>')
    """,
    re.VERBOSE,
)

_UNSAFE_CHARS = {
    ".": "attribute access ('.') is not part of the equation syntax",
    "[": "indexing ('[') is not part of the equation syntax",
    "]": "indexing (']') is not part of the equation syntax",
    "{": "braces are not part of the equation syntax",
    "}": "braces are not part of the equation syntax",
    ":": "':' is not part of the equation syntax",
    ";": "';' is not part of the equation syntax",
    '"': "string literals are not part of the equation syntax",
    "@": "'@' is not part of the equation syntax",
    "!": "'!' is not part of the equation syntax",
    "`": "'`' is not part of the equation syntax",
    "\\": "'\\' is not part of the equation syntax",
    "#": "comments ('#') are not part of the equation syntax",
}


@dataclass(frozen=True, slots=True)
class _Token:
    kind: str      # "number", "name", "op", "prime", "end"
    text: str
    start: int

    @property
    def end(self) -> int:
        return self.start + len(self.text)


@dataclass(frozen=True, slots=True)
class Term:
    """One top-level additive term of one side of the equation, with its place in the text."""

    expr: sp.Expr
    start: int
    end: int
    side: str  # "lhs" or "rhs"


@dataclass(frozen=True, slots=True)
class ParsedEquation:
    """The result of parsing: both sides as SymPy expressions, the unknown, and term positions."""

    text: str
    lhs: sp.Expr
    rhs: sp.Expr
    unknown: str
    terms: tuple[Term, ...]
    names: tuple[str, ...]  # parameter names in order of first appearance


def _tokenize(text: str) -> list[_Token]:
    if len(text) > LIMITS["length"]:
        raise ParseError(f"the text is {len(text):,} characters long; the limit is "
                         f"{LIMITS['length']:,} (split the load into named parameters or a "
                         "derivpad.forcing table)", text[:60] + "…", None)
    tokens: list[_Token] = []
    pos = 0
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if m is None:
            ch = text[pos]
            if ch in _UNSAFE_CHARS:
                raise UnsafeInputError(
                    f"{_UNSAFE_CHARS[ch]}; write the equation with numbers, names, primes, "
                    "+ - * / ^ and the functions " + ", ".join(sorted(FUNCTIONS)), text, pos)
            raise ParseError(f"unexpected character {ch!r}; the equation syntax allows numbers, "
                             "names, primes (') and + - * / ^ ( ) , =", text, pos)
        kind = m.lastgroup
        if kind != "ws":
            tok = _Token(kind, m.group(), pos)
            if kind == "name":
                _check_name_safe(tok, text)
            elif kind == "number":
                _check_literal(tok, text)
            tokens.append(tok)
        pos = m.end()
    tokens.append(_Token("end", "", len(text)))
    return tokens


def _check_name_safe(tok: _Token, text: str) -> None:
    if tok.text.startswith("_"):
        raise UnsafeInputError(
            f"names may not start with an underscore ({tok.text!r}); use a plain name such as 'F0'",
            text, tok.start, len(tok.text))
    if keyword.iskeyword(tok.text):
        raise UnsafeInputError(
            f"{tok.text!r} is a Python keyword, not part of the equation syntax; "
            "rename the parameter", text, tok.start, len(tok.text))


def _check_literal(tok: _Token, text: str) -> None:
    """A literal's digits and exponent within LIMITS, before it is read as a number."""
    mantissa, _, exponent = tok.text.lower().partition("e")
    digits = len(mantissa.replace(".", "").lstrip("0"))
    if digits > LIMITS["digits"]:
        raise ParseError(f"a number with {digits} digits; the limit is {LIMITS['digits']} "
                         "(write it with an exponent, e.g. 1.2e40)", text, tok.start,
                         len(tok.text))
    if exponent:
        value = int(exponent)  # already bounded: the text is at most LIMITS["length"] long
        lead = len(mantissa.split(".")[0].lstrip("0")) - 1 if mantissa.split(".")[0].strip("0") \
            else 0
        if abs(value + max(lead, 0)) > LIMITS["exponent"] or abs(value) > 10 ** 6:
            raise ParseError(f"the number {tok.text} is beyond the range derivpad reads "
                             f"(1e-{LIMITS['exponent']} to 1e{LIMITS['exponent']}); give the "
                             "value in a unit that brings it into range", text, tok.start,
                             len(tok.text))


def check_number_text(text: str, what: str) -> None:
    """The limits on a number literal, for numbers read outside an equation ('800 N/m')."""
    _check_literal(_Token("number", text, 0), text)


def _to_number(token: str) -> sp.Rational:
    """Read a decimal literal exactly: '0.8' is 4/5, not the nearest binary float."""
    frac = Fraction(token)
    return sp.Rational(frac.numerator, frac.denominator)


def _find_unknown(tokens: list[_Token], text: str) -> str | None:
    """The one name written with primes; failing that, the one written with an order y^(n)."""
    primed: dict[str, _Token] = {}
    ordered: dict[str, _Token] = {}
    for i, tok in enumerate(tokens):
        if tok.kind != "name":
            continue
        nxt = tokens[i + 1]
        if nxt.kind == "prime":
            primed.setdefault(tok.text, tok)
        elif (nxt.text == "^" and tokens[i + 2].text == "(" and tokens[i + 3].kind == "number"
              and tokens[i + 4].text == ")"):
            ordered.setdefault(tok.text, tok)
    found = primed or ordered
    if len(found) > 1:
        names = sorted(found)
        second = sorted(found.values(), key=lambda tk: tk.start)[1]
        raise ParseError(
            f"more than one name carries derivatives ({', '.join(names)}); a single equation has "
            "one unknown: pass unknown='...' or give a list of equations for a coupled system",
            text, second.start, len(second.text))
    return next(iter(found), None)


def primed_names(text: str) -> list[str]:
    """The names written with primes or an order y^(n) in ``text``, in order of appearance
    (the unknowns of one equation of a system)."""
    tokens = _tokenize(text)
    out: list[str] = []
    for i, tok in enumerate(tokens):
        if tok.kind != "name" or tok.text in out:
            continue
        nxt = tokens[i + 1]
        if nxt.kind == "prime" or (nxt.text == "^" and tokens[i + 2].text == "(" and
                                   tokens[i + 3].kind == "number" and tokens[i + 4].text == ")"):
            out.append(tok.text)
    return out


class _Parser:
    def __init__(self, text: str, tokens: list[_Token], unknown: str | None,
                 unknowns: tuple[str, ...] = ()):
        self.text = text
        self.tokens = tokens
        self.i = 0
        self.unknown = unknown
        self.funcs = {name: sp.Function(name)(T) for name in (unknowns or
                                                             ((unknown,) if unknown else ()))}
        self.func = sp.Function(unknown)(T) if unknown else None
        self.names: list[str] = []
        self.symbols: dict[str, sp.Symbol] = {}
        self.depth = 0

    def nest(self, tok: _Token) -> None:
        """One level deeper (a bracket, a call, a sign); refused beyond LIMITS["depth"]."""
        self.depth += 1
        if self.depth > LIMITS["depth"]:
            raise self.error(f"nested more than {LIMITS['depth']} levels deep (brackets, "
                             "function calls and signs); simplify the expression", tok)

    # -- token helpers -------------------------------------------------------------------
    @property
    def tok(self) -> _Token:
        return self.tokens[self.i]

    def advance(self) -> _Token:
        tok = self.tokens[self.i]
        self.i += 1
        return tok

    def expect(self, text: str, what: str) -> _Token:
        if self.tok.text != text:
            got = "the end of the text" if self.tok.kind == "end" else repr(self.tok.text)
            raise ParseError(f"expected {what} but found {got}", self.text, self.tok.start,
                             max(1, len(self.tok.text)))
        return self.advance()

    def error(self, message: str, tok: _Token | None = None) -> ParseError:
        tok = tok or self.tok
        return ParseError(message, self.text, tok.start, max(1, len(tok.text)))

    # -- grammar -------------------------------------------------------------------------
    def expr(self, side: str | None = None, terms: list | None = None) -> sp.Expr:
        parts = []
        sign = 1
        start = self.tok.start
        if self.tok.text in "+-" and self.tok.kind == "op":
            sign = -1 if self.advance().text == "-" else 1
            start = self.tok.start
        while True:
            value = self.term()
            end = self.tokens[self.i - 1].end
            if terms is not None:
                terms.append(Term(sign * value, start, end, side))
            parts.append(sign * value)
            if self.tok.kind == "op" and self.tok.text in ("+", "-"):
                sign = -1 if self.advance().text == "-" else 1
                start = self.tok.start
                continue
            return sp.Add(*parts)

    def term(self) -> sp.Expr:
        value = self.factor()
        while True:
            tok = self.tok
            if tok.kind == "op" and tok.text in ("*", "/"):
                self.advance()
                rhs = self.factor()
                if tok.text == "*":
                    value = value * rhs
                else:
                    if rhs == 0:
                        raise self.error("division by zero", tok)
                    value = value / rhs
            elif self.tokens[self.i - 1].kind == "number" and (tok.kind == "name" or tok.text == "("):
                value = value * self.factor()  # implicit multiplication: 2y', 3t, 2(t - 1)
            elif tok.kind in ("name", "number") or tok.text == "(":
                prev = self.tokens[self.i - 1]
                raise self.error(
                    f"missing operator between {prev.text!r} and {tok.text!r}; write '*' "
                    "(implicit multiplication is allowed only after a number, as in 2y')", tok)
            else:
                return value

    def factor(self) -> sp.Expr:
        if self.tok.kind == "op" and self.tok.text in ("+", "-"):
            self.nest(self.tok)
            sign = -1 if self.advance().text == "-" else 1
            value = sign * self.factor()
            self.depth -= 1
            return value
        return self.power()

    def power(self) -> sp.Expr:
        base = self.atom()
        if self.tok.kind == "op" and self.tok.text in ("^", "**"):
            op = self.advance()
            start = self.i
            exponent = self.factor()
            if any(t.kind == "op" and t.text in ("^", "**") for t in self.tokens[start:self.i]):
                raise self.error("a power of a power (such as 9^9^9 or 2^(t^2)) is not "
                                 "accepted; write the exponent as one number", op)
            self.check_power(base, exponent, op)
            if base == 0 and exponent.is_number and exponent.is_real and exponent <= 0:
                raise self.error("a power of zero with an exponent of zero or below (0^-1 is a "
                                 "division by zero)", op)
            return sp.Pow(base, exponent)
        return base

    def check_power(self, base, exponent, op: _Token) -> None:
        """Refuse a power that would be huge before SymPy forms it (LIMITS power, digits)."""
        if exponent.has(T) and base.has(T):
            return  # t^t and the like are refused later as forcing the table cannot transform
        if not exponent.is_number:
            return
        e = exponent
        if e.is_real is False:
            raise self.error("a complex exponent is not accepted", op)
        try:
            size = abs(float(e))
        except (TypeError, ValueError):
            return
        if size > LIMITS["power"]:
            raise self.error(f"an exponent of {sp.sstr(e)} is beyond the limit of "
                             f"{LIMITS['power']}; rewrite the term", op)
        if base.is_number and base != 0:
            try:
                digits = abs(float(sp.log(abs(base), 10).evalf(15))) * size
            except (TypeError, ValueError):
                return
            if digits > LIMITS["number_digits"]:
                raise self.error(f"this power would be a number of about {digits:.0f} digits; "
                                 f"the limit is {LIMITS['number_digits']}", op)

    def atom(self) -> sp.Expr:
        tok = self.tok
        if tok.kind == "number":
            self.advance()
            return _to_number(tok.text)
        if tok.text == "(":
            self.nest(tok)
            self.advance()
            if self.tok.text == ")":
                raise self.error("empty parentheses")
            value = self.expr()
            self.expect(")", "')' to close the '(' opened at column %d" % (tok.start + 1))
            self.depth -= 1
            return value
        if tok.kind == "name":
            self.advance()
            return self.name(tok)
        if tok.kind == "prime":
            raise self.error("a prime (') must follow the unknown's name, as in y' or y''")
        if tok.kind == "end":
            raise self.error("the text ends where a number, a name or '(' was expected")
        raise self.error(f"unexpected {tok.text!r}; a number, a name or '(' was expected")

    def name(self, tok: _Token) -> sp.Expr:
        name = tok.text
        if name in self.funcs:
            return self.unknown_term(tok, self.funcs[name])
        if self.tok.kind == "prime":
            which = (f"the unknown {self.unknown!r}" if len(self.funcs) <= 1 else
                     "the unknowns (" + ", ".join(self.funcs) + ")")
            raise self.error(f"only {which} may carry primes", tok)
        if self.tok.text == "(":
            return self.call(tok)
        if name in FUNCTIONS:
            raise self.error(f"{name!r} is a function: write {name}(...)", tok)
        if name == "t":
            return T
        if name.lower() in _NOT_FINITE:
            raise self.error(f"{name!r} is not a finite number; give a finite value", tok)
        if name in CONSTANTS:
            return CONSTANTS[name]
        if name == "s":
            raise UnknownNameError(
                "'s' is the Laplace variable and cannot be used in the equation; rename the "
                "parameter", name, self.text, tok.start)
        if name not in self.symbols:
            if len(self.symbols) >= LIMITS["names"]:
                raise self.error(f"more than {LIMITS['names']} parameter names; combine "
                                 "parameters or give numbers in their place", tok)
            # Parameters are real and positive unless given values; the derivation states this.
            self.symbols[name] = sp.Symbol(name, positive=True)
            self.names.append(name)
        return self.symbols[name]

    def unknown_term(self, tok: _Token, func) -> sp.Expr:
        order = 0
        while self.tok.kind == "prime":
            self.advance()
            order += 1
            if order > LIMITS["order"]:
                raise self.error(f"derivatives above order {LIMITS['order']} are not accepted "
                                 "(see docs/input-syntax.md)", tok)
        if order == 0 and self.tok.text == "^" and self.tokens[self.i + 1].text == "(" \
                and self.tokens[self.i + 2].kind == "number" and self.tokens[self.i + 3].text == ")":
            num = self.tokens[self.i + 2]
            if not num.text.isdigit():
                raise self.error("a derivative order y^(n) must be a whole number", num)
            if len(num.text) > 3 or int(num.text) > LIMITS["order"]:
                raise self.error(f"derivatives above order {LIMITS['order']} are not accepted "
                                 "(see docs/input-syntax.md)", num)
            order = int(num.text)
            self.i += 4
        if self.tok.text == "(":
            open_tok = self.advance()
            if not (self.tok.text == "t" and self.tokens[self.i + 1].text == ")"):
                raise ParseError(
                    f"the unknown may only be written {tok.text}(t); a shifted argument such as "
                    f"{tok.text}(t - c) makes a delay equation, which this method does not solve",
                    self.text, open_tok.start, 1)
            self.i += 2
        return func.diff(T, order) if order else func

    def call(self, tok: _Token) -> sp.Expr:
        name = tok.text
        if name not in FUNCTIONS:
            raise UnknownNameError(
                f"unknown function {name!r}; the functions available are "
                + ", ".join(sorted(FUNCTIONS)), name, self.text, tok.start)
        self.nest(tok)
        self.advance()  # "("
        if self.tok.text == ")":
            raise self.error(f"{name}() needs an argument, as in {name}(t)")
        arg = self.expr()
        if self.tok.text == ",":
            raise self.error(f"{name}() takes one argument")
        self.expect(")", f"')' to close {name}(")
        self.depth -= 1
        return FUNCTIONS[name](arg)


def parse_equation(text: str, unknown: str | None = None,
                   unknowns: tuple[str, ...] = ()) -> ParsedEquation:
    """Parse one equation ``lhs = rhs`` into SymPy objects without evaluating any text.

    Parameters
    ----------
    text : str
        The equation, e.g. ``"m*x'' + c*x' + k*x = F0*u(t - t1)"``.
    unknown : str, optional
        The unknown's name, when no name carries primes (or to choose one).
    unknowns : tuple of str, optional
        For one equation of a coupled system: every unknown's name (any of them may carry
        primes); ``unknown`` is then the first.

    Returns
    -------
    ParsedEquation
        Both sides, the unknown's name, the top-level terms with their columns, the parameters.

    Raises
    ------
    ParseError, UnsafeInputError, UnknownNameError
        Malformed text, Python constructs, unknown functions; each names the column.
    """
    if not isinstance(text, str):
        msg = f"the equation must be a string or a SymPy Eq, not {type(text).__name__}"
        raise ParseError(msg)
    if not text.strip():
        raise ParseError("the equation is empty; write it as, e.g., y'' + 4*y = u(t - 1)")
    tokens = _tokenize(text)
    if unknowns:
        unknown = unknowns[0]
    elif unknown is None:
        unknown = _find_unknown(tokens, text)
        if unknown is None:
            raise ParseError("no derivative of an unknown found; write derivatives with primes "
                             "(y', y'') or pass unknown='y'", text, 0, len(text))
    elif not re.fullmatch(r"[A-Za-z][A-Za-z_0-9]*", unknown) or unknown in RESERVED_NAMES:
        raise ParseError(f"{unknown!r} cannot be the unknown's name; use a plain name such as 'y'")
    if unknown in RESERVED_NAMES:
        raise ParseError(f"{unknown!r} is reserved ({'time' if unknown == 't' else 'a function'}); "
                         "call the unknown y or x", text)
    equals = [tok for tok in tokens if tok.text == "="]
    if not equals:
        raise ParseError("the equation has no '='; write it as left side = right side", text,
                         len(text) - 1)
    if len(equals) > 1:
        raise ParseError("the equation has more than one '='", text, equals[1].start)
    parser = _Parser(text, tokens, unknown, tuple(unknowns))
    terms: list[Term] = []
    lhs = parser.expr("lhs", terms)
    parser.expect("=", "'=' or an operator")
    if parser.tok.kind == "end":
        raise parser.error("the right side of '=' is empty; write 0 for a free response")
    rhs = parser.expr("rhs", terms)
    if parser.tok.kind != "end":
        raise parser.error(f"unexpected {parser.tok.text!r} after the end of the equation")
    return ParsedEquation(text, lhs, rhs, unknown, tuple(terms), tuple(parser.names))


def _parse_fragment(text: str, what: str, unknowns: tuple[str, ...], primes: bool) -> sp.Expr:
    """An expression (no '='), with the unknowns ``unknowns`` (primes allowed when
    ``primes``); the same whitelisting grammar as equations, never evaluated."""
    if not isinstance(text, str):
        raise ParseError(f"the {what} must be text, not {type(text).__name__}")
    if not text.strip():
        raise ParseError(f"the {what} is empty")
    tokens = _tokenize(text)
    if any(tok.text == "=" for tok in tokens):
        pos = next(tok.start for tok in tokens if tok.text == "=")
        raise ParseError(f"the {what} may not contain '='", text, pos)
    if not primes and any(tok.kind == "prime" for tok in tokens):
        pos = next(tok.start for tok in tokens if tok.kind == "prime")
        raise ParseError(f"the {what} may not contain derivatives", text, pos)
    parser = _Parser(text, tokens, unknowns[0] if unknowns else None, tuple(unknowns))
    value = parser.expr()
    if parser.tok.kind != "end":
        raise parser.error(f"unexpected {parser.tok.text!r} in the {what}")
    return value


def parse_value(text: str, what: str = "value") -> sp.Expr:
    """Parse a number or an expression of parameters (an initial condition, a parameter value).

    Uses the same whitelisting grammar as equations; ``t`` and the functions are allowed.
    """
    return _parse_fragment(text, what, (), primes=False)


def parse_expression(text: str, unknowns: tuple[str, ...], what: str = "expression") -> sp.Expr:
    """Parse an expression of the unknowns y_j(t) (primes allowed), parameters and t, such as
    a derived quantity ``"k2*(x2 - x1)"``; the same whitelisting grammar, never evaluated."""
    return _parse_fragment(text, what, tuple(unknowns), primes=True)
