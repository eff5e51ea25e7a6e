"""core/reading/values.py: values read as written — decimals exactly, quantities in SI, and
nothing that is not a finite number."""

import math

import pytest
import sympy as sp

from derivpad import InitialConditionError, ParameterError
from derivpad.core.reading.values import mapping_of, read_parameter, to_exact


def test_decimals_are_read_as_written():
    assert to_exact(0.8, "k") == sp.Rational(4, 5)      # not 0.8000000000000000444…
    assert to_exact("1.25e3", "k") == 1250
    assert to_exact(sp.Float("0.1"), "k") == sp.Rational(1, 10)


def test_quantities_go_to_exact_si():
    value, quantity = read_parameter("k", "480 kN/m", {})
    assert value == 480000 and quantity.si_unit == "N/m"
    value, quantity = read_parameter("m", 2, {"m": "kg"})
    assert value == 2 and quantity.given == "2 kg"


@pytest.mark.parametrize("bad", [True, math.nan, math.inf, "2 + ", object()])
def test_what_is_not_a_finite_number_is_refused(bad):
    with pytest.raises(ParameterError):
        to_exact(bad, "k")


def test_a_mapping_is_required():
    assert mapping_of(None, "params", "{}") == {}
    with pytest.raises(ParameterError, match="must be a mapping"):
        mapping_of([1, 2], "params", "{'k': 800}")
    with pytest.raises(InitialConditionError):
        mapping_of("y(0)=0", "ics", "{}")
