"""A step with switches for one member in plain Python floats: the mode rules.

Inside a step a watched quantity (the air less a limit, or the held power less a limit)
is ``g(s) = g0 + b1 s + sum_i a_i expm1(lam_i s)``, the exact solution of the mode
written as an increment on ``g0`` so that g near a switching point is not lost in
round-off. Its first zero is bracketed between the inflection points (closed form for
two modes) and found by Halley steps (Newton's with the curvature, which g has at no
extra cost) kept inside the bracket, else bisection. For one member numpy's per-call
overhead would dominate such tiny arrays, so this is plain ``math``; for a network of two
nodes (two modes, one with the air held) the sums over the modes are written out, in the
same order as the general loops (the same results to the bit), and so is the root search
for one and two modes, Halley's steps included (`_first_root1`, `_first_root2`).

References
----------
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
T. R. Scavo and J. B. Thoo (1995), "On the geometry of Halley's method", American
Mathematical Monthly 102(5):417-426.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from operator import add as _add
from operator import mul as _mul
from typing import TYPE_CHECKING

import numpy as np

from .explin import roots_of_sum
from .modes import FLOAT, FULL, HOLD, MAX_SWITCHES, TOL_K, VENT
from .stepping import phi2_scalar, phi3_series, phi123_scalar

if TYPE_CHECKING:
    from .runs import Run

_expm1, _exp, _inf = math.expm1, math.exp, math.inf


def _newton(
    fd: Callable[[float], tuple[float, float]], a: float, b: float, fa: float, fb: float | None
) -> float:
    """Root in [a, b] of f, f(a) and f(b) of opposite sign: steps ``x - f/d`` (``fd(s) ->
    (f, d)``, d = f' for Newton's) kept inside a shrinking bracket, else bisection; with
    ``fb`` it starts from the secant instead of the midpoint (Numerical Recipes sec. 9.4).
    (`_halley2`: this loop for one and two modes, with their ``fd`` written in.)"""
    lo, hi, pos = a, b, fa > 0
    x = _start(a, b, fa, fb)
    tol = 1e-13 * (b - a) + 1e-300
    for _ in range(200):
        fx, d = fd(x)
        if fx == 0:
            return x
        if (fx > 0) == pos:
            lo = x
        else:
            hi = x
        xn = x - fx / d if d != 0 else math.nan
        if not (min(lo, hi) < xn < max(lo, hi)) and xn != x:
            # out of the bracket: bisection. A step below round-off (xn == x, x at the
            # bracket's end) is convergence, not a reason to bisect down to the tolerance
            xn = 0.5 * (lo + hi)
        if abs(xn - x) <= tol or abs(hi - lo) <= tol:
            return xn
        x = xn
    return x


def _start(a: float, b: float, fa: float, fb: float | None) -> float:
    """`_newton`'s first point in [a, b]: the secant's root if ``fb`` is given (and inside),
    else the midpoint."""
    if fb is not None and fa != fb:
        xs = a - fa * (b - a) / (fb - fa)
        if a < xs < b:
            return xs
    return 0.5 * (a + b)


def _halley2(g0, b1, a0, a1, l0, l1, k0, k1, a, b, fa, fb) -> float:  # type: ignore[no-untyped-def]
    """`_newton` with Halley's step on ``g(s) = g0 + b1 s + a0 expm1(l0 s) + a1 expm1(l1 s)``
    (``k_i = a_i l_i^2``), the step written in: the general ``fd``'s arithmetic, to the bit.
    One mode is two with ``a1 = l1 = k1 = 0`` (its terms add zeros). Every point lies in
    the bracket, so lo <= hi throughout (`_newton`'s ``min(lo, hi)`` and ``max(lo, hi)``)."""
    al0, al1 = a0 * l0, a1 * l1
    lo, hi, pos = a, b, fa > 0
    x = _start(a, b, fa, fb)
    tol = 1e-13 * (b - a) + 1e-300
    for _ in range(200):
        em0, em1 = _expm1(l0 * x), _expm1(l1 * x)
        fx = g0 + b1 * x + a0 * em0 + a1 * em1
        if fx == 0:
            return x
        e0, e1 = em0 + 1.0, em1 + 1.0
        d = b1 + al0 * e0 + al1 * e1
        if d:  # Halley's: g' - g g'' / (2 g')
            d -= fx * (0.0 + k0 * e0 + k1 * e1) / (2 * d)
        if (fx > 0) == pos:
            lo = x
        else:
            hi = x
        xn = x - fx / d if d != 0 else math.nan
        if not (lo < xn < hi) and xn != x:
            xn = 0.5 * (lo + hi)  # out of the bracket: bisection (see `_newton`)
        if abs(xn - x) <= tol or abs(hi - lo) <= tol:
            return xn
        x = xn
    return x


def _first_root(
    g0: float,
    b1: float,
    a: list[float],
    lam: list[float],
    w: float,
    gw: float,
    scale: float,
    noise: float,
) -> float:
    """First s in [0, w] with g(s) <= 0 for a mode just entered (inf if none); gw = g(w).

    ``g(0) ~ 0`` counts only if g heads down; a dip within round-off (``noise``) of 0 is
    no switch; ``scale`` is the size of g' at 0 for telling a tangent start. The caller
    has already tried the bound ``|g''| <= sum |k2|`` that rules out most roots. One and
    two modes go to `_first_root1`, `_first_root2`: the same steps written out.
    """
    r = len(lam)
    if r == 2:
        return _first_root2(g0, b1, a[0], a[1], lam[0], lam[1], w, gw, scale, noise)
    if r == 1:
        return _first_root1(g0, b1, a[0], lam[0], w, gw, scale, noise)
    k2 = [ai * li * li for ai, li in zip(a, lam, strict=True)]  # g'' = sum k2 exp(lam s)
    # On [0, w], g(s) = g0 + d0 s + sum_i k2_i s^2 phi2(lam_i s), and phi2 falls from 1/2
    # at 0 to phi2(lam_i w): g lies above g0 + d0 s + cq s^2. If that parabola stays above 0
    # (above the round-off noise for a mode entered at its limit), there is no switch.
    d0, tie = b1 + sum(map(_mul, a, lam)), 1e-12 * scale  # g'(0), a tangent start
    down = g0 <= 0 and (d0 < -tie or (d0 <= tie and sum(k2) < 0))
    if gw > 0 and g0 > -noise and not down:
        cq = 0.0
        for k, li in zip(k2, lam, strict=True):
            cq += k * phi2_scalar(li * w) * (1 - 1e-12) if k > 0 else 0.5 * k
        if _no_dip(g0, d0, cq, w, noise):
            return _inf
    br = [0.0, w]
    if r > 2:
        infl = roots_of_sum(np.array([k2]), np.array(lam), np.array([w]))[0]
        br = [0.0, *sorted(float(x) for x in infl[~np.isnan(infl)]), w]
    gv = [g0] + [_gval(g0, b1, a, lam, x) for x in br[1:-1]] + [gw]
    if g0 <= 0:
        if down:
            return 0.0
        gv[0] = 1e-300  # just entered: g(0) counts as +0
    return _in_pieces(g0, b1, a, lam, k2, br, gv, noise)


def _no_dip(g0: float, d0: float, cq: float, w: float, noise: float) -> bool:
    """Whether the parabola ``g0 + d0 s + cq s^2`` below g stays above 0 on [0, w] (above
    ``-noise`` for a mode entered at its limit, g0 <= 0)."""
    if cq > 0 and 0 < -d0 < 2 * cq * w:
        low = g0 - d0 * d0 / (4 * cq)
    else:
        low = min(g0, g0 + (d0 + cq * w) * w)
    return low > (0.0 if g0 > 0 else -noise)


def _gval(g0: float, b1: float, a: list[float], lam: list[float], s: float) -> float:
    """g(s) = g0 + b1 s + sum_i a_i expm1(lam_i s)."""
    out = g0 + b1 * s
    for ai, li in zip(a, lam, strict=True):
        out += ai * _expm1(li * s)
    return out


def _in_pieces(g0, b1, a, lam, k2, br, gv, noise) -> float:  # type: ignore[no-untyped-def]
    """The first root of g on the pieces between the breaks `br` (its inflection points,
    where g is convex or concave), g's values there `gv`: a piece whose end is at or
    below 0 holds a root (Halley's steps from the secant); one with both ends above 0
    holds one only where g dips between them, checked by the tangents at its ends."""

    def fd(s: float) -> tuple[float, float]:  # g, and g' - g g''/(2 g') for Halley's step
        out, d, d2 = g0 + b1 * s, b1, 0.0
        for ai, li, ki in zip(a, lam, k2, strict=True):
            em = _expm1(li * s)
            out += ai * em
            d += ai * li * (em + 1.0)
            d2 += ki * (em + 1.0)
        return out, (d - out * d2 / (2 * d) if d else 0.0)

    def dd(s: float) -> tuple[float, float]:
        d, d2 = b1, 0.0
        for ai, li, ki in zip(a, lam, k2, strict=True):
            e = _exp(li * s)
            d += ai * li * e
            d2 += ki * e
        return d, d2

    for p in range(len(br) - 1):
        lo, hi = br[p], br[p + 1]
        if hi <= lo:
            continue
        ga, gb = gv[p], gv[p + 1]
        if gb <= 0:
            if gb == 0:
                return hi
            # secant start unless g(0) only counts as +0 (a mode just entered)
            fb = gb if ga > 1e-250 else None
            if len(lam) == 2:
                return _halley2(g0, b1, *a, *lam, *k2, lo, hi, ga, fb)
            return _newton(fd, lo, hi, ga, fb)
        da = dd(lo)[0]
        if da >= 0:  # a dip below 0 needs g to head down first, then up
            continue
        db = dd(hi)[0]
        if db > 0 and dd(0.5 * (lo + hi))[1] > 0:
            # tangents at both ends bound a convex g from below
            sx = (gb - ga + da * lo - db * hi) / (da - db)
            if not ga + da * (sx - lo) > -noise:  # (else no dip can reach below -noise)
                sm = _newton(dd, lo, hi, da, None)
                if _gval(g0, b1, a, lam, sm) <= -noise:
                    return _newton(fd, lo, sm, ga, None)
    return _inf


def _first_root1(g0, b1, a0, l0, w, gw, scale, noise) -> float:  # type: ignore[no-untyped-def]
    """`_first_root` for one mode, ``g(s) = g0 + b1 s + a0 expm1(l0 s)``: `_first_root2`
    with a second mode of zero amplitude and rate (its terms add zeros, the same arithmetic;
    no inflection point, one piece)."""
    return _first_root2(g0, b1, a0, 0.0, l0, 0.0, w, gw, scale, noise)


def _first_root2(g0, b1, a0, a1, l0, l1, w, gw, scale, noise) -> float:  # type: ignore[no-untyped-def]
    """`_first_root` for two modes, ``g(s) = g0 + b1 s + a0 expm1(l0 s) + a1 expm1(l1 s)``,
    written out (the same arithmetic): at most one inflection point, where ``k0 e^(l0 s) +
    k1 e^(l1 s) = 0`` (closed form)."""
    k0, k1 = a0 * l0 * l0, a1 * l1 * l1
    d0, tie = b1 + (0.0 + a0 * l0 + a1 * l1), 1e-12 * scale  # (`sum` starts from 0)
    down = g0 <= 0 and (d0 < -tie or (d0 <= tie and k0 + k1 < 0))
    if gw > 0 and g0 > -noise and not down:
        cq = 0.0
        for k, li in ((k0, l0), (k1, l1)):
            if k > 0:
                y = li * w
                p2 = 0.5 + y * phi3_series(y) if abs(y) < 0.05 else (_expm1(y) / y - 1.0) / y
                cq += k * p2 * (1 - 1e-12)
            else:
                cq += 0.5 * k
        if _no_dip(g0, d0, cq, w, noise):
            return _inf
    si = -1.0  # the inflection point, if inside
    kj, ko, lj, lo_ = (k0, k1, l0, l1) if l0 >= l1 else (k1, k0, l1, l0)
    if ko != 0 and -kj / ko > 0 and lo_ != lj:
        si = math.log(-kj / ko) / (lo_ - lj)
    ga = g0
    if g0 <= 0:
        if down:
            return 0.0
        ga = 1e-300  # just entered: g(0) counts as +0
    if w <= 0:  # (no piece to search)
        return _inf
    if 0 < si < w:
        gs = g0 + b1 * si + a0 * _expm1(l0 * si) + a1 * _expm1(l1 * si)
        br, gv = [0.0, si, w], [ga, gs, gw]
        if gs <= 0:  # (the first piece ends at or below 0)
            if gs == 0:
                return si
            return _halley2(
                g0, b1, a0, a1, l0, l1, k0, k1, 0.0, si, ga, gs if ga > 1e-250 else None
            )
    else:
        br, gv = [0.0, w], [ga, gw]
        if gw <= 0:
            if gw == 0:
                return w
            return _halley2(g0, b1, a0, a1, l0, l1, k0, k1, 0.0, w, ga, gw if ga > 1e-250 else None)
    return _in_pieces(g0, b1, [a0, a1], [l0, l1], [k0, k1], br, gv, noise)


class StepLog:
    """The split steps of one member, column by column: plain lists of numbers, so that a
    season's few hundred steps leave no tuple or list each for the garbage collector to
    walk. Per step: its index, the mode at its start, heater and vent output there [W],
    heat and vent energy over it [J]; per step and node (n values a step, in order): the
    temperature integral [degC s] and the temperature at its end [degC]."""

    def __init__(self) -> None:
        self.k: list[int] = []
        self.mode: list[int] = []
        self.heat_w: list[float] = []
        self.vent_w: list[float] = []
        self.heat_j: list[float] = []
        self.vent_j: list[float] = []
        self.tint: list[float] = []
        self.end: list[float] = []

    def add(  # type: ignore[no-untyped-def]
        self, k: int, md: int, heat_w, vent_w, heat_j, vent_j, tint: list, end: list
    ) -> None:
        """One split step's results (see the class)."""
        self.k.append(k)
        self.mode.append(md)
        self.heat_w.append(heat_w)
        self.vent_w.append(vent_w)
        self.heat_j.append(heat_j)
        self.vent_j.append(vent_j)
        self.tint += tint
        self.end += end


class EventLog:
    """The switches (and jumps at a step's start) found inside steps, column by column,
    plain lists as in `StepLog`: member, step, offset from the step's start [s], the mode
    entered, and the node temperatures there [degC] (n values an event, in order)."""

    def __init__(self) -> None:
        self.member: list[int] = []
        self.step: list[int] = []
        self.offset_s: list[float] = []
        self.mode: list[int] = []
        self.state_c: list[float] = []

    def add(self, i: int, k: int, s: float, md: int, x: list[float]) -> None:
        """One event (see the class)."""
        self.member.append(i)
        self.step.append(k)
        self.offset_s.append(s)
        self.mode.append(md)
        self.state_c += x


class ScalarStep:
    """The mode machine inside one step of one member, in Python floats: the modes, the
    switching instants (first roots on the exact solution), the jumps at a step's start."""

    def __init__(self, run: Run) -> None:
        self.run = run
        f, r = run.f, run.r
        self.lam, self.w, self.v = f.lam.tolist(), f.w.tolist(), f.v.tolist()
        self.v0, self.bq = self.v[0], run.bq.tolist()
        self.lr, self.wr, self.vr = r.lam.tolist(), r.w.tolist(), r.v.tolist()
        self.bc, self.wq = run.bc.tolist(), run.wq.tolist()
        self.gsum, self.c0 = run.gsum, run.c0
        self.tolq = run.tolq
        self.il, self.ilr = [1.0 / x for x in self.lam], [1.0 / x for x in self.lr]
        self._member = -1  # the member whose heater output `qm` holds
        self._jr = 1 + 2 * len(self.lam)  # where `row` holds the held modes' forcing
        two = len(self.lam) == 2 and len(self.lr) == 1
        self.segment = self._segment_two if two else self._segment
        if two:
            self.classify = self._classify_two  # type: ignore[method-assign]
        self._qreq = self._qreq_one if len(self.lr) == 1 else self._qreq_many
        if len(self.lr) == 1:  # constants of the one mode with the air held
            la, ia, c = self.lr[0], self.ilr[0], self.wq[0]
            self._held1 = (la, ia, c, self.wr[0][0], self.vr[0][0], self.bc[0], self.gsum)
        if two:  # `_segment_two`'s constants, unpacked there in one go
            (w00, w01), (w10, w11) = self.w
            (v00, v01), (v10, v11) = self.v
            self._free2 = (w00, w01, w10, w11, *self.lam, *self.il, *self.v0, *self.bq)
            self._free2 += (v00, v01, v10, v11)

    def inputs(self, k: int, i: int, pack: np.ndarray) -> None:
        """Step k's inputs for member i from ``pack``, whose row k is (h, b (r), db (r),
        b_held (r'), db_held (r'), qb, dqb, setpoint, vent): kept whole as `row`, the
        segments take their parts from it."""
        if i != self._member:
            self._member, self.qm = i, float(self.run.q[i])
        self.row = v = pack[k].tolist()
        self.h = v[0]
        self.qbk, self.dqbk, self.sp, self.vt = v[-4:]

    def qreq(self, s: float, x: list[float], tc: float) -> tuple[float, float]:
        """Heater power that holds the air at tc from state x at offset s, and its rate."""
        return self._qreq(s, x[1:], tc)

    def _qreq_many(self, s: float, xr: list[float], tc: float) -> tuple[float, float]:
        """`qreq` from the temperatures of the nodes other than the air, xr."""
        frac = s / self.h
        q = self.qbk + self.dqbk * frac + tc * self.gsum
        dq = self.dqbk / self.h
        j, rr = self._jr, len(self.lr)
        brk, dbrk = self.row[j : j + rr], self.row[j + rr : j + 2 * rr]
        for la, row, bi, di, ci, wi in zip(
            self.lr, self.wr, brk, dbrk, self.bc, self.wq, strict=True
        ):
            zi = sum(map(_mul, row, xr))
            q += wi * zi
            dq += wi * (la * zi + bi + di * frac + ci * tc)
        return q, dq

    def _qreq_one(self, s: float, xr: list[float], tc: float) -> tuple[float, float]:
        """`_qreq_many` for one mode with the air held, written out (the same arithmetic)."""
        h, qbk, dqbk, row, j = self.h, self.qbk, self.dqbk, self.row, self._jr
        la, _, wi, w0, _, ci, gsum = self._held1
        frac = s / h
        q = qbk + dqbk * frac + tc * gsum
        dq = dqbk / h
        zi = 0.0 + w0 * xr[0]  # (`sum` starts from 0)
        q += wi * zi
        dq += wi * (la * zi + row[j] + row[j + 1] * frac + ci * tc)
        return q, dq

    def classify(self, s: float, x: list[float], start: bool):  # type: ignore[no-untyped-def]
        """The mode at offset s from node temperatures x: (the state, with the air moved
        to a clamp or by a jump, mode, heater and vent output, heat and vent jump [J]).
        ``start``: at a step's start, where the air may jump to the vent temperature (above
        it) or to the setpoint (below it, with a heater without limit)."""
        tol, sp, vt, qm = TOL_K, self.sp, self.vt, self.qm
        ta, jh, jv = x[0], 0.0, 0.0
        if start:
            if ta > vt + tol:
                jv, ta = self.c0 * (ta - vt), vt
            if qm == _inf and ta < sp - tol:
                jh, ta = self.c0 * (sp - ta), sp
        xr = x[1:]
        if qm > 0 and ta < sp - tol:
            return [ta, *xr], FULL, qm, 0.0, jh, jv
        at_s = qm > 0 and abs(ta - sp) <= tol
        if not at_s and not abs(ta - vt) <= tol:
            return [ta, *xr], FLOAT, 0.0, 0.0, jh, jv
        tc = sp if at_s else vt
        q, dq = self._qreq(s, xr, tc)
        tolq = self.tolq
        t0 = abs(q) <= tolq
        vent_ok = q < -tolq or (t0 and dq < 0)
        md = FLOAT
        if at_s:
            if q > qm + tolq or (abs(q - qm) <= tolq and dq > 0):
                return [ta, *xr], FULL, qm, 0.0, jh, jv
            if q > tolq or (t0 and dq >= 0):
                md = HOLD
            elif abs(sp - vt) <= tol and vent_ok:
                md = VENT
        elif vent_ok:
            md = VENT
        if md == HOLD:
            return [tc, *xr], HOLD, q, 0.0, jh, jv
        if md == VENT:
            return [tc, *xr], VENT, 0.0, -q, jh, jv
        return [ta, *xr], FLOAT, 0.0, 0.0, jh, jv

    def _classify_two(self, s: float, x: list[float], start: bool):  # type: ignore[no-untyped-def]
        """`classify` for a network of two nodes, `_qreq_one` written in (the same
        arithmetic and rules)."""
        tol, sp, vt, qm = TOL_K, self.sp, self.vt, self.qm
        ta, x1 = x
        jh = jv = 0.0
        if start:
            if ta > vt + tol:
                jv, ta = self.c0 * (ta - vt), vt
            if qm == _inf and ta < sp - tol:
                jh, ta = self.c0 * (sp - ta), sp
        if qm > 0 and ta < sp - tol:
            return [ta, x1], FULL, qm, 0.0, jh, jv
        at_s = qm > 0 and -tol <= ta - sp <= tol
        if not at_s and not -tol <= ta - vt <= tol:
            return [ta, x1], FLOAT, 0.0, 0.0, jh, jv
        tc = sp if at_s else vt
        h, row, j = self.h, self.row, self._jr
        la, _, wi, w0, _, ci, gsum = self._held1
        frac = s / h
        q = self.qbk + self.dqbk * frac + tc * gsum  # `_qreq_one`
        dq = self.dqbk / h
        zi = 0.0 + w0 * x1
        q += wi * zi
        dq += wi * (la * zi + row[j] + row[j + 1] * frac + ci * tc)
        tolq = self.tolq
        t0 = -tolq <= q <= tolq
        vent_ok = q < -tolq or (t0 and dq < 0)
        md = FLOAT
        if at_s:
            if q > qm + tolq or (-tolq <= q - qm <= tolq and dq > 0):
                return [ta, x1], FULL, qm, 0.0, jh, jv
            if q > tolq or (t0 and dq >= 0):
                md = HOLD
            elif -tol <= sp - vt <= tol and vent_ok:
                md = VENT
        elif vent_ok:
            md = VENT
        if md == HOLD:
            return [tc, x1], HOLD, q, 0.0, jh, jv
        if md == VENT:
            return [tc, x1], VENT, 0.0, -q, jh, jv
        return [ta, x1], FLOAT, 0.0, 0.0, jh, jv

    def _segment(self, s: float, x: list[float], md: int):  # type: ignore[no-untyped-def]
        """Mode md from offset s and node temperatures x to its next switch (or the step's
        end): the switch's offset from s (inf if none this step), and at the segment's end
        the state, the node-temperature integral over it, heat and vent energy."""
        h, sp, vt, qm = self.h, self.sp, self.vt, self.qm
        rem, ih = h - s, 1.0 / self.h
        row, rf, rr = self.row, len(self.lam), len(self.lr)
        free = md in (FLOAT, FULL)
        if free:  # modes of the whole network, the heater's share q bq in the forcing
            tq = qm if md == FULL else 0.0
            rows, lam, il, wt, fq = self.w, self.lam, self.il, self.v0, self.bq
            bk, dbk, xr = row[1 : 1 + rf], row[1 + rf : 1 + 2 * rf], x
        else:  # the air held at tq: modes of the other nodes, its share tq bc
            tq = sp if md == HOLD else vt
            rows, lam, il, wt, fq = self.wr, self.lr, self.ilr, self.wq, self.bc
            j = 1 + 2 * rf
            bk, dbk, xr = row[j : j + rr], row[j + rr : j + 2 * rr], x[1:]
        # modal state z, forcing beta + gam t (t from s); the watched value (the air, or
        # the held power) is g0 + b1 t + sg * sum_i a_i expm1(lam_i t) with a_i = wt_i (z_i +
        # beta_i/lam_i + gam_i/lam_i^2), b1 = -sg sum_i wt_i gam_i/lam_i (`slope`); its
        # curvature is bounded by sum_i |a_i| lam_i^2 (`curv` once times rem^2 / 8), and ew
        # is the exponential part at the step's end
        z, beta, gam, base = [], [], [], []
        slope = curv = ew = 0.0
        for row, la, li, c, e, b, d in zip(rows, lam, il, wt, fq, bk, dbk, strict=True):
            zi = sum(map(_mul, row, xr))
            gi = d * ih
            bi = b + gi * s + tq * e
            z.append(zi)
            beta.append(bi)
            gam.append(gi)
            gl = c * gi * li
            ai = c * zi + (c * bi + gl) * li
            base.append(ai)
            slope -= gl
            curv += abs(ai) * la * la
            ew += ai * _expm1(la * rem)
        curv *= rem * rem / 8
        if free:
            ta = x[0]
            cand = []
            if md == FLOAT and qm > 0:
                cand.append((1.0, ta - sp, 0.0))
            if md == FLOAT and vt != _inf:
                cand.append((-1.0, vt - ta, 0.0))
            if md == FULL:
                cand.append((-1.0, sp - ta, 0.0))
        else:
            dq = self.dqbk / h
            q0 = self.qbk + dq * s + sum(map(_mul, wt, z)) + tq * self.gsum
            cand = [(1.0, q0, dq)] if md == HOLD else [(-1.0, -q0, -dq)]
            if md == HOLD and qm != _inf:
                cand.append((-1.0, qm - q0, -dq))
        root, scale = _inf, None
        for sg, g0, e1 in cand:
            gw = g0 + (e1 + sg * slope) * rem + sg * ew
            if g0 > 0 and gw > 0 and min(g0, gw) - curv > 0:
                continue  # |g''| <= curv / (rem^2 / 8): no way down to 0
            if scale is None:  # sizes of g' at 0 and of g's terms (round-off scales)
                scale = noise = 0.0
                for c, zi, bi, la, li in zip(wt, z, beta, lam, il, strict=True):
                    scale += abs(c * la * zi) + abs(c * bi)
                    noise += abs(c * zi) + abs(c * bi * li)
                noise *= 1e-13
            a = [sg * ai for ai in base]
            sc = abs(e1) + scale + 1e-300
            rt = _first_root(g0, e1 + sg * slope, a, lam, rem, gw, sc, noise + 1e-13 * abs(g0))
            if rt < root:
                root = rt
        dt = _inf if root >= rem * (1 - 1e-12) else root
        # the exact advance over [s, s + w]
        w = rem if dt == _inf else dt
        z1, iz = [], []
        ww, www = w * w, w * w * w
        for la, zi, bi, gi in zip(lam, z, beta, gam, strict=True):
            y = la * w
            e, p1, p2, p3 = phi123_scalar(y)
            z1.append(e * zi + w * p1 * bi + ww * p2 * gi)
            iz.append(w * p1 * zi + ww * p2 * bi + www * p3 * gi)
        tv = self.v if free else self.vr
        xs = [sum(map(_mul, row, z1)) for row in tv]
        ix = [sum(map(_mul, row, iz)) for row in tv]
        if free:
            return dt, xs, ix, tq * w, 0.0
        qb0 = self.qbk + self.dqbk * (s / h)
        iq = (
            0.5 * w * (2 * qb0 + self.dqbk * (w / h))
            + sum(map(_mul, self.wq, iz))
            + tq * self.gsum * w
        )
        if md == HOLD:
            return dt, [tq, *xs], [tq * w, *ix], iq, 0.0
        return dt, [tq, *xs], [tq * w, *ix], 0.0, -iq

    def _segment_two(self, s: float, x: list[float], md: int):  # type: ignore[no-untyped-def]
        """`_segment` for a network of two nodes (two modes, one with the air held), its
        sums written out: the same arithmetic in the same order, so the same to the bit.
        The network's constants come unpacked from `_consts2`; `phi123_scalar` is written in, and
        with no switch its ``expm1`` is the one of the end value ``ew``."""
        h, b0, b1, d0, d1, br0, dbr0, qbk, dqbk, sp, vt = self.row
        qm, rem, ih = self.qm, h - s, 1.0 / h
        x0, x1 = x
        if md in (FLOAT, FULL):
            tq = qm if md == FULL else 0.0
            w00, w01, w10, w11, la, lb, ia, ib, ca, cb, ea, eb, v00, v01, v10, v11 = self._free2
            za, zb = w00 * x0 + w01 * x1, w10 * x0 + w11 * x1
            ga, gb = d0 * ih, d1 * ih
            ba, bb = b0 + ga * s + tq * ea, b1 + gb * s + tq * eb
            gla, glb = ca * ga * ia, cb * gb * ib
            aa, ab = ca * za + (ca * ba + gla) * ia, cb * zb + (cb * bb + glb) * ib
            slope = 0.0 - gla - glb
            curv = abs(aa) * la * la + abs(ab) * lb * lb
            curv *= rem * rem / 8
            ema, emb = _expm1(la * rem), _expm1(lb * rem)
            ew = aa * ema + ab * emb
            if md == FLOAT:
                up = (1.0, x0 - sp, 0.0)  # (sign, value at the start, its rate)
                if vt == _inf:
                    cand = (up,) if qm > 0 else ()
                else:
                    cand = (up, (-1.0, vt - x0, 0.0)) if qm > 0 else ((-1.0, vt - x0, 0.0),)
            else:
                cand = ((-1.0, sp - x0, 0.0),)
            root, scale = _inf, -1.0
            for sg, g0, e1 in cand:  # as in `_segment`, the modes written out
                b = e1 + sg * slope
                gw = g0 + b * rem + sg * ew
                if g0 > 0 and gw > 0 and (gw if gw < g0 else g0) - curv > 0:
                    continue  # |g''| <= curv / (rem^2 / 8): no way down to 0
                if scale < 0:  # sizes of g' at 0 and of g's terms (round-off scales)
                    scale = abs(ca * la * za) + abs(ca * ba) + (abs(cb * lb * zb) + abs(cb * bb))
                    noise = abs(ca * za) + abs(ca * ba * ia) + (abs(cb * zb) + abs(cb * bb * ib))
                    noise *= 1e-13
                rt = _first_root2(
                    g0,
                    b,
                    sg * aa,
                    sg * ab,
                    la,
                    lb,
                    rem,
                    gw,
                    abs(e1) + scale + 1e-300,
                    noise + 1e-13 * abs(g0),
                )
                if rt < root:
                    root = rt
            if root >= rem * (1 - 1e-12):
                dt, w = _inf, rem
            else:
                dt = w = root
                ema, emb = _expm1(la * w), _expm1(lb * w)
            ww, www = w * w, w * w * w
            y = la * w
            e, p1, p2, p3 = phi123_scalar(y, ema)
            z1a = e * za + w * p1 * ba + ww * p2 * ga
            iza = w * p1 * za + ww * p2 * ba + www * p3 * ga
            y = lb * w
            e, p1, p2, p3 = phi123_scalar(y, emb)
            z1b = e * zb + w * p1 * bb + ww * p2 * gb
            izb = w * p1 * zb + ww * p2 * bb + www * p3 * gb
            xs = [v00 * z1a + v01 * z1b, v10 * z1a + v11 * z1b]
            return dt, xs, [v00 * iza + v01 * izb, v10 * iza + v11 * izb], tq * w, 0.0
        # the air held at tq: one mode of the mass node
        tq = sp if md == HOLD else vt
        la, ia, c, wr, v, bc, gsum = self._held1
        za = wr * x1
        ga = dbr0 * ih
        ba = br0 + ga * s + tq * bc
        gl = c * ga * ia
        aa = c * za + (c * ba + gl) * ia
        slope = 0.0 - gl
        curv = abs(aa) * la * la
        curv *= rem * rem / 8
        ema = _expm1(la * rem)
        ew = aa * ema
        dq = dqbk / h
        q0 = qbk + dq * s + c * za + tq * gsum
        if md == HOLD:
            cand = ((1.0, q0, dq),) if qm == _inf else ((1.0, q0, dq), (-1.0, qm - q0, -dq))
        else:
            cand = ((-1.0, -q0, -dq),)
        root, scale = _inf, -1.0
        for sg, g0, e1 in cand:  # as in `_segment`, the modes written out
            b = e1 + sg * slope
            gw = g0 + b * rem + sg * ew
            if g0 > 0 and gw > 0 and (gw if gw < g0 else g0) - curv > 0:
                continue
            if scale < 0:
                scale = abs(c * la * za) + abs(c * ba)
                noise = (abs(c * za) + abs(c * ba * ia)) * 1e-13
            rt = _first_root1(
                g0, b, sg * aa, la, rem, gw, abs(e1) + scale + 1e-300, noise + 1e-13 * abs(g0)
            )
            if rt < root:
                root = rt
        if root >= rem * (1 - 1e-12):
            dt, w = _inf, rem
        else:
            dt = w = root
            ema = _expm1(la * w)
        ww, www = w * w, w * w * w
        y = la * w
        e, p1, p2, p3 = phi123_scalar(y, ema)
        z1a, iza = e * za + w * p1 * ba + ww * p2 * ga, w * p1 * za + ww * p2 * ba + www * p3 * ga
        qb0 = qbk + dqbk * (s / h)
        iq = 0.5 * w * (2 * qb0 + dqbk * (w / h)) + c * iza + tq * gsum * w
        xs, ix = [tq, v * z1a], [tq * w, v * iza]
        if md == HOLD:
            return dt, xs, ix, iq, 0.0
        return dt, xs, ix, 0.0, -iq

    def step(  # type: ignore[no-untyped-def]
        self,
        k: int,
        i: int,
        x: list[float],
        pack: np.ndarray,
        out: StepLog,
        pre=None,
    ) -> tuple[list[float], int]:
        """Step k of member i from node temperatures x; returns the state at its end.

        ``pack``: the member's inputs (see `inputs`). The step's results go to ``out``
        (`StepLog`).
        ``pre``: `classify` of x at the step's start, with step k's inputs already loaded.
        """
        rn, segment, classify = self.run, self.segment, self.classify
        if pre is None:
            self.inputs(k, i, pack)
            pre = classify(0.0, x, start=True)
        x, md, heat, vent, eh, ev = pre
        md0 = md
        if eh > 0 or ev > 0:
            rn.scalar_events.add(i, k, 0.0, md, x)
        dt, x, ti, e1, e2 = segment(0.0, x, md)
        eh, ev = eh + e1, ev + e2
        s, n = 0.0, 1  # n: the segments so far
        while dt != _inf:
            if n == MAX_SWITCHES:
                raise RuntimeError(f"thermostat: more than {MAX_SWITCHES} switches in step {k}")
            s, n = s + dt, n + 1
            x, md, _, _, _, _ = classify(s, x, start=False)
            rn.scalar_events.add(i, k, s, md, x)
            dt, x, ix, e1, e2 = segment(s, x, md)
            eh, ev = eh + e1, ev + e2
            ti = list(map(_add, ti, ix))
        out.add(k, md0, heat, vent, eh, ev, ti, x)
        return x, md
