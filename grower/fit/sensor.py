"""The fit judged against the sensor: the logger's noise from the record's own scatter.

A house's air temperature is smooth on the scale of a logger's interval (its time
constant is hours, the rows minutes), so the second difference of the logged inside
temperature, ``Δ²x_i = x_{i+1} − 2 x_i + x_{i−1}``, is almost all sensor noise. For white
noise of standard deviation σ, Δ²x has variance (1 + 4 + 1) σ² = 6 σ², so σ is estimated
as ``1.4826 · MAD(Δ²x) / √6`` — the median absolute deviation scaled to a standard
deviation for normal errors, which a few steps (a door, a heater switching) do not move.
Second differences centred on a row where the logged heater changes are left out (the
heater bends the curve there), and the estimate is pooled over every segment.

The fit's residual is then compared with that noise: a model that describes the house
leaves residuals at the noise (ratio near 1); a residual more than `ROUGH_RATIO` times the
noise is a *rough* fit (the model misses heat flows the record does not log), and more
than `REFUSE_RATIO` times is refused.

The lag-1 autocorrelation of the residuals is reported too: near 0 for a good fit; near 1
when the misfit runs in long waves, which makes the independent-error intervals too
narrow.

References
----------
F. R. Hampel (1974), "The influence curve and its role in robust estimation", J. Amer.
Statist. Assoc. 69(346):383-393, doi:10.2307/2285666 (the MAD and its 1.4826 factor).
J. von Neumann, R. H. Kent, H. R. Bellinson and B. I. Hart (1941), "The mean square
successive difference", Ann. Math. Statist. 12(2):153-162 (noise from differences of a
series; here the second difference, variance 6 σ² for white noise).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

#: normal-consistency factor of the median absolute deviation (Hampel 1974)
MAD_TO_SD = 1.4826
#: a residual RMS above this many times the sensor noise marks the fit rough (common
#: practice, no source)
ROUGH_RATIO = 2.0
#: a residual RMS above this many times the sensor noise is refused (common practice, no
#: source)
REFUSE_RATIO = 5.0
#: the noise is taken as at least this [K]: a logger that reports 0.1 K steps has a rounding
#: error of 0.1/√12 ≈ 0.03 K, and a near-noiseless record must not make every fit rough
#: (common practice, no source)
NOISE_FLOOR_K = 0.05
#: what to log when the fit misses the record by far more than the sensor's noise
LOG_MORE = (
    "log the heater's power or its on/off state, and the cloud cover (or sun), so the fit "
    "sees every heat flow"
)


def second_differences(inside_c: np.ndarray, heater: np.ndarray | None = None) -> np.ndarray:
    """Second differences of one segment's inside temperature [K].

    `heater` (same length, at the rows) leaves out every difference whose three rows do
    not share one heater value.
    """
    x = np.asarray(inside_c, dtype=float)
    if x.size < 3:
        return np.empty(0)
    d2 = x[2:] - 2.0 * x[1:-1] + x[:-2]
    if heater is not None:
        h = np.asarray(heater, dtype=float)
        same = (h[2:] == h[1:-1]) & (h[1:-1] == h[:-2])
        d2 = d2[same]
    return d2[np.isfinite(d2)]


def noise_from_scatter(segments: Sequence[tuple[np.ndarray, np.ndarray | None]]) -> float:
    """The sensor's noise standard deviation [K] from (inside_c, heater) per segment.

    ``1.4826 · MAD(Δ²x) / √6`` pooled over the segments (see the module docstring); NaN
    when fewer than 10 second differences are usable.
    """
    parts = [second_differences(x, h) for x, h in segments]
    d2 = np.concatenate(parts) if parts else np.empty(0)
    if d2.size < 10:
        return float("nan")
    mad = float(np.median(np.abs(d2 - np.median(d2))))
    return MAD_TO_SD * mad / np.sqrt(6.0)


def lag1_autocorrelation(residuals: Sequence[np.ndarray]) -> float:
    """Lag-1 autocorrelation of the residuals, pairs taken within each segment only."""
    rs = [np.asarray(r, dtype=float) for r in residuals]
    allr = np.concatenate(rs) if rs else np.empty(0)
    if allr.size < 3:
        return float("nan")
    mean = float(allr.mean())
    den = float(np.sum((allr - mean) ** 2))
    if den == 0:
        return 0.0
    num = sum(float(np.sum((r[1:] - mean) * (r[:-1] - mean))) for r in rs if r.size > 1)
    return num / den


def quality(rms_k: float, noise_k: float, max_rms_k: float) -> str:
    """The verdict on a residual RMS against the sensor noise: good, rough or refused.

    Refused above `REFUSE_RATIO` × noise or above `max_rms_k` outright; rough above
    `ROUGH_RATIO` × noise. The noise is floored at `NOISE_FLOOR_K`; an unknown noise (NaN)
    judges by `max_rms_k` only.
    """
    if rms_k > max_rms_k:
        return "refused"
    if not np.isfinite(noise_k):
        return "good"
    ref = max(noise_k, NOISE_FLOOR_K)
    if rms_k > REFUSE_RATIO * ref:
        return "refused"
    if rms_k > ROUGH_RATIO * ref:
        return "rough"
    return "good"
