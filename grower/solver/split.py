"""Steps in which a mode changes, for many members at once, split at the exact instants.

References
----------
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
"""

from __future__ import annotations

import numpy as np

from .explin import _ExpLin, _first_root
from .modes import _MAX_SWITCHES, _TOL_K, FLOAT, FULL, HOLD, VENT
from .problem import _pick
from .stepping import _phi123

#: a step where at most this many members switch is split member by member in plain
#: Python floats (numpy's per-call overhead dominates such tiny arrays); same algorithm
_SCALAR_MAX = 2


class _SplitSteps:
    """The part of `_Run` that splits a step at its switching instants (array version)."""

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
