"""The result dataclasses: trajectories, switches, crossings, held power."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .network import Network
from .problem import Problem
from .segments import Segments


@dataclass(frozen=True, eq=False)
class Switches:
    """Mode changes of a thermostat run, in time order per member (E events).

    ``mode`` is the mode entered, ``state_c`` the node temperatures just after; an event
    at ``offset_s == 0`` with a changed state is a jump (see the module notes).
    """

    member: np.ndarray  # (E,) int
    step: np.ndarray  # (E,) int, index of the step the event lies in
    offset_s: np.ndarray  # (E,) [s] from the start of that step
    time_s: np.ndarray  # (E,) [s]
    mode: np.ndarray  # (E,) int8
    state_c: np.ndarray  # (E, n) [degC]


@dataclass(frozen=True, eq=False)
class ControlInputs:
    """The thermostat's inputs per step, member axis first (size 1 or M)."""

    setpoint_c: np.ndarray  # (Ms, N)
    vent_c: np.ndarray  # (Mv, N), +inf where no venting
    q_max_w: np.ndarray  # (Mq,)


@dataclass(frozen=True, eq=False)
class Trajectory:
    """The exact solution on the time grid, member axis first (M = 1 without an ensemble).

    Attributes
    ----------
    times_s : (N,) [s]
    temps_c : (M, N, n) node temperatures [degC] (left limits at a jump)
    heat_w : (M, N) heater output at the grid points [W] (a prescribed heater series for
        `free_float`; for `thermostat` the output just after each grid time, at the last
        point just before it)
    vent_w : (M, N) heat removed by venting at the grid points [W]
    heat_j, vent_j : (M,) exact totals over the run [J], jumps included
    step_heat_j, step_vent_j : (M, N-1) exact totals per step [J]
    temp_integral_c_s : (M, N-1, n) exact integral of each node temperature over each
        step [degC s]; with the boundary series it gives the exact conductive losses
    mode : (M, N-1) int8 mode at the start of each step (`FLOAT` for `free_float`)
    switches : `Switches` inside steps (empty for `free_float`)
    network : the `Network`

    The remaining fields (``grid_c``, ``problem``, ``control``, ``tint``, ``modal_z``,
    ``segments``) hold the validated inputs and intermediate results that `analyse` needs
    to re-evaluate the exact solution inside the steps; they are not part of the
    interface. A free float of many members stored at its knots (`segments.Segments`)
    computes ``temps_c`` on first use. The arrays a free float holds at zero
    (``vent_w``, ``step_vent_j``, ``mode``, and ``heat_w``, ``step_heat_j`` without a
    prescribed heater) are read-only views of a single zero.
    """

    times_s: np.ndarray
    grid_c: np.ndarray | None = field(repr=False)
    heat_w: np.ndarray
    vent_w: np.ndarray
    heat_j: np.ndarray
    vent_j: np.ndarray
    step_heat_j: np.ndarray
    step_vent_j: np.ndarray
    tint: np.ndarray | None = field(repr=False)
    mode: np.ndarray
    switches: Switches
    network: Network
    problem: Problem = field(repr=False)
    control: ControlInputs | None = field(repr=False, default=None)
    modal_z: np.ndarray | None = field(repr=False, default=None)  # free float: (r, M, N)
    segments: Segments | None = field(repr=False, default=None)

    @property
    def temps_c(self) -> np.ndarray:
        """(M, N, n) node temperatures [degC] at the grid times (left limits at a jump)."""
        if self.grid_c is None:
            object.__setattr__(self, "grid_c", self.segments.temps_c)  # type: ignore[union-attr]
        return self.grid_c  # type: ignore[return-value]

    def modal(self) -> np.ndarray:
        """(r, M, N) modal state of a free float at the grid times."""
        if self.modal_z is None and self.segments is not None:
            return self.segments.modal
        return self.modal_z  # type: ignore[return-value]

    @property
    def temp_integral_c_s(self) -> np.ndarray:
        """(M, N-1, n) exact integral of each node temperature over each step [degC s]."""
        if self.tint is None:
            p, full = self.problem, self.network.modes
            z, t = self.modal(), p.full  # z: (r, M, N)
            bt = p.bt if self.segments is None else self.segments.forcing
            iz = (
                t.f1.T[:, None] * z[:, :, :-1]
                + t.i2.T[:, None] * bt[:, :, :-1]
                + t.i3.T[:, None] * np.diff(bt, axis=2)
            )  # type: ignore[index]
            object.__setattr__(
                self, "tint", np.moveaxis(np.tensordot(full.v, iz, axes=([1], [0])), 0, -1)
            )
        return self.tint  # type: ignore[return-value]

    @property
    def air_c(self) -> np.ndarray:
        """(M, N) air node temperature [degC]."""
        return self.temps_c[:, :, 0]

    @property
    def n_members(self) -> int:
        return self.heat_w.shape[0]


@dataclass(frozen=True, eq=False)
class Crossing:
    """Plant temperature against a threshold, per member, on the exact solution.

    Attributes
    ----------
    threshold_c : (M,) [degC]
    time_s : (M,) first time the plant temperature reaches the threshold [s]; NaN if it
        never does; the first grid time if it starts at or below
    min_c, min_time_s : (M,) lowest plant temperature [degC] and when [s]
    hours_below : (M,) time spent strictly below the threshold [h]
    """

    threshold_c: np.ndarray
    time_s: np.ndarray
    min_c: np.ndarray
    min_time_s: np.ndarray
    hours_below: np.ndarray

    @property
    def crossed(self) -> np.ndarray:
        """(M,) bool: the threshold is reached."""
        return ~np.isnan(self.time_s)


@dataclass(frozen=True, eq=False)
class HoldResult:
    """Heat that holds the air at a setpoint (clipped at 0: above it the house floats).

    Attributes
    ----------
    times_s : (N,) [s]
    power_w : (M, N) heater output at the grid points [W]
    peak_w, peak_time_s : (M,) highest output on the exact solution [W], and when [s]
    energy_j : (M,) exact heat over the run [J] (an initial air temperature below the
        setpoint is lifted at once; that heat is included)
    step_energy_j : (M, N-1) [J]
    temps_c : (M, N, n) [degC]
    trajectory : the full `Trajectory`
    """

    times_s: np.ndarray
    power_w: np.ndarray
    peak_w: np.ndarray
    peak_time_s: np.ndarray
    energy_j: np.ndarray
    step_energy_j: np.ndarray
    temps_c: np.ndarray
    trajectory: Trajectory


def no_switches(n: int) -> Switches:
    e = np.zeros(0)
    return Switches(e.astype(int), e.astype(int), e, e, e.astype(np.int8), np.zeros((0, n)))
