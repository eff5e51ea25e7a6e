"""core/checking/window.py: the window's rules as documented (docs/verification.md): five
slowest time constants or two slowest periods past the last switch, at most 200 fastest periods
of a lightly damped oscillation, at most ten growth times. Facts of the trade: a first-order
response is within e⁻⁵ < 1 % of its end state after five time constants (common practice,
no source)."""

import math

import pytest

from derivpad.core.checking.window import window_end


def test_five_time_constants_after_the_last_switch():
    assert window_end([-2 + 0j], [1.0]) == pytest.approx(1.0 + 5 / 2)
    assert math.exp(-5) < 0.01


def test_two_periods_when_the_oscillation_is_slower_than_the_decay():
    # -2 ± 3i: 5/2 = 2.5 s against two periods 4π/3 = 4.19 s
    assert window_end([complex(-2, 3), complex(-2, -3)], [1.0]) == \
        pytest.approx(1 + 4 * math.pi / 3)


def test_a_lightly_damped_oscillation_is_capped_at_200_periods():
    zs = [complex(-1e-6, 100), complex(-1e-6, -100)]
    assert window_end(zs) == pytest.approx(200 * 2 * math.pi / 100)


def test_growth_and_the_caller_window():
    assert window_end([0.5 + 0j]) == pytest.approx(3.0 / 0.5)
    assert window_end([-1 + 0j], [2.0], t_end=7.5) == 7.5
    assert window_end([0j], [3.0]) == pytest.approx(6.0)   # integrators: as long again
