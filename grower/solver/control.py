"""The public thermostat and hold runs, and the exact peak of the held power.

References
----------
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Transactions on Automatic Control AC-23(3):395-404.
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
"""

from __future__ import annotations

import numpy as np

from .analysis import clamp_explin, pieces_of, scatter_min
from .explin import step_profile
from .modes import HOLD
from .network import Network, float_array
from .problem import as_series, as_times, make_problem
from .results import ControlInputs, HoldResult, Trajectory
from .runs import Run


def _control(setpoint_c, q_max_w, vent_c, nt):  # type: ignore[no-untyped-def]
    sp = as_series(setpoint_c, "setpoint_c", nt, None)
    if vent_c is None:
        vt = np.full((1, nt), np.inf)
    else:
        vt = float_array(vent_c, "vent_c")
        if np.any(np.isnan(vt)) or np.any(vt == -np.inf):
            raise ValueError("vent_c contains NaN or -inf")
        vt = as_series(np.where(np.isinf(vt), 1e300, vt), "vent_c", nt, None)
        vt = np.where(vt >= 1e300, np.inf, vt)
    if np.any(np.broadcast_to(vt, np.broadcast_shapes(vt.shape, sp.shape)) < sp):
        raise ValueError("vent_c must not be below setpoint_c")
    q = float_array(q_max_w, "q_max_w")
    if q.ndim > 1 or np.any(np.isnan(q)) or np.any(q < 0):
        raise ValueError("q_max_w must be >= 0 (inf for no limit), a number or one per member")
    return sp, vt, q.reshape(-1)


def thermostat(
    network: Network,
    times_s: np.ndarray,
    boundary_c: np.ndarray,
    initial_c: np.ndarray,
    setpoint_c: float | np.ndarray,
    q_max_w: float | np.ndarray,
    vent_c: float | np.ndarray | None = None,
    gains_w: np.ndarray | None = None,
) -> Trajectory:
    """Exact run with a thermostat heater of limited output on the air node, and venting.

    The heater gives what holds the air at the setpoint, clipped to ``[0, q_max_w]``:
    saturated, the house floats with ``q_max_w``; warmer than the setpoint it floats with
    the heater off; at the vent temperature the air is held there and the excess heat is
    removed (``vent_w``, ``vent_j``) instead of being stored. Switching instants are found
    inside the steps on the exact solution. Vectorised over members; members that switch
    mode inside a step are split there.

    Parameters
    ----------
    network, times_s, boundary_c, initial_c, gains_w : as for `free_float`
    setpoint_c : number, (N,) or (M, N) heating setpoint [degC], constant over each step
        at its value at the step's start
    q_max_w : heater output limit [W], >= 0, may be inf; a number or one per member
    vent_c : None (no venting), number, (N,) or (M, N) vent temperature [degC], >= the
        setpoint; +inf entries mean no venting in that step

    Returns
    -------
    Trajectory

    Notes
    -----
    Runs of whole steps in one mode are a linear recurrence: one particular solution per
    mode over the whole horizon plus the decay of the state's deviation from it, checked
    step by step (end values and a curvature bound) against the mode's limits. The first
    step that fails is split exactly: switching instants are the first zeros, on the exact
    solution, of ``T_air - setpoint``, ``vent - T_air``, the held power ``Q`` and
    ``q_max_w - Q``. The ideal thermostat is the common model of a heater with a tight
    deadband (common practice, no source).

    References
    ----------
    Van Loan (1978) for the exact steps; Press et al. (2007), sec. 9.4, for the roots.
    """
    if not isinstance(network, Network):
        raise ValueError("network must be a grower.solver.Network")
    nt = as_times(times_s).size
    sp, vt, q = _control(setpoint_c, q_max_w, vent_c, nt)
    extra = {"setpoint_c": sp, "vent_c": vt, "q_max_w": q[:, None]}
    prob = make_problem(network, times_s, boundary_c, initial_c, gains_w, extra=extra)
    return Run(prob, ControlInputs(sp, vt, q)).run()


def hold(
    network: Network,
    times_s: np.ndarray,
    boundary_c: np.ndarray,
    initial_c: np.ndarray,
    setpoint_c: float | np.ndarray,
    gains_w: np.ndarray | None = None,
) -> HoldResult:
    """Heat needed to hold the air at ``setpoint_c`` (an unlimited heater, no venting).

    Where the house would be warmer than the setpoint the power is 0 and it floats.
    The peak is found on the exact solution inside the steps; the energy is the exact
    integral. Parameters as for `thermostat`.

    Returns
    -------
    HoldResult

    References
    ----------
    DESIGN "The thermal model": the steady heat ``Q = K (T_hold - T_eff)`` is the constant
    case; Van Loan (1978) for the exact integral over each step.
    """
    tr = thermostat(network, times_s, boundary_c, initial_c, setpoint_c, np.inf, None, gains_w)
    peak, when = _peak_power(tr)
    return HoldResult(tr.times_s, tr.heat_w, peak, when, tr.heat_j, tr.step_heat_j, tr.temps_c, tr)


def _peak_power(tr: Trajectory) -> tuple[np.ndarray, np.ndarray]:
    """Exact maximum of the heater output (jumps excluded) and its time, per member."""
    prob, net = tr.problem, tr.network
    mm = tr.n_members
    t, h = tr.times_s, prob.h
    red = net.held_modes
    wq, gsum = net.held_power_weights, net.held_power_sum_w_per_k
    sp = np.broadcast_to(tr.control.setpoint_c, (mm, t.size))  # type: ignore[union-attr]
    hw = tr.heat_w
    k = np.argmax(hw, axis=1)
    ar = np.arange(mm)
    best, best_t = hw[ar, k].copy(), t[k].copy()
    pcs = pieces_of(tr)
    hold_ = (tr.mode == HOLD) & ~pcs.split
    mi, ki = np.nonzero(hold_)
    neg = -best
    items = []
    if mi.size:
        x0 = tr.temps_c[mi, ki]
        x1 = tr.temps_c[mi, ki + 1]
        tc = sp[mi, ki]
        mu = mi % prob.qb.shape[0]
        qa = prob.qb[mu, ki] + (x0[:, 1:] @ red.w.T) @ wq + tc * gsum
        qe = prob.qb[mu, ki + 1] + (x1[:, 1:] @ red.w.T) @ wq + tc * gsum
        scatter_min(neg, best_t, mi, -qe, t[ki + 1])
        e1 = (prob.qb[mu, ki + 1] - prob.qb[mu, ki]) / h[ki]
        el = clamp_explin(tr, mi, ki, np.zeros(mi.size), h[ki], x0, tc, -wq, -qa, -e1)
        bound = h[ki] ** 2 / 8 * np.abs(el.k2).sum(-1)
        j = np.maximum(qa, qe) + bound > -neg[mi]
        if j.any():
            items.append((mi[j], t[ki[j]], el.take(np.flatnonzero(j))))
    if pcs.member.size:
        j = pcs.mode == HOLD
        pm, pk, s0 = pcs.member[j], pcs.step[j], pcs.s0[j]
        if pm.size:
            mu = pm % prob.qb.shape[0]
            dqb = (prob.qb[mu, pk + 1] - prob.qb[mu, pk]) / h[pk]
            tc = pcs.x0[j, 0]
            qa = prob.qb[mu, pk] + dqb * s0 + (pcs.x0[j, 1:] @ red.w.T) @ wq + tc * gsum
            el = clamp_explin(tr, pm, pk, s0, pcs.w[j], pcs.x0[j], tc, -wq, -qa, -dqb)
            items.append((pm, t[pk] + s0, el))
    for member, t0, el in items:
        _, gmin, smin, _ = step_profile(el)
        scatter_min(neg, best_t, member, gmin, t0 + smin)
    return -neg, best_t
