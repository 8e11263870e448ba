"""Conductances and capacities against reference libraries and published figures."""

from __future__ import annotations

import numpy as np
import psychrolib
import pytest

from grower import house, network
from grower.units import M3_PER_FT3, W_PER_BTU_H

from .conftest import MINIMAL, write_house
from .reference_units import UREG


def test_rho_cp_is_standard_air_against_psychrolib():
    # psychrolib (ASHRAE Fundamentals 2017 ch. 1) dry-air density at 20 °C, 101.325 kPa,
    # is ASHRAE's standard air (1.204 kg/m³); times its dry-air c_p 1006 J/kg·K.
    # Same ideal-gas relation, independent code: agreement to 1e-3 (1.204 is printed to 4).
    psychrolib.SetUnitSystem(psychrolib.SI)
    rho = psychrolib.GetDryAirDensity(20.0, 101325.0)
    assert network.air_volumetric_heat_capacity(101325.0) == pytest.approx(rho * 1006.0, rel=1e-3)
    # at a site's lower pressure the same air is thinner, in proportion (ideal gas)
    assert network.air_volumetric_heat_capacity(90000.0) == pytest.approx(
        psychrolib.GetDryAirDensity(20.0, 90000.0) * 1006.0, rel=1e-3
    )


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


def test_outside_film_coefficient_bot():
    # Bot (1983) as printed by Taki et al. 2016: h = 2.8 + 1.2·v below 4 m/s, 2.5·v^0.8 above.
    assert network.outside_film_coefficient(0.0) == pytest.approx(2.8)
    assert network.outside_film_coefficient(3.0) == pytest.approx(2.8 + 3.6)
    assert network.outside_film_coefficient(9.0) == pytest.approx(2.5 * 9.0**0.8)


def test_table_u_holds_at_the_design_wind_and_follows_the_night_wind():
    # The tables' U-values hold at 15 mph (ASHRAE winter film; Rutgers adjusts above 15 mph).
    # Convention check: pint's mph.
    assert pytest.approx(UREG.Quantity(15, "mph").to("m/s").m) == network.WIND_REFERENCE_M_S
    u = 6.8
    assert network.wind_u_value(u, network.WIND_REFERENCE_M_S) == pytest.approx(u)
    calm, gale = network.wind_u_value(u, 0.0), network.wind_u_value(u, 15.0)
    assert calm < u < gale
    # Rasheed et al. 2016 (Spanish J. Agric. Res., BES model of greenhouse covers): U rises
    # with wind at every temperature difference; ours is monotonic in wind as well.
    winds = np.linspace(0, 20, 41)
    us = [network.wind_u_value(u, w) for w in winds]
    assert all(b >= a for a, b in zip(us, us[1:], strict=False))
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


def test_k_at_the_design_wind_is_the_trades_sum(tmp_path):
    # At the design wind and with the sky at the outside air, K is the trade's
    # Σ U·A + ρ·c_p·V·N/3600 + F·P (A.J. Both, Rutgers NJAES "Greenhouse Energy Efficiency
    # (Heating)": structural + infiltration + perimeter), U as the tables publish them.
    h = house.read(write_house(tmp_path, MINIMAL))
    c = network.conductances(h, wind_m_s=network.WIND_REFERENCE_M_S)
    ua = sum(s.material.u_w_m2k * s.area_m2 for s in h.surfaces)
    assert c.cover_w_per_k == pytest.approx(ua, rel=1e-9)
    infil = 1.204 * 1006.0 * h.volume_m3 * 1.0 / 3600
    assert c.infiltration_w_per_k == pytest.approx(infil, rel=1e-9)
    # F = 0.8 Btu/h·ft·°F uninsulated (ASHRAE / ASAE EP406 as recalled — from memory),
    # converted by pint
    f = UREG.Quantity(0.8, "Btu/(hour * foot * delta_degF)").to("W/(m * delta_degC)").m
    assert c.perimeter_w_per_k == pytest.approx(f * 2 * (9 + 30), rel=1e-6)
    assert c.total_w_per_k == pytest.approx(ua + infil + c.perimeter_w_per_k, rel=1e-9)
    assert network.handbook_conductance(h) == pytest.approx(c.total_w_per_k, rel=1e-9)
    # the clear night's excess is the floor's share plus the cover faces'
    assert c.sky_w_per_k == pytest.approx(c.floor_sky_share_w_per_k + c.cover_sky_w_per_k)
    g, k_r = c.air_mass_w_per_k, c.floor_sky_w_per_k
    assert c.floor_sky_share_w_per_k == pytest.approx(g * k_r / (g + k_r))
    tau = h.roof_material.longwave_transmittance * network.CONDENSATION_LW_FACTOR
    assert k_r == pytest.approx(270.0 * tau * 0.95 * 4 * network.SIGMA * (263.15) ** 3)


def test_two_node_steady_state_is_handbook_plus_sky_excess(tmp_path):
    # Analytic: with the deep ground cut, the two-node network's steady heat at a held air
    # temperature is K_c·(T_a − T_out) + (K_fs + K_cs)·(T_out − T_sky): the trade's loss and
    # the sky's excess, nothing counted twice. With T_sky = T_out it is the trade's alone.
    from grower.plans import model as hm

    h = house.read(write_house(tmp_path, MINIMAL))
    m = hm.build(h, wind_m_s=network.WIND_REFERENCE_M_S, curtain_closed=False)
    c = m.conductances
    net = m.network
    bnd = np.array(net.boundary_w_per_k, dtype=float)
    bnd[1, 2] = 0.0  # no ground
    g = net.coupling_w_per_k[0, 1]
    t_a, t_out, t_sky = 10.0, -10.0, -32.0
    t_m = (g * t_a + bnd[1, 1] * t_sky) / (g + bnd[1, 1])
    q = bnd[0, 0] * (t_a - t_out) + bnd[0, 1] * (t_a - t_sky) + g * (t_a - t_m)
    expected = c.conduction_w_per_k * (t_a - t_out) + c.sky_w_per_k * (t_out - t_sky)
    assert q == pytest.approx(expected, rel=1e-12)
    t_m = (g * t_a + bnd[1, 1] * t_out) / (g + bnd[1, 1])
    q = bnd[0, 0] * (t_a - t_out) + bnd[0, 1] * (t_a - t_out) + g * (t_a - t_m)
    assert q == pytest.approx(network.handbook_conductance(h) * (t_a - t_out), rel=1e-12)


def test_curtain_cuts_cover_conduction_but_not_the_knee_wall(examples):
    h = house.read(examples / "glass-range.toml")
    open_ = network.conductances(h, curtain_closed=False)
    shut = network.conductances(h, curtain_closed=True)
    assert shut.cover_w_per_k < open_.cover_w_per_k
    by_name = {x.name: x for x in open_.surfaces}
    for x in shut.surfaces:
        if x.name == "knee walls":
            assert x.u_w_m2k == pytest.approx(by_name[x.name].u_w_m2k)
        else:
            assert x.u_w_m2k < by_name[x.name].u_w_m2k
    assert shut.infiltration_w_per_k == open_.infiltration_w_per_k
    assert shut.sky_w_per_k <= open_.sky_w_per_k


def test_active_layer_is_the_daily_damping_depth():
    # Damping depth √(2α/ω) ≈ 0.10 m for α = 0.034 m²/day (REFERENCES: soil thermal mass,
    # derived from the published diffusivity): give k/ρc = α in SI.
    alpha = 0.034 / 86400.0
    assert network.active_layer_depth(1.0, alpha) == pytest.approx(0.104, abs=5e-4)


def test_capacities_and_time_constant(examples):
    h = house.read(examples / "gable-house.toml")
    caps = network.capacities(h)
    # 20 barrels of 55 US gal of water at 4.19 kJ/kg·K
    water_kg = 20 * 55 * 3.785411784
    assert caps.water_j_per_k == pytest.approx(water_kg * 4190.0, rel=1e-9)
    rho_c, k = house.FLOORS["soil"][:2]
    assert caps.soil_j_per_k == pytest.approx(rho_c * network.active_layer_depth(rho_c, k) * 270.0)
    assert caps.total_j_per_k == pytest.approx(caps.air_j_per_k + caps.mass_j_per_k)
    s = network.describe(h)
    assert s.time_constant_h == pytest.approx(s.c_j_per_k / s.k_w_per_k / 3600)
    fast, slow = s.time_scales_h
    assert 0 < fast < 1.0 < slow  # the air settles in minutes, the mass in hours


def test_lumped_reduction_matches_two_node_in_steady_state(examples):
    # Star–mesh elimination of the mass node is exact in steady state: the one-node model
    # and the two-node model need the same heat to hold the same air temperature.
    from grower.plans import model as hm
    from grower.plans import runs

    for name in ("hoop-tunnel", "gable-house", "glass-range"):
        h = house.read(examples / f"{name}.toml")
        two = hm.build(h, kind="two-node")
        one = hm.build(h, kind="lumped")
        bc = np.array([-8.0, -30.0, 6.0])
        x2 = runs.held_steady_state(two, bc, np.zeros(2), 5.0)
        q2 = float(np.asarray(two.network.boundary_w_per_k)[0] @ (x2[0] - bc)) + float(
            two.network.coupling_w_per_k[0, 1] * (x2[0] - x2[1])
        )
        q1 = float(np.asarray(one.network.boundary_w_per_k)[0] @ (5.0 - bc))
        assert q1 == pytest.approx(q2, rel=1e-9)
