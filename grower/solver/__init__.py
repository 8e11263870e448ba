"""Exact response of a linear thermal RC network to a piecewise-linear forecast.

The network (one node for the lumped model, two for air and mass, or any small RC
network) obeys

    C_i dT_i/dt = sum_j G_ij (T_j - T_i) + sum_b H_ib (U_b(t) - T_i) + P_i(t),

that is ``dx/dt = A x + B u(t)`` with ``u = (U, P)`` linear between the forecast samples.
``A = C^-1 L`` with ``L`` symmetric and negative definite (every node has a path to a
boundary), so ``A = V diag(lam) V^-1`` with real ``lam < 0`` and a well-conditioned
``V = C^-1/2 Q`` (``Q`` orthogonal). In the modal coordinates ``z = V^-1 x`` each mode is
a scalar equation and one step of length ``s`` from ``z0`` under an input ``beta + gamma t``
is exact (a first-order hold):

    z(s) = e^(lam s) z0 + s phi1(lam s) beta + s^2 phi2(lam s) gamma,
    phi1(x) = (e^x - 1)/x,  phi2(x) = (e^x - 1 - x)/x^2,  phi3(x) = (e^x - 1 - x - x^2/2)/x^3.

This is the matrix exponential of the augmented block matrix ``[[A, B, 0], [0, 0, I/h],
[0, 0, 0]] h`` (Van Loan 1978) written through the eigenvectors; for one node it is the
closed form ``T = T_inf + (T0 - T_inf) exp(-t/tau)``. The coefficients are computed once
per distinct step length; there is no step-size error. Integrals over a step (energy,
degree-seconds) use ``phi1..phi3`` and are exact too.

Inside a step a temperature or a power is ``g(s) = a + b s + sum_i c_i exp(lam_i s)``.
Its inflection points are the zeros of ``sum_i c_i lam_i^2 exp(lam_i s)`` (closed form for
two terms; for more, Rolle's theorem on ``exp(-lam_1 s) g''`` gives a recursion); between
them ``g`` is convex or concave, so extrema and threshold crossings are bracketed and found
by a safeguarded Newton iteration on the exact solution. No grid interpolation is involved.

The thermostat is the one nonlinearity. Modes (per member): ``FLOAT`` (heater off),
``FULL`` (heater at ``q_max_w``, air below the setpoint), ``HOLD`` (air held at the setpoint
by a heater power in ``[0, q_max_w]``), ``VENT`` (air held at the vent temperature, excess
heat removed). While a mode holds, a run of whole steps is a linear recurrence, computed
for many steps at once; a step in which the mode changes is split at the exact switching
instants (in Python floats: numpy's per-call overhead would dominate on such tiny
arrays). Members are independent, so an ensemble runs the same machine per member.
Setpoint and vent temperature are piecewise constant, the value at a step's start.

Reading order: `network` (the network and its public modal solution, `Modes`),
`stepping` (phi functions, step tables, the recurrence of whole steps), `problem` (input
validation, modal forcing), `freefloat` (the free run: one recurrence per mode; for many
members, `segments`: one exact step per run of collinear input, the state kept at the
knots where an input bends and the grid values computed when asked for), `explin` (the
exact solution inside a step as arrays: roots and extrema), `analysis` (crossings,
minima, hours below, on the steps or on the runs), then the thermostat: `modes` (the
four modes), `runs` (a run's inputs and results), `serial` (the one mode machine, a
member at a time: strides of whole steps in one mode) and `scalar` (the steps in which
the mode changes, split at the exact instants), `control` (`thermostat`, `hold`).
`results` holds the dataclasses.
A raise of the setpoint with an unlimited heater, or a vent temperature below the air,
moves the air node at once (an impulse of heat or of vent removal, counted in the
energies; temperatures are stored as the value just before such a jump).

All arrays are SI: s, degC, K, W, J, J/K, W/K.

References
----------
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Transactions on Automatic Control AC-23(3):395-404.
C. Moler and C. Van Loan (2003), "Nineteen dubious ways to compute the exponential of a
matrix, twenty-five years later", SIAM Review 45(1):3-49, doi:10.1137/S0036144502418010.
M. Hochbruck and A. Ostermann (2010), "Exponential integrators", Acta Numerica
19:209-286 (the phi functions).
G. F. Franklin, J. D. Powell and M. L. Workman (1998), *Digital Control of Dynamic
Systems*, 3rd ed., Addison-Wesley (the first-order, "triangle", hold equivalent).
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
"""

from __future__ import annotations

from .analysis import analyse
from .control import hold, thermostat
from .freefloat import first_crossing, free_float
from .modes import FLOAT, FULL, HOLD, MODE_NAMES, VENT
from .network import Modes, Network, lumped, modal_decomposition
from .results import Crossing, HoldResult, Switches, Trajectory

__all__ = [
    "FLOAT",
    "FULL",
    "HOLD",
    "MODE_NAMES",
    "VENT",
    "Crossing",
    "HoldResult",
    "Modes",
    "Network",
    "Switches",
    "Trajectory",
    "analyse",
    "first_crossing",
    "free_float",
    "hold",
    "lumped",
    "modal_decomposition",
    "thermostat",
]
