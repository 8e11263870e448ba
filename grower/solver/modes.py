"""Thermostat modes and the tolerances of the mode machine."""

from __future__ import annotations

#: thermostat modes, as stored in `Trajectory.mode` and `Switches.mode`
FLOAT, FULL, HOLD, VENT = 0, 1, 2, 3
MODE_NAMES = ("float", "full", "hold", "vent")

#: air within this of a setpoint or vent temperature counts as at it [K]; far above the
#: round-off of a root found on the exact solution (~1e-12 K), far below any physics
TOL_K = 1e-9
#: switches allowed inside one step before the run is declared inconsistent
MAX_SWITCHES = 24
