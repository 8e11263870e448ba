"""The report formatters print the numbers pint gives for the same quantity.

pint (tests/reference_units.py) is the independent reference: its Btu is the
International Table Btu, its gallon the US liquid gallon, as NIST SP 811 (2008),
Appendix B.8 defines them.
"""

from __future__ import annotations

import pytest

from grower import fuels
from grower.report.quantities import (
    capacity_text,
    conductance_text,
    energy_text,
    fuel_text,
    fuel_value,
    power_text,
)
from tests.reference_units import Q_


def _number(text: str) -> float:
    return float(text.split()[0].replace(",", ""))


@pytest.mark.parametrize("watts", [8_200.0, 15_300.0, 47_123.0, 212_000.0])
def test_power_in_btu_per_hour_to_the_nearest_thousand(watts):
    btu_h = Q_(watts, "W").to("Btu_it/hour").magnitude
    text = power_text(watts, "us")
    assert text.endswith(" Btu/h") and "kW" not in text  # US screens: US units only
    assert _number(text) == round(btu_h, -3)
    si = power_text(watts, "metric")
    assert si == f"{watts / 1e3:,.1f} kW ({round(btu_h, -3):,.0f} Btu/h)"


def test_energy_in_btu_and_kwh():
    joules = 136.0 * 3.6e6
    assert _number(energy_text(joules, "us")) == round(Q_(joules, "J").to("Btu_it").magnitude, -3)
    assert energy_text(joules, "metric") == "136 kWh"


def test_conductance_in_btu_per_hour_fahrenheit():
    per_f = Q_(1587.0, "W/delta_degC").to("Btu_it/hour/delta_degF").magnitude
    assert conductance_text(1587.0, "us") == f"{per_f:,.0f} Btu/h·°F"
    assert conductance_text(1587.0, "metric") == "1,587 W/K"


def test_capacity_in_btu_per_fahrenheit():
    per_f = Q_(93.8e6, "J/delta_degC").to("Btu_it/delta_degF").magnitude
    assert capacity_text(93.8e6, "us") == f"{per_f:,.0f} Btu/°F"
    assert capacity_text(93.8e6, "metric") == "93.8 MJ/K"


def test_litres_of_propane_print_as_us_gallons():
    value, unit = fuel_value(24.0, "L", "propane", "us")
    assert unit == "gal"
    assert value == pytest.approx(Q_(24.0, "L").to("gallon").magnitude, rel=1e-12)
    assert fuel_text(24.0, "L", "propane", "us") == "6.3 gal"
    assert fuel_text(24.0, "L", "propane", "metric") == "24.0 L"  # SI: as bought
    assert fuel_text(6.3, "gal", "propane", "us") == "6.3 gal"


def test_kilograms_print_as_pounds_and_cubic_metres_of_gas_as_therms():
    value, unit = fuel_value(10.0, "kg", "propane", "us")
    assert (unit, value) == ("lb", pytest.approx(Q_(10.0, "kg").to("lb").magnitude, rel=1e-12))
    # natural gas: the same heat, in the therms fuels.toml offers (1 therm = 100,000 Btu)
    gas = fuels.get_fuel("natural-gas")
    value, unit = fuel_value(2.0, "m3", "natural-gas", "us")
    heat_btu = Q_(2.0 * gas.j_per("m3"), "J").to("Btu_it").magnitude
    assert unit == "therm" and value == pytest.approx(heat_btu / 1e5, rel=1e-12)
    value, unit = fuel_value(1.0, "GJ", "natural-gas", "us")
    assert value == pytest.approx(Q_(1.0, "GJ").to("Btu_it").magnitude / 1e5, rel=1e-12)


def test_si_screens_show_us_purchase_units_in_metric_ones():
    # a metric house with no [stock] unit gets the fuel table's defaults (gal, lb, therm);
    # its screen shows them as L, kg and m³ (pint's gallon is the US gallon, 3.785411784 L)
    value, unit = fuel_value(6.3, "gal", "propane", "metric")
    assert (unit, value) == ("L", pytest.approx(Q_(6.3, "gallon").to("L").magnitude, rel=1e-12))
    value, unit = fuel_value(100.0, "lb", "wood-pellets", "metric")
    assert (unit, value) == ("kg", pytest.approx(Q_(100.0, "lb").to("kg").magnitude, rel=1e-12))
    value, unit = fuel_value(1.0, "ton", "wood-pellets", "metric")
    assert (unit, value) == ("tonne", pytest.approx(Q_(1.0, "ton").to("t").magnitude, rel=1e-12))
    # natural gas: a therm (100,000 Btu) is the heat of 1e5 / 1,039 ft³ at the table's
    # 1,039 Btu/ft³ (EIA), written m³
    gas = fuels.get_fuel("natural-gas")
    value, unit = fuel_value(1.0, "therm", "natural-gas", "metric")
    ft3 = Q_(1e5 / 1039.0, "ft**3").to("m**3").magnitude
    assert unit == "m³" and value == pytest.approx(ft3, rel=1e-9)
    assert value == pytest.approx(gas.j_per("therm") / gas.j_per("m3"), rel=1e-12)
    # units of both systems stay
    assert fuel_text(12.0, "kWh", "electricity", "metric") == "12.0 kWh"
    assert fuel_text(12.0, "kWh", "electricity", "us") == "12.0 kWh"


# ------------------------------------------------ the screens, one unit system each

_FORECAST = "--forecast examples/forecast-cold-night.csv"
_TONIGHT = f"tonight examples/gable-house.toml --crop tomato {_FORECAST}".split()
_STOCK = f"stock examples/gable-house.toml --setpoint 50F {_FORECAST}".split()


@pytest.mark.parametrize(
    "argv",
    [
        _TONIGHT,
        ["house", "examples/gable-house.toml"],
        _STOCK,
        ["size", "examples/gable-house.toml", "--outside", "0F", "--hold", "50F"],
    ],
    ids=["tonight", "house", "stock", "size"],
)
def test_us_screens_print_no_si_unit(argv, capsys, monkeypatch):
    import re

    from grower.cli import main

    monkeypatch.setenv("COLUMNS", "100")
    assert main([*argv, "--units", "us"]) in (0, 3)
    out = capsys.readouterr().out
    # the report body, above the forecast and its assumption notes (the notes are still
    # written in SI by the plans: a known gap) and the cautions (they quote cm² beside in²)
    body = out.split("\nForecast:")[0].split("\n· ")[0].split("Safety —")[0]
    assert "Btu/h" in body
    found = re.findall(r"\d ?(kW|kWh|W/K|MJ/K|L|m/s|m²|m³|cm²|cm|°C)(?![A-Za-z])", body)
    assert found == [], found
