"""The chance of damage tonight: the night run as many members, with no heat and heated.

A member is one possible night: an ensemble member of the live forecast, or the
forecast with a drawn error. Each runs through the exact solver twice (no heat; the
installed heater on its thermostat at the night's setpoint, as tonight's heated run),
and the chance of damage is the share of members whose plants reach the alarm.

**Drawn members** (a forecast file or ``--low``): the whole night is shifted by one
error e ~ N(0, σ²) per member (outside air, dew point and so the sky move together, as
`grower.plans.model.Boundary.shifted`), σ = `FORECAST_ERROR_K`. A constant shift is the
error of the overnight minimum that verification studies measure; the start of the night
is the same in every member (the inside air now is what it is).

**The house's K**: every member also gets a factor on the conductances to the outside
air and the sky, 1 + s·z with s the 95 % half-width over 1.96: the fit's interval when
the house file's ``[calibration]`` carries one (``k_w_per_k_ci95``, or
``k_outside_w_per_k_ci95`` with ``k_sky_w_per_k_ci95`` added to it, `k_spread`), else
the handbook spread the README states (U-values and air
changes put K within about ±30 % of a real house, taken as a 95 % range). The factors
are stratified: `K_LEVELS` equally likely levels at the middle quantiles z_j of the
normal distribution (scaled to unit variance, `k_levels`), one level per member in a
seeded random order, so the solver runs once per level (the network is fixed within a
run). The heat capacity C is not varied.

**Ensemble members** carry their own air temperature, dew point, cloud, wind and sun
(sky and leaf offset from each), with the K levels the same way. The network is the one
built for the forecast given (its mean wind and outside temperature, at which the cover's
radiation is linearised), as for tonight's "colder" night: a member 2.5 K colder than the
forecast comes out within about 0.1 K of the network built for it
(tests/test_weather_members.py).

A member that never reaches the alarm with no heat never switches the thermostat on
(the setpoint is the alarm plus the leaf offset, i.e. the air at which the plants reach
the alarm), so its heated night is its free night: the heated run is made only for the
members that reach the alarm. Of drawn members on one K level, those the heater cannot
hold are the coldest ones (`_first_held`), so a few runs find them; the search starts
where the failures ended on the level of next lower K (usually within a member or two),
so most levels take one thermostat run of one to three members.

References
----------
H. E. Brooks and C. A. Doswell III (1996), "A comparison of measures-oriented and
distributions-oriented approaches to forecast verification", *Weather and Forecasting*
11(3):288-303 (bibliographic details from memory); Table 1 as published on the NSSL
page https://www.nssl.noaa.gov/users/brooks/public_html/ntv/tables.html (read): Oklahoma
City next-day (12-24 h) high temperature, NWS forecast office RMSE 3.80 °F, MAE 2.80 °F;
consensus MOS RMSE 4.04 °F.
J. A. Baars and C. F. Mass (2005), *Weather and Forecasting* 20(6):1034-1047, and A. A.
Taylor and L. M. Leslie (2005), *Weather and Forecasting* 20(6):1006-1020 (read: the
abstracts, no figure quoted from them; interior sites have larger errors than coastal
ones; page ranges from memory).
C. J. Talsma, K. C. Solander, M. K. Mudunuru, B. Crawford and M. R. Powell (2023), "Frost
prediction using machine learning and deep neural network models", *Frontiers in
Artificial Intelligence* 5:963781, doi:10.3389/frai.2022.963781 (read: the abstract).
J. A. Hanley and A. Lippman-Hand (1983), "If nothing goes wrong, is everything all
right?", *JAMA* 249(13):1743-1745 (the rule of three; from memory).
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Literal

import numpy as np

from grower import arrays, solver
from grower.house import House
from grower.plans import model as hm
from grower.plans import runs

# within it of the alarm, the heater holds; the heated run judged as tonight judges it
from grower.plans.tonight import HOLD_TOLERANCE_K, heated_night

if TYPE_CHECKING:
    from grower.weather.members import Ensemble

#: standard deviation of tomorrow's forecast temperature error [K]: the NWS forecast
#: office's RMSE of next-day highs at Oklahoma City, 3.80 °F = 2.11 K (Brooks & Doswell
#: 1996, Table 1, read). Used for the overnight minimum: from memory, day-1 minimum
#: errors are of the same size (MAE about 1.5-2.5 °C, Taylor & Leslie 2005; Baars & Mass
#: 2005), larger on calm clear nights and inland; a normal error with this RMSE has an
#: MAE of 1.7 K (the table's MAE/RMSE, 0.74, is close to a normal's 0.80). For scale
#: (read): machine-learning models of one New Mexico farm's minima, trained on its own
#: sensors, reach an RMSE of 1.53-1.72 °C 6 h ahead (Talsma et al. 2023), so a public
#: forecast issued the day before doing 2.1 K is no worse than expected.
FORECAST_ERROR_K = 3.80 / 1.8
FORECAST_ERROR_SOURCE = "Brooks & Doswell 1996"
#: the handbook spread of K the README states: ±30 %, taken as a 95 % range
HANDBOOK_K_SPREAD = 0.30
#: equally likely K levels (stratified sampling of the K factor)
K_LEVELS = 8
#: drawn members when none is asked for; the seed that makes them reproducible
DEFAULT_DRAWS = 300
DEFAULT_SEED = 12
#: the share of members called "the coldest tenth"
COLDEST_SHARE = 0.1


@dataclass(frozen=True)
class Spec:
    """What members to run: `draws` drawn nights (seeded), or an ensemble's members."""

    draws: int = DEFAULT_DRAWS
    seed: int = DEFAULT_SEED
    ensemble: Ensemble | None = None
    notes: tuple[str, ...] = ()  # said with the result (e.g. why no ensemble)


@dataclass(frozen=True)
class Member:
    """One member's night."""

    crossing_time: dt.datetime | None  # plants reach the alarm with no heat (None: never)
    min_plant_c: float  # coldest plants with no heat [°C]
    #: the installed heater does not hold the alarm (`_Heated.fails`; None: no heater)
    heated_damage: bool | None
    outside_shift_k: float | None  # drawn: the forecast error; ensemble: None
    k_factor: float  # on the conductances to outside and sky


@dataclass(frozen=True)
class Chance:
    """The members of tonight and what they say."""

    source: Literal["ensemble", "drawn"]
    members: tuple[Member, ...]
    threshold_c: float
    heater: bool  # an installed heater was run
    forecast_error_k: float | None  # drawn: σ of the error [K]
    k_spread: float  # 95 % half-width of the K factor (0.3: ±30 %)
    k_basis: Literal["fit", "handbook"]
    seed: int
    ensemble_label: str | None
    notes: tuple[str, ...]

    @property
    def count(self) -> int:
        return len(self.members)

    @property
    def damaged(self) -> int:
        """Members whose plants reach the alarm with no heat."""
        return sum(m.crossing_time is not None for m in self.members)

    @property
    def damaged_heated(self) -> int | None:
        """Members whose plants fall below the alarm with the installed heater."""
        if not self.heater:
            return None
        return sum(bool(m.heated_damage) for m in self.members)

    @property
    def chance(self) -> float:
        return self.damaged / self.count

    @property
    def chance_heated(self) -> float | None:
        d = self.damaged_heated
        return None if d is None else d / self.count

    def _crossings(self) -> list[dt.datetime]:
        return sorted(m.crossing_time for m in self.members if m.crossing_time is not None)

    @property
    def earliest_crossing(self) -> dt.datetime | None:
        c = self._crossings()
        return c[0] if c else None

    @property
    def median_crossing(self) -> dt.datetime | None:
        """The median crossing of the members that reach the alarm (lower middle)."""
        c = self._crossings()
        return c[(len(c) - 1) // 2] if c else None

    @property
    def coldest_tenth_min_plant_c(self) -> float:
        """The coldest plants reached in the coldest tenth of members: the warmest
        minimum among them (one night in ten is this cold or colder) [°C]."""
        lows = sorted(m.min_plant_c for m in self.members)
        n = max(1, math.ceil(COLDEST_SHARE * len(lows)))
        return float(lows[n - 1])


def k_spread(
    house: House, kind: hm.ModelKind, use_calibration: bool
) -> tuple[float, Literal["fit", "handbook"]]:
    """(95 % half-width of K as a fraction, "fit" or "handbook") for this run's K."""
    cal = hm.calibration_of(house, use_calibration, kind)
    raw = house.calibration or {}

    def pair(key: str) -> tuple[float, float] | None:  # (value, 95 % half-width)
        value, ci = raw.get(key), raw.get(f"{key}_ci95")
        ok = all(isinstance(x, int | float) and not isinstance(x, bool) for x in (value, ci))
        if ok and value > 0 and math.isfinite(ci) and ci >= 0:
            return float(value), float(ci)
        return None

    if cal is not None:
        spreads = [ci / value for value, ci in filter(None, [pair("k_w_per_k")])]
        out, sky = pair("k_outside_w_per_k"), pair("k_sky_w_per_k")
        if out and sky:  # one factor on both: their half-widths added (the wide side)
            spreads.append((out[1] + sky[1]) / (out[0] + sky[0]))
        elif out:
            spreads.append(out[1] / out[0])
        if spreads:
            return min(max(spreads), 0.9), "fit"
    return HANDBOOK_K_SPREAD, "handbook"


def k_levels(spread: float, levels: int = K_LEVELS) -> np.ndarray:
    """The stratified K factors 1 + spread/1.96 · z_j, equally likely.

    z_j are the normal distribution's quantiles at the middle of `levels` equal strata,
    scaled so that their mean square is 1: the middle quantiles alone would narrow the
    spread (by 8 % in σ for 8 levels), and the tails are what the chance is about.
    """
    if spread <= 0:
        return np.ones(1)
    from statistics import NormalDist

    z = np.array([NormalDist().inv_cdf((j + 0.5) / levels) for j in range(levels)])
    z /= np.sqrt(np.mean(z**2))
    return 1.0 + spread / 1.959963984540054 * z


def _scaled(mdl: hm.Model, factor: float) -> hm.Model:
    """The model with its conductances to the outside air and the sky × `factor`."""
    if factor == 1.0:
        return mdl
    net = mdl.network
    h = np.array(net.boundary_w_per_k, dtype=float)
    envelope = [i for i, name in enumerate(net.boundary_names) if name in ("outside", "sky")]
    h[:, envelope] *= factor
    scaled = solver.Network(
        capacitance_j_per_k=np.array(net.capacitance_j_per_k),
        coupling_w_per_k=np.array(net.coupling_w_per_k),
        boundary_w_per_k=h,
        node_names=net.node_names,
        boundary_names=net.boundary_names,
    )
    return replace(mdl, network=scaled)


@dataclass(frozen=True, eq=False)
class _Heated:
    """The installed heater on its thermostat for some members of one K level."""

    mdl: hm.Model
    b: hm.Boundary
    boundaries: np.ndarray  # (M, N, 3)
    initial_c: np.ndarray
    threshold_c: float
    heater_w: float
    gains: np.ndarray  # (N, n): the forecast's (drawn members)
    gain_sets: np.ndarray | None  # (M, N, n): each member's (ensemble)
    offsets: np.ndarray | None  # (M, N): each member's leaf offset (ensemble)
    damage_c: float | None = None  # the crop's damage temperature (None: not known)

    def fails(self, which: np.ndarray) -> np.ndarray:
        """Which of members `which` the heater does not hold at the alarm: as tonight's
        heated run judges it (`grower.plans.tonight.heated_night`: plants that start
        below the alarm count as held when it brings them back in time and holds them)."""
        g = self.gains if self.gain_sets is None else self.gain_sets[which]
        off = self.b.plant_offset_k if self.offsets is None else self.offsets[which]
        tr = runs.thermostat(
            self.mdl,
            self.b.times_s,
            self.boundaries[which],
            self.initial_c,
            self.threshold_c + off,
            self.heater_w,
            g,
        )
        if _held_unsaturated(tr, off).all():  # no analysis needed: all held
            return np.zeros(len(which), dtype=bool)
        heated = heated_night(
            self.mdl,
            self.b.times_s,
            self.boundaries[which],
            self.initial_c,
            self.threshold_c,
            off,
            self.heater_w,
            g,
            damage_c=self.damage_c,
            run=tr,
            coldest_after=False,
        )
        return ~heated.holds


def _held_unsaturated(tr: solver.Trajectory, offset_k: np.ndarray) -> np.ndarray:
    """Members of a thermostat run at the alarm that are held for certain, without
    analysing them: those whose heater (of some output) never ran at full output, on a
    night whose leaf offset never rises by more than half the holding tolerance within a
    step.

    Below full output the air is at or above the setpoint, alarm + offset at each step's
    start, throughout that step (the thermostat floats above it or holds it, switching
    at the exact instant the air reaches it); the offset is linear within the step, so
    the plants (air - offset) stay above the alarm less the offset's rise over the step.
    A rise under HOLD_TOLERANCE_K / 2 leaves a margin far above round-off, so
    `solver.analyse` would find these members held too: the answer is the same.
    """
    off = np.atleast_2d(offset_k)
    rise = np.max(np.diff(off, axis=1), axis=1, initial=0.0)  # per member or one for all
    full = (tr.mode == solver.FULL).any(axis=1)
    sw = tr.switches
    full[sw.member[sw.mode == solver.FULL]] = True
    # a heater of no output floats below the setpoint (no FULL mode): never spared; and
    # the air at every grid time at or above the setpoint, as the argument has it
    setpoint = np.broadcast_to(tr.control.setpoint_c, tr.heat_w.shape)[:, :-1]
    air = tr.temps_c[:, :, 0]
    above = np.all((air[:, :-1] >= setpoint - 1e-6) & (air[:, 1:] >= setpoint - 1e-6), axis=1)
    powered = np.broadcast_to(tr.control.q_max_w > 0, full.shape)
    return ~full & powered & above & (rise < HOLD_TOLERANCE_K / 2)


def _first_held(n: int, fails, guess: int = 0) -> int:
    """The first position whose member the heater holds, of `n` ordered coldest first.

    Colder nights are colder heated too (the network with its clipped thermostat is a
    monotone system), so the members that fail are a leading run; its end is bracketed
    by probes, a few members per solver call (a member costs about what a call does).
    `guess` is where the end is expected (from the K levels already run): the first
    round probes the members around it, and while every probe lands on one side the
    next ones gallop away from it; once both sides are seen, quarters of the bracket.
    The guess only orders the probes: the answer is the same for any guess.
    `fails(positions)` runs those members and says which fail.
    """
    lo, hi = 0, n  # the answer lies in [lo, hi]
    guess = min(max(int(guess), 0), n)
    # the members on either side of the guess, and one more on the held side (the guess
    # comes from a level of lower K, so it tends to fall short); the coldest alone for 0
    probes = np.arange(max(guess - 1, 0), min(guess + 2, n)) if guess > 0 else np.array([0])
    up = down = 1  # galloping strides while only one side has been seen
    while lo < hi:
        bad = np.asarray(fails(probes), bool)
        for pos, b in zip(probes, bad, strict=True):
            if b:
                lo = max(lo, int(pos) + 1)
            else:
                hi = min(hi, int(pos))
        width = hi - lo
        if width <= 0:
            break
        if width <= 3:
            probes = np.arange(lo, hi)
        elif bad.all() and hi == n:  # every member probed fails: further up
            probes = arrays.unique(np.minimum(lo + up * np.array([0, 1, 3]), hi - 1))
            up *= 4
        elif not bad.any() and lo == 0:  # every member probed holds: further down
            probes = arrays.unique(np.maximum(hi - 1 - down * np.array([0, 1, 3]), lo))
            down *= 4
        else:
            probes = arrays.unique([lo + width * k // 4 for k in (1, 2, 3)])
    return lo


def _edge(shifts: np.ndarray, held: int) -> float:
    """The shift between the last member that fails and the first held, of `shifts`
    (ascending); -inf when none fails, the last shift when all do."""
    if held == 0:
        return -math.inf
    if held == shifts.size:
        return float(shifts[-1])
    return 0.5 * float(shifts[held - 1] + shifts[held])


def _at(b: hm.Boundary, seconds: float) -> dt.datetime:
    """The instant `seconds` after the boundary's first time, to the second, in its zone."""
    return dt.datetime.fromtimestamp(round(float(b.utc_s[0]) + float(seconds)), b.tz)


def run(
    spec: Spec,
    *,
    house: House,
    kind: hm.ModelKind,
    use_calibration: bool,
    mdl: hm.Model,
    b: hm.Boundary,
    initial_c: np.ndarray,
    threshold_c: float,
    heater_w: float | None,
    pressure_hpa: float | None = None,
    damage_c: float | None = None,
) -> Chance | None:
    """Run the members `spec` asks for; None when it asks for none.

    `b` is the night's boundary on the solver grid (the forecast as given), `initial_c`
    the start, `heater_w` the installed heater's output (None: no heater), `damage_c` the
    crop's damage temperature (plants that start below the alarm must be back at it
    before they reach it).
    """
    notes = list(spec.notes)
    rng = np.random.default_rng(spec.seed)
    spread, basis = k_spread(house, kind, use_calibration)
    gains = b.solver_gains(mdl)
    boundaries, offsets, gain_sets, shifts = None, None, None, None
    label = None
    if spec.ensemble is not None:
        try:
            per = [
                hm.boundary(house, mdl, fc, b.utc_s, pressure_hpa=pressure_hpa, tz=b.tz)
                for fc in spec.ensemble.members
            ]
        except ValueError:
            last = min(fc.end for fc in spec.ensemble.members)
            notes.append(
                f"the ensemble ends at {last:%a %H:%M}, before the night does: drawn nights instead"
            )
        else:
            boundaries = np.stack([p.solver_boundary(mdl) for p in per])
            offsets = np.stack([p.plant_offset_k for p in per])
            gain_sets = np.stack([p.solver_gains(mdl) for p in per])
            label = spec.ensemble.label
    if boundaries is None:
        if spec.draws < 1:
            return None
        shifts = rng.normal(0.0, FORECAST_ERROR_K, spec.draws)
        base = b.solver_boundary(mdl)
        move = np.zeros((spec.draws, 1, base.shape[1]))
        move[:, 0, :2] = shifts[:, None]  # outside air and sky; the deep ground stays
        boundaries = base[None] + move
    m = boundaries.shape[0]
    factors = k_levels(spread)
    level = rng.permutation(m) % factors.size
    crossing_s = np.full(m, np.nan)
    min_plant = np.empty(m)
    damaged_heated = np.zeros(m, dtype=bool)
    edge = -math.inf  # where the heater's failures ended on the last K level run
    for j, factor in enumerate(factors):
        idx = np.flatnonzero(level == j)
        if idx.size == 0:
            continue
        scaled = _scaled(mdl, float(factor))
        g = gains if gain_sets is None else gain_sets[idx]
        off = b.plant_offset_k if offsets is None else offsets[idx]
        free = runs.free_float(scaled, b.times_s, boundaries[idx], initial_c, g)
        c = solver.analyse(free, threshold_c, off)
        crossing_s[idx], min_plant[idx] = c.time_s, c.min_c
        cold = idx[np.isfinite(c.time_s)]  # the others never switch the heater on
        if heater_w is None or cold.size == 0:
            continue
        run = _Heated(
            scaled,
            b,
            boundaries,
            initial_c,
            threshold_c,
            heater_w,
            gains,
            gain_sets,
            offsets,
            damage_c,
        )
        if shifts is None:
            damaged_heated[cold] = run.fails(cold)
        else:
            cold = cold[np.argsort(shifts[cold], kind="stable")]  # coldest first
            # the last level's end is a guess for this one's (the next K is a little
            # colder: rarely a few members off); the answer does not depend on it
            guess = int(np.searchsorted(shifts[cold], edge))
            held = _first_held(
                cold.size, lambda pos, cold=cold, run=run: run.fails(cold[pos]), guess=guess
            )
            damaged_heated[cold[:held]] = True
            edge = _edge(shifts[cold], held)
    members = tuple(
        Member(
            crossing_time=None if np.isnan(crossing_s[i]) else _at(b, crossing_s[i]),
            min_plant_c=float(min_plant[i]),
            heated_damage=None if heater_w is None else bool(damaged_heated[i]),
            outside_shift_k=None if shifts is None else float(shifts[i]),
            k_factor=float(factors[level[i]]),
        )
        for i in range(m)
    )
    return Chance(
        source="drawn" if shifts is not None else "ensemble",
        members=members,
        threshold_c=threshold_c,
        heater=heater_w is not None,
        forecast_error_k=FORECAST_ERROR_K if shifts is not None else None,
        k_spread=spread,
        k_basis=basis,
        seed=spec.seed,
        ensemble_label=label,
        notes=tuple(notes),
    )
