"""The free-floating run (no thermostat) and its first crossing.

References
----------
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Transactions on Automatic Control AC-23(3):395-404.
G. F. Franklin, J. D. Powell and M. L. Workman (1998), *Digital Control of Dynamic
Systems*, 3rd ed., Addison-Wesley (the first-order, "triangle", hold equivalent).
"""

from __future__ import annotations

import numpy as np

from .analysis import analyse
from .network import Network
from .problem import Problem, as_series, check_finite, make_problem
from .results import Trajectory, no_switches
from .segments import Segments, forcing_at, knots, step_runs
from .stepping import MANY, recurrence


def free_float(
    network: Network,
    times_s: np.ndarray,
    boundary_c: np.ndarray,
    initial_c: np.ndarray,
    gains_w: np.ndarray | None = None,
    heat_w: np.ndarray | None = None,
) -> Trajectory:
    """Exact response with no thermostat: every node, every member, at every grid time.

    Parameters
    ----------
    network : `Network` (node 0 is the air)
    times_s : (N,) strictly increasing times [s], any spacing
    boundary_c : (N, m) or (M, N, m) boundary temperatures [degC], linear between samples
        ((N,) allowed when m = 1)
    initial_c : (n,) or (M, n) node temperatures at ``times_s[0]`` [degC]
    gains_w : None, (N, n) or (M, N, n) heat input to each node [W] (sun, people, ...),
        linear between samples
    heat_w : None, (N,) or (M, N) a prescribed heater output on the air node [W], linear
        between samples; reported in `Trajectory.heat_w` and ``heat_j``

    Returns
    -------
    Trajectory

    References
    ----------
    Van Loan (1978); Franklin, Powell and Workman (1998) (see the module notes).
    """
    # no copy of the inputs: everything drawn from them is computed before returning
    # nor a separate pass for NaN and inf: the knot search or check_finite below does it
    prob = make_problem(
        network, times_s, boundary_c, initial_c, gains_w, heat_w, copy=False, finite=False
    )
    mm, nt = prob.n_members, prob.times_s.size
    full, tab = network.modes, prob.full
    if heat_w is None:
        q, step_q, heat_j = _zeros((mm, nt)), _zeros((mm, nt - 1)), np.zeros(mm)
    else:
        q = np.array(np.broadcast_to(as_series(heat_w, "heat_w", nt, None), (mm, nt)))
        step_q = 0.5 * prob.h * (q[:, :-1] + q[:, 1:])
        heat_j = step_q.sum(axis=1)
    seg = _runs(prob) if mm >= MANY else None
    temps = z = None
    if seg is None:
        if mm < MANY:
            check_finite(prob.boundary_c, "boundary_c")
            check_finite(prob.gains_w, "gains_w")
        z0 = prob.initial_c @ full.w.T  # (Mi, r)
        # f = f1 b[k] + f2 (b[k+1] - b[k]), written without the difference array
        bt = prob.bt
        f = (tab.f1 - tab.f2).T[:, None, :] * bt[:, :, :-1]
        f += tab.f2.T[:, None, :] * bt[:, :, 1:]
        if f.shape[1] != mm:  # shared forcing, member-specific start
            f = np.broadcast_to(f, (f.shape[0], mm, nt - 1))
        z = recurrence(tab.e, prob.uniform, f, np.broadcast_to(z0.T, (full.lam.size, mm)))
        temps = np.tensordot(full.v, z, axes=([1], [0]))  # (n, M, N)
        temps[:, :, 0] = np.broadcast_to(prob.initial_c, (mm, network.n_nodes)).T
        temps = np.moveaxis(temps, 0, -1)
    return Trajectory(
        prob.times_s,
        temps,
        q,
        _zeros((mm, nt)),
        heat_j,
        np.zeros(mm),
        step_q,
        _zeros((mm, nt - 1)),
        None,
        _zeros((mm, nt - 1), np.int8),
        no_switches(network.n_nodes),
        network,
        prob,
        None,
        z,
        seg,
    )


def _zeros(shape: tuple[int, ...], dtype: type = float) -> np.ndarray:
    """Read-only zeros of ``shape`` that take no memory (one zero, broadcast): a free float
    has no vent, nor a heater unless prescribed, and writing M x N zeros for them cost
    more than the run of a big ensemble (a fresh array of zeros is set byte by byte)."""
    return np.broadcast_to(np.zeros((), dtype), shape)


def _runs(prob: Problem) -> Segments | None:
    """The free float as `Segments` when its inputs run collinear over four or more steps
    on average (one exact step per run), else None (step by step)."""
    net, mm, nt = prob.network, prob.n_members, prob.times_s.size
    kn = knots(prob.h, prob.boundary_c, prob.gains_w, names=("boundary_c", "gains_w"))
    if 4 * (kn.size - 1) > nt - 1:
        return None
    b = forcing_at(net, prob.boundary_c, prob.gains_w, kn)
    z0 = np.broadcast_to((prob.initial_c @ net.modes.w.T).T, (net.modes.lam.size, mm))
    x0 = np.broadcast_to(prob.initial_c, (mm, net.n_nodes))
    return Segments(net, prob.times_s, kn, step_runs(net, prob.times_s, kn, b, z0), b, x0)


def first_crossing(
    network: Network,
    times_s: np.ndarray,
    boundary_c: np.ndarray,
    initial_c: np.ndarray,
    threshold_c: float | np.ndarray,
    gains_w: np.ndarray | None = None,
    offset_k: np.ndarray | None = None,
    heat_w: np.ndarray | None = None,
) -> np.ndarray:
    """(M,) first time [s] the free-floating plant temperature reaches ``threshold_c``
    (NaN where it never does); ``heat_w`` is a prescribed heater series on the air node.
    Shorthand for ``analyse(free_float(...), threshold_c, offset_k).time_s``."""
    tr = free_float(network, times_s, boundary_c, initial_c, gains_w, heat_w)
    return analyse(tr, threshold_c, offset_k).time_s
