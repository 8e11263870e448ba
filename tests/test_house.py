"""Reading house files: the examples, units, and every kind of bad input."""

from __future__ import annotations

import math

import pytest

from grower import house
from grower.cli import main
from grower.errors import InputError

from .conftest import MINIMAL, write_house


def test_examples_load(examples):
    for path in sorted(examples.glob("*.toml")):
        h = house.read(path)
        assert h.floor_area_m2 > 0 and h.volume_m3 > 0
        assert all(s.area_m2 > 0 for s in h.surfaces)


def test_hoop_tunnel_units_in_feet(examples):
    h = house.read(examples / "hoop-tunnel.toml")
    r = 15 * 0.3048
    assert h.width_m == pytest.approx(30 * 0.3048)
    roof = next(s for s in h.surfaces if s.name == "roof")
    assert roof.area_m2 == pytest.approx(math.pi * r * 96 * 0.3048)


def test_knee_wall_splits_walls(tmp_path):
    text = MINIMAL + '\n[knee_wall]\nheight = "0.6 m"\nmaterial = "concrete-block-8in"\n'
    plain = house.read(write_house(tmp_path, MINIMAL, "a.toml"))
    knee = house.read(write_house(tmp_path, text, "b.toml"))
    area = {s.name: s.area_m2 for s in knee.surfaces}
    base = {s.name: s.area_m2 for s in plain.surfaces}
    assert area["knee walls"] == pytest.approx(2 * 30 * 0.6 + 2 * 9 * 0.6)
    assert area["side walls"] + area["end walls"] + area["knee walls"] == pytest.approx(
        base["side walls"] + base["end walls"]
    )


BAD = [
    # (replace this, with this, message fragment naming the key)
    ('width = "9 m"', 'width = "9 m', "TOML syntax error"),
    ('width = "9 m"\n', "", 'house: missing key "width"'),
    ("bays = 1", "bays = 1\nbayz = 2", 'unknown key "bayz" (did you mean "bays"?)'),
    (
        'roof = "double-poly"',
        'roof = "dubble-poly"',
        'cover.roof: unknown cover material "dubble-poly"',
    ),
    ('width = "9 m"', 'width = "9 kg"', "house.width"),
    ('width = "9 m"', 'width = "-9 m"', "house.width: must be greater than zero"),
    ('length = "30 m"', "length = 0", "house.length: must be greater than zero"),
    (
        'ridge_height = "4.2 m"',
        'ridge_height = "1.2 m"',
        "house.ridge_height: ridge height 1.2 m is lower",
    ),
    ('shape = "gable"', 'shape = "arch"\n', None),  # placeholder, replaced below
    ("bays = 1", "bays = 0", "house.bays: must be at least 1"),
    ("changes_per_hour = 1.0", 'changes_per_hour = "lots"', "air.changes_per_hour"),
    ("[air]", "[aire]", 'unknown section "aire" (did you mean "air"?)'),
    ('shape = "gable"', 'shape = "quonset"', 'house.shape: unknown shape "quonset"'),
]
BAD[8] = (
    'ridge_height = "4.2 m"',
    'ridge_height = "7.0 m"\n',
    "house.ridge_height: an arch's rise",
)


@pytest.mark.parametrize("old,new,fragment", BAD)
def test_bad_input_one_line_exit_2(tmp_path, capsys, old, new, fragment):
    text = MINIMAL.replace(old, new, 1)
    if "an arch's rise" in fragment:
        text = text.replace('shape = "gable"', 'shape = "arch"')
    assert text != MINIMAL
    path = write_house(tmp_path, text)
    before = path.read_bytes()
    with pytest.raises(InputError) as err:
        house.read(path)
    assert fragment in str(err.value)
    assert str(path) in str(err.value)
    assert main(["house", str(path)]) == 2
    out, errtext = capsys.readouterr()
    assert out == ""
    lines = errtext.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: ") and fragment in lines[0]
    assert "Traceback" not in errtext
    assert path.read_bytes() == before  # nothing the user had is touched


def test_missing_file(capsys, tmp_path):
    assert main(["house", str(tmp_path / "nope.toml")]) == 2
    assert "no such file" in capsys.readouterr().err


def test_user_material_in_house_file(tmp_path):
    text = MINIMAL.replace('roof = "double-poly"', 'roof = "my-film"') + (
        '\n[materials.my-film]\nlabel = "our film"\nkind = "glazing"\nu = "1.1 Btu/h·ft²·°F"\n'
        'longwave_transmittance = 0.5\nsolar_transmittance = 0.85\nbasis = "supplier sheet"\n'
    )
    h = house.read(write_house(tmp_path, text))
    assert h.roof_material.u_w_m2k == pytest.approx(1.1 * 5.678263, rel=1e-6)


def test_lean_to_one_bay_only(tmp_path):
    text = MINIMAL.replace('shape = "gable"', 'shape = "lean-to"').replace("bays = 1", "bays = 2")
    with pytest.raises(InputError, match="lean-to has one bay"):
        house.read(write_house(tmp_path, text))


def test_site_and_timezone(tmp_path):
    text = MINIMAL + '\n[site]\nlatitude = 44.3\nlongitude = -76.5\ntimezone = "America/Nowhere"\n'
    with pytest.raises(InputError, match="site.timezone"):
        house.read(write_house(tmp_path, text))


def test_house_json_contract(capsys, examples):
    import json

    assert main(["house", str(examples / "gable-house.toml"), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    for key in (
        "k_w_per_k",
        "c_j_per_k",
        "time_constant_h",
        "volume_m3",
        "floor_area_m2",
        "areas_m2",
        "ua_w_per_k",
        "infiltration_w_per_k",
    ):
        assert key in d
    assert "floor" not in d["areas_m2"]
    parts = sum(d["ua_w_per_k"].values()) + d["infiltration_w_per_k"] + d["perimeter_w_per_k"]
    assert parts == pytest.approx(d["k_w_per_k"])
    assert d["time_constant_h"] == pytest.approx(d["c_j_per_k"] / d["k_w_per_k"] / 3600)


def test_house_report_in_us_units(capsys, examples):
    assert main(["house", str(examples / "hoop-tunnel.toml"), "--units", "us"]) == 0
    out = capsys.readouterr().out
    assert "Btu/h" in out and "ft²" in out
    assert out.splitlines()[0].startswith("Lane tunnel")


def test_units_default_from_locale():
    from grower.report.common import locale_system, unit_system

    assert locale_system({"LANG": "en_US.UTF-8"}) == "us"
    assert locale_system({"LANG": "en_CA.UTF-8"}) == "metric"
    assert locale_system({"LC_ALL": "fr_FR.UTF-8", "LANG": "en_US.UTF-8"}) == "metric"
    assert locale_system({}) == "metric"
    assert unit_system("metric", "us") == "metric"  # the option wins
    assert unit_system(None, "us") == "us"  # then the house file
