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
instants. Setpoint and vent temperature are piecewise constant, the value at a step's start.
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

import math
from dataclasses import dataclass, field
from functools import cached_property
from math import factorial

import numpy as np
from scipy.signal import lfilter

__all__ = [
    "FLOAT",
    "FULL",
    "HOLD",
    "MODE_NAMES",
    "VENT",
    "Crossing",
    "HoldResult",
    "Network",
    "Switches",
    "Trajectory",
    "analyse",
    "first_crossing",
    "free_float",
    "hold",
    "lumped",
    "thermostat",
]

#: thermostat modes, as stored in `Trajectory.mode` and `Switches.mode`
FLOAT, FULL, HOLD, VENT = 0, 1, 2, 3
MODE_NAMES = ("float", "full", "hold", "vent")

#: air within this of a setpoint or vent temperature counts as at it [K]; far above the
#: round-off of a root found on the exact solution (~1e-12 K), far below any physics
_TOL_K = 1e-9
#: a network whose slowest time constant exceeds this is treated as having no path to a
#: boundary (it would not cool in 30,000 years) [s]
_MAX_TAU_S = 1e12
#: switches allowed inside one step before the run is declared inconsistent
_MAX_SWITCHES = 24
#: a step where at most this many members switch is split member by member in plain
#: Python floats (numpy's per-call overhead dominates such tiny arrays); same algorithm
_SCALAR_MAX = 2


# --------------------------------------------------------------------------------------
# the network
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Modal:
    """Eigen-decomposition of ``C^-1 L`` and the projected inputs."""

    lam: np.ndarray  # (r,) eigenvalues [1/s], ascending, all < 0
    v: np.ndarray  # (k, r) modes -> node temperatures
    w: np.ndarray  # (r, k) node temperatures -> modes
    bm: np.ndarray  # (r, p) inputs -> modal forcing


def _modal(c: np.ndarray, lap: np.ndarray, inputs: np.ndarray) -> _Modal:
    k = c.size
    if k == 0:
        e = np.zeros((0,))
        return _Modal(e, np.zeros((0, 0)), np.zeros((0, 0)), np.zeros((0, inputs.shape[1])))
    d = np.sqrt(c)
    s = lap / np.outer(d, d)
    lam, q = np.linalg.eigh(0.5 * (s + s.T))
    v = q / d[:, None]
    w = q.T * d[None, :]
    return _Modal(lam, v, w, w @ (inputs / c[:, None]))


def _float_array(value: object, name: str) -> np.ndarray:
    try:
        return np.array(value, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be numeric") from None


@dataclass(frozen=True, eq=False)
class Network:
    """A linear thermal network.

    ``C_i dT_i/dt = sum_j G_ij (T_j - T_i) + sum_b H_ib (U_b(t) - T_i) + P_i(t)``.
    Node 0 is the air node, where heater, vent and plant temperature act.

    Parameters
    ----------
    capacitance_j_per_k : (n,) heat capacities C_i [J/K], > 0
    coupling_w_per_k : (n, n) conductances G_ij between nodes [W/K]; symmetric, >= 0,
        zero diagonal
    boundary_w_per_k : (n, m) conductances H_ib from node i to boundary temperature b
        [W/K], >= 0; every node needs a path to some boundary
    node_names, boundary_names : labels (default "air", "node1", ... and "boundary0", ...)

    The arrays are copied and made read-only; equal networks hash equal.
    """

    capacitance_j_per_k: np.ndarray
    coupling_w_per_k: np.ndarray
    boundary_w_per_k: np.ndarray
    node_names: tuple[str, ...] = ()
    boundary_names: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        c = _float_array(self.capacitance_j_per_k, "capacitance_j_per_k")
        if c.ndim != 1 or c.size == 0:
            raise ValueError(f"capacitance_j_per_k must have shape (n,); got {c.shape}")
        n = c.size
        if not (np.all(np.isfinite(c)) and np.all(c > 0)):
            raise ValueError(f"capacitance_j_per_k must be finite and > 0; got {c}")
        g = _float_array(self.coupling_w_per_k, "coupling_w_per_k")
        if g.shape != (n, n):
            raise ValueError(f"coupling_w_per_k must have shape ({n}, {n}); got {g.shape}")
        if not (np.all(np.isfinite(g)) and np.all(g >= 0)):
            raise ValueError("coupling_w_per_k must be finite and >= 0")
        if np.any(np.diag(g) != 0):
            raise ValueError("coupling_w_per_k must have a zero diagonal")
        if np.any(np.abs(g - g.T) > 1e-12 * max(float(g.max(initial=0.0)), 1e-300)):
            raise ValueError("coupling_w_per_k must be symmetric")
        g = 0.5 * (g + g.T)
        h = _float_array(self.boundary_w_per_k, "boundary_w_per_k")
        if h.ndim == 1 and n == 1:
            h = h[None, :]
        if h.ndim != 2 or h.shape[0] != n or h.shape[1] == 0:
            raise ValueError(f"boundary_w_per_k must have shape ({n}, m), m >= 1; got {h.shape}")
        if not (np.all(np.isfinite(h)) and np.all(h >= 0)):
            raise ValueError("boundary_w_per_k must be finite and >= 0")
        m = h.shape[1]
        names = tuple(self.node_names) or ("air", *(f"node{i}" for i in range(1, n)))
        bnames = tuple(self.boundary_names) or tuple(f"boundary{b}" for b in range(m))
        if len(names) != n or len(set(names)) != n or not all(isinstance(x, str) for x in names):
            raise ValueError(f"node_names must be {n} distinct strings; got {names}")
        if len(bnames) != m or len(set(bnames)) != m or not all(isinstance(x, str) for x in bnames):
            raise ValueError(f"boundary_names must be {m} distinct strings; got {bnames}")
        reach = h.sum(axis=1) > 0
        while True:
            more = reach | (g[:, reach] > 0).any(axis=1)
            if (more == reach).all():
                break
            reach = more
        if not reach.all():
            lost = [names[i] for i in np.flatnonzero(~reach)]
            raise ValueError(
                f"boundary_w_per_k: node(s) {lost} have no path to any boundary "
                "(the network would have no steady state)"
            )
        for name, arr in (
            ("capacitance_j_per_k", c),
            ("coupling_w_per_k", g),
            ("boundary_w_per_k", h),
        ):
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)
        object.__setattr__(self, "node_names", names)
        object.__setattr__(self, "boundary_names", bnames)
        lap = g - np.diag(g.sum(axis=1) + h.sum(axis=1))
        full = _modal(c, lap, np.hstack([h, np.eye(n)]))
        if -1.0 / full.lam.max() > _MAX_TAU_S:
            raise ValueError(
                "boundary_w_per_k: the network is practically cut off from its boundaries "
                f"(slowest time constant {-1.0 / full.lam.max():.3g} s)"
            )
        red_in = np.hstack([h[1:], g[1:, :1], np.eye(n - 1)])
        red = _modal(c[1:], lap[1:, 1:], red_in)
        object.__setattr__(self, "_full", full)
        object.__setattr__(self, "_red", red)
        # heater power needed to hold the air: Q = qb(U, P) + wq . z_red + T_air * gsum
        object.__setattr__(self, "_wq", -(g[0, 1:] @ red.v) if n > 1 else np.zeros(0))
        object.__setattr__(self, "_gsum", float(g[0, 1:].sum() + h[0].sum()))
        object.__setattr__(
            self, "_key", (c.tobytes(), g.tobytes(), h.tobytes(), n, m, names, bnames)
        )

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Network) and self._key == other._key  # type: ignore[attr-defined]

    def __hash__(self) -> int:
        return hash(self._key)  # type: ignore[attr-defined]

    @property
    def n_nodes(self) -> int:
        """Number of nodes n."""
        return self.capacitance_j_per_k.size

    @property
    def n_boundaries(self) -> int:
        """Number of boundary temperatures m."""
        return self.boundary_w_per_k.shape[1]

    @property
    def state_matrix(self) -> np.ndarray:
        """A (n, n) [1/s] of ``dx/dt = A x + B u``."""
        g, h, c = self.coupling_w_per_k, self.boundary_w_per_k, self.capacitance_j_per_k
        return (g - np.diag(g.sum(axis=1) + h.sum(axis=1))) / c[:, None]

    @property
    def input_matrix(self) -> np.ndarray:
        """B (n, m + n) for ``u = (U_1..U_m [degC], P_1..P_n [W])``."""
        h, c = self.boundary_w_per_k, self.capacitance_j_per_k
        return np.hstack([h, np.eye(self.n_nodes)]) / c[:, None]

    @property
    def total_capacitance_j_per_k(self) -> float:
        """Sum of the capacitances [J/K]."""
        return float(self.capacitance_j_per_k.sum())

    @property
    def conductance_to_boundaries_w_per_k(self) -> float:
        """Sum of all boundary conductances H [W/K] (K of the lumped model)."""
        return float(self.boundary_w_per_k.sum())

    #: short names for the two sums above
    total_capacitance = total_capacitance_j_per_k
    conductance_to_boundaries = conductance_to_boundaries_w_per_k

    @property
    def time_constants_s(self) -> np.ndarray:
        """Time constants ``-1/lam`` of the free response, longest first [s]."""
        return -1.0 / self._full.lam[::-1]  # type: ignore[attr-defined]

    def steady_state(self, boundary_c: object, gains_w: object = None) -> np.ndarray:
        """Node temperatures (n,) [degC] for constant boundary temperatures (m,) and gains (n,) [W]."""
        u = _float_array(boundary_c, "boundary_c").reshape(-1)
        if u.shape != (self.n_boundaries,) or not np.all(np.isfinite(u)):
            raise ValueError(f"boundary_c must be {self.n_boundaries} finite values")
        p = np.zeros(self.n_nodes) if gains_w is None else _float_array(gains_w, "gains_w")
        p = p.reshape(-1)
        if p.shape != (self.n_nodes,) or not np.all(np.isfinite(p)):
            raise ValueError(f"gains_w must be {self.n_nodes} finite values")
        a = self.state_matrix
        return np.linalg.solve(a, -(self.input_matrix @ np.concatenate([u, p])))


def lumped(capacitance_j_per_k: float, conductance_w_per_k: float) -> Network:
    """The one-node model ``C dT/dt = K (T_eff - T) + Q`` [J/K, W/K].

    Its solution for constant inputs is ``T = T_inf + (T0 - T_inf) exp(-t/tau)``,
    ``tau = C/K``, ``T_inf = T_eff + Q/K``.
    """
    k = float(conductance_w_per_k)
    if not (np.isfinite(k) and k > 0):
        raise ValueError(f"conductance_w_per_k must be finite and > 0; got {conductance_w_per_k}")
    return Network(
        np.array([capacitance_j_per_k], dtype=float),
        np.zeros((1, 1)),
        np.array([[k]]),
        ("air",),
        ("effective_outside",),
    )


# --------------------------------------------------------------------------------------
# phi functions and step tables
# --------------------------------------------------------------------------------------

_RF = np.array([1.0 / factorial(j) for j in range(24)])


def _phi123(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """``exp(x), phi1(x), phi2(x), phi3(x)``, to round-off for any x <= 0."""
    x = np.asarray(x, dtype=float)
    if x.size <= 16:  # a few step lengths: Python floats are quicker than array calls
        out = np.array([_sphi(v) for v in x.ravel().tolist()]).T.reshape((4, *x.shape))
        return out[0], out[1], out[2], out[3]
    small = np.abs(x) < 0.5
    xs = np.where(small, 1.0, x)
    e = np.exp(x)
    p1 = np.expm1(xs) / xs
    p2 = (p1 - 1.0) / xs
    p3 = (p2 - 0.5) / xs
    if small.any():
        xv = x[small]
        s1 = np.full(xv.shape, _RF[18])
        s2 = np.full(xv.shape, _RF[19])
        s3 = np.full(xv.shape, _RF[20])
        for j in range(16, -1, -1):
            s1 = s1 * xv + _RF[j + 1]
            s2 = s2 * xv + _RF[j + 2]
            s3 = s3 * xv + _RF[j + 3]
        p1[small], p2[small], p3[small] = s1, s2, s3
    return e, p1, p2, p3


@dataclass(frozen=True)
class _Table:
    """Per-step coefficients (N-1, r): z1 = e z0 + f1 b0 + f2 (b1 - b0); int z = i1 z0 + i2 b0 + i3 (b1 - b0)."""

    e: np.ndarray
    f1: np.ndarray
    f2: np.ndarray
    i2: np.ndarray
    i3: np.ndarray


def _table(lam: np.ndarray, unique_h: np.ndarray, kind: np.ndarray) -> _Table:
    hu = unique_h[:, None]
    e, p1, p2, p3 = _phi123(lam[None, :] * hu)
    cols = (e, hu * p1, hu * p2, hu * hu * p2, hu * hu * p3)
    return _Table(*(a[kind] for a in cols))


def _recur1(e: np.ndarray, uniform: bool, f: np.ndarray, z0: np.ndarray, mm: int) -> np.ndarray:
    """``z[k+1] = e[k] z[k] + f[k]`` for one mode: f (Mf, N-1), z0 (Mz,) -> z (mm, N)."""
    k1 = f.shape[1]
    out = np.empty((mm, k1 + 1))
    out[:, 0] = z0
    if k1 == 0:
        return out
    if f.shape[0] != mm:  # shared forcing: one particular solution plus the free decay
        zp = _recur1(e, uniform, f, np.zeros(1), 1)
        decay = np.empty(k1 + 1)
        decay[0] = 1.0
        np.cumprod(e, out=decay[1:])
        np.add(zp, decay * np.reshape(z0, (-1, 1)), out=out)
        return out
    if uniform:
        a = float(e[0])
        zi = a * np.broadcast_to(z0, (mm,))[:, None]
        out[:, 1:] = lfilter([1.0], [1.0, -a], f, axis=1, zi=zi)[0]
        return out
    ff = np.array(f)
    ff[:, 0] += e[0] * z0
    aa = np.array(e, dtype=float)
    d = 1
    while d < k1:  # Hillis-Steele scan of the affine maps z -> a z + f
        ff[:, d:] = ff[:, d:] + aa[d:] * ff[:, :-d]
        aa[d:] = aa[d:] * aa[:-d]
        d *= 2
    out[:, 1:] = ff
    return out


def _recurrence(e: np.ndarray, uniform: bool, f: np.ndarray, z0: np.ndarray) -> np.ndarray:
    """``z[k+1] = e[k] z[k] + f[k]`` for f (M, N-1, r), z0 (M, r) -> z (M, N, r)."""
    mm, k1, r = f.shape
    out = np.empty((mm, k1 + 1, r))
    for i in range(r):
        out[:, :, i] = _recur1(e[:, i], uniform, f[:, :, i], z0[:, i], mm)
    return out


# --------------------------------------------------------------------------------------
# inputs
# --------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class _Problem:
    """Validated inputs, member axis first (size 1 or M), and the step tables."""

    network: Network
    times_s: np.ndarray  # (N,)
    h: np.ndarray  # (N-1,) step lengths as stepped [s]
    n_members: int
    boundary_c: np.ndarray  # (Mb, N, m)
    gains_w: np.ndarray  # (Mg, N, n), heater series included on the air node
    initial_c: np.ndarray  # (Mi, n)
    uniform: bool
    full: _Table
    bt: np.ndarray  # (r, Mu, N) modal forcing of (U, P), mode axis first
    dbt: np.ndarray  # (r, Mu, N-1) its step increments
    unique_h: np.ndarray  # distinct step lengths [s]
    kind: np.ndarray  # (N-1,) index of each step's length in unique_h

    @cached_property
    def red(self) -> _Table:  # step table of the network with the air held
        return _table(self.network._red.lam, self.unique_h, self.kind)  # type: ignore[attr-defined]

    @cached_property
    def brt(self) -> np.ndarray:  # (n-1, Mu, N) reduced modal forcing of (U, P_1..)
        red, m = self.network._red, self.network.n_boundaries  # type: ignore[attr-defined]
        u, p = self.boundary_c, self.gains_w
        return _project(red.bm[:, :m], u) + _project(red.bm[:, m + 1 :], p[:, :, 1:])

    @cached_property
    def qb(self) -> np.ndarray:  # (Mu, N) -(H_0 . U + P_0) [W]
        return -(self.boundary_c @ self.network.boundary_w_per_k[0]) - self.gains_w[:, :, 0]

    @property
    def b(self) -> np.ndarray:  # (Mu, N, r) view
        return np.moveaxis(self.bt, 0, -1)

    @property
    def db(self) -> np.ndarray:  # (Mu, N-1, r) view
        return np.moveaxis(self.dbt, 0, -1)

    @property
    def bru(self) -> np.ndarray:  # (Mu, N, n-1) view
        return np.moveaxis(self.brt, 0, -1)


def _times(times_s: object) -> np.ndarray:
    t = _float_array(times_s, "times_s")
    if t.ndim != 1 or t.size < 2:
        raise ValueError(f"times_s must be a 1-D array of at least 2 times; got shape {t.shape}")
    if not np.all(np.isfinite(t)):
        raise ValueError("times_s contains NaN or inf")
    bad = np.flatnonzero(np.diff(t) <= 0)
    if bad.size:
        raise ValueError(
            f"times_s must be strictly increasing (times_s[{bad[0] + 1}] <= times_s[{bad[0]}])"
        )
    return t


def _series(value: object, name: str, n_t: int, width: int | None) -> np.ndarray:
    """(N,) / (N, w) / (M, N, w) -> (M', N, w); width None: (N,) / (M, N) -> (M', N)."""
    a = _float_array(value, name)
    if width is None:
        if a.ndim == 0:
            a = np.full((1, n_t), float(a))
        elif a.ndim == 1:
            a = a[None, :]
        if a.ndim != 2:
            raise ValueError(f"{name} must have shape (N,) or (M, N); got {a.shape}")
    else:
        if a.ndim == 1 and width == 1:
            a = a[:, None]
        if a.ndim == 2:
            a = a[None]
        if a.ndim != 3 or a.shape[2] != width:
            raise ValueError(
                f"{name} must have shape (N, {width}) or (M, N, {width}); got {a.shape}"
            )
    if a.shape[1] != n_t:
        raise ValueError(f"{name} has {a.shape[1]} time points but times_s has {n_t}")
    if not np.isfinite(a.sum()) and not np.all(np.isfinite(a)):
        raise ValueError(f"{name} contains NaN or inf")
    return a


def _members(arrays: dict[str, np.ndarray | None]) -> int:
    sizes = {k: v.shape[0] for k, v in arrays.items() if v is not None and v.shape[0] != 1}
    if len(set(sizes.values())) > 1:
        raise ValueError(f"member axes disagree: {sizes}")
    return next(iter(sizes.values()), 1)


def _problem(
    network: Network,
    times_s: object,
    boundary_c: object,
    initial_c: object,
    gains_w: object,
    heat_w: object = None,
    extra: dict[str, np.ndarray | None] | None = None,
) -> _Problem:
    if not isinstance(network, Network):
        raise ValueError("network must be a grower.solver.Network")
    n, m = network.n_nodes, network.n_boundaries
    t = _times(times_s)
    nt = t.size
    u = _series(boundary_c, "boundary_c", nt, m)
    p = np.zeros((1, nt, n)) if gains_w is None else _series(gains_w, "gains_w", nt, n)
    x0 = _float_array(initial_c, "initial_c")
    if x0.ndim == 0 and n == 1:
        x0 = x0.reshape(1)
    if x0.ndim == 1:
        x0 = x0[None]
    if x0.ndim != 2 or x0.shape[1] != n:
        raise ValueError(f"initial_c must have shape ({n},) or (M, {n}); got {x0.shape}")
    if not np.all(np.isfinite(x0)):
        raise ValueError("initial_c contains NaN or inf")
    q = None if heat_w is None else _series(heat_w, "heat_w", nt, None)
    mm = _members({"boundary_c": u, "gains_w": p, "initial_c": x0, "heat_w": q, **(extra or {})})
    if q is not None:
        p = np.array(np.broadcast_to(p, (max(p.shape[0], q.shape[0]), nt, n)))
        p[:, :, 0] += q
    # steps closer than the resolution of the time stamps are one step length
    quantum = 4.0 * float(np.spacing(np.max(np.abs(t[[0, -1]]))))
    steps = np.diff(t)
    hq = np.round(steps / quantum) * quantum
    hu, kind = np.unique(hq, return_inverse=True)
    hu = np.maximum(hu, np.finfo(float).tiny)
    full = network._full  # type: ignore[attr-defined]
    bt = _project(full.bm[:, :m], u) + _project(full.bm[:, m:], p)
    return _Problem(
        network,
        t,
        hu[kind],
        mm,
        u,
        p,
        x0,
        hu.size == 1,
        _table(full.lam, hu, kind),
        bt,
        np.diff(bt, axis=2),
        hu,
        kind,
    )


def _project(mat: np.ndarray, a: np.ndarray) -> np.ndarray:
    """``mat (r, w)`` applied to series ``a (M, N, w)`` -> ``(r, M, N)``."""
    if a.shape[0] == 1:
        return (mat @ a[0].T)[:, None, :]
    return np.tensordot(mat, a, axes=([1], [2]))


def _dot(a: np.ndarray, mat_t: np.ndarray) -> np.ndarray:
    """``a @ mat_t`` over the last axis (one BLAS call for a big array)."""
    return np.tensordot(a, mat_t, axes=1) if a.size > 50000 else a @ mat_t


def _pick(a: np.ndarray, idx: np.ndarray) -> np.ndarray:
    """Rows ``idx`` of an array whose member axis is 1 or M."""
    if a.shape[0] == 1:
        return a[:1] if idx.size == 1 else a[np.zeros(idx.size, dtype=np.intp)]
    return a[idx]


# --------------------------------------------------------------------------------------
# exact intra-step analysis of g(s) = g0 + e1 s + sum_i [ (e^(lam s) - 1) z + ... ]
# --------------------------------------------------------------------------------------


class _ExpLin:
    """A batch of ``g(s) = g0 + e1 s + sum_i [em z_i + em/lam b_i + (em - lam s)/lam^2 c_i]``,
    ``em = expm1(lam_i s)``, on ``0 <= s <= w``: the exact solution of one mode set from
    weighted modal state z, forcing b and forcing slope c. Written as an increment on g0 so
    that g near a switching point is not lost in round-off."""

    def __init__(self, lam, z, b, c, g0, e1, w):  # type: ignore[no-untyped-def]
        self.lam, self.z, self.b, self.c = lam, z, b, c
        self.g0, self.e1, self.w = g0, e1, w
        self.k1 = lam * z + b  # g' coefficients at s = 0
        self.k2 = lam * self.k1 + c  # g'' = sum k2 exp(lam s)

    def take(self, i: np.ndarray) -> _ExpLin:
        return _ExpLin(self.lam, self.z[i], self.b[i], self.c[i], self.g0[i], self.e1[i], self.w[i])

    def _x(self, s: np.ndarray):  # type: ignore[no-untyped-def]
        x = s[..., None] * self.lam
        sh = (slice(None),) + (None,) * (s.ndim - 1)
        return x, np.expm1(x), sh

    def val(self, s: np.ndarray) -> np.ndarray:
        x, em, sh = self._x(s)
        lam = self.lam
        t = em * self.z[sh] + em / lam * self.b[sh] + (em - x) / (lam * lam) * self.c[sh]
        return self.g0[sh] + self.e1[sh] * s + t.sum(axis=-1)

    def d1(self, s: np.ndarray) -> np.ndarray:
        x, em, sh = self._x(s)
        t = (em + 1.0) * self.k1[sh] + em / self.lam * self.c[sh]
        return self.e1[sh] + t.sum(axis=-1)

    def d2(self, s: np.ndarray) -> np.ndarray:
        x, em, sh = self._x(s)
        return ((em + 1.0) * self.k2[sh]).sum(axis=-1)


def _solve(fd, a: np.ndarray, b: np.ndarray, fa: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Root in [a, b] of f (fd(s) -> (f, f')), f(a) and f(b) of opposite sign: Newton
    steps kept inside a shrinking bracket, else bisection (Numerical Recipes sec. 9.4)."""
    lo, hi = a.copy(), b.copy()
    pos = fa > 0
    x = 0.5 * (lo + hi)
    tol = 1e-13 * (b - a) + 1e-300
    for _ in range(200):
        f, df = fd(x)
        same = (f > 0) == pos
        lo = np.where(same, x, lo)
        hi = np.where(same, hi, x)
        with np.errstate(divide="ignore", invalid="ignore"):
            xn = x - f / df
        out = ~np.isfinite(xn) | (xn <= np.minimum(lo, hi)) | (xn >= np.maximum(lo, hi))
        xn = np.where(out, 0.5 * (lo + hi), xn)
        done = (f == 0) | (np.abs(xn - x) <= tol) | (np.abs(hi - lo) <= tol)
        x = np.where(f == 0, x, xn)
        if done.all():
            break
    return x


def _roots_sum(coef: np.ndarray, mu: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Zeros in (0, w) of ``sum_i coef_i exp(mu_i s)``: (K, r-1), sorted, NaN-padded."""
    kk, r = coef.shape
    if r < 2:
        return np.zeros((kk, 0))
    j = int(np.argmax(mu))
    nu = mu - mu[j]
    if r == 2:
        o = 1 - j
        with np.errstate(divide="ignore", invalid="ignore"):
            s = np.log(-coef[:, j] / coef[:, o]) / nu[o]
        ok = np.isfinite(s) & (s > 0) & (s < w)
        return np.where(ok, s, np.nan)[:, None]
    oth = np.array([i for i in range(r) if i != j])
    dco = coef[:, oth] * nu[oth]
    sub = _roots_sum(dco, nu[oth], w)
    br = np.sort(
        np.concatenate(
            [np.zeros((kk, 1)), np.where(np.isnan(sub), w[:, None], sub), w[:, None]], 1
        ),
        1,
    )

    def f_of(s, rows):  # type: ignore[no-untyped-def]
        e = np.exp(s[..., None] * nu[oth])
        return coef[rows, j] + (coef[rows][:, oth] * e).sum(-1), (dco[rows] * e).sum(-1)

    fb = coef[:, j][:, None] + (coef[:, None, oth] * np.exp(br[..., None] * nu[oth])).sum(-1)
    out = np.full((kk, r - 1), np.nan)
    for p in range(r - 1):
        sel = np.flatnonzero((fb[:, p] * fb[:, p + 1] < 0) & (br[:, p + 1] > br[:, p]))
        if sel.size:
            out[sel, p] = _solve(
                lambda s, sel=sel: f_of(s, sel), br[sel, p], br[sel, p + 1], fb[sel, p]
            )
    return np.sort(out, axis=1)


def _convex_breaks(el: _ExpLin) -> np.ndarray:
    """0, the inflection points, w: (K, P); g is convex or concave between them."""
    infl = _roots_sum(el.k2, el.lam, el.w)
    w = el.w[:, None]
    return np.sort(np.concatenate([np.zeros_like(w), np.where(np.isnan(infl), w, infl), w], 1), 1)


def _first_root(el: _ExpLin, entered: bool) -> np.ndarray:
    """First s in [0, w] with g(s) <= 0 (NaN if none). ``entered``: g(0) ~ 0 is the state
    a mode was just entered in; it counts only if g heads down."""
    kk = el.w.size
    root = np.full(kk, np.nan)
    if kk == 0:
        return root
    br = _convex_breaks(el)
    gv = el.val(br)
    gv[:, 0] = el.g0
    open_ = np.ones(kk, dtype=bool)
    at0 = gv[:, 0] <= 0
    if entered:
        scale = np.abs(el.e1) + (np.abs(el.lam * el.z) + np.abs(el.b)).sum(-1) + 1e-300
        d0 = el.d1(np.zeros(kk))
        tie = np.abs(d0) <= 1e-12 * scale
        down = (d0 < 0) & ~tie | tie & (el.d2(np.zeros(kk)) < 0)
        at0 &= down
        gv[:, 0] = np.where(
            at0 | (gv[:, 0] > 0), gv[:, 0], 1e-300
        )  # just entered: g(0) counts as +0
    root[at0] = 0.0
    open_ &= ~at0
    ba = []
    for p in range(br.shape[1] - 1):
        a, b = br[:, p], br[:, p + 1]
        ga, gb = gv[:, p], gv[:, p + 1]
        cand = open_ & (b > a)
        hit = cand & (gb <= 0)
        if hit.any():
            i = np.flatnonzero(hit)
            ba.append((i, a[i], b[i], ga[i]))
            open_[i] = False
        dip = np.flatnonzero(cand & ~hit)
        if dip.size:
            sub = el.take(dip)
            a_, b_ = a[dip], b[dip]
            da, db = sub.d1(a_), sub.d1(b_)
            convex = sub.d2(0.5 * (a_ + b_)) > 0
            maybe = convex & (da < 0) & (db > 0)
            # tangents at both ends bound a convex g from below
            with np.errstate(divide="ignore", invalid="ignore"):
                sx = (gb[dip] - ga[dip] + da * a_ - db * b_) / (da - db)
            lb = ga[dip] + da * (sx - a_)
            maybe &= ~(lb > 0)
            if maybe.any():
                j = np.flatnonzero(maybe)
                sj = sub.take(j)
                sm = _solve(lambda s, sj=sj: (sj.d1(s), sj.d2(s)), a_[j], b_[j], da[j])
                gm = sj.val(sm)
                # a dip within round-off of 0 right where a mode was entered is no switch
                noise = (
                    1e-13 * (np.abs(sj.z).sum(-1) + np.abs(sj.b / sj.lam).sum(-1) + np.abs(sj.g0))
                    if entered
                    else 0.0
                )
                low = gm <= -noise
                i = dip[j[low]]
                if i.size:
                    ba.append((i, a_[j[low]], sm[low], ga[i]))
                    open_[i] = False
    if ba:
        i = np.concatenate([x[0] for x in ba])
        a = np.concatenate([x[1] for x in ba])
        b = np.concatenate([x[2] for x in ba])
        fa = np.concatenate([x[3] for x in ba])
        sub = el.take(i)
        gb = sub.val(b)
        root[i] = np.where(gb == 0, b, _solve(lambda s: (sub.val(s), sub.d1(s)), a, b, fa))
    return root


def _profile(el: _ExpLin) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Exact first zero (g <= 0), minimum, its place and the length with g < 0, per item."""
    kk = el.w.size
    br = _convex_breaks(el)
    d = el.d1(br)
    ext = np.full((kk, br.shape[1] - 1), np.nan)
    for p in range(br.shape[1] - 1):
        sel = np.flatnonzero((d[:, p] * d[:, p + 1] < 0) & (br[:, p + 1] > br[:, p]))
        if sel.size:
            sub = el.take(sel)
            ext[sel, p] = _solve(
                lambda s, sub=sub: (sub.d1(s), sub.d2(s)), br[sel, p], br[sel, p + 1], d[sel, p]
            )
    mono = np.sort(np.concatenate([br, np.where(np.isnan(ext), el.w[:, None], ext)], 1), 1)
    gv = el.val(mono)
    gv[:, 0] = el.g0
    k = np.argmin(gv, axis=1)
    ar = np.arange(kk)
    gmin, smin = gv[ar, k], mono[ar, k]
    a, b = mono[:, :-1], mono[:, 1:]
    ga, gb = gv[:, :-1], gv[:, 1:]
    cross = (ga * gb < 0) & (b > a)
    roots = np.full(a.shape, np.nan)
    ii, pp = np.nonzero(cross)
    if ii.size:
        sub = el.take(ii)
        roots[ii, pp] = _solve(lambda s: (sub.val(s), sub.d1(s)), a[ii, pp], b[ii, pp], ga[ii, pp])
    full_below = (ga <= 0) & (gb <= 0) & ~((ga == 0) & (gb == 0))
    part = np.where(ga < 0, roots - a, b - roots)
    below = np.where(full_below, b - a, np.where(cross, part, 0.0)).sum(axis=1)
    first = np.full(kk, np.nan)
    first[gv[:, 0] <= 0] = 0.0
    hitp = (gb <= 0) & (b > a)
    for p in range(a.shape[1] - 1, -1, -1):  # keep the earliest
        h = hitp[:, p] & (gv[:, 0] > 0)
        first[h] = np.where(gb[h, p] == 0, b[h, p], roots[h, p])
    return first, gmin, smin, below


# --------------------------------------------------------------------------------------
# results
# --------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class Switches:
    """Mode changes of a thermostat run, in time order per member (E events).

    ``mode`` is the mode entered, ``state_c`` the node temperatures just after; an event
    at ``offset_s == 0`` with a changed state is a jump (see the module notes).
    """

    member: np.ndarray  # (E,) int
    step: np.ndarray  # (E,) int, index of the step the event lies in
    offset_s: np.ndarray  # (E,) [s] from the start of that step
    time_s: np.ndarray  # (E,) [s]
    mode: np.ndarray  # (E,) int8
    state_c: np.ndarray  # (E, n) [degC]


@dataclass(frozen=True, eq=False)
class _Control:
    setpoint_c: np.ndarray  # (Ms, N)
    vent_c: np.ndarray  # (Mv, N), +inf where no venting
    q_max_w: np.ndarray  # (Mq,)


@dataclass(frozen=True, eq=False)
class Trajectory:
    """The exact solution on the time grid, member axis first (M = 1 without an ensemble).

    Attributes
    ----------
    times_s : (N,) [s]
    temps_c : (M, N, n) node temperatures [degC] (left limits at a jump)
    heat_w : (M, N) heater output at the grid points [W] (a prescribed heater series for
        `free_float`; for `thermostat` the output just after each grid time, at the last
        point just before it)
    vent_w : (M, N) heat removed by venting at the grid points [W]
    heat_j, vent_j : (M,) exact totals over the run [J], jumps included
    step_heat_j, step_vent_j : (M, N-1) exact totals per step [J]
    temp_integral_c_s : (M, N-1, n) exact integral of each node temperature over each
        step [degC s]; with the boundary series it gives the exact conductive losses
    mode : (M, N-1) int8 mode at the start of each step (`FLOAT` for `free_float`)
    switches : `Switches` inside steps (empty for `free_float`)
    network : the `Network`

    The remaining fields (``problem``, ``control``, ``tint``, ``modal_z``) hold the
    validated inputs and intermediate results that `analyse` needs to re-evaluate the
    exact solution inside the steps; they are not part of the interface.
    """

    times_s: np.ndarray
    temps_c: np.ndarray
    heat_w: np.ndarray
    vent_w: np.ndarray
    heat_j: np.ndarray
    vent_j: np.ndarray
    step_heat_j: np.ndarray
    step_vent_j: np.ndarray
    tint: np.ndarray | None = field(repr=False)
    mode: np.ndarray
    switches: Switches
    network: Network
    problem: _Problem = field(repr=False)
    control: _Control | None = field(repr=False, default=None)
    modal_z: np.ndarray | None = field(repr=False, default=None)  # free float: (r, M, N)

    @property
    def temp_integral_c_s(self) -> np.ndarray:
        """(M, N-1, n) exact integral of each node temperature over each step [degC s]."""
        if self.tint is None:
            p, full = self.problem, self.network._full  # type: ignore[attr-defined]
            z, t = self.modal_z, p.full  # z: (r, M, N)
            iz = (
                t.f1.T[:, None] * z[:, :, :-1]
                + t.i2.T[:, None] * p.bt[:, :, :-1]
                + t.i3.T[:, None] * p.dbt
            )  # type: ignore[index]
            object.__setattr__(
                self, "tint", np.moveaxis(np.tensordot(full.v, iz, axes=([1], [0])), 0, -1)
            )
        return self.tint  # type: ignore[return-value]

    @property
    def air_c(self) -> np.ndarray:
        """(M, N) air node temperature [degC]."""
        return self.temps_c[:, :, 0]

    @property
    def n_members(self) -> int:
        return self.temps_c.shape[0]


@dataclass(frozen=True, eq=False)
class Crossing:
    """Plant temperature against a threshold, per member, on the exact solution.

    Attributes
    ----------
    threshold_c : (M,) [degC]
    time_s : (M,) first time the plant temperature reaches the threshold [s]; NaN if it
        never does; the first grid time if it starts at or below
    min_c, min_time_s : (M,) lowest plant temperature [degC] and when [s]
    hours_below : (M,) time spent strictly below the threshold [h]
    """

    threshold_c: np.ndarray
    time_s: np.ndarray
    min_c: np.ndarray
    min_time_s: np.ndarray
    hours_below: np.ndarray

    @property
    def crossed(self) -> np.ndarray:
        """(M,) bool: the threshold is reached."""
        return ~np.isnan(self.time_s)


@dataclass(frozen=True, eq=False)
class HoldResult:
    """Heat that holds the air at a setpoint (clipped at 0: above it the house floats).

    Attributes
    ----------
    times_s : (N,) [s]
    power_w : (M, N) heater output at the grid points [W]
    peak_w, peak_time_s : (M,) highest output on the exact solution [W], and when [s]
    energy_j : (M,) exact heat over the run [J] (an initial air temperature below the
        setpoint is lifted at once; that heat is included)
    step_energy_j : (M, N-1) [J]
    temps_c : (M, N, n) [degC]
    trajectory : the full `Trajectory`
    """

    times_s: np.ndarray
    power_w: np.ndarray
    peak_w: np.ndarray
    peak_time_s: np.ndarray
    energy_j: np.ndarray
    step_energy_j: np.ndarray
    temps_c: np.ndarray
    trajectory: Trajectory


def _no_switches(n: int) -> Switches:
    e = np.zeros(0)
    return Switches(e.astype(int), e.astype(int), e, e, e.astype(np.int8), np.zeros((0, n)))


# --------------------------------------------------------------------------------------
# free float
# --------------------------------------------------------------------------------------


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
    prob = _problem(network, times_s, boundary_c, initial_c, gains_w, heat_w)
    mm, nt = prob.n_members, prob.times_s.size
    full, tab = network._full, prob.full  # type: ignore[attr-defined]
    z0 = prob.initial_c @ full.w.T  # (Mi, r)
    z = np.empty((full.lam.size, mm, nt))
    for i in range(full.lam.size):
        f = tab.f1[:, i] * prob.bt[i, :, :-1] + tab.f2[:, i] * prob.dbt[i]
        z[i] = _recur1(tab.e[:, i], prob.uniform, f, z0[:, i], mm)
    temps = _project(full.v, np.moveaxis(z, 0, -1))  # (n, M, N)
    temps[:, :, 0] = np.broadcast_to(prob.initial_c, (mm, network.n_nodes)).T
    temps = np.moveaxis(temps, 0, -1)
    if heat_w is None:
        q, step_q = np.zeros((mm, nt)), np.zeros((mm, nt - 1))
    else:
        q = np.array(np.broadcast_to(_series(heat_w, "heat_w", nt, None), (mm, nt)))
        step_q = 0.5 * prob.h * (q[:, :-1] + q[:, 1:])
    zero = np.zeros((mm, nt - 1))
    return Trajectory(
        prob.times_s,
        temps,
        q,
        np.zeros((mm, nt)),
        step_q.sum(axis=1),
        np.zeros(mm),
        step_q,
        zero,
        None,
        np.zeros((mm, nt - 1), dtype=np.int8),
        _no_switches(network.n_nodes),
        network,
        prob,
        None,
        z,
    )


# --------------------------------------------------------------------------------------
# analysis of a trajectory: pieces of one mode, and their exact extremes and crossings
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Pieces:
    """Sub-step pieces of a run between switches (whole steps are kept on the grid)."""

    split: np.ndarray  # (M, N-1) bool: step has switches
    member: np.ndarray
    step: np.ndarray
    s0: np.ndarray
    w: np.ndarray
    mode: np.ndarray
    x0: np.ndarray  # (K, n)


def _pieces(tr: Trajectory) -> _Pieces:
    mm, n1 = tr.mode.shape
    sw = tr.switches
    split = np.zeros((mm, n1), dtype=bool)
    if sw.member.size == 0:
        e = np.zeros(0, dtype=int)
        return _Pieces(split, e, e, np.zeros(0), np.zeros(0), e, np.zeros((0, tr.network.n_nodes)))
    split[sw.member, sw.step] = True
    new = np.ones(sw.member.size, dtype=bool)
    new[1:] = (sw.member[1:] != sw.member[:-1]) | (sw.step[1:] != sw.step[:-1])
    last = np.ones(sw.member.size, dtype=bool)
    last[:-1] = new[1:]
    h = tr.problem.h
    end = np.where(last, h[sw.step], np.roll(sw.offset_s, -1))
    gm, gk = sw.member[new], sw.step[new]
    member = np.concatenate([gm, sw.member])
    step = np.concatenate([gk, sw.step])
    s0 = np.concatenate([np.zeros(gm.size), sw.offset_s])
    s1 = np.concatenate([sw.offset_s[new], end])
    mode = np.concatenate([tr.mode[gm, gk], sw.mode]).astype(int)
    x0 = np.concatenate([tr.temps_c[gm, gk], sw.state_c])
    keep = s1 > s0
    return _Pieces(split, member[keep], step[keep], s0[keep], (s1 - s0)[keep], mode[keep], x0[keep])


def _float_el(tr, member, step, s0, w, x0, q, weight, g0, e1):  # type: ignore[no-untyped-def]
    """_ExpLin of ``weight . z`` for float pieces (full network, heater q)."""
    prob, full = tr.problem, tr.network._full
    m = tr.network.n_boundaries
    bk = prob.bt[:, member % prob.bt.shape[1], step].T
    db = prob.bt[:, member % prob.bt.shape[1], step + 1].T - bk
    h = prob.h[step][:, None]
    beta = bk + db * (s0[:, None] / h) + q[:, None] * full.bm[:, m]
    z0 = x0 @ full.w.T
    return _ExpLin(full.lam, weight * z0, weight * beta, weight * db / h, g0, e1, w)


def _clamp_el(tr, member, step, s0, w, x0, tc, weight, g0, e1):  # type: ignore[no-untyped-def]
    """_ExpLin of ``weight . z_red`` for pieces with the air held at tc."""
    prob, red = tr.problem, tr.network._red
    m = tr.network.n_boundaries
    bk = prob.brt[:, member % prob.brt.shape[1], step].T
    db = prob.brt[:, member % prob.brt.shape[1], step + 1].T - bk
    h = prob.h[step][:, None]
    beta = bk + db * (s0[:, None] / h) + tc[:, None] * red.bm[:, m]
    z0 = x0[:, 1:] @ red.w.T
    return _ExpLin(red.lam, weight * z0, weight * beta, weight * db / h, g0, e1, w)


def _member_values(value: object, name: str, mm: int) -> np.ndarray:
    a = _float_array(value, name)
    if a.ndim > 1 or (a.ndim == 1 and a.size not in (1, mm)):
        raise ValueError(f"{name} must be a number or one per member ({mm}); got shape {a.shape}")
    return np.array(np.broadcast_to(a.reshape(-1), (mm,)))


def _offset(offset_k: object, nt: int, mm: int) -> np.ndarray:
    if offset_k is None:
        return np.zeros((1, nt))
    off = _series(offset_k, "offset_k", nt, None)
    if off.shape[0] not in (1, mm):
        raise ValueError(f"offset_k has {off.shape[0]} members, the trajectory {mm}")
    if np.any(off < 0):
        raise ValueError("offset_k must be >= 0 (plants run colder than the air, not warmer)")
    return off


def _scatter_min(best, best_t, member, val, t):  # type: ignore[no-untyped-def]
    """best[member] = min(best, val), with the time of the minimum."""
    better = val < best[member]
    if better.any():
        o = np.argsort(-val[better], kind="stable")
        mi = member[better][o]
        best[mi] = val[better][o]
        best_t[mi] = t[better][o]


def analyse(
    trajectory: Trajectory, threshold_c: float | np.ndarray, offset_k: np.ndarray | None = None
) -> Crossing:
    """Threshold crossing, minimum and hours below of the plant temperature, per member.

    The plant temperature is the air node less ``offset_k`` (>= 0, linear between
    samples). Everything is found on the exact solution inside the steps (and inside the
    pieces between thermostat switches): a grid step whose two end values and curvature
    bound ``h^2/8 max|g''|`` leave no doubt is settled at once, any other is analysed
    exactly (inflection points, extrema, roots).

    Parameters
    ----------
    trajectory : from `free_float` or `thermostat`
    threshold_c : plant damage temperature [degC], a number or one per member
    offset_k : None, (N,) or (M, N) air-to-plant temperature margin [K]

    Returns
    -------
    Crossing

    References
    ----------
    Press et al. (2007), sec. 9.4 (safeguarded Newton on the exact solution); the curvature
    bound is the linear-interpolation remainder ``h^2/8 max|g''|`` of elementary analysis.
    """
    tr = trajectory
    prob, net = tr.problem, tr.network
    mm, nt = tr.temps_c.shape[:2]
    t = tr.times_s
    th = _member_values(threshold_c, "threshold_c", mm)
    off = _offset(offset_k, nt, mm)
    plant = tr.temps_c[:, :, 0] - off
    g = plant - th[:, None]
    ar = np.arange(mm)
    kmin = np.argmin(plant, axis=1)
    best, best_t = plant[ar, kmin].copy(), t[kmin].copy()
    first = np.full(mm, np.inf)
    below = np.zeros(mm)
    h = prob.h
    pcs = _pieces(tr)
    doff = np.diff(off, axis=1) / h  # (Mo, N-1)
    full = net._full  # type: ignore[attr-defined]
    m = net.n_boundaries
    # whole steps in a float mode: bound the curvature, analyse the doubtful ones
    mode = tr.mode
    ctl = tr.control is not None
    ga, gb = g[:, :-1], g[:, 1:]
    qmax = np.zeros(mm) if not ctl else np.broadcast_to(tr.control.q_max_w, (mm,))  # type: ignore[union-attr]
    if ctl:
        flo = ((mode == FLOAT) | (mode == FULL)) & ~pcs.split
        qstep = np.where(mode == FULL, qmax[:, None], 0.0)
    else:
        flo = np.ones((mm, nt - 1), dtype=bool)
        qstep = np.zeros((1, 1))
    zt = (
        tr.modal_z
        if tr.modal_z is not None
        else np.tensordot(full.w, np.moveaxis(tr.temps_c, -1, 0), axes=([1], [0]))
    )
    bound = np.zeros((mm, nt - 1))
    for i, lam in enumerate(full.lam):
        k2 = lam * zt[i, :, :-1]
        k2 += prob.bt[i, :, :-1]
        if ctl:
            k2 += qstep * full.bm[i, m]
        k2 *= lam
        k2 += prob.dbt[i] / h
        np.abs(k2, out=k2)
        k2 *= abs(full.v[0, i])
        bound += k2
    bound *= h**2 / 8
    if ctl:
        bound[~flo] = 0.0
    lob = np.minimum(ga, gb)
    lob -= bound
    hib = np.maximum(ga, gb)
    hib += bound
    is_below = hib < 0
    unsure = lob <= 0
    unsure &= ~is_below
    deep = lob < (best - th)[:, None]
    deep &= ~unsure
    if ctl:
        is_below &= ~pcs.split
        unsure &= ~pcs.split
        deep &= flo
    below += is_below @ h
    hit = is_below.any(axis=1)
    first[hit] = np.minimum(first[hit], t[np.argmax(is_below[hit], axis=1)])
    mi, ki = np.nonzero(unsure | deep)
    fl = flo[mi, ki]
    items = []  # (member, t0, el)
    if mi.size:
        g0 = g[mi, ki]
        e1 = -doff[mi % off.shape[0], ki]
        if fl.any():
            j = fl
            el = _float_el(
                tr,
                mi[j],
                ki[j],
                np.zeros(j.sum()),
                h[ki[j]],
                tr.temps_c[mi[j], ki[j]],
                qstep[mi[j], ki[j]] if ctl else np.zeros(int(j.sum())),
                full.v[0],
                g0[j],
                e1[j],
            )
            items.append((mi[j], t[ki[j]], el, unsure[mi[j], ki[j]]))
        if (~fl).any():
            j = ~fl
            r0 = np.zeros((j.sum(), 0))
            items.append(
                (
                    mi[j],
                    t[ki[j]],
                    _ExpLin(np.zeros(0), r0, r0, r0, g0[j], e1[j], h[ki[j]]),
                    unsure[mi[j], ki[j]],
                )
            )
    # pieces between switches
    if pcs.member.size:
        pm, pk = pcs.member, pcs.step
        offa = off[pm % off.shape[0], pk] + doff[pm % off.shape[0], pk] * pcs.s0
        e1 = -doff[pm % off.shape[0], pk]
        isf = (pcs.mode == FLOAT) | (pcs.mode == FULL)
        if isf.any():
            j = isf
            q = np.where(pcs.mode[j] == FULL, qmax[pm[j]], 0.0)
            g0 = pcs.x0[j, 0] - offa[j] - th[pm[j]]
            el = _float_el(
                tr, pm[j], pk[j], pcs.s0[j], pcs.w[j], pcs.x0[j], q, full.v[0], g0, e1[j]
            )
            items.append((pm[j], t[pk[j]] + pcs.s0[j], el, np.ones(j.sum(), dtype=bool)))
        if (~isf).any():
            j = ~isf
            tc = pcs.x0[j, 0]
            r0 = np.zeros((j.sum(), 0))
            el = _ExpLin(np.zeros(0), r0, r0, r0, tc - offa[j] - th[pm[j]], e1[j], pcs.w[j])
            items.append((pm[j], t[pk[j]] + pcs.s0[j], el, np.ones(j.sum(), dtype=bool)))
    for member, t0, el, count in items:
        f, gmin, smin, blw = _profile(el)
        below += np.bincount(member[count], weights=blw[count], minlength=mm)
        ft = np.where(np.isnan(f), np.inf, t0 + f)
        np.minimum.at(first, member, ft)
        _scatter_min(best, best_t, member, gmin + th[member], t0 + smin)
    return Crossing(th, np.where(np.isinf(first), np.nan, first), best, best_t, below / 3600.0)


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


# --------------------------------------------------------------------------------------
# thermostat
# --------------------------------------------------------------------------------------


class _Run:
    """One thermostat run: runs of whole steps in one mode as a linear recurrence, and the
    steps where a mode changes split at the exact switching instants."""

    def __init__(self, prob: _Problem, ctl: _Control) -> None:
        net = prob.network
        self.p, self.ctl = prob, ctl
        self.net = net
        mm, nt, n, m = prob.n_members, prob.times_s.size, net.n_nodes, net.n_boundaries
        self.f, self.r = net._full, net._red  # type: ignore[attr-defined]
        self.v0, self.bq, self.bc = self.f.v[0], self.f.bm[:, m], self.r.bm[:, m]
        self.wq, self.gsum = net._wq, net._gsum  # type: ignore[attr-defined]
        self.c0 = float(net.capacitance_j_per_k[0])
        self.tolq = _TOL_K * self.gsum
        tf, tr_ = prob.full, prob.red
        self.b = np.ascontiguousarray(prob.b)
        self.bru = np.ascontiguousarray(prob.bru)
        self.db = np.ascontiguousarray(prob.db)
        self.dbr = np.ascontiguousarray(np.diff(prob.bru, axis=1))
        self.dqb = np.diff(prob.qb, axis=1)
        rf, rr = self.f.lam.size, self.r.lam.size
        self.zf = _recurrence(
            tf.e,
            prob.uniform,
            tf.f1 * self.b[:, :-1] + tf.f2 * self.db,
            np.zeros((self.b.shape[0], rf)),
        )
        self.zq = _recurrence(tf.e, prob.uniform, (tf.f1 * self.bq)[None], np.zeros((1, rf)))[0]
        self.zc = {}
        for md, series in ((HOLD, ctl.setpoint_c), (VENT, ctl.vent_c)):
            tc = np.where(np.isfinite(series), series, 0.0)[:, :-1, None]
            fc = tr_.f1 * (self.bru[:, :-1] + tc * self.bc) + tr_.f2 * self.dbr
            self.zc[md] = _recurrence(tr_.e, prob.uniform, fc, np.zeros((fc.shape[0], rr)))
        self.clamp = {HOLD: ctl.setpoint_c, VENT: ctl.vent_c}
        self.q = np.broadcast_to(ctl.q_max_w, (mm,))
        self.temps = np.empty((mm, nt, n))
        self.heat_w = np.zeros((mm, nt))
        self.vent_w = np.zeros((mm, nt))
        self.step_heat = np.zeros((mm, nt - 1))
        self.step_vent = np.zeros((mm, nt - 1))
        self.tint = np.zeros((mm, nt - 1, n))
        self.mode = np.zeros((mm, nt - 1), dtype=np.int8)
        self.events: list[tuple[np.ndarray, ...]] = []
        self._scalar = _ScalarStep(self)

    # -- windows of whole steps in one mode -------------------------------------------

    def _window(self, md: int, g: np.ndarray, k: int, nl: int, x: np.ndarray) -> dict:
        p, sl = self.p, slice(k, k + nl + 1)
        h = p.h[k : k + nl]
        tol = _TOL_K
        if md in (FLOAT, FULL):
            lam, tab = self.f.lam, p.full
            q = self.q[g] if md == FULL else np.zeros(g.size)
            z0 = x @ self.f.w.T
            base = _pick(self.zf[:, sl], g) + q[:, None, None] * self.zq[sl]
            zz = np.empty((g.size, nl + 1, lam.size))
            zz[:, 0] = z0
            zz[:, 1:] = (
                base[:, 1:] + np.cumprod(tab.e[k : k + nl], axis=0) * (z0 - base[:, 0])[:, None, :]
            )
            ta = _dot(zz, self.v0)
            ta[:, 0] = x[:, 0]
            beta = _pick(self.b[:, k : k + nl], g) + q[:, None, None] * self.bq
            dbw = _pick(self.db[:, k : k + nl], g)
            k2 = lam * (lam * zz[:, :-1] + beta) + dbw / h[:, None]
            bound = h**2 / 8 * np.abs(k2 * self.v0).sum(-1)
            lo = np.minimum(ta[:, :-1], ta[:, 1:]) - bound
            hi = np.maximum(ta[:, :-1], ta[:, 1:]) + bound
            sp = _pick(self.ctl.setpoint_c[:, k : k + nl], g)
            if md == FULL:
                ok = hi <= sp + tol
            else:
                vt = _pick(self.ctl.vent_c[:, k : k + nl], g)
                ok = (hi <= vt + tol) & ((self.q[g] <= 0)[:, None] | (lo >= sp - tol))
            return {"z": zz, "beta": beta, "db": dbw, "q": q, "ok": ok}
        lam, tab = self.r.lam, p.red
        tc = _pick(self.clamp[md][:, k : k + nl], g)
        z0 = x[:, 1:] @ self.r.w.T
        base = _pick(self.zc[md][:, sl], g)
        zz = np.empty((g.size, nl + 1, lam.size))
        zz[:, 0] = z0
        zz[:, 1:] = (
            base[:, 1:] + np.cumprod(tab.e[k : k + nl], axis=0) * (z0 - base[:, 0])[:, None, :]
        )
        qb = _pick(p.qb[:, sl], g)
        qz = _dot(zz, self.wq)
        qs = qb[:, :-1] + qz[:, :-1] + tc * self.gsum
        qe = qb[:, 1:] + qz[:, 1:] + tc * self.gsum
        beta = _pick(self.bru[:, k : k + nl], g) + tc[..., None] * self.bc
        dbw = _pick(self.dbr[:, k : k + nl], g)
        k2 = lam * (lam * zz[:, :-1] + beta) + dbw / h[:, None]
        bound = h**2 / 8 * np.abs(k2 * self.wq).sum(-1)
        same = np.empty(tc.shape, dtype=bool)
        same[:, 0] = np.abs(x[:, 0] - tc[:, 0]) <= tol
        same[:, 1:] = tc[:, 1:] == tc[:, :-1]
        if md == HOLD:
            ok = (
                same
                & (np.minimum(qs, qe) - bound >= -self.tolq)
                & (np.maximum(qs, qe) + bound <= self.q[g][:, None] + self.tolq)
            )
        else:
            ok = same & (np.maximum(qs, qe) + bound <= self.tolq)
        return {"z": zz, "beta": beta, "db": dbw, "tc": tc, "qb": qb, "qs": qs, "ok": ok}

    def _accept(
        self, md: int, g: np.ndarray, win: dict, rows: np.ndarray, k: int, nj: int
    ) -> np.ndarray:
        """Store steps k..k+nj-1 of window rows for members g[rows]; return the end state."""
        p, mem = self.p, g[rows]
        if nj == 0:
            return None  # type: ignore[return-value]
        zz = win["z"][rows, : nj + 1]
        beta, dbw = win["beta"][rows, :nj], win["db"][rows, :nj]
        ks = slice(k, k + nj)
        self.mode[mem, ks] = md
        if md in (FLOAT, FULL):
            tab, v = p.full, self.f.v
            x = _dot(zz[:, 1:], v.T)
            self.temps[mem, k + 1 : k + nj + 1] = x
            iz = tab.f1[ks] * zz[:, :-1] + tab.i2[ks] * beta + tab.i3[ks] * dbw
            self.tint[mem, ks] = _dot(iz, v.T)
            q = win["q"][rows]
            self.heat_w[mem, ks] = q[:, None]
            self.step_heat[mem, ks] = q[:, None] * p.h[ks]
            return x[:, -1]
        tab, v = p.red, self.r.v
        tc = win["tc"][rows, :nj]
        x = np.empty((mem.size, nj, self.net.n_nodes))
        x[:, :, 0] = tc
        x[:, :, 1:] = _dot(zz[:, 1:], v.T)
        self.temps[mem, k + 1 : k + nj + 1] = x
        iz = tab.f1[ks] * zz[:, :-1] + tab.i2[ks] * beta + tab.i3[ks] * dbw
        ti = np.empty((mem.size, nj, self.net.n_nodes))
        ti[:, :, 0] = tc * p.h[ks]
        ti[:, :, 1:] = _dot(iz, v.T)
        self.tint[mem, ks] = ti
        qb = win["qb"][rows, : nj + 1]
        iq = 0.5 * p.h[ks] * (qb[:, :-1] + qb[:, 1:]) + _dot(iz, self.wq) + tc * self.gsum * p.h[ks]
        if md == HOLD:
            self.heat_w[mem, ks] = win["qs"][rows, :nj]
            self.step_heat[mem, ks] = iq
        else:
            self.vent_w[mem, ks] = -win["qs"][rows, :nj]
            self.step_vent[mem, ks] = -iq
        return x[:, -1]

    # -- one step with switches ---------------------------------------------------------

    def _qreq(self, k, g, s, x, tc):  # type: ignore[no-untyped-def]
        """Heater power that holds the air at tc, and its rate, at offset s of step k."""
        p = self.p
        frac = s / p.h[k]
        zr = x[:, 1:] @ self.r.w.T
        qb = _pick(p.qb[:, k], g) + _pick(self.dqb[:, k], g) * frac
        q = qb + zr @ self.wq + tc * self.gsum
        beta = (
            _pick(self.bru[:, k], g)
            + _pick(self.dbr[:, k], g) * frac[:, None]
            + tc[:, None] * self.bc
        )
        dq = _pick(self.dqb[:, k], g) / p.h[k] + (self.r.lam * zr + beta) @ self.wq
        return q, dq

    def _classify(self, k, g, s, x, start):  # type: ignore[no-untyped-def]
        """Mode at offset s of step k for state x; at a step start also the jumps."""
        tol = _TOL_K
        sp = _pick(self.ctl.setpoint_c[:, k], g)
        vt = _pick(self.ctl.vent_c[:, k], g)
        qm = self.q[g]
        heater = qm > 0
        x = x.copy()
        ta = x[:, 0]
        jh = np.zeros(g.size)
        jv = np.zeros(g.size)
        if start:
            hot = ta > vt + tol
            jv[hot] = self.c0 * (ta[hot] - vt[hot])
            ta[hot] = vt[hot]
            lift = heater & np.isinf(qm) & (ta < sp - tol)
            jh[lift] = self.c0 * (sp[lift] - ta[lift])
            ta[lift] = sp[lift]
        md = np.full(g.size, FLOAT, dtype=np.int8)
        cold = heater & (ta < sp - tol)
        md[cold] = FULL
        at_s = heater & ~cold & (np.abs(ta - sp) <= tol)
        at_v = ~at_s & (np.abs(ta - vt) <= tol)
        sel = np.flatnonzero(at_s | at_v)
        heat = np.where(cold, qm, 0.0)
        vent = np.zeros(g.size)
        if sel.size:
            tc = np.where(at_s[sel], sp[sel], vt[sel])
            xs = x[sel].copy()
            xs[:, 0] = tc
            q, dq = self._qreq(k, g[sel], s[sel], xs, tc)
            t0, tm = np.abs(q) <= self.tolq, np.abs(q - qm[sel]) <= self.tolq
            full = (q > qm[sel] + self.tolq) | tm & (dq > 0)
            hold = ~full & ((q > self.tolq) | t0 & (dq >= 0))
            vent_ok = (q < -self.tolq) | t0 & (dq < 0)
            both = np.abs(sp[sel] - vt[sel]) <= tol
            ms = np.where(full, FULL, np.where(hold, HOLD, np.where(both & vent_ok, VENT, FLOAT)))
            mv = np.where(vent_ok, VENT, FLOAT)
            new = np.where(at_s[sel], ms, mv).astype(np.int8)
            md[sel] = new
            clamp = (new == HOLD) | (new == VENT)
            ta[sel[clamp]] = tc[clamp]
            heat[sel] = np.where(new == HOLD, q, np.where(new == FULL, qm[sel], 0.0))
            vent[sel] = np.where(new == VENT, -q, 0.0)
        x[:, 0] = ta
        return x, md, heat, vent, jh, jv

    def _adv_float(self, k, g, s, w, x, q):  # type: ignore[no-untyped-def]
        p, lam = self.p, self.f.lam
        h = p.h[k]
        bk = _pick(self.b[:, k], g)
        dbk = _pick(self.db[:, k], g)
        beta = bk + dbk * (s / h)[:, None] + q[:, None] * self.bq
        gam = dbk / h
        e, p1, p2, p3 = _phi123(lam * w[:, None])
        ww = w[:, None]
        z0 = x @ self.f.w.T
        z1 = e * z0 + ww * p1 * beta + ww * ww * p2 * gam
        iz = ww * p1 * z0 + ww * ww * p2 * beta + ww**3 * p3 * gam
        return z1 @ self.f.v.T, iz @ self.f.v.T, q * w

    def _adv_clamp(self, k, g, s, w, x, tc):  # type: ignore[no-untyped-def]
        p, lam = self.p, self.r.lam
        h = p.h[k]
        bk = _pick(self.bru[:, k], g)
        dbk = _pick(self.dbr[:, k], g)
        beta = bk + dbk * (s / h)[:, None] + tc[:, None] * self.bc
        gam = dbk / h
        e, p1, p2, p3 = _phi123(lam * w[:, None])
        ww = w[:, None]
        z0 = x[:, 1:] @ self.r.w.T
        z1 = e * z0 + ww * p1 * beta + ww * ww * p2 * gam
        iz = ww * p1 * z0 + ww * ww * p2 * beta + ww**3 * p3 * gam
        qb0 = _pick(p.qb[:, k], g) + _pick(self.dqb[:, k], g) * (s / h)
        qb1 = qb0 + _pick(self.dqb[:, k], g) * (w / h)
        iq = 0.5 * w * (qb0 + qb1) + iz @ self.wq + tc * self.gsum * w
        x1 = np.empty_like(x)
        x1[:, 0] = tc
        x1[:, 1:] = z1 @ self.r.v.T
        ix = np.empty_like(x)
        ix[:, 0] = tc * w
        ix[:, 1:] = iz @ self.r.v.T
        return x1, ix, iq

    def _events(self, k, g, s, x, md):  # type: ignore[no-untyped-def]
        """Offset (from s) of the next switch in the current mode, inf if none this step."""
        p = self.p
        h = p.h[k]
        rem = h - s
        root = np.full(g.size, np.inf)
        sp = _pick(self.ctl.setpoint_c[:, k], g)
        vt = _pick(self.ctl.vent_c[:, k], g)
        qm = self.q[g]
        fl = np.flatnonzero((md == FLOAT) | (md == FULL))
        cl = np.flatnonzero((md == HOLD) | (md == VENT))
        for group, isfloat in ((fl, True), (cl, False)):
            if group.size == 0:
                continue
            gg = g[group]
            rows, sign, g0, e1 = [], [], [], []
            if isfloat:
                ta = x[group, 0]
                mg = md[group]
                for sel, sg, val in (
                    ((mg == FLOAT) & (qm[group] > 0), 1.0, ta - sp[group]),
                    ((mg == FLOAT) & np.isfinite(vt[group]), -1.0, vt[group] - ta),
                    (mg == FULL, -1.0, sp[group] - ta),
                ):
                    i = np.flatnonzero(sel)
                    rows.append(i)
                    sign.append(np.full(i.size, sg))
                    g0.append(val[i])
                    e1.append(np.zeros(i.size))
            else:
                mg = md[group]
                tc = np.where(mg == HOLD, sp[group], vt[group])
                q0, _ = self._qreq(k, gg, s[group], x[group], tc)
                dq = _pick(self.dqb[:, k], gg) / h
                for sel, sg, val in (
                    (mg == HOLD, 1.0, q0),
                    ((mg == HOLD) & np.isfinite(qm[group]), -1.0, qm[group] - q0),
                    (mg == VENT, -1.0, -q0),
                ):
                    i = np.flatnonzero(sel)
                    rows.append(i)
                    sign.append(np.full(i.size, sg))
                    g0.append(val[i])
                    e1.append(sg * dq[i])
            i = np.concatenate(rows)
            if i.size == 0:
                continue
            sg = np.concatenate(sign)[:, None]
            mem, ss = g[group[i]], s[group[i]]
            if isfloat:
                q = np.where(md[group[i]] == FULL, qm[group[i]], 0.0)
                bk = _pick(self.b[:, k], mem)
                dbk = _pick(self.db[:, k], mem)
                beta = bk + dbk * (ss / h)[:, None] + q[:, None] * self.bq
                z0 = x[group[i]] @ self.f.w.T
                wt = sg * self.v0
                el = _ExpLin(
                    self.f.lam,
                    wt * z0,
                    wt * beta,
                    wt * dbk / h,
                    np.concatenate(g0),
                    np.concatenate(e1),
                    rem[group[i]],
                )
            else:
                tc = np.where(md[group[i]] == HOLD, sp[group[i]], vt[group[i]])
                bk = _pick(self.bru[:, k], mem)
                dbk = _pick(self.dbr[:, k], mem)
                beta = bk + dbk * (ss / h)[:, None] + tc[:, None] * self.bc
                z0 = x[group[i], 1:] @ self.r.w.T
                wt = sg * self.wq
                el = _ExpLin(
                    self.r.lam,
                    wt * z0,
                    wt * beta,
                    wt * dbk / h,
                    np.concatenate(g0),
                    np.concatenate(e1),
                    rem[group[i]],
                )
            rt = _first_root(el, entered=True)
            rt = np.where(np.isnan(rt), np.inf, rt)
            np.minimum.at(root, group[i], rt)
        # a switch at the very end of the step is taken at the next step's start
        root[root >= rem * (1 - 1e-12)] = np.inf
        return root

    def _exact(self, k: int, g: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Step k for members g from state x (left limit at t_k), switches split exactly."""
        if g.size <= _SCALAR_MAX:
            out = [self._scalar.step(k, int(i), x[j].tolist()) for j, i in enumerate(g)]
            return np.array([o[0] for o in out]), np.array([o[1] for o in out], dtype=np.int8)
        p = self.p
        h = p.h[k]
        s = np.zeros(g.size)
        x, md, heat, vent, jh, jv = self._classify(k, g, s, x, start=True)
        self.mode[g, k] = md
        self.heat_w[g, k] = heat
        self.vent_w[g, k] = vent
        jump = (jh > 0) | (jv > 0)
        if jump.any():
            self._record(g[jump], k, s[jump], md[jump], x[jump])
        eh, ev = jh, jv
        ti = np.zeros_like(x)
        act = np.arange(g.size)
        for _ in range(_MAX_SWITCHES):
            gg, xa, ma, sa = g[act], x[act], md[act], s[act]
            dt = self._events(k, gg, sa, xa, ma)
            ev_ = np.isfinite(dt)
            w = np.where(ev_, dt, h - sa)
            xn = np.empty_like(xa)
            for isfloat in (True, False):
                j = np.flatnonzero(((ma == FLOAT) | (ma == FULL)) == isfloat)
                if j.size == 0:
                    continue
                if isfloat:
                    q = np.where(ma[j] == FULL, self.q[gg[j]], 0.0)
                    x1, ix, e = self._adv_float(k, gg[j], sa[j], w[j], xa[j], q)
                    eh[act[j]] += e
                else:
                    tc = np.where(
                        ma[j] == HOLD,
                        _pick(self.ctl.setpoint_c[:, k], gg[j]),
                        _pick(self.ctl.vent_c[:, k], gg[j]),
                    )
                    x1, ix, iq = self._adv_clamp(k, gg[j], sa[j], w[j], xa[j], tc)
                    eh[act[j]] += np.where(ma[j] == HOLD, iq, 0.0)
                    ev[act[j]] += np.where(ma[j] == VENT, -iq, 0.0)
                xn[j] = x1
                ti[act[j]] += ix
            s[act] = sa + w
            x[act] = xn
            e = np.flatnonzero(ev_)
            if e.size == 0:
                break
            ae = act[e]
            xe, me, _, _, _, _ = self._classify(k, g[ae], s[ae], x[ae], start=False)
            x[ae], md[ae] = xe, me
            self._record(g[ae], k, s[ae], me, xe)
            act = ae
        else:
            raise RuntimeError(f"thermostat: more than {_MAX_SWITCHES} switches in step {k}")
        self.step_heat[g, k] = eh
        self.step_vent[g, k] = ev
        self.tint[g, k] = ti
        self.temps[g, k + 1] = x
        return x, md

    def _record(self, mem, k, s, md, x):  # type: ignore[no-untyped-def]
        self.events.append(
            (mem.copy(), np.full(mem.size, k), s.copy(), md.astype(np.int8), x.copy())
        )

    # -- the whole run -------------------------------------------------------------------

    def run(self) -> Trajectory:
        p = self.p
        mm, nt = p.n_members, p.times_s.size
        x = np.array(np.broadcast_to(p.initial_c, (mm, self.net.n_nodes)))
        self.temps[:, 0] = x
        md = np.full(mm, -1, dtype=np.int8)  # unknown: the first step is classified
        # a window costs ~40 array operations: long for few members, short for many
        lmax = int(np.clip(32768 // mm, 8, 4096))
        k, nl, run, typical = 0, 16, 0, 16.0
        if mm == 1:
            return self._run1(x, lmax)
        while k < nt - 1:
            nl = min(nl, nt - 1 - k)
            bad = np.full(mm, nl)
            bad[md < 0] = 0
            wins = []
            for mv in np.unique(md[md >= 0]):
                g = np.flatnonzero(md == mv)
                win = self._window(int(mv), g, k, nl, x[g])
                ok = win["ok"]
                bad[g] = np.where(ok.all(axis=1), nl, np.argmin(ok, axis=1))
                wins.append((int(mv), g, win))
            jj = int(bad.min())
            for mv, g, win in wins:
                take = np.where(bad[g] > jj, jj + 1, jj) if jj < nl else np.full(g.size, nl)
                for nj in np.unique(take):
                    rows = np.flatnonzero(take == nj)
                    if nj:
                        x[g[rows]] = self._accept(mv, g, win, rows, k, int(nj))
            if jj < nl:
                e = np.flatnonzero(bad == jj)
                x[e], md[e] = self._exact(k + jj, e, x[e])
                k += jj + 1
                run += jj
                if run > 2:  # the length of a run of one mode, smoothed
                    typical = 0.5 * typical + 0.5 * run
                    run = 0
                nl = int(np.clip(max(2 * (jj + 1), 3 * typical), 8, lmax))
            else:
                k += nl
                run += nl
                nl = min(2 * nl, lmax)
        self._finish(x, md)
        return self._trajectory()

    def _finish(self, x: np.ndarray, md: np.ndarray) -> None:
        """Heater and vent output at the last grid point: the final mode, just before it."""
        p = self.p
        mm, nt = p.n_members, p.times_s.size
        # the output at the last grid point: the final mode, just before it
        g = np.arange(mm)
        hold_, vent_ = md == HOLD, md == VENT
        tc = np.where(
            hold_,
            self.ctl.setpoint_c[g % self.ctl.setpoint_c.shape[0], nt - 2],
            self.ctl.vent_c[g % self.ctl.vent_c.shape[0], nt - 2],
        )
        tc = np.where(hold_ | vent_, tc, x[:, 0])
        q, _ = self._qreq(nt - 2, g, np.full(mm, p.h[-1]), x, tc)
        self.heat_w[:, -1] = np.where(hold_, q, np.where(md == FULL, self.q, 0.0))
        self.vent_w[:, -1] = np.where(vent_, -q, 0.0)

    def _run1(self, x: np.ndarray, lmax: int) -> Trajectory:
        """`run` for one member: the same rounds without the member bookkeeping."""
        nt = self.p.times_s.size
        g, rows = np.zeros(1, dtype=np.intp), np.zeros(1, dtype=np.intp)
        xs, md = x[0].tolist(), -1
        k, nl, run, typical = 0, 16, 0, 16.0
        while k < nt - 1:
            nl = min(nl, nt - 1 - k)
            jj = 0
            if md >= 0:
                win = self._window(md, g, k, nl, np.array([xs]))
                ok = win["ok"][0]
                jj = nl if ok.all() else int(ok.argmin())
                if jj:
                    xs = self._accept(md, g, win, rows, k, jj)[0].tolist()
            if jj < nl:
                xs, md = self._scalar.step(k + jj, 0, xs)
                k += jj + 1
                run += jj
                if run > 2:
                    typical = 0.5 * typical + 0.5 * run
                    run = 0
                nl = int(np.clip(max(2 * (jj + 1), 3 * typical), 8, lmax))
            else:
                k += nl
                run += nl
                nl = min(2 * nl, lmax)
        self._finish(np.array([xs]), np.array([md], dtype=np.int8))
        return self._trajectory()

    def _trajectory(self) -> Trajectory:
        p = self.p
        n = self.net.n_nodes
        if self.events:
            mem, stp, off, mode, st = (np.concatenate(a) for a in zip(*self.events, strict=True))
            o = np.lexsort((off, stp, mem))
            sw = Switches(mem[o], stp[o], off[o], p.times_s[stp[o]] + off[o], mode[o], st[o])
        else:
            sw = _no_switches(n)
        return Trajectory(
            p.times_s,
            self.temps,
            self.heat_w,
            self.vent_w,
            self.step_heat.sum(axis=1),
            self.step_vent.sum(axis=1),
            self.step_heat,
            self.step_vent,
            self.tint,
            self.mode,
            sw,
            self.net,
            p,
            self.ctl,
        )


def _sphi(x: float) -> tuple[float, float, float, float]:
    """Scalar `_phi123` (series below |x| = 0.05: nine terms reach round-off)."""
    if abs(x) < 0.05:
        s1, s2, s3 = _RF[10], _RF[11], _RF[12]
        for j in range(8, -1, -1):
            s1 = s1 * x + _RF[j + 1]
            s2 = s2 * x + _RF[j + 2]
            s3 = s3 * x + _RF[j + 3]
        return math.exp(x), float(s1), float(s2), float(s3)
    p1 = math.expm1(x) / x
    p2 = (p1 - 1.0) / x
    return math.exp(x), p1, p2, (p2 - 0.5) / x


def _sval(it, s):  # type: ignore[no-untyped-def]
    lam, z, b, c, g0, e1 = it
    out = g0 + e1 * s
    for la, zi, bi, ci in zip(lam, z, b, c, strict=True):
        x = la * s
        em = math.expm1(x)
        out += em * zi + em / la * bi + (em - x) / (la * la) * ci
    return out


def _sd1(it, s):  # type: ignore[no-untyped-def]
    lam, z, b, c, g0, e1 = it
    out = e1
    for la, zi, bi, ci in zip(lam, z, b, c, strict=True):
        em = math.expm1(la * s)
        out += (em + 1.0) * (la * zi + bi) + em / la * ci
    return out


def _sd2(it, s):  # type: ignore[no-untyped-def]
    lam, z, b, c, g0, e1 = it
    return sum(
        math.exp(la * s) * (la * (la * zi + bi) + ci)
        for la, zi, bi, ci in zip(lam, z, b, c, strict=True)
    )


def _ssolve(f, df, a: float, b: float, fa: float, fb: float | None = None) -> float:  # type: ignore[no-untyped-def]
    """Scalar `_solve`; with ``fb`` it starts from the secant instead of the midpoint."""
    lo, hi, pos = a, b, fa > 0
    x = 0.5 * (a + b)
    if fb is not None and fa != fb:
        xs = a - fa * (b - a) / (fb - fa)
        if a < xs < b:
            x = xs
    tol = 1e-13 * (b - a) + 1e-300
    for _ in range(200):
        fx = f(x)
        if fx == 0:
            return x
        if (fx > 0) == pos:
            lo = x
        else:
            hi = x
        d = df(x)
        xn = x - fx / d if d != 0 else math.nan
        if not (min(lo, hi) < xn < max(lo, hi)):
            xn = 0.5 * (lo + hi)
        if abs(xn - x) <= tol or abs(hi - lo) <= tol:
            return xn
        x = xn
    return x


def _sfirst_root(it, w: float) -> float:  # type: ignore[no-untyped-def]
    """Scalar `_first_root` with ``entered=True``; inf if no root."""
    lam, z, b, c, g0, e1 = it
    r = len(lam)
    k1 = [la * zi + bi for la, zi, bi in zip(lam, z, b, strict=True)]
    k2 = [la * k + ci for la, k, ci in zip(lam, k1, c, strict=True)]
    if r <= 1:
        br = [0.0, w]
    elif r == 2:
        j = 0 if lam[0] >= lam[1] else 1
        o = 1 - j
        br = [0.0, w]
        if k2[o] != 0 and -k2[j] / k2[o] > 0 and lam[o] != lam[j]:
            si = math.log(-k2[j] / k2[o]) / (lam[o] - lam[j])
            if 0 < si < w:
                br = [0.0, si, w]
    else:
        one = np.ones(1)
        el = _ExpLin(
            np.array(lam), np.array([z]), np.array([b]), np.array([c]), one * g0, one * e1, one * w
        )
        br = _convex_breaks(el)[0].tolist()
    gw = _sval(it, w)
    if g0 > 0 and gw > 0 and min(g0, gw) - w * w / 8 * sum(map(abs, k2)) > 0:
        return math.inf  # |g''| <= sum |k2|: no way down to 0 inside
    gv = [g0] + [_sval(it, x) for x in br[1:-1]] + [gw]
    if g0 <= 0:
        scale = (
            abs(e1)
            + sum(abs(la * zi) + abs(bi) for la, zi, bi in zip(lam, z, b, strict=True))
            + 1e-300
        )
        d0 = _sd1(it, 0.0)
        tie = abs(d0) <= 1e-12 * scale
        if (d0 < 0 and not tie) or (tie and _sd2(it, 0.0) < 0):
            return 0.0
        gv[0] = 1e-300
    f, df, d2 = (lambda x: _sval(it, x)), (lambda x: _sd1(it, x)), (lambda x: _sd2(it, x))
    for p in range(len(br) - 1):
        a, bb = br[p], br[p + 1]
        if bb <= a:
            continue
        ga, gb = gv[p], gv[p + 1]
        if gb <= 0:
            if gb == 0:
                return bb
            # secant start unless g(0) only counts as +0 (a mode just entered)
            return _ssolve(f, df, a, bb, ga, gb if ga > 1e-250 else None)
        da, db = df(a), df(bb)
        if d2(0.5 * (a + bb)) > 0 and da < 0 < db:
            sx = (gb - ga + da * a - db * bb) / (da - db)
            if not ga + da * (sx - a) > 0:
                sm = _ssolve(df, d2, a, bb, da)
                gm = f(sm)
                noise = 1e-13 * (
                    sum(map(abs, z))
                    + sum(abs(bi / la) for la, bi in zip(lam, b, strict=True))
                    + abs(g0)
                )
                if gm <= -noise:
                    return _ssolve(f, df, a, sm, ga)
    return math.inf


class _ScalarStep:
    """`_Run._exact` for one member in Python floats: the same rules, step by step."""

    def __init__(self, run: _Run) -> None:
        self.run = run
        f, r = run.f, run.r
        self.lam, self.w, self.v = f.lam.tolist(), f.w.tolist(), f.v.tolist()
        self.bq = run.bq.tolist()
        self.lr, self.wr, self.vr = r.lam.tolist(), r.w.tolist(), r.v.tolist()
        self.bc, self.wq = run.bc.tolist(), run.wq.tolist()
        self.gsum, self.c0 = run.gsum, run.c0
        self.tolq = run.tolq

    def _inputs(self, k: int, i: int) -> None:
        rn = self.run
        ctl = rn.ctl

        def row(a: np.ndarray) -> np.ndarray:
            return a[i if a.shape[0] > 1 else 0, k]

        self.h = float(rn.p.h[k])
        self.bk, self.dbk = row(rn.b).tolist(), row(rn.db).tolist()
        self.brk, self.dbrk = row(rn.bru).tolist(), row(rn.dbr).tolist()
        self.qbk, self.dqbk = float(row(rn.p.qb)), float(row(rn.dqb))
        self.sp, self.vt = float(row(ctl.setpoint_c)), float(row(ctl.vent_c))
        self.qm = float(rn.q[i])

    def _qreq(self, s: float, x: list[float], tc: float) -> tuple[float, float]:
        frac = s / self.h
        zr = [sum(wij * xj for wij, xj in zip(wi, x[1:], strict=True)) for wi in self.wr]
        q = (
            self.qbk
            + self.dqbk * frac
            + sum(a * b for a, b in zip(self.wq, zr, strict=True))
            + tc * self.gsum
        )
        dq = self.dqbk / self.h
        for la, zi, bi, di, ci, wi in zip(
            self.lr, zr, self.brk, self.dbrk, self.bc, self.wq, strict=True
        ):
            dq += wi * (la * zi + bi + di * frac + ci * tc)
        return q, dq

    def _classify(self, s: float, x: list[float], start: bool):  # type: ignore[no-untyped-def]
        tol, sp, vt, qm = _TOL_K, self.sp, self.vt, self.qm
        x = list(x)
        ta, jh, jv = x[0], 0.0, 0.0
        heater = qm > 0
        if start:
            if ta > vt + tol:
                jv, ta = self.c0 * (ta - vt), vt
            if heater and math.isinf(qm) and ta < sp - tol:
                jh, ta = self.c0 * (sp - ta), sp
        md, heat, vent = FLOAT, 0.0, 0.0
        cold = heater and ta < sp - tol
        if cold:
            md, heat = FULL, qm
        at_s = heater and not cold and abs(ta - sp) <= tol
        at_v = not at_s and abs(ta - vt) <= tol
        if at_s or at_v:
            tc = sp if at_s else vt
            q, dq = self._qreq(s, [tc, *x[1:]], tc)
            t0, tm = abs(q) <= self.tolq, abs(q - qm) <= self.tolq
            vent_ok = q < -self.tolq or (t0 and dq < 0)
            if at_s:
                if q > qm + self.tolq or (tm and dq > 0):
                    md = FULL
                elif q > self.tolq or (t0 and dq >= 0):
                    md = HOLD
                elif abs(sp - vt) <= tol and vent_ok:
                    md = VENT
            elif vent_ok:
                md = VENT
            if md in (HOLD, VENT):
                ta = tc
            heat = q if md == HOLD else qm if md == FULL else 0.0
            vent = -q if md == VENT else 0.0
        x[0] = ta
        return x, md, heat, vent, jh, jv

    def _modal(self, x: list[float], w: list[list[float]]) -> list[float]:
        return [sum(a * b for a, b in zip(row, x, strict=True)) for row in w]

    def _event(self, s: float, x: list[float], md: int) -> float:
        h, sp, vt, qm = self.h, self.sp, self.vt, self.qm
        rem = h - s
        items = []
        if md in (FLOAT, FULL):
            q = qm if md == FULL else 0.0
            z0 = self._modal(x, self.w)
            beta = [
                b + d * (s / h) + q * e for b, d, e in zip(self.bk, self.dbk, self.bq, strict=True)
            ]
            gam = [d / h for d in self.dbk]
            v0 = self.v[0]
            cand = []
            if md == FLOAT and qm > 0:
                cand.append((1.0, x[0] - sp))
            if md == FLOAT and math.isfinite(vt):
                cand.append((-1.0, vt - x[0]))
            if md == FULL:
                cand.append((-1.0, sp - x[0]))
            for sg, g0 in cand:
                wt = [sg * v for v in v0]
                items.append(
                    (
                        self.lam,
                        [a * b for a, b in zip(wt, z0, strict=True)],
                        [a * b for a, b in zip(wt, beta, strict=True)],
                        [a * b for a, b in zip(wt, gam, strict=True)],
                        g0,
                        0.0,
                    )
                )
        else:
            tc = sp if md == HOLD else vt
            zr = self._modal(x[1:], self.wr)
            beta = [
                b + d * (s / h) + cc * tc
                for b, d, cc in zip(self.brk, self.dbrk, self.bc, strict=True)
            ]
            gam = [d / h for d in self.dbrk]
            q0, _ = self._qreq(s, x, tc)
            dq = self.dqbk / h
            cand = [(1.0, q0, dq)] if md == HOLD else [(-1.0, -q0, -dq)]
            if md == HOLD and math.isfinite(qm):
                cand.append((-1.0, qm - q0, -dq))
            for sg, g0, e1 in cand:
                wt = [sg * v for v in self.wq]
                items.append(
                    (
                        self.lr,
                        [a * b for a, b in zip(wt, zr, strict=True)],
                        [a * b for a, b in zip(wt, beta, strict=True)],
                        [a * b for a, b in zip(wt, gam, strict=True)],
                        g0,
                        e1,
                    )
                )
        root = min((_sfirst_root(it, rem) for it in items), default=math.inf)
        return math.inf if root >= rem * (1 - 1e-12) else root

    def _advance(self, s, w, x, md):  # type: ignore[no-untyped-def]
        h = self.h
        if md in (FLOAT, FULL):
            q = self.qm if md == FULL else 0.0
            lam, tm, tv = self.lam, self.w, self.v
            z0 = self._modal(x, tm)
            beta = [
                b + d * (s / h) + q * e for b, d, e in zip(self.bk, self.dbk, self.bq, strict=True)
            ]
            gam = [d / h for d in self.dbk]
        else:
            tc = self.sp if md == HOLD else self.vt
            lam, tm, tv = self.lr, self.wr, self.vr
            z0 = self._modal(x[1:], tm)
            beta = [
                b + d * (s / h) + cc * tc
                for b, d, cc in zip(self.brk, self.dbrk, self.bc, strict=True)
            ]
            gam = [d / h for d in self.dbrk]
        z1, iz = [], []
        for la, zi, bi, gi in zip(lam, z0, beta, gam, strict=True):
            e, p1, p2, p3 = _sphi(la * w)
            z1.append(e * zi + w * p1 * bi + w * w * p2 * gi)
            iz.append(w * p1 * zi + w * w * p2 * bi + w**3 * p3 * gi)
        xs = [sum(a * b for a, b in zip(row, z1, strict=True)) for row in tv]
        ix = [sum(a * b for a, b in zip(row, iz, strict=True)) for row in tv]
        if md in (FLOAT, FULL):
            return xs, ix, q * w, 0.0
        qb0 = self.qbk + self.dqbk * (s / h)
        iq = (
            0.5 * w * (2 * qb0 + self.dqbk * (w / h))
            + sum(a * b for a, b in zip(self.wq, iz, strict=True))
            + tc * self.gsum * w
        )
        if md == HOLD:
            return [tc, *xs], [tc * w, *ix], iq, 0.0
        return [tc, *xs], [tc * w, *ix], 0.0, -iq

    def step(self, k: int, i: int, x: list[float]) -> tuple[list[float], int]:
        rn = self.run
        self._inputs(k, i)
        x, md, heat, vent, eh, ev = self._classify(0.0, x, start=True)
        rn.mode[i, k], rn.heat_w[i, k], rn.vent_w[i, k] = md, heat, vent
        if eh > 0 or ev > 0:
            rn._record(np.array([i]), k, np.zeros(1), np.array([md]), np.array([x]))
        s, ti = 0.0, [0.0] * len(x)
        for _ in range(_MAX_SWITCHES):
            dt = self._event(s, x, md)
            w = dt if math.isfinite(dt) else self.h - s
            x1, ix, e1, e2 = self._advance(s, w, x, md)
            eh, ev = eh + e1, ev + e2
            ti = [a + b for a, b in zip(ti, ix, strict=True)]
            s, x = s + w, x1
            if not math.isfinite(dt):
                break
            x, md, _, _, _, _ = self._classify(s, x, start=False)
            rn._record(np.array([i]), k, np.array([s]), np.array([md]), np.array([x]))
        else:
            raise RuntimeError(f"thermostat: more than {_MAX_SWITCHES} switches in step {k}")
        rn.step_heat[i, k], rn.step_vent[i, k] = eh, ev
        rn.tint[i, k] = ti
        rn.temps[i, k + 1] = x
        return x, md


def _control(setpoint_c, q_max_w, vent_c, nt):  # type: ignore[no-untyped-def]
    sp = _series(setpoint_c, "setpoint_c", nt, None)
    if vent_c is None:
        vt = np.full((1, nt), np.inf)
    else:
        vt = _float_array(vent_c, "vent_c")
        if np.any(np.isnan(vt)) or np.any(vt == -np.inf):
            raise ValueError("vent_c contains NaN or -inf")
        vt = _series(np.where(np.isinf(vt), 1e300, vt), "vent_c", nt, None)
        vt = np.where(vt >= 1e300, np.inf, vt)
    if np.any(np.broadcast_to(vt, np.broadcast_shapes(vt.shape, sp.shape)) < sp):
        raise ValueError("vent_c must not be below setpoint_c")
    q = _float_array(q_max_w, "q_max_w")
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
    nt = _times(times_s).size
    sp, vt, q = _control(setpoint_c, q_max_w, vent_c, nt)
    extra = {"setpoint_c": sp, "vent_c": vt, "q_max_w": q[:, None]}
    prob = _problem(network, times_s, boundary_c, initial_c, gains_w, extra=extra)
    return _Run(prob, _Control(sp, vt, q)).run()


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
    red = net._red  # type: ignore[attr-defined]
    wq, gsum = net._wq, net._gsum  # type: ignore[attr-defined]
    sp = np.broadcast_to(tr.control.setpoint_c, (mm, t.size))  # type: ignore[union-attr]
    hw = tr.heat_w
    k = np.argmax(hw, axis=1)
    ar = np.arange(mm)
    best, best_t = hw[ar, k].copy(), t[k].copy()
    pcs = _pieces(tr)
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
        _scatter_min(neg, best_t, mi, -qe, t[ki + 1])
        e1 = (prob.qb[mu, ki + 1] - prob.qb[mu, ki]) / h[ki]
        el = _clamp_el(tr, mi, ki, np.zeros(mi.size), h[ki], x0, tc, -wq, -qa, -e1)
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
            el = _clamp_el(tr, pm, pk, s0, pcs.w[j], pcs.x0[j], tc, -wq, -qa, -dqb)
            items.append((pm, t[pk] + s0, el))
    for member, t0, el in items:
        _, gmin, smin, _ = _profile(el)
        _scatter_min(neg, best_t, member, gmin, t0 + smin)
    return -neg, best_t
