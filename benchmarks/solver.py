"""Time grower.solver against references run in the same process.

    python benchmarks/solver.py [--json] [--part night|season] [--members N] [--subset N] [--days N]

(a) A 1,000-member, 16-hour night at 1-minute steps (two nodes, free float plus the
    crossing time, minimum and hours below): ``free_float`` + ``analyse`` against
    - a plain vectorised numpy loop stepping the same exact solution for all members at
      once, with Newton steps on the exact solution for crossings and minima
      (`numpy_loop_night`), at the same accuracy;
    - ``scipy.integrate.solve_ivp`` (RK45, rtol = atol = 1e-6) run once on all members
      stacked, with a right-hand side vectorised over them (`ivp_vectorised_night`);
    - solve_ivp looped over the members (timed on a subset, scaled; said in the output).
    grower and the first two are timed the same way (best of 5 in interleaved rounds, one
    BLAS thread). Errors are
    measured against the exact solution; that our solver *is* the exact one is shown
    against solve_ivp at rtol = 1e-12 (DOP853, restarted at every sample) on a few members.
(b) A 120-day season at 5-minute steps with a thermostat heater and venting:
    ``thermostat`` against a straightforward per-step Python loop of the same physics
    (the exact step of Van Loan's block exponential for state and energy, mode logic per
    step, switching instants by brentq on the exact intra-step solution, expm per
    evaluation). Both results are compared to show they are the same physics. Both are
    timed as the best of 5 in interleaved rounds in the same process.

The forecasts are invented (random but seeded); nothing here is data.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import time
from pathlib import Path

# one BLAS thread: both sides run single-threaded, and tiny matrices (the reference's
# 13 x 13 exponentials) do not stall on thread hand-offs when another job is running
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import numpy as np  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402
from scipy.linalg import expm  # noqa: E402
from scipy.optimize import brentq  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from grower import solver  # noqa: E402
from grower.solver import FLOAT, FULL, HOLD, VENT  # noqa: E402

H = 3600.0


def house() -> solver.Network:
    """An invented 9 m x 30 m double-poly house: air + light structure, soil layer."""
    k, g, kg = 1500.0, 1350.0, 300.0
    return solver.Network(
        np.array([4.0e5, 2.5e7]),
        np.array([[0.0, g], [g, 0.0]]),
        np.array([[k, 0.0], [0.0, kg]]),
        ("air", "mass"),
        ("effective_outside", "deep_ground"),
    )


def interleaved_best(fns: dict, repeat: int) -> dict:
    """Best of `repeat` for each function, timed in rounds (one run of each per round), so
    that a busy spell on the shared machine falls on every side alike."""
    best = dict.fromkeys(fns, math.inf)
    for _ in range(repeat):
        for name, fn in fns.items():
            t0 = time.perf_counter()
            fn()
            best[name] = min(best[name], time.perf_counter() - t0)
    return best


# -- (a) ensemble night -------------------------------------------------------------------


def night_ensemble(members: int, rng: np.random.Generator):
    t = np.arange(0.0, 16 * H + 1, 60.0)
    hours = np.arange(0, 17)
    base = 4.0 - 7.0 * np.sin(np.pi * np.clip(hours / 14.0, 0, 1))  # falling to a dawn low
    walk = np.cumsum(rng.normal(0.0, 0.6, (members, hours.size)), axis=1)
    hourly = base + rng.normal(0.0, 1.5, (members, 1)) + walk
    out = np.array([np.interp(t / H, hours, row) for row in hourly])
    u = np.stack([out, np.full(out.shape, 8.0)], axis=2)
    x0 = np.stack([rng.uniform(6, 10, members), rng.uniform(9, 12, members)], 1)
    return t, u, x0


def ivp_member(net, t, u, x0, th, off, method, rtol, atol, restart):
    a, b = net.state_matrix, net.input_matrix[:, :2]
    h = t[1] - t[0]
    du = np.diff(u, axis=0) / h

    def rhs(tt, y):
        k = min(int((tt - t[0]) / h), t.size - 2)
        return a @ y + b @ (u[k] + du[k] * (tt - t[k]))

    def event(tt, y):
        return y[0] - off - th

    event.direction = -1
    if not restart:
        sol = solve_ivp(
            rhs, (t[0], t[-1]), x0, method=method, rtol=rtol, atol=atol, t_eval=t, events=[event]
        )
        hit = sol.t_events[0]
        return sol.y.T, hit[0] if hit.size else math.nan
    xs, hit = [np.array(x0)], []
    for k in range(t.size - 1):
        sol = solve_ivp(
            rhs,
            (t[k], t[k + 1]),
            xs[-1],
            method=method,
            rtol=rtol,
            atol=atol,
            events=[event],
            first_step=None,
        )
        hit.extend(sol.t_events[0])
        xs.append(sol.y[:, -1])
    return np.array(xs), hit[0] if hit else math.nan


def numpy_loop_night(net, t, u, x0, th, off):
    """The plain reference: a vectorised numpy loop over the steps, all members at once.

    Each step is the exact first-order-hold step ``x1 = Phi x0 + Ga u0 + Gb (u1 - u0)`` of
    Van Loan's block exponential (computed once), for all members in three small matrix
    products. After the loop, at the same accuracy as `grower.solver.analyse`: the first
    crossing of ``T_air - off = th`` by four Newton steps on the exact solution inside the
    step where the grid changes sign, the minimum by four Newton steps on the derivative
    in the steps beside the grid minimum, and the hours below from the roots in every
    step that changes sign (Newton again). Dips below the threshold within one step whose
    ends are both above it are not looked for (grower does look for them).
    """
    a, b = net.state_matrix, net.input_matrix[:, : net.n_boundaries]
    n, h = net.n_nodes, t[1] - t[0]
    phi, ga, gb = _aug_blocks(a, b, h)
    ua = np.ascontiguousarray(np.moveaxis(u, 1, 0))  # (N, M, m)
    du = np.diff(ua, axis=0)
    x = np.empty((t.size, u.shape[0], n))
    x[0] = x0
    pt, gat, gbt = phi.T, ga.T, gb.T
    for k in range(t.size - 1):
        x[k + 1] = x[k] @ pt + ua[k] @ gat + du[k] @ gbt
    # the exact solution inside a step, for Newton: modes of the same A
    lam, vec = np.linalg.eig(a)
    lam, vec = lam.real, vec.real
    w = np.linalg.inv(vec)
    bm = w @ b
    v0 = vec[0]

    def inside(mi, ki, s):  # plant less threshold, and its first two s-derivatives
        z0 = x[ki, mi] @ w.T
        beta = ua[ki, mi] @ bm.T
        gam = du[ki, mi] @ bm.T / h
        ls = lam * s[:, None]
        p1 = np.expm1(ls) / lam
        z = np.exp(ls) * z0 + p1 * beta + (p1 - s[:, None]) / lam * gam
        dz = lam * z + beta + gam * s[:, None]
        return z @ v0 - off - th, dz @ v0, (lam * dz + gam) @ v0

    def newton(mi, ki, s, deriv):
        for _ in range(4):
            f, d1, d2 = inside(mi, ki, s)
            s = np.clip(s - (d1 / d2 if deriv else f / d1), 0.0, h)
        return s

    g = x[:, :, 0].T - off - th  # (M, N)
    ar = np.arange(g.shape[0])
    sign = (g[:, :-1] > 0) != (g[:, 1:] > 0)
    mi, ki = np.nonzero(sign)
    roots = newton(mi, ki, h * g[mi, ki] / (g[mi, ki] - g[mi, ki + 1]), False)
    down = g[mi, ki] > 0
    below = h * ((g[:, :-1] <= 0) & (g[:, 1:] <= 0)).sum(axis=1)
    np.add.at(below, mi, np.where(down, h - roots, roots))
    first = np.full(g.shape[0], np.nan)
    fd = np.flatnonzero(down)
    fd = fd[np.unique(mi[fd], return_index=True)[1]]  # the first downward root per member
    first[mi[fd]] = t[ki[fd]] + roots[fd]
    first[g[:, 0] <= 0] = t[0]
    km = np.argmin(g, axis=1)
    _, d1, _ = inside(ar, np.minimum(km, t.size - 2), np.zeros(ar.size))
    step = np.where((d1 < 0) & (km < t.size - 1) | (km == 0), km, km - 1)
    step = np.minimum(step, t.size - 2)
    sm = newton(ar, step, np.full(ar.size, 0.5 * h), True)
    gm, _, _ = inside(ar, step, sm)
    gmin = np.minimum(gm, g[ar, km])
    return np.moveaxis(x, 0, 1), first, gmin + th, below / 3600.0


def ivp_vectorised_night(net, t, u, x0, th, off):
    """`solve_ivp` (RK45, rtol = atol = 1e-6) once on all members stacked, with a right-hand
    side vectorised over the members; crossing, minimum and hours below from its output
    on the grid (linear between samples), the accuracy RK45 at 1e-6 allows anyway."""
    a, b = net.state_matrix, net.input_matrix[:, : net.n_boundaries]
    mm, n, h = u.shape[0], net.n_nodes, t[1] - t[0]
    du = np.diff(u, axis=1) / h

    def rhs(tt, y):
        k = min(int((tt - t[0]) / h), t.size - 2)
        uu = u[:, k] + du[:, k] * (tt - t[k])
        return (y.reshape(mm, n) @ a.T + uu @ b.T).ravel()

    sol = solve_ivp(rhs, (t[0], t[-1]), np.ravel(x0), method="RK45", rtol=1e-6, atol=1e-6, t_eval=t)
    x = sol.y.reshape(mm, n, -1).transpose(0, 2, 1)
    g = x[:, :, 0] - off - th
    ga, gb = g[:, :-1], g[:, 1:]
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(ga > 0, ga / (ga - gb), 1.0 - ga / (ga - gb))
    cross = (ga > 0) & (gb <= 0)
    below = h * np.where((ga <= 0) & (gb <= 0), 1.0, np.where((ga > 0) != (gb > 0), 1 - frac, 0))
    hit = cross.any(axis=1)
    k = np.argmax(cross, axis=1)
    ar = np.arange(mm)
    first = np.where(hit, t[k] + h * ga[ar, k] / (ga[ar, k] - gb[ar, k]), np.nan)
    return x, first, g.min(axis=1) + th, below.sum(axis=1) / 3600.0


def bench_ensemble(members: int, subset: int, rng: np.random.Generator) -> dict:
    net = house()
    t, u, x0 = night_ensemble(members, rng)
    th, off = 0.0, 1.0
    offset = np.full(t.size, off)

    def ours():
        return solver.analyse(solver.free_float(net, t, u, x0), th, offset)

    cr = ours()
    tr = solver.free_float(net, t, u, x0)
    sel = rng.choice(members, size=min(subset, members), replace=False)
    t0 = time.perf_counter()
    ref = [ivp_member(net, t, u[i], x0[i], th, off, "RK45", 1e-6, 1e-6, False) for i in sel]
    t_ref = (time.perf_counter() - t0) / sel.size * members
    err_t = max(np.abs(r[0] - tr.temps_c[i]).max() for r, i in zip(ref, sel, strict=True))
    dts = [
        abs(r[1] - cr.time_s[i])
        for r, i in zip(ref, sel, strict=True)
        if not (math.isnan(r[1]) and math.isnan(cr.time_s[i]))
    ]
    err_x = max(dts) if dts else 0.0
    tight = [
        ivp_member(net, t, u[i], x0[i], th, off, "DOP853", 1e-12, 1e-12, True) for i in sel[:3]
    ]
    ours_t = max(np.abs(r[0] - tr.temps_c[i]).max() for r, i in zip(tight, sel[:3], strict=True))
    ours_x = max(
        abs(r[1] - cr.time_s[i]) if not math.isnan(r[1]) else 0.0
        for r, i in zip(tight, sel[:3], strict=True)
    )
    # the same night by a plain numpy loop and by one vectorised solve_ivp, timed the same
    # way as grower: best of 5, in interleaved rounds
    loop = numpy_loop_night(net, t, u, x0, th, off)
    ivp = ivp_vectorised_night(net, t, u, x0, th, off)
    best = interleaved_best(
        {
            "ours": ours,
            "loop": lambda: numpy_loop_night(net, t, u, x0, th, off),
            "ivp": lambda: ivp_vectorised_night(net, t, u, x0, th, off),
        },
        5,
    )
    t_ours, t_loop, t_ivp = best["ours"], best["loop"], best["ivp"]

    def diffs(res):
        x, first, gmin, below = res
        both = ~(np.isnan(first) | np.isnan(cr.time_s))
        return {
            "max_temp_diff_k": float(np.abs(x - tr.temps_c).max()),
            "max_crossing_diff_s": float(np.abs(first - cr.time_s)[both].max()),
            "crossed_same": bool(np.array_equal(np.isnan(first), np.isnan(cr.time_s))),
            "max_min_diff_k": float(np.abs(gmin - cr.min_c).max()),
            "max_hours_below_diff_h": float(np.abs(below - cr.hours_below).max()),
        }

    tight_loop = max(np.abs(r[0] - loop[0][i]).max() for r, i in zip(tight, sel[:3], strict=True))
    return {
        "members": members,
        "steps": t.size - 1,
        "crossed": int(cr.crossed.sum()),
        "ours_s": t_ours,
        "reference_s": t_ref,
        "reference_members_timed": int(sel.size),
        "speedup": t_ref / t_ours,
        "reference_max_temp_error_k": float(err_t),
        "reference_max_crossing_error_s": float(err_x),
        "ours_vs_rtol1e-12_max_temp_diff_k": float(ours_t),
        "ours_vs_rtol1e-12_max_crossing_diff_s": float(ours_x),
        "numpy_loop_s": t_loop,
        "speedup_vs_numpy_loop": t_loop / t_ours,
        "numpy_loop_vs_rtol1e-12_max_temp_diff_k": float(tight_loop),
        "numpy_loop_vs_ours": diffs(loop),
        "solve_ivp_vectorised_s": t_ivp,
        "speedup_vs_solve_ivp_vectorised": t_ivp / t_ours,
        "solve_ivp_vectorised_vs_ours": diffs(ivp),
    }


# -- (b) season with a thermostat --------------------------------------------------------


def season(days: int, rng: np.random.Generator):
    t = np.arange(0.0, days * 86400 + 1, 300.0)
    day = t / 86400.0
    daily = np.interp(day, np.arange(days + 1), rng.normal(0.0, 3.0, days + 1))
    mean = 3.0 - 5.0 * np.sin(np.pi * day / days) + daily
    out = mean + 6.0 * np.sin(2 * np.pi * (day - 0.375))
    cloud = np.interp(day, np.arange(days + 1), rng.uniform(0, 1, days + 1))
    sun = np.clip(30000.0 * np.sin(2 * np.pi * (day - 0.25)), 0, None) * (1 - 0.8 * cloud)
    u = np.stack([out, np.full(t.size, 8.0)], 1)
    p = np.stack([sun, np.zeros(t.size)], 1)
    sp = np.where((t % 86400 >= 6 * H) & (t % 86400 < 18 * H), 12.0, 8.0)
    return t, u, p, sp


def _aug_blocks(a, b, h):
    """Van Loan: exp([[A, B, 0], [0, 0, I/h], [0, 0, 0]] h) -> Phi, Gamma_a, Gamma_b."""
    n, p = b.shape
    m = np.zeros((n + 2 * p, n + 2 * p))
    m[:n, :n], m[:n, n : n + p], m[n : n + p, n + p :] = a, b, np.eye(p) / h
    e = expm(m * h)
    return e[:n, :n], e[:n, n : n + p], e[:n, n + p :]


def reference_thermostat(net, t, u_b, p, x0, sp, qmax, vent):
    """A straightforward per-step loop of the same physics (see the module docstring)."""
    c, g, hm = net.capacitance_j_per_k, net.coupling_w_per_k, net.boundary_w_per_k
    n, m = net.n_nodes, net.n_boundaries
    a, b = net.state_matrix, net.input_matrix
    # float: state (x, E), input (U, P, Q); E' = Q
    af = np.zeros((n + 1, n + 1))
    af[:n, :n] = a
    bf = np.zeros((n + 1, m + n + 1))
    bf[:n, : m + n] = b
    bf[0, m + n] = 1.0 / c[0]
    bf[n, m + n] = 1.0
    # held air at Tc: state (x_r, E), input (U, P, Tc); E' = Q_req
    ar = np.zeros((n, n))
    ar[: n - 1, : n - 1] = a[1:, 1:]
    ar[n - 1, : n - 1] = -g[0, 1:]
    br = np.zeros((n, m + n + 1))
    br[: n - 1, : m + n] = b[1:]
    br[: n - 1, m + n] = a[1:, 0]
    br[n - 1, :m] = -hm[0]
    br[n - 1, m] = -1.0
    br[n - 1, m + n] = g[0, 1:].sum() + hm[0].sum()
    h = t[1] - t[0]
    full_step = {0: _aug_blocks(af, bf, h), 1: _aug_blocks(ar, br, h)}

    def prop(kind, y, w0, w1, s):
        if s == 0:
            return y
        if s == h:
            phi, ga, gb = full_step[kind]
        else:
            phi, ga, gb = _aug_blocks(af, bf, s) if kind == 0 else _aug_blocks(ar, br, s)
        return phi @ y + ga @ w0 + gb @ (w1 - w0)

    def q_req(xr, tc, uu):
        return -(g[0, 1:] @ (xr - tc) + hm[0] @ (uu[:m] - tc) + uu[m])

    x = np.array(x0, float)
    temps = np.empty((t.size, n))
    temps[0] = x
    heat = vented = 0.0
    uall = np.concatenate([u_b, p], 1)
    for k in range(t.size - 1):
        s_k, v_k = sp[k], vent[k]
        u0, u1 = uall[k], uall[k + 1]
        if x[0] > v_k:
            vented += c[0] * (x[0] - v_k)
            x[0] = v_k
        if x[0] < s_k - 1e-9:
            mode = FULL
        elif abs(x[0] - s_k) <= 1e-9:
            q = q_req(x[1:], s_k, u0)
            mode = FULL if q > qmax else HOLD if q >= 0 else FLOAT
        elif abs(x[0] - v_k) <= 1e-9:
            mode = VENT if q_req(x[1:], v_k, u0) < 0 else FLOAT
        else:
            mode = FLOAT
        s = 0.0
        while s < h:
            ua = u0 + (u1 - u0) * (s / h)
            if mode in (FLOAT, FULL):
                q = qmax if mode == FULL else 0.0
                w0, w1 = np.append(ua, q), np.append(u1, q)
                y0 = np.append(x, 0.0)

                def g_of(sig, y0=y0, w0=w0, ua=ua, q=q, u0=u0, u1=u1):
                    wend = np.append(ua + (u1 - u0) * (sig / h), q)
                    return prop(0, y0, w0, wend, sig)[0]

                y = prop(0, y0, w0, w1, h - s)
                if mode == FLOAT and y[0] < s_k:
                    target, new = s_k, HOLD
                elif mode == FLOAT and y[0] > v_k:
                    target, new = v_k, VENT
                elif mode == FULL and y[0] > s_k:
                    target, new = s_k, HOLD
                else:
                    target = None
                if target is None:
                    x, e = y[:n], y[n]
                    heat += e
                    s = h
                    continue
                sig = brentq(lambda z, target=target: g_of(z) - target, 0.0, h - s, xtol=1e-9)
                y = prop(0, y0, w0, np.append(ua + (u1 - u0) * (sig / h), q), sig)
                x, heat, s, mode = y[:n], heat + y[n], s + sig, new
                x[0] = target
                if new == HOLD:
                    qq = q_req(x[1:], target, u0 + (u1 - u0) * (s / h))
                    mode = FULL if qq > qmax else HOLD
                continue
            tc = s_k if mode == HOLD else v_k
            w0, w1 = np.append(ua, tc), np.append(u1, tc)
            y0 = np.append(x[1:], 0.0)

            def q_at(sig, y0=y0, w0=w0, ua=ua, tc=tc, u0=u0, u1=u1):
                uend = ua + (u1 - u0) * (sig / h)
                y = prop(1, y0, w0, np.append(uend, tc), sig)
                return q_req(y[: n - 1], tc, uend)

            y = prop(1, y0, w0, w1, h - s)
            qe = q_req(y[: n - 1], tc, u1)
            if mode == HOLD and qe < 0:
                f, new = (lambda z: q_at(z)), FLOAT
            elif mode == HOLD and qe > qmax:
                f, new = (lambda z: q_at(z) - qmax), FULL
            elif mode == VENT and qe > 0:
                f, new = (lambda z: q_at(z)), FLOAT
            else:
                f = None
            if f is None:
                x = np.append(tc, y[: n - 1])
                if mode == HOLD:
                    heat += y[n - 1]
                else:
                    vented -= y[n - 1]
                s = h
                continue
            sig = brentq(f, 0.0, h - s, xtol=1e-9)
            y = prop(1, y0, w0, np.append(ua + (u1 - u0) * (sig / h), tc), sig)
            if mode == HOLD:
                heat += y[n - 1]
            else:
                vented -= y[n - 1]
            x = np.append(tc, y[: n - 1])
            s, mode = s + sig, new
        temps[k + 1] = x
    return temps, heat, vented


def bench_season(days: int, rng: np.random.Generator) -> dict:
    net = house()
    t, u, p, sp = season(days, rng)
    qmax, vent = 15000.0, 26.0
    x0 = [10.0, 10.0]

    def ours():
        return solver.thermostat(net, t, u, x0, sp, qmax, vent, p)

    def reference():
        return reference_thermostat(net, t, u, p, x0, sp, qmax, np.full(t.size, vent))

    tr = ours()
    temps, heat, vented = reference()
    # both sides the best of 5 in interleaved rounds: a shared machine slows single runs
    # by up to 2x, and a busy spell then falls on both sides alike
    best = interleaved_best({"ours": ours, "reference": reference}, 5)
    t_ours, t_ref = best["ours"], best["reference"]
    return {
        "days": days,
        "steps": t.size - 1,
        "switches": int(tr.switches.time_s.size),
        "ours_s": t_ours,
        "reference_s": t_ref,
        "speedup": t_ref / t_ours,
        "max_temp_diff_k": float(np.abs(temps - tr.temps_c[0]).max()),
        "heat_rel_diff": float(abs(heat / tr.heat_j[0] - 1)),
        "vent_rel_diff": float(abs(vented / tr.vent_j[0] - 1)) if tr.vent_j[0] else 0.0,
        "heat_kwh": float(tr.heat_j[0] / 3.6e6),
    }


def _met(value: float, target: float) -> str:
    return "met" if value >= target else "NOT met"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--json", action="store_true", help="print the figures as one JSON document")
    ap.add_argument("--members", type=int, default=1000)
    ap.add_argument("--subset", type=int, default=40, help="members solve_ivp is timed on")
    ap.add_argument("--days", type=int, default=120)
    ap.add_argument(
        "--part", choices=("night", "season"), help="run only (a) the night or (b) the season"
    )
    args = ap.parse_args(argv)
    # each part its own seed: the season's forecast does not depend on whether (a) ran
    a = b = None
    if args.part != "season":
        a = bench_ensemble(args.members, args.subset, np.random.default_rng(2024))
    if args.part != "night":
        b = bench_season(args.days, np.random.default_rng(2025))
    if args.json:
        doc = {"ensemble_night": _judged_night(a), "season_thermostat": _judged_season(b)}
        print(json.dumps({k: v for k, v in doc.items() if v is not None}, indent=2))
        return 0
    if a is not None:
        _print_night(_judged_night(a))
    if b is not None:
        _print_season(_judged_season(b))
    return 0


def _judged_night(a: dict | None) -> dict | None:
    """The night's figures with its targets and whether each is met."""
    if a is None:
        return None
    targets = {
        "speedup_vs_numpy_loop": 2.0,
        "speedup_vs_solve_ivp_vectorised": 10.0,
        "speedup": 300.0,
    }
    a["targets"] = targets
    a["targets_met"] = {k: bool(a[k] >= v) for k, v in targets.items()}
    return a


def _judged_season(b: dict | None) -> dict | None:
    """The season's figures with its target and whether it is met."""
    if b is None:
        return None
    b["target_speedup"], b["target_met"] = 20, bool(b["speedup"] >= 20)
    return b


def _print_night(a: dict) -> None:
    print(
        f"(a) {a['members']} members x {a['steps']} one-minute steps, two nodes, free float"
        " + crossing, minimum, hours below"
    )
    print(f"    grower.solver          {a['ours_s'] * 1e3:10.1f} ms")
    loop_d = a["numpy_loop_vs_ours"]
    print(
        f"    plain numpy loop       {a['numpy_loop_s'] * 1e3:10.1f} ms  speed-up"
        f" {a['speedup_vs_numpy_loop']:6.2f} x (target >= 2: "
        f"{_met(a['speedup_vs_numpy_loop'], 2)}); differs by {loop_d['max_temp_diff_k']:.1e} K,"
        f" crossing {loop_d['max_crossing_diff_s']:.1e} s"
    )
    ivp_d = a["solve_ivp_vectorised_vs_ours"]
    print(
        f"    solve_ivp, all members {a['solve_ivp_vectorised_s'] * 1e3:10.1f} ms  speed-up"
        f" {a['speedup_vs_solve_ivp_vectorised']:6.2f} x (target >= 10: "
        f"{_met(a['speedup_vs_solve_ivp_vectorised'], 10)}); RK45 1e-6 off by"
        f" {ivp_d['max_temp_diff_k']:.1e} K, crossing {ivp_d['max_crossing_diff_s']:.1e} s"
    )
    print(
        f"    solve_ivp per member   {a['reference_s'] * 1e3:10.1f} ms  (timed on {a['reference_members_timed']} members, scaled)"
    )
    print(
        f"    speed-up               {a['speedup']:10.0f} x   (target >= 300: {_met(a['speedup'], 300)})"
    )
    print(
        f"    RK45 max error         {a['reference_max_temp_error_k']:.2e} K, crossing {a['reference_max_crossing_error_s']:.2e} s"
    )
    print(
        f"    ours vs solve_ivp 1e-12 {a['ours_vs_rtol1e-12_max_temp_diff_k']:.2e} K, crossing {a['ours_vs_rtol1e-12_max_crossing_diff_s']:.2e} s"
    )


def _print_season(b: dict) -> None:
    print(
        f"(b) {b['days']}-day season, {b['steps']} five-minute steps, thermostat + vent, {b['switches']} switches"
    )
    print(f"    grower.solver          {b['ours_s'] * 1e3:10.1f} ms")
    print(f"    per-step Python loop   {b['reference_s'] * 1e3:10.1f} ms")
    print(
        f"    speed-up               {b['speedup']:10.1f} x   (target >= 20: {_met(b['speedup'], 20)})"
    )
    print(
        f"    same physics: max temp diff {b['max_temp_diff_k']:.2e} K, heat {b['heat_rel_diff']:.1e}, vent {b['vent_rel_diff']:.1e} (relative)"
    )


if __name__ == "__main__":
    raise SystemExit(main())
