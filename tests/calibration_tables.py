"""Format-2 ``[calibration]`` tables written by hand for the tests.

`grower fit --write` writes these from a fit (`grower.fit.calibration`); the tests of the
readers (`grower.plans.model.build`, `size`, `tonight`, `stock`) need tables with known
factors on the geometry, which this builds from the house's own geometry.
"""

from __future__ import annotations

import tomllib

from grower import house
from grower.plans import model as hm

#: the conditions the hand-written tables say their record had (calm, 0 °C outside)
RECORD = {"wind_m_s": 0.0, "mean_radiant_temp_c": -5.0, "air_temp_c": 0.0}


def format2(
    text: str,
    *,
    conduction: float = 1.0,
    sky: float = 1.0,
    capacity: float = 1.0,
    model: str = "two-node",
    coupling: float | None = None,
    quality: str = "good",
    extra: str = "",
) -> str:
    """`text` (a house file without [calibration]) with a format-2 table whose fitted
    conduction, sky part and C are the given factors × the geometry's at `RECORD`."""
    h = house.from_mapping(tomllib.loads(text), source="x")
    geo = hm.build(h, kind=model, use_calibration=False, **RECORD)
    sky_geo = float(geo.network.boundary_w_per_k[:, 1].sum())  # the sky columns, as fitted
    lines = [
        "[calibration]",
        "format = 2",
        f'model = "{model}"',
        'anchor = "measured power"',
        f'quality = "{quality}"',
        f"k_outside_w_per_k = {conduction * geo.k_conduction_w_per_k!r}",
        f"k_sky_w_per_k = {sky * sky_geo!r}",
        f"c_j_per_k = {capacity * geo.c_j_per_k!r}",
        f"geometry_k_outside_w_per_k = {geo.k_conduction_w_per_k!r}",
        f"geometry_k_sky_w_per_k = {sky_geo!r}",
        f"geometry_c_j_per_k = {geo.c_j_per_k!r}",
        f"record_wind_m_s = {RECORD['wind_m_s']!r}",
        f"record_mean_outside_c = {RECORD['air_temp_c']!r}",
        'record = "logger.csv"',
        "rms_k = 0.3",
        "noise_k = 0.1",
    ]
    if coupling is not None:
        lines.append(f"coupling_scale = {coupling!r}")
    return text.rstrip("\n") + "\n\n" + "\n".join(lines) + "\n" + extra
