"""Forcing builders in Heaviside form: step, ramp, pulses, load tables, impulses, switched waves.

Each returns a :class:`Forcing` (``.expr`` in unit steps and impulses, ``.description``);
forcings add, and a Forcing given as a parameter value replaces that name on the right side::

    from derivpad import forcing
    load = forcing.table([(0, 0), (0.01, 5000), (0.03, 0)])
    derivpad.derive("m*x'' + k*x = F", ics=..., params={"m": 900, "k": 3.6e6, "F": load})
"""

from .core.reading.history import history, read_history
from .core.reading.periodic import PeriodicLoad, periodic
from .core.reading.forcing import (Forcing, impulse, pulse, ramp, step, switched_cosine, switched_exp,
                           switched_sine, table, triangle, window)

__all__ = sorted(["Forcing", "impulse", "pulse", "ramp", "step", "switched_cosine",
                  "switched_exp", "switched_sine", "table", "triangle", "window", "history", "read_history",
                  "PeriodicLoad", "periodic"])
