"""What a fit reports: parameters with their intervals, segments, one model's fit."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np

#: what to log when a parameter is not identified
ADVICE = {
    "k_w_per_k": "log nights with the heater both on and off, with its power (a column in W, kW or Btu/h)",
    "k_outside_w_per_k": "log nights with the heater both on and off, with its power (a column in W, kW or Btu/h)",
    "k_sky_w_per_k": "give the cloud cover (--weather-archive, or cloud_cover_pct in an --outside file), and log nights both clear and cloudy",
    "c_j_per_k": "log at least two clear nights with the heater off, so the house cools at its own pace",
    "time_constant_h": "log at least two clear nights with the heater off, so the house cools at its own pace",
    "heater_output_w": "log the heater's on/off state on nights when it cycles on and off (running part of the time, not all night)",
    "coupling_w_per_k": "the record cannot tell the floor's share from the air's: log several nights, some with heat, or fit --model lumped",
    "sun_factor": "log sunny days with the sun (W/m²), or fit nights only (leave out --with-days)",
    "deep_ground": "log nights over a wider range of outside temperatures, with the heater's power",
    "mass": "log from before sunset, so each night starts on the record, or fit --model lumped",
}
LABELS = {
    "k_w_per_k": "conductance K",
    "k_outside_w_per_k": "conductance to the outside air",
    "k_sky_w_per_k": "conductance to the sky",
    "deep_ground": "the path to the deep ground",
    "c_j_per_k": "heat capacity C",
    "time_constant_h": "time constant C/K",
    "coupling_w_per_k": "air–floor coupling",
    "heater_output_w": "heater output",
    "sun_factor": "sun gain factor",
}
UNITS = {
    "k_w_per_k": "W/K",
    "k_outside_w_per_k": "W/K",
    "k_sky_w_per_k": "W/K",
    "c_j_per_k": "J/K",
    "time_constant_h": "h",
    "coupling_w_per_k": "W/K",
    "heater_output_w": "W",
    "sun_factor": "",
}


@dataclass(frozen=True)
class Parameter:
    """One reported value with its 95 % linearised confidence interval.

    ``status``: "fitted" (free in the fit), "derived" (from fitted ones), "anchor" (held
    at `geometry` or at the heater's rating: its half-width is 0, the anchor's own
    uncertainty is not in it).
    """

    name: str
    value: float
    half_width: float
    geometry: float | None
    status: str

    @property
    def label(self) -> str:
        return LABELS[self.name]

    @property
    def unit(self) -> str:
        return UNITS[self.name]

    @property
    def low(self) -> float:
        return self.value - self.half_width

    @property
    def high(self) -> float:
        return self.value + self.half_width

    @property
    def relative(self) -> float:
        return self.half_width / abs(self.value) if self.value else float("inf")

    @property
    def ratio(self) -> float | None:
        return None if not self.geometry else self.value / self.geometry


@dataclass(frozen=True)
class SegmentFit:
    start: dt.datetime
    end: dt.datetime
    n_rows: int
    first_line: int
    last_line: int
    heated: bool
    initial_air_c: float
    initial_air_half_width: float
    initial_mass_c: float | None
    initial_mass_half_width: float | None
    rms_k: float


@dataclass(frozen=True, eq=False)
class ModelFit:
    """One model fitted to the record (or the reason it cannot be used: `refusal`).

    `parameters`, by name [SI units; `Parameter.geometry` is the geometry's value at the
    record's conditions]:

    - ``k_w_per_k``: the conductance to T_eff, derived: to the outside air + to the sky
      (+ in the lumped model, to the deep ground) [W/K];
    - ``k_outside_w_per_k``: from the air to the outside air (the conduction factor ×
      the geometry's) [W/K];
    - ``k_sky_w_per_k``: the sky part (the cover faces' and the floor's exchange with a
      clear sky) [W/K]; where the sky is fitted night by night (no cloud logged) it is
      still the one for a clear sky, and `sky_by_segment` holds each night's factor
      times that night's share of the clear sky's depression (what its cloud left);
    - ``c_j_per_k`` [J/K], ``time_constant_h`` [h]; where fitted ``coupling_w_per_k``
      [W/K] (two-node), ``heater_output_w`` [W] (on/off records), ``sun_factor``.

    `scales`: ``k_scale`` (the conduction factor: outside air, air–mass coupling and,
    unless fitted apart, the deep ground), ``sky_scale`` (the sky factor, for a clear
    sky; equal to ``k_scale`` where the sky is held at the geometry's share),
    ``c_scale`` and, two-node, ``coupling_scale`` (on top
    of ``k_scale``).
    """

    model: str
    anchor: str
    parameters: tuple[Parameter, ...]
    rms_k: float
    n_residuals: int
    n_free: int
    aic: float
    free_names: tuple[str, ...]
    correlation: np.ndarray
    segments: tuple[SegmentFit, ...]
    fitted_c: tuple[np.ndarray, ...]  # per segment, at its rows
    scales: dict[str, float] = field(default_factory=dict)
    refusal: str | None = None
    #: lag-1 autocorrelation of the residuals, within segments (NaN if too few)
    residual_lag1: float = float("nan")
    #: where the sky is fitted night by night (no cloud logged): each segment's sky factor
    #: times its share of the clear sky's depression
    sky_by_segment: tuple[float, ...] | None = None
    #: the reported values whose night-block (cluster-robust) interval was the wider one
    widened_by_nights: tuple[str, ...] = ()
    #: how many fitted variants (sky held, one, by night; ground apart) the intervals span
    variants_spanned: int = 1

    def get(self, name: str) -> Parameter | None:
        return next((p for p in self.parameters if p.name == name), None)
