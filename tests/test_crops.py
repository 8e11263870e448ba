"""Crops: the shipped files, validation, lookup, the threshold choice, `grower crops`.

Spot checks compare the loaded values with the published tables they come from, in the
unit each source printed; the °F → °C conversion is checked against pint.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower.cli import main
from grower.cropfile import parse_crop
from grower.crops import (
    BASES,
    DEFAULT_MARGIN_K,
    KINDS,
    CropBook,
    find_crop,
    load_crop,
    load_crops,
    resolve,
    select_threshold,
    shipped_crops_dir,
    user_crops_dir,
)
from grower.errors import InputError

from .reference_units import UREG


def f_to_c_pint(temp_f: float) -> float:
    return UREG.Quantity(temp_f, UREG.degF).to(UREG.degC).magnitude


@pytest.fixture(autouse=True)
def _no_user_config(tmp_path_factory, monkeypatch):
    """Keep the developer's own ~/.config/grower/crops out of every test."""
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path_factory.mktemp("xdg")))
    monkeypatch.setenv("COLUMNS", "160")


@pytest.fixture(scope="module")
def book() -> CropBook:
    return load_crops(user_dir=None)


# ---------------------------------------------------------------- the shipped files


def test_every_shipped_crop_loads(book):
    files = sorted(f.name for f in shipped_crops_dir().iterdir() if f.name.endswith(".toml"))
    assert len(files) >= 25
    assert len(book.crops) == len(files)
    assert len({c.name for c in book.crops}) == len(book.crops)
    assert all(c.origin == "shipped" and c.overrides is None for c in book.crops)


def test_the_crop_groups_the_brief_asks_for_are_there(book):
    for name in (
        "tomato", "pepper", "eggplant", "cucumber", "melon", "squash", "basil",
        "lettuce", "spinach", "kale", "cabbage", "broccoli", "cauliflower", "pea",
        "strawberry", "apple", "peach", "sweet cherry", "pear", "poinsettia", "geranium",
        "coleus", "marigold",
    ):  # fmt: skip
        assert book.get(name) is not None, name


def test_every_value_has_a_basis(book):
    for crop in book.crops:
        for stage in crop.stages:
            for t in stage.thresholds():
                assert t.basis in ("source", *BASES), (crop.name, stage.name, t.kind)
                assert t.basis_text.strip(), (crop.name, stage.name, t.kind)
                if t.basis != "source":
                    assert t.basis_text == t.basis
                assert t.printed_unit in ("°F", "°C")


def test_thresholds_are_ordered(book):
    for crop in book.crops:
        for s in crop.stages:
            if s.chill:
                assert s.chill.value_c >= s.damage.value_c, crop.name
            for colder in (s.severe, s.kill, s.kill_10, s.kill_90):
                if colder:
                    assert s.damage.value_c >= colder.value_c, crop.name
            if s.kill_10 and s.kill_90:
                assert s.kill_10.value_c >= s.kill_90.value_c, crop.name


def test_default_stage_is_the_most_sensitive(book):
    # crops/README.md: the default stage has the warmest damage temperature, so a grower
    # who names no stage gets the cautious answer.
    for crop in book.crops:
        assert crop.stage().damage.value_c == crop.damage_range_c()[1], crop.name


def test_stored_in_the_unit_the_source_printed(book):
    assert {t.printed_unit for s in book.find("apple").stages for t in s.thresholds()} == {"°F"}
    assert {t.printed_unit for s in book.find("strawberry").stages for t in s.thresholds()} == {
        "°C"
    }
    assert {t.printed_unit for s in book.find("spinach").stages for t in s.thresholds()} == {"°C"}


# Penn State Extension, "Orchard Frost – Critical Temperatures for Various Fruits" (after
# WSU EB0419): 10 % and 90 % bud kill after 30 min, °F, as printed.
PENN_STATE = {
    "apple": [
        ("silver tip", 15, 2), ("green tip", 18, 10), ("half-inch green", 23, 15),
        ("tight cluster", 27, 21), ("first pink", 28, 24), ("full pink", 28, 25),
        ("bloom", 28, 25), ("post bloom", 28, 25),
    ],
    "peach": [
        ("first swelling", 18, 1), ("calyx green", 21, 5), ("calyx red", 23, 9),
        ("first pink", 25, 15), ("first bloom", 26, 21), ("full bloom", 27, 24),
        ("post bloom", 28, 25),
    ],
    "sweet cherry": [
        ("first swelling", 17, 5), ("side green", 22, 9), ("green tip", 25, 14),
        ("tight cluster", 26, 17), ("open cluster", 27, 21), ("first white", 27, 24),
        ("bloom", 28, 25), ("post bloom", 28, 25),
    ],
    "pear": [
        ("scales separating", 15, 0), ("buds exposed", 20, 6), ("tight cluster", 24, 15),
        ("first white", 25, 19), ("full white", 26, 22), ("first bloom", 27, 23),
        ("full bloom", 28, 24), ("post bloom", 28, 24),
    ],
}  # fmt: skip


@pytest.mark.parametrize("crop_name", sorted(PENN_STATE))
def test_fruit_bud_kill_temperatures_match_penn_state(book, crop_name):
    crop = book.find(crop_name)
    assert [s.name for s in crop.stages] == [row[0] for row in PENN_STATE[crop_name]]
    for name, k10, k90 in PENN_STATE[crop_name]:
        stage = crop.stage(name)
        assert (stage.kill_10.printed_value, stage.kill_90.printed_value) == (k10, k90)
        # converted exactly: pint is the independent reference
        assert stage.kill_10.value_c == pytest.approx(f_to_c_pint(k10), abs=1e-9)
        assert stage.kill_90.value_c == pytest.approx(f_to_c_pint(k90), abs=1e-9)
        assert stage.kill_10.hours == pytest.approx(0.5)  # "after 30 min"
        assert stage.damage.value_c == stage.kill_10.value_c
        assert "Penn State" in stage.kill_10.basis_text


def test_apple_tight_cluster_is_27_and_21_F(book):
    # Penn State Extension, "Orchard Frost – Critical Temperatures for Various Fruits"
    _, stage = book.resolve("apple:tight cluster")
    choice = select_threshold(stage)
    assert choice.damage_c == pytest.approx(f_to_c_pint(27))
    assert choice.kill_c == pytest.approx(f_to_c_pint(21))
    assert choice.kill_label == "90 % kill"


def test_strawberry_stages_match_omafra(book):
    # OMAFRA, "Irrigation for frost protection of strawberries" (after Perry & Poling 1985), °C
    published = {"tight bud": -5.5, "popcorn": -2.2, "open blossom": -1.1, "green fruit": -2.2}
    crop = book.find("strawberries")
    assert {s.name: s.damage.value_c for s in crop.stages} == published
    assert all("OMAFRA" in s.damage.basis_text for s in crop.stages)
    # Penn State's 26 °F for popcorn is the conflicting figure: noted, not used
    assert "26 °F" in crop.stage("popcorn").note


@pytest.mark.parametrize(
    ("spec", "warm", "cold"),
    [
        # PMC10202904 Table 2, damaging ranges of cool-season vegetables, °C
        ("lettuce:spring", -2, -4),
        ("lettuce:winter", -4, -7),
        ("broccoli:heads", -2, -4),
        ("broccoli:plants", -4, -7),
        ("cauliflower:curds", -2, -4),
        ("cauliflower:plants", -4, -7),
        ("pea", -2, -4),
        ("kale", -4, -7),
        ("cabbage", -4, -7),
        ("savoy cabbage", -7, -10),
        ("spinach", -7, -10),
    ],
)
def test_cool_season_ranges_match_table_2(book, spec, warm, cold):
    _, stage = book.resolve(spec)
    assert (stage.damage.value_c, stage.severe.value_c) == (warm, cold)
    assert "PMC10202904" in stage.damage.basis_text


def test_warm_season_and_bedding_plants_match_their_sources(book):
    # UF/IFAS FAWN critical temperature guide: most tissue 28 °F, tomato fruit 30 °F
    assert book.resolve("tomato:plants")[1].damage.printed_value == 28
    assert book.resolve("tomato:fruiting")[1].damage.printed_value == 30
    # MSU e-GRO (Lopez 2022): tomato below 41 °F, pepper below 50 °F
    assert book.resolve("tomato:plants")[1].chill.printed_value == 41
    assert book.resolve("pepper")[1].chill.printed_value == 50
    # UMass Extension Greenhouse Update, 19 Mar 2021: 42 °F / 40 °F / 32–39 °F groups
    assert book.resolve("coleus")[1].damage.printed_value == 42
    assert book.resolve("geranium")[1].chill.printed_value == 40
    assert book.resolve("marigold")[1].damage.printed_value == 32
    # ... and the group with no freezing figure is honestly marked
    assert book.resolve("geranium")[1].damage.basis == "from memory"
    # NC State diagnostic key (secondary): poinsettia bracts below 50 °F
    assert book.resolve("poinsettia")[1].damage.value_c == pytest.approx(10.0)


# ---------------------------------------------------------------- lookup


@pytest.mark.parametrize(
    ("query", "name"),
    [
        ("tomato", "tomato"),
        ("Tomatoes", "tomato"),
        ("  TOMATO ", "tomato"),
        ("solanum lycopersicum", "tomato"),
        ("peppers", "pepper"),
        ("bell pepper", "pepper"),
        ("sweet-cherry", "sweet cherry"),
        ("Sweet_Cherries", "sweet cherry"),
        ("strawberries", "strawberry"),
        ("peaches", "peach"),
        ("squashes", "squash"),
        ("aubergine", "eggplant"),
        ("impatiens", "impatiens"),
    ],
)
def test_find_crop_forgives_case_plurals_and_aliases(book, query, name):
    assert find_crop(query, book).name == name


def test_unknown_crop_suggests_the_nearest(book):
    with pytest.raises(InputError, match=r'unknown crop "tomatoe".*did you mean "tomato'):
        find_crop("tomatoe", book)


def test_resolve_gives_the_default_stage_or_the_named_one(book):
    crop, stage = resolve("tomato", book)
    assert stage.name == crop.default_stage == "fruiting"
    assert resolve("tomato:flowering", book)[1].name == "flowering"
    assert resolve("Tomato:Bloom", book)[1].name == "flowering"  # stage alias
    assert resolve("broccoli:transplants", book)[1].name == "plants"
    assert resolve("apple:Tight-Cluster", book)[1].name == "tight cluster"


def test_unknown_stage_lists_the_stages(book):
    with pytest.raises(InputError) as err:
        resolve("tomato:ripening", book)
    message = str(err.value)
    assert "no stage" in message and "plants, flowering, fruiting" in message
    assert "\n" not in message


def test_search_filters_by_part_of_a_name(book):
    assert [c.name for c in book.search("pepp")] == ["pepper"]
    assert {c.name for c in book.search("PEAR")} == {"pear"}
    assert "strawberry" in {c.name for c in book.search("berries")}
    assert book.search("zzz") == ()


@settings(max_examples=40, deadline=None)
@given(st.sampled_from(["tomato", "sweet cherry", "wax begonia", "savoy cabbage"]), st.data())
def test_any_capitalisation_finds_the_crop(book, name, data):
    flips = data.draw(st.lists(st.booleans(), min_size=len(name), max_size=len(name)))
    query = "".join(ch.upper() if up else ch for ch, up in zip(name, flips, strict=True))
    assert book.find(query).name == name


# ---------------------------------------------------------------- threshold choice


def test_alarm_is_damage_plus_margin(book):
    _, stage = book.resolve("tomato:fruiting")
    choice = select_threshold(stage)
    assert choice.margin_k == DEFAULT_MARGIN_K == 1.0
    assert choice.alarm_c == pytest.approx(f_to_c_pint(30) + 1.0)
    assert choice.margin_basis == "common practice, no source"
    assert not choice.overridden
    assert choice.chill_c == pytest.approx(f_to_c_pint(41))
    assert choice.chill_hours is None  # no duration published
    assert select_threshold(stage, margin_k=2.5).alarm_c == pytest.approx(choice.damage_c + 2.5)


def test_override_sets_the_alarm_without_margin(book):
    _, stage = book.resolve("lettuce")
    choice = select_threshold(stage, override_c=-3.0)
    assert (choice.alarm_c, choice.margin_k, choice.overridden) == (-3.0, 0.0, True)
    assert choice.alarm_below_damage
    assert choice.damage_c == -2.0 and choice.severe_c == -4.0


def test_bad_margin_is_a_programming_error(book):
    _, stage = book.resolve("tomato")
    with pytest.raises(ValueError, match="margin_k"):
        select_threshold(stage, margin_k=-1.0)
    with pytest.raises(ValueError, match="override_c"):
        select_threshold(stage, override_c=float("nan"))


# ---------------------------------------------------------------- validation

GOOD = """
name = "test crop"
aliases = ["test crops"]
default_stage = "one"
[sources]
a = "A publication"
[[stage]]
name = "one"
damage = { value = 30, unit = "F", ref = "a" }
chill = { value = 5, unit = "C", source = "Another publication", hours = 12 }
kill = { value = -5, unit = "C", basis = "from memory" }
[[stage]]
name = "two"
kill_10 = { value = 27, unit = "F", ref = "a", minutes = 30 }
kill_90 = { value = 21, unit = "F", ref = "a", minutes = 30 }
"""


def test_a_good_file_parses():
    crop = parse_crop(GOOD, "good.toml")
    one, two = crop.stages
    assert one.damage.value_c == pytest.approx(f_to_c_pint(30))
    assert one.chill.hours == 12 and one.chill.basis_text == "Another publication"
    assert one.kill.basis == "from memory"
    assert two.damage.value_c == pytest.approx(f_to_c_pint(27))
    assert two.kill_90.hours == pytest.approx(0.5)
    assert set(KINDS) >= {t.kind for t in one.thresholds()}


@pytest.mark.parametrize(
    ("old", "new", "expect"),
    [
        ('damage = { value = 30, unit = "F", ref = "a" }', 'damge = { value = 30, unit = "F", ref = "a" }', r'unknown key "damge" \(did you mean "damage"\?\)'),
        ('unit = "F", ref = "a" }\nchill', 'unit = "F" }\nchill', "exactly one of"),
        ('ref = "a" }\nchill', 'ref = "a", basis = "from memory" }\nchill', "exactly one of"),
        ('unit = "F", ref = "a" }\nchill', 'unit = "R", ref = "a" }\nchill', r"unit 'R' unknown"),
        ('basis = "from memory"', 'basis = "I think so"', 'basis "I think so" unknown'),
        ('ref = "a" }\nchill', 'ref = "b" }\nchill', 'no source "b"'),
        ('value = 5, unit = "C"', 'value = -5, unit = "C"', "chill .* is colder than damage"),
        ('value = 21, unit = "F"', 'value = 28, unit = "F"', "kill_10 .* is colder than kill_90"),
        ('name = "two"', 'name = "one"', 'stage name "one" is used twice'),
        ('default_stage = "one"', 'default_stage = "three"', 'default_stage "three" is not a stage'),
        ('default_stage = "one"\n', "", 'missing "default_stage"'),
        ("value = 30,", 'value = "thirty",', "expected a number"),
        ("value = 30,", "value = 300,", "not a plausible crop temperature"),
        ('name = "test crop"', 'name = "test:crop"', 'cannot contain ":"'),
        ("[[stage]]\nname = \"two\"", "[[stage]]\nname = \"two\"\ncolour = \"red\"", 'unknown key "colour"'),
        ("hours = 12", "hours = 12, minutes = 3", "hours or minutes, not both"),
        ('aliases = ["test crops"]', "aliases = [\n", "not valid TOML"),
    ],
)  # fmt: skip
def test_bad_files_are_rejected_naming_file_and_key(old, new, expect):
    assert old in GOOD
    with pytest.raises(InputError, match=expect) as err:
        parse_crop(GOOD.replace(old, new, 1), "mine.toml")
    assert str(err.value).startswith("mine.toml")
    assert "\n" not in str(err.value)


def test_a_stage_needs_a_damage_temperature():
    text = 'name = "x"\n[[stage]]\nname = "s"\nchill = { value = 5, unit = "C", basis = "from memory" }\n'
    with pytest.raises(InputError, match="needs damage"):
        parse_crop(text, "x.toml")


# ---------------------------------------------------------------- user files


def _write(directory: Path, name: str, text: str) -> Path:
    directory.mkdir(parents=True, exist_ok=True)
    path = directory / name
    path.write_text(text, encoding="utf-8")
    return path


MY_TOMATO = """
name = "tomato"
aliases = ["tomatoes", "my tomato"]
[[stage]]
name = "seedlings"
damage = { value = 1, unit = "C", basis = "from memory" }
"""


def test_a_user_file_overrides_a_shipped_crop(tmp_path):
    path = _write(tmp_path / "mine", "tomato.toml", MY_TOMATO)
    book = load_crops(tmp_path / "mine", user_dir=None)
    crop = book.find("my tomato")
    assert crop is book.find("tomato")
    assert crop.origin == "user" and crop.path == str(path)
    assert crop.overrides is not None and crop.overrides.endswith("tomato.toml")
    assert crop.overrides != crop.path
    assert [s.name for s in crop.stages] == ["seedlings"]
    assert len(book.crops) == len(load_crops(user_dir=None).crops)  # replaced, not added


def test_the_user_config_directory_is_read(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    assert user_crops_dir() == tmp_path / "grower" / "crops"
    _write(user_crops_dir(), "okra.toml", MY_TOMATO.replace('"tomato"', '"okra"').replace(
        '["tomatoes", "my tomato"]', '["okras"]'
    ))  # fmt: skip
    book = load_crops()
    assert book.find("okras").origin == "user"
    # --crops-dir comes after the config directory and wins
    _write(tmp_path / "dir", "okra.toml", MY_TOMATO.replace('"tomato"', '"okra"').replace(
        '["tomatoes", "my tomato"]', '[]'
    ).replace("value = 1,", "value = 2,"))  # fmt: skip
    okra = load_crops(tmp_path / "dir").find("okra")
    assert okra.stages[0].damage.value_c == 2.0
    assert okra.overrides == str(user_crops_dir() / "okra.toml")


def test_a_user_file_is_validated_like_a_shipped_one(tmp_path):
    _write(tmp_path, "tomato.toml", MY_TOMATO.replace(', basis = "from memory"', ""))
    with pytest.raises(InputError, match=r"tomato\.toml: stage\[0\].*exactly one of"):
        load_crops(tmp_path, user_dir=None)


def test_an_alias_clash_with_another_crop_is_an_error(tmp_path):
    _write(tmp_path, "x.toml", MY_TOMATO.replace('"tomato"', '"x"'))  # alias "tomatoes"
    with pytest.raises(InputError, match='"tomatoes" names both'):
        load_crops(tmp_path, user_dir=None)


def test_two_user_files_for_one_crop_is_an_error(tmp_path):
    _write(tmp_path, "a.toml", MY_TOMATO)
    _write(tmp_path, "b.toml", MY_TOMATO)
    with pytest.raises(InputError, match="also defined in"):
        load_crops(tmp_path, user_dir=None)


def test_load_crop_finds_what_the_whole_book_finds(book, tmp_path):
    # the one-file lookup `tonight` and `size` use must agree with the full load for
    # every name and alias, stage included, and for a user's own file
    for crop in book.crops:
        for name in (crop.name, *crop.aliases, crop.name.upper()):
            got, stage = load_crop(f"{name}:{crop.stages[-1].name}", user_dir=None)
            assert got == crop and stage == crop.stages[-1]
    _write(tmp_path / "mine", "tomato.toml", MY_TOMATO)
    mine, _ = load_crop("tomato", tmp_path / "mine", user_dir=None)
    assert mine.origin == "user" and mine.overrides is not None


def test_load_crop_reports_an_unknown_name_like_the_book(book):
    with pytest.raises(InputError, match='unknown crop "tomatoe".*did you mean'):
        load_crop("tomatoe", user_dir=None)
    with pytest.raises(InputError, match="--crops-dir.*no such directory"):
        load_crop("tomato", "/nonexistent/crops", user_dir=None)


def test_a_missing_crops_dir_is_an_error(tmp_path):
    with pytest.raises(InputError, match="--crops-dir.*no such directory"):
        load_crops(tmp_path / "nope", user_dir=None)


# ---------------------------------------------------------------- the command


def test_cli_lists_every_crop(capsys, book):
    assert main(["crops"]) == 0
    out = capsys.readouterr().out
    for crop in book.crops:
        assert crop.name in out
    assert f"{len(book.crops)} crops" in out


def test_cli_filters_by_part_of_a_name(capsys):
    assert main(["crops", "pepp"]) == 0
    out = capsys.readouterr().out
    assert "pepper" in out and "tomato" not in out
    assert "1 crop;" in out


def test_cli_shows_one_crop_in_us_units_with_sources(capsys):
    assert main(["crops", "tomatoes", "--units", "us"]) == 0
    out = capsys.readouterr().out
    assert "30.0 °F" in out and "28.0 °F" in out and "41.0 °F" in out
    assert "fruiting (default)" in out
    assert "UF/IFAS" in out and "e-GRO" in out and "OMAFRA" in out
    assert "1.8 °F safety margin (common practice, no source)" in out


def test_cli_shows_one_crop_in_metric(capsys):
    assert main(["crops", "apple:tight-cluster"]) == 0
    out = capsys.readouterr().out
    assert "▶ tight cluster" in out
    assert "Damage (10 % kill)" in out and "90 % kill" in out
    assert "-2.8 °C [1]" in out and "-6.1 °C [1]" in out
    assert "Every figure is for an exposure of 30 min." in out
    # the source's 27 °F and 21 °F, in the screen's units, said to be printed in °F
    # (the printed values themselves are in the crop file and `--json`)
    assert "Penn State" in out and "-2.8 °C" in out and "-6.1 °C" in out
    assert "(printed in °F)" in " ".join(out.split()) and "°F" not in out.replace("in °F", "")


def test_cli_marks_from_memory_values(capsys):
    assert main(["crops", "geranium"]) == 0
    out = capsys.readouterr().out
    assert "from memory — not checked against a publication: 0 °C (printed in °F)" in out


def test_cli_json_document(capsys):
    assert main(["crops", "strawberry", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["exact"] is True and doc["margin_k"] == 1.0
    (crop,) = doc["crops"]
    assert crop["name"] == "strawberry" and crop["default_stage"] == "open blossom"
    stages = {s["name"]: s for s in crop["stages"]}
    assert stages["tight bud"]["damage"]["value_c"] == -5.5
    assert stages["open blossom"]["alarm_c"] == pytest.approx(-0.1)
    assert stages["open blossom"]["default"] is True
    assert "OMAFRA" in stages["popcorn"]["damage"]["basis_text"]


def test_cli_json_with_a_stage_gives_the_threshold(capsys):
    assert main(["crops", "apple:bloom", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["stage"] == "bloom"
    assert doc["threshold"]["damage_c"] == pytest.approx(f_to_c_pint(28))
    assert doc["threshold"]["kill_c"] == pytest.approx(f_to_c_pint(25))


def test_cli_json_list(capsys, book):
    assert main(["crops", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["exact"] is False and len(doc["crops"]) == len(book.crops)


def test_cli_user_override_is_reported(tmp_path, capsys):
    _write(tmp_path, "tomato.toml", MY_TOMATO)
    assert main(["crops", "tomato", "--crops-dir", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "From your file" in out and "replaces the shipped crop" in out
    assert main(["crops", "--crops-dir", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "tomato (yours)" in out
    assert f"tomato: yours, replaces the shipped crop, from {tmp_path / 'tomato.toml'}" in out


def test_cli_malformed_user_file_exits_2_with_one_line(tmp_path, capsys):
    bad = _write(tmp_path, "bad.toml", 'name = "bad"\n[[stage]]\nname = "s"\ndamage = { value = 1 ')
    assert main(["crops", "--crops-dir", str(tmp_path)]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1
    assert lines[0].startswith("Error: ") and str(bad) in lines[0] and "not valid TOML" in lines[0]


def test_cli_bad_user_value_exits_2_naming_the_key(tmp_path, capsys):
    _write(tmp_path, "t.toml", MY_TOMATO.replace('unit = "C"', 'unit = "Q"'))
    assert main(["crops", "--crops-dir", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "damage.unit" in err and "t.toml" in err


def test_cli_unknown_crop_exits_2(capsys):
    assert main(["crops", "tomatoe"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("Error: ") and 'did you mean "tomatoes"' in err


def test_cli_unknown_stage_exits_2(capsys):
    assert main(["crops", "tomato:ripe"]) == 2
    assert "stages: plants, flowering, fruiting" in capsys.readouterr().err


def test_cli_shows_durations_and_mixed_kinds_per_cell(tmp_path, capsys):
    _write(tmp_path, "test.toml", GOOD)
    assert main(["crops", "test crop", "--crops-dir", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "5.0 °C, 12 h [2]" in out  # chill of stage "one", 12 h as given
    assert "(10 % kill), 30 min" in out and "(90 %), 30 min" in out  # stage "two"
    assert "[3] from memory — not checked against a publication: -5 °C" in out


@pytest.mark.parametrize(
    ("text", "system", "expected"),
    [
        ("injury at 0–5 °C.", "us", "injury at 32–41 °F."),
        ("below 10 °C flowering crops", "us", "below 50 °F flowering crops"),
        (
            "damaging range -4 to -7 °C (warm end)",
            "us",
            "damaging range 24.8 to 19.4 °F (warm end)",
        ),
        ("freezes at 28 °F", "metric", "freezes at -2.2 °C"),
        ("survives 32–39 °F; the cold end", "metric", "survives 0–3.9 °C; the cold end"),
        ("OMAFRA's warmer −2.2 °C is kept", "us", "OMAFRA's warmer 28 °F is kept"),
        ("freezes at 28 °F", "us", "freezes at 28 °F"),  # already in the screen's unit
        ("10 % kill after 30 minutes", "us", "10 % kill after 30 minutes"),  # no temperature
    ],
)
def test_a_note_shows_its_temperatures_in_the_screens_units(text, system, expected):
    from grower.report.crops import temperatures_in

    assert temperatures_in(text, system) == expected


@pytest.mark.parametrize("value", [-10.0, -7.0, -4.0, -2.2, 0.0, 5.0, 12.5, 28.0, 41.0])
def test_note_conversion_agrees_with_pint(value):
    # pint's offset units are the independent reference for the two scales
    from grower.report.crops import temperatures_in

    q = UREG.Quantity
    as_f = q(value, UREG.degC).to(UREG.degF).magnitude
    as_c = q(value, UREG.degF).to(UREG.degC).magnitude
    assert float(temperatures_in(f"{value:g} °C", "us").split()[0]) == pytest.approx(as_f, abs=0.05)
    got_c = float(temperatures_in(f"{value:g} °F", "metric").split()[0])
    assert got_c == pytest.approx(as_c, abs=0.05)
