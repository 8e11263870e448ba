"""The free float of many members stepped over whole runs of collinear input
(`grower.solver.segments`), against scipy's solve_ivp and dense sampling.

Independent references used here:
- ``scipy.integrate.solve_ivp`` (DOP853 at rtol 1e-10), restarted at every hourly sample
  (the input is linear in between, so its right-hand side is smooth), with its own event
  location for the crossings (the helper of test_solver.py);
- dense sampling of the same run on a grid 20 times finer, for minima and hours below.

The networks and forecasts are invented test cases (not data).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import solver
from grower.solver import segments

from .test_solver import H, ivp_free, three_node, two_node

MINUTE = 60.0


def ensemble(members: int, hours: int = 16, seed: int = 7):
    """Hourly outside temperatures per member (a random walk under a falling night),
    interpolated to one-minute steps: linear between the hours, bending at each."""
    rng = np.random.default_rng(seed)
    th = np.arange(hours + 1) * H
    base = 4.0 - 7.0 * np.sin(np.pi * np.clip(np.arange(hours + 1) / 14.0, 0, 1))
    hourly = (
        base
        + rng.normal(0, 1.5, (members, 1))
        + np.cumsum(rng.normal(0, 0.6, (members, hours + 1)), 1)
    )
    t = np.arange(0.0, hours * H + 1, MINUTE)
    out = np.array([np.interp(t, th, row) for row in hourly])
    u = np.stack([out, np.full(out.shape, 8.0)], axis=2)
    x0 = np.stack([rng.uniform(6, 10, members), rng.uniform(9, 12, members)], 1)
    return th, hourly, t, u, x0


def test_knots_are_where_the_input_bends():
    th, hourly, t, u, _ = ensemble(40)
    h = np.diff(t)
    # every hour bends for some member (random walks): knots at every hourly index
    np.testing.assert_array_equal(segments.knots(h, u), np.arange(0, t.size, 60))
    # a straight line (round-off of np.interp aside) has only its ends
    line = np.interp(t, [t[0], t[-1]], [3.0, -5.0])[None, :, None]
    np.testing.assert_array_equal(segments.knots(h, line), [0, t.size - 1])
    # a curve bends everywhere
    wave = np.sin(t / (3 * H))[None, :, None]
    np.testing.assert_array_equal(segments.knots(h, wave), np.arange(t.size))
    # zero at both ends, large between (the sun's gains over a day): the scale is the
    # largest magnitude at the knots, so the round-off of the lines makes no knots
    hs = np.array([0.0, 5.0, 9.0, 16.0]) * H
    sun = np.interp(t, hs, [0.0, 20000.0, 31000.0, 0.0])[None, :, None]
    np.testing.assert_array_equal(segments.knots(h, sun), [0, 300, 540, t.size - 1])
    # a NaN or an infinity anywhere is named
    for bad in (np.nan, np.inf):
        for k in (0, 333, t.size - 1):
            v = u.copy()
            v[7, k, 1] = bad
            with pytest.raises(ValueError, match="boundary_c contains NaN or inf"):
                segments.knots(h, v, names=("boundary_c",))
    # uneven steps: a line is still a line
    tu = np.sort(np.concatenate([t[::7], t[3::60] + 1.5]))
    lu = (2.0 - tu / H)[None, :, None]
    np.testing.assert_array_equal(segments.knots(np.diff(tu), lu), [0, tu.size - 1])


@pytest.mark.parametrize("net", [two_node(), three_node()], ids=["2", "3"])
def test_many_members_against_solve_ivp(net):
    th, hourly, t, u, x0 = ensemble(40)
    n = net.n_nodes
    x0 = np.concatenate([x0, np.full((40, n - 2), 9.0)], 1)
    sun = np.zeros((t.size, n))
    sun[:, 0] = np.interp(t, th, np.clip(20000.0 * np.sin(np.pi * (th / H - 10) / 6), 0, None))
    tr = solver.free_float(net, t, u, x0, sun)
    assert tr.segments is not None  # the many-member path
    ks = np.arange(0, t.size, 60)
    for m in (0, 17, 39):
        u_h = np.stack([hourly[m], np.full(th.size, 8.0)], 1)
        ref, _ = ivp_free(net, th, u_h, sun[ks], x0[m])
        # DOP853 at rtol 1e-10: ~1e-10 K on ~10 K; 1e-8 K leaves a margin
        assert np.abs(tr.temps_c[m, ks] - ref).max() < 1e-8
    # inside the hours: the same exact solution as the step-by-step recurrence of a
    # single member (round-off only)
    one = solver.free_float(net, t, u[5], x0[5], sun)
    assert one.segments is None
    assert np.abs(tr.temps_c[5] - one.temps_c[0]).max() < 1e-11
    np.testing.assert_allclose(tr.temp_integral_c_s[5], one.temp_integral_c_s[0], atol=1e-8)


def test_crossing_minimum_and_hours_below_against_solve_ivp_and_dense_sampling():
    net = two_node()
    th, hourly, t, u, x0 = ensemble(48, seed=3)
    # a plant margin that changes at half hours (knots of its own, between the input's)
    half = np.arange(0.0, t[-1] + 1, 1800.0)
    off = np.interp(t, half, 0.8 + 0.5 * np.cos(half / (2 * H)))
    thr = 0.0
    tr = solver.free_float(net, t, u, x0)
    cr = solver.analyse(tr, thr, off)
    assert tr.segments is not None and 5 < cr.crossed.sum() < 43  # some cross, some not
    dense_t = np.arange(0.0, t[-1] + 1, 3.0)
    for m in range(48):
        if m % 6 == 0:  # solve_ivp's own event location on a few members

            def event(tt, y, k, m=m):
                return y[0] - np.interp(tt, t, off) - thr

            u_h = np.stack([hourly[m], np.full(th.size, 8.0)], 1)
            grid = np.union1d(th, half)
            u_g = np.stack([np.interp(grid, th, u_h[:, 0]), np.full(grid.size, 8.0)], 1)
            _, hits = ivp_free(net, grid, u_g, np.zeros((grid.size, 2)), x0[m], event)
            if hits.size:
                # solve_ivp locates the event on its dense output (~1e-6 s); 1 ms
                assert abs(cr.time_s[m] - hits[0]) < 1e-3
            else:
                assert np.isnan(cr.time_s[m])
        # the minimum and hours below against the same solution sampled every 3 s
        ud = np.stack([np.interp(dense_t, t, u[m, :, 0]), np.full(dense_t.size, 8.0)], 1)
        dense = solver.free_float(net, dense_t, ud, x0[m])
        plant = dense.air_c[0] - np.interp(dense_t, t, off)
        assert cr.min_c[m] <= plant.min() + 1e-12
        # 3 s sampling misses up to (1.5 s)^2 |T''| / 2, |T''| ~ 2e-6 K/s^2 after a bend
        assert cr.min_c[m] > plant.min() - 1e-5
        assert cr.hours_below[m] == pytest.approx(
            np.sum(plant[:-1] < thr) * 3.0 / H, abs=2 * 3.0 / H
        )
    # the same answers as the analysis of one member at a time (the step-by-step path)
    for m in range(0, 48, 3):
        c1 = solver.analyse(solver.free_float(net, t, u[m], x0[m]), thr, off)
        assert c1.min_c[0] == pytest.approx(cr.min_c[m], abs=1e-12)
        assert c1.hours_below[0] == pytest.approx(cr.hours_below[m], abs=1e-9)
        if c1.crossed[0]:
            assert c1.time_s[0] == pytest.approx(cr.time_s[m], abs=1e-6)


def test_inputs_changed_after_the_run_change_nothing():
    # the many-member path does not copy its inputs: nothing it keeps may depend on them
    net = two_node()
    _, _, t, u, x0 = ensemble(40)
    kept_u, kept_x0 = u.copy(), x0.copy()
    tr = solver.free_float(net, t, u, x0)
    before = solver.analyse(tr, 0.0, 1.0)
    u += 5.0
    x0 += 5.0
    temps = tr.temps_c  # computed now, from what the run kept
    after = solver.analyse(tr, 0.0, 1.0)
    fresh = solver.free_float(net, t, kept_u, kept_x0)
    np.testing.assert_array_equal(temps, fresh.temps_c)
    np.testing.assert_array_equal(before.min_c, after.min_c)
    np.testing.assert_array_equal(before.hours_below, after.hours_below)


def test_curved_input_takes_the_step_path():
    # input that bends at every grid time gains nothing from runs: the steps are stepped
    net = two_node()
    t = np.arange(0.0, 6 * H + 1, 600.0)
    rng = np.random.default_rng(1)
    u = np.stack([rng.normal(0, 2, (40, t.size)), np.full((40, t.size), 8.0)], 2)
    tr = solver.free_float(net, t, u, np.full((40, 2), 9.0))
    assert tr.segments is None


@pytest.mark.parametrize("bad", [np.nan, np.inf], ids=["nan", "inf"])
def test_a_bad_value_in_a_big_ensemble_names_its_argument(bad):
    # the knot search is the many-member path's check for NaN and inf
    net = two_node()
    _, _, t, u, x0 = ensemble(40)
    u[17, 300, 0] = bad
    with pytest.raises(ValueError, match="boundary_c contains NaN or inf"):
        solver.free_float(net, t, u, x0)
    gains = np.zeros((t.size, 2))
    gains[5, 1] = bad
    with pytest.raises(ValueError, match="gains_w contains NaN or inf"):
        solver.free_float(net, t, u[:3], x0[:3], gains)


@settings(max_examples=12, deadline=None)
@given(
    seed=st.integers(0, 2**31 - 1),
    hours=st.integers(2, 10),
    per_hour=st.sampled_from([4, 6, 12, 60]),
    three=st.booleans(),
    threshold=st.floats(-4.0, 6.0),
)
def test_runs_and_steps_give_one_answer(seed, hours, per_hour, three, threshold):
    # property: on straight-between-samples input the many-member path (one exact step
    # per run) and the one-member step path (one exact step per grid step) are the same
    # exact solution, and their analyses agree; uneven steps at the sample times included
    rng = np.random.default_rng(seed)
    net = three_node() if three else two_node()
    n = net.n_nodes
    th = np.cumsum(np.concatenate([[0.0], rng.uniform(0.5, 1.5, hours) * H]))
    t = np.unique(np.concatenate([np.linspace(0, th[-1], hours * per_hour + 1), th]))
    members = 32
    hourly = rng.normal(2.0, 4.0, (members, th.size))
    u = np.stack(
        [np.array([np.interp(t, th, r) for r in hourly]), np.full((members, t.size), 8.0)], 2
    )
    x0 = rng.uniform(2.0, 12.0, (members, n))
    off = np.interp(t, th, rng.uniform(0.0, 2.0, th.size))
    tr = solver.free_float(net, t, u, x0)
    cr = solver.analyse(tr, threshold, off)
    assert tr.segments is not None  # four or more grid steps a sample: the runs path
    for m in range(0, members, 7):
        one = solver.free_float(net, t, u[m], x0[m])
        c1 = solver.analyse(one, threshold, off)
        assert np.abs(tr.temps_c[m] - one.temps_c[0]).max() < 1e-10
        assert cr.min_c[m] == pytest.approx(c1.min_c[0], abs=1e-10)
        assert cr.hours_below[m] == pytest.approx(c1.hours_below[0], abs=1e-7)
        assert np.isnan(cr.time_s[m]) == np.isnan(c1.time_s[0])
        if c1.crossed[0]:
            assert cr.time_s[m] == pytest.approx(c1.time_s[0], abs=1e-5)
