"""The event loop: integrate the network between switching events, find each event exactly, restart.

Between events the fan state is fixed and the network is a smooth ODE system, integrated with
scipy's ``solve_ivp`` (LSODA, tight tolerances). The controller's next switching condition is an
event function on the sensor temperature; ``solve_ivp`` locates its root on the dense output, the
loop records the event, toggles the state and restarts from the event's state. No fixed-step
chattering: the fan switches only at located crossings.

Air flows are quasi-steady: the loop asks the network's airflow model for them at the start of every
segment (each ``airflow.update_interval`` and after every switch) and holds them over the segment.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from atticsim.hybrid.threads import one_blas_thread
from atticsim.network.model import BOOKS, FORCING_BASE

#: Forcing channels the loop reads for the airflow.
_PRESSURE, _T_ROOM = FORCING_BASE.index("pressure"), FORCING_BASE.index("temp_room")


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
    air : list
        The airflow state held at each output instant.
    events : list of (float, bool, float)
        (time [s], new fan state, sensor temperature [degC]) for every switch.
    y_end : numpy.ndarray
        State at the end of the period.
    n_rhs : int
        Right-hand-side evaluations (cost figure).
    air_updates : list
        (time [s], AirflowState) at every airflow solve.
    air_runs : tuple or None
        (row starts, states): where each run of one held state begins in ``air`` (int array, read-only)
        and its state, when the solver records them (the compiled switch loop); None otherwise.
    """

    t: np.ndarray
    y: np.ndarray
    fan: np.ndarray
    air: list
    events: list
    y_end: np.ndarray
    n_rhs: int
    air_updates: list
    air_runs: tuple | None = None


@one_blas_thread
def integrate(network, forcing, controller, t_start, t_end, y0, fan_on, output_times,
              rtol=1e-6, max_step=300.0) -> HybridRun:
    """Integrate the hybrid system from t_start to t_end.

    Parameters
    ----------
    network : AtticNetwork
        The thermal network: ``rate(x, u, fan_on, air)`` gives the node and book rates at one state, its
        ``airflow`` model (None for none) the held air flows, ``air_vector(state)`` their form for ``rate``.
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
        Increasing instants in [t_start, t_end] at which to report the state [s]; must include t_end.
    rtol : float
        Relative tolerance of the integrator.
    max_step : float
        Largest integrator step [s]; bounds how fast a crossing-and-recrossing could hide.
    """
    n_nodes = network.n_nodes
    i_sensor = network.index["sensor"]
    airflow = getattr(network, "airflow", None)
    update = airflow.update_interval if airflow is not None else math.inf
    # Absolute tolerances: 1e-5 K on temperatures, 1e-2 J on the books (their scale is MJ).
    atol = np.concatenate([np.full(n_nodes, 1e-5), np.full(len(BOOKS), 1e-2)])
    calls = [0]
    state = {"fan": fan_on, "air": None}

    def rhs(t, y):
        calls[0] += 1
        return network.rate(y[:n_nodes], forcing.at(t), state["fan"], state["air"])

    ts, ys, fans, airs, events, updates = [], [], [], [], [], []
    t, y, k = float(t_start), np.asarray(y0, dtype=float), 0
    while t < t_end:
        if airflow is not None:
            f = forcing.at(t)
            network.air = airflow.solve(float(network.mean_air(y)), f[0], f[2], state["fan"], with_depressurisation=True,
                                        pressure=f[_PRESSURE], temp_room=f[_T_ROOM])
            state["air"] = network.air_vector(network.air)
            updates.append((t, network.air))
        seg_end = min(t_end, (math.floor(t / update) + 1) * update) if math.isfinite(update) else t_end
        evs = None
        if controller is not None:
            level, direction = controller.next_switch(state["fan"])

            def crossing(tt, yy, level=level):
                return yy[i_sensor] - level

            crossing.terminal = True
            crossing.direction = direction
            evs = [crossing]
        outs = output_times[k:]
        outs = outs[outs < seg_end]
        t_eval = np.append(outs, seg_end)
        sol = solve_ivp(rhs, (t, seg_end), y, method="LSODA", t_eval=t_eval, events=evs, rtol=rtol,
                        atol=atol, max_step=max_step)
        if sol.status < 0:
            raise RuntimeError(f"integration failed at t = {t:.1f} s: {sol.message}")
        sol_t = np.asarray(sol.t, dtype=float)
        sol_y = np.asarray(sol.y, dtype=float).reshape(len(y), -1)
        if sol.status == 1:  # an event ended the segment before seg_end
            keep = sol_t < seg_end
            t_next = float(sol.t_events[0][0])
            y_next = sol.y_events[0][0].copy()
        else:
            y_next, t_next = sol_y[:, -1].copy(), seg_end
            # seg_end is reported only if it is an output instant
            is_output = k + outs.size < output_times.size and output_times[k + outs.size] == seg_end
            keep = np.ones(sol_t.size, bool)
            keep[-1] = is_output
        if keep.any():
            ts.append(sol_t[keep])
            ys.append(sol_y[:, keep])
            fans.append(np.full(int(keep.sum()), state["fan"]))
            airs.extend([getattr(network, "air", None)] * int(keep.sum()))
            k += int(keep.sum())
        if sol.status == 1:
            state["fan"] = not state["fan"]
            events.append((t_next, state["fan"], float(y_next[i_sensor])))
        t, y = t_next, y_next
    return HybridRun(
        t=np.concatenate(ts) if ts else np.empty(0),
        y=np.hstack(ys) if ys else np.empty((len(y0), 0)),
        fan=np.concatenate(fans) if fans else np.empty(0, bool),
        air=airs, events=events, y_end=y, n_rhs=calls[0], air_updates=updates)
