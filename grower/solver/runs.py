"""The thermostat's mode machine: runs of whole steps in one mode, and the whole run.

`_Run` holds the run's inputs and results. Few members go one at a time through `serial`;
many go in rounds: a window of whole steps for all members at once, each in its mode, up
to the first step where any member switches, which `split` (or `scalar`, when only one or
two members switch there) splits at the exact instants.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np

from .modes import _TOL_K, FLOAT, FULL, HOLD, VENT
from .problem import _dot, _pick, _Problem
from .results import Switches, Trajectory, _Control, _no_switches
from .scalar import _ScalarStep
from .serial import _Serial
from .split import _SplitSteps
from .stepping import _recurrence

#: up to this many members are run one at a time (`serial`): their windows of whole steps
#: are cheaper alone than numpy rounds over all members at every member's switch
_FEW_MEMBERS = 64


class _Run(_SplitSteps):
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
        self.clamp = {HOLD: ctl.setpoint_c, VENT: ctl.vent_c}
        self.q = np.broadcast_to(ctl.q_max_w, (mm,))
        self.temps = np.empty((mm, nt, n))
        self.heat_w = np.zeros((mm, nt))
        self.vent_w = np.zeros((mm, nt))
        self.step_heat = np.zeros((mm, nt - 1))
        self.step_vent = np.zeros((mm, nt - 1))
        self.tint = np.zeros((mm, nt - 1, n))
        self.mode = np.zeros((mm, nt - 1), dtype=np.int8)
        self.events: list[tuple[np.ndarray, ...]] = []  # (members, steps, offsets, modes, states)
        self.scalar_events: list[tuple[int, int, float, int, list[float]]] = []  # one each
        self._scalar = _ScalarStep(self)

    # -- inputs and particular solutions, member axis first (for the vectorised rounds) --

    @cached_property
    def b(self) -> np.ndarray:  # (Mu, N, r) modal forcing
        return np.ascontiguousarray(self.p.b)

    @cached_property
    def db(self) -> np.ndarray:  # (Mu, N-1, r) its step increments
        return np.ascontiguousarray(self.p.db)

    @cached_property
    def bru(self) -> np.ndarray:  # (Mu, N, n-1) forcing of the network with the air held
        return np.ascontiguousarray(self.p.bru)

    @cached_property
    def dbr(self) -> np.ndarray:  # (Mu, N-1, n-1)
        return np.ascontiguousarray(np.diff(self.p.bru, axis=1))

    @cached_property
    def dqb(self) -> np.ndarray:  # (Mu, N-1)
        return np.diff(self.p.qb, axis=1)

    @cached_property
    def zf(self) -> np.ndarray:  # (Mu, N, r) free float from a zero modal state
        tf = self.p.full
        f = tf.f1 * self.b[:, :-1] + tf.f2 * self.db
        return _recurrence(tf.e, self.p.uniform, f, np.zeros((self.b.shape[0], tf.e.shape[1])))

    @cached_property
    def zq(self) -> np.ndarray:  # (N, r) response to a unit heater from zero
        tf = self.p.full
        return _recurrence(
            tf.e, self.p.uniform, (tf.f1 * self.bq)[None], np.zeros((1, tf.e.shape[1]))
        )[0]

    @cached_property
    def zc(self) -> dict[int, np.ndarray]:  # (Mc, N, n-1) air held at setpoint or vent
        tr_, out = self.p.red, {}
        for md, series in ((HOLD, self.ctl.setpoint_c), (VENT, self.ctl.vent_c)):
            tc = np.where(np.isfinite(series), series, 0.0)[:, :-1, None]
            fc = tr_.f1 * (self.bru[:, :-1] + tc * self.bc) + tr_.f2 * self.dbr
            out[md] = _recurrence(
                tr_.e, self.p.uniform, fc, np.zeros((fc.shape[0], tr_.e.shape[1]))
            )
        return out

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

    # -- the whole run -------------------------------------------------------------------

    def run(self) -> Trajectory:
        """The whole run: few members one at a time (`serial`), many in rounds of windows
        over all members, each round up to the first step in which any member switches."""
        p = self.p
        mm, nt = p.n_members, p.times_s.size
        x = np.array(np.broadcast_to(p.initial_c, (mm, self.net.n_nodes)))
        self.temps[:, 0] = x
        if mm <= _FEW_MEMBERS:
            for i in range(mm):
                _Serial(self, i).run()
            return self._trajectory()
        md = np.full(mm, -1, dtype=np.int8)  # unknown: the first step is classified
        # a window costs ~40 array operations: long for few members, short for many
        lmax = int(np.clip(32768 // mm, 8, 4096))
        k, nl, run, typical = 0, 16, 0, 16.0
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

    def _trajectory(self) -> Trajectory:
        p = self.p
        n = self.net.n_nodes
        events = list(self.events)
        if self.scalar_events:
            cols = list(zip(*self.scalar_events, strict=True))
            events.append(
                (
                    np.array(cols[0], dtype=int),
                    np.array(cols[1], dtype=int),
                    np.array(cols[2], dtype=float),
                    np.array(cols[3], dtype=np.int8),
                    np.array(cols[4], dtype=float).reshape(-1, n),
                )
            )
        if events:
            mem, stp, off, mode, st = (np.concatenate(a) for a in zip(*events, strict=True))
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
