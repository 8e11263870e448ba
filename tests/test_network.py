"""Conductances and capacities against reference libraries and published figures."""

from __future__ import annotations

import math

import pint
import psychrolib
import pytest

from grower import house, network
from grower.units import M3_PER_FT3, W_PER_BTU_H

from .conftest import MINIMAL, write_house

UREG = pint.UnitRegistry()


def test_rho_cp_of_air_at_0c_against_psychrolib():
    # psychrolib (ASHRAE Fundamentals 2017 ch. 1) dry-air density at 0 °C, 101.325 kPa,
    # times its dry-air specific heat 1006 J/kg·K. Same ideal-gas relation, independent code:
    # agreement to 1e-4 (R_d rounding differs between the two).
    psychrolib.SetUnitSystem(psychrolib.SI)
    rho = psychrolib.GetDryAirDensity(0.0, 101325.0)
    assert network.air_volumetric_heat_capacity(0.0, 101325.0) == pytest.approx(
        rho * 1006.0, rel=1e-4
    )
    # and the familiar figure: 1.292 kg/m³ at 0 °C (ideal gas, from memory) → ≈ 1300 J/m³·K
    assert network.air_volumetric_heat_capacity(0.0) == pytest.approx(1300.0, rel=2e-3)


def test_infiltration_coefficients_per_air_change():
    # Derived: ρ·c_p/3600 = 0.335 W/(m³·K) per air change per hour with
    # ρ = 1.2 kg/m³, c_p = 1006 J/kg·K (ASHRAE dry-air c_p); the US figure 0.018
    # Btu/(ft³·°F) per air change is the one heating bulletins use (common practice, no source).
    k_si = network.infiltration_conductance(1.0, 1.0, 1.2 * 1006.0)
    assert k_si == pytest.approx(0.335, abs=5e-4)  # printed to 3 decimals
    # same coefficient in Btu/(h·ft³·°F) per ACH, converted with pint
    q = UREG.Quantity(k_si, "W/(m**3 * delta_degC)").to("Btu/(hour * foot**3 * delta_degF)")
    assert q.magnitude == pytest.approx(0.018, abs=5e-4)  # printed to 3 decimals
    # and through our own constants
    ours = k_si * M3_PER_FT3 / W_PER_BTU_H / 1.8
    assert ours == pytest.approx(q.magnitude, rel=1e-6)


def test_outside_film_coefficient_taki():
    # Taki et al. 2016: h = 2.8 + 1.2·v below 4 m/s, 2.5·v^0.8 above.
    assert network.outside_film_coefficient(0.0) == pytest.approx(2.8)
    assert network.outside_film_coefficient(3.0) == pytest.approx(2.8 + 3.6)
    assert network.outside_film_coefficient(9.0) == pytest.approx(2.5 * 9.0**0.8)


def test_wind_raises_u_only_above_design_wind():
    u = 4.0
    assert network.wind_u_value(u, 0.0) == u
    assert network.wind_u_value(u, network.WIND_REFERENCE_M_S) == u
    assert network.wind_u_value(u, 12.0) > u
    # bounded by the cover with no outside film resistance at all
    rest = 1 / u - 1 / network.outside_film_coefficient(network.WIND_REFERENCE_M_S)
    assert network.wind_u_value(u, 1e6) < 1 / rest


def test_sky_conductance_linearisation():
    # 4σT̄³ is the derivative of σT⁴ (Stefan–Boltzmann, CODATA 2018 σ): check against a
    # centred difference of the exact exchange at T̄ = 263.15 K.
    t = 263.15
    dt = 0.01
    exact = (network.SIGMA * (t + dt) ** 4 - network.SIGMA * (t - dt) ** 4) / (2 * dt)
    k = network.sky_conductance(1.0, 1.0, t - 273.15, emissivity=1.0)
    assert k == pytest.approx(exact, rel=1e-8)


def test_effective_outside_weighted_mean():
    assert network.effective_outside(3.0, 1.0, -4.0, -24.0) == pytest.approx(-9.0)


def test_k_is_sum_of_parts(tmp_path):
    h = house.read(write_house(tmp_path, MINIMAL))
    c = network.conductances(h)
    ua = sum(s.material.u_w_m2k * s.area_m2 for s in h.surfaces)
    assert c.cover_w_per_k == pytest.approx(ua)
    infil = network.air_volumetric_heat_capacity(0.0) * h.volume_m3 * 1.0 / 3600
    assert c.infiltration_w_per_k == pytest.approx(infil)
    assert c.perimeter_w_per_k == pytest.approx(1.4 * 2 * (9 + 30))
    tau = h.roof_material.longwave_transmittance
    k_r = 270.0 * tau * 0.95 * 4 * network.SIGMA * (263.15) ** 3
    assert c.sky_w_per_k == pytest.approx(k_r)
    assert c.total_w_per_k == pytest.approx(ua + infil + c.perimeter_w_per_k + k_r)


def test_curtain_cuts_cover_conduction(examples):
    h = house.read(examples / "glass-range.toml")
    open_ = network.conductances(h, curtain_closed=False)
    shut = network.conductances(h, curtain_closed=True)
    keep = 1 - h.curtain.curtain.saving_fraction
    assert shut.cover_w_per_k == pytest.approx(open_.cover_w_per_k * keep)
    assert shut.infiltration_w_per_k == open_.infiltration_w_per_k
    assert shut.sky_w_per_k <= open_.sky_w_per_k


def test_capacities_and_time_constant(examples):
    h = house.read(examples / "gable-house.toml")
    caps = network.capacities(h)
    # 20 barrels of 55 US gal of water at 4.19 kJ/kg·K
    water_kg = 20 * 55 * 3.785411784
    assert caps.water_j_per_k == pytest.approx(water_kg * 4190.0, rel=1e-9)
    assert caps.soil_j_per_k == pytest.approx(2.2e6 * 0.1 * 270.0)
    assert caps.total_j_per_k == pytest.approx(caps.air_j_per_k + caps.mass_j_per_k)
    s = network.describe(h)
    assert s.time_constant_h == pytest.approx(s.c_j_per_k / s.k_w_per_k / 3600)
    assert math.isfinite(s.time_constant_h) and s.time_constant_h > 0
