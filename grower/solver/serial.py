"""The thermostat for one member at a time: long strides of whole steps, stored at the end.

Each mode gets, once per member, a particular solution over the whole horizon (from a
zero modal state; the heater's share at full output is its steady response, see
`SerialRun._heater`) and the limits its watched value must keep, with
the curvature bound of that solution already taken off. A run of whole steps in one mode
is then that solution plus the decay of the state's deviation from it, ``z_j = zb_j +
P_j d`` with ``P_j`` the product of the step decays; a window of steps is checked in a
few array operations (the deviation's share of the curvature bound by the triangle
inequality; with one step length, one matrix product against the limits stored as slacks,
and each mode's exact gap from its chord, one-sided, in place of the curvature bound:
`_chord_gap`),
the first step that fails is split exactly in Python floats (`scalar`), and
the accepted runs are turned into temperatures, integrals and energies in one pass per
mode at the end. Arrays over the horizon are mode-major, ``(r, N)``: numpy is slow on
operations that broadcast along a short last axis.

References
----------
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Transactions on Automatic Control AC-23(3):395-404.
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass, replace
from operator import mul
from typing import TYPE_CHECKING

import numpy as np

from .modes import FLOAT, FULL, HOLD, TOL_K, VENT
from .scalar import StepLog
from .stepping import recur_one

if TYPE_CHECKING:
    from .runs import Run

#: longest window of whole steps checked at once
_LMAX = 4096


@dataclass(frozen=True, eq=False)
class _ModeData:
    """One mode of one member over the whole horizon (N grid times, N-1 steps)."""

    zb: np.ndarray  # (r, N) particular modal solution
    beta: np.ndarray  # (r, N-1) modal forcing at each step's start
    db: np.ndarray  # (r, N-1) its increment over the step
    e: np.ndarray  # (N-1, r) step decays
    wv: np.ndarray  # (r,) modal state -> watched value (air temperature or held power)
    cv: np.ndarray  # (r,) |wv lam^2|: a deviation's share of the curvature bound (one
    # step length: lam^2 `_chord_gap`, the gap from the chord per unit of the share)
    # val, hi, lo and same: several step lengths only (with one, `lim` and `cut` hold them)
    val: np.ndarray | None  # (N,) watched value of zb at the grid times (held power: less
    # the clamp temperature's share tc_j gsum, which hi and lo take off instead)
    hi: np.ndarray | None  # (N-1,) upper limit of the value over each step, less zb's
    # curvature bound
    lo: np.ndarray | None  # (N-1,) lower limit, plus the bound; None: no lower limit
    same: np.ndarray | None  # (N-1,) clamp temperature unchanged since the step before
    tc: np.ndarray | None  # (N,) clamp temperature (held or vent) [degC]
    pw: np.ndarray | None  # (_LMAX + 1, r) powers of the decays for one step length
    to_modes: list[list[float]]  # node temperatures (held air left out) -> modal state
    to_nodes: list[list[float]]  # modal state -> node temperatures (held air left out)
    wvl: list[float]  # wv and cv as Python floats
    cvl: list[float]
    zrows: np.ndarray  # (N, r) view of zb, a grid time a row
    lim: np.ndarray | None  # one step length: (N-1, L) the limits as slacks, see `_limits`
    cut: list[int] | None  # one step length, a clamp mode: the steps whose clamp
    # temperature changed, increasing, and N-1 last (`_cuts`): a window stops at the first
    # after its start
    el: list[float]  # the step decays of one step length (`lim`'s), as Python floats


class _Runs:
    """The accepted runs of one mode, column by column (plain lists: no tuple or list a
    run for the garbage collector to walk): first step, number of steps, the modal
    deviation at the start (r values a run, in order) and the decays (steps + 1, r)."""

    def __init__(self) -> None:
        self.k: list[int] = []
        self.steps: list[int] = []
        self.dev: list[float] = []
        self.decay: list[np.ndarray] = []

    def add(self, k: int, steps: int, dev: list[float], decay: np.ndarray) -> None:
        """One run (see the class)."""
        self.k.append(k)
        self.steps.append(steps)
        self.dev += dev
        self.decay.append(decay)


class SerialRun:
    """The thermostat run of member ``i`` of `Run` ``run``, writing into its arrays."""

    def __init__(self, run: Run, i: int) -> None:
        self.rn, self.i = run, i
        p, ctl = run.p, run.ctl
        self.nt = p.times_s.size
        # h^2/8 of the curvature bound: one number for one step length (no (N-1,) array)
        self.hh8 = float(p.h[0]) ** 2 / 8 if p.uniform else p.h**2 / 8
        self.qm = float(run.q[i])
        self.sp = ctl.setpoint_c[i % ctl.setpoint_c.shape[0]]
        self.vt = ctl.vent_c[i % ctl.vent_c.shape[0]]

        def member(a: np.ndarray) -> np.ndarray:  # (r, M, ...) -> (r, ...)
            return a[:, i if a.shape[1] > 1 else 0]

        self.bf, self.dbf = member(p.bt), member(p.dbt)  # (r, N), (r, N-1)
        self.br = member(p.brt)
        self.dbr = np.diff(self.br, axis=1)
        self.qb = p.qb[i if p.qb.shape[0] > 1 else 0]  # (N,)
        self.data: dict[int, _ModeData] = {}
        self._zf: np.ndarray | None = None
        # accepted runs per mode: (first step, steps, modal deviation, decays (steps+1, r))
        self.pieces = {md: _Runs() for md in (FLOAT, FULL, HOLD, VENT)}
        self.exact = StepLog()  # the exactly split steps, see `ScalarStep.step`

    def _pack(self) -> np.ndarray:
        """The inputs of every step, one row a step, as `_ScalarStep.inputs` reads them."""
        rows = (
            self.rn.p.h[None],
            self.bf[:, :-1],
            self.dbf,
            self.br[:, :-1],
            self.dbr,
            self.qb[None, :-1],
            np.diff(self.qb)[None],
            self.sp[None, :-1],
            self.vt[None, :-1],
        )
        return np.concatenate(rows, axis=0).T

    def _base(self, lam: np.ndarray, tab, forcing: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
        """(r, N) solution of ``z[k+1] = e z[k] + forcing[:, k]`` from z = 0, per mode."""
        out = np.empty((lam.size, self.nt))
        for j in range(lam.size):
            out[j] = recur_one(tab.e[:, j], self.rn.p.uniform, forcing[j][None], np.zeros(1), 1)[0]
        return out

    def _heater(self, lam: np.ndarray, tab, bq: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
        """(r, N) a particular solution under a unit heater, the modal forcing bq (r, 1).

        Any particular solution will do (a run is it plus the decay of the deviation
        from it): for a mode that forgets within the horizon, the steady response
        ``-bq / lam``, the fixed point of ``z = e z + f1 bq`` at every step length, with
        no recurrence; for a slower one, the response from zero (a steady value far larger
        than the state would cost digits in the deviation).
        """
        span = float(self.rn.p.times_s[-1] - self.rn.p.times_s[0])
        fast = -lam * span >= 1.0
        out = np.empty((lam.size, self.nt))
        if fast.any():
            out[fast] = (-bq[fast, 0] / lam[fast])[:, None]
        uni, zero = self.rn.p.uniform, np.zeros(1)
        for j in np.flatnonzero(~fast):
            out[j] = recur_one(tab.e[:, j], uni, (tab.f1[:, j] * bq[j, 0])[None], zero, 1)[0]
        return out

    def _free(self) -> np.ndarray:
        """(r, N) free float from a zero modal state, shared by FLOAT and FULL."""
        if self._zf is None:
            tab = self.rn.p.full
            forcing = tab.f1.T * self.bf[:, :-1]  # in place: one big array less
            forcing += tab.f2.T * self.dbf
            self._zf = self._base(self.rn.f.lam, tab, forcing)
        return self._zf

    def _held(self, tf: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(r', N-1) modal forcing with the air held at tf [degC] (N,), and (r', N) a
        particular solution under it from zero (its own function: the forcing over the
        steps goes at its return)."""
        rn, tab = self.rn, self.rn.p.red
        beta = tf[None, :-1] * rn.bc[:, None]
        beta += self.br[:, :-1]
        forcing = tab.f1.T * beta
        forcing += tab.f2.T * self.dbr
        return beta, self._base(rn.r.lam, tab, forcing)

    def _bound(self, lam, zb, beta, db, wv, gap) -> np.ndarray:  # type: ignore[no-untyped-def]
        """(N-1,) bound on how far the watched value ``wv @ z`` of the solution zb under
        forcing ``beta + db t / h`` strays from its chord over each step [K or W]: with one
        step length each mode's exact gap per unit of curvature (`_chord_gap`, ``gap``
        [s^2]), else ``h^2/8``, times ``|wv|`` and the curvature at the step's start."""
        lc = lam[:, None]
        k2 = lc * zb[:, :-1]  # the curvature at each step's start, in place: big arrays
        k2 += beta
        k2 *= lc
        k2 += db / self.rn.p.h
        if gap is not None:  # each mode's gap below or above its chord, from its curvature
            return (np.abs(wv) * gap) @ np.abs(k2, out=k2)
        bound = np.abs(wv) @ np.abs(k2, out=k2)
        bound *= self.hh8
        return bound

    def _mode(self, md: int) -> _ModeData:
        """The data of mode md over the whole horizon, made on first use."""
        if md in self.data:
            return self.data[md]
        rn, p = self.rn, self.rn.p
        tol, tolq, h = TOL_K, rn.tolq, p.h
        lo = same = tc = None
        if md in (FLOAT, FULL):
            lam, tab, wv = rn.f.lam, p.full, rn.v0
            zb, beta, db = self._free(), self.bf[:, :-1], self.dbf
            if md == FULL:
                bq = rn.bq[:, None]
                heat = self._heater(lam, tab, bq)
                heat *= self.qm
                heat += zb  # the heater's share on the free float, in place
                zb, beta = heat, beta + self.qm * bq
        else:
            lam, tab, wv = rn.r.lam, p.red, rn.wq
            tc = np.asarray(self.sp if md == HOLD else self.vt, dtype=float)
            tf = np.where(np.isfinite(tc), tc, 0.0)
            db = self.dbr
            beta, zb = self._held(tf)
        gap = _chord_gap(lam, float(h[0])) if p.uniform else None
        bound = self._bound(lam, zb, beta, db, wv, gap)
        val = wv @ zb
        # the limits in place (one array each): hi = limit + tol - bound, lo = limit - tol +
        # bound, for the held power less its clamp share
        if tc is None:
            hi = (self.sp if md == FULL else self.vt)[:-1] + tol
            hi -= bound
            if md == FLOAT and self.qm > 0:
                lo = self.sp[:-1] - tol
                lo += bound
        else:
            val += self.qb
            share = tf[:-1] * rn.gsum  # the held power is val + share over step j
            same = np.ones(self.nt - 1, dtype=bool)
            same[1:] = (tc[1:-1] == tc[:-2]) & np.isfinite(tc[1:-1])
            hi = (self.qm + tolq if md == HOLD else tolq) - bound
            hi -= share
            if md == HOLD:
                lo = bound - tolq
                lo -= share
        cv, pw = np.abs(wv * lam * lam), None
        if p.uniform:
            pw = np.empty((_LMAX + 1, lam.size))
            pw[0] = 1.0
            np.cumprod(np.broadcast_to(tab.e[0], (_LMAX, lam.size)), axis=0, out=pw[1:])
            cv = lam * lam * gap  # a deviation's gap per unit of its share, signed in `_window`
        fr = rn.f if tc is None else rn.r
        lim = cut = None
        if p.uniform:  # the slacks and cuts in place of val, hi, lo, same: less memory
            lim = _limits(val, hi, lo)
            cut = None if same is None else _cuts(same, self.nt - 1)
            val = hi = lo = same = None
        self.data[md] = _ModeData(
            zb,
            beta,
            db,
            tab.e,
            wv,
            cv,
            val,
            hi,
            lo,
            same,
            tc,
            pw,
            fr.w.tolist(),
            fr.v.tolist(),
            wv.tolist(),
            cv.tolist(),
            zb.T,
            lim,
            cut,
            tab.e[0].tolist(),
        )
        return self.data[md]

    def _window(self, m: _ModeData, k: int, nl: int, d: list[float]) -> tuple[int, np.ndarray]:
        """Steps k.. that keep mode m from deviation d: their number and the decays (nl+1, r).

        With one step length the deviation's share of the value at both ends of step j and
        of its bound is ``pw[j] @ coef`` against the slacks ``lim[j]`` (`_limits`): one
        matrix product and one comparison for the whole window.
        """
        if m.lim is not None:
            flat = []
            two = m.lim.shape[1] == 2  # no lower limit
            for a, c, x, e in zip(m.wvl, m.cvl, d, m.el, strict=True):
                a = a * x
                ae = a * e  # the deviation's share decays by e over the step
                g = c * a  # its gap from its chord: below it (convex) where a > 0
                if g >= 0.0:
                    flat += (a, ae) if two else (a, ae, g - a, g - ae)
                else:
                    flat += (a - g, ae - g) if two else (a - g, ae - g, -a, -ae)
            if m.cut is not None:
                nl = min(nl, m.cut[bisect_right(m.cut, k)] - k)
            lim = m.lim[k : k + nl]
            coef = np.array(flat).reshape(len(d), lim.shape[1])
            pw = m.pw[: nl + 1]  # type: ignore[index]
            # the first failing slack, row-major (-1: none fails); bytes.find is quicker
            # than argmax on a small boolean array
            j = (pw[:-1].dot(coef) > lim).tobytes().find(1)
            return (nl if j < 0 else j // lim.shape[1]), pw
        coef = np.array([[a * x, c * abs(x)] for a, c, x in zip(m.wvl, m.cvl, d, strict=True)])
        if not d:  # no modes (the lumped network with the air held)
            coef = coef.reshape(0, 2)
        # coef (r, 2): the deviation's share of the watched value and of the bound
        if m.pw is not None:
            pw = m.pw[: nl + 1]
            res = pw.dot(coef)  # ndarray.dot: less overhead than @ on small arrays
            bd = res[:-1, 1]
        else:
            pw = np.empty((nl + 1, len(d)))
            pw[0] = 1.0
            m.e[k : k + nl].cumprod(axis=0, out=pw[1:])
            res = pw.dot(coef)  # ndarray.dot: less overhead than @ on small arrays
            bd = res[:-1, 1] * self.hh8[k : k + nl]
        v = m.val[k : k + nl + 1] + res[:, 0]
        a, b = v[:-1], v[1:]
        hi = np.maximum(a, b)
        hi += bd
        ok = hi <= m.hi[k : k + nl]
        if m.lo is not None:
            lo = np.minimum(a, b)
            lo -= bd
            ok &= lo >= m.lo[k : k + nl]
        if m.same is not None:
            ok[1:] &= m.same[k + 1 : k + nl]
        j = int(ok.argmin())
        return (nl if ok[j] else j), pw

    @staticmethod
    def _state(m: _ModeData, k: int, p: list[float], d: list[float]) -> list[float]:
        """Node temperatures at grid time k of a run in mode m with decays p of deviation d."""
        z = [a + b * c for a, b, c in zip(m.zrows[k].tolist(), p, d, strict=True)]
        x = _matvec(m.to_nodes, z, None)
        return x if m.tc is None else [float(m.tc[k - 1]), *x]

    def run(self) -> None:
        """Step through the horizon and store the member's results in the run."""
        rn, i, last = self.rn, self.i, self.nt - 1
        sc, pack = rn.scalar, self._pack()
        x, md = self._march(pack)
        # the windows are done: their slacks, a mode's biggest arrays, go before the
        # store's temporaries come (a lower peak of memory)
        self.data = {m: replace(d, lim=None) for m, d in self.data.items()}
        self._store()
        # heater and vent output at the last grid point: the final mode, just before it
        sc.inputs(last - 1, i, pack)
        if md in (HOLD, VENT):
            q, _ = sc.qreq(sc.h, x, sc.sp if md == HOLD else sc.vt)
            rn.heat_w[i, -1], rn.vent_w[i, -1] = (q, 0.0) if md == HOLD else (0.0, -q)
        else:
            rn.heat_w[i, -1], rn.vent_w[i, -1] = (self.qm if md == FULL else 0.0), 0.0

    def _march(self, pack: list[np.ndarray]) -> tuple[list[float], int]:
        """Step through the horizon, keeping the accepted runs (`pieces`) and the split
        steps (`exact`); returns the final node temperatures and mode.

        A run of whole steps in one mode ends at the first step that fails its window. If
        the mode at that step's start is another one (a setpoint change, say) and nothing
        jumps, a run in that mode starts there; otherwise the step is split exactly.
        """
        rn, i, last = self.rn, self.i, self.nt - 1
        sc, exact = rn.scalar, self.exact
        x, md, k = rn.temps[i, 0].tolist(), -1, 0
        nl, typical, fresh = 16, 16.0, False
        data = self.data
        while k < last:
            run = 0
            if md >= 0:
                m = data.get(md) or self._mode(md)
                if m.tc is None or abs(x[0] - m.tc[k]) <= TOL_K:
                    xr = x if m.tc is None else x[1:]
                    zk = m.zrows[k].tolist()
                    d = _matvec(m.to_modes, xr, zk)
                    while True:
                        nl = min(nl, last - k)
                        nj, pw = self._window(m, k, nl, d)
                        if nj:
                            self.pieces[md].add(k, nj, d, pw[: nj + 1])
                        run += nj
                        if nj < nl or k + nj == last:
                            break
                        k += nj
                        d = list(map(mul, pw[nj].tolist(), d))
                        nl = min(2 * nl, _LMAX)
                    k += nj
                    if run:
                        x = self._state(m, k, pw[nj].tolist(), d)
                        fresh = False
                    if run > 2:  # the length of a run of one mode, smoothed
                        typical = 0.5 * typical + 0.5 * run
                    nl = min(max(2 * (nj + 1), int(3 * typical), 8), _LMAX)
            if k == last:
                break
            pre = None
            if not fresh:
                sc.inputs(k, i, pack)
                pre = sc.classify(0.0, x, start=True)
                if pre[1] != md and pre[4] == 0 and pre[5] == 0:
                    x, md, fresh = pre[0], pre[1], True
                    continue
            x, md = sc.step(k, i, x, pack, exact, pre)
            k += 1
            fresh = False
        return x, md

    def _store(self) -> None:
        """Temperatures, integrals, outputs and energies of the exact steps and of all
        accepted runs, per mode.

        Rows are gathered with ``np.take`` and scattered one column at a time: numpy's
        fancy indexing of whole rows is an order of magnitude slower for such narrow rows.
        """
        rn, p, i = self.rn, self.rn.p, self.i
        temps, tint = rn.temps[i], rn.tint[i]  # (N, n), (N-1, n) views
        ex, n = self.exact, temps.shape[1]
        if ex.k:
            k = np.array(ex.k)
            rn.mode[i][k] = ex.mode
            outs = (rn.heat_w, rn.vent_w, rn.step_heat, rn.step_vent)
            cols = (ex.heat_w, ex.vent_w, ex.heat_j, ex.vent_j)
            for dst, col in zip(outs, cols, strict=True):
                dst[i][k] = col
            _put_columns(tint, k, np.array(ex.tint).reshape(-1, n).T, 0)
            _put_columns(temps, k + 1, np.array(ex.end).reshape(-1, n).T, 0)
        for md, pcs in self.pieces.items():
            if not pcs.k:
                continue
            m = self.data[md]
            ks = np.array(pcs.k)
            nj = np.array(pcs.steps)
            cnt = nj + 1
            pid = np.repeat(np.arange(ks.size), cnt)
            off = np.arange(pid.size) - (np.cumsum(cnt) - cnt)[pid]
            gk = ks[pid] + off
            dev = np.array(pcs.dev).reshape(ks.size, m.zb.shape[0]).T
            z = np.take(m.zb, gk, axis=1)
            # the decays: with one step length rows of the powers pw, else each run's own
            decay = np.concatenate(pcs.decay) if m.pw is None else np.take(m.pw, off, axis=0)
            z += decay.T * np.take(dev, pid, axis=1)
            st, en = off < nj[pid], off > 0
            steps, ge = gk[st], gk[en]
            zs, ze = np.compress(st, z, axis=1), np.compress(en, z, axis=1)
            hs = p.h[steps]
            rn.mode[i][steps] = md
            clamp = m.tc is not None
            tab, v = (p.red, rn.r.v) if clamp else (p.full, rn.f.v)
            f1, i2, i3 = (
                (tab.f1[0][:, None], tab.i2[0][:, None], tab.i3[0][:, None])
                if p.uniform
                else (np.take(a.T, steps, axis=1) for a in (tab.f1, tab.i2, tab.i3))
            )
            iz = f1 * zs  # in place, in the order f1 zs + i2 beta + i3 db
            iz += i2 * np.take(m.beta, steps, axis=1)
            iz += i3 * np.take(m.db, steps, axis=1)
            _put_columns(temps, ge, v @ ze, int(clamp))
            _put_columns(tint, steps, v @ iz, int(clamp))
            if not clamp:
                if md == FULL:
                    rn.heat_w[i][steps] = self.qm
                    rn.step_heat[i][steps] = self.qm * hs
                continue
            tc = m.tc[steps]
            temps[:, 0][ge] = m.tc[ge - 1]
            tint[:, 0][steps] = tc * hs
            qb = self.qb
            iq = 0.5 * hs * (qb[steps] + qb[steps + 1]) + rn.wq @ iz + tc * rn.gsum * hs
            qs = qb[steps] + rn.wq @ zs + tc * rn.gsum
            if md == HOLD:
                rn.heat_w[i][steps], rn.step_heat[i][steps] = qs, iq
            else:
                rn.vent_w[i][steps], rn.step_vent[i][steps] = -qs, -iq


def _matvec(rows: list[list[float]], v: list[float], off: list[float] | None) -> list[float]:
    """``rows @ v - off`` in Python floats (``off`` None: nothing taken off), each row's
    sum added as ``sum(map(mul, row, v))`` adds it, from 0 (the same to the bit); the
    2 x 2 and 1 x 1 of a two-node network written out (a run's modal deviation and its
    end state: once per run)."""
    if len(rows) == 2 and len(v) == 2:
        (a, b), (c, d) = rows
        v0, v1 = v
        x0, x1 = 0.0 + a * v0 + b * v1, 0.0 + c * v0 + d * v1
        return [x0, x1] if off is None else [x0 - off[0], x1 - off[1]]
    if len(rows) == 1 and len(v) == 1:
        x0 = 0.0 + rows[0][0] * v[0]
        return [x0] if off is None else [x0 - off[0]]
    x = [sum(map(mul, row, v)) for row in rows]
    return x if off is None else [a - b for a, b in zip(x, off, strict=True)]


#: below this ``-lam h`` a mode's chord gap is taken as ``(lam h)^2 / 8`` (the general bound,
#: nearly exact there), where the closed form would cancel digits
_GAP_SERIES = 0.1


def _chord_gap(lam: np.ndarray, h: float) -> np.ndarray:
    """(r,) per mode, the largest gap over a step of length h [s] between a solution
    ``z`` of ``z' = lam z + beta + gamma t`` and its chord, per unit of ``|z''|`` at the
    step's start [s^2].

    ``z`` is ``C e^(lam t)`` plus a linear part (no gap), ``z'' = lam^2 C e^(lam t)`` keeps
    its sign, so z stays on one side of its chord, and the gap is ``|C|`` times the
    exponential's: with ``c = -lam h`` and ``u = 1 - e^-c``, the largest of ``1 - u s -
    e^(-c s)`` over ``0 <= s <= 1``, at ``e^(-c s) = u / c``: ``1 - u s - u / c``. It is
    at most ``c^2/8`` (the bound from the curvature at the start alone, used below
    `_GAP_SERIES`) and much less for a fast mode: 0.22 instead of 0.57 at c = 2.1.
    """
    c = -lam * h
    out = np.full(lam.shape, h * h / 8)
    big = c >= _GAP_SERIES
    if big.any():
        cb = c[big]
        u = -np.expm1(-cb)
        s = np.log(cb / u) / cb
        out[big] = np.minimum((1.0 - u * s - u / cb) / (lam[big] * lam[big]), h * h / 8)
    return out


def _limits(val: np.ndarray, hi: np.ndarray, lo: np.ndarray | None) -> np.ndarray:
    """A mode's limits on its watched value as slacks for `SerialRun._window`, (N-1, L).

    Step j keeps the mode when both end values plus the bound stay at or under ``hi[j]``
    (and less it at or above ``lo[j]``): with the deviation's share ``dv`` at the step's
    start, ``dv e`` at its end and ``bd`` of the bound, ``dv + bd <= hi - val[j]``, ``dv e
    + bd <= hi - val[j+1]``, ``bd - dv <= val[j] - lo`` and ``bd - dv e <= val[j+1] - lo``
    (L = 2 or 4 columns).
    """
    lim = np.empty((hi.size, 2 if lo is None else 4))  # written by column, read by row
    np.subtract(hi, val[:-1], out=lim[:, 0])
    np.subtract(hi, val[1:], out=lim[:, 1])
    if lo is not None:
        np.subtract(val[:-1], lo, out=lim[:, 2])
        np.subtract(val[1:], lo, out=lim[:, 3])
    return lim


def _cuts(same: np.ndarray, steps: int) -> list[int]:
    """The steps whose clamp temperature changed (increasing, each >= 1) and ``steps``
    last: a window from step k stops at the first of them after k, since a run of a clamp
    mode cannot carry across the change (the step is classified anew; a window's first
    step may be one that changed). A few hundred a season, found by bisection, instead
    of an array over the steps. A free mode has no cuts: its windows stop at the horizon."""
    return [*np.flatnonzero(~same).tolist(), steps]


def _put_columns(dst: np.ndarray, rows: np.ndarray, cols: np.ndarray, first: int) -> None:
    """``dst[rows, first:] = cols.T``, one column at a time (cols is (w, S))."""
    for c in range(cols.shape[0]):
        dst[:, first + c][rows] = cols[c]
