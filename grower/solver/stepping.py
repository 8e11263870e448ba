"""The phi functions, per-step coefficient tables and linear recurrences.

One step of length ``s`` of a mode ``lam`` from ``z0`` under the input ``beta + gamma t``
is ``z(s) = e^(lam s) z0 + s phi1(lam s) beta + s^2 phi2(lam s) gamma``; its integral
over the step uses ``phi2`` and ``phi3``. Runs of whole steps are the first-order
recurrence ``z[k+1] = e[k] z[k] + f[k]``.

References
----------
M. Hochbruck and A. Ostermann (2010), "Exponential integrators", Acta Numerica
19:209-286 (the phi functions).
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Transactions on Automatic Control AC-23(3):395-404.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from math import factorial

import numpy as np

_RF = np.array([1.0 / factorial(j) for j in range(24)])
_RF_LIST = _RF.tolist()  # Python floats: numpy scalars are slow one at a time
_R3, _R4, _R5, _R6, _R7, _R8, _R9, _R10, _R11, _R12 = _RF_LIST[3:13]


def phi123(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """``exp(x), phi1(x), phi2(x), phi3(x)``, to round-off for any x <= 0."""
    x = np.asarray(x, dtype=float)
    if x.size <= 16:  # a few step lengths: Python floats are quicker than array calls
        out = np.array([phi123_scalar(v) for v in x.ravel().tolist()]).T.reshape((4, *x.shape))
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
class StepTable:
    """Per-step coefficients (N-1, r): z1 = e z0 + f1 b0 + f2 (b1 - b0); int z = i1 z0 + i2 b0 + i3 (b1 - b0)."""

    e: np.ndarray
    f1: np.ndarray
    f2: np.ndarray
    i2: np.ndarray
    i3: np.ndarray


def step_table(lam: np.ndarray, unique_h: np.ndarray, kind: np.ndarray) -> StepTable:
    hu = unique_h[:, None]
    e, p1, p2, p3 = phi123(lam[None, :] * hu)
    cols = (e, hu * p1, hu * p2, hu * hu * p2, hu * hu * p3)
    if unique_h.size == 1:  # one step length: read-only views of its single row
        return StepTable(*(np.broadcast_to(a, (kind.size, lam.size)) for a in cols))
    return StepTable(*(a[kind] for a in cols))


def recur_one(e: np.ndarray, uniform: bool, f: np.ndarray, z0: np.ndarray, mm: int) -> np.ndarray:
    """``z[k+1] = e[k] z[k] + f[k]`` for one mode: f (Mf, N-1), z0 (Mz,) -> z (mm, N)."""
    k1 = f.shape[1]
    out = np.empty((mm, k1 + 1))
    out[:, 0] = z0
    if k1 == 0:
        return out
    if f.shape[0] != mm:  # shared forcing: one particular solution plus the free decay
        zp = recur_one(e, uniform, f, np.zeros(1), 1)
        decay = np.empty(k1 + 1)
        decay[0] = 1.0
        np.cumprod(e, out=decay[1:])
        np.add(zp, decay * np.reshape(z0, (-1, 1)), out=out)
        return out
    out[:, 1:] = _scan(np.asarray(e, dtype=float), uniform, f, np.broadcast_to(z0, (mm,)))
    return out


#: a block of the scan spans at most this much decay, ``-sum log e`` (e^-500 ~ 7e-218), so
#: that ``1/prod e`` stays far from overflow; a single step's factor is floored at e^-100,
#: below which ``e z`` is lost in the round-off of ``f`` anyway
_BLOCK_DECAY = 500.0
_STEP_DECAY = 100.0


def _scan(e: np.ndarray, uniform: bool, f: np.ndarray, z0: np.ndarray) -> np.ndarray:
    """``z[k+1] = e[k] z[k] + f[k]`` for all k at once, without a Python loop over steps.

    Inside a block starting at step s, ``z[k+1] = P[k] (z[s] + sum_{j=s..k} f[j] / P[j])``
    with ``P[k] = prod_{j=s..k} e[j]``: one cumulative sum per block. Blocks end before
    the decay ``P`` passes e^-500, so the scaled terms cannot overflow; each term's
    rounding is carried by the same ``P[k]`` that damps it, so the result is as accurate
    as stepping one step at a time (the partial sums grow geometrically; their rounding
    is a few units in the last place of ``z``). With one step length, a mode that forgets
    within `_SHORT` steps is one short convolution instead (`_scan_short`).
    """
    k1 = f.shape[1]
    if uniform and k1:
        memory = _memory(float(e[0]))
        if memory <= _SHORT:
            return _scan_short(float(e[0]), memory, f, z0)
    # -log e >= 0 per step (of the first step only when all are alike)
    le = -np.log(np.maximum(e[:1] if uniform else e, math.exp(-_STEP_DECAY)))
    cum = le[0] * np.arange(1, k1 + 1) if uniform else np.cumsum(le)
    out = np.empty(f.shape)
    z = np.array(z0, dtype=float)
    s = 0
    while s < k1:
        base = cum[s - 1] if s else 0.0
        t = max(s + 1, int(np.searchsorted(cum, base + _BLOCK_DECAY, side="right")))
        c = cum[s:t] - base
        q = np.exp(c)
        p = np.exp(np.negative(c, out=c), out=c)  # e^-c, in c's place
        blk = out[:, s:t]  # the block's arithmetic in place, in the output
        np.multiply(f[:, s:t], q, out=blk)
        np.cumsum(blk, axis=1, out=blk)
        blk += z[:, None]
        blk *= p
        z = blk[:, -1]
        s = t
    return out


#: a mode whose step decay reaches round-off (2^-60) within this many steps is stepped as a
#: short convolution (`_scan_short`): the fast air mode of a greenhouse at 5-minute steps
#: forgets in ~20 steps, where the blocked scan would need a block every ~230 steps
_SHORT = 64
_FORGET = 60 * math.log(2.0)


def _memory(e: float) -> int:
    """Steps after which a decay ``e`` per step is at or below 2^-60 (1 for ``e <= 0``)."""
    if not 0.0 < e < 1.0:
        return 1 if e <= 0.0 else _SHORT + 1
    return max(1, math.ceil(_FORGET / -math.log(e)))


def _scan_short(e: float, memory: int, f: np.ndarray, z0: np.ndarray) -> np.ndarray:
    """`_scan` for one step length whose decay forgets within ``memory`` steps:
    ``z[k+1] = e^(k+1) z0 + sum_{j<=min(k, memory-1)} e^j f[k-j]``, one convolution per row.

    The terms left out weigh ``e^memory <= 2^-60`` times an earlier state, below the
    round-off of the sum.
    """
    k1 = f.shape[1]
    kern = e ** np.arange(memory)
    out = np.empty(f.shape)
    head = min(memory, k1)
    lead = e ** np.arange(1, head + 1)
    for row in range(f.shape[0]):
        out[row] = np.convolve(f[row], kern)[:k1]
        out[row, :head] += lead * z0[row]
    return out


#: from this many members on, `recurrence` steps all of them at once, step by step
MANY = 32


def recurrence(e: np.ndarray, uniform: bool, f: np.ndarray, z0: np.ndarray) -> np.ndarray:
    """``z[k+1] = e[k] z[k] + f[k]`` for every mode and member: the runs of whole steps.

    Parameters
    ----------
    e : (N-1, r) step decays ``exp(lam h)`` of each mode
    uniform : all steps have one length (``e`` is the same on every row)
    f : (r, M, N-1) forcing of each step (from `step_table`'s ``f1``, ``f2``)
    z0 : (r, M) or (r, 1) modal state at the first grid time

    Returns
    -------
    (r, M, N) modal state at the grid times

    For many members the steps are taken one after another, each for all modes and
    members at once (two array operations a step, as in a plain stepping loop); for few
    members a step-by-step loop would be all Python overhead, and each mode's recurrence is
    the blocked cumulative sum of `_scan` instead. Both are the same arithmetic to
    round-off.
    """
    r, mm, k1 = f.shape
    if mm < MANY:
        out = np.empty((r, mm, k1 + 1))
        for i in range(r):
            out[i] = recur_one(e[:, i], uniform, f[i], z0[i], mm)
        return out
    ft = np.ascontiguousarray(f.transpose(2, 0, 1))  # (N-1, r, M): a step is a row
    zt = np.empty((k1 + 1, r, mm))
    zt[0] = z0
    ek = np.ascontiguousarray(e)[:, :, None]
    mul, add = np.multiply, np.add
    for k in range(k1):
        row = zt[k + 1]
        mul(zt[k], ek[k], out=row)
        add(row, ft[k], out=row)
    return np.ascontiguousarray(zt.transpose(1, 2, 0))


def phi3_series(x: float) -> float:
    """``phi3(x)`` by its series, for |x| < 0.05 (nine terms reach round-off), Horner's
    scheme written out (the split steps call this often)."""
    s3 = _R12 * x + _R11
    s3 = s3 * x + _R10
    s3 = s3 * x + _R9
    s3 = s3 * x + _R8
    s3 = s3 * x + _R7
    s3 = s3 * x + _R6
    s3 = s3 * x + _R5
    s3 = s3 * x + _R4
    return s3 * x + _R3


def phi123_scalar(x: float, em: float | None = None) -> tuple[float, float, float, float]:
    """Scalar `phi123` (series below |x| = 0.05, `phi3_series`, with ``phi2 = 1/2 + x phi3``
    and ``phi1 = 1 + x phi2``); ``em``: ``expm1(x)`` if the caller has it already."""
    if abs(x) < 0.05:
        s3 = phi3_series(x)
        s2 = 0.5 + x * s3
        return math.exp(x), 1.0 + x * s2, s2, s3
    p1 = (math.expm1(x) if em is None else em) / x
    p2 = (p1 - 1.0) / x
    return math.exp(x), p1, p2, (p2 - 0.5) / x


def phi2_scalar(x: float) -> float:
    """``phi2(x)`` alone, as `phi123_scalar` computes it."""
    if abs(x) < 0.05:
        return 0.5 + x * phi3_series(x)
    return (math.expm1(x) / x - 1.0) / x
