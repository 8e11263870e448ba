"""Exact envelope geometry of the house shapes grower knows.

Every function takes lengths in metres and returns areas in m² and volumes in m³. A
*profile* is the cross-section of one span (bay) cut across the ridge; the house is the
profile extruded along its length.

Shapes
------
gable
    Vertical side walls up to the eave, two straight roof slopes meeting at the ridge.
arch
    Vertical side walls (possibly of zero height: the ground-to-ground hoop) and a
    circular arc springing from the top of both walls. The rise ``R = ridge − eave`` may
    be at most half the span (a semicircle); more is not a circular arch.
gothic
    Two circular arcs meeting at a pointed ridge. Each arc has its centre on the vertical
    line through the *opposite* eave, at the height that puts the arc through its own eave
    and the ridge (for a rise of √3/2 of the span this is the equilateral pointed arch,
    both centres on the springing line).
lean-to
    One long side stands against a heated building wall, which is not exposed to outside;
    the roof slopes down from the top of that wall (the ridge height) to the outer eave.

References
----------
Circular segment: area = r²/2·(φ − sin φ) for a central angle φ; arc length = r·φ —
any geometry handbook, e.g. Zwillinger (ed.), *CRC Standard Mathematical Tables and
Formulae*, 31st ed., 2003, §4.5.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

SHAPES = ("gable", "arch", "gothic", "lean-to")


@dataclass(frozen=True)
class Profile:
    """Cross-section of one span.

    Attributes
    ----------
    roof_length_m : float
        Length of the roof line from eave to eave (or wall top to eave, lean-to) [m].
    area_m2 : float
        Area of the cross-section, floor to roof [m²] (one end wall of one span).
    gable_area_m2 : float
        Part of `area_m2` above the eave line [m²].
    exposed_walls : int
        Vertical side walls exposed to outside in a single span: 2, or 1 for a lean-to.
    """

    roof_length_m: float
    area_m2: float
    gable_area_m2: float
    exposed_walls: int


def gable_profile(width_m: float, eave_m: float, ridge_m: float) -> Profile:
    """Two straight slopes: each is √((W/2)² + R²) long, the gable a triangle W·R/2."""
    rise = ridge_m - eave_m
    slope = math.hypot(width_m / 2.0, rise)
    gable = width_m * rise / 2.0
    return Profile(2.0 * slope, width_m * eave_m + gable, gable, 2)


def arch_circle(width_m: float, rise_m: float) -> tuple[float, float]:
    """Radius r and full central angle φ of a circular arc of span W and rise R ≤ W/2.

    r = (W²/4 + R²)/(2R); the centre lies r − R below the springing line, so
    φ = 2·atan2(W/2, r − R) (φ = π for the semicircle).
    """
    radius = (width_m**2 / 4.0 + rise_m**2) / (2.0 * rise_m)
    angle = 2.0 * math.atan2(width_m / 2.0, radius - rise_m)
    return radius, angle


def arch_profile(width_m: float, eave_m: float, ridge_m: float) -> Profile:
    """Circular arc over the span; a zero rise degenerates to a flat roof."""
    rise = ridge_m - eave_m
    if rise == 0.0:
        return Profile(width_m, width_m * eave_m, 0.0, 2)
    radius, angle = arch_circle(width_m, rise)
    segment = radius**2 / 2.0 * (angle - math.sin(angle))
    return Profile(radius * angle, width_m * eave_m + segment, segment, 2)


def gothic_half_arc(width_m: float, rise_m: float) -> tuple[float, float]:
    """Radius r and central angle φ of one of the two arcs of a pointed (gothic) roof.

    With the eave at the origin and the ridge at (W/2, R), the centre sits at (W, −a):
    W² + a² = W²/4 + (a + R)² gives a = (3W²/4 − R²)/(2R); r = √(W² + a²); φ is the
    angle between the radii to the eave, (−W, a), and to the ridge, (−W/2, a + R).
    """
    a = (0.75 * width_m**2 - rise_m**2) / (2.0 * rise_m)
    radius = math.hypot(width_m, a)
    to_eave = math.atan2(a, -width_m)
    to_ridge = math.atan2(a + rise_m, -width_m / 2.0)
    return radius, abs(to_eave - to_ridge)


def gothic_profile(width_m: float, eave_m: float, ridge_m: float) -> Profile:
    """Two arcs; the area above the eave is two chord triangles plus two segments."""
    rise = ridge_m - eave_m
    if rise == 0.0:
        return Profile(width_m, width_m * eave_m, 0.0, 2)
    radius, angle = gothic_half_arc(width_m, rise)
    half = width_m * rise / 4.0 + radius**2 / 2.0 * (angle - math.sin(angle))
    return Profile(2.0 * radius * angle, width_m * eave_m + 2.0 * half, 2.0 * half, 2)


def lean_to_profile(width_m: float, eave_m: float, ridge_m: float) -> Profile:
    """One slope from the top of the building wall (ridge) down to the outer eave."""
    rise = ridge_m - eave_m
    slope = math.hypot(width_m, rise)
    gable = width_m * rise / 2.0
    return Profile(slope, width_m * eave_m + gable, gable, 1)


PROFILES = {
    "gable": gable_profile,
    "arch": arch_profile,
    "gothic": gothic_profile,
    "lean-to": lean_to_profile,
}


def profile(shape: str, width_m: float, eave_m: float, ridge_m: float) -> Profile:
    """The cross-section of one span of the given shape."""
    return PROFILES[shape](width_m, eave_m, ridge_m)


@dataclass(frozen=True)
class Envelope:
    """Areas and volume of a whole house (all bays) [m², m³, m]."""

    roof_m2: float
    side_walls_m2: float
    end_walls_m2: float
    floor_m2: float
    perimeter_m: float
    volume_m3: float
    #: of the side and end walls, the vertical band up to the eave on the ends
    end_walls_below_eave_m2: float


def envelope(
    shape: str, width_m: float, length_m: float, eave_m: float, ridge_m: float, bays: int = 1
) -> Envelope:
    """Exposed areas of an `bays`-span house, each span `width_m` wide.

    Gutter-connected spans share their n − 1 inner walls, which are not exposed; each span
    has its own roof and its own piece of both end walls. A lean-to loses the side wall
    against the building, and its perimeter along that wall (heated on the other side).
    """
    prof = profile(shape, width_m, eave_m, ridge_m)
    total_width = bays * width_m
    side = prof.exposed_walls * length_m * eave_m
    ends = 2.0 * bays * prof.area_m2
    perimeter = 2.0 * length_m + 2.0 * total_width
    if prof.exposed_walls == 1:
        perimeter -= length_m
    return Envelope(
        roof_m2=bays * prof.roof_length_m * length_m,
        side_walls_m2=side,
        end_walls_m2=ends,
        floor_m2=total_width * length_m,
        perimeter_m=perimeter,
        volume_m3=bays * prof.area_m2 * length_m,
        end_walls_below_eave_m2=2.0 * total_width * eave_m,
    )
