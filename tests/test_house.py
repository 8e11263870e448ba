"""Reading house files: the examples, units, and every kind of bad input."""

from __future__ import annotations

import json
import math
import tomllib

import pytest

from grower import house
from grower.cli import main
from grower.errors import InputError

from .calibration_tables import format2
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


# ---------------------------------------------------------------- plausible ranges


def _h(tmp_path, extra: str = "", old: str = "", new: str = ""):
    text = MINIMAL.replace(old, new) if old else MINIMAL
    return write_house(tmp_path, text + extra)


@pytest.mark.parametrize(
    ("old", "new", "words"),
    [
        ('width = "9 m"', 'width = "9 mm"', ["house.width", "0.3…100 m"]),
        ('length = "30 m"', 'length = "30 km"', ["house.length", "0.5…2,000 m"]),
        ('ridge_height = "4.2 m"', 'ridge_height = "500 m"', ["house.ridge_height"]),
        ("bays = 1", "bays = 9000000000000000000", ["house.bays", "1…1,000"]),
        ("changes_per_hour = 1.0", "changes_per_hour = 61", ["0–60"]),
    ],
)
def test_sizes_outside_the_possible_range_are_refused(tmp_path, old, new, words):
    with pytest.raises(InputError) as info:
        house.read(_h(tmp_path, old=old, new=new))
    for w in words:
        assert w in str(info.value)


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        (
            '\n[floor]\ndeep_ground_temperature = "1000 C"\n',
            ["deep_ground_temperature", "−30…40 °C"],
        ),
        ('\n[[mass]]\nmaterial = "water"\nvolume = "55 gal"\ncount = 2000\n', ["inside volume"]),
        ('\n[[mass]]\nmaterial = "water"\nvolume = "1 m3"\narea = 1e9\n', ["mass surface"]),
        ('\n[[heater]]\nfuel = "propane"\nefficiency = 1e-9\ninput = "30 kW"\n', ["efficiency"]),
        ('\n[[heater]]\nfuel = "propane"\ninput = "1e30 W"\n', ["heater power"]),
        ('\n[stock]\nfuel = "propane"\nprice = -1.0\n', ["negative price"]),
        ("\n[calibration]\nk_w_per_k = -5.0\n", ["calibration.k_w_per_k", "positive"]),
        ('\n[control]\nvent_temperature = "90 C"\n', ["vent_temperature"]),
        (
            '\n[site]\nlatitude = 44.3\nlongitude = -76.5\ntimezone = "America/Toronto"\nelevation = "50 km"\n',
            ["site.elevation"],
        ),
        (
            '\n[site]\nlatitude = 44.3\nlongitude = 76.5\ntimezone = "America/Toronto"\n',
            ["site.timezone", "west longitudes are negative"],
        ),
    ],
)
def test_impossible_inputs_are_refused_naming_the_key(tmp_path, extra, words):
    with pytest.raises(InputError) as info:
        house.read(_h(tmp_path, extra))
    for w in words:
        assert w in str(info.value), str(info.value)


def test_unusual_values_warn_and_are_kept(tmp_path):
    from grower.errors import InputWarning

    path = _h(tmp_path, old="changes_per_hour = 1.0", new="changes_per_hour = 20")
    with pytest.warns(InputWarning, match="air changes"):
        h = house.read(path)
    assert h.air_changes_per_hour == 20


def test_real_clocks_far_from_solar_time_pass(tmp_path):
    # Kashgar (75.99° E) keeps Beijing time, UTC+8: 2.9 h ahead of its solar time;
    # Madrid (3.7° W) keeps UTC+1/+2 — both real, both within the 3.5 h warning bound
    for lon, zone in (
        (75.99, "Asia/Shanghai"),
        (-3.7, "Europe/Madrid"),
        (-157.4, "Pacific/Kiritimati"),
    ):
        extra = f'\n[site]\nlatitude = 20.0\nlongitude = {lon}\ntimezone = "{zone}"\n'
        house.read(_h(tmp_path, extra))


@pytest.mark.parametrize(
    ("factors", "ok"),
    [
        ({}, True),
        ({"conduction": 0.01}, False),
        ({"conduction": 50.0}, False),
        ({"sky": 0.0}, True),  # possible: a film that passes no long-wave (warned)
        ({"sky": 8.0}, False),
        ({"capacity": 0.01}, False),
    ],
)
def test_check_calibration_against_the_geometry(factors, ok):
    from grower.errors import InputWarning

    cal = house.from_mapping(tomllib.loads(format2(MINIMAL, **factors)), source="x")
    if ok and factors:
        with pytest.warns(InputWarning, match="usually"):
            house.check_calibration(cal)
    elif ok:
        house.check_calibration(cal)
    else:
        with pytest.raises(InputError, match="geometry's"):
            house.check_calibration(cal)


def test_a_bad_fitted_value_is_named_in_any_format(tmp_path, capsys):
    # no `format` (not used), but a value the user wrote that is no number still is one
    # clear line naming it, not "has no fitted values"
    text = MINIMAL + '\n[calibration]\nk_outside_w_per_k = "lots"\n'
    path = write_house(tmp_path, text, "h.toml")
    assert main(["house", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert err == (
        f"Error: {path}: calibration.k_outside_w_per_k: 'lots' must be a positive number "
        "(written by `grower fit --write`; refit, or delete the [calibration] table to use "
        "the geometry)"
    )


def test_an_older_calibration_is_read_but_not_checked():
    """No `format`: the one-factor fit's table; not used, so not refused for its K."""
    text = MINIMAL + "\n[calibration]\nk_w_per_k = 10.0\nc_j_per_k = 5.0e7\n"
    house.check_calibration(house.from_mapping(tomllib.loads(text), source="x"))


@pytest.mark.parametrize(
    ("edit", "words"),
    [
        (("format = 2", 'format = "2"'), ["calibration.format", "whole number"]),
        (('model = "two-node"', 'model = "three-node"'), ["calibration.model", "lumped"]),
        (("k_sky_w_per_k = ", "k_sky = "), ['missing key "k_sky_w_per_k"']),
        (("geometry_c_j_per_k = ", "geometry_c_j_per_k = -"), ["calibration.geometry_c_j_per_k"]),
        (("k_sky_w_per_k = ", "k_sky_w_per_k = -"), ["calibration.k_sky_w_per_k", "non-negative"]),
        (('quality = "good"', 'quality = "meh"'), ["calibration.quality", "rough"]),
        (("rms_k = 0.3", "rms_k = nan"), ["calibration.rms_k"]),
        (("rms_k = 0.3", "k_ground_w_per_k = 5.0"), ["go together"]),
        (("rms_k = 0.3", "k_sky_by_night_w_per_k = 5.0"), ["k_sky_by_night", "list"]),
        (("rms_k = 0.3", "k_sky_by_night_w_per_k = [1.0, -2.0]"), ["non-negative"]),
        # a bad value is named by its own key, also when another key is missing
        (('model = "two-node"', ""), ['missing key "model"']),
        (
            (
                'model = "two-node"\nanchor = "measured power"\nquality = "good"\n'
                "k_outside_w_per_k = ",
                'quality = "good"\nk_outside_w_per_k = "lots"\n#',
            ),
            ["calibration.k_outside_w_per_k: 'lots' must be a positive number"],
        ),
    ],
)
def test_a_malformed_format_2_table_is_one_line_exit_2(tmp_path, capsys, edit, words):
    text = format2(MINIMAL).replace(*edit)
    assert edit[1] in text
    path = write_house(tmp_path, text, "h.toml")
    assert main(["house", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith(f"Error: {path}: calibration") and "\n" not in err
    for w in words:
        assert w in err, err


def test_a_utf8_bom_crlf_and_a_fifo(tmp_path):
    import os

    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + MINIMAL.replace("\n", "\r\n").encode())
    assert house.read(path).width_m == 9.0
    fifo = tmp_path / "fifo.toml"
    os.mkfifo(fifo)
    with pytest.raises(InputError, match="named pipe"):
        house.read(fifo)
    big = tmp_path / "big.toml"
    big.write_bytes(b"#" * (2 << 20))
    with pytest.raises(InputError, match="larger than"):
        house.read(big)


def test_the_house_breakdown_says_what_its_calibration_holds(tmp_path, capsys):
    """`grower house` shows the geometry's figures and one line on the [calibration]: used
    by the plans (a note), or not used and why (a warning); --json: calibration_note."""
    plain = write_house(tmp_path, MINIMAL, "a.toml")
    fitted = write_house(tmp_path, format2(MINIMAL, conduction=1.2, sky=0.5), "b.toml")
    old = write_house(tmp_path, MINIMAL + "\n[calibration]\nk_w_per_k = 900.0\n", "c.toml")
    assert main(["house", str(plain), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["calibration_note"] is None
    assert main(["house", str(fitted), "--json"]) == 0
    note = json.loads(capsys.readouterr().out)["calibration_note"]
    assert "conduction × 1.20, sky part × 0.50" in note and "size use the fit's" in note
    assert main(["house", str(old)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "! the house file's [calibration] is from an older grower fit" in out
