"""`grower fit`: the house's conductance K and heat capacity C from a logger record.

Geometry and handbook U-values give K and C to perhaps ±30 %; a temperature record of a
few nights pins them down. The pieces:

* `grower.fit.data` — usable rows (nights by default), segments, the boundary;
* `grower.fit.estimate` — least squares on the exact stepped model, linearised
  confidence intervals, identifiability checks, what temperatures alone can tell;
* `grower.fit.plan` — which model and anchor, the `FitResult`;
* `grower.fit.calibration` — the house file's ``[calibration]`` table, written in place
  (comments kept, atomic, with a backup).

The record itself is read by `grower.logger`.
"""

from grower.fit.calibration import KEYS, calibration_values, write_calibration
from grower.fit.data import FitData, Segment, prepare
from grower.fit.estimate import estimate
from grower.fit.plan import ANCHORS, MODELS, FitResult, fit_house, resolve_anchor
from grower.fit.results import ModelFit, Parameter, SegmentFit

__all__ = [
    "ANCHORS",
    "KEYS",
    "MODELS",
    "FitData",
    "FitResult",
    "ModelFit",
    "Parameter",
    "Segment",
    "SegmentFit",
    "calibration_values",
    "estimate",
    "fit_house",
    "prepare",
    "resolve_anchor",
    "write_calibration",
]
