"""The format-2 ``[calibration]`` table: what `grower fit --write` stores from a fit whose
conduction to outside air and sky part were fitted apart, and how the plans read it.

The fits here are built by hand in the shape `grower.fit.estimate` returns (parameters
``k_outside_w_per_k``, ``k_sky_w_per_k``, ``k_w_per_k``, ``c_j_per_k``, each beside the
geometry's value at the record's conditions), so the writer is checked on known numbers.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import replace
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from grower import house
from grower.fit import calibration_values, write_calibration
from grower.fit.plan import FitResult
from grower.fit.results import ModelFit, Parameter
from grower.plans import model as hm

from .conftest import EXAMPLES

TZ = ZoneInfo("America/Toronto")
#: the record's conditions the hand-built fit says it had
WIND, MEAN_OUT = 1.5, 2.0


def _fit(path: str, *, quality: str = "good", noise: float = 0.1) -> FitResult:
    """A two-node fit of the example house: conduction × 1.10, sky × 0.60, C × 0.90,
    coupling × 1.3 on the geometry at the record's conditions."""
    h = house.read(path)
    geo = hm.build(
        h,
        wind_m_s=WIND,
        mean_radiant_temp_c=MEAN_OUT - 5.0,
        air_temp_c=MEAN_OUT,
        use_calibration=False,
    )
    k_o, c = geo.k_conduction_w_per_k, geo.c_j_per_k
    k_s = float(geo.network.boundary_w_per_k[:, 1].sum())  # the sky columns, as fitted
    fit_out, fit_sky, fit_c = 1.1 * k_o, 0.6 * k_s, 0.9 * c
    g = geo.capacities.air_mass_w_per_k
    params = (
        Parameter("k_outside_w_per_k", fit_out, 0.03 * fit_out, k_o, "fitted"),
        Parameter("k_sky_w_per_k", fit_sky, 0.2 * fit_sky, k_s, "fitted"),
        Parameter("k_w_per_k", fit_out + fit_sky, 40.0, k_o + k_s, "derived"),
        Parameter("c_j_per_k", fit_c, 0.05 * fit_c, c, "fitted"),
        Parameter("time_constant_h", fit_c / (fit_out + fit_sky) / 3600, 0.1, None, "derived"),
        Parameter("coupling_w_per_k", 1.1 * 1.3 * g, 0.1 * g, g, "fitted"),
    )
    chosen = ModelFit(
        model="two-node",
        anchor="measured power",
        parameters=params,
        rms_k=0.25 if quality == "rough" else 0.11,
        n_residuals=400,
        n_free=12,
        aic=-1000.0,
        free_names=("c", "k", "sky", "g"),
        correlation=np.eye(4),
        segments=(),
        fitted_c=(),
        scales={"k_scale": 1.1, "sky_scale": 0.6, "c_scale": 0.9, "coupling_scale": 1.3},
        residual_lag1=0.3,
    )
    start = dt.datetime(2026, 11, 20, 16, 0, 0, 500, tzinfo=TZ)
    end = dt.datetime(2026, 11, 23, 8, 0, tzinfo=TZ)
    return FitResult(
        house_name=h.name,
        house_path="/nonexistent/never-read.toml",  # the writer must not rebuild the geometry
        record_path="/somewhere/logger.csv",
        record_start=start,
        record_end=end,
        outside_source="the record",
        chosen=chosen,
        other=None,
        choice="the two-node model",
        anchor="measured power",
        heater="power",
        with_days=False,
        n_record_rows=500,
        n_samples=400,
        wind_m_s=WIND,
        notes=(),
        times=(),
        measured_c=np.zeros(3),
        fitted_c=np.zeros(3),
        outside_c=np.array([MEAN_OUT - 1.0, MEAN_OUT, MEAN_OUT + 1.0]),
        segment_of_row=np.zeros(3, dtype=int),
        fit_date=dt.date(2026, 11, 25),
        noise_k=noise,
        quality=quality,
        residual_lag1=0.3,
    )


@pytest.fixture()
def gable(tmp_path) -> Path:
    path = tmp_path / "gable-house.toml"
    path.write_text((EXAMPLES / "gable-house.toml").read_text(encoding="utf-8"), encoding="utf-8")
    return path


def test_format_2_stores_the_fitted_conductances_and_the_record(gable):
    r = _fit(str(gable))
    v = calibration_values(r)
    out, sky, c = (r.chosen.get(n) for n in ("k_outside_w_per_k", "k_sky_w_per_k", "c_j_per_k"))
    assert list(v)[:4] == ["format", "model", "anchor", "quality"]
    assert v["format"] == 2 and v["model"] == "two-node" and v["quality"] == "good"
    # 5 significant digits (values), 3 (half-widths): half a unit in the last digit
    assert v["k_outside_w_per_k"] == pytest.approx(out.value, rel=5e-5)
    assert v["k_outside_w_per_k_ci95"] == pytest.approx(out.half_width, rel=5e-3)
    assert v["k_sky_w_per_k"] == pytest.approx(sky.value, rel=5e-5)
    assert v["geometry_k_outside_w_per_k"] == pytest.approx(out.geometry, rel=5e-5)
    assert v["geometry_k_sky_w_per_k"] == pytest.approx(sky.geometry, rel=5e-5)
    assert v["geometry_c_j_per_k"] == pytest.approx(c.geometry, rel=5e-5)
    assert v["k_w_per_k_ci95"] == 40.0 and v["coupling_scale"] == 1.3
    assert v["record_wind_m_s"] == WIND and v["record_mean_outside_c"] == MEAN_OUT
    assert v["record_start"] == dt.datetime(2026, 11, 20, 16, 0, tzinfo=TZ)
    assert v["record_hours"] == 64.0 and v["record"] == "logger.csv"
    assert v["rms_k"] == 0.11 and v["noise_k"] == 0.1 and v["n_samples"] == 400
    assert "noise_k" not in calibration_values(_fit(str(gable), noise=float("nan")))


def test_written_table_reads_back_as_the_fitted_network(gable):
    r = _fit(str(gable))
    write_calibration(gable, r)
    text = gable.read_text(encoding="utf-8")
    table = text.split("[calibration]", 1)[1]
    assert table.lstrip().startswith("# format 2, written by `grower fit --write`")
    h = house.read(gable)
    cal = hm.calibration_of(h, kind="two-node")
    assert cal.conduction_factor == pytest.approx(1.1, rel=1e-4)
    assert cal.sky_factor == pytest.approx(0.6, rel=1e-4)
    assert cal.capacity_factor == pytest.approx(0.9, rel=1e-4)
    assert cal.coupling_scale == 1.3
    kw = dict(wind_m_s=WIND, mean_radiant_temp_c=MEAN_OUT - 5.0, air_temp_c=MEAN_OUT)
    mdl = hm.build(h, **kw)
    assert mdl.k_conduction_w_per_k == pytest.approx(
        r.chosen.get("k_outside_w_per_k").value, rel=1e-4
    )
    assert mdl.c_j_per_k == pytest.approx(r.chosen.get("c_j_per_k").value, rel=1e-4)
    assert not hm.build(h, kind="lumped").calibrated


def test_a_refit_replaces_an_older_table_and_keeps_the_growers_lines(gable):
    older = (
        "\n[calibration]\n"
        "# written by `grower fit` from a logger record: tonight and stock use K and C from here\n"
        "# (--no-calibration ignores it); delete this table to go back to the geometry's values\n"
        "# my own note: fitted on the old film\n"
        'model = "two-node"\nk_w_per_k = 969.0\nk_w_per_k_ci95 = 29.0\nc_j_per_k = 9.0e7\n'
        'note = "keep me"\n'
    )
    gable.write_text(gable.read_text(encoding="utf-8") + older, encoding="utf-8")
    assert hm.calibration_warning(house.read(gable)) is not None  # refused before
    write_calibration(gable, _fit(str(gable)))
    table = gable.read_text(encoding="utf-8").split("[calibration]", 1)[1]
    assert "tonight and stock use K and C from here" not in table
    assert "# format 2, written by" in table and "# my own note: fitted on the old film" in table
    assert 'note = "keep me"' in table and "969" not in table
    h = house.read(gable)
    assert h.calibration["format"] == 2 and hm.calibration_warning(h) is None
    assert hm.build(h).calibrated


def test_a_rough_fit_is_stored_as_rough_and_used_with_a_note(gable):
    write_calibration(gable, _fit(str(gable), quality="rough"))
    h = house.read(gable)
    assert h.calibration["quality"] == "rough"
    assert hm.build(h).calibrated
    note = hm.calibration_note(h, "two-node")
    assert "ROUGH fit (stored with --keep-rough, residual 2.5 × the sensor's noise)" in note


def _lumped_fit(path: str, nights: tuple[float, ...] | None) -> FitResult:
    """A lumped fit of the example house: conduction × 1.10, the deep-ground path × 0.40
    fitted apart, the sky × 0.60 (or night by night, `nights`), C × 0.90."""
    h = house.read(path)
    kw = dict(mean_radiant_temp_c=MEAN_OUT - 5.0, air_temp_c=MEAN_OUT, use_calibration=False)
    geo = hm.build(h, kind="lumped", wind_m_s=WIND, **kw)
    k_o, k_s, k_g = geo.network.boundary_w_per_k[0]
    sky = 0.6 if nights is None else float(np.mean(nights))
    fit_out, fit_sky, fit_ground = 1.1 * k_o, sky * k_s, 0.4 * k_g
    params = (
        Parameter("k_w_per_k", fit_out + fit_sky + fit_ground, 40.0, k_o + k_s + k_g, "fitted"),
        Parameter("c_j_per_k", 0.9 * geo.c_j_per_k, 1e5, geo.c_j_per_k, "fitted"),
        Parameter("k_outside_w_per_k", fit_out, 20.0, k_o, "fitted"),
        Parameter("k_sky_w_per_k", fit_sky, 15.0, k_s, "fitted"),
    )
    base = _fit(path)
    chosen = replace(
        base.chosen,
        model="lumped",
        parameters=params,
        scales={"k_scale": 1.1, "sky_scale": sky, "c_scale": 0.9},
        sky_by_segment=nights,
    )
    return replace(base, chosen=chosen)


def test_a_lumped_fit_with_its_ground_path_apart_is_stored_and_applied(gable):
    write_calibration(gable, _lumped_fit(str(gable), None))
    h = house.read(gable)
    table = h.calibration
    assert table["model"] == "lumped" and "k_sky_by_night_w_per_k" not in table
    assert table["k_ground_w_per_k"] / table["geometry_k_ground_w_per_k"] == pytest.approx(
        0.4, rel=1e-4
    )
    kw = dict(wind_m_s=WIND, mean_radiant_temp_c=MEAN_OUT - 5.0, air_temp_c=MEAN_OUT)
    geo = hm.build(h, kind="lumped", use_calibration=False, **kw)
    cal = hm.build(h, kind="lumped", **kw)
    ratio = cal.network.boundary_w_per_k[0] / geo.network.boundary_w_per_k[0]
    assert list(ratio) == pytest.approx([1.1, 0.6, 0.4], rel=1e-4)  # air, sky, deep ground


def test_a_sky_fitted_night_by_night_is_taken_at_its_clearest_night(gable):
    """Without cloud in the record a cloudy night lowers that night's sky factor; the
    runs take the largest (the clearest night), not the record's mean."""
    write_calibration(gable, _lumped_fit(str(gable), (0.3, 0.8, 0.5)))
    h = house.read(gable)
    table = h.calibration
    nights = table["k_sky_by_night_w_per_k"]
    assert [n / table["geometry_k_sky_w_per_k"] for n in nights] == pytest.approx(
        [0.3, 0.8, 0.5], rel=1e-4
    )
    assert table["k_sky_w_per_k"] / table["geometry_k_sky_w_per_k"] == pytest.approx(
        np.mean([0.3, 0.8, 0.5]), rel=1e-4
    )
    cal = hm.calibration_of(h, kind="lumped")
    assert cal.sky_factor == pytest.approx(0.8, rel=1e-4)
    note = hm.calibration_note(h, "lumped")
    assert "sky part × 0.80 (the clearest of the record's nights)" in note
