"""Crossings, minima and hours below of the plant temperature on the exact solution.

References
----------
W. H. Press et al. (2007), *Numerical Recipes*, 3rd ed., Cambridge University Press,
sec. 9.4 (Newton-Raphson safeguarded by bisection).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .explin import NEWTON_STEPS, ExpLin, safe_newton, step_profile
from .modes import FLOAT, FULL
from .network import float_array
from .problem import as_series
from .results import Crossing, Trajectory
from .segments import hold_coefficients, knots


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


def pieces_of(tr: Trajectory) -> _Pieces:
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
    """ExpLin of ``weight . z`` for float pieces (full network, heater q)."""
    prob, full = tr.problem, tr.network.modes
    m = tr.network.n_boundaries
    bk = prob.bt[:, member % prob.bt.shape[1], step].T
    db = prob.bt[:, member % prob.bt.shape[1], step + 1].T - bk
    h = prob.h[step][:, None]
    beta = bk + db * (s0[:, None] / h) + q[:, None] * full.bm[:, m]
    z0 = x0 @ full.w.T
    return ExpLin(full.lam, weight * z0, weight * beta, weight * db / h, g0, e1, w)


def clamp_explin(tr, member, step, s0, w, x0, tc, weight, g0, e1):  # type: ignore[no-untyped-def]
    """ExpLin of ``weight . z_red`` for pieces with the air held at tc."""
    prob, red = tr.problem, tr.network.held_modes
    m = tr.network.n_boundaries
    bk = prob.brt[:, member % prob.brt.shape[1], step].T
    db = prob.brt[:, member % prob.brt.shape[1], step + 1].T - bk
    h = prob.h[step][:, None]
    beta = bk + db * (s0[:, None] / h) + tc[:, None] * red.bm[:, m]
    z0 = x0[:, 1:] @ red.w.T
    return ExpLin(red.lam, weight * z0, weight * beta, weight * db / h, g0, e1, w)


def _member_values(value: object, name: str, mm: int) -> np.ndarray:
    a = float_array(value, name)
    if a.ndim > 1 or (a.ndim == 1 and a.size not in (1, mm)):
        raise ValueError(f"{name} must be a number or one per member ({mm}); got shape {a.shape}")
    return np.array(np.broadcast_to(a.reshape(-1), (mm,)))


def _offset(offset_k: object, nt: int, mm: int) -> np.ndarray:
    if offset_k is None:
        return np.zeros((1, nt))
    off = as_series(offset_k, "offset_k", nt, None)
    if off.shape[0] not in (1, mm):
        raise ValueError(f"offset_k has {off.shape[0]} members, the trajectory {mm}")
    if np.any(off < 0):
        raise ValueError("offset_k must be >= 0 (plants run colder than the air, not warmer)")
    return off


def scatter_min(best, best_t, member, val, t):  # type: ignore[no-untyped-def]
    """best[member] = min(best, val), with the time of the minimum."""
    better = val < best[member]
    if better.any():
        o = np.argsort(-val[better], kind="stable")
        mi = member[better][o]
        best[mi] = val[better][o]
        best_t[mi] = t[better][o]


#: where each run is cut for the screening bounds, as shares of its length: closer near
#: the start, where the fast (air) mode settles after a bend of the input. Fewer cuts
#: leave more pieces to the exact analysis, more cost array passes over every piece;
#: these five were the quickest of the sets tried on the benchmark's night
RUN_CUTS = np.array([0.0, 1 / 8, 1 / 4, 1 / 2, 1.0])


def _piece(lam, v0, x, hc, s, g, e1, width, ji, pi, mi) -> ExpLin:  # type: ignore[no-untyped-def]
    """The exact plant temperature less threshold on pieces (run ji, cut pi, member mi);
    ``hc`` the hold coefficients at the cuts (3, J, P, r)."""
    r = lam.size
    s0 = s[ji, pi]
    ep, q1, q2 = hc[:, ji, pi]
    xi = x[ji, :, mi]  # (K, 3r)
    zi, bi, ci = xi[:, :r], xi[:, r : 2 * r], xi[:, 2 * r :]
    z0 = ep * zi + q1 * bi + q2 * ci
    return ExpLin(
        lam,
        v0 * z0,
        v0 * (bi + ci * s0[:, None]),
        v0 * ci,
        g[ji, pi, mi],
        e1[ji, mi % e1.shape[1]],
        width[ji, pi],
    )


def _analyse_runs(tr: Trajectory, th: np.ndarray, off: np.ndarray) -> Crossing:
    """`analyse` of a free float stored at its knots (`segments.Segments`).

    Every run between knots of the inputs and of the offset is cut at `RUN_CUTS`; the
    plant temperature and its slope are evaluated exactly at the cuts, and each piece
    between cuts is bounded by the chord of its end values and the remainder of linear
    interpolation, ``w^2/8 max|g2|`` (and the same for the slope, with the third
    derivative g3): on a run the input is linear, so ``g2 = sum_r C_r lam_r^2 exp(lam_r
    s)`` with ``C_r`` the exponential part of mode r, largest at the piece's start. Only
    pieces that may cross the threshold, or that are not monotone and may hold a lower
    minimum than one already seen, get the exact analysis of `explin`; pieces surely
    below count whole.

    The arrays are run-major with the members last, (J runs, P cuts or modes, M): every
    array operation then runs along the members, contiguous.
    """
    seg, prob, net = tr.segments, tr.problem, tr.network
    assert seg is not None
    full = net.modes
    lam, v0 = full.lam, full.v[0]
    t, mm, r = tr.times_s, th.size, full.lam.size
    ks = np.union1d(seg.knots, knots(prob.h, off[:, :, None]))
    same = ks.size == seg.knots.size  # no knots of the offset's own
    z = seg.z if same else seg.modal_at(ks)  # (r, M, K)
    b = seg.b if same else seg.forcing_at(ks)  # (r, Mu, K)
    length = np.diff(t[ks])  # (J,) runs
    nj, npt = length.size, RUN_CUTS.size
    # x (J, 3r, M): each run's start state, forcing and forcing slope
    x = np.empty((nj, 3 * r, mm))
    x[:, :r] = np.moveaxis(z[:, :, :-1], 2, 0)
    x[:, r : 2 * r] = np.moveaxis(b[:, :, :-1], 2, 0)
    x[:, 2 * r :] = np.moveaxis(np.diff(b, axis=2) / length, 2, 0)
    s = RUN_CUTS[None, :] * length[:, None]  # (J, P) offsets of the cuts in each run
    hc = np.stack(hold_coefficients(lam, s.ravel())).reshape(3, nj, npt, r)
    e, f1, f2 = hc * v0
    coef = np.concatenate(
        [np.concatenate([e, f1, f2], axis=2), np.concatenate([lam * e, e, f1], axis=2)], axis=1
    )  # (J, 2P, 3r): value and slope at each cut
    gd = coef @ x  # (J, 2P, M)
    offk = off[:, ks].T  # (K, Mo)
    e1 = -np.diff(offk, axis=0) / length[:, None]  # (J, Mo) -d(offset)/ds
    g = np.ascontiguousarray(gd[:, :npt])  # (J, P, M)
    g -= offk[:-1, None, :] - e1[:, None, :] * s[:, :, None] + th
    g[0, 0] = seg.initial_c[:, 0] - off[:, 0] - th
    dg = gd[:, npt:]
    dg += e1[:, None, :]
    gm = g.reshape(nj * npt, mm)  # time order down the first axis
    at = np.argmin(gm, axis=0)
    gmin_seen = gm[at, np.arange(mm)]
    best = gmin_seen + th
    best_t = (t[ks[:-1]][:, None] + s).ravel()[at]
    # bounds of each piece: chord -/+ remainder, for g and for its slope
    lc = lam[:, None]
    cexp = np.abs(v0[:, None] * (x[:, :r] + (x[:, r : 2 * r] + x[:, 2 * r :] / lc) / lc))
    width = np.diff(s, axis=1)  # (J, P-1)
    decay = np.exp(lam * s[:, :-1, None]) * (width * width / 8.0)[:, :, None]
    rc = np.concatenate([lam * lam * decay, np.abs(lam) ** 3 * decay], axis=1)  # (J, 2P-2, r)
    rem = rc @ cexp  # (J, 2P-2, M)
    ga, gb = g[:, :-1], g[:, 1:]
    rg = rem[:, : npt - 1]
    rg += 1e-12 * max(float(gm.max()), -float(gm.min()))  # round-off
    lo = np.minimum(ga, gb) - rg
    hi = np.maximum(ga, gb) + rg
    da, db = dg[:, :-1], dg[:, 1:]
    rd = rem[:, npt - 1 :]
    mono = (np.minimum(da, db) - rd > 0) | (np.maximum(da, db) + rd < 0)
    signs = np.sign(ga) * np.sign(gb)  # 1: both ends of one sign, -1: opposite, 0: a zero
    neg = (signs > 0) & (ga < 0)
    deeper = lo < gmin_seen
    exact = (lo <= 0) & (hi >= 0) & ~(mono & (signs > 0))
    exact |= deeper & ~mono
    exact &= (width > 0)[:, :, None]
    whole = ((hi < 0) | (mono & neg)) & ~exact  # surely below all through
    # a monotone piece whose ends are of opposite signs has one root and no minimum
    # inside: Newton from the chord's root, kept in the bracket
    simple = exact & mono & (signs < 0) & ~deeper
    exact &= ~simple
    below = np.einsum("jpm,jp->m", whole, width)
    start = t[ks[:-1]][:, None] + s[:, :-1]  # (J, P-1)
    wm = whole.reshape(nj * (npt - 1), mm)  # time order down the first axis
    first = np.where(wm.any(axis=0), start.ravel()[np.argmax(wm, axis=0)], np.inf)
    ji, pi, mi = np.unravel_index(np.flatnonzero(simple), simple.shape)  # np.nonzero, quicker
    if mi.size:
        el = _piece(lam, v0, x, hc, s, g, e1, width, ji, pi, mi)
        a0, b0 = g[ji, pi, mi], g[ji, pi + 1, mi]
        root = safe_newton(el.val_d1, 0 * el.w, el.w, a0, el.w * a0 / (a0 - b0), NEWTON_STEPS)
        t0 = t[ks[ji]] + s[ji, pi]
        down = a0 > 0
        below += np.bincount(mi, weights=np.where(down, el.w - root, root), minlength=mm)
        np.minimum.at(first, mi, np.where(down, t0 + root, t0))
    ji, pi, mi = np.unravel_index(np.flatnonzero(exact), exact.shape)
    if mi.size:
        el = _piece(lam, v0, x, hc, s, g, e1, width, ji, pi, mi)
        f, gmin, smin, blw = step_profile(el, NEWTON_STEPS)
        t0 = t[ks[ji]] + s[ji, pi]
        below += np.bincount(mi, weights=blw, minlength=mm)
        np.minimum.at(first, mi, np.where(np.isnan(f), np.inf, t0 + f))
        scatter_min(best, best_t, mi, gmin + th[mi], t0 + smin)
    return Crossing(th, np.where(np.isinf(first), np.nan, first), best, best_t, below / 3600.0)


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
    mm, nt = tr.heat_w.shape
    t = tr.times_s
    th = _member_values(threshold_c, "threshold_c", mm)
    off = _offset(offset_k, nt, mm)
    if tr.segments is not None:
        return _analyse_runs(tr, th, off)
    plant = tr.temps_c[:, :, 0] - off
    g = plant - th[:, None]
    ar = np.arange(mm)
    kmin = np.argmin(plant, axis=1)
    best, best_t = plant[ar, kmin].copy(), t[kmin].copy()
    first = np.full(mm, np.inf)
    below = np.zeros(mm)
    h = prob.h
    pcs = pieces_of(tr)
    doff = np.diff(off, axis=1) / h  # (Mo, N-1)
    full = net.modes
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
    # g'' at a step's start, mode by mode: lam (lam z + b) + (b[k+1] - b[k]) / h, written
    # as lam^2 z + (lam - 1/h) b[k] + b[k+1] / h (no array of differences), into two
    # scratch arrays: fresh big temporaries cost more than the arithmetic
    bound = np.zeros((mm, nt - 1))
    k2 = np.empty((mm, nt - 1))
    tmp = np.empty((mm, nt - 1))
    ih = 1.0 / h
    for i, lam in enumerate(full.lam):
        bi = prob.bt[i]
        np.multiply(zt[i, :, :-1], lam * lam, out=k2)
        np.multiply(bi[:, :-1], lam - ih, out=tmp)
        k2 += tmp
        np.multiply(bi[:, 1:], ih, out=tmp)
        k2 += tmp
        if ctl:
            k2 += qstep * (lam * full.bm[i, m])
        np.abs(k2, out=k2)
        k2 *= abs(full.v[0, i])
        bound += k2
    bound *= h**2 / 8
    if ctl:
        bound[~flo] = 0.0
    lob = np.minimum(ga, gb, out=k2)
    lob -= bound
    hib = np.maximum(ga, gb, out=tmp)
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
    below += np.count_nonzero(is_below, axis=1) * h[0] if prob.uniform else (is_below * h).sum(1)
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
                    ExpLin(np.zeros(0), r0, r0, r0, g0[j], e1[j], h[ki[j]]),
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
            el = ExpLin(np.zeros(0), r0, r0, r0, tc - offa[j] - th[pm[j]], e1[j], pcs.w[j])
            items.append((pm[j], t[pk[j]] + pcs.s0[j], el, np.ones(j.sum(), dtype=bool)))
    # one exact profile per mode set (steps and pieces of the same modes together)
    groups: dict[bytes, list] = {}
    for it in items:
        groups.setdefault(it[2].lam.tobytes(), []).append(it)
    items = [
        (
            np.concatenate([g[0] for g in grp]),
            np.concatenate([g[1] for g in grp]),
            ExpLin.join([g[2] for g in grp]),
            np.concatenate([g[3] for g in grp]),
        )
        for grp in groups.values()
    ]
    for member, t0, el, count in items:
        f, gmin, smin, blw = step_profile(el)
        below += np.bincount(member[count], weights=blw[count], minlength=mm)
        ft = np.where(np.isnan(f), np.inf, t0 + f)
        np.minimum.at(first, member, ft)
        scatter_min(best, best_t, member, gmin + th[member], t0 + smin)
    return Crossing(th, np.where(np.isinf(first), np.nan, first), best, best_t, below / 3600.0)
