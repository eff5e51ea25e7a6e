"""core/model/exprtree.py: expressions to a JSON tree and back, without evaluating text; exact
for 50-digit floats, labels, matrices and relations; anything outside the table refused."""

import json

import pytest
import sympy as sp

from derivpad import ParseError
from derivpad.core.model.exprtree import from_tree, to_tree
from derivpad.core.model.labels import InitialValue, Laplace, PartLabel, PolynomialLabel
from derivpad.core.model.symbols import S, T


@pytest.mark.parametrize("expr", [
    sp.exp(-2 * T) * sp.cos(3 * T) * sp.Heaviside(T - 1) + sp.Rational(2, 13),
    sp.Float("-0.2000438628394260343675524967795718355678120732958612", 50) + S,
    sp.Mul(sp.exp(-S), 2 / S, evaluate=False),
    InitialValue("x2", 1) + PolynomialLabel("Delta") * PartLabel("X1", 3),
    Laplace(sp.Function("y")(T).diff(T, 2)),
    sp.ImmutableMatrix([[S ** 2 + 1, -2], [-2, S]]),
    sp.StrictGreaterThan(sp.Symbol("k", positive=True), 4, evaluate=False),
])
def test_round_trip_is_exact(expr):
    back = from_tree(json.loads(json.dumps(to_tree(expr))))
    assert back == expr and sp.srepr(back) == sp.srepr(expr)


def test_refuses_what_is_not_in_its_table():
    with pytest.raises(ParseError, match="no tree form"):
        to_tree(sp.Integral(T, T))
    with pytest.raises(ParseError, match="bad symbol name"):
        from_tree({"sym": "__import__('os')"})
    with pytest.raises(ParseError, match="unreadable"):
        from_tree(["eval", {"int": "1"}])
