"""The fast solver: exact discretisation of the locally linearised network, with exact event location.

Between switching events the network is advanced as the affine-linear system

    dx/dt = f(x0, u0) + J (x - x0) + B (u(t) - u0),     u(t) linear in t between weather samples,

linearised at the start x0 of each short segment (f evaluated there exactly; the Jacobians J = df/dx and
B = df/du by finite differences, refreshed every ``jacobian_every`` seconds and after every switch or
airflow update). Its solution over a step h is exact (Van Loan 1978, "Computing integrals involving the
matrix exponential", IEEE TAC 23(3)): the block exponential

    expm([[J, I, 0], [0, 0, I], [0, 0, 0]] h) = [[Phi, G0, G1], ...]

gives z(h) = Phi z(0) + G0 (c0 + c1 s) + G1 c1 for dz/dt = J z + c0 + c1 t. A switching event is found
by root finding (Brent) on that exact solution inside the step where the sensor crosses its threshold.
The energy books feed nothing back: they are integrated over each step by Simpson's rule on their
linear rates, with the node states exact at the step's start, middle and end.
Each segment is also corrected to second order: the true derivative at the segment end sets a linear
growth of the linearisation residual over the segment. Near switches the segments are short (15 s for
the first two minutes, 60 s up to five) and a step that holds a crossing is re-linearised at its start
before the crossing is located.

The reference solver (``atticsim.hybrid.events.integrate``, LSODA with event functions) stays the
accuracy standard; tests hold this one to it.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.linalg import expm
from scipy.optimize import brentq

from atticsim.hybrid.events import HybridRun
from atticsim.hybrid.threads import one_blas_thread

#: Relative finite-difference step for the Jacobians (numerical choice, ours).
FD_STEP = 1e-4


class _Segment:
    """Exact propagation of dz/dt = J z + c0 + c1 s over one segment (step matrices cached by length).

    With w = [z, 1, s] the system is dw/dt = M w, M = [[J, c0, c1], [0, 0, 0], [0, 1, 0]], so
    w(s + h) = expm(M h) w(s) exactly (the augmented-matrix form of Van Loan 1978).
    """

    def __init__(self, jac, c0, c1):
        n = jac.shape[0]
        self.m = np.zeros((n + 2, n + 2))
        self.m[:n, :n] = jac
        self.m[:n, n] = c0
        self.m[:n, n + 1] = c1
        self.m[n + 1, n] = 1.0
        self.n = n
        self.cache = {}

    def step(self, w, h, cache=True):
        """w(s + h) from w(s)."""
        key = int(h * 1e6 + 0.5)  # microsecond resolution
        e = self.cache.get(key) if cache else None
        if e is None:
            e = expm(self.m * h)
            if cache and len(self.cache) < 16:
                self.cache[key] = e
        return e @ w


def _linearise(network, forcing, t, y, fan, n_nodes):
    """f(x0, u0), J = df/dx (columns for the books are zero) and B = df/du at (t, y)."""
    u0 = forcing.at(t)
    n_tot, n_u = y.size, u0.size
    h_x = FD_STEP * np.maximum(1.0, np.abs(y[:n_nodes]))
    h_u = FD_STEP * np.maximum(1.0, np.abs(u0))
    cols = 1 + n_nodes + n_u
    temps = np.repeat(y[:n_nodes, None], cols, axis=1)
    temps[np.arange(n_nodes), 1 + np.arange(n_nodes)] += h_x
    f_in = np.repeat(u0[:, None], cols, axis=1)
    f_in[np.arange(n_u), 1 + n_nodes + np.arange(n_u)] += h_u
    d = network.derivatives(temps, f_in, fan)
    f0 = d[:, 0]
    jac = np.zeros((n_tot, n_tot))
    jac[:, :n_nodes] = (d[:, 1:1 + n_nodes] - f0[:, None]) / h_x
    b = (d[:, 1 + n_nodes:] - f0[:, None]) / h_u
    return f0, jac, b


@one_blas_thread
def integrate_fast(network, forcing, controller, t_start, t_end, y0, fan_on, output_times,
                   segment=600.0, jacobian_every=600.0, max_step=60.0, jacobian_drift=1.0, near_band=0.5) -> HybridRun:
    """Integrate the hybrid system like :func:`atticsim.hybrid.events.integrate`, faster.

    Parameters
    ----------
    network, forcing, controller, t_start, t_end, y0, fan_on, output_times
        As for :func:`atticsim.hybrid.events.integrate`.
    segment : float
        Length of the linearisation segments [s] (f re-evaluated at each start; cut at weather samples
        and airflow updates).
    jacobian_every : float
        How often the Jacobians are refreshed [s] (also after every switch and airflow update).
    jacobian_drift : float
        Refresh the Jacobians sooner when any node has moved this much since the last refresh [K].
    near_band : float
        Within this distance of the next switching temperature the sensor is advanced in short, freshly
        linearised segments [K].
    max_step : float
        Largest step between event checks [s].
    """
    n_nodes = network.n_nodes
    i_sensor = network.index["sensor"]
    airflow = getattr(network, "airflow", None)
    update = airflow.update_interval if airflow is not None else math.inf
    w_step = forcing.step
    t, y, fan = float(t_start), np.asarray(y0, dtype=float).copy(), bool(fan_on)
    out = np.asarray(output_times, dtype=float)
    k = 0
    ts, ys, fans, airs, events, updates = [], [], [], [], [], []
    jac = b_mat = y_jac = None
    t_jac, calls = -math.inf, 0
    need_air = airflow is not None
    next_air = t
    settle_until = -math.inf
    n_tot = y.size

    while t < t_end - 1e-9:
        if need_air and t >= next_air - 1e-9:
            f = forcing.at(t)
            network.air = airflow.solve(float(network.mean_air(y)), f[0], f[2], fan, with_depressurisation=True)
            updates.append((t, network.air))
            next_air = (math.floor(t / update + 1e-9) + 1) * update if math.isfinite(update) else math.inf
            jac = None
        # Segment end: the next segment boundary, weather sample, airflow update or the period end.
        # Near a switch the state moves fast: short segments there.
        seg_len = segment if t >= settle_until else (15.0 if t < settle_until - 180.0 else max_step)
        # Close to the next switching point the crossing time is sensitive to millikelvins: short,
        # freshly linearised segments there.
        near = controller is not None and abs(y[i_sensor] - controller.next_switch(fan)[0]) < near_band
        if near:
            seg_len, jac = min(seg_len, max_step), None
        seg_end = min(t_end, (math.floor(t / seg_len + 1e-9) + 1) * seg_len,
                      (math.floor(t / w_step + 1e-9) + 1) * w_step, next_air)
        if jac is None or t - t_jac >= jacobian_every or np.max(np.abs(y[:n_nodes] - y_jac)) > jacobian_drift:
            f0, jac, b_mat = _linearise(network, forcing, t, y, fan, n_nodes)
            t_jac, y_jac = t, y[:n_nodes].copy()
        else:
            f0 = network.derivatives(y[:n_nodes, None], forcing.at(t)[:, None], fan)[:, 0]
        calls += 1
        i_w = min(int(t / w_step + 1e-9), forcing.values.shape[1] - 2)
        du = (forcing.values[:, i_w + 1] - forcing.values[:, i_w]) / w_step
        c0, c1 = f0, b_mat @ du
        x0 = y.copy()
        # The nodes are advanced exactly; the books (which feed nothing back) are integrated over each
        # step by Simpson's rule on their linear rates r = c0_b + J_b z + c1_b s, with z exact at the step's
        # start, middle and end (keeps the matrix exponentials node-sized).
        nn = n_nodes
        jn, jb = jac[:nn, :nn], jac[nn:, :nn]
        w0 = np.zeros(nn + 2)
        w0[nn] = 1.0
        span = seg_end - t
        if span > 1e-6:
            # Second-order correction: propagate the linear model to the segment end, evaluate the true
            # derivative there and let the residual grow linearly over the segment (a trapezoidal
            # correction of the linearisation error; our choice).
            z_end = _Segment(jn, c0[:nn], c1[:nn]).step(w0, span, cache=False)[:nn]
            f_end = network.derivatives((x0[:nn] + z_end)[:, None], forcing.at(seg_end)[:, None], fan)[:, 0]
            calls += 1
            c1 = c1 + (f_end - (c0 + jac[:, :nn] @ z_end + c1 * span)) / span
        seg = _Segment(jn, c0[:nn], c1[:nn])
        c0b, c1b = c0[nn:], c1[nn:]

        def book_rate(w_):
            return c0b + jb @ w_[:nn] + c1b * w_[nn + 1]

        w, zb = w0, np.zeros(n_tot - nn)
        level, direction = controller.next_switch(fan) if controller is not None else (None, 0)
        event = None
        relinearise = False
        while True:
            now = t + w[nn + 1]
            if k < out.size and abs(out[k] - now) < 1e-6:
                ts.append(now)
                ys.append(x0 + np.concatenate([w[:nn], zb]))
                fans.append(fan)
                airs.append(getattr(network, "air", None))
                k += 1
            if now >= seg_end - 1e-9:
                break
            t_next = min(seg_end, now + max_step, out[k] if k < out.size else math.inf)
            h = t_next - now
            w_new = seg.step(w, h)
            if level is not None:
                before = (x0[i_sensor] + w[i_sensor] - level) * direction
                after = (x0[i_sensor] + w_new[i_sensor] - level) * direction
                if before < 0.0 <= after and w[nn + 1] > 0.0:
                    # Re-linearise at the start of the step that holds the crossing, then locate it.
                    relinearise = True
                    break
                if before < 0.0 <= after:
                    w_s = w

                    def crossing(tau):
                        return (x0[i_sensor] + seg.step(w_s, tau, cache=False)[i_sensor] - level) * direction

                    tau = brentq(crossing, 1e-9, h, xtol=1e-3, rtol=1e-12)
                    w_new = seg.step(w_s, tau, cache=False)
                    h = tau
                    event = now + tau
            w_mid = seg.step(w, 0.5 * h, cache=event is None)
            zb = zb + h / 6.0 * (book_rate(w) + 4.0 * book_rate(w_mid) + book_rate(w_new))  # Simpson's rule
            w = w_new
            if event is not None:
                break
        y = x0 + np.concatenate([w[:nn], zb])
        t = t + w[nn + 1]
        if relinearise:
            jac = None
            settle_until = max(settle_until, t + 1e-6)  # the next segment is one short step
        if event is not None:
            fan = not fan
            events.append((event, fan, float(y[i_sensor])))
            jac = None
            settle_until = t + 300.0
            if need_air:
                next_air = t  # flows follow the new fan state at once, as in the reference solver
    # an output instant exactly at t_end that the loop closed on
    if k < out.size and abs(out[k] - t) < 1e-6:
        ts.append(t)
        ys.append(y.copy())
        fans.append(fan)
        airs.append(getattr(network, "air", None))
    return HybridRun(t=np.array(ts), y=np.array(ys).T if ys else np.empty((len(y0), 0)),
                     fan=np.array(fans, dtype=bool), air=airs, events=events, y_end=y, n_rhs=calls,
                     air_updates=updates)
