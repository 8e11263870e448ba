"""`grower fit`: recovery of known K and C, identifiability, refusals, --write, the CLI.

Synthetic records are made by integrating the house's network with scipy's solve_ivp
(DOP853, tight tolerances) — an integrator independent of grower.solver, which the fit
uses — from a "true" house whose conductances and capacities are the geometry's times
known factors, then adding logger noise. Every house and record here is invented.
"""

from __future__ import annotations

import datetime as dt
import importlib
import json
import os
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st
from scipy import special
from scipy.integrate import solve_ivp

from grower import house, solver
from grower.cli import main
from grower.errors import InputError
from grower.fit import calibration_values, fit_house, prepare, synthetic, write_calibration
from grower.fit.calibration import updated_text
from grower.logger import read_logger_csv
from grower.plans import model as hm
from grower.weather import COLUMNS, Forecast

TZ = ZoneInfo("America/Toronto")
EXAMPLES = Path(__file__).parent.parent / "examples"
#: the check widens the stated 95 % interval to 99.9 % (t ≈ 3.29/1.96 = 1.68 for the
#: hundreds of degrees of freedom here), so that a correct interval fails a single check
#: once in a thousand, and the few dozen checks of this file are not flaky
WIDEN_TO_999 = 1.7


def _house(tmp_path: Path, *, width=9.0, length=30.0, cover="double-poly", ach=1.0, heater_w=None):
    text = synthetic.house_text(
        name="test house", width=width, length=length, cover=cover, ach=ach, heater_w=heater_w
    )
    path = tmp_path / "house.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _night_times(nights: int, hours: float = 12.0, first: str = "18:00") -> list[pd.DatetimeIndex]:
    """10-minute rows from 18:00 (after sunset in late November at 44° N) for `hours`."""
    out = []
    for n in range(nights):
        start = pd.Timestamp(f"2026-11-{20 + n} {first}", tz=TZ)
        out.append(pd.date_range(start, start + pd.Timedelta(hours=hours), freq="10min"))
    return out


def _sun(index: pd.DatetimeIndex, peak_w_m2: float) -> np.ndarray:
    """A clear-day bell between 07:30 and 16:30 local time [W m-2] (invented)."""
    h = np.asarray(index.hour + index.minute / 60.0)
    day = np.clip(np.sin(np.pi * (h - 7.5) / 9.0), 0.0, None)
    return np.where((h > 7.5) & (h < 16.5), peak_w_m2 * day**1.5, 0.0)


def _outside(index: pd.DatetimeIndex, night: int) -> np.ndarray:
    h = (index - index[0]) / pd.Timedelta(hours=1)
    mean = (3.0, -1.0, 1.5, -3.0)[night % 4]
    return mean + 2.5 * np.cos(np.pi * np.asarray(h) / 12.0) + 0.6 * np.sin(0.9 * np.asarray(h))


def _forecast(index: pd.DatetimeIndex, t_out: np.ndarray, sun=None) -> Forecast:
    frame = pd.DataFrame({c: np.full(len(index), np.nan) for c in COLUMNS}, index=index)
    frame.index.name = "time"
    frame["temperature_c"] = t_out
    given = ("temperature_c",)
    if sun is not None:
        frame["shortwave_w_m2"] = sun
        given += ("shortwave_w_m2",)
    frame["utc_offset_s"] = [int(t.utcoffset().total_seconds()) for t in index]
    return Forecast(frame=frame, source="synthetic", given=given)


def synth(
    tmp_path: Path,
    house_path: Path,
    *,
    kind: str = "lumped",
    k: float = 1.0,
    c: float = 1.0,
    g: float = 1.0,
    nights: int = 2,
    hours: float = 12.0,
    noise: float = 0.2,
    quantise: bool = False,
    heater: str | None = None,
    q_w: float = 0.0,
    heat_nights: tuple[int, ...] = (1,),
    heater_rows: slice | None = None,
    seed: int = 0,
    inside_override=None,
    first: str = "18:00",
    sun_peak: float | None = None,
    sun_factor: float = 1.0,
    sky: float = 1.0,
):
    """Write a synthetic record; return its path and the true values.

    The true house is the geometry's network (at the record's mean outside temperature,
    as the fit builds it) with conductances × k, the air–mass coupling × g more and
    capacities × c; solve_ivp integrates it row to row, the heater held between rows.
    `sky` multiplies the conductance to the sky alone (a house whose sky share differs
    from the geometry's).
    """
    rng = np.random.default_rng(seed)
    h = house.read(house_path)
    idxs = _night_times(nights, hours, first)
    outs = [_outside(ix, n) for n, ix in enumerate(idxs)]
    mean_out = float(np.mean(np.concatenate(outs)))
    geo = hm.build(
        h,
        kind=kind,
        curtain_closed=True,
        mean_radiant_temp_c=mean_out - 5.0,
        air_temp_c=mean_out,
        use_calibration=False,
    )
    n0 = geo.network
    to_boundary = np.array(n0.boundary_w_per_k) * k
    to_boundary[:, list(n0.boundary_names).index("sky")] *= sky
    net = solver.Network(
        np.array(n0.capacitance_j_per_k) * c,
        np.array(n0.coupling_w_per_k) * k * g,
        to_boundary,
        n0.node_names,
        n0.boundary_names,
    )
    a, b = net.state_matrix, net.input_matrix
    lines = [
        "time,inside_c,outside_c"
        + {None: "", "state": ",heater", "power": ",heater_w"}[heater]
        + (",sun_w_m2" if sun_peak is not None else "")
    ]
    for n, (ix, t_out) in enumerate(zip(idxs, outs, strict=True)):
        sun = None if sun_peak is None else _sun(ix, sun_peak)
        bnd = hm.boundary(h, geo, _forecast(ix, t_out, sun), ix)
        bc = bnd.solver_boundary(geo)
        gain = bnd.sun_w * sun_factor
        t = bnd.times_s
        state = np.zeros(t.size)
        if heater and n in heat_nights:
            if heater_rows is not None:
                state[heater_rows] = 1.0
            else:
                state = ((np.arange(t.size) // 3) % 2 == 0).astype(float)  # 30 min on, 30 off
        x = np.array([8.0 + 2 * n, 10.0 + n][: net.n_nodes])
        air = [x[0]]
        for i in range(t.size - 1):
            u0, u1 = bc[i], bc[i + 1]
            p0, p1 = np.zeros(net.n_nodes), np.zeros(net.n_nodes)
            p0[0] = q_w * state[i] + gain[i]  # heater held, sun linear between rows
            p1[0] = q_w * state[i] + gain[i + 1]

            def rhs(s, y, t0=t[i], t1=t[i + 1], u0=u0, u1=u1, p0=p0, p1=p1):
                f = (s - t0) / (t1 - t0)
                return a @ y + b @ np.concatenate([u0 + f * (u1 - u0), p0 + f * (p1 - p0)])

            sol = solve_ivp(rhs, (t[i], t[i + 1]), x, method="DOP853", rtol=1e-10, atol=1e-10)
            x = sol.y[:, -1]
            air.append(x[0])
        inside = np.array(air) + rng.normal(0.0, noise, t.size)
        if inside_override is not None:
            inside = inside_override(bnd, rng)
        if quantise:
            inside = np.round(inside, 1)
        for j, when in enumerate(ix):
            row = f"{when.isoformat()},{inside[j]:.4f},{t_out[j]:.4f}"
            if heater == "state":
                row += f",{'on' if state[j] else 'off'}"
            elif heater == "power":
                row += f",{q_w * state[j]:.1f}"
            if sun is not None:
                row += f",{sun[j]:.3f}"
            lines.append(row)
    path = tmp_path / "log.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    truth = {
        "sun_factor": sun_factor,
        "k_w_per_k": k * geo.k_w_per_k,
        "c_j_per_k": c * geo.c_j_per_k,
        "time_constant_h": c * geo.c_j_per_k / (k * geo.k_w_per_k) / 3600.0,
        "heater_output_w": q_w,
    }
    if kind == "two-node":
        truth["coupling_w_per_k"] = k * g * geo.capacities.air_mass_w_per_k
    return path, truth


def _fit(house_path, log_path, **kw):
    h = house.read(house_path)
    rec = read_logger_csv(log_path, timezone=h.site.timezone if h.site else None)
    return fit_house(h, rec, **kw)


def _within(result, truth, names, widen=WIDEN_TO_999):
    for name in names:
        p = result.chosen.get(name)
        assert p is not None, name
        assert abs(p.value - truth[name]) <= widen * p.half_width, (
            f"{name}: fitted {p.value:.6g} ± {p.half_width:.3g}, true {truth[name]:.6g}"
        )


# ------------------------------------------------------------------ recovery


@settings(
    max_examples=6,
    deadline=None,
    derandomize=True,
    phases=[Phase.explicit, Phase.generate],  # no shrinking: each example is a whole fit
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(
    width=st.floats(6.0, 12.0),
    length=st.floats(15.0, 45.0),
    cover=st.sampled_from(["single-poly", "double-poly", "ir-double-poly"]),
    ach=st.floats(0.5, 2.0),
    k=st.floats(0.7, 1.4),
    c=st.floats(0.6, 1.5),
    noise=st.floats(0.05, 0.3),
    seed=st.integers(0, 2**16),
)
def test_recovers_k_and_c_from_a_record_with_heater_power(
    tmp_path, width, length, cover, ach, k, c, noise, seed
):
    hp = _house(tmp_path, width=width, length=length, cover=cover, ach=ach)
    geo_k = hm.build(house.read(hp), kind="lumped", use_calibration=False).k_w_per_k
    log, truth = synth(
        tmp_path, hp, k=k, c=c, noise=noise, heater="power", q_w=6.0 * geo_k, seed=seed
    )
    r = _fit(hp, log, model="lumped")
    assert r.anchor == "measured power"
    assert r.chosen.get("k_w_per_k").status == "fitted"
    _within(r, truth, ["k_w_per_k", "c_j_per_k", "time_constant_h"])
    # the residual is the logger noise (the model is the true one)
    assert r.chosen.rms_k == pytest.approx(noise, rel=0.25)


def test_stated_95_percent_intervals_cover_the_truth(tmp_path):
    """Over 30 records the 95 % interval of C should miss about 1.5 times; 5 or more
    misses (probability 1.5 % for a true 95 % interval) means the interval is too narrow."""
    hp = _house(tmp_path)
    misses = 0
    rng = np.random.default_rng(7)
    for seed in range(30):
        log, truth = synth(tmp_path, hp, c=float(rng.uniform(0.6, 1.5)), nights=1, seed=seed)
        r = _fit(hp, log, model="lumped")
        p = r.chosen.get("c_j_per_k")
        misses += abs(p.value - truth["c_j_per_k"]) > p.half_width
    assert misses < 5


def test_two_node_house_recovered_with_the_heater_rating(tmp_path):
    q = 20000.0
    hp = _house(tmp_path, heater_w=q)
    log, truth = synth(
        tmp_path,
        hp,
        kind="two-node",
        k=1.15,
        c=0.8,
        g=1.2,
        nights=3,
        heater="state",
        q_w=q,
        quantise=True,
        seed=3,
    )
    r = _fit(hp, log)
    assert r.model == "two-node" and r.anchor == "heater rating"
    assert r.other is not None and r.other.model == "lumped"
    assert r.chosen.rms_k < r.other.rms_k
    _within(r, truth, ["k_w_per_k", "c_j_per_k", "coupling_w_per_k"])
    assert r.chosen.get("heater_output_w").status == "anchor"
    assert len(r.chosen.segments) == 3
    assert all(s.initial_mass_c is not None for s in r.chosen.segments)


def test_a_heated_night_identifies_the_heater_output(tmp_path):
    hp = _house(tmp_path)  # no heater in the house file: K is held at the geometry's
    log, truth = synth(tmp_path, hp, c=0.9, heater="state", q_w=8000.0, seed=11)
    r = _fit(hp, log, model="lumped")
    assert r.anchor == "geometry"
    q = r.chosen.get("heater_output_w")
    assert q.status == "fitted" and q.relative < 0.15
    _within(r, truth, ["heater_output_w", "c_j_per_k"])


def test_the_heater_rating_anchors_k(tmp_path):
    hp = _house(tmp_path, heater_w=9000.0)
    log, truth = synth(tmp_path, hp, k=1.25, c=0.85, heater="state", q_w=9000.0, seed=5)
    r = _fit(hp, log, model="lumped")
    assert r.anchor == "heater rating"
    _within(r, truth, ["k_w_per_k", "c_j_per_k"])
    # the other anchor on the same record: K held, the heater's output fitted instead
    g = _fit(hp, log, model="lumped", anchor="geometry")
    assert g.anchor == "geometry" and g.chosen.get("k_outside_w_per_k").half_width == 0.0
    lift = 9000.0 / truth["k_w_per_k"]  # what the record fixes: Q/K
    q = g.chosen.get("heater_output_w")
    assert abs(q.value / g.chosen.get("k_w_per_k").value - lift) <= WIDEN_TO_999 * q.half_width / (
        g.chosen.get("k_w_per_k").value
    )


def test_free_float_fixes_the_time_constant_not_k(tmp_path):
    hp = _house(tmp_path)
    log, truth = synth(tmp_path, hp, k=1.3, c=1.0, seed=2)
    r = _fit(hp, log, model="lumped")
    k = r.chosen.get("k_outside_w_per_k")  # the conduction is held; the sky part fitted
    assert r.anchor == "geometry" and k.status == "anchor" and k.ratio == pytest.approx(1.0)
    assert r.chosen.get("k_w_per_k").status in ("anchor", "derived")
    _within(r, truth, ["time_constant_h"])
    assert "not K" in r.anchor_note


def test_with_days_fits_the_sun_gain_factor(tmp_path):
    """Two whole days and nights logged with the sun; the true house takes 60 % of the
    geometry's sun gain (SUN_SENSIBLE_FRACTION is itself from memory)."""
    hp = _house(tmp_path)
    log, truth = synth(
        tmp_path, hp, nights=1, hours=48.0, first="06:00", sun_peak=300.0, sun_factor=0.6, seed=8
    )
    night = _fit(hp, log, model="lumped")
    assert night.chosen.get("sun_factor") is None and any("nights only" in n for n in night.notes)
    day = _fit(hp, log, model="lumped", with_days=True)
    assert day.n_samples > night.n_samples
    s = day.chosen.get("sun_factor")
    assert s.status == "fitted" and s.geometry == 1.0
    _within(day, truth, ["sun_factor", "time_constant_h"])


# ------------------------------------------------------------------ against the sensor


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_noise_is_read_from_the_record_and_a_true_model_is_accepted(tmp_path, seed):
    """0.1 K white noise on three nights with the heater power logged: the estimate from
    the record's second differences is within 20 % of 0.1 K (its spread on 200 differences
    is about 10 %: checked on pure noise), and the true model's fit is judged good."""
    hp = _house(tmp_path)
    geo_k = hm.build(house.read(hp), kind="lumped", use_calibration=False).k_w_per_k
    log, _ = synth(
        tmp_path, hp, k=1.1, c=0.9, nights=3, noise=0.1, heater="power", q_w=6.0 * geo_k, seed=seed
    )
    r = _fit(hp, log, model="lumped")
    assert r.noise_k == pytest.approx(0.1, rel=0.2)
    assert r.quality == "good" and r.noise_ratio < 2.0
    assert abs(r.residual_lag1) < 0.3  # the true model leaves white residuals


def _with_unlogged_heat(log: Path, lift_k: float) -> None:
    """Lift three hours of the middle of the record by `lift_k` (heat the record does not
    log: a space heater nobody wrote down)."""
    frame = pd.read_csv(log)
    mid = len(frame) // 2
    frame.loc[mid - 18 : mid, "inside_c"] += lift_k
    frame.to_csv(log, index=False)


def test_a_house_with_half_the_geometrys_sky_share_now_fits_well(tmp_path):
    """A house with half the geometry's sky share: with its own sky factor the fit follows
    the record at the sensor's noise, with white residuals, and finds the sky part at
    about half the geometry's (the single factor on every conductance left it 2.3 × the
    noise, in long waves, and biased K low)."""
    hp = _house(tmp_path, heater_w=9000.0)
    log, truth = synth(
        tmp_path, hp, nights=3, noise=0.1, sky=0.5, heater="state", q_w=9000.0, seed=0
    )
    r = _fit(hp, log, model="lumped")
    assert r.noise_k == pytest.approx(0.1, rel=0.2)
    assert r.quality == "good" and not r.rough and r.noise_ratio < 1.5
    assert abs(r.residual_lag1) < 0.3
    sky = r.chosen.get("k_sky_w_per_k")
    assert sky.status == "fitted" and sky.ratio == pytest.approx(0.5, abs=0.1)
    assert r.chosen.scales["sky_scale"] == pytest.approx(0.5, abs=0.1)
    _within(r, truth, ["c_j_per_k"])
    k_out = r.chosen.get("k_outside_w_per_k")  # the true house has the geometry's
    assert abs(k_out.value - k_out.geometry) <= WIDEN_TO_999 * k_out.half_width


def test_intervals_widen_for_residuals_that_run_in_waves(tmp_path, monkeypatch):
    """The half-sky-share record fitted with the geometry's sky share held (the old single
    factor) leaves residuals with lag-1 autocorrelation near 0.8: the half-widths grow by
    √((1 + ρ)/(1 − ρ)) (about 3) over the independent-error ones, times the ratio of
    Student's t on the effective degrees of freedom to t on n − p (the night-block
    interval is switched off here to see the AR(1) widening alone)."""
    est = importlib.import_module("grower.fit.estimate")  # the package exports the function
    hp = _house(tmp_path, heater_w=9000.0)
    log, _ = synth(tmp_path, hp, nights=3, noise=0.1, sky=0.5, heater="state", q_w=9000.0, seed=0)
    h = house.read(hp)
    data = prepare(h, read_logger_csv(log, timezone=h.site.timezone))
    monkeypatch.setattr(est, "MIN_BLOCKS", 99)
    wide = est.estimate(data, "lumped", "heater rating", sky="held", ground=False)
    rho = wide.residual_lag1
    assert rho > 0.5
    monkeypatch.setattr(est, "MAX_LAG1", 0.0)  # no widening
    narrow = est.estimate(data, "lumped", "heater rating", sky="held", ground=False)
    ratio = wide.get("k_w_per_k").half_width / narrow.get("k_w_per_k").half_width
    inflation = (1 + rho) / (1 - rho)
    n, p = wide.n_residuals, wide.n_free
    t_wide = special.stdtrit(int(n / inflation) - p, 0.975)  # Student's t, effective dof
    t_narrow = special.stdtrit(n - p, 0.975)
    assert ratio == pytest.approx(np.sqrt(inflation) * t_wide / t_narrow, rel=0.01)


def test_unlogged_heat_is_rough_and_not_written_without_keep_rough(tmp_path, capsys):
    hp = _house(tmp_path)
    log, _ = synth(tmp_path, hp, nights=3, noise=0.1, seed=1)
    _with_unlogged_heat(log, 0.8)
    r = _fit(hp, log, model="lumped")
    assert r.quality == "rough"
    before = hp.read_bytes()
    args = ["fit", str(hp), "--log", str(log), "--model", "lumped"]
    assert main([*args, "--write"]) == 2
    cap = capsys.readouterr()
    err = cap.err.strip()
    assert "\n" not in err and "not written: the fit is rough" in err and "--keep-rough" in err
    assert hp.read_bytes() == before and not hp.with_suffix(".toml.bak").exists()
    assert main([*args, "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["quality"] == "rough" and doc["rms_to_noise"] > 2.0
    assert main([*args]) == 0
    assert "ROUGH" in capsys.readouterr().out
    assert main([*args, "--write", "--keep-rough"]) == 0
    assert "Stored although rough" in capsys.readouterr().out
    assert "[calibration]" in hp.read_text(encoding="utf-8")


def test_a_heater_left_out_of_the_record_is_not_stored(tmp_path):
    """Three nights, the heater on for three hours in the middle one, the heater column
    dropped: a step within the night that no night's cloud can follow (a cloud only
    moves the sky toward the outside air); the fit is refused or marked rough, and
    --write does not store it (without --keep-rough)."""
    hp = _house(tmp_path)
    log, _ = synth(
        tmp_path,
        hp,
        nights=3,
        noise=0.1,
        heater="state",
        q_w=8000.0,
        heater_rows=slice(24, 42),
        seed=0,
    )
    pd.read_csv(log).drop(columns=["heater"]).to_csv(log, index=False)
    try:
        r = _fit(hp, log, model="lumped")
    except InputError:
        pass
    else:
        assert r.quality == "rough" and r.noise_ratio > 2.5
    before = hp.read_bytes()
    assert main(["fit", str(hp), "--log", str(log), "--model", "lumped", "--write"]) == 2
    assert hp.read_bytes() == before


def test_a_heater_on_all_of_one_night_unlogged_is_not_taken_for_cloud(tmp_path):
    """The same heater cycling all through the middle night, unlogged: 8 kW more than a
    night's cloud can explain (a cloud at most brings the sky up to the outside air), so
    the fit does not hide it in that night's sky: it is refused, and the message asks
    for the heater's power or state."""
    hp = _house(tmp_path)
    log, truth = synth(tmp_path, hp, nights=3, noise=0.1, heater="state", q_w=8000.0, seed=0)
    pd.read_csv(log).drop(columns=["heater"]).to_csv(log, index=False)
    with pytest.raises(InputError, match="heater's power or its on/off state"):
        _fit(hp, log, model="lumped")


# ------------------------------------------------------------------ refusals


def test_flat_record_is_refused(tmp_path):
    hp = _house(tmp_path)
    log, _ = synth(
        tmp_path,
        hp,
        seed=1,
        inside_override=lambda b, rng: 14.0 + rng.normal(0, 0.05, b.times_s.size),
    )
    with pytest.raises(InputError, match="hardly changes.*log nights"):
        _fit(hp, log)


def test_short_record_is_refused(tmp_path):
    hp = _house(tmp_path)
    log, _ = synth(tmp_path, hp, nights=1, hours=4.0)
    with pytest.raises(InputError, match=r"only 4\.0 h .*6 h are needed.*two clear nights"):
        _fit(hp, log)


def test_inside_at_the_outside_temperature_is_refused(tmp_path):
    hp = _house(tmp_path)
    log, _ = synth(
        tmp_path,
        hp,
        inside_override=lambda b, rng: b.effective_c + rng.normal(0, 0.2, b.times_s.size),
    )
    with pytest.raises(InputError, match="differ by only"):
        _fit(hp, log)


def test_a_heater_that_barely_ran_is_not_fitted(tmp_path):
    hp = _house(tmp_path)
    log, _ = synth(
        tmp_path, hp, heater="state", q_w=3000.0, heater_rows=slice(30, 31), noise=0.3, seed=4
    )
    with pytest.raises(InputError) as info:
        _fit(hp, log, model="lumped")
    msg = str(info.value)
    assert "heater output" in msg and "on/off state" in msg and "\n" not in msg


def test_a_heater_on_all_night_cannot_be_told_from_the_heat_capacity(tmp_path):
    """A heavy house with the heater on all of one short night drifts almost in a straight
    line: its slope fixes only a mix of C and Q (near-singular JᵀJ)."""
    hp = _house(tmp_path)
    log, _ = synth(
        tmp_path,
        hp,
        c=3.0,
        nights=1,
        hours=7.0,
        heater="state",
        q_w=6000.0,
        heat_nights=(0,),
        heater_rows=slice(0, None),
    )
    with pytest.raises(InputError, match=r"cannot be told apart \(correlation .*on/off state"):
        _fit(hp, log, model="lumped")


def test_no_outside_temperature_is_refused(tmp_path):
    hp = _house(tmp_path)
    log = tmp_path / "log.csv"
    log.write_text("time,inside\n2026-11-20T18:00-05:00,12\n2026-11-20T18:10-05:00,11\n")
    with pytest.raises(InputError, match="no outside temperature.*--outside"):
        _fit(hp, log)


def test_no_site_and_no_sun_cannot_tell_night_from_day(tmp_path):
    text = synthetic.house_text(name="test house").split("[site]")[0]
    hp = tmp_path / "nosite.toml"
    hp.write_text(text, encoding="utf-8")
    log = tmp_path / "log.csv"
    log.write_text(
        "time,inside,outside\n2026-11-20T18:00-05:00,12,3\n2026-11-20T18:10-05:00,11,3\n"
    )
    h = house.read(hp)
    with pytest.raises(InputError, match="cannot tell night from day"):
        fit_house(h, read_logger_csv(log))


def test_long_gaps_split_the_record_and_days_are_left_out(tmp_path):
    hp = _house(tmp_path)
    log, _ = synth(tmp_path, hp, nights=2)
    h = house.read(hp)
    rec = read_logger_csv(log, timezone=h.site.timezone)
    # drop 04:00 Nov 20 night onwards for 3.5 h inside the first night: a second split
    keep = ~((rec.utc_s > rec.utc_s[40]) & (rec.utc_s < rec.utc_s[40] + 3.5 * 3600))
    from dataclasses import replace

    cut = replace(
        rec,
        utc_s=rec.utc_s[keep],
        offsets_s=rec.offsets_s[keep],
        inside_c=rec.inside_c[keep],
        outside_c=rec.outside_c[keep],
        lines=rec.lines[keep],
    )
    data = prepare(h, cut)
    assert len(data.segments) == 3
    assert all(np.all(np.diff(s.times_s) <= 3 * 3600) for s in data.segments)


# ------------------------------------------------------------------ --write


@pytest.fixture(scope="module")
def example_fit():
    h = house.read(EXAMPLES / "gable-house.toml")
    rec = read_logger_csv(EXAMPLES / "logger-gable-house.csv", timezone=h.site.timezone)
    return fit_house(h, rec, today=dt.date(2026, 11, 25))


def test_example_record_recovers_its_invented_house(example_fit):
    """examples/make_logger_record.py made the example record from the example house's
    own two-node network at the record's conditions with the conduction (outside air,
    deep ground, coupling) × 1.15, the sky part × 0.70 and every capacity × 0.90, by a
    solve_ivp integration of equations written in the script; the heater at its rating
    on a 10-minute thermostat on the second and fourth nights, logged on/off; 0.1 K noise
    on both sensors, 0.1 °C steps. The truth is written beside the record. Issue 11's bar:
    K to the outside air within 5 %, C within 10 %, each truth inside the stated 95 %
    interval (the sky part and the coupling inside theirs)."""
    doc = json.loads((EXAMPLES / "logger-gable-house.truth.json").read_text(encoding="utf-8"))
    truth, geometry = doc["truth"], doc["geometry"]
    r = example_fit
    assert r.model == "two-node" and r.anchor == "heater rating" and r.quality == "good"
    assert len(r.chosen.segments) == 4
    assert [s.heated for s in r.chosen.segments] == [False, True, False, True]
    k_out, c = r.chosen.get("k_outside_w_per_k"), r.chosen.get("c_j_per_k")
    # the fit's geometry is the script's: the same house at the same conditions
    assert k_out.geometry == pytest.approx(geometry["k_outside_w_per_k"], rel=1e-3)
    assert c.geometry == pytest.approx(geometry["c_j_per_k"], rel=1e-3)
    assert k_out.value == pytest.approx(truth["k_outside_w_per_k"], rel=0.05)
    assert c.value == pytest.approx(truth["c_j_per_k"], rel=0.10)
    _within(r, truth, ["k_outside_w_per_k", "c_j_per_k", "coupling_w_per_k"], widen=1.0)
    sky = r.chosen.get("k_sky_w_per_k")  # the sky columns, beside the geometry's
    assert sky.geometry == pytest.approx(geometry["k_sky_w_per_k"], rel=1e-3)
    assert abs(sky.value - truth["k_sky_w_per_k"]) <= sky.half_width


def test_the_k_ratio_compares_one_definition(example_fit):
    """K's "× the geometry's" compares like with like: the fitted K and the geometry's are
    both the sum of the conductance columns (to the outside air + to the sky), not a sum
    against the steady K to T_eff (whose sky part goes through the air–floor coupling).
    On the example record the truth (examples/logger-gable-house.truth.json, written by
    make_logger_record.py) is 1,123.7 + 407.4 = 1,531.2 W/K against the geometry's
    977.2 + 582.0 = 1,559.2 W/K: 0.982, where the steady geometry K (1,498.5) gave 1.02."""
    doc = json.loads((EXAMPLES / "logger-gable-house.truth.json").read_text(encoding="utf-8"))
    truth, geometry = doc["truth"], doc["geometry"]
    k = example_fit.chosen.get("k_w_per_k")
    k_out, sky = (
        example_fit.chosen.get("k_outside_w_per_k"),
        example_fit.chosen.get("k_sky_w_per_k"),
    )
    columns_geo = geometry["k_outside_w_per_k"] + geometry["k_sky_w_per_k"]
    assert k.value == pytest.approx(k_out.value + sky.value, rel=1e-12)
    assert k.geometry == pytest.approx(columns_geo, rel=1e-3)
    assert k.geometry != pytest.approx(geometry["k_w_per_k"], rel=0.01)  # not the steady K
    columns_truth = truth["k_outside_w_per_k"] + truth["k_sky_w_per_k"]
    assert abs(k.value - columns_truth) <= k.half_width
    assert k.ratio == pytest.approx(columns_truth / columns_geo, abs=0.02)  # 0.982
    tau = example_fit.chosen.get("time_constant_h")
    assert tau.geometry == pytest.approx(geometry["c_j_per_k"] / columns_geo / 3600.0, rel=1e-3)


def _outside_table(text: str) -> str:
    """The file's text with the [calibration] table (header to the next table) cut out."""
    lines = text.splitlines(keepends=True)
    out, inside = [], False
    for line in lines:
        s = line.strip()
        if s.startswith("["):
            inside = s.split("#")[0].strip() == "[calibration]"
        if not inside:
            out.append(line)
    return "".join(out)


def test_write_appends_the_table_and_keeps_the_rest_byte_for_byte(tmp_path, example_fit):
    src = (EXAMPLES / "gable-house.toml").read_text(encoding="utf-8")
    path = tmp_path / "gable-house.toml"
    path.write_text(src, encoding="utf-8")
    backup = write_calibration(path, example_fit)
    new = path.read_text(encoding="utf-8")
    assert new.startswith(src) and _outside_table(new) == src + "\n"
    assert backup == tmp_path / "gable-house.toml.bak"
    assert backup.read_text(encoding="utf-8") == src
    h = house.read(path)
    cal = h.calibration
    assert cal["format"] == 2
    assert cal["model"] == "two-node" and cal["anchor"] == "heater rating"
    assert cal["k_w_per_k"] == pytest.approx(example_fit.chosen.get("k_w_per_k").value, rel=1e-4)
    assert cal["record"] == "logger-gable-house.csv"
    assert cal["fit_date"] == dt.date(2026, 11, 25)
    assert cal["record_start"] == example_fit.record_start.replace(microsecond=0)
    assert "heater_output_w" not in cal  # held at the rating: nothing new to store
    # the model now uses it: at the record's own conditions it is the fitted network —
    # the conduction and the sky part as stored, C as stored, the coupling as fitted
    mean = cal["record_mean_outside_c"]
    kw = dict(wind_m_s=cal["record_wind_m_s"], mean_radiant_temp_c=mean - 5.0, air_temp_c=mean)
    mdl = hm.build(h, kind="two-node", **kw)
    geo = hm.build(h, kind="two-node", use_calibration=False, **kw)
    # 5 significant digits stored (calibration._sig), the record's mean to 3
    assert geo.k_conduction_w_per_k == pytest.approx(cal["geometry_k_outside_w_per_k"], rel=1e-3)
    assert mdl.calibrated and mdl.k_conduction_w_per_k == pytest.approx(
        cal["k_outside_w_per_k"], rel=1e-3
    )
    sky = cal["k_sky_w_per_k"] / cal["geometry_k_sky_w_per_k"]
    # the stored parts give back the fit's own factors (5 significant digits stored)
    scales = example_fit.chosen.scales
    assert cal["k_outside_w_per_k"] / cal["geometry_k_outside_w_per_k"] == pytest.approx(
        scales["k_scale"], rel=1e-4
    )
    assert sky == pytest.approx(scales["sky_scale"], rel=1e-4)
    assert cal["c_j_per_k"] / cal["geometry_c_j_per_k"] == pytest.approx(
        scales["c_scale"], rel=1e-4
    )
    h_cal, h_geo = mdl.network.boundary_w_per_k, geo.network.boundary_w_per_k
    assert h_cal[0, 1] == pytest.approx(h_geo[0, 1] * sky, rel=1e-9)  # cover faces to sky
    assert h_cal[1, 1] == pytest.approx(h_geo[1, 1] * sky, rel=1e-9)  # floor to sky
    assert mdl.c_j_per_k == pytest.approx(cal["c_j_per_k"], rel=1e-4)
    g = float(mdl.network.coupling_w_per_k[0, 1])
    k_scale = cal["k_outside_w_per_k"] / cal["geometry_k_outside_w_per_k"]
    assert g == pytest.approx(
        geo.capacities.air_mass_w_per_k * k_scale * cal["coupling_scale"], rel=1e-9
    )
    # a second write keeps the first backup and makes a numbered one
    second = write_calibration(path, example_fit)
    assert second == tmp_path / "gable-house.toml.bak1"
    assert second.read_text(encoding="utf-8") == new
    assert path.read_text(encoding="utf-8") == new  # same fit, same table


def test_write_replaces_only_the_calibration_table(tmp_path, example_fit):
    src = (
        "# my house, my notes\n"
        + synthetic.house_text(name="test house", ach=0.75, heater_w=23445.7)
        + "\n[calibration]   # from last winter\n"
        "# a note the grower wrote\n"
        'note = "keep me"\n'
        "k_w_per_k = 1234.0  # stale\n"
        "heater_output_w = 999.0\n"
        '\n[stock]\n# tank by the barn\nfuel = "propane"\non_hand = "500 L"\n'
    )
    path = tmp_path / "h.toml"
    path.write_text(src, encoding="utf-8")
    write_calibration(path, example_fit)
    new = path.read_text(encoding="utf-8")
    assert _outside_table(new) == _outside_table(src)
    table = new.split("[calibration]", 1)[1].split("[stock]")[0]
    assert "# from last winter" in new and "# a note the grower wrote" in table
    assert 'note = "keep me"' in table
    assert "1234.0" not in table and "heater_output_w" not in table
    assert house.read(path).calibration["note"] == "keep me"


def test_a_failed_replace_leaves_the_original_intact(tmp_path, example_fit, monkeypatch):
    src = (EXAMPLES / "gable-house.toml").read_text(encoding="utf-8")
    path = tmp_path / "gable-house.toml"
    path.write_text(src, encoding="utf-8")

    def boom(*_a, **_k):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OSError, match="disk full"):
        write_calibration(path, example_fit)
    assert path.read_text(encoding="utf-8") == src
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_a_failed_write_leaves_the_original_intact_and_no_backup(
    tmp_path, example_fit, monkeypatch
):
    src = (EXAMPLES / "gable-house.toml").read_text(encoding="utf-8")
    path = tmp_path / "gable-house.toml"
    path.write_text(src, encoding="utf-8")

    def boom(_fd):
        raise OSError("I/O error")

    monkeypatch.setattr(os, "fsync", boom)
    with pytest.raises(OSError, match="I/O error"):
        write_calibration(path, example_fit)
    assert path.read_text(encoding="utf-8") == src
    assert sorted(p.name for p in tmp_path.iterdir()) == ["gable-house.toml"]


def test_updated_text_refuses_a_broken_house_file():
    with pytest.raises(InputError, match="TOML syntax error"):
        updated_text("[house\nname = 1\n", {"k_w_per_k": 1.0}, "x.toml")


def test_calibration_values_carry_their_intervals(example_fit):
    v = calibration_values(example_fit)
    for key in ("k_w_per_k", "c_j_per_k", "coupling_w_per_k"):
        assert v[f"{key}_ci95"] > 0
    assert v["rms_k"] == pytest.approx(example_fit.chosen.rms_k, rel=1e-2)
    assert v["n_samples"] == example_fit.n_samples


# ------------------------------------------------------------------ CLI


def test_cli_report(capsys):
    args = [
        "fit",
        str(EXAMPLES / "gable-house.toml"),
        "--log",
        str(EXAMPLES / "logger-gable-house.csv"),
    ]
    assert main(args) == 0
    out = capsys.readouterr().out
    for text in ("K, conductance", "95 % interval", "RMS", "measured inside", "fitted", "--write"):
        assert text in out


def test_cli_json(capsys):
    args = [
        "fit",
        str(EXAMPLES / "gable-house.toml"),
        "--log",
        str(EXAMPLES / "logger-gable-house.csv"),
        "--json",
    ]
    assert main(args) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["model"] == "two-node"
    # judged against the sensor: the two-node fit is within twice the record's own noise
    assert 0.05 < doc["noise_k"] < 0.5 and doc["quality"] == "good"
    assert doc["rms_to_noise"] == pytest.approx(doc["rms_k"] / doc["noise_k"])
    assert -1.0 <= doc["residual_lag1"] <= 1.0
    names = [p["name"] for p in doc["parameters"]]
    assert names[:3] == ["k_w_per_k", "c_j_per_k", "time_constant_h"]
    for p in doc["parameters"]:
        assert p["ci95_low"] <= p["value"] <= p["ci95_high"]
    assert set(doc["ratios"]) >= {"k_w_per_k", "c_j_per_k"}
    assert doc["n_samples"] == sum(s["rows"] for s in doc["segments"]) == len(doc["series"])
    assert len(doc["segments"]) == 4 and doc["rms_k"] > 0
    assert doc["written"] is None and doc["calibration"]["model"] == "two-node"


def test_cli_one_node_fit_of_a_two_node_record_is_refused(capsys, tmp_path):
    """A two-node house whose floor and water are tied closely to the air (the coupling
    × 3 more, grower.fit.synthetic) on a quiet sensor (0.05 K): one node misses the
    record by more than five times the sensor's noise, and the one line says what to do.
    (The example record's one-node fit is not refused: its nights fit within twice.)"""
    rec = synthetic.two_node_house(tmp_path, coupling_scale=3.0, noise_k=0.05)
    args = ["fit", str(rec.house_path), "--log", str(rec.log_path)]
    assert main([*args, "--model", "lumped"]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "times the sensor's noise" in err and "--model auto" in err


def test_cli_write_then_tonight_uses_it(tmp_path, capsys):
    path = tmp_path / "gable-house.toml"
    path.write_text((EXAMPLES / "gable-house.toml").read_text(encoding="utf-8"), encoding="utf-8")
    log = str(EXAMPLES / "logger-gable-house.csv")
    assert main(["fit", str(path), "--log", log, "--write", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["written"]["backup"].endswith("gable-house.toml.bak")
    night = [
        "tonight",
        str(path),
        "--crop",
        "tomato",
        "--forecast",
        str(EXAMPLES / "forecast-cold-night.csv"),
        "--start",
        "2026-12-03T18:00",
        "--json",
    ]
    assert main(night) == 0
    t = json.loads(capsys.readouterr().out)
    cal = doc["calibration"]
    fk = cal["k_outside_w_per_k"] / cal["geometry_k_outside_w_per_k"]
    assert t["calibrated"] is True
    assert any(f"conduction × {fk:.2f}" in a for a in t["assumptions"])
    assert main([*night, "--no-calibration"]) == 0
    plain = json.loads(capsys.readouterr().out)
    assert plain["calibrated"] is False
    # the fitted house is leakier than its geometry (examples/README.md): K rises
    assert fk > 1 and t["k_w_per_k"] > plain["k_w_per_k"]


def test_cli_refusal_is_one_line_exit_2(tmp_path, capsys):
    hp = _house(tmp_path)
    log, _ = synth(tmp_path, hp, nights=1, hours=4.0)
    assert main(["fit", str(hp), "--log", str(log)]) == 2
    cap = capsys.readouterr()
    assert cap.out == ""
    err = cap.err.strip()
    assert err.startswith("Error: ") and "\n" not in err and "Traceback" not in err
    assert "log at least two clear nights" in err


def test_cli_bad_record_names_line_and_column(tmp_path, capsys):
    hp = _house(tmp_path)
    log = tmp_path / "log.csv"
    log.write_text(
        "time,inside,outside\n2026-11-20T18:00-05:00,12,3\n2026-11-20T18:10-05:00,??,3\n"
    )
    assert main(["fit", str(hp), "--log", str(log), "--write"]) == 2
    err = capsys.readouterr().err.strip()
    assert err == f'Error: {log}: line 3, column inside: "??" is not a number'
    assert not (tmp_path / "house.toml.bak").exists()


def test_cli_outside_from_a_forecast_file(tmp_path, capsys):
    hp = _house(tmp_path)
    log, truth = synth(tmp_path, hp, nights=1, seed=9)
    # the same outside temperatures as an hourly forecast CSV; the record without them
    rows = [r.split(",") for r in log.read_text().splitlines()[1:]]
    (tmp_path / "inside.csv").write_text(
        "time,inside_c\n" + "".join(f"{t},{i}\n" for t, i, _o in rows), encoding="utf-8"
    )
    (tmp_path / "out.csv").write_text(
        "time,temperature_c\n" + "".join(f"{t},{o}\n" for t, _i, o in rows[::6]), encoding="utf-8"
    )
    args = [
        "fit",
        str(hp),
        "--log",
        str(tmp_path / "inside.csv"),
        "--outside",
        str(tmp_path / "out.csv"),
    ]
    assert main([*args, "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["outside_source"] == f"file {tmp_path / 'out.csv'}"
    # hourly outside values bridge the 10-minute curve linearly: close, not exact
    assert doc["time_constant_h"] == pytest.approx(truth["time_constant_h"], rel=0.1)


def test_cli_unknown_column_role(tmp_path, capsys):
    hp = _house(tmp_path)
    assert main(["fit", str(hp), "--log", "x.csv", "--column", "humid=RH"]) == 2
    assert "--column" in capsys.readouterr().err


# ------------------------------------------------- records made by independent means
# grower.fit.synthetic writes the true house's equations out itself and integrates them
# with scipy's solve_ivp (not grower.solver); the truth is the conductance from the air
# to the outside air, the sky part and the heat capacity of that house.


def test_the_synthetic_house_follows_the_exponential_of_a_first_order_house():
    """One node, steady outside air and heat: T(t) = T∞ + (T0 − T∞)·exp(−t/τ) with
    T∞ = T_o + Q/K and τ = C/K (the analytic solution of C dT/dt = K (T_o − T) + Q)."""
    truth = synthetic.TrueHouse(k_outside_w_per_k=2500.0, c_air_j_per_k=30e6)
    t = np.arange(0.0, 12 * 3600.0 + 1, 600.0)
    air = synthetic.integrate(truth, t, np.full(t.size, -2.0), np.full(t.size, 15000.0), [12.0])
    t_inf = -2.0 + 15000.0 / 2500.0
    exact = t_inf + (12.0 - t_inf) * np.exp(-t / (30e6 / 2500.0))
    assert np.max(np.abs(air - exact)) < 1e-6  # solve_ivp at rtol 1e-10


def test_the_synthetic_sky_is_swinbanks():
    """The record's sky temperature, written out in grower.fit.synthetic, agrees with
    grower.sky's Swinbank (1963) T⁶ form that the fit's boundary uses."""
    from grower import sky

    t = np.linspace(-20.0, 15.0, 8)
    assert synthetic.swinbank_sky_c(t) == pytest.approx(sky.swinbank_sky_temperature(t), abs=0.01)


def _fit_record(rec, **kw):
    h = house.read(rec.house_path)
    return fit_house(h, read_logger_csv(rec.log_path, timezone=h.site.timezone), **kw)


def _recovered(result, truth, name, tolerance):
    """Within `tolerance` of the truth and the truth inside the stated 95 % interval."""
    p = result.chosen.get(name)
    assert abs(p.value / truth[name] - 1.0) < tolerance, (name, p.value, truth[name])
    assert p.low <= truth[name] <= p.high, (name, p.value, p.half_width, truth[name])


def test_a_plain_first_order_house_is_recovered(tmp_path):
    """The issue's record: K = 2,500 W/K to the outside air only, C = 30 MJ/K, heater power
    logged in 15 kW steps, 0.1 K noise, three nights. The single factor on every
    conductance gave 969 W/K; with the conduction, the sky and the ground apart, K to
    the outside air comes within 5 % and C within 10 %, the truth inside the intervals."""
    rec = synthetic.plain_house(tmp_path)
    r = _fit_record(rec)
    assert r.model == "lumped" and r.anchor == "measured power" and r.quality == "good"
    _recovered(r, rec.truth, "k_outside_w_per_k", 0.05)
    _recovered(r, rec.truth, "c_j_per_k", 0.10)
    sky = r.chosen.get("k_sky_w_per_k")
    assert sky.low <= 0.0 and sky.high < 0.05 * 2500.0  # no sky path in this house
    assert r.chosen.get("k_w_per_k").value == pytest.approx(2500.0, rel=0.05)


def _heater_changes(log: Path, column: str) -> np.ndarray:
    """Row positions (0-based, data rows) where the logged heater value changes."""
    values = pd.read_csv(log)[column].to_numpy()
    return np.flatnonzero(values[1:] != values[:-1]) + 1


def test_a_row_without_an_inside_reading_keeps_its_heat(tmp_path):
    """The plain house, power logged; the inside reading blank on the first four rows
    where the heater's power changes (the logger missed them). The rows stay on the
    solver's grid with their logged power (dropping them would hold the previous
    power over the next interval too, heat the house never had), no night is split,
    the note names the lines, and K and C are still recovered."""
    rec = synthetic.plain_house(tmp_path)
    frame = pd.read_csv(rec.log_path)
    blank = _heater_changes(rec.log_path, "heater_w")[:4]
    frame["inside_c"] = frame["inside_c"].astype(object)
    frame.loc[blank, "inside_c"] = ""
    frame.to_csv(rec.log_path, index=False)
    h = house.read(rec.house_path)
    log = read_logger_csv(rec.log_path, timezone=h.site.timezone)
    data = prepare(h, log)
    assert len(data.segments) == 3 and data.n_rows == log.n_rows - blank.size
    grid = sum(s.times_s.size for s in data.segments)
    # every row is on the grid (with the heater's change points), the blank ones too
    assert grid - data.n_rows >= blank.size
    first = f"lines {blank[0] + 2}, "  # the header is line 1
    assert any("without an inside reading" in n and first in n for n in data.notes)
    r = _fit_record(rec)
    _recovered(r, rec.truth, "k_outside_w_per_k", 0.05)
    _recovered(r, rec.truth, "c_j_per_k", 0.10)


def test_a_blank_heater_cell_splits_the_night(tmp_path):
    """A heater cell left blank: the heat over that interval is not known, so the night
    is split there (each part with its own starting state) rather than the previous
    state held across it; the note says where."""
    rec = synthetic.plain_house(tmp_path, heater="state", seed=1)
    frame = pd.read_csv(rec.log_path)
    row = int(_heater_changes(rec.log_path, "heater")[2])
    frame["heater"] = frame["heater"].astype(object)
    frame.loc[row, "heater"] = ""
    frame.to_csv(rec.log_path, index=False)
    h = house.read(rec.house_path)
    data = prepare(h, read_logger_csv(rec.log_path, timezone=h.site.timezone))
    assert len(data.segments) == 4
    assert any(f"line {row + 2})" in n and "split there" in n for n in data.notes)


def test_a_plain_house_with_its_heater_logged_on_and_off_rests_on_the_rating(tmp_path):
    rec = synthetic.plain_house(tmp_path, heater="state", seed=1)
    r = _fit_record(rec, model="lumped")
    assert r.anchor == "heater rating"
    _recovered(r, rec.truth, "k_outside_w_per_k", 0.05)
    _recovered(r, rec.truth, "c_j_per_k", 0.10)


@pytest.mark.parametrize("share", [0.5, 2.0])
def test_a_house_whose_sky_share_differs_from_the_geometrys_is_recovered(tmp_path, share):
    """The geometry's one-node house with the sky part × ½ and × 2 (condensation, dust, a
    different film), heater power logged: K to the outside air within 5 %, C within 10 %,
    the sky part found at its true share; every truth inside the stated interval."""
    rec = synthetic.sky_share_house(tmp_path, share, k_scale=1.1, c_scale=0.9)
    r = _fit_record(rec, model="lumped")
    assert r.quality == "good"
    _recovered(r, rec.truth, "k_outside_w_per_k", 0.05)
    _recovered(r, rec.truth, "c_j_per_k", 0.10)
    _recovered(r, rec.truth, "k_sky_w_per_k", 0.10)


def test_a_two_node_house_is_recovered(tmp_path):
    """The geometry's two-node house (air; floor, water and benches) with its conduction
    × 1.1, the coupling × 1.2 more, every capacity × 0.9, heater power logged: the
    two-node model is chosen, K to the outside air within 5 %, C within 10 %. Four nights:
    the two-node K to the outside air trades off with the coupling, and on three nights its
    interval is ±6–11 % (seed 0 lands 5.0 % off, inside it); on four, ±4–6 %."""
    rec = synthetic.two_node_house(tmp_path, nights=4)
    r = _fit_record(rec)
    assert r.model == "two-node" and r.quality == "good"
    _recovered(r, rec.truth, "k_outside_w_per_k", 0.05)
    _recovered(r, rec.truth, "c_j_per_k", 0.10)
    _recovered(r, rec.truth, "coupling_w_per_k", 0.10)


def test_cli_json_carries_the_conductance_to_the_outside_air_and_to_the_sky(tmp_path, capsys):
    rec = synthetic.sky_share_house(tmp_path, 0.5)
    args = ["fit", str(rec.house_path), "--log", str(rec.log_path), "--model", "lumped"]
    assert main([*args, "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["k_outside_w_per_k"] == pytest.approx(rec.truth["k_outside_w_per_k"], rel=0.05)
    assert doc["k_sky_w_per_k"] == pytest.approx(rec.truth["k_sky_w_per_k"], rel=0.1)
    assert doc["k_w_per_k"] >= doc["k_outside_w_per_k"] + doc["k_sky_w_per_k"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "of it to outside air" in out and "of it to the sky" in out


def test_night_block_covariance_follows_errors_shared_within_a_night():
    """Monte Carlo on a straight-line regression whose errors share a random level within
    each of 30 blocks (a night's common error): the regressor also changes from block to
    block, so the independent-error variance s²(XᵀX)⁻¹ is far too small (Moulton's
    factor), while the cluster-robust variance follows the estimates' actual spread
    (Cameron & Miller 2015, J. Human Resources 50(2):317-372; its sections on the
    Moulton factor and the sandwich, from memory). Tolerance: 500 replications give the spread to
    about ±7 % (1σ, a variance from 500 draws), the mean of the sandwich to better."""
    est = importlib.import_module("grower.fit.estimate")
    rng = np.random.default_rng(42)
    g, m = 30, 20
    blocks = [np.arange(i * m, (i + 1) * m) for i in range(g)]
    x = np.column_stack(
        [np.ones(g * m), np.repeat(rng.normal(size=g), m) + rng.normal(0, 0.3, g * m)]
    )
    slopes, robust, naive = [], [], []
    for _ in range(500):
        e = np.repeat(rng.normal(0.0, 1.0, g), m) + rng.normal(0.0, 0.5, g * m)
        beta, *_ = np.linalg.lstsq(x, e, rcond=None)
        r = x @ beta - e  # the fit's sign: model less data
        slopes.append(beta[1])
        robust.append(est.cluster_covariance(x, r, blocks)[1, 1])
        naive.append((r @ r / (g * m - 2)) * np.linalg.inv(x.T @ x)[1, 1])
    spread = float(np.var(slopes))
    assert np.mean(robust) == pytest.approx(spread, rel=0.25)
    assert np.mean(naive) < 0.2 * spread
    # one row per block: the sandwich is White's HC1, n/(n − p) Σ x xᵀ e² (MacKinnon &
    # White 1985, J. Econometrics 29(3):305-325; from memory)
    r = rng.normal(size=g * m)
    single = [np.array([i]) for i in range(g * m)]
    bread = np.linalg.inv(x.T @ x)
    hc1 = bread @ (x.T * r**2) @ x @ bread * (g * m) / (g * m - 2)
    np.testing.assert_allclose(est.cluster_covariance(x, r, single), hc1, rtol=1e-9)


def test_unlogged_cloud_is_fitted_night_by_night(tmp_path):
    """Five nights, a cloud nobody logged taking 0, 70, 10, 50 and 30 % of the clear sky's
    depression away: one sky factor a night follows it, the note says so, and K to the
    outside air stays inside its interval."""
    cloud = (0.0, 0.7, 0.1, 0.5, 0.3)
    rec = synthetic.sky_share_house(tmp_path, 1.0, nights=5, cloud=cloud)
    r = _fit_record(rec, model="lumped")
    sky = r.chosen.sky_by_segment
    assert sky is not None and sky[1] < sky[0] and sky[3] < sky[2]
    assert any("night by night" in n for n in r.notes)
    for name in ("k_outside_w_per_k", "k_sky_w_per_k", "c_j_per_k"):
        p = r.chosen.get(name)
        assert p.low <= rec.truth[name] <= p.high, name
    # each night's share of the clear sky's depression is what its cloud left
    shares = np.array(sky) / r.chosen.scales["sky_scale"]
    assert shares == pytest.approx(1.0 - np.array(cloud), abs=0.1)


@pytest.mark.parametrize("heater", ["state", "power"])
def test_an_unlogged_cloud_leaves_the_conduction_to_the_outside_air_unbiased(tmp_path, heater):
    """A record benchmarks/fit_coverage.py missed (seed 20261190's house, rounded: sky
    share 1.7, conduction × 1.15, C × 1.16, a single-poly 10.5 × 18.7 m house, 0.07 K
    noise, five nights under 45, 2, 28, 34 and 78 % cloud nobody logged). A sky factor
    for each night took the cloud's warmer sky for a smaller sky conductance, and the
    conduction to the outside air made up the rest: +20 % with ±7 %, the truth outside.
    With one sky conductance and each night's share of the clear sky's depression, K to
    the outside air, the sky part and C come within 5 % and their intervals hold the
    truth; the shares come out at 1 − the cloud."""
    cloud = (0.45, 0.02, 0.28, 0.34, 0.78)
    rec = synthetic.sky_share_house(
        tmp_path,
        1.7,
        k_scale=1.15,
        c_scale=1.16,
        heater=heater,
        noise_k=0.07,
        seed=20261190,
        nights=5,
        cloud=cloud,
        width=10.5,
        length=18.7,
        cover="single-poly",
        ach=0.65,
    )
    r = _fit_record(rec, model="lumped")
    for name in ("k_outside_w_per_k", "k_sky_w_per_k", "c_j_per_k"):
        _recovered(r, rec.truth, name, 0.05)
    shares = np.array(r.chosen.sky_by_segment) / r.chosen.scales["sky_scale"]
    assert shares == pytest.approx(1.0 - np.array(cloud), abs=0.05)


def test_the_plain_house_is_sized_from_its_fit_as_by_hand(tmp_path, capsys):
    """record → fit --write → [calibration] → size, against a hand calculation.

    The plain house has all of its K = 2,500 W/K on the outside air; its house file's
    geometry, at the record's calm nights, puts about 1,717 W/K there, 536 on the sky
    and 184 on the deep ground (2,437 in all). The fit finds the conduction × 1.46 and
    the sky part × 0: the sky's exchange is in the conduction. At −20 °C, 6.7 m/s and
    5 °C held, the geometry's conductance is K_o = 3,450 W/K and K_s = 369 W/K and the
    clear sky (Swinbank 1963) is at −50.3 °C:

    - geometry: (3,450 + 369) × 25 + 369 × 30.3 = 106.7 kW, × 1.2 = 128.0 kW;
    - calibrated, by hand: the conductance 1.46 × 3,450 + 0 × 369 = 5,022 W/K (above the
      geometry's 3,819), × 25 = 125.6 kW; the sky's depression floored at the
      geometry's, 369 × 30.3 = 11.2 kW; 136.7 kW, × 1.2 = 164.1 kW. (Flooring the sky
      factor alone, as before, added the sky's 369 W/K × 25 K a second time: 175.2 kW.)

    That the heater is larger than the geometry's is the safe direction the fit shows
    (the house loses more to the outside air than the geometry says, and the ratio is
    applied at the design wind). Checked here with the truth's 2,500 W/K in place of the
    fitted value (the fit within 5 % of it), and the sky temperature from
    `synthetic.swinbank_sky_c` (written apart from `grower.sky`)."""
    rec = synthetic.plain_house(tmp_path)
    args = ["--outside", "-20C", "--hold", "5C", "--json"]
    assert main(["size", str(rec.house_path), *args]) == 0
    geo = json.loads(capsys.readouterr().out)
    assert main(["fit", str(rec.house_path), "--log", str(rec.log_path), "--write"]) == 0
    capsys.readouterr()
    table = house.read(rec.house_path).calibration
    assert table["model"] == "lumped"
    assert table["k_outside_w_per_k"] == pytest.approx(2500.0, rel=0.05)
    assert table["k_sky_w_per_k"] < 0.05 * table["geometry_k_sky_w_per_k"]
    assert main(["size", str(rec.house_path), *args]) == 0
    cal = json.loads(capsys.readouterr().out)

    t_sky = float(synthetic.swinbank_sky_c(-20.0))
    assert geo["sky_c"] == pytest.approx(t_sky, abs=0.05)
    k_o, k_s = geo["k_conduction_w_per_k"], geo["k_sky_w_per_k"]
    dt, depression = 5.0 - -20.0, -20.0 - t_sky
    assert geo["heat_loss_w"] == pytest.approx((k_o + k_s) * dt + k_s * depression, rel=1e-6)
    f_k = 2500.0 / table["geometry_k_outside_w_per_k"]  # the truth's, not the fit's
    hand = max(f_k * k_o, k_o + k_s) * dt + k_s * depression
    assert cal["heat_loss_w"] == pytest.approx(hand, rel=0.05)
    assert cal["recommended_output_w"] == pytest.approx(1.2 * hand, rel=0.05)
    assert cal["recommended_output_w"] > geo["recommended_output_w"]
    # not the sky's conductance twice: the old rule's figure is well above
    twice = f_k * k_o * dt + k_s * (dt + depression)
    assert cal["heat_loss_w"] < twice - 0.5 * k_s * dt


def test_the_whole_chain_moves_the_plans_to_the_example_houses_truth(tmp_path, capsys):
    """fit --write on a copy of the example house, then size and tonight: each lands
    within a quarter of the way from the truth to the uncalibrated figure, where the
    truth is the same house with the true parts of examples/logger-gable-house.truth.json
    stored as its calibration (size: the conduction × 1.15 raises the heater; the sky
    part × 0.70 is floored at the geometry's; tonight: less sky, a warmer night)."""
    doc = json.loads((EXAMPLES / "logger-gable-house.truth.json").read_text(encoding="utf-8"))
    t, g = doc["truth"], doc["geometry"]
    src = (EXAMPLES / "gable-house.toml").read_text(encoding="utf-8")
    paths = {name: tmp_path / f"{name}.toml" for name in ("geometry", "fitted", "truth")}
    for path in paths.values():
        path.write_text(src, encoding="utf-8")
    paths["truth"].write_text(
        src + '\n[calibration]\nformat = 2\nmodel = "two-node"\n'
        f"k_outside_w_per_k = {t['k_outside_w_per_k']}\nk_sky_w_per_k = {t['k_sky_w_per_k']}\n"
        f"c_j_per_k = {t['c_j_per_k']}\n"
        f"geometry_k_outside_w_per_k = {g['k_outside_w_per_k']}\n"
        f"geometry_k_sky_w_per_k = {g['k_sky_w_per_k']}\ngeometry_c_j_per_k = {g['c_j_per_k']}\n",
        encoding="utf-8",
    )
    log = str(EXAMPLES / "logger-gable-house.csv")
    assert main(["fit", str(paths["fitted"]), "--log", log, "--write", "--json"]) == 0
    capsys.readouterr()

    def run(*argv) -> dict:
        assert main([*argv, "--json"]) in (0, 3)
        return json.loads(capsys.readouterr().out)

    night = ["--crop", "tomato", "--forecast", str(EXAMPLES / "forecast-cold-night.csv")]
    night += ["--start", "2026-12-03T18:00"]
    got = {
        name: (
            run("size", str(p), "--outside", "-20C", "--hold", "10C")["heat_loss_w"],
            run("tonight", str(p), *night)["min_plant_c"],
        )
        for name, p in paths.items()
    }
    for i in range(2):
        geometry, fitted, truth = (got[n][i] for n in ("geometry", "fitted", "truth"))
        assert abs(fitted - truth) < 0.25 * abs(geometry - truth), (i, got)
    assert got["truth"][0] > got["geometry"][0] and got["truth"][1] > got["geometry"][1]
