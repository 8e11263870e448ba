"""The linear RC network and its modal (eigen) solution.

``A = C^-1 L`` with ``L`` symmetric and negative definite, so ``A = V diag(lam) V^-1``
with ``V = C^-1/2 Q`` (``Q`` orthogonal, from a symmetric eigen-decomposition). The
network with the air node held at a given temperature (thermostat holding or venting) is
decomposed the same way. This is the "eigenvectors" way among Moler and Van Loan's
nineteen, and the well-conditioned case of it: ``A`` is similar to a symmetric matrix,
so ``V`` is as well conditioned as ``C^1/2`` (for two nodes, a few hundred at worst) and
each mode of ``z = V^-1 x`` is a scalar first-order equation solved in closed form.

References
----------
C. Moler and C. Van Loan (2003), "Nineteen dubious ways to compute the exponential of a
matrix, twenty-five years later", SIAM Review 45(1):3-49, doi:10.1137/S0036144502418010.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

#: a network whose slowest time constant exceeds this is treated as having no path to a
#: boundary (it would not cool in 30,000 years) [s]
_MAX_TAU_S = 1e12


@dataclass(frozen=True, eq=False)
class Modes:
    """The modal solution of ``C dx/dt = L x + B_in u``: ``x = v z``, ``z = w x``.

    In modal coordinates each mode ``i`` is the scalar equation
    ``dz_i/dt = lam_i z_i + (bm u)_i``, solved in closed form over a step with the input
    linear in time (a first-order hold; see `grower.solver`).

    Attributes
    ----------
    lam : (r,) eigenvalues of ``C^-1 L`` [1/s], ascending, all < 0 (``-1/lam`` are the
        network's time constants)
    v : (k, r) modal state -> node temperatures [degC per modal unit]
    w : (r, k) node temperatures -> modal state (``w = v^-1``)
    bm : (r, p) inputs -> modal forcing, ``w C^-1 B_in``

    References
    ----------
    C. Moler and C. Van Loan (2003), "Nineteen dubious ways to compute the exponential of a
    matrix, twenty-five years later", SIAM Review 45(1):3-49 (the eigenvector method; well
    conditioned here because ``A`` is similar to a symmetric matrix).
    """

    lam: np.ndarray
    v: np.ndarray
    w: np.ndarray
    bm: np.ndarray


def modal_decomposition(c: np.ndarray, lap: np.ndarray, inputs: np.ndarray) -> Modes:
    """The `Modes` of ``diag(c) dx/dt = lap x + inputs u``.

    Parameters
    ----------
    c : (k,) heat capacities [J/K], > 0
    lap : (k, k) symmetric, negative definite conductance matrix [W/K]
    inputs : (k, p) input matrix [W per input unit]

    The symmetric eigenproblem of ``C^-1/2 L C^-1/2 = Q diag(lam) Q^T`` gives
    ``v = C^-1/2 Q`` and ``w = Q^T C^1/2``.
    """
    k = c.size
    if k == 0:
        e = np.zeros((0,))
        return Modes(e, np.zeros((0, 0)), np.zeros((0, 0)), np.zeros((0, inputs.shape[1])))
    d = np.sqrt(c)
    s = lap / np.outer(d, d)
    lam, q = np.linalg.eigh(0.5 * (s + s.T))
    v = q / d[:, None]
    w = q.T * d[None, :]
    return Modes(lam, v, w, w @ (inputs / c[:, None]))


def float_array(value: object, name: str, copy: bool = True) -> np.ndarray:
    try:
        return np.array(value, dtype=float) if copy else np.asarray(value, dtype=float)
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

    Attributes computed from them
    -----------------------------
    modes : `Modes` of the network, inputs ``(U_1..U_m, P_1..P_n)``
    held_modes : `Modes` of the other nodes with the air node held at a given temperature
        (thermostat holding or venting), inputs ``(U_1..U_m, T_air, P_2..P_n)``
    held_power_weights, held_power_sum_w_per_k : with the air held at ``T_air``, the
        heater power that holds it is ``Q = qb(U, P) + held_power_weights . z_held +
        T_air * held_power_sum_w_per_k`` [W] (``qb`` the boundary and gain share)
    """

    capacitance_j_per_k: np.ndarray
    coupling_w_per_k: np.ndarray
    boundary_w_per_k: np.ndarray
    node_names: tuple[str, ...] = ()
    boundary_names: tuple[str, ...] = ()
    modes: Modes = field(init=False, repr=False)
    held_modes: Modes = field(init=False, repr=False)
    held_power_weights: np.ndarray = field(init=False, repr=False)
    held_power_sum_w_per_k: float = field(init=False, repr=False)

    def __post_init__(self) -> None:
        c = float_array(self.capacitance_j_per_k, "capacitance_j_per_k")
        if c.ndim != 1 or c.size == 0:
            raise ValueError(f"capacitance_j_per_k must have shape (n,); got {c.shape}")
        n = c.size
        if not (np.all(np.isfinite(c)) and np.all(c > 0)):
            raise ValueError(f"capacitance_j_per_k must be finite and > 0; got {c}")
        g = float_array(self.coupling_w_per_k, "coupling_w_per_k")
        if g.shape != (n, n):
            raise ValueError(f"coupling_w_per_k must have shape ({n}, {n}); got {g.shape}")
        if not (np.all(np.isfinite(g)) and np.all(g >= 0)):
            raise ValueError("coupling_w_per_k must be finite and >= 0")
        if np.any(np.diag(g) != 0):
            raise ValueError("coupling_w_per_k must have a zero diagonal")
        if np.any(np.abs(g - g.T) > 1e-12 * max(float(g.max(initial=0.0)), 1e-300)):
            raise ValueError("coupling_w_per_k must be symmetric")
        g = 0.5 * (g + g.T)
        h = float_array(self.boundary_w_per_k, "boundary_w_per_k")
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
        full = modal_decomposition(c, lap, np.hstack([h, np.eye(n)]))
        if -1.0 / full.lam.max() > _MAX_TAU_S:
            raise ValueError(
                "boundary_w_per_k: the network is practically cut off from its boundaries "
                f"(slowest time constant {-1.0 / full.lam.max():.3g} s)"
            )
        red_in = np.hstack([h[1:], g[1:, :1], np.eye(n - 1)])
        red = modal_decomposition(c[1:], lap[1:, 1:], red_in)
        object.__setattr__(self, "modes", full)
        object.__setattr__(self, "held_modes", red)
        wq = -(g[0, 1:] @ red.v) if n > 1 else np.zeros(0)
        object.__setattr__(self, "held_power_weights", wq)
        object.__setattr__(self, "held_power_sum_w_per_k", float(g[0, 1:].sum() + h[0].sum()))
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
        return -1.0 / self.modes.lam[::-1]

    def steady_state(self, boundary_c: object, gains_w: object = None) -> np.ndarray:
        """Node temperatures (n,) [degC] for constant boundary temperatures (m,) and gains (n,) [W]."""
        u = float_array(boundary_c, "boundary_c").reshape(-1)
        if u.shape != (self.n_boundaries,) or not np.all(np.isfinite(u)):
            raise ValueError(f"boundary_c must be {self.n_boundaries} finite values")
        p = np.zeros(self.n_nodes) if gains_w is None else float_array(gains_w, "gains_w")
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
