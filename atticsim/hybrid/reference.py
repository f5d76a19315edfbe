"""The reference stepper: scipy's LSODA with an event function, the accuracy standard.

Between events the fan state and the held air flows are fixed and the network is a smooth ODE system,
integrated with ``solve_ivp`` (LSODA, tight tolerances) from the driver's present instant to its next stop; the
switching condition is a terminal event function on the sensor temperature, whose root ``solve_ivp`` locates
on its dense output. The hybrid driver (:mod:`atticsim.hybrid.driver`) owns everything else.

Its steps are taken one at a time in the process (:func:`atticsim.hybrid.threads.one_blas_thread`), which also
keeps scipy's LSODA, written for one caller at a time, from being entered by two threads.
"""

from __future__ import annotations

import numpy as np
from scipy.integrate import solve_ivp

from atticsim.hybrid.stepper import StepperFailed
from atticsim.hybrid.threads import one_blas_thread
from atticsim.network.kernel import BOOKS


class ReferenceStepper:
    """LSODA from stop to stop (see :mod:`atticsim.hybrid.driver` for the interface).

    Parameters
    ----------
    network, forcing : AtticNetwork, Forcing
    output_times : numpy.ndarray
        Increasing output instants [s] (any spacing).
    out_y : numpy.ndarray
        (n_nodes + books, len(output_times)): receives the output rows.
    rtol : float
        Relative tolerance (absolute: 1e-5 K on temperatures, 1e-2 J on the books, whose scale is MJ).
    max_step : float
        Largest integrator step [s]; bounds how fast a crossing-and-recrossing could hide.
    """

    name = "reference"

    def __init__(self, network, forcing, output_times, out_y, rtol=1e-6, max_step=300.0):
        self.network, self.forcing = network, forcing
        self.out_t, self.out_y = np.asarray(output_times, dtype=float), out_y
        self.rtol, self.max_step = rtol, max_step
        self.n_nodes = network.n_nodes
        self.i_sensor = network.index["sensor"]
        self.atol = np.concatenate([np.full(self.n_nodes, 1e-5), np.full(len(BOOKS), 1e-2)])
        self.n_rhs = 0

    @one_blas_thread
    def advance(self, t, t_stop, y, fan, air, level, direction, after_switch, k):
        """See :mod:`atticsim.hybrid.driver`."""
        n, i_sensor, network, forcing = self.n_nodes, self.i_sensor, self.network, self.forcing

        def rhs(tt, yy):
            self.n_rhs += 1
            return network.rate(yy[:n], forcing.at(tt), fan, air)

        events = None
        if direction != 0:
            def crossing(tt, yy):
                return yy[i_sensor] - level

            crossing.terminal = True
            crossing.direction = direction
            events = [crossing]
        if k < self.out_t.size and abs(self.out_t[k] - t) < 1e-6:
            self.write_row(k, y)
            k += 1
        outs = self.out_t[k:]
        outs = outs[outs <= t_stop + 1e-9]
        sol = solve_ivp(rhs, (t, t_stop), y, method="LSODA", t_eval=np.append(outs[outs < t_stop], t_stop),
                        events=events, rtol=self.rtol, atol=self.atol, max_step=self.max_step)
        if sol.status < 0:
            raise StepperFailed(f"LSODA failed: {sol.message}", t, k)
        crossed = sol.status == 1
        sol_t = np.asarray(sol.t, dtype=float)
        sol_y = np.asarray(sol.y, dtype=float).reshape(len(y), -1)  # (empty when the event came first)
        t_new = float(sol.t_events[0][0]) if crossed else float(t_stop)
        y_new = sol.y_events[0][0] if crossed else sol_y[:, -1]
        for tt, col in zip(sol_t, sol_y.T):
            # rows at output instants passed (the crossing instant and the stop are reported by the next call)
            while k < self.out_t.size and abs(self.out_t[k] - tt) < 1e-6 and tt < t_new - 1e-9:
                self.write_row(k, col)
                k += 1
        y[:] = y_new
        return crossed, t_new, k

    def write_row(self, k, y):
        """The state y as output row k."""
        self.out_y[:, k] = y
