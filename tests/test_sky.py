"""Sky temperature against the published formulas and their printed check values."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import sky


def test_sigma_is_codata_2018():
    # CODATA 2018 Stefan–Boltzmann constant, as tabulated by scipy.constants (an
    # independent copy of the CODATA table); scipy prints more digits than the
    # 10-digit value we store, hence the relative tolerance.
    assert scipy.constants.sigma == pytest.approx(sky.SIGMA, rel=1e-10)


# Swinbank (1963), Q. J. R. Meteorol. Soc. 89:339–348; check values are the published
# formula evaluated and printed to two decimals (hence atol 0.006 K):
#   air 0 °C  -> −23.95 °C with the rounded T_sky = 0.0552·T^1.5 form
#   air 0 °C  -> −23.42 °C with the published L↓ = 5.31e-13·T⁶ form
#   air 10 °C -> −10.15 °C with the rounded 0.0552 form
@pytest.mark.parametrize(
    ("air_c", "rounded", "expected_c"),
    [(0.0, True, -23.95), (0.0, False, -23.42), (10.0, True, -10.15)],
)
def test_swinbank_check_values(air_c, rounded, expected_c):
    got = sky.swinbank_sky_temperature(air_c, rounded=rounded)
    assert got == pytest.approx(expected_c, abs=0.006)


def test_swinbank_t6_form_is_the_published_longwave():
    # Swinbank (1963): L↓ = 5.31e-13·T⁶ W/m²; our emissivity times σT⁴ must give it back.
    air_c = np.array([-20.0, -5.0, 0.0, 15.0])
    temp_k = air_c + 273.15
    longwave = sky.downwelling_longwave(air_c, sky.swinbank_emissivity(air_c))
    np.testing.assert_allclose(longwave, 5.31e-13 * temp_k**6, rtol=1e-12)


def test_swinbank_rounded_form_is_colder_by_about_half_a_kelvin():
    # the rounded 0.0552 form runs about 0.5 K colder than 5.31e-13·T⁶ over frost-night
    # air: (5.31e-13/σ)^(1/4) = 0.05532 vs 0.0552, i.e. 0.2 % of ~260 K
    air_c = np.linspace(-20.0, 10.0, 7)
    diff = sky.swinbank_sky_temperature(air_c) - sky.swinbank_sky_temperature(air_c, rounded=True)
    assert np.all((diff > 0.4) & (diff < 0.6))


# Berdahl & Martin (1984), Solar Energy 32(5):663–664: ε = 0.711 + 0.56·x + 0.73·x²,
# x = T_dp/100. Expected values are hand arithmetic on the published coefficients.
@pytest.mark.parametrize(
    ("dew_c", "expected"),
    [
        (-20.0, 0.711 - 0.112 + 0.0292),
        (-10.0, 0.711 - 0.056 + 0.0073),
        (0.0, 0.711),
        (10.0, 0.711 + 0.056 + 0.0073),
        (20.0, 0.711 + 0.112 + 0.0292),
    ],
)
def test_berdahl_martin_clear_sky(dew_c, expected):
    assert sky.berdahl_martin_emissivity(dew_c) == pytest.approx(expected, abs=1e-12)


def test_martin_berdahl_hour_and_pressure_terms():
    # Martin & Berdahl (1984), Solar Energy 33:321–336: +0.013·cos(2π·t/24) and
    # +0.00012·(P − 1000) hPa.
    base = sky.berdahl_martin_emissivity(5.0)
    at = sky.berdahl_martin_emissivity(5.0, hour=[0.0, 6.0, 12.0, 18.0])
    np.testing.assert_allclose(at - base, [0.013, 0.0, -0.013, 0.0], atol=1e-15)
    low_pressure = sky.berdahl_martin_emissivity(5.0, pressure_hpa=900.0)
    assert low_pressure - base == pytest.approx(-0.012, abs=1e-15)


def test_sky_temperature_from_emissivity():
    # T_sky = ε^(1/4)·T: ε = 0.5 at 0 °C gives 273.15·0.5^0.25 K
    assert sky.sky_temperature_from_emissivity(0.0, 0.5) == pytest.approx(
        273.15 * 0.5**0.25 - 273.15, abs=1e-12
    )
    assert sky.sky_temperature_from_emissivity(7.0, 1.0) == pytest.approx(7.0, abs=1e-12)


def test_dew_point_chooses_berdahl_martin_else_swinbank_elementwise():
    air = np.array([0.0, 0.0, 5.0])
    dew = np.array([-5.0, np.nan, 1.0])
    got = sky.sky_emissivity(air, dew)
    assert got[0] == pytest.approx(sky.berdahl_martin_emissivity(-5.0))
    assert got[1] == pytest.approx(sky.swinbank_emissivity(0.0))
    assert got[2] == pytest.approx(sky.berdahl_martin_emissivity(1.0))
    np.testing.assert_allclose(sky.sky_emissivity(air), sky.swinbank_emissivity(air))


def test_one_layer_cloud_form():
    # one-layer form ε = ε0 + 0.784·(1 − ε0)·N/10, black cloud base at 2 km (Martin &
    # Berdahl 1984, Solar Energy 33:321–336; attribution from memory)
    eps0 = 0.7
    got = sky.cloudy_emissivity(eps0, [0.0, 0.5, 1.0])
    np.testing.assert_allclose(got, [0.7, 0.7 + 0.784 * 0.3 * 0.5, 0.7 + 0.784 * 0.3], atol=1e-12)


def test_unsworth_monteith_cloud_form():
    # Unsworth & Monteith (1975), QJRMS 101:13–24: ε = (1 − 0.84c)·ε0 + 0.84c
    eps0, c = 0.7, np.array([0.0, 0.3, 1.0])
    got = sky.cloudy_emissivity(eps0, c, model="unsworth-monteith")
    np.testing.assert_allclose(got, (1 - 0.84 * c) * eps0 + 0.84 * c, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    air=st.floats(-40.0, 30.0),
    depression=st.floats(0.0, 25.0),
    c1=st.floats(0.0, 1.0),
    c2=st.floats(0.0, 1.0),
    hour=st.floats(0.0, 24.0),
    model=st.sampled_from(["one-layer", "unsworth-monteith"]),
)
def test_cloud_raises_the_sky_but_never_above_the_air(air, depression, c1, c2, hour, model):
    lo, hi = sorted((c1, c2))
    dew = air - depression
    t_lo, t_hi = sky.sky_temperature(air, dew, [lo, hi], hour=hour, cloud_model=model)
    assert t_lo <= t_hi + 1e-12
    assert t_hi <= air + 1e-9
    overcast = sky.sky_temperature(air, dew, 1.0, hour=hour, cloud_model=model)
    assert overcast <= air + 1e-9


def test_emissivity_capped_so_a_humid_sky_is_not_warmer_than_air():
    # at a 40 °C dew point the Berdahl–Martin fit exceeds 1; the cap keeps T_sky <= T_air
    assert sky.berdahl_martin_emissivity(40.0) > 1.0
    assert sky.sky_temperature(40.0, 40.0, 1.0) == pytest.approx(40.0, abs=1e-9)


def test_vectorised_shapes():
    air = np.full((3, 4), -2.0)
    out = sky.sky_temperature(air, air - 3.0, np.zeros((3, 4)))
    assert out.shape == (3, 4)
    assert sky.sky_temperature(air).shape == (3, 4)


def test_misuse_raises_value_error():
    with pytest.raises(ValueError, match="cloud_fraction"):
        sky.cloudy_emissivity(0.7, 50.0)
    with pytest.raises(ValueError, match="absolute zero"):
        sky.swinbank_emissivity(-300.0)
    with pytest.raises(ValueError, match="model"):
        sky.cloudy_emissivity(0.7, 0.5, model="nonsense")


def test_a_low_overcast_sits_within_two_kelvin_of_the_air():
    # Base-height corrections put a low overcast within about 1–2 K of the air (Kimball,
    # Idso & Aase 1982, Water Resour. Res. 18(4):931–936 — from memory); cloud of unknown
    # height keeps the colder 2 km factor, 4–5 K below (the cautious side).
    for air in (-10.0, 0.0, 10.0):
        low = float(sky.sky_temperature(air, None, 1.0, low_cloud_fraction=1.0))
        unknown = float(sky.sky_temperature(air, None, 1.0))
        assert -2.0 <= low - air < 0.0
        assert unknown < low
        assert -5.5 < unknown - air < -3.5


def test_low_cloud_counts_only_within_the_total():
    eps0 = np.array([0.7, 0.7])
    # a low-cloud share larger than the total is capped at the total
    assert sky.cloudy_emissivity(eps0, [0.5, 0.5], low_cloud_fraction=[0.5, 0.9])[1] == (
        pytest.approx(sky.cloudy_emissivity(eps0, [0.5, 0.5], low_cloud_fraction=[0.5, 0.5])[1])
    )
    # more of the same cloud low → warmer sky
    e = sky.cloudy_emissivity(np.full(3, 0.7), np.full(3, 0.8), low_cloud_fraction=[0, 0.4, 0.8])
    assert e[0] < e[1] < e[2] <= 1.0
