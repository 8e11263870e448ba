"""Fuels: heating values against the published figures, units against pint, containers,
amounts, parsing (the cautions are in test_safety.py).

Check values are computed from the figure each source printed, never typed in from
elsewhere; tolerances are the printed precision of the source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from grower.errors import InputError
from grower.fuels import (
    UNITS,
    FuelAmount,
    appliance_for,
    containers_needed,
    fuel_amount,
    fuel_per_hour,
    get_appliance,
    get_fuel,
    load_fuels,
    parse_amount,
)
from grower.units import J_PER_BTU, W_PER_BTU_H

from .reference_units import UREG

MMBTU_J = 1e6 * J_PER_BTU
# pint's Btu is 1055.056 J, the International Table Btu rounded (grower uses 1055.05585262):
# conversions through Btu agree with pint to a few parts in 10⁷.
PINT_BTU_RTOL = 1e-6


def pint_j(value: float, unit: str) -> float:
    return UREG.Quantity(value, unit).to("J").magnitude


# ---------------------------------------------------------------- heating values


def test_propane_gallons_for_one_million_btu():
    # US EIA: propane 91,452 Btu/gal. 1 MMBtu = 1e6 / 91,452 = 10.93 gal (2 decimals).
    amount = fuel_amount(MMBTU_J, "propane", 1.0)
    assert amount.unit == "gal"
    assert amount.amount == pytest.approx(1e6 / 91452, rel=1e-12)
    assert round(amount.amount, 2) == 10.93
    assert get_fuel("lp").heating_value.value == 91452
    assert get_fuel("lp").year is not None


def test_heating_oil_gallons_for_one_million_btu():
    # US EIA energy conversion calculator: distillate (≤15 ppm S) 137,381 Btu/gal, 2021.
    amount = fuel_amount(MMBTU_J, "oil", 1.0)
    assert amount.amount == pytest.approx(1e6 / 137381, rel=1e-12)
    assert round(amount.amount, 2) == 7.28
    assert get_fuel("no2").year == 2021


def test_natural_gas_therms_and_cubic_feet():
    # 1 therm = 100,000 Btu exactly; EIA 2021: 1,039 Btu per cubic foot delivered.
    assert fuel_amount(MMBTU_J, "gas", 1.0).amount == pytest.approx(10.0, rel=1e-12)
    assert fuel_amount(MMBTU_J, "natural-gas", 1.0, unit="ft3").amount == pytest.approx(
        1e6 / 1039, rel=1e-12
    )
    assert fuel_amount(MMBTU_J, "natural gas", 1.0, unit="ccf").amount == pytest.approx(
        1e4 / 1039, rel=1e-12
    )
    assert get_fuel("gas").year == 2021


def test_electricity_kwh_matches_eia_3412_btu():
    # EIA quotes 3,412 Btu/kWh, the SI kWh (3.6 MJ) rounded to whole Btu: agreement to
    # half a Btu in 3,412 (1.5e-4).
    amount = fuel_amount(MMBTU_J, "electric", 1.0)
    assert amount.unit == "kWh"
    assert amount.amount == pytest.approx(1e6 / 3412, rel=1.5e-4)
    assert amount.amount == pytest.approx(pint_j(1e6, "Btu") / pint_j(1, "kWh"), rel=PINT_BTU_RTOL)


def test_kerosene_and_pellets():
    # UMass Extension (Bartok) / EIA Table A1: kerosene 135,000 Btu/gal (5.67 MMBtu per
    # 42-gal barrel). UConn IPM, Bartok 2013: pellets 8,200 Btu/lb.
    assert fuel_amount(MMBTU_J, "kerosene", 1.0).amount == pytest.approx(1e6 / 135000)
    # ... and against Table A1 at its printed precision (5.67: ±0.005 in 5.67, 0.09 %)
    assert get_fuel("kerosene").j_per("gal") == pytest.approx(5.67e6 / 42 * J_PER_BTU, rel=9e-4)
    assert fuel_amount(MMBTU_J, "pellets", 1.0).amount == pytest.approx(1e6 / 8200)
    assert get_fuel("pellets").year == 2013


def test_where_two_sources_differ_the_other_is_named():
    # NRCan: propane 25.3 MJ/L, natural gas 37.5 MJ/m³. EIA's figures are stored; NRCan's
    # lie 0.7 % and 3 % lower, and the data note says so.
    propane, gas = get_fuel("propane"), get_fuel("natural-gas")
    assert propane.j_per("L") / 25.3e6 == pytest.approx(1.0075, abs=0.001)
    assert gas.j_per("m3") / 37.5e6 == pytest.approx(1.032, abs=0.001)
    assert "25.3 MJ/L" in propane.heating_value.note and "91,333" in propane.heating_value.note
    assert "37.5 MJ/m³" in gas.heating_value.note
    assert "138,500" in get_fuel("oil").heating_value.note


def test_efficiency_divides():
    # amount = energy ÷ (heating value × efficiency)
    at_80 = fuel_amount(MMBTU_J, "propane", 0.8)
    assert at_80.amount == pytest.approx(1e6 / 91452 / 0.8)
    assert (at_80.efficiency, at_80.heating_value_j_per_unit) == (0.8, 91452 * J_PER_BTU)
    arr = fuel_amount(np.array([0.0, MMBTU_J, 2 * MMBTU_J]), "propane", 1.0)
    np.testing.assert_allclose(arr.amount, np.array([0, 1, 2]) * 1e6 / 91452)


def test_bad_arguments_are_value_errors():
    for eff in (0.0, 1.2, -0.5):
        with pytest.raises(ValueError, match="efficiency"):
            fuel_amount(1e6, "propane", eff)
    with pytest.raises(ValueError, match="energy_j"):
        fuel_amount(-1.0, "propane", 0.8)
    with pytest.raises(ValueError, match="energy_j"):
        fuel_amount(np.array([1.0, np.nan]), "propane", 0.8)


# ---------------------------------------------------------------- units


@pytest.mark.parametrize(
    ("fuel", "unit", "pint_unit"),
    [
        ("propane", "L", "liter"),
        ("heating-oil", "L", "liter"),
        ("kerosene", "L", "liter"),
        ("natural-gas", "m3", "meter**3"),
        ("natural-gas", "ccf", "100 * foot**3"),
    ],
)
def test_volume_units_against_pint(fuel, unit, pint_unit):
    f = get_fuel(fuel)
    base = f.heating_value.unit.split("/")[1]  # the unit the heating value was printed in
    per_base = f.j_per(base)
    ratio = UREG.parse_expression(pint_unit).to({"gal": "gallon", "ft3": "foot**3"}[base]).magnitude
    assert f.j_per(unit) == pytest.approx(per_base * ratio, rel=1e-12)


@pytest.mark.parametrize(
    ("unit", "pint_unit"),
    [("kg", "kilogram"), ("ton", "short_ton"), ("tonne", "metric_ton")],
)
def test_mass_units_against_pint(unit, pint_unit):
    pellets = get_fuel("pellets")
    lb_per = UREG.Quantity(1, pint_unit).to("pound").magnitude
    assert pellets.j_per(unit) == pytest.approx(pellets.j_per("lb") * lb_per, rel=1e-12)


@pytest.mark.parametrize(
    ("fuel", "unit", "pint_unit"),
    [
        ("natural-gas", "therm", "therm"),  # pint's "therm" is the 100,000 Btu (IT) therm
        ("natural-gas", "GJ", "GJ"),
        ("electricity", "kWh", "kWh"),
        ("electricity", "MJ", "MJ"),
    ],
)
def test_energy_units_against_pint(fuel, unit, pint_unit):
    assert get_fuel(fuel).j_per(unit) == pytest.approx(pint_j(1, pint_unit), rel=PINT_BTU_RTOL)


def test_heating_values_in_their_printed_units_against_pint():
    for fuel in load_fuels().fuels:
        hv = fuel.heating_value
        top, bottom = hv.unit.split("/")
        pint_top = {"Btu": "Btu", "MJ": "MJ"}[top]
        pint_bottom = {"gal": "gallon", "ft3": "foot**3", "lb": "pound", "kWh": "kWh"}[bottom]
        expected = UREG.Quantity(hv.value, f"{pint_top}/({pint_bottom})")
        if bottom == "kWh":
            got = fuel.j_per("kWh")
            assert got == pytest.approx(expected.to("J/kWh").magnitude, rel=PINT_BTU_RTOL)
            continue
        si = "J/m**3" if bottom in ("gal", "ft3") else "J/kg"
        factor = UREG.Quantity(1, pint_bottom).to_base_units().magnitude
        assert fuel.j_per(bottom) / factor == pytest.approx(
            expected.to(si).magnitude, rel=PINT_BTU_RTOL
        ), fuel.name


def test_propane_by_weight_uses_the_stated_density():
    propane = get_fuel("propane")
    density = propane.density
    assert density is not None and density.basis == "from memory"
    assert propane.j_per("lb") == pytest.approx(propane.j_per("gal") / density.value)
    assert propane.j_per("kg") == pytest.approx(propane.j_per("lb") / 0.45359237)


# ---------------------------------------------------------------- the table's bases


def test_every_row_has_a_basis():
    table = load_fuels()
    rows = [f.heating_value for f in table.fuels]
    rows += [f.density for f in table.fuels if f.density]
    rows += [a.basis for a in table.appliances]
    for f in table.fuels:
        for c in f.containers:
            rows.append(c.basis)
            if c.fill_fraction:
                rows.append(c.fill_fraction)
    assert len(rows) > 15
    for row in rows:
        assert row.basis in ("source", "common practice", "from memory"), row
        assert row.basis_text.strip()


def test_agency_heating_values_carry_a_year():
    for fuel in load_fuels().fuels:
        if "EIA" in fuel.source.split(";")[0] or "Bartok, 'Comparing" in fuel.source:
            assert isinstance(fuel.year, int) and 2000 < fuel.year < 2100, fuel.name


def test_efficiencies_are_in_range_and_sourced_where_published():
    table = load_fuels()
    for a in table.appliances:
        assert 0 < a.efficiency <= 1, a.name
    # Manitoba Hydro, "Types of unit heaters": power-vented ≈ 80 %, condensing ≈ 90 %
    assert get_appliance("unit-heater-power-vented").efficiency == 0.80
    assert get_appliance("unit-heater-condensing").efficiency == 0.90
    assert "Manitoba Hydro" in get_appliance("unit-heater-condensing").basis.basis_text
    for f in table.fuels:
        assert f.name in get_appliance(f.default_appliance).fuels


def test_appliance_must_burn_the_fuel():
    assert appliance_for("propane").name == "unit-heater-power-vented"
    with pytest.raises(InputError, match="does not run on"):
        appliance_for("electricity", "boiler")
    with pytest.raises(InputError, match='unknown heater type "boilr".*did you mean "boiler"'):
        get_appliance("boilr")


# ---------------------------------------------------------------- names


@pytest.mark.parametrize(
    ("alias", "name"),
    [
        ("lp", "propane"), ("LPG", "propane"), ("propane", "propane"),
        ("gas", "natural-gas"), ("natural-gas", "natural-gas"), ("Natural Gas", "natural-gas"),
        ("oil", "heating-oil"), ("heating-oil", "heating-oil"), ("no2", "heating-oil"),
        ("No. 2", "heating-oil"), ("kerosene", "kerosene"), ("electric", "electricity"),
        ("electricity", "electricity"), ("pellets", "wood-pellets"),
    ],
)  # fmt: skip
def test_aliases(alias, name):
    assert get_fuel(alias).name == name


def test_unknown_fuel_suggests():
    with pytest.raises(InputError, match='unknown fuel "propan".*did you mean "propane"'):
        get_fuel("propan")


# ---------------------------------------------------------------- containers


def test_propane_cylinders_and_tanks():
    # 20-lb cylinder ≈ 4.7 gal, 100-lb ≈ 23.6 gal (arithmetic on the density);
    # 500 and 1,000-gal tanks at the 80 % rule hold 400 and 800 gal.
    sizes = {c.name: c.content for c in get_fuel("propane").containers}
    assert round(sizes["20-lb cylinder"], 1) == 4.7
    assert round(sizes["100-lb cylinder"], 1) == 23.6
    assert sizes["500-gal tank"] == pytest.approx(400.0)
    assert sizes["1000-gal tank"] == pytest.approx(800.0)


def test_the_80_percent_rule_against_the_osha_worked_example():
    # OSHA 29 CFR 1910.110 worked example: a 100-gal (water capacity) tank holds 79.8 gal.
    # The "80 %" rule is that figure rounded to two significant figures, so it must agree
    # within half a unit of its last digit: 0.5 gal per 100 gal of water capacity.
    tank = next(c for c in get_fuel("propane").containers if c.fill_fraction)
    assert 100 * tank.fill_fraction.value == pytest.approx(79.8, abs=0.5)
    assert tank.content == pytest.approx(tank.water_capacity * tank.fill_fraction.value)
    assert "79.8" in tank.fill_fraction.note


def test_containers_needed_rounds_up():
    counts = {c.container.name: c for c in containers_needed(100.0, "propane")}
    assert counts["20-lb cylinder"].exact == pytest.approx(100 / (20 / 4.23))
    assert counts["20-lb cylinder"].count == 22
    assert counts["100-lb cylinder"].count == 5
    assert counts["500-gal tank"].count == 1
    bags = containers_needed(fuel_amount(MMBTU_J, "pellets", 1.0), "pellets")
    assert bags[0].count == math.ceil(1e6 / 8200 / 40)  # 121.95 lb -> 4 bags
    assert containers_needed(400.0, "propane")[2].count == 1  # exactly one 500-gal tank
    assert containers_needed(10.0, "natural-gas") == ()
    with pytest.raises(ValueError, match="amount"):
        containers_needed(-1.0, "propane")


# ---------------------------------------------------------------- fuel on hand


@pytest.mark.parametrize(
    ("text", "fuel", "amount", "unit"),
    [
        ("200 gal", "propane", 200.0, "gal"),
        ("200 gallons", "propane", 200.0, "gal"),
        ("750 L", "propane", 750.0, "L"),
        ("1,000 lb", "propane", 1000.0, "lb"),
        ("2,5 L", "kerosene", 2.5, "L"),
        ("275 gal", "oil", 275.0, "gal"),
        ("30 therms", "gas", 30.0, "therm"),
        ("12 m³", "gas", 12.0, "m3"),
        ("3 bags", "pellets", 120.0, "lb"),
        ("1 ton", "pellets", 1.0, "ton"),
        ("2 100-lb cylinders", "propane", 2 * 100 / 4.23, "gal"),
        # a count "x" a container's size, as people write it on a note
        ("2x100lb", "propane", 2 * 100 / 4.23, "gal"),
        ("2 x 100-lb cylinders", "propane", 2 * 100 / 4.23, "gal"),
        ("5 × 20lb", "propane", 5 * 20 / 4.23, "gal"),
        ("0 gal", "propane", 0.0, "gal"),
    ],
)
def test_parse_amount(text, fuel, amount, unit):
    stock = parse_amount(text, fuel, "house.toml: stock.on_hand")
    assert stock.unit == unit
    assert stock.amount == pytest.approx(amount)
    assert stock.energy_j == pytest.approx(stock.amount * get_fuel(fuel).j_per(unit))


@pytest.mark.parametrize(
    ("text", "fuel", "expect"),
    [
        ("200 kWh", "propane", r'"kWh" \(energy\) is not a unit propane'),
        ("200 lb", "oil", r'"lb" \(mass\) is not a unit'),
        ("200", "propane", "needs a unit"),
        ("-5 gal", "propane", "zero or more"),
        ("lots", "propane", "not an amount"),
        ("20 furlongs", "propane", "nor one of its containers .*100-lb cylinder"),
        ("2 x 1000", "propane", "nor one of its containers"),  # 1000 of what
        ("2 x 275gal", "propane", "nor one of its containers"),  # an oil tank's size
        ("20 furlongs", "electricity", "is not a unit"),  # no containers to offer
    ],
)
def test_parse_amount_rejects(text, fuel, expect):
    with pytest.raises(InputError, match=expect) as err:
        parse_amount(text, fuel, "--on-hand")
    assert str(err.value).startswith("--on-hand: ")


# ---------------------------------------------------------------- burn rate


def test_fuel_per_hour_at_input_power():
    # A 100,000 Btu/h (input) propane heater burns 100,000 / 91,452 gal each hour.
    rate = fuel_per_hour(100_000 * W_PER_BTU_H, "propane")
    assert rate.amount_per_hour == pytest.approx(100_000 / 91452)
    assert rate.unit == "gal"
    # 10 kW electric heater: 10 kWh per hour
    assert fuel_per_hour(10_000.0, "electricity").amount_per_hour == pytest.approx(10.0)
    litres = fuel_per_hour(100_000 * W_PER_BTU_H, "propane", unit="litres")
    assert litres.amount_per_hour == pytest.approx(rate.amount_per_hour * 3.785411784)


def test_fuel_amount_is_a_frozen_result():
    amount = fuel_amount(MMBTU_J, "propane", 0.8)
    assert isinstance(amount, FuelAmount)
    with pytest.raises(AttributeError):
        amount.amount = 0.0  # type: ignore[misc]


def test_unit_table_factors_against_pint():
    pint_names = {
        "gal": "gallon", "L": "liter", "m3": "meter**3", "ft3": "foot**3", "ccf": "100*foot**3",
        "lb": "pound", "kg": "kilogram", "ton": "short_ton", "tonne": "metric_ton",
        "Btu": "Btu", "therm": "therm", "MJ": "MJ", "GJ": "GJ", "kWh": "kWh",
    }  # fmt: skip
    assert set(pint_names) == set(UNITS)
    for unit, (_, factor) in UNITS.items():
        expected = UREG.parse_expression(pint_names[unit]).to_base_units().magnitude
        assert factor == pytest.approx(expected, rel=PINT_BTU_RTOL), unit


# ---------------------------------------------------------------- one unit rule


def _json(capsys, argv):
    import json

    from grower.cli import main

    code = main([*argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


@pytest.mark.parametrize(
    "house_file, unit",
    [
        # [stock] on_hand "900 L" of propane: litres
        ("examples/gable-house.toml", "L"),
        # [stock] natural gas with no amount on hand: the fuel table's therm
        ("examples/glass-range.toml", "therm"),
        ("examples/hoop-tunnel.toml", None),
    ],
)
def test_tonight_size_and_stock_json_give_fuel_in_one_unit(capsys, house_file, unit):
    from grower import fuels, house
    from tests.reference_units import Q_

    h = house.read(house_file)
    src = fuels.heat_source(h)
    expect = unit or fuels.bought_unit(h, src.fuel)
    night = ["--forecast", "examples/forecast-cold-night.csv", "--start", "2026-12-03T16:00"]
    snap = ["--forecast", "examples/forecast-cold-snap.csv", "--start", "2026-12-05T00:00"]
    t = _json(capsys, ["tonight", house_file, "--crop", "tomato", *night])
    s = _json(capsys, ["size", house_file, "--outside=-20C", "--hold", "10C"])
    k = _json(capsys, ["stock", house_file, "--setpoint", "10C", *snap])
    assert t["hold_fuel"]["unit"] == s["fuel"]["unit"] == k["fuel"]["unit"] == expect
    # the size amount is the nameplate input over the unit's heating value; in litres it
    # is the gallons by pint's US gallon (3.785411784 L, exact)
    per_hour = s["recommended_input_w"] * 3600 / s["fuel"]["heating_value_j_per_unit"]
    assert s["fuel"]["per_hour_at_full_fire"] == pytest.approx(per_hour, rel=1e-12)
    if expect == "L":
        gal = fuels.fuel_per_hour(s["recommended_input_w"], src.fuel, "gal").amount_per_hour
        litres = Q_(gal, "gallon").to("liter").magnitude
        assert s["fuel"]["per_hour_at_full_fire"] == pytest.approx(litres, rel=1e-9)


def test_a_stock_of_another_fuel_is_not_read_as_this_one(capsys):
    # the gable house keeps 900 L of propane: asked for natural gas or oil, stock does
    # not take those litres for gas (an error before) or for oil (900 L of oil before),
    # nor their price
    from grower import fuels, house

    snap = ["--forecast", "examples/forecast-cold-snap.csv", "--start", "2026-12-05T00:00"]
    base = ["stock", "examples/gable-house.toml", "--setpoint", "10C", *snap]
    for fuel, unit in (("natural-gas", "therm"), ("heating-oil", "gal")):
        d = _json(capsys, [*base, "--fuel", fuel])
        assert d["on_hand"] is None and d["price"] is None and d["runs_out_at"] is None
        assert d["fuel"]["unit"] == unit
    h = house.read("examples/gable-house.toml")
    assert fuels.house_on_hand(h, "propane") == "900 L"
    assert fuels.house_on_hand(h, "natural-gas") is None
    assert fuels.bought_unit(h, "propane") == "L"
    assert fuels.bought_unit(h, "propane", "2 100-lb cylinders") == "gal"
