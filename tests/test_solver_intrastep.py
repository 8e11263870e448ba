"""The solver's pieces inside a step: the phi functions, the safeguarded Newton iterations,
and the first switching root of an exponential-linear function.

Independent references used here:
- the phi functions ``phi1(x) = (e^x - 1)/x``, ``phi2 = (e^x - 1 - x)/x^2``,
  ``phi3 = (e^x - 1 - x - x^2/2)/x^3`` (M. Hochbruck and A. Ostermann (2010), "Exponential
  integrators", Acta Numerica 19:209-286), evaluated in 60-digit decimal arithmetic with
  Python's ``decimal`` module;
- closed-form roots (``50 ln 2``) and a dense scan of the same exact function for the
  first root (elementary analysis).
"""

from __future__ import annotations

import math
from decimal import Decimal, localcontext

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower.solver import explin, scalar
from grower.solver.stepping import phi123, phi123_scalar


def _phi_reference(x: float) -> tuple[float, float, float, float]:
    with localcontext() as ctx:
        ctx.prec = 60
        d = Decimal(x)
        e = d.exp()
        em = e - 1
        return (
            float(e),
            float(em / d),
            float((em - d) / d**2),
            float((em - d - d * d / 2) / d**3),
        )


@pytest.mark.parametrize("x", [-3.0, -0.7, -0.0501, -0.0499, -0.02, -1e-3, -1e-6, 0.01, 0.049])
def test_phi_functions_against_decimal_arithmetic(x):
    got, ref = phi123_scalar(x), _phi_reference(x)
    # e and phi1 to a few ulp; phi2, phi3 outside the series lose ~|x|^-1, |x|^-2 ulp to
    # cancellation near |x| = 0.05 (~2e-15, ~1e-13); the series below keeps a few ulp
    for g, r, tol in zip(got, ref, (4e-16, 4e-16, 4e-15, 2e-13), strict=True):
        assert abs(g - r) <= tol * abs(r)
    many = phi123(np.full(40, x))  # the array formula, for more than 16 values at once
    for g, r in zip(many, got, strict=True):
        assert np.allclose(g, r, rtol=2e-13, atol=0)


def test_newton_converging_from_one_side_stops_at_the_root():
    # Newton steps on this g (an invented two-mode case) approach its root from one side;
    # the last one, below round-off, lands on the end of the bracket. That is convergence,
    # not a reason to bisect the bracket down to the tolerance (33 evaluations instead of 5).
    g0, b1 = 0.4700999908386019, -0.03887465670268638
    a = np.array([0.3723095405982564, -0.6733853060642763])
    lam = np.array([-0.015853958491247776, -0.012142218126622537])
    calls = []

    def fd(s):
        calls.append(s)
        em = np.expm1(np.multiply.outer(s, lam))
        return g0 + b1 * s + (a * em).sum(-1), b1 + (a * lam * (em + 1)).sum(-1)

    assert float(fd(300.0)[0]) < 0  # a root in the bracket [0, 300]
    calls.clear()
    root = scalar._newton(fd, 0.0, 300.0, g0, None)
    assert len(calls) <= 8
    assert abs(float(fd(root)[0])) < 1e-14 and 0 < root < 300
    # bisection on the same bracket, to 1e-13 of it, as the independent answer
    lo, hi = 0.0, 300.0
    while hi - lo > 3e-11:
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if fd(mid)[0] > 0 else (lo, mid)
    assert root == pytest.approx(0.5 * (lo + hi), abs=3e-11)
    calls.clear()
    roots = explin.safe_newton(fd, np.zeros(2), np.full(2, 300.0), np.full(2, g0))
    assert np.allclose(roots, root, rtol=0, atol=3e-11) and len(calls) <= 8


def _g(s, g0, b1, a, lam):
    """g(s) = g0 + b1 s + sum_i a_i expm1(lam_i s), on an array of s."""
    s = np.asarray(s, dtype=float)[:, None]
    return g0 + b1 * s[:, 0] + (np.asarray(a) * np.expm1(s * np.asarray(lam))).sum(axis=1)


_rates = st.lists(st.floats(1e-5, 3e-2), min_size=1, max_size=3, unique=True)


@settings(max_examples=150, deadline=None)
@given(
    st.one_of(st.just(0.0), st.floats(0.0, 2.0)),
    st.floats(-0.05, 0.05),
    st.lists(st.floats(-3.0, 3.0), min_size=3, max_size=3),
    _rates,
)
def test_first_root_in_python_floats_matches_a_dense_scan(g0, b1, coef, rates):
    # The first s in [0, w] where a mode just entered (g0 >= 0) reaches its limit (g <= 0),
    # against the first point of a 0.05 s grid where the same exact function is below -1e-9.
    lam = [-r for r in rates]
    a = coef[: len(lam)]
    w = 300.0
    grid = np.linspace(0.0, w, 6001)
    gv = _g(grid, g0, b1, a, lam)
    scale = abs(b1) + sum(abs(x * y) for x, y in zip(a, lam, strict=True)) + 1e-300
    noise = 1e-13 * (sum(map(abs, a)) + abs(g0))
    gw = float(_g([w], g0, b1, a, lam)[0])
    if g0 > 0 and gw > 0:
        k2 = sum(abs(x) * y * y for x, y in zip(a, lam, strict=True))
        if min(g0, gw) - w * w / 8 * k2 > 0:  # the callers' bound: no root possible
            assert not (gv < -1e-9).any()
            return
    rt = scalar._first_root(g0, b1, a, lam, w, gw, scale, noise)
    below = np.flatnonzero(gv < -1e-9)
    if below.size == 0:  # no root, or one that only touches 0 within the scan's tolerance
        assert rt == math.inf or abs(_g([rt], g0, b1, a, lam)[0]) <= 1e-8
        return
    first = grid[below[0]]
    assert rt <= first + 1e-9
    assert rt == 0.0 or abs(_g([rt], g0, b1, a, lam)[0]) <= 1e-8
    assert not (gv[grid < rt - 0.05] < -1e-9).any()  # nothing earlier was missed


@settings(max_examples=60, deadline=None)
@given(
    st.floats(0.0, 2.0),
    st.lists(st.floats(-3.0, 3.0), min_size=3, max_size=3),
    st.lists(st.floats(-0.01, 0.01), min_size=3, max_size=3),
    st.lists(st.floats(-1e-4, 1e-4), min_size=3, max_size=3),
    _rates,
)
def test_first_root_against_a_fine_grid_and_brentq(g0, z, b, c, rates):
    # The switching root of the mode machine against an independent search: the first
    # sign change of the same g on a grid of 20,000 steps, refined by scipy's brentq, on
    # g = g0 + sum_i [em z_i + em/lam b_i + (em - lam s)/lam^2 c_i], em = expm1(lam_i s).
    from scipy.optimize import brentq

    lam = np.array([-r for r in rates])
    r = lam.size
    z, b, c = np.array(z[:r]), np.array(b[:r]), np.array(c[:r])
    w = 300.0
    el = explin.ExpLin(lam, z[None], b[None], c[None], np.array([g0]), np.zeros(1), np.full(1, w))

    def g(s: float) -> float:
        return float(el.val(np.array([s]))[0])

    grid = np.linspace(0.0, w, 20001)
    gv = el.val(grid)
    gv[0] = g0
    below = np.flatnonzero(gv[1:] <= 0)
    ref = math.inf
    if below.size:
        j = below[0] + 1
        ref = grid[j] if gv[j] == 0 else brentq(g, grid[j - 1], grid[j], xtol=1e-12)
    a = (z + b / lam + c / lam**2).tolist()
    b1 = float(-(c / lam).sum())
    scale = float(np.abs(lam * z).sum() + np.abs(b).sum()) + 1e-300
    noise = 1e-13 * float(np.abs(z).sum() + np.abs(b / lam).sum() + g0)
    got = scalar._first_root(g0, b1, a, lam.tolist(), w, g(w), scale, noise)
    if math.isinf(got) != math.isinf(ref) or (g0 == 0 and ref == 0):
        # a root that only grazes 0 (|g| at round-off there, between grid points or at a
        # state just entered, which counts only when g heads down)
        other = ref if math.isinf(got) else got
        assert abs(g(other)) < 1e-9
    elif not math.isinf(got) and abs(got - ref) > 1e-7:
        # two different roots only where g stays at 0 between them (g flat at zero)
        lo, hi = sorted((got, ref))
        assert np.abs(gv[(grid >= lo) & (grid <= hi)]).max(initial=0.0) < 1e-9


@pytest.mark.parametrize("rate", [1e-4, 1e-2])  # a slow (lam w = -0.03) and a fast mode (-3)
@pytest.mark.parametrize("depth", [-1e-7, 1e-7])
def test_a_shallow_dip_is_a_switch_and_a_near_miss_is_not(rate, depth):
    # g = g0 + b1 s + a expm1(-rate s), a > 0: convex, heading down at 0, its minimum at s*
    # with e^(-rate s*) = b1 / (a rate). g0 puts that minimum `depth` above 0.
    w, lam = 300.0, -rate
    s_star = 100.0
    a = 1.0 / rate
    b1 = a * rate * math.exp(lam * s_star)
    g_min_less_g0 = b1 * s_star + a * math.expm1(lam * s_star)
    g0 = depth - g_min_less_g0
    gw = g0 + b1 * w + a * math.expm1(lam * w)
    scale, noise = abs(b1) + abs(a * lam), 1e-13 * (abs(a) + abs(g0))
    rt = scalar._first_root(g0, b1, [a], [lam], w, gw, scale, noise)
    if depth > 0:
        assert rt == math.inf
    else:  # the first zero, before the minimum
        assert 0 < rt < s_star
        assert abs(g0 + b1 * rt + a * math.expm1(lam * rt)) < 1e-12


@pytest.mark.parametrize(("a", "expected"), [(2.0, math.inf), (-2.0, 0.0)])
def test_a_mode_entered_tangentially_switches_only_if_it_curves_back(a, expected):
    # g0 = 0 and g'(0) = 0: convex (a > 0) it rises, no switch; concave it falls at once
    lam = -0.01
    b1 = -a * lam
    w = 300.0
    gw = b1 * w + a * math.expm1(lam * w)
    rt = scalar._first_root(0.0, b1, [a], [lam], w, gw, abs(b1) + abs(a * lam), 1e-13 * abs(a))
    assert rt == expected


@settings(max_examples=60, deadline=None)
@given(
    # no piece starting on the threshold: there a dip at round-off depth (1e-5 s at |g| <
    # 1e-14, hypothesis finds them) is round-off either way, and the bracketed search
    # stops halfway through it
    st.lists(st.one_of(st.floats(-1.0, -0.05), st.floats(0.05, 2.0)), min_size=8, max_size=8),
    st.lists(st.floats(-3.0, 3.0), min_size=24, max_size=24),
    st.lists(st.floats(-0.01, 0.01), min_size=24, max_size=24),
    st.lists(st.floats(-1e-4, 1e-4), min_size=24, max_size=24),
    st.lists(st.floats(-1e-3, 1e-3), min_size=8, max_size=8),
    _rates,
)
def test_profile_with_newton_steps_first_agrees_with_the_bracketed_search(g0, z, b, c, e1, rates):
    # The analysis of a free float's runs asks `_profile` for plain Newton steps from the
    # chords' roots before the bracketed search (quicker); the step-by-step analysis does
    # not. On a batch of 8 invented pieces of up to three modes the two give the same first
    # zero, minimum and time below, to round-off, and the minimum is that of a dense grid
    # of the same exact function (elementary analysis: no grid point lies below it).
    lam = np.array([-r for r in rates])
    r = lam.size
    z, b, c = (np.array(v).reshape(8, 3)[:, :r] for v in (z, b, c))
    w = np.full(8, 450.0)
    el = explin.ExpLin(lam, z, b, c, np.array(g0), np.array(e1), w)
    f0, m0, s0, b0 = explin.step_profile(el)
    f1, m1, s1, b1 = explin.step_profile(el, explin.NEWTON_STEPS)
    scale = 1e-12 * (np.abs(z).sum(1) + np.abs(b / lam).sum(1) + np.abs(g0) + 1.0)
    np.testing.assert_allclose(m1, m0, rtol=0, atol=1e-11)
    assert np.all(np.abs(el.val(s1[:, None])[:, 0] - m1) <= 10 * scale)
    assert np.array_equal(np.isnan(f0), np.isnan(f1))
    both = ~np.isnan(f0)
    np.testing.assert_allclose(f1[both], f0[both], rtol=0, atol=1e-7)
    np.testing.assert_allclose(b1, b0, rtol=0, atol=1e-7)
    grid = np.linspace(0.0, 450.0, 20001)
    gv = el.val(np.broadcast_to(grid, (8, grid.size)).copy())
    assert np.all(m1 <= gv.min(axis=1) + 10 * scale)
