"""core/model/derivation.py: one class for one unknown or many; the squeeze happens at the edge
(python-control's convention for SISO as the 1×1 case). References: y' + 2y = 4u(t - 1),
y(0⁻) = 1 has y = e^{-2t} + 2(1 - e^{-2(t-1)})u(t - 1) (first-order step response, any
differential-equations text; from memory)."""

import math

import numpy as np
import pytest
import sympy as sp

import derivpad
from derivpad import ParameterError
from derivpad.core.model.symbols import T


def _exact(t):
    return math.exp(-2 * t) + (2 * (1 - math.exp(-2 * (t - 1))) if t >= 1 else 0.0)


def test_one_unknown_is_squeezed_and_the_mappings_stay_available():
    d = derivpad.derive("y' + 2*y = 4*u(t - 1)", {"y(0)": 1})
    assert d.solution == d.solutions["y"] and d.transform == d.transforms["y"]
    assert d.intervals == d.interval_map["y"] and d.unknown == "y"
    times = np.array([0.5, 1.0, 2.5])
    assert np.allclose(d(times), [_exact(t) for t in times], rtol=1e-14)
    assert set(d.values_at(times)) == {"y"}
    assert isinstance(d.piecewise(), sp.Piecewise)
    assert float(d.piecewise().subs(T, 2.5)) == pytest.approx(_exact(2.5), rel=1e-14)
    assert d.breakpoints == (1,)
    assert repr(d).endswith("verification passed>")


def test_several_unknowns_are_keyed_and_symbols_need_values():
    d = derivpad.derive(["x1' + x1 - x2 = u(t)", "x2' + x2 = 0"], {"x1(0)": 0, "x2(0)": 1},
                        derived={"gap": "x1 - x2"})
    values = d([0.7])
    assert set(values) == {"x1", "x2", "gap"}
    # x2 = e^{-t}; x1' + x1 = 1 + e^{-t}, x1(0) = 0 → x1 = 1 - e^{-t} + t e^{-t}
    assert values["x2"][0] == pytest.approx(math.exp(-0.7), rel=1e-14)
    assert values["x1"][0] == pytest.approx(1 - math.exp(-0.7) + 0.7 * math.exp(-0.7),
                                            rel=1e-14)
    assert "2 unknowns" in repr(d)
    symbolic = derivpad.derive("y' + a*y = u(t)", {"y(0)": 0})
    with pytest.raises(ParameterError, match="symbolic parameters"):
        symbolic([1.0])
