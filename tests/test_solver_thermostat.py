"""The thermostat against a hybrid solve_ivp integration, exact energy balances, ensembles,
the three ways a run is stepped, and physical properties.

Independent references used here:
- ``scipy.integrate.solve_ivp`` (DOP853 at rtol 1e-10), restarted at every forecast
  sample so that its right-hand side is smooth, mode by mode with its own event location
  for the thermostat's switches;
- the energy balance of the network (heat in + gains = vent out + stored + conducted),
  each term from a different formula (elementary calculus).

The networks below are invented test cases (not data); only the references are checked.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from grower import solver
from grower.solver import FLOAT, FULL, HOLD, VENT, lumped, scalar

from .test_solver import ATOL, RTOL, H, forecast, gains, refine, three_node, two_node


def _terminal(fn, direction):
    def event(t_, y):
        return fn(t_, y)

    event.terminal, event.direction = True, direction
    return event


def ivp_thermostat(net, t, u_b, p, x0, sp, qmax, vent):
    """Hybrid integration of the ideal thermostat with venting, mode by mode, switches by
    solve_ivp's event location. Returns grid states, heat J, vent J, switch times."""
    a, bmat = net.state_matrix, net.input_matrix
    c, gm, hm = net.capacitance_j_per_k, net.coupling_w_per_k, net.boundary_w_per_k
    m = net.n_boundaries
    u = np.concatenate([u_b, p], 1)
    x = np.array(x0, float)
    xs, heat, vented, switches = [x.copy()], 0.0, 0.0, []

    def q_req(xr, tc, uu):
        return -(gm[0, 1:] @ (xr - tc) + hm[0] @ (uu[:m] - tc) + uu[m])

    for k in range(t.size - 1):
        s, v = sp[k], vent[k]
        u0, du, t0 = u[k], (u[k + 1] - u[k]) / (t[k + 1] - t[k]), t[k]
        uf = lambda tt, u0=u0, du=du, t0=t0: u0 + du * (tt - t0)  # noqa: E731
        if x[0] > v:
            vented += c[0] * (x[0] - v)
            x[0] = v
        if math.isinf(qmax) and x[0] < s:
            heat += c[0] * (s - x[0])
            x[0] = s
        if x[0] < s - 1e-9 and qmax > 0:
            mode = FULL
        elif abs(x[0] - s) <= 1e-9 and qmax > 0:
            q = q_req(x[1:], s, uf(t0))
            mode = FULL if q > qmax else HOLD if q >= 0 else VENT if v == s else FLOAT
        elif abs(x[0] - v) <= 1e-9:
            mode = VENT if q_req(x[1:], v, uf(t0)) < 0 else FLOAT
        else:
            mode = FLOAT
        if mode in (HOLD, VENT):
            x[0] = s if mode == HOLD else v
        tt = t0
        while tt < t[k + 1]:
            if mode in (FLOAT, FULL):
                qq = qmax if mode == FULL else 0.0

                def rhs(t_, y, qq=qq, uf=uf):
                    dx = a @ y[:-1] + bmat @ uf(t_)
                    dx[0] += qq / c[0]
                    return np.append(dx, qq)

                evs = []
                if mode == FLOAT and qmax > 0:
                    evs.append((lambda t_, y, s=s: y[0] - s, -1, HOLD))
                if mode == FLOAT and np.isfinite(v):
                    evs.append((lambda t_, y, v=v: y[0] - v, 1, VENT))
                if mode == FULL:
                    evs.append((lambda t_, y, s=s: y[0] - s, 1, HOLD))
                y0 = np.append(x, 0.0)
            else:
                tc = s if mode == HOLD else v

                def rhs(t_, y, tc=tc, uf=uf):
                    xr = y[:-1]
                    full = np.concatenate([[tc], xr])
                    uu = uf(t_)
                    return np.append((a @ full + bmat @ uu)[1:], q_req(xr, tc, uu))

                qf = lambda t_, y, tc=tc, uf=uf: q_req(y[:-1], tc, uf(t_))  # noqa: E731
                evs = []
                if mode == HOLD:
                    evs.append((qf, -1, FLOAT))
                    if np.isfinite(qmax):
                        evs.append((lambda t_, y, qf=qf: qf(t_, y) - qmax, 1, FULL))
                else:
                    evs.append((qf, 1, FLOAT))
                y0 = np.append(x[1:], 0.0)
            fns = [_terminal(fn, d) for fn, d, _ in evs]
            atol = np.full(y0.size, ATOL)
            atol[-1] = 1e-6
            sol = solve_ivp(
                rhs, (tt, t[k + 1]), y0, method="DOP853", rtol=RTOL, atol=atol, events=fns or None
            )
            y = sol.y[:, -1]
            energy = y[-1]
            if mode == VENT:
                vented -= energy
            else:
                heat += energy
            x = np.concatenate([[tc], y[:-1]]) if mode in (HOLD, VENT) else y[:-1]
            if sol.status == 1:
                tt = sol.t[-1]
                fired = next(i for i, te in enumerate(sol.t_events) if te.size)
                mode = evs[fired][2]
                # where the event leads, by its direction (no tie-breaking needed)
                uu = uf(tt)
                if mode == HOLD and evs[fired][1] == 1:  # heater at full output reached S
                    q = q_req(x[1:], s, uu)
                    mode = HOLD if q >= 0 else VENT if v == s else FLOAT
                elif mode == HOLD:  # floating down to S: held if the heater can
                    mode = FULL if q_req(x[1:], s, uu) > qmax else HOLD
                elif mode == FLOAT and v == s:  # held power through 0 with vent = setpoint
                    mode = VENT if evs[fired][1] == -1 else HOLD if qmax > 0 else FLOAT
                if mode in (HOLD, VENT):
                    x[0] = s if mode == HOLD else v
                switches.append(tt)
            else:
                tt = t[k + 1]
        xs.append(x.copy())
    return np.array(xs), heat, vented, np.array(switches)


# -- against solve_ivp ------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("net", "irregular"),
    [
        (lumped(2.5e6, 1600.0), False),
        (two_node(), False),
        (three_node(), False),
        (two_node(), True),
    ],
    ids=["1", "2", "3", "2-irregular"],
)
def test_thermostat_against_hybrid_solve_ivp(net, irregular):
    t = np.arange(0.0, 30 * H + 1, 600.0)
    if irregular:  # samples 2 to 18 minutes apart
        t = np.concatenate([[0.0], np.cumsum(np.random.default_rng(5).uniform(120, 1080, 180))])
    u, sun = forecast(t, mean=6.0, swing=9.0, sun_w=60000.0)
    u = u[:, : net.n_boundaries]
    p = gains(net, sun)
    sp = np.where((t % 86400 >= 6 * H) & (t % 86400 < 18 * H), 12.0, 7.0)
    vent = np.full(t.size, 24.0)
    qmax = 14000.0
    x0 = np.full(net.n_nodes, 10.0)
    ref, heat, vented, sw = ivp_thermostat(net, t, u, p, x0, sp, qmax, vent)
    for tr in (solver.thermostat(net, t, u, x0, sp, qmax, vent, p),):
        assert set(np.unique(tr.mode)) == {FLOAT, FULL, HOLD, VENT}  # every mode is exercised
        # DOP853 at rtol 1e-10 and its event location: ~1e-10 K seen; 1e-8 K leaves a margin
        assert np.abs(tr.temps_c[0] - ref).max() < 1e-8
        assert tr.heat_j[0] == pytest.approx(heat, rel=1e-8)
        assert tr.vent_j[0] == pytest.approx(vented, rel=1e-8)
        ours = tr.switches.time_s[tr.switches.offset_s > 0]
        assert ours.size == sw.size
        assert np.abs(ours - sw).max() < 1e-3  # switching instants to 1 ms


def test_energy_balance_over_a_night_is_exact():
    # heat in + gains in - vent out = change of stored heat + conductive losses. The losses
    # are computed exactly from the solver's step integrals of the node temperatures
    # (closed form, phi3) and the trapezoid integral of the (linear) boundary series; the
    # stored heat from the grid states. Different formulas: agreement only if both exact.
    net = two_node()
    t = np.arange(0.0, 16 * H + 1, 300.0)
    u, sun = forecast(t + 16 * H, mean=1.0)
    p = gains(net, sun)
    sp = np.where(t < 8 * H, 6.0, 9.0)
    for q_max, vent in ((9000.0, 20.0), (np.inf, None)):
        tr = solver.thermostat(net, t, u, [14.0, 11.0], sp, q_max, vent, p)
        dt = np.diff(t)[:, None]
        stored = (tr.temps_c[0, -1] - tr.temps_c[0, 0]) @ net.capacitance_j_per_k
        iu = 0.5 * dt * (u[:-1] + u[1:])
        hb = net.boundary_w_per_k
        loss = np.einsum("ib,kib->", hb, tr.temp_integral_c_s[0][:, :, None] - iu[:, None, :])
        gain = np.sum(0.5 * dt * (p[:-1] + p[1:]))
        resid = tr.heat_j[0] + gain - tr.vent_j[0] - stored - loss
        # round-off: ~1e-15 of the ~1e9 J flows, times the number of terms summed
        assert abs(resid) <= 1e-9 * (tr.heat_j[0] + gain + abs(loss))
        assert tr.heat_j[0] == pytest.approx(tr.step_heat_j[0].sum(), rel=1e-14)


def test_crossing_on_a_saturated_thermostat_run_matches_a_refined_grid():
    # analyse() works on the pieces between switches too
    net = two_node()
    t = np.arange(0.0, 14 * H + 1, 1800.0)
    u, _ = forecast(t + 16 * H, mean=-6.0)
    tf, uf = refine(t, u, 30)
    a = solver.analyse(solver.thermostat(net, t, u, [9.0, 9.0], 5.0, 12000.0), 2.0)
    b = solver.thermostat(net, tf, uf, [9.0, 9.0], 5.0, 12000.0)
    assert a.crossed[0]
    assert a.min_c[0] <= b.air_c[0].min() + 1e-9
    # both exact: the same minimum, crossing and time below, to round-off of the roots
    exact_b = solver.analyse(b, 2.0)
    assert a.min_c[0] == pytest.approx(exact_b.min_c[0], abs=1e-9)
    assert a.time_s[0] == pytest.approx(exact_b.time_s[0], abs=1e-6)
    assert a.hours_below[0] == pytest.approx(exact_b.hours_below[0], abs=1e-9)


# -- ensembles ---------------------------------------------------------------------------------


def test_ensemble_equals_member_by_member():
    net = two_node()
    t = np.arange(0.0, 20 * H + 1, 600.0)
    rng = np.random.default_rng(7)
    base, sun = forecast(t)
    mm = 6
    u = base[None] + np.stack([rng.normal(0, 2.5) + np.zeros_like(base) for _ in range(mm)]) * [
        1,
        0,
    ]
    p = np.broadcast_to(gains(net, sun), (mm, t.size, 2))
    x0 = rng.uniform(6, 12, (mm, 2))
    qmax = rng.uniform(3000, 20000, mm)
    ens = solver.thermostat(net, t, u, x0, 8.0, qmax, 22.0, p)
    ff = solver.free_float(net, t, u, x0, p)
    cr = solver.analyse(ff, 1.0)
    for i in range(mm):
        one = solver.thermostat(net, t, u[i], x0[i], 8.0, qmax[i], 22.0, p[i])
        assert np.allclose(ens.temps_c[i], one.temps_c[0], atol=1e-10)
        assert ens.heat_j[i] == pytest.approx(one.heat_j[0], rel=1e-12)
        f1 = solver.free_float(net, t, u[i], x0[i], p[i])
        assert np.allclose(ff.temps_c[i], f1.temps_c[0], atol=1e-12)
        c1 = solver.analyse(f1, 1.0)
        assert np.array_equal(np.isnan(cr.time_s[i]), np.isnan(c1.time_s[0]))
        assert cr.min_c[i] == pytest.approx(c1.min_c[0], abs=1e-12)


def _three_members():
    """Three days at 10 min of a two-node house with sun, for three members that differ in
    setpoint (day/night) and venting (none at night: +inf)."""
    net = two_node()
    t = np.arange(0.0, 72 * H + 1, 600.0)
    u, sun = forecast(t, mean=6.0, swing=9.0, sun_w=60000.0)
    p = gains(net, sun)
    day = (t % 86400 >= 6 * H) & (t % 86400 < 18 * H)
    sp = np.stack([np.where(day, 12.0, 7.0), np.where(day, 11.0, 8.0), np.full(t.size, 9.0)])
    vent = np.stack([np.where(day, 24.0, np.inf), np.full(t.size, 22.0), np.full(t.size, 26.0)])
    return net, t, u, p, sp, vent


def test_an_ensemble_run_is_each_member_run_alone():
    # Members that differ in setpoint, heater and venting (none at night: +inf) switch
    # at different instants; run together they must give what each gives alone.
    net, t, u, p, sp, vent = _three_members()
    qmax = np.array([14000.0, 9000.0, np.inf])
    x0 = np.array([[10.0, 10.0], [6.0, 9.0], [13.0, 11.0]])
    tr = solver.thermostat(net, t, np.stack([u] * 3), x0, sp, qmax, vent, p)
    assert tr.switches.time_s.size > 30 and set(np.unique(tr.mode)) == {FLOAT, FULL, HOLD, VENT}
    for i in range(3):
        one = solver.thermostat(net, t, u, x0[i], sp[i], qmax[i], vent[i], p)
        assert np.array_equal(tr.temps_c[i], one.temps_c[0])
        assert np.array_equal(tr.heat_w[i], one.heat_w[0])
        assert tr.heat_j[i] == one.heat_j[0] and tr.vent_j[i] == one.vent_j[0]
        assert np.array_equal(tr.mode[i], one.mode[0])
        mine = tr.switches.member == i
        assert np.array_equal(tr.switches.time_s[mine], one.switches.time_s)


def test_two_node_split_steps_are_the_general_ones_to_the_bit(monkeypatch):
    # `_segment_two` writes out the general split step's sums for two nodes, in the same
    # order: the whole run, with every mode, jumps and a heater without limit, must not
    # move by a bit when the general one does the splitting instead
    net, t, u, p, sp, vent = _three_members()
    args = (net, t, np.stack([u] * 3), [[10.0, 10.0], [6.0, 9.0], [30.0, 11.0]], sp)
    rest = (np.array([14000.0, 9000.0, np.inf]), vent, p)
    fast = solver.thermostat(*args, *rest)
    monkeypatch.setattr(scalar.ScalarStep, "_segment_two", scalar.ScalarStep._segment)
    general = solver.thermostat(*args, *rest)
    assert set(np.unique(fast.mode)) == {FLOAT, FULL, HOLD, VENT}
    assert fast.switches.time_s.size > 30
    for name in ("temps_c", "heat_w", "vent_w", "step_heat_j", "step_vent_j", "mode"):
        assert np.array_equal(getattr(fast, name), getattr(general, name)), name
    assert np.array_equal(fast.temp_integral_c_s, general.temp_integral_c_s)
    assert np.array_equal(fast.switches.time_s, general.switches.time_s)
    assert np.array_equal(fast.switches.state_c, general.switches.state_c)


# -- physical properties -----------------------------------------------------------------------

_forecasts = st.lists(st.floats(-15, 15), min_size=13, max_size=13)


@settings(max_examples=30, deadline=None)
@given(_forecasts, st.lists(st.floats(0, 6), min_size=13, max_size=13), st.floats(2000, 30000))
def test_colder_forecast_never_warmer(out, colder_by, qmax):
    net = two_node()
    t = np.linspace(0.0, 12 * H, 13)
    warm = np.stack([np.array(out), np.full(13, 8.0)], 1)
    cold = warm - np.stack([np.array(colder_by), np.zeros(13)], 1)
    for run in (
        lambda u: solver.free_float(net, t, u, [10.0, 10.0]),
        lambda u: solver.thermostat(net, t, u, [10.0, 10.0], 8.0, qmax, 18.0),
    ):
        # exact solutions of a monotone system; 1e-8 K covers switching round-off
        assert np.all(run(cold).temps_c <= run(warm).temps_c + 1e-8)


@settings(max_examples=30, deadline=None)
@given(_forecasts, st.floats(0, 20000), st.floats(0, 20000))
def test_larger_heater_never_colder(out, q1, extra):
    net = two_node()
    t = np.linspace(0.0, 12 * H, 13)
    u = np.stack([np.array(out), np.full(13, 8.0)], 1)
    small = solver.thermostat(net, t, u, [9.0, 9.0], 10.0, q1, 20.0)
    big = solver.thermostat(net, t, u, [9.0, 9.0], 10.0, q1 + extra, 20.0)
    assert np.all(big.temps_c >= small.temps_c - 1e-8)


@settings(max_examples=60, deadline=None)
@given(st.floats(-20.0, -1e-7), st.floats(1.0, 3600.0))
def test_chord_gap_is_the_exponentials_largest_gap_from_its_chord(lam_h, h):
    # analytic: e^(lam t) is convex, its chord lies above it; the largest gap, on a dense
    # grid, is what the window may take off (never less), and at most the general
    # curvature bound (lam h)^2/8 (interpolation error of a linear chord)
    from grower.solver.serial import _GAP_SERIES, _chord_gap

    lam = lam_h / h
    t = np.linspace(0.0, h, 20001)
    chord = 1.0 + (math.exp(lam * h) - 1.0) * t / h
    grid = float((chord - np.exp(lam * t)).max())
    gap = float(_chord_gap(np.array([lam]), h)[0]) * lam * lam
    assert grid <= gap * (1 + 1e-9) + 1e-15
    assert gap <= (lam * h) ** 2 / 8 * (1 + 1e-12)
    if -lam_h >= _GAP_SERIES:  # the closed form: close, nothing left on the table
        assert gap <= grid + 1e-6 * (lam * h) ** 2 + 1e-12
    else:  # slow modes keep the general bound
        assert gap == pytest.approx((lam * h) ** 2 / 8, rel=1e-12)
