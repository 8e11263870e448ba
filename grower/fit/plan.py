"""`fit`: K and C of a house from its temperature record; which model and which anchor.

Both models are fitted: the lumped one and the two-node one (air + floor and water; its
air–floor coupling is fitted where the record pins it down, else held at the
geometry's). With ``model="auto"`` the two-node fit is kept when it is identified and
explains the record better by Akaike's criterion (lower AIC: n ln(SSR/n) + 2p), else the
lumped fit, and the report says why. A stored calibration is used by the model it was
fitted with (`grower.plans.model.calibration_of`). A fit the record cannot support is refused with an `InputError` that
says what to log.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from grower.errors import InputError
from grower.fit import sensor
from grower.fit.data import FitData, prepare
from grower.fit.estimate import MAX_RMS_K, estimate
from grower.fit.results import ModelFit
from grower.house import House
from grower.logger import LoggerRecord
from grower.units import Note

ANCHORS = ("auto", "geometry", "heater")
MODELS = ("auto", "lumped", "two-node")
ANCHOR_NOTES = {
    "measured power": "K and C from the logged heater power (no anchor needed)",
    "heater rating": (
        "temperatures alone fix C/K and the heater's lift Q/K; K and C here rest on the "
        "heater's rated output in the house file (--anchor geometry keeps the geometry's K "
        "and fits the heater's output instead)"
    ),
    "geometry": (
        "temperatures alone fix the time constant C/K, not K: the conduction to the outside "
        "air is kept at the geometry's value, the sky part and C fitted (log the heater's "
        "power, or its on/off state with a rated heater in the house file, to fit K)"
    ),
}


@dataclass(frozen=True, eq=False)
class FitResult:
    """What `grower fit` reports and stores."""

    house_name: str
    house_path: str
    record_path: str
    record_start: dt.datetime
    record_end: dt.datetime
    outside_source: str
    chosen: ModelFit
    other: ModelFit | None
    choice: str
    anchor: str
    heater: str | None
    with_days: bool
    n_record_rows: int
    n_samples: int
    wind_m_s: float
    notes: tuple[str, ...]
    times: tuple[dt.datetime, ...]  # every row used, in order
    measured_c: np.ndarray
    fitted_c: np.ndarray
    outside_c: np.ndarray
    segment_of_row: np.ndarray
    fit_date: dt.date
    #: the sensor's noise from the record's scatter [K] (`grower.fit.sensor`), NaN if unknown
    noise_k: float = float("nan")
    #: "good" or "rough": the residual RMS against the noise (a refused fit is not returned)
    quality: str = "good"
    #: lag-1 autocorrelation of the residuals (within segments)
    residual_lag1: float = float("nan")

    @property
    def rough(self) -> bool:
        return self.quality == "rough"

    @property
    def noise_ratio(self) -> float:
        """Residual RMS over the sensor noise (floored at `sensor.NOISE_FLOOR_K`)."""
        return self.chosen.rms_k / max(self.noise_k, sensor.NOISE_FLOOR_K)

    @property
    def model(self) -> str:
        return self.chosen.model

    @property
    def anchor_note(self) -> str:
        return ANCHOR_NOTES[self.anchor]


def resolve_anchor(data: FitData, anchor: str) -> str:
    """The anchor the record and house allow (see `grower.fit.estimate`)."""
    if anchor not in ANCHORS:
        raise ValueError(f"anchor must be one of {ANCHORS}; got {anchor!r}")
    if data.heater == "power":
        return "measured power"
    has_rating = bool(data.house.heaters)
    if anchor == "heater":
        if data.heater != "state":
            raise InputError(
                "--anchor heater needs the heater's on/off state in the record, with the "
                "heater running on some of the rows used",
                where=data.record.path,
            )
        if not has_rating:
            raise InputError(
                "--anchor heater needs a [[heater]] with its input or output in the house file",
                where=data.house.path,
            )
        return "heater rating"
    if anchor == "auto" and data.heater == "state" and has_rating:
        return "heater rating"
    return "geometry"


def fit_house(
    house: House,
    record: LoggerRecord,
    *,
    outside=None,
    model: str = "auto",
    with_days: bool = False,
    anchor: str = "auto",
    today: dt.date | None = None,
) -> FitResult:
    """Fit the house's thermal model to its logged record.

    Parameters
    ----------
    house, record : the house file and its logger record
    outside : a `grower.weather.Forecast` for the outside temperature, or None (the
        record's own outside column)
    model : "auto", "lumped" or "two-node"
    with_days : include daytime rows (with a fitted sun-gain factor)
    anchor : "auto", "geometry" or "heater" (see `grower.fit.estimate`)
    today : the fit date stored with a calibration (default: today)

    Raises
    ------
    InputError
        The record is unreadable, too short, too flat, or cannot identify the model's
        parameters; the message says what data would help.
    """
    if model not in MODELS:
        raise ValueError(f"model must be one of {MODELS}; got {model!r}")
    data = prepare(house, record, outside=outside, with_days=with_days)
    anchor_used = resolve_anchor(data, anchor)
    lumped = estimate(data, "lumped", anchor_used) if model in ("auto", "lumped") else None
    two = None
    if model != "lumped":
        two = estimate(data, "two-node", anchor_used)  # the coupling held where too thin
    where = record.path
    if model == "lumped":
        chosen, other, choice = lumped, None, "the lumped model (--model lumped)"
    elif model == "two-node":
        chosen, other, choice = two, None, "the two-node model (--model two-node)"
    elif lumped.refusal is None and two.refusal is None:
        if two.aic < lumped.aic:
            chosen, other = two, lumped
            choice = Note(
                "the two-node model: it follows the record better (RMS {two} against "
                f"{{lumped}}; AIC {two.aic:.0f} against {lumped.aic:.0f})",
                two=("delta", two.rms_k, 2),
                lumped=("delta", lumped.rms_k, 2),
            )
        else:
            chosen, other = lumped, two
            choice = (
                f"the lumped model: the two-node model does not follow the record better "
                f"(AIC {two.aic:.0f} against {lumped.aic:.0f})"
            )
    elif two.refusal is None:
        chosen, other = two, lumped
        choice = f"the two-node model (the lumped one is refused: {lumped.refusal})"
    else:
        chosen, other = lumped, two
        choice = f"the lumped model (two-node not identified: {two.refusal})"
    if chosen.model == "two-node" and "g" not in chosen.free_names:
        held = "; the air–floor coupling is held at the geometry's (too little data to fit it)"
        choice = (
            Note(choice.template + held, us_template=choice.us_template + held, **choice.values)
            if isinstance(choice, Note)
            else choice + held
        )
    noise = sensor.noise_from_scatter([(s.inside_c, _heater_at_rows(s)) for s in data.segments])
    quality = sensor.quality(chosen.rms_k, noise, MAX_RMS_K)
    if quality == "refused":
        raise InputError(
            f"cannot fit this record: the model misses it by {chosen.rms_k:.2f} K RMS, "
            f"{chosen.rms_k / max(noise, sensor.NOISE_FLOOR_K):.1f} times the sensor's noise "
            f"({noise:.2f} K): {sensor.LOG_MORE}"
            + (" (or let the two-node model try: --model auto)" if model == "lumped" else ""),
            where=where,
        )
    if chosen.refusal is not None:  # (a miss of many times the noise is said first)
        raise InputError(f"cannot fit this record: {chosen.refusal}", where=where)

    notes = data.notes + sky_notes(chosen, data.cloud_given)
    rows = data.rows
    seg_of = np.concatenate([np.full(s.rows.size, i) for i, s in enumerate(data.segments)])
    return FitResult(
        house_name=house.name,
        house_path=house.path,
        record_path=record.path,
        record_start=record.local(int(rows[0])),
        record_end=record.local(int(rows[-1])),
        outside_source=data.outside_source,
        chosen=chosen,
        other=other,
        choice=choice,
        anchor=anchor_used,
        heater=data.heater,
        with_days=with_days,
        n_record_rows=record.n_rows,
        n_samples=data.n_rows,
        wind_m_s=data.wind_m_s,
        notes=notes,
        times=tuple(record.local(int(i)) for i in rows),
        measured_c=record.inside_c[rows],
        fitted_c=np.concatenate(chosen.fitted_c),
        outside_c=np.concatenate([s.outside_c for s in data.segments]),
        segment_of_row=seg_of,
        fit_date=today or dt.date.today(),
        noise_k=noise,
        quality=quality,
        residual_lag1=chosen.residual_lag1,
    )


def _heater_at_rows(seg) -> np.ndarray | None:
    h = seg.heater_on if seg.heater_on is not None else seg.heater_w
    return None if h is None else np.asarray(h)[seg.obs]


def sky_notes(fit: ModelFit, cloud_given: bool) -> tuple[str, ...]:
    """What the report says about how the sky part (and the ground) was fitted."""
    clear = "" if cloud_given else ", on the clear-sky temperature from the outside air"
    out = []
    if fit.sky_by_segment is not None:
        out.append(
            "no cloud cover logged: the sky is fitted night by night, one sky part (the "
            "cover's exchange with a clear sky) and each night's share of the clear sky's "
            "depression (a cloud warms the sky, it does not change the cover); what that "
            "leaves uncertain is in the intervals (give cloud_cover_pct in an --outside file "
            "to narrow them)"
        )
    elif "ks" in fit.free_names:
        out.append(f"the sky part is fitted apart from the conduction{clear}")
    else:
        out.append(
            "the sky part is held at the geometry's share of the conduction (the record does "
            "not tell them apart)"
            + ("" if cloud_given else "; no cloud cover: the nights are taken as clear")
        )
    if "kg" in fit.free_names:
        out.append("the path to the deep ground is fitted with a factor of its own")
    return tuple(out)
