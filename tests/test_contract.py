"""The command-line contract under generated hostile input (hypothesis).

For every command, whatever the house file, forecast, logger record or arguments:

- exit 0 (or 3/4, `tonight --alert-status` with action needed/damage expected) with a report or a JSON
  document whose numbers are finite and sane; or
- exit 2 with exactly one ``Error: …`` line on stderr (``Warning:`` and ``Note:`` lines
  may come before it) and nothing on stdout;
- never a traceback, never a hang, never a changed user file.

The CLI runs in-process (`grower.cli.main`) with captured output. Inputs are small and
bounded (a house file of a few sections, at most 60 forecast rows and 80 logger rows),
and every run has a watchdog (`RUN_LIMIT_S`) that turns a hang into a failure. The
bounds on real input files are in `grower/files.py` and the README.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import hashlib
import io
import json
import math
import os
import signal
import traceback
from pathlib import Path

import pytest
import tomlkit
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from grower.cli import main
from tests.conftest import EXAMPLES

#: one run may take this long before the watchdog calls it a hang [s] (a generous bound:
#: runs here take well under a second)
RUN_LIMIT_S = 30
#: numbers in a JSON document beyond this magnitude are not sane for any key grower
#: writes (the largest, a big range's C in J/K, is ~1e11)
SANE_MAGNITUDE = 1e14
#: examples per command in the default run; GROWER_CONTRACT_EXAMPLES=500 for a long,
#: randomised sweep before a release
EXAMPLES_PER_COMMAND = int(os.environ.get("GROWER_CONTRACT_EXAMPLES", "12"))
SETTINGS = settings(
    max_examples=EXAMPLES_PER_COMMAND,
    deadline=None,
    derandomize="GROWER_CONTRACT_EXAMPLES" not in os.environ,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)


class Hang(Exception):
    pass


def _alarm(_signum, _frame):
    raise Hang()


def run_cli(argv: list[str], limit_s: float = RUN_LIMIT_S) -> tuple[object, str, str]:
    """(exit status or "traceback …", stdout, stderr) of one in-process run."""
    out, err = io.StringIO(), io.StringIO()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.setitimer(signal.ITIMER_REAL, limit_s)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                rc: object = main(argv)
            except SystemExit as exc:  # argparse: --help, or a usage error (one line)
                rc = exc.code
    except Hang:
        rc = f"hang (over {limit_s:g} s)"
    except Exception:  # the contract is broken: report the traceback
        rc = "traceback\n" + traceback.format_exc()
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
    return rc, out.getvalue(), err.getvalue()


def _numbers(doc, path="$"):
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield from _numbers(v, f"{path}.{k}")
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            yield from _numbers(v, f"{path}[{i}]")
    elif isinstance(doc, int | float) and not isinstance(doc, bool):
        yield path, float(doc)


def _sane(path: str, value: float) -> bool:
    if not math.isfinite(value) or abs(value) > SANE_MAGNITUDE:
        return False
    key = path.rsplit(".", 1)[-1].split("[")[0]
    if key.endswith("_c"):  # any temperature grower reports: air, plant, soil, outside
        return -150.0 <= value <= 150.0
    if key in ("k_w_per_k", "c_j_per_k", "volume_m3", "floor_area_m2", "time_constant_h"):
        return value > 0
    if key in NON_NEGATIVE:
        return value >= -1e-6
    return True


#: keys that are amounts of heat, power or fuel: never below zero (an allowance or a
#: difference, such as ``wind_allowance_w``, may be)
NON_NEGATIVE = frozenset(
    {"hold_peak_w", "hold_energy_kwh", "heat_loss_w", "recommended_output_w",
     "recommended_input_w", "handbook_loss_w", "energy_kwh", "efficiency", "amount"}
)  # fmt: skip


def _event(text: str) -> None:
    """Count outcomes for --hypothesis-show-statistics (outside hypothesis: nothing)."""
    from hypothesis import event
    from hypothesis.errors import InvalidArgument

    with contextlib.suppress(InvalidArgument):
        event(text)


def assert_contract(
    argv: list[str], files: list[Path], *, json_out: bool = False
) -> tuple[int, str, str]:
    """Run `argv` and check the contract; returns (exit status, stdout, stderr)."""
    before = {p: _digest(p) for p in files}
    rc, out, err = run_cli(argv)
    _event(f"exit {rc}")
    assert isinstance(rc, int), f"{argv}: {rc}\nstderr: {err}"
    assert {p: _digest(p) for p in files} == before, f"{argv}: a user file changed"
    lines = [line for line in err.splitlines() if line.strip()]
    if rc == 2:
        errors = [line for line in lines if not line.startswith(("Warning: ", "Note: "))]
        assert len(errors) == 1 and errors[0].startswith("Error: "), (argv, err)
        assert lines[-1] == errors[0], (argv, err)
        assert out == "", (argv, out)
    else:
        assert rc in (0, 3, 4), (argv, rc, err)
        assert all(line.startswith(("Warning: ", "Note: ")) for line in lines), (argv, err)
        assert out.strip(), argv
        if json_out:
            doc = json.loads(out)
            bad = [(p, v) for p, v in _numbers(doc) if not _sane(p, v)]
            assert not bad, (argv, bad[:5])
            for d in doc.get("houses", [doc]) if isinstance(doc, dict) else []:
                if "chance_of_damage" in d:
                    _chance_adds_up(argv, d)
    return rc, out, err


def _chance_adds_up(argv: list[str], d: dict) -> None:
    """`tonight --json`: the chance is the share of `members` that cross (DESIGN: a
    script can check the count), heated never above no heat, the summary from them."""
    members = d["members"]
    if d["chance_of_damage"] is None:
        assert members == [], argv
        return
    n = len(members)
    crossed = sorted(m["crossing_time"] for m in members if m["crossing_time"] is not None)
    assert n >= 1 and d["chance_of_damage"] == len(crossed) / n, argv
    assert d["members_source"] in ("ensemble", "drawn"), argv
    assert d["earliest_crossing"] == (crossed[0] if crossed else None), argv
    heated = d["chance_of_damage_heated"]
    if heated is not None:
        assert heated == sum(bool(m["heated_damage"]) for m in members) / n, argv
        assert heated <= d["chance_of_damage"], argv
    # a member that damages with the heater reaches the alarm with no heat
    assert all(m["crossing_time"] is not None for m in members if m["heated_damage"]), argv


def _digest(path: Path) -> str | None:
    try:
        return hashlib.sha256(path.read_bytes()).hexdigest() if path.is_file() else None
    except OSError:
        return None


# ---------------------------------------------------------------- generated values

#: numbers a careless or hurried user gives: ordinary, huge, tiny, negative, NaN, ∞
NUMBERS = st.one_of(
    st.floats(-100, 100),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0.0, -0.0, 1e-9, 1e9, 9e18, -1.0, 1e308, 5e-324]),
    st.integers(-(10**20), 10**20),
)
UNITS = ["", " m", "m", " ft", " mm", " km", " C", "F", " K", " W", " mW", " MW", " kW",
         " BTU/h", " mph", " m/s", " gal", " L", " kg", " %", " furlong"]  # fmt: skip
QUANTITY_TEXT = st.one_of(
    st.builds(lambda n, u: f"{n:g}{u}" if isinstance(n, float) else f"{n}{u}", NUMBERS, st.sampled_from(UNITS)),
    st.text(max_size=12),
)  # fmt: skip
VALUES = st.one_of(
    NUMBERS,
    QUANTITY_TEXT,
    st.booleans(),
    st.lists(st.integers(0, 3), max_size=3),
    st.dictionaries(st.sampled_from(["a", "u", "value"]), st.integers(0, 3), max_size=2),
)


def _base_houses() -> list[dict]:
    return [
        tomlkit.parse((EXAMPLES / name).read_text(encoding="utf-8")).unwrap()
        for name in ("hoop-tunnel.toml", "gable-house.toml", "glass-range.toml")
    ]


BASES = _base_houses()


def _paths(doc, prefix=()):
    """Every (section, key, ...) path of a leaf in a house document."""
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(doc, list) and doc and all(isinstance(x, dict) for x in doc):
        for i, v in enumerate(doc):
            yield from _paths(v, (*prefix, i))
    else:
        yield prefix


@st.composite
def house_text(draw, calm: bool = False) -> str:
    """A house file: one of the examples with a few keys changed, dropped or added,
    then perhaps a byte-order mark, CRLF endings, a cut or deep nesting."""
    import copy

    doc = copy.deepcopy(draw(st.sampled_from(BASES)))
    if calm or draw(st.booleans()):  # often a good file, so the runs go deep
        return tomlkit.dumps(doc)
    leaves = sorted(_paths(doc), key=str)
    for _ in range(draw(st.sampled_from([0, 1, 1, 2, 3]))):
        path = draw(st.sampled_from(leaves))
        node = doc
        for k in path[:-1]:
            node = node[k]
        action = draw(st.sampled_from(["set", "set", "set", "drop", "add"]))
        try:
            if action == "set":
                node[path[-1]] = draw(VALUES)
            elif action == "drop":
                del node[path[-1]]
            else:
                node[draw(st.sampled_from(["colour", "widht", "units", "count"]))] = draw(VALUES)
        except (KeyError, IndexError, TypeError):
            pass
    if draw(st.integers(0, 3)):
        doc.pop("calibration", None)
    elif draw(st.booleans()):  # an older table (no format): read, not used
        doc["calibration"] = {
            "model": draw(st.sampled_from(["lumped", "two-node", "other"])),
            "k_w_per_k": draw(st.one_of(st.floats(1, 1e5), NUMBERS)),
            "c_j_per_k": draw(st.one_of(st.floats(1e6, 1e9), NUMBERS)),
        }
    else:  # format 2: the fitted parts beside the geometry's, any of them odd
        table = {"format": draw(st.sampled_from([2, 2, 2, 3, "2"]))}
        table["model"] = draw(st.sampled_from(["lumped", "two-node", "two-node", "other"]))
        for key, typical in (
            ("k_outside_w_per_k", st.floats(100, 5e3)),
            ("k_sky_w_per_k", st.floats(0, 2e3)),
            ("c_j_per_k", st.floats(1e6, 1e9)),
            ("geometry_k_outside_w_per_k", st.floats(100, 5e3)),
            ("geometry_k_sky_w_per_k", st.floats(0, 2e3)),
            ("geometry_c_j_per_k", st.floats(1e6, 1e9)),
        ):
            if draw(st.integers(0, 9)):  # now and then a key left out
                table[key] = draw(st.one_of(typical, typical, NUMBERS))
        if draw(st.booleans()):
            table["quality"] = draw(st.sampled_from(["good", "rough", "fine"]))
        doc["calibration"] = table
    try:
        text = tomlkit.dumps(doc)
    except Exception:  # a value tomlkit will not write (NaN key, huge int): keep the base
        text = tomlkit.dumps(draw(st.sampled_from(BASES)))
    form = draw(st.sampled_from(["plain"] * 6 + ["bom", "crlf", "cut", "deep", "junk"]))
    if form == "bom":
        text = "\ufeff" + text
    elif form == "crlf":
        text = text.replace("\n", "\r\n")
    elif form == "cut":
        text = text[: draw(st.integers(0, len(text)))]
    elif form == "deep":
        text += "\nz = " + "[" * 3000 + "]" * 3000 + "\n"
    elif form == "junk":
        text = draw(st.text(max_size=200))
    return text


CELL = st.one_of(
    st.floats(-30, 30).map(lambda v: f"{v:.1f}"),
    st.sampled_from(["", "nan", "NaN", "inf", "-inf", "1e400", "abc", "1,5", "−3", "9e18"]),
)
FORECAST_COLUMNS = ["temperature_c", "temperature_f", "dew_point_c", "cloud_cover_pct",
                    "wind_speed_m_s", "wind_speed_mph", "shortwave_w_m2", "colour"]  # fmt: skip


@st.composite
def forecast_text(draw, calm: bool = False) -> str:
    """A forecast CSV: up to 60 rows from a generated start, offset and step; half the
    time a good one (hourly from 16:00 on 3 December 2026, −05:00)."""
    if calm or draw(st.booleans()):
        n = draw(st.integers(30, 60))
        cols = [
            "temperature_c",
            *draw(st.lists(st.sampled_from(FORECAST_COLUMNS[2:7]), max_size=3, unique=True)),
        ]
        base = draw(st.floats(-25, 15))
        rows = ["time," + ",".join(cols)]
        start = dt.datetime(2026, 12, 3, 16, 0, tzinfo=dt.timezone(dt.timedelta(hours=-5)))
        for i in range(n):
            t = start + dt.timedelta(hours=i)
            cells = []
            for c in cols:
                if c.startswith(("temperature", "dew")):
                    v = base + 5 * math.cos(i / 4) - (3 if c.startswith("dew") else 0)
                    cells.append(f"{v:.1f}")
                elif c == "cloud_cover_pct":
                    cells.append("20")
                elif c.startswith("wind"):
                    cells.append("3.0")
                else:  # by day only, a modest winter sun
                    cells.append("250" if 9 <= t.hour <= 14 else "0")
            rows.append(t.isoformat(timespec="minutes") + "," + ",".join(cells))
        return "\n".join(rows) + "\n"
    year = draw(st.sampled_from([2026, 2026, 2026, 1000, 1899, 2300, 9999]))
    start = dt.datetime(year, 12, 3, 16, 0)
    offset = draw(st.sampled_from(["-05:00", "+00:00", "-04:00", "", "Z", "+14:00"]))
    step = draw(st.sampled_from([3600, 3600, 900, 7200, 4 * 3600, 0, -3600]))
    n = draw(st.integers(0, 60))
    cols = draw(st.lists(st.sampled_from(FORECAST_COLUMNS), max_size=4, unique=True))
    if draw(st.integers(0, 4)):
        cols = ["temperature_c", *[c for c in cols if not c.startswith("temperature")]]
    base = draw(st.floats(-25, 15))
    rows = ["time," + ",".join(cols)]
    for i in range(n):
        t = start + dt.timedelta(seconds=step * i)
        cells = []
        for c in cols:
            if draw(st.integers(0, 9)) == 0:
                cells.append(draw(CELL))
            elif c.startswith(("temperature", "dew")):
                v = base + 5 * math.cos(i / 4) - (2 if c.startswith("dew") else 0)
                cells.append(f"{v * 1.8 + 32 if c.endswith('_f') else v:.1f}")
            elif c == "cloud_cover_pct":
                cells.append(str(draw(st.integers(0, 100))))
            elif c.startswith("wind"):
                cells.append(f"{draw(st.floats(0, 15)):.1f}")
            else:
                cells.append(str(draw(st.sampled_from([0, 0, 0, 200, 1400]))))
        rows.append(f"{t.isoformat(timespec='minutes')}{offset}," + ",".join(cells))
    return "\n".join(rows) + "\n"


@st.composite
def logger_text(draw, calm: bool = False) -> str:
    """A logger export: optional title line and units row, `,` or `;`, up to 80 rows;
    half the time a good night (10-minute readings of a house cooling)."""
    if calm or draw(st.booleans()):
        k_scale = draw(st.floats(0.6, 1.6))
        start = dt.datetime(2026, 11, 20, 16, 0)
        lines = ["time,inside,outside", ",°C,°C"]
        inside = 12.0
        for i in range(80):
            t = start + dt.timedelta(minutes=10 * i)
            outside = -2.0 - 4.0 * math.sin(math.pi * i / 80)
            inside += (outside - inside) * (600.0 / (5 * 3600.0)) * k_scale
            lines.append(f"{t:%Y-%m-%d %H:%M},{inside:.2f},{outside:.2f}")
        return "\n".join(lines) + "\n"
    sep = draw(st.sampled_from([",", ";"]))
    year = draw(st.sampled_from([2026, 2026, 2026, 1000, 3000]))
    start = dt.datetime(year, 11, 20, 16, 0)
    step = draw(st.sampled_from([600, 600, 60, 1, 0, 4 * 3600]))
    n = draw(st.integers(0, 80))
    names = draw(st.sampled_from([["time", "inside", "outside", "heater"],
                                  ["Date/time", "Inside", "Outside"],
                                  ["time", "temperature"], ["when", "x", "y"]]))  # fmt: skip
    lines = []
    if draw(st.booleans()):
        lines.append("Logger export (invented)")
    lines.append(sep.join(names))
    if draw(st.booleans()):
        lines.append(
            sep.join([""] + [draw(st.sampled_from(["°C", "°F", "", "on/off"])) for _ in names[1:]])
        )
    for i in range(n):
        t = start + dt.timedelta(seconds=step * i)
        cells = [t.strftime("%Y-%m-%d %H:%M:%S")]
        for j, name in enumerate(names[1:]):
            if draw(st.integers(0, 12)) == 0:
                cells.append(draw(CELL))
            elif name.lower() == "heater":
                cells.append(draw(st.sampled_from(["on", "off", "1", "0"])))
            else:
                v = 8 - 6 * (i / max(n, 1)) - (4 * j)
                cells.append(f"{v:.2f}".replace(".", "," if sep == ";" else "."))
        lines.append(sep.join(cells))
    return "\n".join(lines) + "\n"


_GOOD_TEMPERATURE = st.builds(
    lambda v, u: f"{v:.1f}{u}", st.floats(-20, 10), st.sampled_from(["", "C", "F", " °C"])
)
TEMPERATURE_ARG = st.one_of(
    _GOOD_TEMPERATURE,
    _GOOD_TEMPERATURE,
    st.sampled_from(["-4C", "28F", "28", "-10", "271.15K", "-200C", "500C", "-273C", "1e400",
                     "", "cold", "5 mW", "−3 °C", "-4 c"]),
    st.builds(lambda v, u: f"{v:g}{u}", st.floats(-60, 60), st.sampled_from(["", "C", "F", " K"])),
)  # fmt: skip
DIFFERENCE_ARG = st.sampled_from(["1K", "2", "1.5", "100K", "-1K", "3F", "nan", "0.5 C"])
SPEED_ARG = st.sampled_from(["15 mph", "15 mph", "2 m/s", "5", "1e6 m/s", "-1 mph", "inf m/s", "x"])
UNITS_ARG = st.sampled_from([[], ["--units", "us"], ["--units", "metric"]])


@pytest.fixture(autouse=True)
def _quiet_environment(monkeypatch, tmp_path):
    """No network (a dead loopback URL), a private cache, a metric locale."""
    monkeypatch.setenv("GROWER_FORECAST_URL", "http://127.0.0.1:9")
    monkeypatch.setenv("GROWER_CACHE_DIR", str(tmp_path / "cache"))
    monkeypatch.setenv("LANG", "C.UTF-8")
    monkeypatch.delenv("LC_ALL", raising=False)
    monkeypatch.delenv("LC_MEASUREMENT", raising=False)
    monkeypatch.setenv("COLUMNS", "100")


def _write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_bytes(text.encode("utf-8", errors="surrogatepass"))
    return path


# ---------------------------------------------------------------- the commands


@SETTINGS
@given(house=house_text(), units=UNITS_ARG, as_json=st.booleans())
def test_house_command(tmp_path, house, units, as_json):
    h = _write(tmp_path, "h.toml", house)
    assert_contract(
        ["house", str(h), *units, *(["--json"] if as_json else [])], [h], json_out=as_json
    )


class Inputs:
    """Draws for one example: a calm one takes every input from the good strategies
    (so a good share of runs reaches the physics and the report); a hostile one takes
    each input from the good or the hostile strategy at random."""

    def __init__(self, data) -> None:
        self.data = data
        self.calm = data.draw(st.booleans(), label="calm")

    def pick(self, good, hostile):
        return self.data.draw(good if self.calm else st.one_of(good, hostile))

    def draw(self, strategy):
        return self.data.draw(strategy)

    def house(self) -> str:
        return self.data.draw(house_text(self.calm))

    def forecast(self) -> str:
        return self.data.draw(forecast_text(self.calm))

    def record(self) -> str:
        return self.data.draw(logger_text(self.calm))


def _draws(data: Inputs) -> list[str]:
    """--draws and --seed: mostly left out, sometimes given, sometimes hostile."""
    draws = data.pick(
        st.sampled_from([None, None, "0", "1", "40"]),
        st.sampled_from(["-1", "x", "1e3", "2.5", "99999999999999999999999"]),
    )
    seed = data.pick(st.sampled_from([None, "0", "7"]), st.sampled_from(["-5", "seed", ""]))
    return (["--draws", draws] if draws is not None else []) + (
        ["--seed", seed] if seed is not None else []
    )


GOOD_DIFFERENCE = st.sampled_from(["1K", "2", "1.5", "0.5 C", "3F"])
GOOD_SPEED = st.sampled_from(["15 mph", "2 m/s", "5", "0"])


@SETTINGS
@given(data=st.data())
def test_tonight_with_a_forecast_file(tmp_path, data):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    f = _write(tmp_path, "f.csv", data.forecast())
    argv = ["tonight", str(h), "--forecast", str(f), "--json", "--start", "2026-12-03T17:00-05:00"]
    threshold = data.pick(st.none(), TEMPERATURE_ARG)
    argv += ["--threshold", threshold] if threshold is not None else ["--crop", "lettuce"]
    inside = data.pick(st.one_of(st.none(), _GOOD_TEMPERATURE), TEMPERATURE_ARG)
    argv += ["--inside-now", inside] if inside is not None else []
    margin = data.pick(st.one_of(st.none(), GOOD_DIFFERENCE), DIFFERENCE_ARG)
    argv += ["--margin", margin] if margin is not None else []
    argv += data.draw(UNITS_ARG) + (["--alert-status"] if data.draw(st.booleans()) else [])
    argv += _draws(data)
    assert_contract(argv, [h, f], json_out=True)


@SETTINGS
@given(data=st.data())
def test_tonight_with_a_forecast_low(tmp_path, data):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    low = data.pick(_GOOD_TEMPERATURE, TEMPERATURE_ARG)
    argv = ["tonight", str(h), "--crop", "tomato", "--low", low]
    wind = data.pick(st.one_of(st.none(), GOOD_SPEED), SPEED_ARG)
    argv += ["--wind", wind] if wind else []
    cloud = data.pick(st.sampled_from([None, "0", "50%"]), st.sampled_from(["150", "-5", "x"]))
    argv += ["--cloud", cloud] if cloud else []
    start = data.pick(
        st.sampled_from([None, "2026-12-03T18:00"]),
        st.sampled_from(["1000-01-01T18:00", "3000-01-01", "x", "2026-03-08T02:30"]),
    )
    argv += ["--start", start] if start else []
    as_json = data.draw(st.booleans())
    argv += ["--json"] if as_json else []
    argv += _draws(data)
    assert_contract(argv, [h], json_out=as_json)


@SETTINGS
@given(data=st.data())
def test_size(tmp_path, data):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    outside = data.pick(st.sampled_from(["-25C", "-13F", "-20", "-30C"]), TEMPERATURE_ARG)
    wind = data.pick(GOOD_SPEED, SPEED_ARG)
    argv = ["size", str(h), "--outside", outside, "--wind", wind, "--json", *data.draw(UNITS_ARG)]
    hold = data.pick(st.sampled_from([None, "5C", "40F", "10"]), TEMPERATURE_ARG)
    argv += ["--hold", hold] if hold is not None else ["--crop", "lettuce"]
    factor = data.pick(st.sampled_from([None, "1.2"]), st.sampled_from(["0.5", "nan", "1e9"]))
    argv += ["--safety-factor", factor] if factor else []
    assert_contract(argv, [h], json_out=True)


@SETTINGS
@given(data=st.data())
def test_stock_with_a_forecast_file(tmp_path, data):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    f = _write(tmp_path, "f.csv", data.forecast())
    setpoint = data.pick(st.sampled_from(["10C", "50F", "8", "12 °C"]), TEMPERATURE_ARG)
    days = data.pick(st.sampled_from(["1", "2", "16"]), st.sampled_from(["0", "999", "x"]))
    argv = ["stock", str(h), "--setpoint", setpoint, "--forecast", str(f), "--days", days]
    argv += ["--fuel", "propane", "--json", "--start", "2026-12-03T17:00-05:00"]
    price = data.pick(st.sampled_from([None, "0.85"]), st.sampled_from(["-1", "nan", "1e300"]))
    argv += ["--price", price] if price else []
    on_hand = data.pick(
        st.sampled_from([None, "900 L", "3 100-lb cylinders"]),
        st.sampled_from(["-5 gal", "lots", "1e30 gal"]),
    )
    argv += ["--on-hand", on_hand] if on_hand else []
    assert_contract(argv, [h, f], json_out=True)


@st.composite
def history_text(draw, calm: bool = False) -> str:
    """Hourly weather history for `winters`: 9 days from 1 November 2025 (good), or a
    hostile forecast file."""
    if not calm and draw(st.booleans()):
        return draw(forecast_text())
    base = draw(st.floats(-20, 5))
    t0 = dt.datetime(2025, 11, 1, tzinfo=dt.timezone(dt.timedelta(hours=-4)))
    rows = ["time,temperature_c"]
    for i in range(24 * 9):
        t = t0 + dt.timedelta(hours=i)
        rows.append(
            f"{t.isoformat(timespec='minutes')},{base + 5 * math.sin(i / 24 * 2 * math.pi):.1f}"
        )
    return "\n".join(rows) + "\n"


@SETTINGS
@given(data=st.data())
def test_winters_with_a_history_file(tmp_path, data):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    f = _write(tmp_path, "w.csv", data.draw(history_text(data.calm)))
    setpoint = data.pick(st.sampled_from(["10C", "50F", "8"]), TEMPERATURE_ARG)
    days = data.pick(st.sampled_from(["7", "8"]), st.sampled_from(["0", "6", "400", "x"]))
    argv = ["winters", str(h), "--setpoint", setpoint, "--history", str(f), "--json"]
    argv += ["--season-start", "11-01", "--season-days", days, "--winters", "1"]
    argv += ["--fuel", "propane"]
    price = data.pick(st.sampled_from([None, "0.85"]), st.sampled_from(["-1", "nan", "1e300"]))
    argv += ["--price", price] if price else []
    assert_contract(argv, [h, f], json_out=True)


@SETTINGS
@given(data=st.data(), as_json=st.booleans())
def test_fit(tmp_path, data, as_json):
    data = Inputs(data)
    h = _write(tmp_path, "h.toml", data.house())
    log = _write(tmp_path, "log.csv", data.record())
    argv = ["fit", str(h), "--log", str(log), *(["--json"] if as_json else [])]
    assert_contract(argv, [h, log], json_out=as_json)


@SETTINGS
@given(query=st.one_of(st.none(), st.text(max_size=20)), as_json=st.booleans())
def test_crops(query, as_json):
    argv = ["crops", *([query] if query is not None else []), *(["--json"] if as_json else [])]
    if query is not None and query.startswith("-"):
        argv = ["crops", "--", query]
    assert_contract(argv, [], json_out=as_json)


def test_watchdog_catches_a_hang(monkeypatch):
    """The hang detector itself works (a check that can fail)."""
    import time

    import grower.cli

    monkeypatch.setattr(grower.cli, "_run", lambda args: time.sleep(5))
    rc, _, _ = run_cli(["crops"], limit_s=0.2)
    assert isinstance(rc, str) and rc.startswith("hang")


@SETTINGS
@given(data=st.data())
def test_fit_write_changes_only_the_calibration_table(tmp_path, data):
    """`fit --write`: exit 2 with the file as it was, or exit 0 with only [calibration]
    changed, the file still a valid house file, and the original kept as the backup."""
    import tempfile
    import tomllib

    from grower import house as house_module

    data = Inputs(data)
    tmp_path = Path(tempfile.mkdtemp(dir=tmp_path))  # a fresh folder for each example
    h = _write(tmp_path, "h.toml", data.house())
    log = _write(tmp_path, "log.csv", data.record())
    before = h.read_bytes()
    argv = ["fit", str(h), "--log", str(log), "--write", "--json"]
    rc, out, err = run_cli(argv)
    _event(f"exit {rc}")
    assert rc in (0, 2), (rc, err)
    if rc == 2:
        assert h.read_bytes() == before and err.strip().splitlines()[-1].startswith("Error: ")
        assert not [p for p in tmp_path.iterdir() if p.name.endswith((".bak", ".tmp"))]
        return
    old = tomllib.loads(before.decode("utf-8-sig"))
    new = tomllib.loads(h.read_bytes().decode("utf-8-sig"))
    old.pop("calibration", None)
    assert new.pop("calibration")["k_w_per_k"] > 0
    assert new == old
    house_module.read(h)
    assert (tmp_path / "h.toml.bak").read_bytes() == before
    assert json.loads(out)["written"]["backup"].endswith("h.toml.bak")
