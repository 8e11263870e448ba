"""Thin glue between the plans and `grower.solver`: one house model, one run."""

from __future__ import annotations

import numpy as np

from grower import solver
from grower.plans.model import Model


def free_float(mdl: Model, times_s, boundary_c, initial_c, gains_w) -> solver.Trajectory:
    """No heat: the exact trajectory of every member."""
    return solver.free_float(mdl.network, times_s, boundary_c, initial_c, gains_w)


def hold(mdl: Model, times_s, boundary_c, initial_c, setpoint_c, gains_w) -> solver.HoldResult:
    """An unlimited heater holding the air at `setpoint_c` (no venting)."""
    return solver.hold(mdl.network, times_s, boundary_c, initial_c, setpoint_c, gains_w)


def thermostat(
    mdl: Model, times_s, boundary_c, initial_c, setpoint_c, q_max_w, gains_w, vent_c=None
) -> solver.Trajectory:
    """A heater of output `q_max_w` on a thermostat, with venting above `vent_c`."""
    return solver.thermostat(
        mdl.network, times_s, boundary_c, initial_c, setpoint_c, q_max_w, vent_c, gains_w
    )


def held_steady_state(
    mdl: Model, boundary_c: np.ndarray, gains_w: np.ndarray, setpoint_c: float
) -> np.ndarray:
    """Node temperatures with the air held at `setpoint_c` and the rest in steady state.

    With the air fixed, every other node i obeys Σ_j G_ij (T_j − T_i) + Σ_b H_ib (U_b − T_i)
    + P_i = 0: a small linear system.
    """
    net = mdl.network
    n = net.n_nodes
    x = np.full(n, float(setpoint_c))
    if n == 1:
        return x
    g = np.asarray(net.coupling_w_per_k, float)
    h = np.asarray(net.boundary_w_per_k, float)
    rest = np.arange(1, n)
    lap = np.diag(g.sum(axis=1) + h.sum(axis=1)) - g
    rhs = h @ np.asarray(boundary_c, float) + np.asarray(gains_w, float)
    a = lap[np.ix_(rest, rest)]
    b = rhs[rest] + g[rest, 0] * setpoint_c
    x[rest] = np.linalg.solve(a, b)
    return x
