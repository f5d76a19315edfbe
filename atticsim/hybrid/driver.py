"""The one hybrid simulation loop: it owns the airflow updates, the thermostat's events, the event records,
the output rows and the run's result; a stepper only advances the network.

Between events the fan state and the held air flows are fixed and the network is a smooth ODE system. The
loop asks the controller which sensor crossing and which instant end the present stretch, the airflow
model for the flows to hold (every ``airflow.update_interval`` and at every fan switch: quasi-steady
coupling, common practice in multizone building simulation), and the stepper to advance to the earliest of
those, writing the output rows on the way. At a crossing or a timer's instant it tells the controller, which
may switch the fan; a switch is recorded with its exact time, the sensor's temperature and its cause.

A stepper (:class:`atticsim.hybrid.compiled.CompiledStepper`, the default; :class:`atticsim.hybrid.reference.
ReferenceStepper`, LSODA) implements::

    advance(t, t_stop, y, fan, air, level, direction, after_switch, k) -> (crossed, t, k)

advancing the state ``y`` (nodes then books, in place) from t to t_stop, or to the first instant the sensor
crosses ``level`` in ``direction`` (+1 rising, -1 falling, 0 none), writing the output rows it passes (from
row k on) into its ``out_y``; ``after_switch`` says the fan has just switched. A stepper that cannot go on
raises :class:`StepperFailed`; the loop then continues with the reference stepper and notes it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from atticsim.hybrid.controller import HeldFan
from atticsim.airflow.motor import Motor
from atticsim.hybrid.stepper import StepperFailed
from atticsim.network.kernel import BOOKS, FORCING_BASE

#: Forcing channels the loop reads for the airflow.
_T_OUT, _WIND, _PRESSURE, _T_ROOM = (FORCING_BASE.index(c) for c in ("temp_out", "wind_speed", "pressure",
                                                                      "temp_room"))


@dataclass
class HybridRun:
    """Raw result of one hybrid integration.

    Attributes
    ----------
    t : numpy.ndarray
        Output instants [s from the forcing's first sample].
    y : numpy.ndarray
        States at the output instants, shape (n_nodes + books, len(t)).
    fan : numpy.ndarray of bool
        Fan state holding at each output instant.
    events : list of (float, bool, float, str)
        (time [s], new fan state, sensor temperature [degC], cause) for every switch; the cause is
        "threshold" or the time rule that held the fan until then.
    y_end : numpy.ndarray
        State at the end of the period.
    n_rhs : int
        Right-hand-side evaluations (cost figure).
    air_updates : list
        (time [s], AirflowState) at every airflow solve.
    air_runs : tuple
        (row starts, states): where each run of one held state begins among the output rows (int array,
        read-only), and its state.
    notes : list of str
        What the loop decided (a hand-over to the reference stepper).
    """

    t: np.ndarray
    y: np.ndarray
    fan: np.ndarray
    events: list
    y_end: np.ndarray
    n_rhs: int
    air_updates: list
    air_runs: tuple
    notes: list = field(default_factory=list)

    @property
    def air(self) -> list:
        """The airflow state held at each output row (a list built from :attr:`air_runs`)."""
        starts, states = self.air_runs
        ends = list(starts[1:]) + [self.t.size]
        rows = []
        for a, b, s in zip(starts, ends, states):
            rows.extend([s] * int(b - a))
        return rows


class _Rows:
    """The output rows' fan states and held airflow states, recorded as the loop passes them."""

    def __init__(self, n):
        self.fan = np.zeros(n, dtype=bool)
        self.starts, self.states = [], []

    def hold(self, k0, k1, fan, state):
        if k1 <= k0:
            return
        self.fan[k0:k1] = fan
        if not self.states or self.states[-1] is not state:
            self.starts.append(k0)
            self.states.append(state)

    def runs(self):
        starts = np.array(self.starts, dtype=np.int64)
        starts.setflags(write=False)
        return starts, self.states


def _solve_air(network, airflow, forcing, y, t, fan, speed):
    """The air flows to hold from t: the airflow model at the present attic air, weather and fan, with the
    blades at ``speed`` (fraction of full)."""
    u = forcing.at(t)
    t_attic = float(network.mean_air(y)) if airflow.kind != "simple" else math.nan
    return airflow.solve(t_attic, u[_T_OUT], u[_WIND], fan, with_depressurisation=True, pressure=u[_PRESSURE],
                         temp_room=u[_T_ROOM], speed=speed)


class RunCancelled(Exception):
    """A run ended early because its ``cancel`` event was set (:func:`simulate_hybrid`)."""


def simulate_hybrid(network, forcing, controller, t_start, t_end, y0, output_times, stepper,
                    fallback=None, progress=None, cancel=None) -> HybridRun:
    """Integrate the hybrid system from t_start to t_end.

    Parameters
    ----------
    network : AtticNetwork
        The thermal network; its ``airflow`` model gives the held air flows (a network without one, as in the
        tests' small linear networks, holds none), its ``rate`` the rates the steppers integrate.
    forcing : Forcing
    controller : Controller, HeldFan or None
        None holds the fan off for the whole run (no events).
    t_start, t_end : float
        Period [s from the forcing's first sample].
    y0 : numpy.ndarray
        Initial node temperatures [degC] and books [J].
    output_times : numpy.ndarray
        Increasing instants in [t_start, t_end] at which to report the state [s]; must include t_end.
    stepper : object
        The stepper, made for these outputs (see the module docstring): its ``out_y`` receives the rows.
    fallback : callable, optional
        ``fallback(out_y)`` makes the stepper that takes over (writing into the same rows) if ``stepper``
        fails.
    progress : callable, optional
        ``progress(fraction)`` is called with the share of the period done [0-1] at most about every simulated
        day (for a progress bar).
    cancel : threading.Event, optional
        Set by another thread to end the run at its next step (:class:`RunCancelled` is raised): a run in a
        thread of its own ends before the process does, never inside compiled code while Python shuts down.
    """
    airflow = getattr(network, "airflow", None)  # None: no air flows (a bare network)
    update = airflow.update_interval if airflow is not None else math.inf
    motor = airflow.motor() if airflow is not None else Motor()
    i_sensor = network.index["sensor"]
    i_fan_book = network.n_nodes + BOOKS.index("fan_electric") if motor.start_energy > 0.0 else -1
    controller = controller if controller is not None else HeldFan(False)
    y = np.asarray(y0, dtype=float).copy()
    rows = _Rows(output_times.size)
    events, updates, notes = [], [], []
    t, k = float(t_start), 0
    fan = controller.start(t, y[i_sensor])
    motor.start(t, fan)
    next_air = t if airflow is not None else math.inf
    motor_change = math.inf  # the next instant the motor's speed changes the held flows
    after_switch, calls = False, 0
    state = air = None
    span = max(t_end - t_start, 1e-9)
    reported = t
    while t < t_end - 1e-9:
        if cancel is not None and cancel.is_set():
            raise RunCancelled(f"cancelled at t = {t:.0f} s")
        if airflow is not None and t >= min(next_air, motor_change) - 1e-9:
            next_air = (math.floor(t / update + 1e-9) + 1) * update if math.isfinite(update) else math.inf
            motor_change = motor.next_change(t)
            state = _solve_air(network, airflow, forcing, y, t, fan,
                               motor.mean_speed(t, min(next_air, motor_change, t_end)))
            updates.append((t, state))
            air = network.air_vector(state)
        level, direction = controller.watch()
        deadline = controller.deadline()
        stop = min(t_end, next_air, deadline, motor_change)
        k0 = k
        try:
            crossed, t, k = stepper.advance(t, stop, y, fan, air, level, direction, after_switch, k)
        except StepperFailed as exc:
            if fallback is None:
                raise
            t, k = exc.t, exc.k
            rows.hold(k0, k, fan, state)
            calls += stepper.n_rhs
            replacement = fallback(stepper.out_y)
            notes.append(f"the {stepper.name} solver stopped at t = {t:.0f} s ({exc}); the {replacement.name} "
                         f"solver went on from there")
            stepper, fallback = replacement, None
            continue
        rows.hold(k0, k, fan, state)
        if progress is not None and t - reported >= 86400.0:
            progress((t - t_start) / span)
            reported = t
        after_switch = False
        cause = None
        if crossed:
            cause = controller.crossed(t)
        elif t >= deadline - 1e-9:
            cause = controller.expired(t)
        if cause is not None:
            fan = controller.fan
            events.append((t, fan, float(y[i_sensor]), cause))
            motor.switch(t, fan)
            if fan and i_fan_book >= 0:
                y[i_fan_book] += motor.start_energy  # the start's inrush, beyond the running power
            next_air = t if airflow is not None else math.inf  # the flows follow the new fan state at once
            after_switch = True
    if k < output_times.size and abs(output_times[k] - t) < 1e-6:
        stepper.write_row(k, y)
        rows.hold(k, k + 1, fan, state)
        k += 1
    calls += stepper.n_rhs
    out_y = stepper.out_y
    return HybridRun(t=output_times[:k].copy(), y=out_y if k == output_times.size else out_y[:, :k].copy(),
                     fan=rows.fan[:k], events=events, y_end=y, n_rhs=calls, air_updates=updates,
                     air_runs=rows.runs(), notes=notes)
