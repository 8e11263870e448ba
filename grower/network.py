"""From a house (and the night's conditions) to a linear thermal network.

Conductance to outside K (W/K) is the sum of

- cover conduction Σ U_i·A_i over roof, side, end and knee walls, each surface its own
  material; the U-values are the handbook's, which hold at winter design wind, and are
  raised above it through the outside film coefficient (`wind_u_value`);
- air exchange ρ·c_p·V·N/3600 (N air changes per hour), ρ·c_p of the air at its
  temperature and the site's pressure (`air_volumetric_heat_capacity`);
- perimeter (foundation) loss F·P;
- an energy curtain, closed at night, cuts the conduction of roof and walls by its
  saving fraction and blocks the share of long-wave radiation it does not transmit.

Radiation to the night sky through an IR-passing cover is a second, linearised
conductance K_r = A_floor·τ_lw·ε·4σT̄³ to the sky temperature; with it the house sees
one effective outside temperature T_eff = (K_c·T_out + K_r·T_sky)/(K_c + K_r).

Heat capacity: the air node holds the air and the light structure and canopy; the mass
node holds the floor's active layer (about 0.1 m for a daily cycle) and any water,
stone or benches, coupled to the air by h·A and to the deep ground by k/d per m².
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from grower.house import FLOORS, House

#: Stefan–Boltzmann constant [W m-2 K-4] (CODATA 2018, exact in the 2019 SI)
SIGMA = 5.670374419e-8
#: specific gas constant of dry air [J kg-1 K-1]: R/M = 8.314462618/0.0289647 —
#: ASHRAE Handbook Fundamentals (2017) ch. 1, as used by psychrolib
R_DRY_AIR = 287.042
#: specific heat of dry air [J kg-1 K-1] — ASHRAE Handbook Fundamentals (2017) ch. 1
CP_DRY_AIR = 1006.0
#: long-wave emissivity of soil and crop (common practice, no source; 0.93–0.98 typical)
EMISSIVITY_FLOOR = 0.95
#: winter design wind at which handbook U-values hold [m/s] (15 mph); "adjust for wind
#: above 15 mph" — A.J. Both, Rutgers NJAES, "Greenhouse Energy Efficiency (Heating)"
WIND_REFERENCE_M_S = 6.7056
#: perimeter loss factor F [W m-1 K-1]: 0.8 Btu/h·ft·°F uninsulated, 0.4 insulated
#: (ASHRAE / ASAE EP406 as recalled — from memory)
PERIMETER_UNINSULATED_W_MK = 1.4
PERIMETER_INSULATED_W_MK = 0.7
#: depth of soil that stores the daily cycle [m]: damping depth √(2α/ω) ≈ 0.10 m for
#: α = 0.034 m²/day (√(2α/ω) with ω = 2π/day; α for moist soil from memory)
ACTIVE_LAYER_M = 0.10
#: distance from the active layer to soil at the deep-ground temperature [m] (from memory)
DEEP_GROUND_DEPTH_M = 1.0
#: deep-ground temperature assumed when the house file gives none [°C] (from memory:
#: soil at ~1 m in a temperate early winter is typically 4–8 °C)
DEEP_GROUND_DEFAULT_C = 5.0
#: heat capacity of light structure, benches and canopy per m² of floor [J m-2 K-1]
#: (from memory: frame and cover ≈ 3 kJ/m²·K, a crop canopy with 1–2 kg water/m² ≈ 5)
LIGHT_STRUCTURE_J_PER_M2K = 8.0e3
#: design temperature difference for the free-convection film coefficients [K]
FILM_DELTA_K = 3.0


def air_volumetric_heat_capacity(temp_c: float = 0.0, pressure_pa: float = 101325.0) -> float:
    """ρ·c_p of dry air [J m-3 K-1] as an ideal gas: p/(R_d·T)·c_p.

    At 0 °C and 101.325 kPa this is 1.2923 kg/m³ × 1006 J/kg·K ≈ 1300 J/m³·K.

    References
    ----------
    ASHRAE Handbook — Fundamentals (2017), ch. 1 "Psychrometrics", eq. (28) with zero
    humidity ratio; the same relation as psychrolib's ``GetDryAirDensity``.
    """
    return pressure_pa / (R_DRY_AIR * (temp_c + 273.15)) * CP_DRY_AIR


def infiltration_conductance(
    volume_m3: float, air_changes_per_hour: float, rho_cp_j_m3k: float
) -> float:
    """ρ·c_p·V·N/3600 [W K-1]: the heat carried out by N air changes per hour."""
    return rho_cp_j_m3k * volume_m3 * air_changes_per_hour / 3600.0


def outside_film_coefficient(wind_m_s: float | np.ndarray) -> float | np.ndarray:
    """Convective film coefficient on the outside of a cover [W m-2 K-1].

    h = 2.8 + 1.2·v for v < 4 m/s, 2.5·v^0.8 above.

    References
    ----------
    Taki, M., Ajabshirchi, Y., Ranjbar, S. F., Rohani, A., Matloobi, M. (2016). Heat
    transfer and MLP neural network models to predict inside environment variables and
    energy lost in a semi-solar greenhouse. *Energy and Buildings* 110, 314–329.
    """
    v = np.asarray(wind_m_s, dtype=float)
    h = np.where(v < 4.0, 2.8 + 1.2 * v, 2.5 * np.maximum(v, 4.0) ** 0.8)
    return float(h) if h.ndim == 0 else h


def wind_u_value(u_table_w_m2k: float, wind_m_s: float) -> float:
    """U at a wind speed, from a handbook U that holds at the winter design wind.

    The outside film resistance 1/h_o is swapped: 1/U = 1/U_table − 1/h_o(v_ref) +
    1/h_o(v). Below the design wind the table value is kept (the cautious side, and how
    handbook sizing methods use it: adjust only above 15 mph).
    """
    if wind_m_s <= WIND_REFERENCE_M_S:
        return u_table_w_m2k
    rest = 1.0 / u_table_w_m2k - 1.0 / outside_film_coefficient(WIND_REFERENCE_M_S)
    return 1.0 / (max(rest, 0.0) + 1.0 / outside_film_coefficient(wind_m_s))


def wind_air_changes(air_changes_per_hour: float, wind_m_s: float) -> float:
    """Air changes at a wind speed: the house's rate, raised in proportion to wind above
    the design wind (wind-driven leakage through cracks grows about linearly with wind
    speed — common practice, no source)."""
    return air_changes_per_hour * max(1.0, wind_m_s / WIND_REFERENCE_M_S)


def sky_conductance(
    floor_area_m2: float,
    longwave_transmittance: float,
    mean_radiant_temp_c: float,
    emissivity: float = EMISSIVITY_FLOOR,
) -> float:
    """Linearised long-wave exchange with the sky through the cover [W K-1].

    K_r = A_floor·τ_lw·ε·4σT̄³, T̄ the mean of the floor and sky temperatures [K].
    """
    t_bar = mean_radiant_temp_c + 273.15
    return floor_area_m2 * longwave_transmittance * emissivity * 4.0 * SIGMA * t_bar**3


def effective_outside(
    k_conduction_w_per_k: float, k_sky_w_per_k: float, temp_out_c, temp_sky_c
) -> np.ndarray:
    """T_eff = (K_c·T_out + K_r·T_sky)/(K_c + K_r) [°C], element-wise."""
    k = k_conduction_w_per_k + k_sky_w_per_k
    return (
        k_conduction_w_per_k * np.asarray(temp_out_c, dtype=float)
        + k_sky_w_per_k * np.asarray(temp_sky_c, dtype=float)
    ) / k


@dataclass(frozen=True)
class SurfaceLoss:
    """Conduction through one envelope surface."""

    name: str
    material_key: str
    material_label: str
    area_m2: float
    u_w_m2k: float
    ua_w_per_k: float


@dataclass(frozen=True)
class Conductances:
    """The house's conductances at one set of conditions [W K-1]."""

    surfaces: tuple[SurfaceLoss, ...]
    cover_w_per_k: float
    infiltration_w_per_k: float
    perimeter_w_per_k: float
    sky_w_per_k: float
    air_changes_per_hour: float
    wind_m_s: float
    curtain_closed: bool
    rho_cp_j_m3k: float

    @property
    def conduction_w_per_k(self) -> float:
        """K_c: everything to the outside air (cover, air exchange, perimeter)."""
        return self.cover_w_per_k + self.infiltration_w_per_k + self.perimeter_w_per_k

    @property
    def total_w_per_k(self) -> float:
        """K = K_c + K_r."""
        return self.conduction_w_per_k + self.sky_w_per_k


def conductances(
    house: House,
    *,
    wind_m_s: float = 0.0,
    curtain_closed: bool = False,
    air_temp_c: float = 0.0,
    mean_radiant_temp_c: float = -10.0,
) -> Conductances:
    """Conductances of `house` at a wind speed, curtain state and air temperature.

    Parameters
    ----------
    wind_m_s : float
        Wind at 10 m [m s-1]; raises U and air exchange above the design wind.
    curtain_closed : bool
        Whether the house's energy curtain (if any) is drawn.
    air_temp_c : float
        Temperature of the exchanged air, for ρ·c_p [°C]; 0 °C by default.
    mean_radiant_temp_c : float
        Mean of floor and sky temperature for the linearised sky exchange [°C].
    """
    pressure = house.site.pressure_hpa * 100.0 if house.site else 101325.0
    rho_cp = air_volumetric_heat_capacity(air_temp_c, pressure)
    curtain = house.curtain if (house.curtain and curtain_closed) else None
    keep = 1.0 - curtain.curtain.saving_fraction if curtain else 1.0
    losses = []
    for s in house.surfaces:
        u = wind_u_value(s.material.u_w_m2k, wind_m_s) * keep
        losses.append(
            SurfaceLoss(s.name, s.material.key, s.material.label, s.area_m2, u, u * s.area_m2)
        )
    ach = wind_air_changes(house.air_changes_per_hour, wind_m_s)
    infiltration = infiltration_conductance(house.volume_m3, ach, rho_cp)
    f = PERIMETER_INSULATED_W_MK if house.perimeter_insulated else PERIMETER_UNINSULATED_W_MK
    tau = house.roof_material.longwave_transmittance
    if curtain:
        tau *= curtain.curtain.longwave_transmittance
    k_sky = sky_conductance(house.floor_area_m2, tau, mean_radiant_temp_c)
    return Conductances(
        surfaces=tuple(losses),
        cover_w_per_k=sum(x.ua_w_per_k for x in losses),
        infiltration_w_per_k=infiltration,
        perimeter_w_per_k=f * house.envelope.perimeter_m,
        sky_w_per_k=k_sky,
        air_changes_per_hour=ach,
        wind_m_s=wind_m_s,
        curtain_closed=curtain is not None,
        rho_cp_j_m3k=rho_cp,
    )


@dataclass(frozen=True)
class Capacities:
    """Heat capacities [J K-1] and internal couplings [W K-1] of the two-node model."""

    air_j_per_k: float  # air + light structure + canopy
    soil_j_per_k: float  # the floor's active layer
    water_j_per_k: float  # barrels and tanks
    other_mass_j_per_k: float  # benches, stone, concrete
    air_mass_w_per_k: float  # h·A between air and mass
    ground_w_per_k: float  # mass node to the deep ground, k/d·A_floor
    deep_ground_c: float
    deep_ground_assumed: bool

    @property
    def mass_j_per_k(self) -> float:
        return self.soil_j_per_k + self.water_j_per_k + self.other_mass_j_per_k

    @property
    def total_j_per_k(self) -> float:
        """The lumped heat capacity C: all of it in one node."""
        return self.air_j_per_k + self.mass_j_per_k


def free_convection_coefficient(delta_k: float = FILM_DELTA_K) -> float:
    """Air-to-floor film coefficient 1.7·ΔT^(1/3) [W m-2 K-1] (air colder than soil).

    References
    ----------
    Taki et al. (2016), *Energy and Buildings* 110, 314–329 (see
    `outside_film_coefficient`).
    """
    return 1.7 * delta_k ** (1.0 / 3.0)


def capacities(house: House, *, rho_cp_j_m3k: float | None = None) -> Capacities:
    """Heat capacities and couplings of `house` (two-node split; sum for lumped)."""
    rho_cp = rho_cp_j_m3k if rho_cp_j_m3k is not None else air_volumetric_heat_capacity()
    area = house.floor_area_m2
    c_air = rho_cp * house.volume_m3 + LIGHT_STRUCTURE_J_PER_M2K * area
    rho_c_soil, k_soil, _basis = FLOORS[house.floor_kind]
    c_soil = rho_c_soil * ACTIVE_LAYER_M * area
    water = sum(m.capacitance_j_per_k for m in house.masses if m.material == "water")
    other = sum(m.capacitance_j_per_k for m in house.masses if m.material != "water")
    h_conv = free_convection_coefficient()
    # the floor also radiates to the inside of the cover, the share the cover does not pass
    tau = house.roof_material.longwave_transmittance
    h_rad = EMISSIVITY_FLOOR * 4.0 * SIGMA * 273.15**3 * (1.0 - tau)
    mass_area = sum(m.area_m2 for m in house.masses)
    coupling = (h_conv + h_rad) * area + h_conv * mass_area
    deep = house.deep_ground_temperature_c
    return Capacities(
        air_j_per_k=c_air,
        soil_j_per_k=c_soil,
        water_j_per_k=water,
        other_mass_j_per_k=other,
        air_mass_w_per_k=coupling,
        ground_w_per_k=k_soil / DEEP_GROUND_DEPTH_M * area,
        deep_ground_c=DEEP_GROUND_DEFAULT_C if deep is None else deep,
        deep_ground_assumed=deep is None,
    )


def time_constant_s(capacitance_j_per_k: float, conductance_w_per_k: float) -> float:
    """τ = C/K [s]."""
    if conductance_w_per_k <= 0 or not math.isfinite(conductance_w_per_k):
        raise ValueError(f"conductance_w_per_k must be positive, got {conductance_w_per_k}")
    return capacitance_j_per_k / conductance_w_per_k


@dataclass(frozen=True)
class HouseSummary:
    """What `grower house` reports: the envelope, K and C at a calm, clear night."""

    house: House
    conductances: Conductances
    capacities: Capacities

    @property
    def k_w_per_k(self) -> float:
        return self.conductances.total_w_per_k

    @property
    def c_j_per_k(self) -> float:
        return self.capacities.total_j_per_k

    @property
    def time_constant_h(self) -> float:
        return time_constant_s(self.c_j_per_k, self.k_w_per_k) / 3600.0


def describe(house: House, *, wind_m_s: float = 0.0) -> HouseSummary:
    """K and C of `house` on a calm, clear night with the curtain (if any) drawn.

    The sky exchange is linearised about a mean radiant temperature of −10 °C (floor near
    0 °C, clear sky near −20 °C); `tonight` recomputes it from the night's own numbers.
    """
    cond = conductances(house, wind_m_s=wind_m_s, curtain_closed=True)
    return HouseSummary(house, cond, capacities(house, rho_cp_j_m3k=cond.rho_cp_j_m3k))
