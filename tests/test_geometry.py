"""Envelope geometry against closed forms, numerical integration and invariants."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from grower import geometry


def test_semicircular_hoop_closed_forms():
    # Closed forms for a semicircle of radius r: arc length π·r, half-disc area π·r²/2
    # (CRC Standard Mathematical Tables, circle formulas). Exact up to round-off.
    r, length = 4.572, 29.26
    env = geometry.envelope("arch", 2 * r, length, 0.0, r)
    assert env.roof_m2 == pytest.approx(math.pi * r * length, rel=1e-12)
    assert env.end_walls_m2 == pytest.approx(2 * math.pi * r**2 / 2, rel=1e-12)
    assert env.side_walls_m2 == 0.0
    assert env.volume_m3 == pytest.approx(math.pi * r**2 / 2 * length, rel=1e-12)


def test_gable_roof_from_slope_length():
    # Each slope is the hypotenuse √((W/2)² + R²) (Pythagoras); the gable a triangle.
    w, length, eave, ridge = 9.0, 30.0, 1.8, 4.2
    env = geometry.envelope("gable", w, length, eave, ridge)
    slope = math.sqrt((w / 2) ** 2 + (ridge - eave) ** 2)
    assert env.roof_m2 == pytest.approx(2 * slope * length, rel=1e-12)
    assert env.side_walls_m2 == pytest.approx(2 * length * eave, rel=1e-12)
    assert env.end_walls_m2 == pytest.approx(2 * (w * eave + w * (ridge - eave) / 2), rel=1e-12)
    assert env.floor_m2 == pytest.approx(w * length)
    assert env.perimeter_m == pytest.approx(2 * (w + length))


def _arch_height(w: float, rise: float):
    r, _ = geometry.arch_circle(w, rise)
    yc = rise - r  # centre relative to the springing line

    def y(x: float) -> float:
        return yc + math.sqrt(r**2 - (x - w / 2) ** 2)

    def dy(x: float) -> float:
        return -(x - w / 2) / math.sqrt(r**2 - (x - w / 2) ** 2)

    return y, dy


def _gothic_height(w: float, rise: float):
    a = (0.75 * w**2 - rise**2) / (2 * rise)
    r = math.hypot(w, a)

    def y(x: float) -> float:  # left half, centre at (w, -a)
        x = min(x, w - x)
        return -a + math.sqrt(r**2 - (x - w) ** 2)

    def dy(x: float) -> float:
        x = min(x, w - x)
        return -(x - w) / math.sqrt(r**2 - (x - w) ** 2)

    return y, dy


@pytest.mark.parametrize("shape,heights", [("arch", _arch_height), ("gothic", _gothic_height)])
@pytest.mark.parametrize("w,rise", [(9.0, 1.2), (9.0, 3.0), (6.0, 2.9), (10.0, 4.9)])
def test_curved_roofs_against_numerical_integration(shape, heights, w, rise):
    # Independent check: integrate the roof curve y(x) with scipy's adaptive quadrature
    # for the area under it and ∫√(1 + y'²) dx for its length (tolerance: quad's 1e-9).
    if shape == "arch" and rise > w / 2:
        pytest.skip("not a circular arch")
    y, dy = heights(w, rise)
    pts = [w / 2]
    area = quad(y, 0, w, points=pts, epsabs=1e-12)[0]
    arc = quad(lambda x: math.sqrt(1 + dy(x) ** 2), 0, w, points=pts, epsabs=1e-12, limit=200)[0]
    prof = geometry.profile(shape, w, 0.0, rise)
    assert prof.gable_area_m2 == pytest.approx(area, rel=1e-8)
    assert prof.roof_length_m == pytest.approx(arc, rel=1e-7)
    assert y(w / 2) == pytest.approx(rise, abs=1e-9)
    assert y(0.0) == pytest.approx(0.0, abs=1e-9)


def test_equilateral_gothic_arch():
    # An equilateral pointed arch of span s: both arcs of radius s with centres on the
    # springing line, each spanning 60°: length 2·(π/3)·s, rise (√3/2)·s (geometry).
    s = 8.0
    prof = geometry.profile("gothic", s, 0.0, math.sqrt(3) / 2 * s)
    assert prof.roof_length_m == pytest.approx(2 * math.pi / 3 * s, rel=1e-12)


lengths = st.floats(min_value=1.0, max_value=50.0)


@settings(max_examples=60, deadline=None)
@given(
    shape=st.sampled_from(geometry.SHAPES),
    w=lengths,
    length=lengths,
    eave=st.floats(min_value=0.0, max_value=4.0),
    rise_frac=st.floats(min_value=0.05, max_value=0.5),
    s=st.floats(min_value=0.1, max_value=10.0),
)
def test_scaling_lengths_scales_areas_and_volume(shape, w, length, eave, rise_frac, s):
    # Similarity: scaling every length by s scales areas by s² and volume by s³.
    rise = rise_frac * w
    a = geometry.envelope(shape, w, length, eave, eave + rise)
    b = geometry.envelope(shape, s * w, s * length, s * eave, s * (eave + rise))
    for field in ("roof_m2", "side_walls_m2", "end_walls_m2", "floor_m2"):
        assert getattr(b, field) == pytest.approx(s**2 * getattr(a, field), rel=1e-9, abs=1e-9)
    assert b.volume_m3 == pytest.approx(s**3 * a.volume_m3, rel=1e-9)
    assert b.perimeter_m == pytest.approx(s * a.perimeter_m, rel=1e-9)


@settings(max_examples=40, deadline=None)
@given(
    shape=st.sampled_from(["gable", "arch", "gothic"]),
    n=st.integers(min_value=1, max_value=12),
    w=lengths,
    eave=st.floats(min_value=0.5, max_value=4.0),
)
def test_bays_share_inner_walls(shape, n, w, eave):
    # n gutter-connected bays: n roofs, n pieces of each end, but only the 2 outer side
    # walls — the n − 1 inner walls are shared and not exposed.
    one = geometry.envelope(shape, w, 30.0, eave, eave + 0.3 * w, 1)
    many = geometry.envelope(shape, w, 30.0, eave, eave + 0.3 * w, n)
    assert many.roof_m2 == pytest.approx(n * one.roof_m2)
    assert many.end_walls_m2 == pytest.approx(n * one.end_walls_m2)
    assert many.side_walls_m2 == pytest.approx(one.side_walls_m2)
    separate_walls = n * one.side_walls_m2
    assert separate_walls - many.side_walls_m2 == pytest.approx((n - 1) * 2 * 30.0 * eave)
    assert many.volume_m3 == pytest.approx(n * one.volume_m3)


@settings(max_examples=30, deadline=None)
@given(w=lengths, length=lengths, eave=st.floats(min_value=0.5, max_value=4.0))
def test_lean_to_loses_one_wall(w, length, eave):
    lean = geometry.envelope("lean-to", w, length, eave, eave + 1.0)
    assert lean.side_walls_m2 == pytest.approx(length * eave)
    assert lean.perimeter_m == pytest.approx(length + 2 * w)
    assert lean.volume_m3 == pytest.approx(w * length * (eave + 0.5))


def test_area_increases_with_rise():
    rises = np.linspace(0.1, 4.5, 20)
    roofs = [geometry.profile("arch", 9.0, 1.0, 1.0 + r).roof_length_m for r in rises]
    assert np.all(np.diff(roofs) > 0)
