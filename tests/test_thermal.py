"""The shipped floor and thermal-mass tables: every row has its unit and basis."""

from __future__ import annotations

import pytest

from grower import house, thermal

GOOD_FLOOR = """
[floors.peat]
label = "peat"
heat_capacity = { value = 2.5, unit = "MJ m-3 K-1", basis = "from memory" }
conductivity = { value = 0.4, unit = "W m-1 K-1", source = "a handbook, table 1" }
"""


def test_every_shipped_floor_and_material_loads_with_a_basis():
    floors, masses = thermal.floors(), thermal.mass_materials()
    assert set(floors) >= {"soil", "gravel", "concrete", "sand"}
    assert set(masses) >= {"water", "concrete", "stone", "steel", "wood", "soil"}
    for row in (*floors.values(), *masses.values()):
        assert row.label and row.basis
        for why in row.basis.values():
            assert why.startswith(("source: ", "derived: ")) or why in (
                "from memory",
                "common practice",
            )


def test_shipped_values_sit_in_the_physical_ranges():
    # Orders of magnitude every building-physics text agrees on (common practice, no
    # source): soils and masonry 1-3 MJ/m3 K and 0.2-3 W/m K; solids 400-2500 J/kg K;
    # water has the largest specific heat of the materials, near 4.2 kJ/kg K.
    for f in thermal.floors().values():
        assert 1e6 <= f.heat_capacity_j_m3k <= 3e6
        assert 0.2 <= f.conductivity_w_mk <= 3.0
    masses = thermal.mass_materials()
    for m in masses.values():
        assert 400 <= m.specific_heat_j_kgk <= 4300
    assert max(masses.values(), key=lambda m: m.specific_heat_j_kgk).key == "water"


def test_the_house_module_uses_the_tables():
    soil = thermal.floors()["soil"]
    assert house.FLOORS["soil"][:2] == (soil.heat_capacity_j_m3k, soil.conductivity_w_mk)
    assert house.MASS_MATERIALS["water"][0] == thermal.mass_materials()["water"].specific_heat_j_kgk


def test_units_are_converted_to_si():
    peat = thermal.parse_floors(GOOD_FLOOR)["peat"]
    assert peat.heat_capacity_j_m3k == pytest.approx(2.5e6, rel=1e-15)
    assert peat.basis["conductivity"] == "source: a handbook, table 1"


@pytest.mark.parametrize(
    ("old", "new", "message"),
    [
        (', basis = "from memory"', "", "exactly one of source or basis"),
        ('basis = "from memory"', 'basis = "a guess"', "must be"),
        ('"MJ m-3 K-1"', '"MJ/m3K"', "unit"),
        ("value = 2.5", "value = -2.5", "> 0"),
        ('label = "peat"', 'label = "peat"\ncolour = "brown"', "unknown field"),
        ('conductivity = { value = 0.4, unit = "W m-1 K-1", source = "a handbook, table 1" }', "", "conductivity: missing"),
    ],
)  # fmt: skip
def test_a_bad_row_is_rejected_with_its_place(old, new, message):
    assert old in GOOD_FLOOR
    with pytest.raises(ValueError, match=message) as err:
        thermal.parse_floors(GOOD_FLOOR.replace(old, new, 1), "mine.toml")
    assert "mine.toml: floors.peat" in str(err.value)
