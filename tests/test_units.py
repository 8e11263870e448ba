"""Quantities with units at the edges (grower/units.py), checked against pint.

pint is an independent unit library; its International Table Btu (``Btu_it``,
1055.05585262 J) is the one NIST SP 811 (2008) Appendix B.8 lists and grower uses.
pint's plain ``therm`` is the EC therm (10⁵ × 1055.056 J), so the therm is checked as
10⁵ IT Btu, the definition units.py states.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import units
from grower.errors import InputError
from grower.units import (
    c_to_f,
    f_to_c,
    parse_quantity,
    parse_temperature,
    parse_temperature_difference,
    show_power,
    show_temperature,
    show_u_value,
)

from .reference_units import Q_, UREG


def si(value: float, unit: str, to: str) -> float:
    return Q_(value, unit).to(to).magnitude


# ---------------------------------------------------------------- constants against pint


@pytest.mark.parametrize(
    ("constant", "pint_unit", "si_unit"),
    [
        ("M_PER_FT", "foot", "m"),
        ("M_PER_IN", "inch", "m"),
        ("KG_PER_LB", "pound", "kg"),
        ("M3_PER_GAL", "gallon", "m**3"),  # pint's gallon is the US liquid gallon
        ("M3_PER_FT3", "foot**3", "m**3"),
        ("J_PER_BTU", "Btu_it", "J"),
        ("J_PER_KWH", "kWh", "J"),
        ("W_PER_BTU_H", "Btu_it/hour", "W"),
        ("W_M2K_PER_BTU_HFT2F", "Btu_it/(hour*foot**2*delta_degF)", "W/(m**2*K)"),
        ("W_K_PER_BTU_HF", "Btu_it/(hour*delta_degF)", "W/K"),
        ("W_MK_PER_BTU_HFTF", "Btu_it/(hour*foot*delta_degF)", "W/(m*K)"),
        ("M_S_PER_MPH", "mile/hour", "m/s"),
    ],
)
def test_conversion_constants_agree_with_pint(constant, pint_unit, si_unit):
    # exact definitions on both sides; only float rounding differs
    assert getattr(units, constant) == pytest.approx(si(1, pint_unit, si_unit), rel=1e-12)


def test_therm_is_100000_it_btu():
    j_per_therm = units.J_PER_THERM
    assert j_per_therm == pytest.approx(si(1e5, "Btu_it", "J"), rel=1e-12)
    # and within 2 parts in 10⁷ of pint's EC therm (which uses the rounded 1055.056 J Btu)
    assert j_per_therm == pytest.approx(si(1, "therm", "J"), rel=2e-7)


def test_u_value_factor_is_the_printed_5_678():
    # the factor extension tables print: 1 Btu/h·ft²·°F = 5.678 W/m²·K
    assert round(units.W_M2K_PER_BTU_HFT2F, 3) == 5.678


# ---------------------------------------------------------------- parse_quantity


@pytest.mark.parametrize(
    ("text", "kind", "pint_value", "pint_unit", "si_unit"),
    [
        ("30 ft", "length", 30, "foot", "m"),
        ("30ft", "length", 30, "foot", "m"),
        ("6 in", "length", 6, "inch", "m"),
        ("9.1 m", "length", 9.1, "m", "m"),
        ("1000 sqft", "area", 1000, "foot**2", "m**2"),
        ("100 gal", "volume", 100, "gallon", "m**3"),
        ("20 lb", "mass", 20, "pound", "kg"),
        ("150000 BTU/h", "power", 150000, "Btu_it/hour", "W"),
        ("150 MBH", "power", 150000, "Btu_it/hour", "W"),
        ("3 therms", "energy", 3e5, "Btu_it", "J"),
        ("12 kWh", "energy", 12, "kWh", "J"),
        ("12 mph", "speed", 12, "mile/hour", "m/s"),
        ("36 km/h", "speed", 36, "km/hour", "m/s"),
        ("1.1 Btu/h·ft²·°F", "u_value", 1.1, "Btu_it/(hour*foot**2*delta_degF)", "W/(m**2*K)"),
        ("4.5 W/m2K", "u_value", 4.5, "W/(m**2*K)", "W/(m**2*K)"),
    ],
)
def test_parse_quantity_agrees_with_pint(text, kind, pint_value, pint_unit, si_unit):
    assert parse_quantity(text, kind, where="x") == pytest.approx(
        si(pint_value, pint_unit, si_unit), rel=1e-12
    )


def test_parse_quantity_bare_numbers_are_si_and_fractions_take_percent():
    assert parse_quantity(9.1, "length") == 9.1
    assert parse_quantity("9.1", "length") == 9.1
    assert parse_quantity(3, "power") == 3.0
    assert parse_quantity("40 %", "fraction") == pytest.approx(0.40)
    assert parse_quantity("0.4", "fraction") == pytest.approx(0.40)


def test_parse_quantity_comma_decimal():
    assert parse_quantity("2,5 m", "length") == pytest.approx(2.5)
    assert parse_quantity("1,1 Btu/h·ft²·°F", "u_value") == pytest.approx(
        si(1.1, "Btu_it/(hour*foot**2*delta_degF)", "W/(m**2*K)")
    )


@pytest.mark.parametrize(
    ("value", "kind", "words"),
    [
        ("30 ft", "power", "is a length, not a power"),
        ("5 K", "u_value", "is a temperature, not a u value"),
        ("30 furlongs", "length", 'unknown length unit "furlongs"'),
        ("lots", "length", "not a number"),
        ("1e400 ft", "length", "not a finite number"),
        (float("nan"), "length", "not a finite number"),
        (float("inf"), "power", "not a finite number"),
        (True, "length", "is not a length"),
        ([3], "length", "is not a length"),
    ],
)
def test_parse_quantity_errors_name_where(value, kind, words):
    with pytest.raises(InputError) as err:
        parse_quantity(value, kind, where="house.toml: house.width")
    text = str(err.value)
    assert text.startswith("house.toml: house.width: ")
    assert words in text
    assert "\n" not in text


# ---------------------------------------------------------------- temperatures


@pytest.mark.parametrize(
    ("text", "pint_value", "pint_unit"),
    [
        ("-4 C", -4, "degC"),
        ("-4C", -4, "degC"),
        ("-4 °C", -4, "degC"),
        ("25F", 25, "degF"),
        ("25 F", 25, "degF"),
        ("25 °F", 25, "degF"),
        ("25 ºF", 25, "degF"),  # the ordinal sign some keyboards give for a degree
        ("25 degF", 25, "degF"),
        ("-40 F", -40, "degF"),
        ("271.15 K", 271.15, "K"),
        ("0 K", 0, "K"),
        ("45 fahrenheit", 45, "degF"),
    ],
)
def test_parse_temperature_agrees_with_pint(text, pint_value, pint_unit):
    expected = Q_(pint_value, getattr(UREG, pint_unit)).to(UREG.degC).magnitude
    assert parse_temperature(text) == pytest.approx(expected, abs=1e-9)


def test_parse_temperature_bare_numbers_are_celsius():
    assert parse_temperature(3) == 3.0
    assert parse_temperature(-2.5) == -2.5
    assert parse_temperature("3") == 3.0
    assert parse_temperature("-1,5") == pytest.approx(-1.5)  # comma decimal
    assert parse_temperature("-1,5 C") == pytest.approx(-1.5)


def test_temperature_given_a_length_names_where():
    with pytest.raises(InputError) as err:
        parse_temperature("30 ft", where="house.toml: heater.setpoint")
    text = str(err.value)
    assert text.startswith("house.toml: heater.setpoint: ")
    assert '"30 ft"' in text and "length" in text


@pytest.mark.parametrize("text", ["-300 C", "-274 C", "-1 K", "-500 F", "-460 F"])
def test_below_absolute_zero(text):
    with pytest.raises(InputError, match="below absolute zero") as err:
        parse_temperature(text, where="forecast.csv: row 3")
    assert str(err.value).startswith("forecast.csv: row 3: ")


def test_bare_number_below_absolute_zero():
    with pytest.raises(InputError, match="below absolute zero"):
        parse_temperature(-300, where="x")


@pytest.mark.parametrize(
    "value", [float("nan"), float("inf"), "nan", "NaN C", "", "warm", None, True]
)
def test_temperature_not_a_finite_number(value):
    with pytest.raises(InputError) as err:
        parse_temperature(value, where="forecast.csv: temperature_c")
    assert str(err.value).startswith("forecast.csv: temperature_c: ")


def test_temperature_difference():
    assert parse_temperature_difference("4F") == pytest.approx(si(4, "delta_degF", "K"))
    assert parse_temperature_difference("3 K") == 3.0
    assert parse_temperature_difference("2 C") == 2.0
    assert parse_temperature_difference(2) == 2.0
    with pytest.raises(InputError, match=r"^x: .*unknown temperature unit"):
        parse_temperature_difference("4 ft", where="x")


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=-1000, max_value=1000, allow_nan=False))
def test_c_to_f_round_trip(temp):
    assert f_to_c(c_to_f(temp)) == pytest.approx(temp, abs=1e-9)
    assert c_to_f(f_to_c(temp)) == pytest.approx(temp, abs=1e-9)


@settings(max_examples=100, deadline=None)
@given(st.floats(min_value=-400, max_value=400, allow_nan=False))
def test_fahrenheit_text_agrees_with_pint(temp_f):
    expected = Q_(temp_f, UREG.degF).to(UREG.degC).magnitude
    assert parse_temperature(f"{temp_f!r} F") == pytest.approx(expected, abs=1e-9)
    assert f_to_c(temp_f) == pytest.approx(expected, abs=1e-9)


# ---------------------------------------------------------------- display


def test_display_round_trips():
    assert show_temperature(0.0, "us").value == pytest.approx(32.0)
    assert show_temperature(-4.0, "metric").value == -4.0
    assert show_u_value(si(1, "Btu_it/(hour*foot**2*delta_degF)", "W/(m**2*K)"), "us").value == (
        pytest.approx(1.0, rel=1e-12)
    )
    assert show_power(si(150000, "Btu_it/hour", "W"), "us").value == pytest.approx(150000)
    assert show_power(43_960.0, "metric").text(1) == "44.0 kW"


# ---------------------------------------------------------------- known gaps (report to lead)


def test_u_value_label_as_printed_is_parsed():
    shown = show_u_value(2.4, "metric")
    assert parse_quantity(f"{shown.value} {shown.unit}", "u_value") == pytest.approx(2.4)


def test_thousands_separator_is_not_a_decimal_comma():
    try:
        value = parse_quantity("150,000 BTU/h", "power", where="x")
    except InputError:
        return  # refusing the ambiguous text is acceptable
    assert value == pytest.approx(si(150000, "Btu_it/hour", "W"))


def test_unicode_minus():
    assert parse_temperature("−4 C") == -4.0


# ---------------------------------------------------------------- case of SI prefixes


@pytest.mark.parametrize(
    ("text", "kind", "pint_text"),
    [
        ("5 mW", "power", "5 milliwatt"),
        ("5 MW", "power", "5 megawatt"),
        ("5 kW", "power", "5 kilowatt"),
        ("5 KW", "power", "5 kilowatt"),  # the common misspelling: no kelvin-watt exists
        ("3 MJ", "energy", "3 megajoule"),
        ("3 mJ", "energy", "3 millijoule"),
        ("2 MWh", "energy", "2 megawatt_hour"),
        ("30 FT", "length", "30 foot"),
        ("9.1 M", "length", "9.1 meter"),
        ("12 MPH", "speed", "12 mile/hour"),
    ],
)
def test_prefix_case_is_meaning_checked_against_pint(text, kind, pint_text):
    # reference: pint's unit registry (SI prefixes m = 1e-3, M = 1e6, k = 1e3)
    expected = Q_(pint_text).to_base_units().magnitude
    assert units.parse_quantity(text, kind) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "kind"), [("5 mw", "power"), ("3 mj", "energy"), ("1 mwh", "energy")]
)
def test_a_spelling_that_could_be_milli_or_mega_is_refused(text, kind):
    with pytest.raises(InputError, match=r'could be "M.*" or "m.*"'):
        units.parse_quantity(text, kind, where="house.toml: heater[0].input")


def test_bare_temperature_in_fahrenheit_when_asked():
    # 28 °F = −2.2222 °C (exact definition: °C = (°F − 32) / 1.8)
    assert units.parse_temperature("28", bare="F") == pytest.approx(-20 / 9)
    assert units.parse_temperature("28C", bare="F") == pytest.approx(28.0)
    assert units.parse_temperature(28, bare="F") == pytest.approx(-20 / 9)
    assert units.parse_temperature_difference("9", bare="F") == pytest.approx(5.0)
    assert units.parse_temperature_difference("9K", bare="F") == pytest.approx(9.0)
    with pytest.raises(InputError, match="absolute zero"):
        units.parse_temperature("-500", bare="F")


# ---------------------------------------------------------------- notes in either system


def test_a_note_is_its_si_text_and_renders_each_system_by_pint():
    note = units.Note(
        "soil (top {top}) at {soil}, cloud base {base}, {colder} colder, wind {wind}, inlet {a}",
        top=("cm", 0.10),
        soil=("temp", 6.0),
        base=("km", 2000.0),
        colder=("delta", 4.0, 0),
        wind=("speed", 3.0),
        a=("area", 0.0645),
    )
    assert (
        note
        == "soil (top 10 cm) at 6.0 °C, cloud base 2 km, 4 K colder, wind 3.0 m/s, inlet 645 cm²"
    )
    assert units.note_text(note, "metric") == str(note)
    us = units.note_text(note, "us")
    inches = Q_(10, "cm").to("inch").m  # 3.94 in: whole inches
    feet = Q_(2, "km").to("foot").m  # 6,562 ft: to the nearest hundred
    f = Q_(6.0, "degC").to("degF").m
    mph = Q_(3.0, "m/s").to("mph").m
    in2 = Q_(0.0645, "m**2").to("inch**2").m
    assert us == (
        f"soil (top {inches:.0f} in) at {f:.1f} °F, cloud base {round(feet, -2):,.0f} ft, "
        f"{4 * 1.8:.0f} °F colder, wind {mph:.1f} mph, inlet {in2:.0f} in²"
    )
    # a plain string is shown as it is
    assert units.note_text("no wind speed given", "us") == "no wind speed given"


def test_a_note_may_word_a_rule_in_its_own_units():
    note = units.Note(
        "above {v}", v=("speed", 15 * units.M_S_PER_MPH, 1), us_template="above 15 mph"
    )
    assert note == "above 6.7 m/s" and note.text("us") == "above 15 mph"
