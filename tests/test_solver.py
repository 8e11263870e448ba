"""The exact solver against closed forms, scipy's solve_ivp and physical properties: the
network, free float, crossings and extremes (the thermostat: test_solver_thermostat.py;
the pieces inside a step: test_solver_intrastep.py). The networks, forecasts and the
solve_ivp reference here are shared with those files.

Independent references used here:
- the closed form of the one-node model, ``T = T_inf + (T0 - T_inf) exp(-t/tau)``, and
  its crossing time ``tau ln((T0 - T_inf)/(T_th - T_inf))`` (DESIGN, "The thermal model";
  elementary calculus);
- ``scipy.linalg.expm`` of the augmented block matrix of C. F. Van Loan (1978),
  "Computing integrals involving the matrix exponential", IEEE Trans. Automatic Control
  AC-23(3):395-404, for the per-step matrices;
- ``scipy.integrate.solve_ivp`` (DOP853 at rtol 1e-10) as an independent integrator,
  restarted at every forecast sample so that its right-hand side is smooth, with its own
  event location for crossings.

The networks below are invented test cases (not data); only the references are checked.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp
from scipy.linalg import expm

from grower import solver
from grower.solver import Network, lumped, stepping

H = 3600.0


def two_node(c_air=4e5, c_mass=2.5e7, k=1500.0, g=1350.0, k_ground=300.0) -> Network:
    return Network(
        np.array([c_air, c_mass]),
        np.array([[0.0, g], [g, 0.0]]),
        np.array([[k, 0.0], [0.0, k_ground]]),
        ("air", "mass"),
        ("effective_outside", "deep_ground"),
    )


def three_node() -> Network:
    # air, benches/plants, soil: a chain with all three tied to boundaries
    return Network(
        np.array([3e5, 2e6, 2e7]),
        np.array([[0.0, 800.0, 1200.0], [800.0, 0.0, 150.0], [1200.0, 150.0, 0.0]]),
        np.array([[1400.0, 0.0], [60.0, 0.0], [0.0, 250.0]]),
        ("air", "bench", "soil"),
        ("effective_outside", "deep_ground"),
    )


def forecast(t: np.ndarray, mean=2.0, swing=7.0, ground=8.0, sun_w=25000.0):
    """Outside temperature (a daily wave), deep ground, and sun on the air node."""
    day = t / 86400.0
    u = np.stack([mean + swing * np.sin(2 * np.pi * (day - 0.375)), np.full(t.size, ground)], 1)
    sun = np.clip(sun_w * np.sin(2 * np.pi * (day - 0.25)), 0.0, None)
    return u, sun


def refine(t: np.ndarray, series: np.ndarray, factor: int) -> tuple[np.ndarray, np.ndarray]:
    """A grid `factor` times denser and the series on it: the inputs are linear between
    samples, so the exact solution on the dense grid is the same function of time."""
    tf = (
        np.linspace(t[0], t[-1], factor * (t.size - 1) + 1)
        if np.allclose(np.diff(t), t[1] - t[0])
        else None
    )
    if tf is None:
        frac = np.arange(factor) / factor
        tf = np.concatenate([(t[:-1, None] + np.diff(t)[:, None] * frac).ravel(), t[-1:]])
    return tf, np.stack([np.interp(tf, t, col) for col in np.atleast_2d(series.T)], 1)


def gains(net: Network, sun: np.ndarray) -> np.ndarray:
    p = np.zeros((sun.size, net.n_nodes))
    p[:, 0] = sun
    return p


# -- independent integration ---------------------------------------------------------------

RTOL, ATOL = 1e-10, 1e-12


def ivp_free(net, t, u_b, p, x0, event=None):
    """solve_ivp over each sample interval; returns grid states and event times."""
    a, b = net.state_matrix, net.input_matrix
    u = np.concatenate([u_b, p], 1)
    xs, hits = [np.array(x0, float)], []
    for k in range(t.size - 1):
        u0, du = u[k], (u[k + 1] - u[k]) / (t[k + 1] - t[k])
        t0 = t[k]

        def rhs(tt, y, u0=u0, du=du, t0=t0):
            return a @ y + b @ (u0 + du * (tt - t0))

        evs = None
        if event is not None:

            def ev(tt, y, k=k):
                return event(tt, y, k)

            ev.direction = -1
            evs = [ev]
        sol = solve_ivp(
            rhs, (t[k], t[k + 1]), xs[-1], method="DOP853", rtol=RTOL, atol=ATOL, events=evs
        )
        if evs is not None:
            hits.extend(sol.t_events[0])
        xs.append(sol.y[:, -1])
    return np.array(xs), np.array(hits)


# -- closed forms ------------------------------------------------------------------------


def test_lumped_closed_form_constant_outside():
    # T(t) = T_inf + (T0 - T_inf) exp(-t/tau), tau = C/K (DESIGN, "The thermal model").
    c, k, t_eff, t0, th = 3.2e6, 1800.0, -6.0, 9.0, 0.5
    tau = c / k
    net = lumped(c, k)
    rng = np.random.default_rng(3)
    # an irregular grid: steps of 1 to 20 minutes
    t = np.concatenate([[0.0], np.cumsum(rng.uniform(60, 1200, 80))])
    tr = solver.free_float(net, t, np.full(t.size, t_eff), [t0])
    exact = t_eff + (t0 - t_eff) * np.exp(-t / tau)
    # exact stepping: only round-off (~1e-15 K) separates the two; 1e-9 K is the brief
    assert np.abs(tr.temps_c[0, :, 0] - exact).max() <= 1e-9
    crossing = solver.analyse(tr, th)
    t_star = tau * math.log((t0 - t_eff) / (th - t_eff))
    assert abs(crossing.time_s[0] - t_star) <= 1e-3  # found inside a step, to 1 ms
    assert crossing.hours_below[0] == pytest.approx((t[-1] - t_star) / H, abs=1e-9)
    assert solver.first_crossing(net, t, np.full(t.size, t_eff), [t0], th)[0] == pytest.approx(
        crossing.time_s[0], abs=1e-9
    )
    # steady heat to hold: Q = K (T_hold - T_eff), here lifting the air at once at t0
    res = solver.hold(net, t, np.full(t.size, t_eff), [t_eff], 5.0)
    assert np.allclose(res.power_w, k * (5.0 - t_eff), rtol=1e-12)
    assert res.peak_w[0] == pytest.approx(k * 11.0, rel=1e-12)
    assert res.energy_j[0] == pytest.approx(k * 11.0 * t[-1] + c * 11.0, rel=1e-12)


def test_steady_hold_two_nodes_series_conductance():
    # At steady state the mass node passes (T_hold - T_g) through g in series with the
    # ground conductance: Q = K (T_hold - T_eff) + (g k_g / (g + k_g)) (T_hold - T_g).
    net = two_node()
    t = np.linspace(0.0, 24 * H, 97)
    u = np.tile([-4.0, 8.0], (t.size, 1))
    g, kg = 1350.0, 300.0
    x_ss = (g * 12.0 + kg * 8.0) / (g + kg)
    res = solver.hold(net, t, u, [12.0, x_ss], 12.0)
    q = 1500.0 * 16.0 + g * kg / (g + kg) * 4.0
    assert np.allclose(res.power_w, q, rtol=1e-10)
    assert res.energy_j[0] == pytest.approx(q * t[-1], rel=1e-10)
    assert np.allclose(net.steady_state([-4.0, 8.0], [q, 0.0]), [12.0, x_ss], atol=1e-9)


def test_never_crossed_is_nan_and_starting_below_is_the_first_time():
    net = lumped(2e6, 1500.0)
    t = np.linspace(0.0, 8 * H, 17)
    warm = solver.analyse(solver.free_float(net, t, np.full(t.size, 10.0), [12.0]), 0.0)
    assert np.isnan(warm.time_s[0]) and not warm.crossed[0] and warm.hours_below[0] == 0.0
    cold = solver.analyse(solver.free_float(net, t, np.full(t.size, -5.0), [-1.0]), 0.0)
    assert cold.time_s[0] == t[0] and cold.hours_below[0] == pytest.approx(8.0, abs=1e-12)


def test_step_matches_van_loan_block_exponential():
    # x1 = Phi x0 + Gamma0 u0 + Gamma1 u1 from expm([[A, B, 0], [0, 0, I/h], [0, 0, 0]] h)
    net = three_node()
    a, b = net.state_matrix, net.input_matrix
    n, p = a.shape[0], b.shape[1]
    h = 900.0
    big = np.zeros((n + 2 * p, n + 2 * p))
    big[:n, :n], big[:n, n : n + p], big[n : n + p, n + p :] = a, b, np.eye(p) / h
    e = expm(big * h)
    phi, ga, gb = e[:n, :n], e[:n, n : n + p], e[:n, n + p :]
    rng = np.random.default_rng(0)
    x0, u0, u1 = rng.normal(5, 3, n), rng.normal(0, 4, p), rng.normal(0, 4, p)
    u0[2:] *= 1e3
    u1[2:] *= 1e3  # gains in W
    x1 = phi @ x0 + ga @ u0 + gb @ (u1 - u0)
    tr = solver.free_float(
        net, [0.0, h], np.stack([u0[:2], u1[:2]]), x0, np.stack([u0[2:], u1[2:]])
    )
    # both exact: agreement to round-off of expm's Pade approximation (~1e-13 relative)
    assert np.allclose(tr.temps_c[0, 1], x1, rtol=0, atol=1e-10)


# -- against solve_ivp ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "net", [lumped(2.5e6, 1600.0), two_node(), three_node()], ids=["1", "2", "3"]
)
def test_free_float_and_crossing_against_solve_ivp(net):
    t = np.arange(0.0, 16 * H + 1, 900.0)
    u, sun = forecast(t + 14 * H)
    u = u[:, : net.n_boundaries]
    p = gains(net, sun)
    x0 = np.full(net.n_nodes, 9.0)
    off = 0.8 + 0.6 * np.cos(t / (5 * H))  # plant margin, linear between samples
    th = -0.5

    def plant_event(tt, y, k):
        frac = (tt - t[k]) / (t[k + 1] - t[k])
        return y[0] - (off[k] + frac * (off[k + 1] - off[k])) - th

    ref, hits = ivp_free(net, t, u, p, x0, plant_event)
    tr = solver.free_float(net, t, u, x0, p)
    # DOP853 at rtol 1e-10: ~1e-10 K seen on ~10 K; 1e-8 K leaves a margin
    assert np.abs(tr.temps_c[0] - ref).max() < 1e-8
    cr = solver.analyse(tr, th, off)
    assert hits.size >= 1
    # solve_ivp locates the event on its dense output (error ~1e-6 s here); 1 ms
    assert abs(cr.time_s[0] - hits[0]) < 1e-3
    # the minimum: at least as low as a 20-fold denser sampling of the same exact solution
    tf, uf = refine(t, u, 20)
    dense = solver.free_float(net, tf, uf, x0, refine(t, p, 20)[1])
    td = dense.times_s
    plant_d = dense.air_c[0] - np.interp(td, t, off)
    assert cr.min_c[0] <= plant_d.min() + 1e-12
    assert cr.min_c[0] > plant_d.min() - 1e-4  # 20-fold grid: sampling error ~(h/20)^2 |T''|
    # hours below against the dense grid (Riemann sum, error ~ 2 sub-steps)
    assert cr.hours_below[0] == pytest.approx(
        np.sum(plant_d[:-1] < th) * (td[1] - td[0]) / H, abs=2 * 45 / H
    )


def test_minimum_and_peak_inside_a_coarse_step():
    # With 3-hour steps the extremes fall inside steps; a 60-fold refined grid of the same
    # piecewise-linear forecast samples the same exact solution, so its extremes bound ours.
    net = two_node(c_air=2e6)
    t = np.arange(0.0, 24 * H + 1, 3 * H)
    u, sun = forecast(t, swing=9.0, sun_w=0.0)
    tf, uf = refine(t, u, 60)
    coarse = solver.analyse(solver.free_float(net, t, u, [8.0, 9.0]), -50.0)
    fine = solver.free_float(net, tf, uf, [8.0, 9.0])
    assert coarse.min_c[0] <= fine.air_c[0].min() + 1e-12
    # grid sampling misses at most (h/60)^2/8 |T''| ~ 1e-6 K here
    assert coarse.min_c[0] > fine.air_c[0].min() - 1e-5
    # and the exact minimum of the fine run is the same point of the same function
    exact_fine = solver.analyse(fine, -50.0)
    assert coarse.min_c[0] == pytest.approx(exact_fine.min_c[0], abs=1e-10)
    assert coarse.min_time_s[0] == pytest.approx(exact_fine.min_time_s[0], abs=1e-2)
    assert coarse.min_c[0] < solver.free_float(net, t, u, [8.0, 9.0]).air_c[0].min() - 0.01
    hc = solver.hold(net, t, u, [8.0, 9.0], 10.0)
    hf = solver.hold(net, tf, uf, [8.0, 9.0], 10.0)
    assert hc.peak_w[0] >= hf.power_w[0].max() - 1e-6
    assert hc.peak_w[0] < hf.power_w[0].max() * (1 + 1e-6)
    assert hc.energy_j[0] == pytest.approx(hf.energy_j[0], rel=1e-11)


# -- physical properties -----------------------------------------------------------------------


@settings(max_examples=30, deadline=None)
@given(
    st.floats(5e5, 5e7),
    st.floats(1.0, 4.0),
    st.floats(-10, 5),
    st.lists(st.floats(0, 4), min_size=12, max_size=12),
    st.floats(0.5, 15),
)
def test_more_capacity_never_crosses_earlier(c, factor, u0, drops, above):
    # Lumped, starting at or above a falling forecast: with tau2 > tau1, where T1 = T2 the
    # difference of the slopes is (U - T)(1/tau2 - 1/tau1) >= 0, so T2 >= T1 throughout.
    t = np.linspace(0.0, 12 * H, 13)
    u = u0 - np.concatenate([[0.0], np.cumsum(drops)])
    x0 = u0 + above
    th = u0 + above * 0.3 - 2.0
    t1 = solver.first_crossing(lumped(c, 1500.0), t, u, [x0], th)[0]
    t2 = solver.first_crossing(lumped(c * factor, 1500.0), t, u, [x0], th)[0]
    t1 = np.inf if np.isnan(t1) else t1
    t2 = np.inf if np.isnan(t2) else t2
    assert t2 >= t1 - 1e-6  # crossing times found to ~1e-9 s


# -- misuse ------------------------------------------------------------------------------------


def _good():
    t = np.linspace(0.0, 3 * H, 4)
    return two_node(), t, np.tile([0.0, 8.0], (4, 1)), [5.0, 6.0]


@pytest.mark.parametrize(
    ("call", "name"),
    [
        (lambda n, t, u, x: solver.free_float(n, [0.0, np.nan, 2.0, 3.0], u, x), "times_s"),
        (lambda n, t, u, x: solver.free_float(n, [0.0, 2.0, 2.0, 3.0], u, x), "times_s"),
        (lambda n, t, u, x: solver.free_float(n, t, u[:3], x), "boundary_c"),
        (lambda n, t, u, x: solver.free_float(n, t, u[:, :1], x), "boundary_c"),
        (lambda n, t, u, x: solver.free_float(n, t, u, [5.0]), "initial_c"),
        (lambda n, t, u, x: solver.free_float(n, t, u, x, np.zeros((4, 3))), "gains_w"),
        (lambda n, t, u, x: solver.free_float(n, t, np.stack([u, u]), np.ones((3, 2))), "member"),
        (
            lambda n, t, u, x: solver.analyse(solver.free_float(n, t, u, x), 0.0, -np.ones(4)),
            "offset_k",
        ),
        (lambda n, t, u, x: solver.thermostat(n, t, u, x, 10.0, -1.0), "q_max_w"),
        (lambda n, t, u, x: solver.thermostat(n, t, u, x, 10.0, 1e3, 5.0), "vent_c"),
        (lambda n, t, u, x: solver.thermostat(n, t, u, x, [10.0, 10.0], 1e3), "setpoint_c"),
        (
            lambda n, t, u, x: Network([1e5, -1.0], np.zeros((2, 2)), np.ones((2, 1))),
            "capacitance_j_per_k",
        ),
        (
            lambda n, t, u, x: Network([1e5, 1e5], [[0, -1.0], [-1.0, 0]], np.ones((2, 1))),
            "coupling_w_per_k",
        ),
        (
            lambda n, t, u, x: Network([1e5, 1e5], [[0, 1.0], [2.0, 0]], np.ones((2, 1))),
            "coupling_w_per_k",
        ),
        (
            lambda n, t, u, x: Network([1e5, 1e5], [[1.0, 0], [0, 0]], np.ones((2, 1))),
            "coupling_w_per_k",
        ),
        (
            lambda n, t, u, x: Network([1e5, 1e5], np.zeros((2, 2)), [[1.0], [-1.0]]),
            "boundary_w_per_k",
        ),
        (
            lambda n, t, u, x: Network([1e5, 1e5], np.zeros((2, 2)), [[1.0], [0.0]]),
            "boundary_w_per_k",
        ),
        (
            lambda n, t, u, x: Network(
                [1e5, 1e5, 1e5], [[0, 5.0, 0], [5.0, 0, 0], [0, 0, 0]], [[1.0], [0], [0]]
            ),
            "no path",
        ),
        (lambda n, t, u, x: lumped(1e6, 0.0), "conductance_w_per_k"),
        (lambda n, t, u, x: Network([1e5], [[0.0]], [[1.0]], ("air", "x")), "node_names"),
    ],
)
def test_misuse_raises_value_error_naming_the_argument(call, name):
    with pytest.raises(ValueError, match=name):
        call(*_good())


def test_network_is_frozen_hashable_and_its_arrays_read_only():
    a, b = two_node(), two_node()
    assert a == b and hash(a) == hash(b) and a != two_node(k=1.0)
    with pytest.raises(ValueError):
        a.capacitance_j_per_k[0] = 1.0
    assert a.n_nodes == 2 and a.total_capacitance_j_per_k == pytest.approx(2.54e7)
    assert a.conductance_to_boundaries_w_per_k == pytest.approx(1800.0)
    assert a.input_matrix.shape == (2, 4) and a.state_matrix.shape == (2, 2)


@settings(max_examples=40, deadline=None)
@given(
    st.one_of(st.just(0.0), st.floats(1e-30, 0.999)),
    st.integers(1, 400),
    st.integers(0, 2**32 - 1),
)
def test_whole_step_recurrence_equals_a_step_by_step_loop(e, steps, seed):
    # z[k+1] = e z[k] + f[k] stepped one step at a time in Python floats (elementary):
    # the short convolution (a decay forgetting within 64 steps) and the blocked scan
    # (one step length or several) are the same sum to round-off, a few units in the
    # last place of the largest |z|
    rng = np.random.default_rng(seed)
    f = rng.normal(0.0, 1.0, (2, steps)) * rng.uniform(0.1, 1e3)
    z0 = rng.normal(0.0, 100.0, 2)
    ref = np.empty((2, steps))
    for row in range(2):
        z = float(z0[row])
        for k in range(steps):
            z = e * z + float(f[row, k])
            ref[row, k] = z
    scale = max(np.abs(ref).max(), np.abs(z0).max())
    decays = np.full(steps, e)
    for uniform in (True, False):
        got = stepping._scan(decays, uniform, f, z0)
        assert np.abs(got - ref).max() <= 1e-13 * scale
    # the convolution stops at the first power of e at or below 2^-60 (the logarithms'
    # round-off allowed for: 0.5^60 is 2^-60 exactly)
    m = stepping._memory(e)
    tiny = 2.0**-60
    if e > 0.0 and m <= stepping._SHORT:
        assert e**m <= tiny * (1 + 1e-9) and e ** (m - 1) >= tiny * (1 - 1e-9)
