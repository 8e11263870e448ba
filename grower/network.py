"""From a house (and the night's conditions) to a linear thermal network.

What is counted where
---------------------
Handbook U-values of greenhouse covers are overall coefficients from the inside air to
the outside air, surface films included, measured or computed with the surroundings at
the outside-air temperature: they already hold the usual long-wave loss of the crop,
floor and cover. So the house's conductance to outside K_c is the trade's sum

- cover Σ U_i·A_i over roof, side, end and knee walls, each its own material;
- air exchange ρ·c_p·V·N/3600 (N air changes per hour), ρ·c_p of ASHRAE's standard air
  at the site's pressure (`air_volumetric_heat_capacity`);
- perimeter (foundation) loss F·P;
- an energy curtain, closed at night, cuts the conduction of roof and walls above the
  knee wall by its saving fraction and blocks the share of long-wave it does not pass.

and grower adds only what a clear night takes *beyond* that: the sky is colder than the
outside air, so every path that radiates to it loses more than the U-value says. Two
such paths, each linearised and each in series with the film that feeds it:

- floor and crop through an IR-passing cover: K_r = A_floor·τ_lw·ε·4σT̄³ from the floor
  to the sky, fed from the air through the floor film g, so that the air loses
  K_fs·(T_out − T_sky) more, K_fs = g·K_r/(g + K_r) (`floor_sky_share`);
- the outer surface of the cover itself (glass and other IR-opaque covers radiate from
  their own outside face): K_cs = A·u_in·h_r/(u_in + h_o), u_in the conductance from the
  inside air to the outer face, h_o the outside film (`cover_sky_excess`).

With T_sky = T_out (a low overcast) both vanish and the model is the trade's Σ U·A·ΔT.

Wind. The table U-values hold at the winter design wind of 15 mph (6.7 m/s): that is
the wind of the winter outside surface conductance in the ASHRAE tables they come from
(h_o = 6 Btu/h·ft²·°F at 15 mph, ASHRAE Handbook Fundamentals, surface conductances —
from memory), and the Rutgers method adjusts them only for wind above 15 mph (A.J. Both,
"Greenhouse Energy Efficiency (Heating)", Rutgers NJAES). At the night's own wind the
outside film of the conductive part of U is swapped for Bot's convective coefficient
plus the cover face's radiation (`wind_u_value`); the part of U that is radiation
passing straight through the cover (K_fs spread over the cover) does not depend on wind.

Two nodes. The air node holds the air, the light structure and the canopy; it loses
K_c − K_fs − K_cs to the outside air and K_cs to the sky. The mass node holds the
floor's active layer and any water, stone or benches; it radiates K_r to the sky,
conducts k/d·A to the deep ground and is coupled to the air by g = h·A. In steady state
with no ground this is exactly K_c·(T_air − T_out) + (K_fs + K_cs)·(T_out − T_sky).
`lumped_reduction` gives the one-node model of the same network.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from grower.house import FLOORS, House
from grower.units import W_PER_BTU_H

#: Stefan–Boltzmann constant [W m-2 K-4] (CODATA 2018, exact in the 2019 SI)
SIGMA = 5.670374419e-8
#: specific heat of dry air [J kg-1 K-1] — ASHRAE Handbook Fundamentals (2017) ch. 1
CP_DRY_AIR = 1006.0
#: density of ASHRAE "standard air" [kg m-3]: dry air at 20 °C and 101.325 kPa, the air
#: of volumetric heat-loss figures (ASHRAE Handbook Fundamentals, ch. 1 — from memory);
#: ρ·c_p/3600 = 0.3365 W/(m³·K) per air change, the trade's 0.335 (REFERENCES: derived
#: from ρ = 1.2 kg/m³ and c_p = 1006 J/kg·K)
RHO_STANDARD_AIR = 1.204
#: long-wave emissivity of soil and crop (common practice, no source; 0.93–0.98 typical)
EMISSIVITY_FLOOR = 0.95
#: winter design wind at which the table U-values hold [m/s] (15 mph; see module notes)
WIND_REFERENCE_M_S = 15 * 0.44704
#: perimeter loss factor F: 0.8 Btu/h·ft·°F uninsulated, 0.4 insulated (ASHRAE / ASAE
#: EP406 as recalled — from memory), converted exactly [W m-1 K-1]
PERIMETER_UNINSULATED_W_MK = 0.8 * W_PER_BTU_H / 0.3048 * 1.8
PERIMETER_INSULATED_W_MK = 0.4 * W_PER_BTU_H / 0.3048 * 1.8
#: the daily cycle's angular frequency [rad s-1]
OMEGA_DAY = 2.0 * math.pi / 86400.0
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
#: share of the long-wave a cover passes that still passes with condensate on its inside:
#: "a condensate film on poly can cut radiation loss by up to half" (University of
#: Wisconsin Extension, A3907); a closed house over moist soil or a crop runs its film wet
#: on a clear night (Savage 1980, *Agrochemophysica* 12:5–13: a tunnel stayed colder than
#: outside only until condensation formed). `CONDENSATION_LW_FACTOR_DRY` = 1 for a dry film.
CONDENSATION_LW_FACTOR = 0.5
CONDENSATION_LW_FACTOR_DRY = 1.0


def air_volumetric_heat_capacity(pressure_pa: float = 101325.0) -> float:
    """ρ·c_p of the exchanged air [J m-3 K-1]: standard air scaled to the site's pressure.

    1.204 kg/m³ × 1006 J/kg·K = 1211 J/m³·K at sea level. The air exchanged is counted as
    standard air, as the trade's 0.335 W/(m³·K) per air change counts it, rather than at
    the outside temperature (which would add 7–15 % on a frost night and make grower's
    figure disagree with every heating bulletin for no gain in truth: air-change rates are
    themselves known to ±50 %).

    References
    ----------
    ASHRAE Handbook — Fundamentals (2017), ch. 1 "Psychrometrics" (standard air, dry-air
    c_p); the same ideal-gas relation as psychrolib's ``GetDryAirDensity``.
    """
    return RHO_STANDARD_AIR * CP_DRY_AIR * pressure_pa / 101325.0


def infiltration_conductance(
    volume_m3: float, air_changes_per_hour: float, rho_cp_j_m3k: float
) -> float:
    """ρ·c_p·V·N/3600 [W K-1]: the heat carried out by N air changes per hour."""
    return rho_cp_j_m3k * volume_m3 * air_changes_per_hour / 3600.0


def outside_film_coefficient(wind_m_s: float | np.ndarray) -> float | np.ndarray:
    """Convective film coefficient on the outside of a greenhouse cover [W m-2 K-1].

    h = 2.8 + 1.2·v for v < 4 m/s, 2.5·v^0.8 above (v the wind speed [m s-1]).

    References
    ----------
    Bot, G. P. A. (1983). *Greenhouse climate: from physical processes to a dynamic
    model*. PhD thesis, Wageningen (attribution from memory); as used by Taki, M.,
    Ajabshirchi, Y., Ranjbar, S. F., Rohani, A., Matloobi, M. (2016). Heat transfer and
    MLP neural network models to predict inside environment variables and energy lost in
    a semi-solar greenhouse. *Energy and Buildings* 110, 314–329.
    """
    v = np.asarray(wind_m_s, dtype=float)
    h = np.where(v < 4.0, 2.8 + 1.2 * v, 2.5 * np.maximum(v, 4.0) ** 0.8)
    return float(h) if h.ndim == 0 else h


def radiative_coefficient(emissivity: float, mean_temp_c: float) -> float:
    """Linearised long-wave coefficient ε·4σT̄³ [W m-2 K-1] about T̄ [°C]."""
    return emissivity * 4.0 * SIGMA * (mean_temp_c + 273.15) ** 3


def wind_u_value(
    u_conductive_w_m2k: float, wind_m_s: float, face_radiation_w_m2k: float = 0.0
) -> float:
    """The conductive part of a table U at a wind speed [W m-2 K-1].

    The table value holds at `WIND_REFERENCE_M_S`; its outside film (Bot's convective
    coefficient plus the face's radiation `face_radiation_w_m2k`) is swapped for the
    film at `wind_m_s`: 1/U = 1/U_table − 1/h_o(v_ref) + 1/h_o(v). Calm air gives a
    smaller U than the table, a gale a larger one.
    """
    h_ref = outside_film_coefficient(WIND_REFERENCE_M_S) + face_radiation_w_m2k
    h_now = outside_film_coefficient(max(wind_m_s, 0.0)) + face_radiation_w_m2k
    rest = max(1.0 / u_conductive_w_m2k - 1.0 / h_ref, 0.0)
    return 1.0 / (rest + 1.0 / h_now)


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
    """Linearised long-wave exchange of the floor with the sky through the cover [W K-1].

    K_r = A_floor·τ_lw·ε·4σT̄³, T̄ the mean of the floor and sky temperatures [°C].
    """
    return (
        floor_area_m2
        * longwave_transmittance
        * radiative_coefficient(emissivity, mean_radiant_temp_c)
    )


def floor_sky_share(floor_film_w_per_k: float, k_floor_sky_w_per_k: float) -> float:
    """g·K_r/(g + K_r) [W K-1]: the floor's radiation to the sky as seen from the air.

    The floor surface settles between the air (film g) and the sky (K_r); the heat it
    draws from the air changes by this conductance times any change of the sky end.
    """
    g, k = floor_film_w_per_k, k_floor_sky_w_per_k
    return g * k / (g + k) if g + k > 0 else 0.0


def cover_sky_excess(
    area_m2: float, u_inside_w_m2k: float, wind_m_s: float, face_radiation_w_m2k: float
) -> float:
    """Extra loss per kelvin of sky below the outside air through a cover's own face [W K-1].

    The outer face sits between the inside (u_in: the inside film, convective plus the
    floor's radiation the cover absorbs) and the outside (Bot's convective film h_c to the
    air and the face's h_r to the sky); the heat it draws from the inside grows by
    A·u_in·h_r/(u_in + h_c + h_r) per kelvin of sky depression.
    """
    if face_radiation_w_m2k <= 0.0 or u_inside_w_m2k <= 0.0:
        return 0.0
    h_o = outside_film_coefficient(max(wind_m_s, 0.0)) + face_radiation_w_m2k
    return area_m2 * u_inside_w_m2k * face_radiation_w_m2k / (u_inside_w_m2k + h_o)


def effective_outside(
    k_outside_w_per_k: float, k_sky_w_per_k: float, temp_out_c, temp_sky_c
) -> np.ndarray:
    """T_eff = (K_out·T_out + K_sky·T_sky)/(K_out + K_sky) [°C], element-wise."""
    k = k_outside_w_per_k + k_sky_w_per_k
    return (
        k_outside_w_per_k * np.asarray(temp_out_c, dtype=float)
        + k_sky_w_per_k * np.asarray(temp_sky_c, dtype=float)
    ) / k


@dataclass(frozen=True)
class SurfaceLoss:
    """Conduction through one envelope surface at one wind and curtain state."""

    name: str
    material_key: str
    material_label: str
    area_m2: float
    u_table_w_m2k: float  # the table's U (at the design wind), as published
    u_w_m2k: float  # U at this wind and curtain state, against outside air
    ua_w_per_k: float
    sky_excess_w_per_k: float  # the cover face's own exchange with the sky (K_cs share)


@dataclass(frozen=True)
class Conductances:
    """The house's conductances at one set of conditions [W K-1]."""

    surfaces: tuple[SurfaceLoss, ...]
    cover_w_per_k: float  # Σ U·A at this wind (radiation at air temperature included)
    infiltration_w_per_k: float
    perimeter_w_per_k: float
    floor_sky_w_per_k: float  # K_r: floor to sky, linearised, the whole exchange
    floor_sky_share_w_per_k: float  # K_fs = g·K_r/(g + K_r), held in cover_w_per_k
    cover_sky_w_per_k: float  # K_cs: the cover faces' excess exchange with the sky
    air_mass_w_per_k: float  # g, the floor and mass films
    air_changes_per_hour: float
    wind_m_s: float
    curtain_closed: bool
    rho_cp_j_m3k: float

    @property
    def conduction_w_per_k(self) -> float:
        """K_c: the trade's conductance to outside air (cover, air exchange, perimeter)."""
        return self.cover_w_per_k + self.infiltration_w_per_k + self.perimeter_w_per_k

    @property
    def sky_w_per_k(self) -> float:
        """K_s = K_fs + K_cs: the extra loss per kelvin of sky below the outside air."""
        return self.floor_sky_share_w_per_k + self.cover_sky_w_per_k

    @property
    def outside_w_per_k(self) -> float:
        """The part of K that ends at the outside air: K_c − K_s."""
        return self.conduction_w_per_k - self.sky_w_per_k

    @property
    def total_w_per_k(self) -> float:
        """K = K_c, to the effective outside temperature T_eff."""
        return self.conduction_w_per_k


def air_mass_coupling(house: House, longwave_transmittance: float | None = None) -> float:
    """g [W K-1]: the floor's convective film and its radiation to the cover's inside
    (the share the cover does not pass), plus the convective film of any mass surfaces.

    Free-convection coefficient 1.7·ΔT^(1/3) W/m²·K for air colder than the soil (Taki et
    al. 2016, see `outside_film_coefficient`), at a design difference of 3 K.
    """
    tau = house.roof_material.longwave_transmittance
    if longwave_transmittance is not None:
        tau = longwave_transmittance
    h_conv = free_convection_coefficient()
    h_rad = radiative_coefficient(EMISSIVITY_FLOOR, 0.0) * (1.0 - tau)
    mass_area = sum(m.area_m2 for m in house.masses)
    return (h_conv + h_rad) * house.floor_area_m2 + h_conv * mass_area


def _cover_emissivity(longwave_transmittance: float) -> float:
    """Long-wave emissivity of a cover's outer face where its table gives none: 1 − τ_lw,
    reflectance neglected, at most 0.9 (Kirchhoff's law; most building materials are near
    0.9 — common practice, no source)."""
    return min(max(1.0 - longwave_transmittance, 0.0), 0.9)


def conductances(
    house: House,
    *,
    wind_m_s: float = 0.0,
    curtain_closed: bool = False,
    mean_radiant_temp_c: float = -10.0,
    cover_temp_c: float = 0.0,
    condensation_factor: float = CONDENSATION_LW_FACTOR,
) -> Conductances:
    """Conductances of `house` at a wind speed and curtain state.

    Parameters
    ----------
    wind_m_s : float
        Wind at 10 m [m s-1]: the outside film of every cover follows it (the table
        U-values hold at 15 mph); air exchange is raised above the design wind.
    curtain_closed : bool
        Whether the house's energy curtain (if any) is drawn.
    mean_radiant_temp_c : float
        Mean of floor and sky temperature for the linearised floor–sky exchange [°C].
    cover_temp_c : float
        About the outside air temperature: linearises the cover faces' radiation [°C].
    """
    pressure = house.site.pressure_hpa * 100.0 if house.site else 101325.0
    rho_cp = air_volumetric_heat_capacity(pressure)
    curtain = house.curtain if (house.curtain and curtain_closed) else None
    keep = 1.0 - curtain.curtain.saving_fraction if curtain else 1.0
    tau_floor = house.roof_material.longwave_transmittance * condensation_factor
    if curtain:
        tau_floor *= curtain.curtain.longwave_transmittance
    g = air_mass_coupling(house)
    k_r = sky_conductance(house.floor_area_m2, tau_floor, mean_radiant_temp_c)
    k_fs = floor_sky_share(g, k_r)
    # the radiation passing straight through the cover, spread over the surfaces that pass it
    weights = [s.material.longwave_transmittance * s.area_m2 for s in house.surfaces]
    total_weight = sum(weights)
    losses = []
    for s, w in zip(house.surfaces, weights, strict=True):
        through = k_fs * w / total_weight / s.area_m2 if total_weight > 0 and s.area_m2 > 0 else 0.0
        eps_face = s.material.outer_emissivity
        if eps_face is None:
            eps_face = _cover_emissivity(s.material.longwave_transmittance)
        h_face = radiative_coefficient(eps_face, cover_temp_c)
        u_cond = max(s.material.u_w_m2k - through, 0.05 * s.material.u_w_m2k)
        u_cond = wind_u_value(u_cond, wind_m_s, h_face)
        # inside the outer face: at most the inside film (convection and the floor's
        # radiation the cover absorbs), at most what the table U leaves inside its film
        h_ref = outside_film_coefficient(WIND_REFERENCE_M_S) + h_face
        backed_out = 1.0 / max(1.0 / s.material.u_w_m2k - 1.0 / h_ref, 1e-9)
        u_inside = min(
            free_convection_coefficient()
            + radiative_coefficient(eps_face * EMISSIVITY_FLOOR, cover_temp_c),
            backed_out,
        )
        if curtain and s.name != "knee walls":
            u_cond *= keep  # the knee wall stands below the curtain
            u_inside *= keep
        u = u_cond + through
        excess = cover_sky_excess(s.area_m2, u_inside, wind_m_s, h_face)
        losses.append(
            SurfaceLoss(
                s.name,
                s.material.key,
                s.material.label,
                s.area_m2,
                s.material.u_w_m2k,
                u,
                u * s.area_m2,
                excess,
            )
        )
    ach = wind_air_changes(house.air_changes_per_hour, wind_m_s)
    f = PERIMETER_INSULATED_W_MK if house.perimeter_insulated else PERIMETER_UNINSULATED_W_MK
    return Conductances(
        surfaces=tuple(losses),
        cover_w_per_k=sum(x.ua_w_per_k for x in losses),
        infiltration_w_per_k=infiltration_conductance(house.volume_m3, ach, rho_cp),
        perimeter_w_per_k=f * house.envelope.perimeter_m,
        floor_sky_w_per_k=k_r,
        floor_sky_share_w_per_k=k_fs,
        cover_sky_w_per_k=sum(x.sky_excess_w_per_k for x in losses),
        air_mass_w_per_k=g,
        air_changes_per_hour=ach,
        wind_m_s=wind_m_s,
        curtain_closed=curtain is not None,
        rho_cp_j_m3k=rho_cp,
    )


def handbook_conductance(house: House) -> float:
    """The trade's K [W K-1]: Σ U·A with the tables' U-values as published, the house's
    air changes at standard air, and the perimeter; curtain open, no wind or sky term.

    References
    ----------
    A.J. Both, "Greenhouse Energy Efficiency (Heating)", Rutgers NJAES: total heat loss =
    structural (U·A·ΔT) + infiltration + perimeter.
    """
    pressure = house.site.pressure_hpa * 100.0 if house.site else 101325.0
    cover = sum(s.material.u_w_m2k * s.area_m2 for s in house.surfaces)
    air = infiltration_conductance(
        house.volume_m3, house.air_changes_per_hour, air_volumetric_heat_capacity(pressure)
    )
    f = PERIMETER_INSULATED_W_MK if house.perimeter_insulated else PERIMETER_UNINSULATED_W_MK
    return cover + air + f * house.envelope.perimeter_m


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
    active_layer_m: float  # the floor's storage depth for a daily cycle

    @property
    def mass_j_per_k(self) -> float:
        return self.soil_j_per_k + self.water_j_per_k + self.other_mass_j_per_k

    @property
    def total_j_per_k(self) -> float:
        """All of the heat capacity, air and mass, in one sum."""
        return self.air_j_per_k + self.mass_j_per_k


def free_convection_coefficient(delta_k: float = FILM_DELTA_K) -> float:
    """Air-to-floor film coefficient 1.7·ΔT^(1/3) [W m-2 K-1] (air colder than soil).

    References
    ----------
    Taki et al. (2016), *Energy and Buildings* 110, 314–329 (see
    `outside_film_coefficient`).
    """
    return 1.7 * delta_k ** (1.0 / 3.0)


def active_layer_depth(volumetric_heat_capacity_j_m3k: float, conductivity_w_mk: float) -> float:
    """Depth of floor that stores the daily cycle: the damping depth √(2α/ω) [m], α = k/ρc.

    The daily temperature wave falls to 1/e of its surface swing at this depth; it lies
    between the storage of a sine, √(α/ω), and that of one night's cooling step,
    2·√(α·t/π) for t = 14 h (0.087 m and 0.19 m for moist soil with α = 0.047 m²/day;
    the damping depth is 0.12 m). For α = 0.034 m²/day it is the 0.10 m usually quoted.

    References
    ----------
    Carslaw, H. S., & Jaeger, J. C. (1959). *Conduction of Heat in Solids*, 2nd ed.,
    §2.6 (periodic surface temperature) and §2.5 (a step at the surface) — from memory.
    """
    alpha = conductivity_w_mk / volumetric_heat_capacity_j_m3k
    return math.sqrt(2.0 * alpha / OMEGA_DAY)


def capacities(house: House, *, rho_cp_j_m3k: float | None = None) -> Capacities:
    """Heat capacities and couplings of `house` (two-node split)."""
    rho_cp = rho_cp_j_m3k if rho_cp_j_m3k is not None else air_volumetric_heat_capacity()
    area = house.floor_area_m2
    c_air = rho_cp * house.volume_m3 + LIGHT_STRUCTURE_J_PER_M2K * area
    rho_c_soil, k_soil = FLOORS[house.floor_kind][:2]
    depth = active_layer_depth(rho_c_soil, k_soil)
    water = sum(m.capacitance_j_per_k for m in house.masses if m.material == "water")
    other = sum(m.capacitance_j_per_k for m in house.masses if m.material != "water")
    deep = house.deep_ground_temperature_c
    return Capacities(
        air_j_per_k=c_air,
        soil_j_per_k=rho_c_soil * depth * area,
        water_j_per_k=water,
        other_mass_j_per_k=other,
        air_mass_w_per_k=air_mass_coupling(house),
        ground_w_per_k=k_soil / DEEP_GROUND_DEPTH_M * area,
        deep_ground_c=DEEP_GROUND_DEFAULT_C if deep is None else deep,
        deep_ground_assumed=deep is None,
        active_layer_m=depth,
    )


@dataclass(frozen=True)
class LumpedReduction:
    """The one-node model of the two-node network."""

    capacitance_j_per_k: float  # air + the part of the mass that follows the air
    outside_w_per_k: float  # to the outside air
    sky_w_per_k: float  # to the sky: the cover faces, and the floor through its film
    deep_ground_w_per_k: float  # to the deep ground, through the floor


def lumped_reduction(cond: Conductances, caps: Capacities) -> LumpedReduction:
    """Eliminate the mass node: one node with the air's capacity and the mass's share.

    The mass node (capacity C_m, film g to the air, K_r to the sky, K_g to the deep
    ground, S = g + K_r + K_g) is reduced exactly in steady state (star–mesh): the air
    sees the sky through g·K_r/S and the deep ground through g·K_g/S. Its capacity, seen
    from the air at the daily frequency ω, is the imaginary part of the mass branch's
    admittance g − g²/(S + iωC_m), divided by ω: C_eff = g²·C_m/(S² + ω²C_m²) — the part
    of the mass that follows the air over a day and a night. Lumped and two-node hold the
    same steady heat; they differ only in how the soil's store is drawn on overnight.
    """
    g, k_r, k_g = caps.air_mass_w_per_k, cond.floor_sky_w_per_k, caps.ground_w_per_k
    s = g + k_r + k_g
    k_sky = cond.cover_sky_w_per_k + g * k_r / s
    k_deep = g * k_g / s
    return LumpedReduction(
        capacitance_j_per_k=caps.air_j_per_k + (g / s) ** 2 * caps.mass_j_per_k,
        outside_w_per_k=cond.outside_w_per_k,
        sky_w_per_k=k_sky,
        deep_ground_w_per_k=k_deep,
    )


def time_constant_s(capacitance_j_per_k: float, conductance_w_per_k: float) -> float:
    """τ = C/K [s]."""
    if conductance_w_per_k <= 0 or not math.isfinite(conductance_w_per_k):
        raise ValueError(f"conductance_w_per_k must be positive, got {conductance_w_per_k}")
    return capacitance_j_per_k / conductance_w_per_k


def two_node_time_constants_s(cond: Conductances, caps: Capacities) -> tuple[float, float]:
    """The two-node network's time scales (−1/eigenvalue) [s]: the air's (minutes) and
    the mass's (hours to days), fast first."""
    g = caps.air_mass_w_per_k
    a = np.array(
        [
            [
                -(cond.outside_w_per_k + cond.cover_sky_w_per_k + g) / caps.air_j_per_k,
                g / caps.air_j_per_k,
            ],
            [
                g / caps.mass_j_per_k,
                -(g + cond.floor_sky_w_per_k + caps.ground_w_per_k) / caps.mass_j_per_k,
            ],
        ]
    )
    lam = np.sort(np.linalg.eigvals(a).real)  # most negative first
    return float(-1.0 / lam[0]), float(-1.0 / lam[1])


@dataclass(frozen=True)
class HouseSummary:
    """What `grower house` reports: the envelope at the design wind (the tables' U),
    K in calm air, the trade's K, and the capacities and time scales."""

    house: House
    conductances: Conductances  # at the 15 mph design wind, curtain drawn if any
    calm: Conductances  # in calm air, curtain drawn if any
    capacities: Capacities
    handbook_w_per_k: float

    @property
    def k_w_per_k(self) -> float:
        return self.conductances.total_w_per_k

    @property
    def c_j_per_k(self) -> float:
        return self.capacities.total_j_per_k

    @property
    def time_constant_h(self) -> float:
        """C/K with all of C in one node [h]: how long the whole store lasts."""
        return time_constant_s(self.c_j_per_k, self.k_w_per_k) / 3600.0

    @property
    def time_scales_h(self) -> tuple[float, float]:
        """The air's and the mass's own time scales in calm air [h]."""
        fast, slow = two_node_time_constants_s(self.calm, self.capacities)
        return fast / 3600.0, slow / 3600.0


def describe(house: House, *, wind_m_s: float | None = None) -> HouseSummary:
    """K and C of `house`: at `wind_m_s` (default the 15 mph design wind, where the
    table U-values hold) and in calm air, curtain drawn (if any); the sky exchange
    linearised about −10 °C (floor near 0 °C, a clear sky near −20 °C); `tonight`
    recomputes it from the night's own numbers."""
    wind = WIND_REFERENCE_M_S if wind_m_s is None else wind_m_s
    cond = conductances(house, wind_m_s=wind, curtain_closed=True)
    calm = conductances(house, wind_m_s=0.0, curtain_closed=True)
    caps = capacities(house, rho_cp_j_m3k=cond.rho_cp_j_m3k)
    return HouseSummary(house, cond, calm, caps, handbook_conductance(house))
