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
