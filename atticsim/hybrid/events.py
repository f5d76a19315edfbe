"""The event loop: integrate the network between switching events, find each event exactly, restart.

Between events the fan state is fixed and the network is a smooth ODE system, integrated with
scipy's ``solve_ivp`` (LSODA, tight tolerances). The controller's next switching condition is an
event function on the sensor temperature; ``solve_ivp`` locates its root on the dense output, the
loop records the event, toggles the state and restarts from the event's state. No fixed-step
chattering: the fan switches only at located crossings.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from atticsim.network.model import BOOKS


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
    events : list of (float, bool, float)
        (time [s], new fan state, sensor temperature [degC]) for every switch.
    y_end : numpy.ndarray
        State at the end of the period.
    n_rhs : int
        Right-hand-side evaluations (cost figure).
    """

    t: np.ndarray
    y: np.ndarray
    fan: np.ndarray
    events: list
    y_end: np.ndarray
    n_rhs: int


def integrate(network, forcing, controller, t_start, t_end, y0, fan_on, output_times,
              rtol=1e-6, max_step=300.0) -> HybridRun:
    """Integrate the hybrid system from t_start to t_end.

    Parameters
    ----------
    network : AtticNetwork
        The thermal network.
    forcing : Forcing
        Forcing channels.
    controller : HysteresisController or None
        None holds the fan in its initial state for the whole run (no events).
    t_start, t_end : float
        Period [s from the forcing's first sample].
    y0 : numpy.ndarray
        Initial node temperatures [degC] and books [J].
    fan_on : bool
        Fan state at t_start.
    output_times : numpy.ndarray
        Increasing instants in [t_start, t_end] at which to report the state [s].
    rtol : float
        Relative tolerance of the integrator.
    max_step : float
        Largest integrator step [s]; bounds how fast a crossing-and-recrossing could hide.
    """
    n_nodes = network.n_nodes
    i_sensor = network.index["sensor"]
    # Absolute tolerances: 1e-5 K on temperatures, 1e-2 J on the books (their scale is MJ).
    atol = np.concatenate([np.full(n_nodes, 1e-5), np.full(len(BOOKS), 1e-2)])
    calls = [0]
    state = {"fan": fan_on}

    def rhs(t, y):
        calls[0] += 1
        f = forcing.at(t)
        return network.derivatives(y[:n_nodes, None], f[:, None], state["fan"])[:, 0]

    ts, ys, fans, events = [], [], [], []
    t, y, k = float(t_start), np.asarray(y0, dtype=float), 0
    while t < t_end:
        evs = None
        if controller is not None:
            level, direction = controller.next_switch(state["fan"])

            def crossing(tt, yy, level=level):
                return yy[i_sensor] - level

            crossing.terminal = True
            crossing.direction = direction
            evs = [crossing]
        t_eval = output_times[k:]
        sol = solve_ivp(rhs, (t, t_end), y, method="LSODA", t_eval=t_eval, events=evs, rtol=rtol,
                        atol=atol, max_step=max_step)
        if sol.status < 0:
            raise RuntimeError(f"integration failed at t = {t:.1f} s: {sol.message}")
        sol_t = np.asarray(sol.t, dtype=float)
        sol_y = np.asarray(sol.y, dtype=float).reshape(len(y), -1)
        if sol_t.size:
            ts.append(sol_t)
            ys.append(sol_y)
            fans.append(np.full(sol_t.size, state["fan"]))
            k += sol_t.size
        if sol.status == 1:  # an event ended the segment
            t_ev = float(sol.t_events[0][0])
            y = sol.y_events[0][0].copy()
            state["fan"] = not state["fan"]
            events.append((t_ev, state["fan"], float(y[i_sensor])))
            t = t_ev
        else:
            if not (sol_t.size and sol_t[-1] == t_end):
                raise RuntimeError("internal: t_end must be one of the output times")
            y = sol_y[:, -1].copy()
            t = t_end
    return HybridRun(
        t=np.concatenate(ts) if ts else np.empty(0),
        y=np.hstack(ys) if ys else np.empty((len(y0), 0)),
        fan=np.concatenate(fans) if fans else np.empty(0, bool),
        events=events, y_end=y, n_rhs=calls[0])
