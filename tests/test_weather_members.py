"""The live ensemble (grower/weather/members.py) over loopback, and `tonight` with it.

Nothing here leaves the machine: the ensemble comes from pytest-httpserver on 127.0.0.1,
serving tests/data/openmeteo_ensemble_kingston.json, a document we wrote in the shape
Open-Meteo's ensemble API documents (https://open-meteo.com/en/docs/ensemble-api: each
hourly variable as ``NAME`` for the control run beside ``NAME_member01`` …), invented
values: the control is tests/data/openmeteo_kingston.json, members 01–04 are it shifted
by −2.5, −1.0, +0.8 and +2.2 K with more cloud.
"""

from __future__ import annotations

import copy
import json
import socket
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pytest_httpserver import HTTPServer

from grower import weather
from grower.cli import main
from grower.errors import InputError
from grower.site import Site

DATA = Path(__file__).parent / "data"
FARM = Site(44.3, -76.5, 93.0, "America/Toronto", "invented farm")
SHIFTS = [0.0, -2.5, -1.0, 0.8, 2.2]  # as written into the document (see the docstring)
ARGV = [
    "tonight",
    "examples/hoop-tunnel.toml",
    "--crop",
    "kale",
    "--start",
    "2026-12-03T17:00",
    "--json",
]


def _doc(name: str = "openmeteo_ensemble_kingston.json") -> dict:
    return json.loads((DATA / name).read_text(encoding="utf-8"))


def _dead_url() -> str:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    return f"http://127.0.0.1:{port}"


@pytest.fixture
def served(httpserver: HTTPServer, monkeypatch, tmp_path):
    """The forecast and (unless told otherwise) the ensemble from one loopback server."""
    httpserver.expect_request("/v1/forecast").respond_with_json(_doc("openmeteo_kingston.json"))
    monkeypatch.setenv("GROWER_FORECAST_URL", httpserver.url_for("/"))
    monkeypatch.setenv("GROWER_ENSEMBLE_URL", httpserver.url_for("/"))
    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    return httpserver


def _run_json(capsys, argv) -> dict:
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_parse_ensemble_gives_the_control_then_each_member():
    members = weather.parse_ensemble(_doc(), site=FARM)
    assert len(members) == 5
    control = members[0].values("temperature_c")
    for m, shift in zip(members, SHIFTS, strict=True):
        np.testing.assert_allclose(m.values("temperature_c"), control + shift, atol=0.051)
        assert m.frame.index.equals(members[0].frame.index)


def test_parse_ensemble_names_the_member_with_bad_data():
    doc = _doc()
    doc["hourly"]["temperature_2m_member03"][5] = "warm"
    with pytest.raises(InputError, match="member 03.*temperature_2m holds a value"):
        weather.parse_ensemble(doc)
    doc = _doc()
    del doc["hourly"]["dew_point_2m_member02"]
    with pytest.raises(InputError, match="member 02.*no hourly.dew_point_2m"):
        weather.parse_ensemble(doc)


def test_parse_ensemble_refuses_an_answer_without_members():
    doc = _doc("openmeteo_kingston.json")  # a plain forecast: no _memberNN series
    with pytest.raises(InputError, match="no temperature_2m_memberNN"):
        weather.parse_ensemble(doc)
    with pytest.raises(InputError, match="Latitude must be in range"):
        weather.parse_ensemble(_doc("openmeteo_error_400.json"))


def test_fetch_ensemble_asks_the_documented_query_and_caches(served):
    served.expect_request(
        "/v1/ensemble",
        query_string={
            "latitude": "44.3000",
            "longitude": "-76.5000",
            "hourly": "temperature_2m,dew_point_2m,cloud_cover,wind_speed_10m,"
            "shortwave_radiation,cloud_cover_low",
            "models": "gfs_seamless",
            "timezone": "auto",
            "forecast_days": "2",
            "wind_speed_unit": "ms",
        },
    ).respond_with_json(_doc())
    first = weather.ensemble_forecasts(FARM, days=2)
    assert len(first.members) == 5 and not first.from_cache and first.label == "GFS"
    second = weather.ensemble_forecasts(FARM, days=2)
    assert second.from_cache and len(served.log) == 1


def test_tonight_runs_every_ensemble_member(served, capsys):
    served.expect_request("/v1/ensemble").respond_with_json(_doc())
    d = _run_json(capsys, ARGV)
    assert d["members_source"] == "ensemble" and len(d["members"]) == 5
    crossed = sum(m["crossing_time"] is not None for m in d["members"])
    assert d["chance_of_damage"] == crossed / 5
    assert d["members_basis"]["ensemble"] == "GFS" and d["members_basis"]["notes"] == []
    # the colder a member's forecast, the colder its plants (members are the control
    # shifted; more cloud on the warmer ones makes them warmer still)
    lows = [m["min_plant_c"] for m in d["members"]]
    order = np.argsort(SHIFTS)
    # k factors differ by member: compare only members on one K level
    by_level: dict[float, list[int]] = {}
    for i in order:
        by_level.setdefault(d["members"][i]["k_factor"], []).append(int(i))
    for same in by_level.values():
        assert all(lows[a] <= lows[b] for a, b in zip(same, same[1:], strict=False))
    # the screen says where the nights came from
    assert main(ARGV[:-1]) == 0
    out = capsys.readouterr().out
    assert "of the 5 GFS ensemble members" in out


def test_dead_ensemble_server_falls_back_to_drawn_nights_with_a_note(served, capsys, monkeypatch):
    monkeypatch.setenv("GROWER_ENSEMBLE_URL", _dead_url())
    d = _run_json(capsys, ARGV)
    assert d["members_source"] == "drawn" and len(d["members"]) == 300
    (note,) = d["members_basis"]["notes"]
    assert note.startswith("no ensemble: cannot reach the ensemble service") and "drawn" in note
    assert main(ARGV[:-1]) == 0
    out = capsys.readouterr().out
    assert "! no ensemble: cannot reach the ensemble service" in out
    assert "of 300 drawn nights" in out


@pytest.mark.parametrize(
    "respond",
    [
        lambda r: r.respond_with_data("<html>busy</html>", content_type="text/html"),
        lambda r: r.respond_with_data("oops", status=503),
        lambda r: r.respond_with_json({"error": True, "reason": "Parameter models invalid"}, 400),
    ],
)
def test_a_broken_ensemble_answer_falls_back_too(served, capsys, respond):
    respond(served.expect_request("/v1/ensemble"))
    d = _run_json(capsys, ARGV)
    assert d["members_source"] == "drawn"
    assert d["members_basis"]["notes"][0].startswith("no ensemble: ")


def test_an_ensemble_with_a_broken_member_falls_back(served, capsys):
    doc = copy.deepcopy(_doc())
    doc["hourly"]["temperature_2m_member04"] = doc["hourly"]["temperature_2m_member04"][:10]
    served.expect_request("/v1/ensemble").respond_with_json(doc)
    d = _run_json(capsys, ARGV)
    assert d["members_source"] == "drawn"
    assert "member 04" in d["members_basis"]["notes"][0]


def test_an_ensemble_shorter_than_the_night_falls_back(served, capsys):
    doc = _doc()
    keep = 20  # to 20:00 on the 3rd: the night runs to the morning of the 4th
    doc["hourly"] = {k: v[:keep] for k, v in doc["hourly"].items()}
    served.expect_request("/v1/ensemble").respond_with_json(doc)
    d = _run_json(capsys, ARGV)
    assert d["members_source"] == "drawn"
    assert "before the night does" in d["members_basis"]["notes"][0]


def test_draws_zero_asks_no_ensemble(served, capsys):
    d = _run_json(capsys, [*ARGV, "--draws", "0"])
    assert d["chance_of_damage"] is None and d["members"] == []
    assert all(req.path != "/v1/ensemble" for req, _ in served.log)


_VARIABLES = [
    "temperature_2m",
    "dew_point_2m",
    "cloud_cover",
    "wind_speed_10m",
    "shortwave_radiation",
]
_JUNK = st.one_of(
    st.none(),
    st.booleans(),
    st.text(max_size=5),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(-(10**30), 10**30),
    st.lists(st.integers(-5, 5), max_size=3),
    st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
)


@settings(max_examples=60, deadline=None, derandomize=True)
@given(data=st.data())
def test_a_mangled_ensemble_is_read_or_refused_in_one_line(data):
    """Hostile answers (keys dropped, values of the wrong kind, series cut or padded):
    `parse_ensemble` gives members or one `InputError`, never another exception."""
    doc = _doc()
    hourly = doc["hourly"]
    for _ in range(data.draw(st.integers(1, 4))):
        member = data.draw(st.integers(0, 5))
        key = data.draw(st.sampled_from(_VARIABLES)) + (f"_member{member:02d}" if member else "")
        if key not in hourly:
            continue
        action = data.draw(st.sampled_from(["drop", "junk", "value", "cut", "pad", "units"]))
        if action == "drop":
            del hourly[key]
        elif action == "junk":
            hourly[key] = data.draw(_JUNK)
        elif action == "value":
            series = hourly[key]
            series[data.draw(st.integers(0, len(series) - 1))] = data.draw(_JUNK)
        elif action == "cut":
            hourly[key] = hourly[key][: data.draw(st.integers(0, len(hourly[key])))]
        elif action == "pad":
            hourly[key] = hourly[key] + [0.0] * data.draw(st.integers(1, 3))
        else:
            doc["hourly_units"][key] = data.draw(_JUNK)
    if data.draw(st.booleans()):
        doc[data.draw(st.sampled_from(["utc_offset_seconds", "hourly", "hourly_units"]))] = (
            data.draw(_JUNK)
        )
    try:
        members = weather.parse_ensemble(doc, site=FARM)
    except InputError as exc:
        assert "\n" not in str(exc)
    else:
        assert len(members) >= 2 and all(len(m.frame) >= 2 for m in members)


def test_each_ensemble_member_is_the_night_tonight_gives_for_that_forecast(monkeypatch):
    """With the K spread set to nothing, member i of the chance is `tonight` run on the
    ensemble's member i as the forecast (same start, same readings): exactly for the
    control, which is the forecast given; for the others within what the network's
    linearisation costs — it is built once, at the forecast's mean outside temperature
    and wind (grower.plans.chance), as the `colder` night is — a tenth of the member's
    offset from the control."""
    import pandas as pd

    from grower import house
    from grower.plans import chance, tonight

    monkeypatch.setattr(chance, "HANDBOOK_K_SPREAD", 0.0)
    h = house.read("examples/gable-house.toml")
    members = weather.parse_ensemble(_doc(), site=h.site)
    ensemble = weather.Ensemble(members, "gfs_seamless", "loopback")
    start = pd.Timestamp("2026-12-03T17:00", tz="America/Toronto")
    alarm = tonight.Alarm(-6.5, "test")
    readings = tonight.Readings(inside_c=6.0, soil_c=7.0, start=start, now=start)
    common = dict(alarm=alarm, readings=readings)
    got = tonight.tonight(h, members[0], members=chance.Spec(ensemble=ensemble), **common)
    assert got.chance.source == "ensemble" and got.chance.count == 5
    for m, forecast, shift in zip(got.chance.members, members, SHIFTS, strict=True):
        alone = tonight.tonight(h, forecast, **common)
        assert m.k_factor == 1.0
        if shift == 0.0:  # the control: the same run
            assert m.min_plant_c == pytest.approx(alone.verdict.min_plant_c, abs=1e-9)
            assert m.crossing_time == alone.verdict.crossing_time
            assert m.heated_damage == (not alone.heater.holds)
        else:
            assert abs(m.min_plant_c - alone.verdict.min_plant_c) < 0.1 * abs(shift)
    assert 0 < got.chance.damaged < 5  # members on both sides: a real test
