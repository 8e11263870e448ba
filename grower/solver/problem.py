"""Validation of a run's inputs, the member axis, and the projected modal forcing."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from .network import Network, float_array
from .stepping import StepTable, step_table


@dataclass(frozen=True, eq=False)
class Problem:
    """Validated inputs, member axis first (size 1 or M), and the step tables."""

    network: Network
    times_s: np.ndarray  # (N,)
    h: np.ndarray  # (N-1,) step lengths as stepped [s]
    n_members: int
    boundary_c: np.ndarray  # (Mb, N, m)
    gains_w: np.ndarray  # (Mg, N, n), heater series included on the air node
    initial_c: np.ndarray  # (Mi, n)
    uniform: bool
    full: StepTable
    unique_h: np.ndarray  # distinct step lengths [s]
    kind: np.ndarray  # (N-1,) index of each step's length in unique_h

    @cached_property
    def bt(self) -> np.ndarray:  # (r, Mu, N) modal forcing of (U, P), mode axis first
        bm, m = self.network.modes.bm, self.network.n_boundaries
        return _project(bm[:, :m], self.boundary_c) + _project(bm[:, m:], self.gains_w)

    @cached_property
    def dbt(self) -> np.ndarray:  # (r, Mu, N-1) step increments of the modal forcing
        return np.diff(self.bt, axis=2)

    @cached_property
    def red(self) -> StepTable:  # step table of the network with the air held
        return step_table(self.network.held_modes.lam, self.unique_h, self.kind)

    @cached_property
    def brt(self) -> np.ndarray:  # (n-1, Mu, N) reduced modal forcing of (U, P_1..)
        red, m = self.network.held_modes, self.network.n_boundaries
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


def as_times(times_s: object) -> np.ndarray:
    t = float_array(times_s, "times_s")
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


def as_series(
    value: object,
    name: str,
    n_t: int,
    width: int | None,
    copy: bool = True,
    finite: bool = True,
) -> np.ndarray:
    """(N,) / (N, w) / (M, N, w) -> (M', N, w); width None: (N,) / (M, N) -> (M', N).
    ``copy=False``: the caller's array itself where it is already float (read only);
    ``finite=False``: the caller checks for NaN and inf (`check_finite`) itself."""
    a = float_array(value, name, copy)
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
    if finite:
        check_finite(a, name)
    return a


def check_finite(a: np.ndarray, name: str) -> None:
    """ValueError naming `name` if `a` holds a NaN or an infinity."""
    if not np.isfinite(a.sum()) and not np.all(np.isfinite(a)):
        raise ValueError(f"{name} contains NaN or inf")


def _members(arrays: dict[str, np.ndarray | None]) -> int:
    sizes = {k: v.shape[0] for k, v in arrays.items() if v is not None and v.shape[0] != 1}
    if len(set(sizes.values())) > 1:
        raise ValueError(f"member axes disagree: {sizes}")
    return next(iter(sizes.values()), 1)


def make_problem(
    network: Network,
    times_s: object,
    boundary_c: object,
    initial_c: object,
    gains_w: object,
    heat_w: object = None,
    extra: dict[str, np.ndarray | None] | None = None,
    copy: bool = True,
    finite: bool = True,
) -> Problem:
    """Validated inputs. ``copy=False`` keeps the caller's boundary and gains arrays (no
    copy of a big ensemble): only for a caller that uses them before it returns;
    ``finite=False`` leaves their check for NaN and inf to the caller (one pass less
    over a big ensemble when the caller reads them anyway)."""
    if not isinstance(network, Network):
        raise ValueError("network must be a grower.solver.Network")
    n, m = network.n_nodes, network.n_boundaries
    t = as_times(times_s)
    nt = t.size
    u = as_series(boundary_c, "boundary_c", nt, m, copy, finite)
    p = (
        np.zeros((1, nt, n))
        if gains_w is None
        else as_series(gains_w, "gains_w", nt, n, copy, finite)
    )
    x0 = float_array(initial_c, "initial_c")
    if x0.ndim == 0 and n == 1:
        x0 = x0.reshape(1)
    if x0.ndim == 1:
        x0 = x0[None]
    if x0.ndim != 2 or x0.shape[1] != n:
        raise ValueError(f"initial_c must have shape ({n},) or (M, {n}); got {x0.shape}")
    if not np.all(np.isfinite(x0)):
        raise ValueError("initial_c contains NaN or inf")
    q = None if heat_w is None else as_series(heat_w, "heat_w", nt, None)
    mm = _members({"boundary_c": u, "gains_w": p, "initial_c": x0, "heat_w": q, **(extra or {})})
    if q is not None:
        p = np.array(np.broadcast_to(p, (max(p.shape[0], q.shape[0]), nt, n)))
        p[:, :, 0] += q
    # steps closer than the resolution of the time stamps are one step length
    quantum = 4.0 * float(np.spacing(np.max(np.abs(t[[0, -1]]))))
    steps = np.diff(t)
    hq = np.round(steps / quantum) * quantum
    if (hq == hq[0]).all():  # one step length, the common case: no sort
        hu, kind = hq[:1].copy(), np.zeros(hq.size, dtype=np.intp)
    else:
        hu, kind = np.unique(hq, return_inverse=True)
    hu = np.maximum(hu, np.finfo(float).tiny)
    full = network.modes
    return Problem(
        network,
        t,
        hu[kind],
        mm,
        u,
        p,
        x0,
        hu.size == 1,
        step_table(full.lam, hu, kind),
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
