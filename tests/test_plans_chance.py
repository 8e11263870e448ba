"""The chance of damage (grower/plans/chance.py): drawn members against the exact solution,
the heater's search against running every member, monotonicity, the JSON and the screen.
"""

from __future__ import annotations

import datetime as dt
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from grower import house, solver, weather
from grower.cli import main
from grower.plans import chance, runs, tonight
from grower.plans import model as hm
from grower.report.quantities import chance_text

EXAMPLES = Path(__file__).parent.parent / "examples"
GABLE = EXAMPLES / "gable-house.toml"
COLD_NIGHT = EXAMPLES / "forecast-cold-night.csv"


def _constant_night(mdl: hm.Model, outside_c: float, sky_c: float, offset_k: float, hours=14):
    """A night of constant outside and sky temperature, no sun, on a 10-min grid."""
    times = pd.date_range("2026-12-03T17:00", periods=hours * 6 + 1, freq="10min", tz="UTC")
    n = len(times)
    out, sky = np.full(n, outside_c), np.full(n, sky_c)
    return hm.Boundary(
        utc_s=hm.epoch_s(times),
        tz=dt.UTC,
        times_s=np.arange(n) * 600.0,
        outside_c=out,
        sky_c=sky,
        effective_c=hm.effective_temperature(mdl, out, sky),
        sun_w=np.zeros(n),
        plant_offset_k=np.full(n, offset_k),
        wind_m_s=np.zeros(n),
        cloud_fraction=np.full(n, np.nan),
        assumed_clear=True,
    )


def _exact(mdl, b, t0_c, threshold_c, heater_w, shift_k, factor):
    """One lumped member by the closed form T = T_inf + (T0 - T_inf) exp(-t/tau):
    (crossing time [s] or None, coldest plants [°C], damaged with the heater)."""
    k_out, k_sky, k_g = np.asarray(mdl.network.boundary_w_per_k, float)[0]
    c = float(mdl.network.capacitance_j_per_k[0])
    out, sky, deep = b.outside_c[0] + shift_k, b.sky_c[0] + shift_k, mdl.capacities.deep_ground_c
    k = factor * (k_out + k_sky) + k_g
    t_inf = (factor * (k_out * out + k_sky * sky) + k_g * deep) / k
    tau, end = c / k, b.times_s[-1]
    off = b.plant_offset_k[0]
    setpoint = threshold_c + off
    low = t_inf + (t0_c - t_inf) * math.exp(-end / tau) - off
    if not (t_inf < setpoint < t0_c):
        return None, low, False
    t_cross = tau * math.log((t0_c - t_inf) / (setpoint - t_inf))
    if t_cross > end:
        return None, low, False
    if k * (setpoint - t_inf) <= heater_w:  # the heater holds the setpoint from then on
        return t_cross, low, False
    full = t_inf + heater_w / k  # at full output the air falls towards this
    heated = full + (setpoint - full) * math.exp(-(end - t_cross) / tau) - off
    return t_cross, low, heated < threshold_c - chance.HOLD_TOLERANCE_K


def test_drawn_members_match_the_exact_lumped_solution():
    h = house.read(str(GABLE))
    mdl = hm.build(h, kind="lumped", use_calibration=False)
    k_out, k_sky, k_g = np.asarray(mdl.network.boundary_w_per_k, float)[0]
    k = k_out + k_sky + k_g
    sky_below, offset, threshold, t0 = 18.0, 1.0, 0.0, 8.0
    # outside chosen so that the house tends to the setpoint exactly: about half the
    # members (the colder half) reach the alarm
    setpoint = threshold + offset
    outside = (setpoint * k + k_sky * sky_below - k_g * mdl.capacities.deep_ground_c) / (
        k_out + k_sky
    )
    b = _constant_night(mdl, outside, outside - sky_below, offset, hours=30)
    heater = 1.0 * (k_out + k_sky)  # holds about one kelvin of colder night
    spec = chance.Spec(draws=400, seed=3)
    got = chance.run(
        spec,
        house=h,
        kind="lumped",
        use_calibration=False,
        mdl=mdl,
        b=b,
        initial_c=np.array([t0]),
        threshold_c=threshold,
        heater_w=heater,
    )
    assert got.source == "drawn" and got.count == 400
    crossed = heated = 0
    for m in got.members:
        t_cross, low, damaged = _exact(mdl, b, t0, threshold, heater, m.outside_shift_k, m.k_factor)
        assert (m.crossing_time is None) == (t_cross is None)
        if t_cross is not None:
            at = (m.crossing_time - b.times[0].to_pydatetime()).total_seconds()
            assert at == pytest.approx(t_cross, abs=0.5)  # the report rounds to the second
        # exact stepping of the same equation: agreement to round-off
        assert m.min_plant_c == pytest.approx(low, abs=1e-6)
        assert m.heated_damage == damaged
        crossed += t_cross is not None
        heated += damaged
    assert got.chance == crossed / 400 and got.chance_heated == heated / 400
    assert 0.2 < got.chance < 0.8 and 0 < got.chance_heated < got.chance  # a real test


def test_the_members_are_drawn_as_documented():
    from scipy.stats import norm  # an independent normal quantile function

    h = house.read(str(GABLE))
    mdl = hm.build(h, kind="lumped", use_calibration=False)
    b = _constant_night(mdl, -2.0, -20.0, 1.0)
    n = 2000
    got = chance.run(
        chance.Spec(draws=n, seed=7),
        house=h,
        kind="lumped",
        use_calibration=False,
        mdl=mdl,
        b=b,
        initial_c=np.array([8.0]),
        threshold_c=0.0,
        heater_w=None,
    )
    shifts = np.array([m.outside_shift_k for m in got.members])
    # sample mean and standard deviation of n normal draws: within 4 standard errors
    sigma = chance.FORECAST_ERROR_K
    assert abs(shifts.mean()) < 4 * sigma / math.sqrt(n)
    assert abs(shifts.std(ddof=1) - sigma) < 4 * sigma / math.sqrt(2 * (n - 1))
    factors, counts = np.unique([m.k_factor for m in got.members], return_counts=True)
    levels = chance.K_LEVELS
    z = norm.ppf((np.arange(levels) + 0.5) / levels)
    z /= np.sqrt(np.mean(z**2))  # the levels carry the stated spread: unit variance
    np.testing.assert_allclose(factors, 1.0 + chance.HANDBOOK_K_SPREAD / norm.ppf(0.975) * z)
    # so the members' K factors have the stated standard deviation (±30 % is 2 σ ≈ 1.96 σ)
    k = np.array([m.k_factor for m in got.members])
    assert abs(k.std() - chance.HANDBOOK_K_SPREAD / 1.96) < 0.002
    assert counts.max() - counts.min() <= 1  # equally likely levels
    assert got.members[0].heated_damage is None and got.chance_heated is None


def _gable_night(draws=300, seed=chance.DEFAULT_SEED, shift_k=0.0, threshold_c=-0.1):
    h = house.read(str(GABLE))
    f = weather.read_forecast_csv(str(COLD_NIGHT), site=h.site)
    if shift_k:
        f = weather.shifted(f, shift_k)
    start = pd.Timestamp("2026-12-03T17:00", tz="America/Toronto")
    return tonight.tonight(
        h,
        f,
        tonight.Alarm(threshold_c, "test"),
        tonight.Readings(start=start, now=start),
        members=chance.Spec(draws=draws, seed=seed),
    )


def test_the_heaters_search_finds_what_running_every_member_finds(monkeypatch):
    # With the heater a little too small for the coldest nights, compare the search over
    # members (coldest first) with running every member that reaches the alarm.
    searched = _gable_night().chance
    seen: list[np.ndarray] = []

    def every_member(n, fails, guess=0):
        bad = np.asarray(fails(np.arange(n)), bool)
        seen.append(bad)
        return int(np.argmin(bad)) if not bad.all() else n

    monkeypatch.setattr(chance, "_first_held", every_member)
    full = _gable_night().chance
    assert [m.heated_damage for m in searched.members] == [m.heated_damage for m in full.members]
    assert 0 < full.damaged_heated < full.count  # some fail, some hold: a real test
    # the members that fail are a leading run of the coldest (the search's premise)
    for bad in seen:
        assert not np.any(bad[1:] & ~bad[:-1])


def test_same_seed_same_members_and_another_seed_others():
    a, b, c = _gable_night(60), _gable_night(60), _gable_night(60, seed=99)
    assert a.chance.members == b.chance.members
    assert a.chance.members != c.chance.members


@settings(max_examples=8, deadline=None)
@given(colder=st.floats(0.0, 6.0), threshold=st.floats(-4.0, 3.0), seed=st.integers(0, 10**6))
def test_a_colder_forecast_never_lowers_the_chance(colder, threshold, seed):
    base = _gable_night(40, seed=seed, threshold_c=threshold).chance
    cold = _gable_night(40, seed=seed, shift_k=-colder, threshold_c=threshold).chance
    assert cold.chance >= base.chance
    assert cold.chance_heated >= base.chance_heated


_CONTEXT: dict = {}


def _heater_context():
    """The gable house's cold night on the solver grid, built once."""
    if not _CONTEXT:
        h = house.read(str(GABLE))
        f = weather.read_forecast_csv(str(COLD_NIGHT), site=h.site)
        start = pd.Timestamp("2026-12-03T17:00", tz="America/Toronto")
        s, e, _sunrise, _ = tonight.night_window(h, f, start, start)
        mdl = hm.build(h)
        b = hm.boundary(h, mdl, f, hm.grid(s, e, f.frame.index, tonight.STEP_S))
        _CONTEXT.update(h=h, mdl=mdl, b=b)
    return _CONTEXT


@settings(max_examples=10, deadline=None)
@given(
    q=st.floats(0.0, 60e3),
    more=st.floats(0.0, 30e3),
    seed=st.integers(0, 10**6),
    threshold=st.floats(-3.0, 3.0),
)
def test_more_heater_never_raises_the_heated_chance(q, more, seed, threshold):
    ctx = _heater_context()

    def members(watts: float | None) -> chance.Chance:
        return chance.run(
            chance.Spec(draws=60, seed=seed),
            house=ctx["h"],
            kind="two-node",
            use_calibration=True,
            mdl=ctx["mdl"],
            b=ctx["b"],
            initial_c=np.array([6.0, 8.0]),
            threshold_c=threshold,
            heater_w=watts,
        )

    small, big = members(q).chance_heated, members(q + more).chance_heated
    assert big <= small
    # a heater of no output is no heat: its failures are the nights below the alarm
    # by more than the holding tolerance
    free = members(None)
    below = [m.min_plant_c < threshold - chance.HOLD_TOLERANCE_K for m in free.members]
    assert [m.heated_damage for m in members(0.0).members] == below


ARGV = [
    "tonight",
    str(GABLE),
    "--crop",
    "tomato",
    "--forecast",
    str(COLD_NIGHT),
    "--start",
    "2026-12-03T17:00",
]


def test_json_carries_every_member_and_the_summary(capsys):
    assert main([*ARGV, "--json", "--draws", "57", "--seed", "5"]) == 0
    d = json.loads(capsys.readouterr().out)
    members = d["members"]
    assert len(members) == 57 and d["members_source"] == "drawn"
    crossings = sorted(m["crossing_time"] for m in members if m["crossing_time"])
    assert d["chance_of_damage"] == len(crossings) / 57
    assert d["chance_of_damage_heated"] == sum(m["heated_damage"] for m in members) / 57
    assert d["earliest_crossing"] == crossings[0]
    assert d["median_crossing"] == crossings[(len(crossings) - 1) // 2]
    lows = sorted(m["min_plant_c"] for m in members)
    assert d["coldest_tenth_min_plant_c"] == lows[math.ceil(5.7) - 1]
    assert d["members_basis"] == {
        "forecast_error_k": chance.FORECAST_ERROR_K,
        "k_spread_95": 0.3,
        "k_basis": "handbook",
        "seed": 5,
        "ensemble": None,
        "notes": [],
    }


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--draws", "-3"], '--draws: "-3" cannot be negative'),
        (["--draws", "many"], '--draws: "many" is not a whole number'),
        (["--draws", "50000"], "outside the possible number of drawn nights range"),
        (["--seed", "1.5"], '--seed: "1.5" is not a whole number'),
    ],
)
def test_bad_draws_or_seed_is_one_line(capsys, argv, message):
    assert main([*ARGV, *argv]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("Error: ") and message in err[0]


@pytest.mark.parametrize("columns", [60, 100])
@pytest.mark.parametrize("units", ["metric", "us"])
def test_the_chance_reads_right_after_the_verdict(capsys, monkeypatch, columns, units):
    monkeypatch.setenv("COLUMNS", str(columns))
    assert main([*ARGV, "--units", units]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert all(len(line) <= columns for line in lines)
    text = " ".join(lines)
    start = text.index("Chance of damage:")
    assert text.index("With no heat:") < start < text.index("Check again")
    chance_part = text[start : text.index("Check again")]
    assert "with the installed heater (of 300 drawn nights)" in chance_part
    assert "coldest tenth of nights" in chance_part
    assert ("°F" in chance_part) == (units == "us") and ("°C" in chance_part) == (units != "us")
    how = next(line for line in lines if line.startswith("Nights drawn:"))
    assert ("3.8 °F" in how) if units == "us" else ("2.1 K" in how)
    # --brief prints the same chance lines
    assert main([*ARGV, "--units", units, "--brief"]) == 0
    assert "Chance of damage:" in capsys.readouterr().out


def test_k_spread_from_the_fit_interval(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "100")
    h = house.read(str(GABLE))
    spread, basis = chance.k_spread(h, "two-node", True)
    assert (spread, basis) == (chance.HANDBOOK_K_SPREAD, "handbook")
    import tomllib

    from .calibration_tables import format2

    base = format2(GABLE.read_text(encoding="utf-8"))
    k_out = tomllib.loads(base)["calibration"]["k_outside_w_per_k"]
    text = base + f"k_outside_w_per_k_ci95 = {0.08 * k_out!r}\n"
    path = tmp_path / "fitted.toml"
    path.write_text(text, encoding="utf-8")
    fitted = house.read(str(path))
    assert chance.k_spread(fitted, "two-node", True) == (pytest.approx(0.08, rel=1e-5), "fit")
    # the lumped model does not use a two-node fit; --no-calibration ignores it
    assert chance.k_spread(fitted, "lumped", True)[1] == "handbook"
    assert chance.k_spread(fitted, "two-node", False)[1] == "handbook"
    # with the sky part's interval too, one factor on both: the half-widths add
    k_sky = tomllib.loads(base)["calibration"]["k_sky_w_per_k"]
    both = tmp_path / "both.toml"
    both.write_text(text + f"k_sky_w_per_k_ci95 = {0.5 * k_sky!r}\n", encoding="utf-8")
    wide = (0.08 * k_out + 0.5 * k_sky) / (k_out + k_sky)
    assert chance.k_spread(house.read(str(both)), "two-node", True) == (
        pytest.approx(wide, rel=1e-9),
        "fit",
    )
    # the command uses it, and says so in its one line on the members
    argv = ["tonight", str(path), *ARGV[2:]]
    assert main([*argv, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["members_basis"]["k_basis"] == "fit"
    assert d["members_basis"]["k_spread_95"] == pytest.approx(0.08, rel=1e-5)
    spread = d["members_basis"]["k_spread_95"]
    np.testing.assert_allclose(
        sorted({m["k_factor"] for m in d["members"]}), chance.k_levels(spread)
    )
    assert main([*argv, "--no-calibration", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["members_basis"]["k_basis"] == "handbook"
    assert main(argv) == 0
    assert "K ±8 % (the fit's 95 % interval)" in capsys.readouterr().out


def test_the_commands_defaults_are_the_plans():
    from grower.commands import tonight as command

    assert (command.DEFAULT_DRAWS, command.DEFAULT_SEED) == (
        chance.DEFAULT_DRAWS,
        chance.DEFAULT_SEED,
    )


@pytest.mark.parametrize(
    ("count", "total", "text"),
    [
        (0, 300, "under 1 %"),
        (0, 31, "under 10 %"),
        (31, 31, "over 90 %"),
        (300, 300, "over 99 %"),
        (1, 300, "under 1 %"),
        (299, 300, "over 99 %"),
        (105, 300, "35 %"),
        (3, 300, "1 %"),
        (1, 2, "50 %"),
    ],
)
def test_chance_text(count, total, text):
    assert chance_text(count, total) == text


@pytest.mark.parametrize("columns", [60, 100])
def test_several_houses_show_their_chance_where_it_fits(capsys, monkeypatch, columns):
    monkeypatch.setenv("COLUMNS", str(columns))
    hoop, glass = str(EXAMPLES / "hoop-tunnel.toml"), str(EXAMPLES / "glass-range.toml")
    argv = [*ARGV[:2], hoop, glass, *ARGV[2:], "--draws", "50"]
    assert main(argv) == 0
    lines = capsys.readouterr().out.splitlines()
    assert all(len(line) <= columns for line in lines)
    # the worst house's verdict lines, its chance right after them
    first = next(i for i, line in enumerate(lines) if line.startswith("Chance of damage:"))
    assert lines[first - 2].startswith("With no heat:") or lines[first - 1].startswith("With")
    assert any("chance (heated)" in line for line in lines) == (columns == 100)
    if columns == 100:
        # each house's row ends with its chance; the heated houses' heated one in brackets
        assert main([*argv, "--json"]) == 0
        docs = json.loads(capsys.readouterr().out)["houses"]
        for d in docs:
            shown = chance_text(round(d["chance_of_damage"] * 50), 50)
            if d["chance_of_damage_heated"] is not None:
                shown += f" ({chance_text(round(d['chance_of_damage_heated'] * 50), 50)})"
            rows = [line.rstrip(" │┃") for line in lines if d["house"][:15] in line]
            assert any(row.endswith(shown) for row in rows), (shown, rows)


def test_draws_zero_leaves_the_chance_out_quietly(capsys):
    assert main([*ARGV, "--draws", "0"]) == 0
    captured = capsys.readouterr()
    assert "Chance of damage" not in captured.out and "Nights drawn" not in captured.out
    assert captured.err == ""
    assert main([*ARGV, "--draws", "0", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["chance_of_damage"] is None and d["members"] == [] and d["members_source"] is None


def test_below_the_alarm_now_gives_no_crossing_times(capsys, monkeypatch):
    # every night starts where the plants are: at the alarm already, so no "earliest"
    monkeypatch.setenv("COLUMNS", "100")
    argv = [*ARGV[:4], "--inside-now", "-3C", *ARGV[4:], "--draws", "40"]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert out.startswith("BELOW THE ALARM NOW")
    assert f"Chance of damage: {chance_text(40, 40)} with no heat" in out
    assert "at the earliest" not in out and "The coldest tenth of nights: plants" in out


def test_the_plants_take_a_plural_verb(capsys, monkeypatch):
    # with --threshold and no crop the subject is "the plants" (was "the plants reaches")
    monkeypatch.setenv("COLUMNS", "200")
    argv = ["tonight", str(GABLE), "--threshold", "1C", *ARGV[4:], "--brief"]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "With no heat: the plants reach 1.0 °C" in out and "plants reaches" not in out
    assert main([*argv[:3], "-30C", *argv[4:]]) == 0
    assert "the plants stay above -30.0 °C" in capsys.readouterr().out


@settings(max_examples=200, deadline=None)
@given(data=st.data(), n=st.integers(1, 60))
def test_the_search_finds_the_end_of_the_failures_from_any_guess(data, n):
    # the guess only orders the probes: for every leading run of failures and every guess
    # the search returns where the run ends, probing each member at most once
    held = data.draw(st.integers(0, n), label="held")
    guess = data.draw(st.integers(-3, n + 3), label="guess")
    probed: list[int] = []

    def fails(pos):
        probed.extend(int(p) for p in pos)
        return np.asarray(pos) < held

    assert chance._first_held(n, fails, guess=guess) == held
    assert len(probed) == len(set(probed)) and all(0 <= p < n for p in probed)


@pytest.mark.parametrize("threshold", [-0.1, 1.0, 3.0])
@pytest.mark.parametrize("heater_w", [0.0, 12e3, 23e3, 40e3])
def test_members_held_without_an_analysis_are_held(threshold, heater_w):
    # `_held_unsaturated` spares the analysis of members whose heater never ran at full
    # output (their plants cannot fall further below the alarm than the leaf offset rises
    # within a step): the exact analysis of the same run must find each of them held, and
    # by more than the half tolerance the argument leaves; members at full output are left
    # to the analysis
    ctx = _heater_context()
    mdl, b = chance._scaled(ctx["mdl"], 1.1), ctx["b"]
    base = b.solver_boundary(mdl)
    shifts = np.linspace(-7.0, 3.0, 21)
    bc = np.repeat(base[None], shifts.size, axis=0)
    bc[:, :, :2] += shifts[:, None, None]
    off = b.plant_offset_k
    tr = runs.thermostat(
        mdl, b.times_s, bc, np.array([6.0, 8.0]), threshold + off, heater_w, b.solver_gains(mdl)
    )
    sure = chance._held_unsaturated(tr, off)
    low = solver.analyse(tr, threshold, off).min_c
    assert np.all(low[sure] >= threshold - chance.HOLD_TOLERANCE_K / 2)
    if heater_w == 0.0:
        assert not sure.any()  # no output: every member that reaches the alarm saturates
    elif heater_w == 40e3 and threshold < 3.0:
        assert sure.any()  # a real test: some members are spared the analysis


def test_a_rising_leaf_offset_leaves_members_to_the_analysis():
    # a clearing sky raises the leaf offset within a step: held air need not mean held
    # plants, so no member is called held without the analysis
    ctx = _heater_context()
    mdl, b = ctx["mdl"], ctx["b"]
    risen = np.asarray(b.plant_offset_k, float).copy()
    risen[40:] += chance.HOLD_TOLERANCE_K  # one step rises by the whole tolerance

    def run(off):
        bc, gains = b.solver_boundary(mdl)[None], b.solver_gains(mdl)
        return runs.thermostat(mdl, b.times_s, bc, np.array([6.0, 8.0]), -0.1 + off, 60e3, gains)

    held = run(b.plant_offset_k)  # never at full output
    assert chance._held_unsaturated(held, b.plant_offset_k).all()
    assert not chance._held_unsaturated(held, risen).any()  # the same run, the offset risen
    assert not chance._held_unsaturated(run(risen), risen).any()


@pytest.mark.parametrize("heater_w", [12e3, 23e3, 40e3])
def test_members_starting_below_the_alarm_are_judged_alike_quick_or_exact(heater_w):
    # plants 0.4 K below the alarm at the start, damage 1 K below it: `fails` (the quick
    # judgement, sparing the restarted run where the heater never saturates again after
    # the recovery) must agree member by member with the exact one (every member's run
    # restarted at its recovery), and per-member leaf offsets with the shared one
    ctx = _heater_context()
    mdl, b = ctx["mdl"], ctx["b"]
    base = b.solver_boundary(mdl)
    shifts = np.linspace(-6.0, 4.0, 15)
    bc = np.repeat(base[None], shifts.size, axis=0)
    bc[:, :, :2] += shifts[:, None, None]
    off, gains, threshold = b.plant_offset_k, b.solver_gains(mdl), 0.5
    x0 = np.array([threshold + off[0] - 0.4, 8.0])
    args = (mdl, b.times_s, bc, x0, threshold, off, heater_w, gains)
    exact = tonight.heated_night(*args, damage_c=threshold - 1.0)
    assert exact.start_below.all() and np.isfinite(exact.recovered_s).all()
    quick = tonight.heated_night(
        *args, damage_c=threshold - 1.0, run=exact.trajectory, coldest_after=False
    )
    assert (quick.holds == exact.holds).all()
    apart = np.repeat(np.asarray(off, float)[None], shifts.size, axis=0)
    each = tonight.heated_night(
        mdl, b.times_s, bc, x0, threshold, apart, heater_w, gains, damage_c=threshold - 1.0
    )
    assert (each.holds == exact.holds).all()
    np.testing.assert_allclose(each.recovered_s, exact.recovered_s, atol=1e-6)
    # held members stay at the alarm from the recovery on; the others fall below it
    held = exact.holds
    assert (exact.min_after_c[held] >= threshold - tonight.HOLD_TOLERANCE_K).all()
    assert (exact.min_after_c[~held] < threshold - tonight.HOLD_TOLERANCE_K).all()
    if heater_w == 23e3:
        assert held.any() and not held.all()  # a real test: both kinds of member
