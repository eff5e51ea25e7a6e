"""The built-in scenario: a pump skid on spring isolators hit by a pressure-surge pulse.

Data of our own, for demonstration only. A 1200 kg skid on isolators of total stiffness
480 kN/m with 2.4 kN·s/m of damping (natural frequency 20 rad/s, 5 % of critical damping)
takes a 6 kN force from a pressure surge in its piping, from t = 0.02 s to 0.07 s.
"""

from __future__ import annotations

from .core.model.derivation import Derivation
from .core.engine import derive

__all__ = ["DEMO_EQUATION", "DEMO_ICS", "DEMO_PARAMS", "DEMO_TIMES", "DEMO_TITLE", "DEMO_UNITS",
           "demo"]

DEMO_TITLE = "Pump skid on spring isolators: response to a pressure-surge pulse"
DEMO_EQUATION = "m*x'' + c*x' + k*x = F0*(u(t - t1) - u(t - t2))"
DEMO_ICS = {"x(0)": 0, "x'(0)": 0}
DEMO_PARAMS = {
    "m": "1200 kg",       # skid and pump
    "c": "2.4 kN*s/m",    # isolator damping
    "k": "480 kN/m",      # isolator stiffness
    "F0": "6 kN",         # surge force
    "t1": "20 ms",        # surge arrives
    "t2": "70 ms",        # surge ends
}
DEMO_UNITS = {"x": "mm", "t": "s"}
DEMO_TIMES = (0.0, 0.02, 0.05, 0.07, 0.1, 0.15, 0.2, 0.3, 0.5, 1.0)


def demo() -> Derivation:
    """Derive the built-in scenario."""
    return derive(DEMO_EQUATION, ics=DEMO_ICS, params=DEMO_PARAMS, units=DEMO_UNITS)
