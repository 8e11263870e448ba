"""Runs of collinear input: the free float of many members, one exact step per run.

A forecast is linear between its samples, and a solver grid finer than the samples (a
minute between hourly values) carries the same straight lines. Where every input of
every member (boundary temperatures, gains, a prescribed heater) is collinear over a run
of grid steps, one exact step over the whole run gives the state at its end, and the
state anywhere inside is the same closed form at an offset ``s`` from the run's start:

    z(s) = e^(lam s) z0 + s phi1(lam s) beta + s^2 phi2(lam s) gamma

(the first-order hold of `stepping`, exact for linear input). So the modal state is
needed only at the *knots*, the grid times where some input bends; the grid values are
computed when they are asked for (`Segments.temps_c`), and `analyse` works on the runs
themselves: each run's plant temperature is an exact ``a + b s + sum c_i exp(lam_i s)``
(`explin`), screened by exact bounds before any root search (`analysis`).

A knot is a grid time where the slope of some input changes, times the step there, by
more than `KNOT_RTOL` of the input's largest magnitude: round-off of a straight line
sampled on the grid is far below it, any real bend far above.

References
----------
Van Loan (1978) and Franklin, Powell and Workman (1998), cited in full in `grower.solver`
(the exact step and the first-order hold); the bounds are the remainder of linear
interpolation, ``h^2/8 max|g''|``, of elementary analysis.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from .network import Network
from .stepping import phi123

#: a change of slope (times the step) above this share of an input's largest
#: magnitude makes a knot; a straight line sampled by np.interp bends by a few 1e-16. An
#: input that curves by less on every step of a run of n steps strays from its chord by
#: at most n^2/8 of it (6e-12 of the input's size over 60 steps)
KNOT_RTOL = 64.0 * float(np.finfo(float).eps)
#: elements of the scratch arrays the knot search works in (256 kB: stays in cache)
_CHUNK = 1 << 15


def bends(a: np.ndarray, h: np.ndarray) -> np.ndarray:
    """(N-2,) largest change of slope of ``a`` (M, N, w) at each interior grid time, over
    members and columns, times the step [unit of a] (on uneven steps their harmonic mean).

    Not finite at a time next to a NaN or an infinity in ``a``: every value of ``a`` is in
    some second difference, so for N >= 3 ``a`` holds one exactly when the result does.
    """
    ma, nt, w = a.shape
    if nt < 3:
        return np.zeros(0)
    row = nt * w
    rows = max(1, min(ma, _CHUNK // row))
    acc = np.zeros(row)
    red = np.empty(row)
    if bool(np.all(h == h[0])):
        # even steps: the second difference of each chunk of members taken flat, lag w
        # (two flat subtractions run at twice the speed of the same on (M, N, w) views);
        # the last two times of each member's row mix in the next member and are left out
        d = np.empty(rows * row)
        dd = np.zeros(rows * row)
        for i in range(0, ma, rows):
            flat = a[i : i + rows].reshape(-1)
            k, n = flat.size // row, flat.size
            np.subtract(flat[w:], flat[:-w], out=d[: n - w])
            ddk = dd[: n - 2 * w]
            np.subtract(d[w : n - w], d[: n - 2 * w], out=ddk)
            np.abs(ddk, out=ddk)
            np.maximum.reduce(dd[:n].reshape(k, row), axis=0, out=red)
            np.maximum(acc, red, out=acc)
        return acc[: (nt - 2) * w].reshape(nt - 2, w).max(axis=1)
    # uneven steps: the change of slope at each time, weighed by 2/(1/h_left + 1/h_right)
    # (h on even steps): a slope over a short step carries the round-off of its ends
    # divided by that step, and over it a bend moves the solution by as little
    ih = (1.0 / h)[None, :, None]
    wk = (2.0 / (1.0 / h[1:] + 1.0 / h[:-1]))[None, :, None]
    d3 = np.empty((rows, nt - 1, w))
    dd3 = np.empty((rows, nt - 2, w))
    acc3 = acc[: (nt - 2) * w].reshape(nt - 2, w)
    for i in range(0, ma, rows):
        c = a[i : i + rows]
        k = c.shape[0]
        dk, ddk = d3[:k], dd3[:k]
        np.subtract(c[:, 1:], c[:, :-1], out=dk)
        dk *= ih
        np.subtract(dk[:, 1:], dk[:, :-1], out=ddk)
        ddk *= wk
        np.abs(ddk, out=ddk)
        np.maximum(acc3, ddk.max(axis=0), out=acc3)
    return acc3.max(axis=1)


def _largest(a: np.ndarray, cols: np.ndarray) -> float:
    """max |a| over the grid times ``cols`` of ``a`` (M, N, w)."""
    c = a[:, cols]
    return max(float(c.max()), -float(c.min())) if c.size else 0.0


def knots(h: np.ndarray, *series: np.ndarray, names: tuple[str, ...] = ()) -> np.ndarray:
    """Grid indices where some series (each (M, N, w)) bends, with the first and last.

    A bend counts where it exceeds `KNOT_RTOL` of the series' largest magnitude. That is
    taken at the knots themselves: between knots every member is a straight line, whose
    largest magnitude is at an end. So the knots are first found against the magnitude at
    the two ends (a smaller scale: a superset), and then against the largest magnitude at
    those candidates and the ends, which is the series' own to round-off (and never above
    it, so no bend is missed). A series holding a NaN or an infinity is a ValueError naming
    it (``names``, in order).
    """
    nt = h.size + 1
    bent = np.zeros(max(nt - 2, 0), dtype=bool)
    ends = np.array([0, nt - 1])
    for i, a in enumerate(series):
        bend = bends(a, h)
        finite = bool(np.isfinite(bend).all()) if nt >= 3 else np.isfinite(a).all()
        if not finite:
            raise ValueError(f"{names[i] if i < len(names) else 'input'} contains NaN or inf")
        cand = np.flatnonzero(bend > KNOT_RTOL * _largest(a, ends)) + 1
        scale = _largest(a, np.concatenate([ends, cand]))
        bent |= bend > KNOT_RTOL * scale
    return np.concatenate([[0], np.flatnonzero(bent) + 1, [nt - 1]])


def hold_coefficients(lam: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, ...]:
    """``e^(lam s)``, ``s phi1(lam s)``, ``s^2 phi2(lam s)`` for offsets s (K,): (K, r) each."""
    sc = np.asarray(s, dtype=float)[:, None]
    e, p1, p2, _ = phi123(lam[None, :] * sc)
    return e, sc * p1, sc * sc * p2


def forcing_at(network: Network, boundary_c: np.ndarray, gains_w: np.ndarray, ks) -> np.ndarray:
    """(r, Mu, K) modal forcing of the inputs at grid indices ``ks``."""
    bm, m = network.modes.bm, network.n_boundaries
    u, p = boundary_c[:, ks], gains_w[:, ks]
    return np.tensordot(bm[:, :m], u, axes=([1], [2])) + np.tensordot(bm[:, m:], p, axes=([1], [2]))


@dataclass(frozen=True, eq=False)
class Segments:
    """A free float stored at its knots: runs of collinear input between them.

    Attributes
    ----------
    network : `Network`
    times_s : (N,) grid [s]
    knots : (K,) grid indices of the knots, the first and last included
    z : (r, M, K) modal state at the knots
    b : (r, Mu, K) modal forcing at the knots (Mu is 1 or M)
    initial_c : (M, n) node temperatures at the first grid time [degC]
    """

    network: Network
    times_s: np.ndarray
    knots: np.ndarray
    z: np.ndarray
    b: np.ndarray
    initial_c: np.ndarray

    @property
    def slope(self) -> np.ndarray:
        """(r, Mu, K-1) modal forcing slope on each run [1/s per unit of b]."""
        return np.diff(self.b, axis=2) / np.diff(self.times_s[self.knots])

    def forcing_at(self, ks: np.ndarray) -> np.ndarray:
        """(r, Mu, len(ks)) modal forcing at grid indices ``ks`` (linear inside each run)."""
        ks = np.asarray(ks)
        kn, t = self.knots, self.times_s
        j = np.clip(np.searchsorted(kn, ks, side="right") - 1, 0, kn.size - 2)
        return self.b[:, :, j] + self.slope[:, :, j] * (t[ks] - t[kn[j]])

    @cached_property
    def forcing(self) -> np.ndarray:
        """(r, Mu, N) modal forcing at every grid time."""
        return self.forcing_at(np.arange(self.times_s.size))

    def modal_at(self, ks: np.ndarray) -> np.ndarray:
        """(r, M, len(ks)) modal state at grid indices ``ks``, exact from each run's start."""
        ks = np.asarray(ks)
        kn, t = self.knots, self.times_s
        j = np.clip(np.searchsorted(kn, ks, side="right") - 1, 0, kn.size - 2)
        e, f1, f2 = hold_coefficients(self.network.modes.lam, t[ks] - t[kn[j]])
        out = e.T[:, None, :] * self.z[:, :, j]
        out += f1.T[:, None, :] * self.b[:, :, j]
        out += f2.T[:, None, :] * self.slope[:, :, j]
        return out

    @cached_property
    def modal(self) -> np.ndarray:
        """(r, M, N) modal state at every grid time."""
        return self.modal_at(np.arange(self.times_s.size))

    @cached_property
    def temps_c(self) -> np.ndarray:
        """(M, N, n) node temperatures at every grid time [degC]."""
        temps = np.tensordot(self.network.modes.v, self.modal, axes=([1], [0]))  # (n, M, N)
        temps[:, :, 0] = self.initial_c.T
        return np.moveaxis(temps, 0, -1)


def step_runs(network: Network, times_s: np.ndarray, kn: np.ndarray, b: np.ndarray, z0):
    """(r, M, K) modal state at the knots ``kn``: one exact step per run of collinear input
    (forcing ``b`` (r, Mu, K) at the knots; ``z0`` (r, M) at the first)."""
    lam = network.modes.lam
    length = np.diff(times_s[kn])
    e, f1, f2 = hold_coefficients(lam, length)
    r, mm = z0.shape
    z = np.empty((r, mm, kn.size))
    z[:, :, 0] = z0
    slope = np.diff(b, axis=2) / length
    for j in range(kn.size - 1):
        zj = z[:, :, j] * e[j][:, None]
        zj += f1[j][:, None] * b[:, :, j]
        zj += f2[j][:, None] * slope[:, :, j]
        z[:, :, j + 1] = zj
    return z
