"""Least squares on the exact stepped model: factors on the geometry's network.

The fitted network is the geometry's (`grower.plans.model.build`) with

- the *conduction* times ``k``: the outside-air column, the air–mass coupling and (unless
  fitted apart, below) the deep-ground column;
- the *sky part* (the sky column: the cover faces' and the floor's exchange with the sky)
  times its own ``ks`` ≥ 0, one factor for the record; where the cloud is not logged,
  optionally with each segment's share ``cs0``, ``cs1``… (0 to `MAX_CLEAR_SHARE`) of the
  clear sky's depression below the outside air (see "Unlogged cloud" below);
- in the lumped model with a heater anchor, optionally the deep-ground column times its
  own ``kg`` ≥ 0 (a house whose floor loses less, or more, than the geometry says; the
  plain first-order house of issue #11 has no ground path at all);
- every heat capacity times ``c``; in the two-node model the coupling times a further
  ``g``; a heater output ``q`` (on/off records) and a sun factor ``s`` (``--with-days``).

The residuals are the solver's air temperature (`grower.solver.free_float`, exact for the
piecewise-linear boundary) less the logged one at every row. Each segment starts from
its own state: the air's starting temperature is fitted (one reading carries the
logger's noise), and in the two-node model the mass node's too.

What temperatures alone can tell: without a known heat input, ``k``, ``ks``, ``c`` and
the heater output scale together (``C dT/dt = K (T_eff − T) + Q`` is unchanged when all
are multiplied by one number), so a record fixes the time constant, the sky's share and
the heater's lift Q/K, not K itself. One absolute heat flow sets the scale (the anchor):

- ``"measured power"``: the record logs the heater's power: K and C are both fitted;
- ``"heater rating"``: the record logs the heater's on/off state and the house file
  gives its output: Q is that output, K and C are fitted;
- ``"geometry"``: the conduction stays the geometry's; the sky part, C (and Q, from its
  on/off state) are fitted.

Which variant: `estimate` fits the sky held at the geometry's share (``ks`` = ``k``, the
old single factor), one sky factor, one sky factor with each night's cloud, and (lumped, heater anchor) each with
the ground apart. The base is one sky factor where it is identified (the geometry's share
only where it is not); a richer variant replaces it only when its AIC is lower by more
than `AIC_MARGIN`; and the intervals are widened to span the simpler variants the record
cannot rule out (within `AIC_MARGIN`), so an assumption the record cannot test does not
hide in a narrow interval.

Unlogged cloud. A cloud warms the sky: the sky's emissivity rises toward 1 (the
one-layer correction ε = ε₀ + (1 − ε₀)·k·c of `grower.sky`), so the sky temperature
moves toward the outside air; the cover's exchange with the sky (its area, emissivity
and the radiative coefficient, the sky column's conductance) does not change. On a
record without cloud the nuisance is therefore the night's sky temperature, not its
conductance: segment i sees T_sky,i = T_out − cs_i·(T_out − T_sky,clear) through the
one fitted sky conductance ``ks``. (A factor on the sky conductance night by night,
as before, takes the cloud's warmer sky for a smaller conductance; since the record
fixes the total conductance to the outside well, the conduction to the outside air
then takes up the share of the sky's that the cloud hid: +6 to +20 % on cloudy records
of benchmarks/fit_coverage.py, outside intervals that held only 82 % of them.) With a
share fitted for each night, what separates the conduction to the outside air from the
sky's is only how the clear sky's depression changes with the outside temperature
(Swinbank: T_sky ∝ T_out^1.5, about −0.4 K of depression per K warmer): the nuisances
are fitted with the rest, so the intervals of K and C carry their uncertainty (the
linearised covariance below is that of all parameters together, Bates & Watts 1988
§2.1; the profile of K over the nuisances, to first order). A record that cannot pin
the conduction down this way is refused with the advice to give the cloud cover
(``grower fit --weather-archive`` fetches it for the house's site from a weather archive,
`grower.fit.archive`; or an --outside file with cloud_cover_pct); one that can states
the wider interval it has.

Confidence intervals: the linearised ones, covariance ``s² (JᵀJ)⁻¹`` with J the Jacobian
at the optimum (central differences) and ``s²`` the residual variance, widened for the
residuals' lag-1 autocorrelation ρ (within each segment,
`grower.fit.sensor.lag1_autocorrelation`) as for AR(1) errors: the covariance times
(1 + ρ)/(1 − ρ) and Student's t on the effective sample size n (1 − ρ)/(1 + ρ) (ρ < 0
taken as 0). Beside it, with four or more nights, the night-block interval: the
cluster-robust (sandwich) covariance with whole segments as clusters
(`cluster_covariance`, CR1, Student's t on G − 1 degrees of freedom), which allows any
correlation of the errors within a night. Each reported value keeps the wider of the
two. Derived values by the delta method.

References
----------
D. M. Bates and D. G. Watts (1988), *Nonlinear Regression Analysis and Its
Applications*, Wiley, ch. 2 (linear approximation inference regions).
M. A. Branch, T. F. Coleman and Y. Li (1999), "A subspace, interior, and conjugate
gradient method for large-scale bound-constrained minimization problems", SIAM J. Sci.
Comput. 21(1):1-23, doi:10.1137/S1064827595289108 (scipy's "trf" method).
G. E. P. Box, G. M. Jenkins and G. C. Reinsel (2008), *Time Series Analysis*, 4th ed.,
Wiley, §2.1.5 (variance of the mean of an AR(1) series, the (1 + ρ)/(1 − ρ) factor).
A. C. Cameron and D. L. Miller (2015), "A practitioner's guide to cluster-robust
inference", J. Human Resources 50(2):317-372, doi:10.3368/jhr.50.2.317 (the sandwich
with clusters, the CR1 factor G/(G − 1)·(n − 1)/(n − p), and Student's t on G − 1 for
few clusters; the section numbers from memory).
W. C. Swinbank (1963), "Long-wave radiation from clear skies", Q. J. R. Meteorol. Soc.
89(381):339-348, doi:10.1002/qj.49708938105 (the clear sky's T^1.5 law).
H. Akaike (1974), "A new look at the statistical model identification", IEEE Trans.
Automatic Control 19(6):716-723, doi:10.1109/TAC.1974.1100705.
K. P. Burnham and D. R. Anderson (2002), *Model Selection and Multimodel Inference*,
2nd ed., Springer (AIC differences over 10: essentially no support; from memory).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
from scipy import optimize, special

from grower import solver
from grower.fit import sensor
from grower.fit.data import FitData
from grower.fit.results import ADVICE, LABELS, ModelFit, Parameter, SegmentFit

#: a fitted or derived value whose 95 % half-width exceeds this share of it is refused
#: (common practice, no source: a number known to ±50 % is no better than the geometry's)
MAX_RELATIVE_CI = 0.5
#: two fitted parameters correlated more than this cannot be told apart (common practice,
#: no source)
MAX_CORRELATION = 0.995
#: scaled JᵀJ with a smaller ratio of least to greatest eigenvalue is near-singular
#: (numerical: near the round-off of the finite-difference Jacobian)
MIN_EIGEN_RATIO = 1e-12
#: a fit that misses the record by more than this [K RMS] does not describe it
#: (common practice, no source: logger accuracy ±0.5 K, model error a few tenths)
MAX_RMS_K = 1.5
CONFIDENCE = 0.95
#: a variant with more parameters (its own sky or ground factor, a sky factor per night)
#: replaces a simpler one only when its AIC is lower by more than this: a difference over
#: 10 leaves "essentially no support" for the worse model (Burnham & Anderson 2002;
#: from memory)
AIC_MARGIN = 10.0
#: fewest nights (segments) for the night-block interval: with three, Student's t on two
#: degrees of freedom is 2.2 times the normal quantile and the sandwich's own estimate
#: rests on two score directions: on three-night records it only widened sound fits'
#: intervals (benchmarks/fit_coverage.py: C held by 117 of 117 with it, 115 without)
#: (common practice, no source)
MIN_BLOCKS = 4
#: the residuals' lag-1 autocorrelation used to widen the intervals is capped here (an
#: inflation of 39): beyond it the record is one long wave and the fit is refused anyway
MAX_LAG1 = 0.95
#: the largest share of the clear sky's depression a night may show [-]: a cloud only
#: warms the sky (share under 1), but Swinbank's clear sky is an average one and a dry
#: night's is colder (common practice, no source)
MAX_CLEAR_SHARE = 1.5
#: allowed range of each scale factor on the geometry (common practice, no source: far
#: outside the ±30 % of handbook U-values, so only a wrong record reaches it)
SCALE_BOUNDS = (0.05, 20.0)
#: columns of the boundary conductances (`grower.plans.model.BOUNDARIES`)
OUTSIDE, SKY, GROUND = 0, 1, 2
#: allowed range of a fitted starting temperature (air or mass) [°C]
START_BOUNDS_C = (-40.0, 60.0)


class _Problem:
    """The residual function of one model on one record."""

    def __init__(
        self,
        data: FitData,
        kind: str,
        anchor: str,
        fit_coupling: bool = True,
        sky: str = "one",
        free_ground: bool = False,
    ) -> None:
        self.data, self.kind, self.anchor = data, kind, anchor
        mdl = data.lumped if kind == "lumped" else data.two_node
        net = mdl.network
        self.net0 = net
        self.c0 = np.array(net.capacitance_j_per_k)
        self.g0 = np.array(net.coupling_w_per_k)
        self.h0 = np.array(net.boundary_w_per_k)
        self.c_geom = mdl.c_j_per_k
        self.k_out_geom = float(self.h0[:, OUTSIDE].sum())
        self.k_sky_geom = float(self.h0[:, SKY].sum())
        self.k_ground_geom = mdl.k_ground_w_per_k  # lumped: the node's; two-node: 0 (on the mass)
        # the geometry's K defined as the fitted one is (`reported`): the sum of the
        # conductance columns, to the outside air + to the sky (+ the lumped node's ground).
        # Not the model's steady K to T_eff (`mdl.k_w_per_k`), whose sky part is the
        # floor's reached through the air–floor coupling: on the example house 1,499 W/K
        # against 1,559 W/K here, so a ratio on it would compare two definitions
        self.k_geom = self.k_out_geom + self.k_sky_geom + self.k_ground_geom
        self.k_steady_geom = mdl.k_w_per_k
        self.coupling_geom = mdl.capacities.air_mass_w_per_k if kind == "two-node" else None
        house = data.house
        self.rating_w = house.heater_output_w if house.heaters else None
        self.q_ref = self.rating_w or self.k_geom * 10.0
        nseg = len(data.segments)
        names, start, lo, hi = ["c"], [1.0], [SCALE_BOUNDS[0]], [SCALE_BOUNDS[1]]
        if anchor in ("measured power", "heater rating"):
            names.append("k")
            if free_ground and self.h0[:, GROUND].sum() > 0:
                names.append("kg")
        if kind == "two-node" and fit_coupling:
            names.append("g")
        if data.heater == "state" and anchor != "heater rating":
            names.append("q")
        if data.with_days:
            names.append("s")
        if self.k_sky_geom > 0 and sky != "held":
            # the sky part apart from the conduction: one factor; where the cloud is not
            # logged, with each night's share of the clear sky's depression beside it (a
            # cloud warms the sky, it does not change the cover's exchange with it)
            names.append("ks")
            if sky == "night" and nseg > 1:
                names += [f"cs{i}" for i in range(nseg)]
        for n in names[1:]:
            start.append(1.0)
            lo.append(0.0 if n in ("q", "s", "kg", "ks") or _clear(n) else SCALE_BOUNDS[0])
            hi.append(MAX_CLEAR_SHARE if _clear(n) else SCALE_BOUNDS[1])
        self.globals = tuple(n for n in names if n != "ks" and not _clear(n))
        self.sky_names = tuple(n for n in names if n == "ks" or _clear(n))
        self.clear_names = tuple(n for n in names if _clear(n))
        for i, seg in enumerate(data.segments):
            names.append(f"air{i}")
            start.append(float(seg.inside_c[0]))
        if kind == "two-node":
            for i, seg in enumerate(data.segments):
                names.append(f"mass{i}")
                start.append(self._mass_guess(seg))
        lo += [START_BOUNDS_C[0]] * (len(names) - len(lo))
        hi += [START_BOUNDS_C[1]] * (len(names) - len(hi))
        self.names = tuple(names)
        self.air_at = len(self.globals) + len(self.sky_names)
        self.mass_at = self.air_at + nseg if kind == "two-node" else None
        self.lo, self.hi = np.array(lo), np.array(hi)
        span = self.hi - self.lo
        self.x0 = np.clip(np.array(start), self.lo + 1e-3 * span, self.hi - 1e-3 * span)
        self.meas = np.concatenate([s.inside_c for s in data.segments])

    def _mass_guess(self, seg) -> float:
        """The floor's temperature that holds the first logged air in balance."""
        h = self.h0[0]
        g = float(self.g0[0, 1])
        q = 0.0
        if seg.heater_on is not None:
            q = float(seg.heater_on[0]) * self.q_ref
        elif seg.heater_w is not None:
            q = float(seg.heater_w[0])
        air = float(seg.inside_c[0])
        m = ((h.sum() + g) * air - h @ seg.boundary_c[0] - q) / g
        return float(np.clip(m, air - 10.0, air + 25.0))

    def values(self, theta: np.ndarray) -> dict[str, float]:
        p = dict(zip(self.names, theta, strict=True))
        q_w = self.rating_w if self.anchor == "heater rating" else p.get("q", 0.0) * self.q_ref
        nseg = len(self.data.segments)
        sky = np.full(nseg, p.get("ks", p.get("k", 1.0)))
        clear = np.array([p.get(f"cs{i}", 1.0) for i in range(nseg)])
        return {
            "k": p.get("k", 1.0),
            "kg": p.get("kg", p.get("k", 1.0)),
            "c": p["c"],
            "g": p.get("g", 1.0),
            "q_w": q_w or 0.0,
            "s": p.get("s", 0.0),
            "sky": sky,
            "clear": clear,
            "ks": float(sky[0]),
        }

    def network(self, v: dict, segment: int) -> solver.Network:
        """The fitted network of one segment: the conduction (outside air, deep ground,
        the air–mass coupling) × k, the coupling × g more, the sky × its factor."""
        h = self.h0 * v["k"]
        h[:, SKY] = self.h0[:, SKY] * v["sky"][segment]
        h[:, GROUND] = self.h0[:, GROUND] * v["kg"]
        return solver.Network(
            self.c0 * v["c"],
            self.g0 * v["k"] * v["g"],
            h,
            self.net0.node_names,
            self.net0.boundary_names,
        )

    def simulate(self, theta: np.ndarray) -> list[np.ndarray]:
        v = self.values(theta)
        out = []
        for i, seg in enumerate(self.data.segments):
            net = self.network(v, i)
            n = net.n_nodes
            x0 = [theta[self.air_at + i]]
            if n == 2:
                x0.append(theta[self.mass_at + i])
            heat = None
            if seg.heater_on is not None:
                heat = seg.heater_on * v["q_w"]
            elif seg.heater_w is not None:
                heat = seg.heater_w
            gains = None
            if v["s"] > 0 and np.any(seg.sun_w):
                gains = np.zeros((seg.times_s.size, n))
                gains[:, 0] = seg.sun_w * v["s"]
            bnd = seg.boundary_c
            if v["clear"][i] != 1.0:  # the night's cloud: the sky that much nearer the air
                bnd = bnd.copy()
                out_c = bnd[:, OUTSIDE]
                bnd[:, SKY] = out_c - v["clear"][i] * (out_c - seg.boundary_c[:, SKY])
            tr = solver.free_float(net, seg.times_s, bnd, np.array(x0), gains, heat)
            out.append(tr.temps_c[0, seg.obs, 0])
        return out

    def residuals(self, theta: np.ndarray) -> np.ndarray:
        return np.concatenate(self.simulate(theta)) - self.meas

    def jacobian(self, theta: np.ndarray) -> np.ndarray:
        """Central differences (the model is smooth in every parameter)."""
        cols = []
        for j in range(theta.size):
            h = 1e-5 * max(1.0, abs(theta[j]))
            up, dn = theta.copy(), theta.copy()
            up[j] = min(theta[j] + h, self.hi[j])
            dn[j] = max(theta[j] - h, self.lo[j])
            cols.append((self.residuals(up) - self.residuals(dn)) / (up[j] - dn[j]))
        return np.column_stack(cols)

    def reported(self, theta: np.ndarray) -> dict[str, float]:
        v = self.values(theta)
        k_out = v["k"] * self.k_out_geom
        k_sky = v["ks"] * self.k_sky_geom
        out = {
            "k_w_per_k": k_out + k_sky + v["kg"] * self.k_ground_geom,
            "c_j_per_k": v["c"] * self.c_geom,
        }
        out["time_constant_h"] = out["c_j_per_k"] / out["k_w_per_k"] / 3600.0
        out["k_outside_w_per_k"] = k_out
        out["k_sky_w_per_k"] = k_sky
        if self.kind == "two-node":
            out["coupling_w_per_k"] = v["k"] * v["g"] * self.coupling_geom
        if self.data.heater == "state":
            out["heater_output_w"] = v["q_w"]
        if self.data.with_days:
            out["sun_factor"] = v["s"]
        return out

    def status(self, name: str) -> str:
        conduction = "fitted" if "k" in self.globals else "anchor"
        if name == "k_outside_w_per_k":
            return conduction
        if name == "k_w_per_k":
            return "fitted" if "k" in self.globals else "derived" if self.sky_names else "anchor"
        if name == "k_sky_w_per_k":
            return "fitted" if self.sky_names else conduction
        if name == "coupling_w_per_k" and "g" not in self.globals:
            return conduction  # scales with the conduction only
        if name == "heater_output_w":
            return "anchor" if self.anchor == "heater rating" else "fitted"
        if name == "time_constant_h":
            return "derived"
        return "fitted"

    def geometry(self, name: str) -> float | None:
        return {
            "k_w_per_k": self.k_geom,
            "k_outside_w_per_k": self.k_out_geom,
            "k_sky_w_per_k": self.k_sky_geom,
            "c_j_per_k": self.c_geom,
            "time_constant_h": self.c_geom / self.k_geom / 3600.0,
            "coupling_w_per_k": self.coupling_geom,
            "heater_output_w": self.rating_w,
            "sun_factor": 1.0,
        }[name]


def _solve(prob: _Problem) -> optimize.OptimizeResult:
    best = None
    # the time constant may be off by a factor of a few: start from the geometry, then
    # from a lighter and a heavier house if the first start ends badly
    for c_start in (1.0, 0.4, 2.5):
        x0 = prob.x0.copy()
        x0[0] = c_start
        res = optimize.least_squares(
            prob.residuals,
            x0,
            bounds=(prob.lo, prob.hi),
            method="trf",
            x_scale="jac",
            xtol=1e-10,
            ftol=1e-12,
            gtol=1e-10,
            max_nfev=100 * x0.size,
        )
        if best is None or res.cost < best.cost * (1 - 1e-9):
            best = res
        if res.success and not _at_bound(prob, res.x):
            break
    return best


def _at_bound(prob: _Problem, x: np.ndarray) -> list[str]:
    span = prob.hi - prob.lo
    near = (x - prob.lo < 1e-6 * span) | (prob.hi - x < 1e-6 * span)
    # a heater, sun or sky factor at 0 is a possible answer (no heat, no sky excess)
    return [
        n
        for n, b in zip(prob.names, near, strict=True)
        if b and n not in ("q", "s", "kg", "ks") and not _clear(n)
    ]


def _physical(name: str) -> str:
    if name.startswith("air"):
        return "time_constant_h"
    if name == "ks" or _clear(name):
        return "k_sky_w_per_k"
    return {
        "c": "c_j_per_k",
        "k": "k_outside_w_per_k",
        "kg": "deep_ground",
        "g": "coupling_w_per_k",
        "q": "heater_output_w",
        "s": "sun_factor",
    }.get(name, "mass")


def _pretty(name: str) -> str:
    if name.startswith("mass"):
        return f"the floor's starting temperature (segment {int(name[4:]) + 1})"
    if name.startswith("air"):
        return f"the air's starting temperature (segment {int(name[3:]) + 1})"
    if _clear(name):
        return f"the clear sky's share (segment {int(name[2:]) + 1})"
    return LABELS[_physical(name)]


def cluster_covariance(
    jac: np.ndarray, residuals: np.ndarray, blocks: list[np.ndarray]
) -> np.ndarray | None:
    """The cluster-robust (sandwich) covariance of the fitted parameters, whole blocks of
    rows (nights) as clusters, or None with fewer than `MIN_BLOCKS` blocks.

    ``(JᵀJ)⁻¹ (Σ_g J_gᵀ r_g r_gᵀ J_g) (JᵀJ)⁻¹ · G/(G − 1) · (n − 1)/(n − p)`` (the
    CR1 small-sample factor), J the Jacobian at the optimum, r_g and J_g the residuals
    and Jacobian rows of block g. It allows any correlation of the errors within a night
    and none between nights. A parameter that belongs to one night only (its starting
    state) has a zero score there at the optimum, so its own sandwich variance is not
    meaningful; the values reported (K, C, …) are functions of the shared parameters.
    """
    g = len(blocks)
    n, p = jac.shape
    if g < MIN_BLOCKS or n <= p:
        return None
    norms = np.linalg.norm(jac, axis=0)
    norms = np.where(norms == 0, 1.0, norms)
    js = jac / norms
    bread = np.linalg.pinv(js.T @ js)
    scores = np.array([js[b].T @ residuals[b] for b in blocks])
    meat = scores.T @ scores * (g / (g - 1)) * ((n - 1) / (n - p))
    return bread @ meat @ bread / np.outer(norms, norms)


def estimate(
    data: FitData,
    kind: str,
    anchor: str,
    *,
    fit_coupling: bool = True,
    sky: str | None = None,
    ground: bool | None = None,
) -> ModelFit:
    """Fit one model (`kind` "lumped" or "two-node") to the prepared record.

    `fit_coupling` False holds the two-node model's air–mass coupling at the geometry's
    (times the conduction factor), for a record too thin to fit it. `sky`: "held" scales
    the sky part with the conduction (the geometry's sky share), "one" fits one factor
    on it for the record, "night" that factor with each segment's share of the clear
    sky's depression (its cloud; not tried where the cloud is logged or there is one
    segment); None (the default) tries each.
    `ground` True fits the lumped model's path to the deep ground with a factor of its
    own, False scales it with the conduction; None (the default, with a heater anchor):
    both, kept by the same rule. Of the variants tried, the one not refused with the
    lowest AIC is returned, else the first (conduction and ground together, one sky).
    """
    skies = ["held", "one", "night"] if sky is None else [sky]
    if data.cloud_given or len(data.segments) < 2:
        skies = [x for x in skies if x != "night"] or ["one"]
    grounds = [False]
    if kind == "lumped" and anchor in ("measured power", "heater rating") and ground is None:
        grounds = [False, True]
    elif ground:
        grounds = [True]
    fits = []
    for free_ground in grounds:
        for mode in skies:
            f = _estimate(data, kind, anchor, fit_coupling, mode, free_ground)
            if f.refusal is not None and kind == "two-node" and fit_coupling:
                # too thin for the coupling: hold it at the geometry's (× the conduction)
                held = _estimate(data, kind, anchor, False, mode, free_ground)
                f = held if held.refusal is None else f
            fits.append(f)
            if "k" not in f.free_names and mode == "held" and f.refusal:
                break  # the held fit is the simplest: if it says nothing, neither do the rest
    good = sorted((f for f in fits if f.refusal is None), key=lambda f: f.n_free)
    if not good:
        return fits[0]
    # the sky apart from the conduction is the base where the record identifies it; the
    # geometry's share (held) only where it does not
    free = [f for f in good if not _sky_held(f)]
    best = (free or good)[0]
    for f in free[1:]:  # a richer variant must earn its parameters
        if f.aic < best.aic - AIC_MARGIN:
            best = f
    near = [f for f in good if f.n_free <= best.n_free and f.aic <= best.aic + AIC_MARGIN]
    # a sky part for each night that follows the record clearly better but cannot pin K
    # down shows what the chosen fit misses (a cloud not logged): its narrow interval
    # would not be honest
    for f in fits:
        if (
            f.refusal is not None
            and f.sky_by_segment is not None
            and f.n_free > best.n_free
            and f.aic < best.aic - AIC_MARGIN
        ):
            return replace(
                best,
                refusal=(
                    "the nights differ more than one sky part allows (a cloud not logged?), "
                    f"and with one for each night {f.refusal}; or give the cloud cover "
                    "(--weather-archive fetches it for the house's [site], or cloud_cover_pct in an "
                    "--outside file)"
                ),
            )
    return _spanning(best, near) if len(near) > 1 else best


def _sky_held(fit: ModelFit) -> bool:
    return "ks" not in fit.free_names


def _clear(name: str) -> bool:
    """A night's share of the clear sky's depression (a nuisance of the sky by night)."""
    return name.startswith("cs")


def _spanning(best: ModelFit, near: list[ModelFit]) -> ModelFit:
    """`best` with each interval widened to span those of the simpler variants the record
    cannot rule out (within `AIC_MARGIN`; the geometry's sky share, the ground with the
    conduction): where the record cannot tell two answers apart, the interval holds both."""
    params = []
    for p in best.parameters:
        if p.status == "anchor":
            params.append(p)
            continue
        lows, highs = [p.low], [p.high]
        for f in near:
            q = f.get(p.name)
            if q is not None and q.status != "anchor":
                lows.append(q.low)
                highs.append(q.high)
        half = max(p.value - min(lows), max(highs) - p.value)
        params.append(replace(p, half_width=float(half)))
    return replace(best, parameters=tuple(params), variants_spanned=len(near))


def _estimate(
    data: FitData,
    kind: str,
    anchor: str,
    fit_coupling: bool,
    sky: str,
    free_ground: bool,
) -> ModelFit:
    """Fit one model (`kind` "lumped" or "two-node") to the prepared record.

    `fit_coupling` False holds the two-node model's air–mass coupling at the geometry's
    (times the factor on every conductance), for a record too thin to fit it.
    """
    prob = _Problem(data, kind, anchor, fit_coupling, sky, free_ground)
    res = _solve(prob)
    theta = res.x.copy()
    # a factor that ends at its lower bound of 0 (no sky excess, no ground path) is 0, not
    # the solver's 1e-25 on the way there
    zero = [i for i, n in enumerate(prob.names) if n in ("ks", "kg") or _clear(n)]
    theta[zero] = np.where(theta[zero] < 1e-9, 0.0, theta[zero])
    r = prob.residuals(theta)
    n, p = r.size, theta.size
    ssr = float(r @ r)
    dof = max(n - p, 1)
    s2 = ssr / dof
    rms = float(np.sqrt(ssr / n))
    jac = prob.jacobian(theta)
    norms = np.linalg.norm(jac, axis=0)
    refusal = None
    if np.any(norms == 0):
        j = int(np.flatnonzero(norms == 0)[0])
        name = prob.names[j]
        refusal = f"the record says nothing about {_pretty(name)}: {ADVICE[_physical(name)]}"
        norms = np.where(norms == 0, 1.0, norms)
    js = jac / norms
    jtj = js.T @ js
    eig = np.linalg.eigvalsh(jtj)
    if refusal is None and eig[0] < MIN_EIGEN_RATIO * eig[-1]:
        refusal = (
            "the record cannot separate the parameters (near-singular fit): " + ADVICE["c_j_per_k"]
        )
    # residuals that run in waves carry less information than their count: widen the
    # covariance by the AR(1) variance inflation (1 + ρ)/(1 − ρ) and take the degrees of
    # freedom from the effective sample size n (1 − ρ)/(1 + ρ)
    sizes = np.cumsum([s.inside_c.size for s in data.segments])[:-1]
    lag1 = sensor.lag1_autocorrelation(np.split(r, sizes))
    rho = min(max(lag1, 0.0), MAX_LAG1) if np.isfinite(lag1) else 0.0
    inflation = (1.0 + rho) / (1.0 - rho)
    dof = max(int(n / inflation) - p, 1)
    cov = np.linalg.pinv(jtj) / np.outer(norms, norms) * s2 * inflation
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    tq = float(special.stdtrit(dof, 0.5 + CONFIDENCE / 2.0))  # Student's t quantile

    rep = prob.reported(theta)
    names = list(rep)
    grad = np.empty((len(names), p))
    for j in range(p):
        h = 1e-6 * max(1.0, abs(theta[j]))
        up, dn = theta.copy(), theta.copy()
        up[j] += h
        dn[j] -= h
        ru, rd = prob.reported(up), prob.reported(dn)
        grad[:, j] = [(ru[k] - rd[k]) / (2 * h) for k in names]
    var = np.einsum("ij,jk,ik->i", grad, cov, grad)
    half = tq * np.sqrt(np.clip(var, 0.0, None))
    # whole nights as blocks: the cluster-robust (sandwich) covariance, Student's t on
    # G − 1 degrees of freedom; each value keeps the wider of the two intervals
    seg_rows = np.split(np.arange(n), sizes)
    blocks = cluster_covariance(jac, r, seg_rows)
    by_nights = np.zeros(len(names), dtype=bool)
    if blocks is not None:
        t_blocks = float(special.stdtrit(len(seg_rows) - 1, 0.5 + CONFIDENCE / 2.0))
        half_blocks = t_blocks * np.sqrt(
            np.clip(np.einsum("ij,jk,ik->i", grad, blocks, grad), 0.0, None)
        )
        by_nights = half_blocks > half
        half = np.maximum(half, half_blocks)
    params = tuple(
        Parameter(
            name=k,
            value=float(rep[k]),
            half_width=0.0 if prob.status(k) == "anchor" else float(half[i]),
            geometry=prob.geometry(k),
            status=prob.status(k),
        )
        for i, k in enumerate(names)
    )
    wider = tuple(k for i, k in enumerate(names) if by_nights[i] and prob.status(k) != "anchor")

    if refusal is None:
        off = np.abs(np.nan_to_num(corr - np.eye(p)))
        # night-by-night sky factors are nuisances: they may trade off with each other
        # and the rest; what they leave of K and C is judged by its interval below
        nuisance = [i for i, nm in enumerate(prob.names) if _clear(nm)]
        off[nuisance, :] = 0.0
        off[:, nuisance] = 0.0
        i, j = np.unravel_index(int(np.argmax(off)), off.shape) if p > 1 else (0, 0)
        if p > 1 and off[i, j] > MAX_CORRELATION:
            a, b = prob.names[i], prob.names[j]
            worst = b if a == "c" else a
            refusal = (
                f"{_pretty(a)} and {_pretty(b)} cannot be told apart (correlation "
                f"{corr[i, j]:+.3f}): {ADVICE[_physical(worst)]}"
            )
    if refusal is None:
        for prm in params:
            # the sky part may be near zero (glass, cloud): it is judged by its effect on K
            if prm.name == "k_sky_w_per_k":
                continue
            if prm.status != "anchor" and prm.relative > MAX_RELATIVE_CI:
                refusal = (
                    f"{prm.label} is not pinned down by the record (95 % interval ±"
                    f"{prm.relative:.0%}): {ADVICE[prm.name]}"
                )
                break
    if refusal is None and kind == "two-node":
        for i in range(len(data.segments)):
            j = prob.mass_at + i
            if tq * sd[j] > 5.0:
                refusal = (
                    f"{_pretty(prob.names[j])} is not pinned down (±{tq * sd[j]:.0f} K): "
                    + ADVICE["mass"]
                )
                break
    if refusal is None:
        edge = _at_bound(prob, theta)
        if edge:
            refusal = (
                f"the fit runs to the edge of the allowed range ({_pretty(edge[0])}): the "
                "record does not look like this house; check the sensors and the house file"
            )
    if refusal is None and rms > MAX_RMS_K:
        refusal = (
            f"the model misses the record by {rms:.1f} K RMS (more than {MAX_RMS_K:g} K): were "
            "the vents open, was there heat that is not logged (a heater without its state, "
            "the sun), or did the outside sensor sit in the sun?"
        )

    sims = prob.simulate(theta)
    rec = data.record
    segs = []
    for i, (seg, y) in enumerate(zip(data.segments, sims, strict=True)):
        d = y - seg.inside_c
        mass = mass_hw = None
        if kind == "two-node":
            j = prob.mass_at + i
            mass, mass_hw = float(theta[j]), float(tq * sd[j])
        segs.append(
            SegmentFit(
                start=rec.local(int(seg.rows[0])),
                end=rec.local(int(seg.rows[-1])),
                n_rows=int(seg.rows.size),
                first_line=int(rec.lines[seg.rows[0]]),
                last_line=int(rec.lines[seg.rows[-1]]),
                heated=seg.heated,
                initial_air_c=float(theta[prob.air_at + i]),
                initial_air_half_width=float(tq * sd[prob.air_at + i]),
                initial_mass_c=mass,
                initial_mass_half_width=mass_hw,
                rms_k=float(np.sqrt(np.mean(d**2))),
            )
        )
    v = prob.values(theta)
    scales = {"k_scale": v["k"], "sky_scale": v["ks"], "c_scale": v["c"]}
    if kind == "two-node":
        scales["coupling_scale"] = v["g"]
    return ModelFit(
        model=kind,
        anchor=anchor,
        parameters=params,
        rms_k=rms,
        n_residuals=n,
        n_free=p,
        aic=float(n * np.log(ssr / n) + 2 * p) if ssr > 0 else -np.inf,
        free_names=prob.names,
        correlation=corr,
        segments=tuple(segs),
        fitted_c=tuple(sims),
        scales=scales,
        refusal=refusal,
        residual_lag1=lag1,
        sky_by_segment=tuple(float(x) for x in v["sky"] * v["clear"]) if prob.clear_names else None,
        widened_by_nights=wider,
    )
