"""The thermostat run: its inputs, its results, and the one mode machine over them.

`Run` holds the run's inputs and the arrays the results are written into. Each member
goes through the mode machine on its own: `serial` strides over runs of whole steps in
one mode, and `scalar` splits the steps in which the mode changes at the exact switching
instants. Members are independent (a thermostat acts on its own house), so an ensemble is
the same machine once per member.
"""

from __future__ import annotations

import numpy as np

from .modes import HOLD, TOL_K, VENT
from .problem import Problem
from .results import ControlInputs, Switches, Trajectory, no_switches
from .scalar import EventLog, ScalarStep
from .serial import SerialRun


class Run:
    """One thermostat run: runs of whole steps in one mode as a linear recurrence, and the
    steps where a mode changes split at the exact switching instants."""

    def __init__(self, prob: Problem, ctl: ControlInputs) -> None:
        net = prob.network
        self.p, self.ctl = prob, ctl
        self.net = net
        mm, nt, n, m = prob.n_members, prob.times_s.size, net.n_nodes, net.n_boundaries
        self.f, self.r = net.modes, net.held_modes
        self.v0, self.bq, self.bc = self.f.v[0], self.f.bm[:, m], self.r.bm[:, m]
        self.wq, self.gsum = net.held_power_weights, net.held_power_sum_w_per_k
        self.c0 = float(net.capacitance_j_per_k[0])
        self.tolq = TOL_K * self.gsum
        self.clamp = {HOLD: ctl.setpoint_c, VENT: ctl.vent_c}
        self.q = np.broadcast_to(ctl.q_max_w, (mm,))
        self.temps = np.empty((mm, nt, n))
        self.heat_w = np.zeros((mm, nt))
        self.vent_w = np.zeros((mm, nt))
        self.step_heat = np.zeros((mm, nt - 1))
        self.step_vent = np.zeros((mm, nt - 1))
        self.tint = np.zeros((mm, nt - 1, n))
        self.mode = np.zeros((mm, nt - 1), dtype=np.int8)
        self.scalar_events = EventLog()
        self.scalar = ScalarStep(self)

    def run(self) -> Trajectory:
        """The whole run, one member at a time (`serial`, splitting with `scalar`)."""
        p = self.p
        self.temps[:, 0] = np.broadcast_to(p.initial_c, (p.n_members, self.net.n_nodes))
        for i in range(p.n_members):
            SerialRun(self, i).run()
        return self._trajectory()

    def _trajectory(self) -> Trajectory:
        p = self.p
        n = self.net.n_nodes
        ev = self.scalar_events
        if ev.member:
            mem, stp = np.array(ev.member, dtype=int), np.array(ev.step, dtype=int)
            off, mode = np.array(ev.offset_s, dtype=float), np.array(ev.mode, dtype=np.int8)
            st = np.array(ev.state_c, dtype=float).reshape(-1, n)
            o = np.lexsort((off, stp, mem))
            sw = Switches(mem[o], stp[o], off[o], p.times_s[stp[o]] + off[o], mode[o], st[o])
        else:
            sw = no_switches(n)
        return Trajectory(
            p.times_s,
            self.temps,
            self.heat_w,
            self.vent_w,
            self.step_heat.sum(axis=1),
            self.step_vent.sum(axis=1),
            self.step_heat,
            self.step_vent,
            self.tint,
            self.mode,
            sw,
            self.net,
            p,
            self.ctl,
        )
