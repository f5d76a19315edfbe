"""The fast solver: exact discretisation of the locally linearised network, with exact event location.

The run is advanced in *windows* (up to ``window`` seconds; cut at airflow updates and the period end),
each cut into segments on the ``segment`` grid and at the weather samples, so that the forcing is linear
on every segment. On a segment the node temperatures obey

    dz/ds = J_w z + a + b s,        z = x - x(segment start),

with J_w the window's propagator Jacobian (finite differences, kept per fan state while the airflow holds
and the nodes stay within ``window_jacobian_drift``), and a, b chosen so that the model's derivative equals
the network's true derivative at both ends of the segment, each linearised about the current iterate with
its own Jacobian. The segment's solution is exact for that model (Van Loan 1978, "Computing integrals
involving the matrix exponential", IEEE TAC 23(3)): the block exponential

    expm([[J_w, I, 0, 0], [0, 0, I, 0], [0, 0, 0, I], [0, 0, 0, 0]] h) = [[Phi, G0, G1, G2], ...]

gives z(h) = G0 a + G1 b and the integral of z, G1 a + G2 b, so the energy books (which feed nothing back
and have rates linear in z) are integrated exactly too. The end values make each segment an affine map of
its start state; all segments of a window are formed at once from one vectorised right-hand-side call and
chained, and the window is iterated to a fixed point (Newton's method on the whole window, our design:
quadratic convergence to 1e-3 K, two to four iterations). Outputs are evaluated directly from each
segment's start.

Switching: a coarse window (600 s segments) stops where the sensor comes within ``near_band`` of its next
switching level; from there fine windows (60 s segments) carry it, and the crossing is located on the
segment's exact solution (stepped in 1 s steps, then Brent's method on a cubic Hermite interpolant of the
bracketing step). After a switch the state moves fast: a settling window of 15 s segments for two minutes
and 60 s segments to five minutes follows every switch.

A window that does not converge falls back to the sequential scheme (``windows=False`` uses it
throughout): short segments linearised at their start, with a second-order correction from the true
derivative at their end, stepped in ``max_step`` steps with the books by Simpson's rule.

The reference solver (``atticsim.hybrid.events.integrate``, LSODA with event functions) stays the
accuracy standard; tests hold this one to it on every demo scenario.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.linalg import expm
from scipy.optimize import brentq

from atticsim.hybrid.events import HybridRun
from atticsim.hybrid.threads import one_blas_thread
from atticsim.network import kernel
from atticsim.network.kernel import FORCING_BASE

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


class _Blocks:
    """Phi, G0, G1, G2 of dz/ds = J z + a + b s over a step h, for any a and b (cached by h).

    One block exponential (Van Loan 1978) gives them all:
    E(h) = expm([[J, I, 0, 0], [0, 0, I, 0], [0, 0, 0, I], [0, 0, 0, 0]] h) has first block row
    [Phi, G0, G1, G2] with G_k = int_0^h e^{J (h - tau)} tau^k / k! dtau, so that
    z(h) = Phi z(0) + G0 a + G1 b and int_0^h z ds = G0 z(0) + G1 a + G2 b (exact).
    E is a matrix exponential, so E(m h) = E(h)^m: evenly spaced instants cost one exponential.
    """

    def __init__(self, jn):
        self.jn = jn
        self.cache = {}
        self.stack_cache = {}

    def full(self, h, cache=True):
        key = int(h * 1e6 + 0.5)
        e = self.cache.get(key) if cache else None
        if e is None:
            n = self.jn.shape[0]
            m = np.zeros((4 * n, 4 * n))
            m[:n, :n] = self.jn
            eye = np.eye(n)
            m[:n, n:2 * n] = eye
            m[n:2 * n, 2 * n:3 * n] = eye
            m[2 * n:3 * n, 3 * n:] = eye
            e = expm(m * h)
            if cache and len(self.cache) < 64:
                self.cache[key] = e
        return e

    def get(self, h, cache=True):
        """(Phi, G0, G1, G2) over a step h."""
        n = self.jn.shape[0]
        e = self.full(h, cache)
        return tuple(e[:n, i * n:(i + 1) * n] for i in range(4))

    def segment_stacks(self, hs):
        """G0 and G1 over each step length in ``hs``, stacked (K, n, n)."""
        key = tuple(int(h * 1e6 + 0.5) for h in hs)
        st = self.stack_cache.get(("seg",) + key)
        if st is None:
            parts = [self.get(h) for h in hs]
            st = (np.stack([pt[1] for pt in parts]), np.stack([pt[2] for pt in parts]))
            if len(self.stack_cache) < 16:
                self.stack_cache[("seg",) + key] = st
        return st

    def stacks(self, offsets):
        """G0, G1, G2 at each offset, stacked (p, n, n) (cached for a repeated set of offsets)."""
        key = tuple(int(h * 1e6 + 0.5) for h in offsets)
        st = self.stack_cache.get(key)
        if st is None:
            n = self.jn.shape[0]
            ratio = np.asarray(offsets) / offsets[0]
            mult = np.rint(ratio).astype(int)
            if np.all(np.abs(ratio - mult) < 1e-9) and mult[-1] <= 64:
                base = self.full(offsets[0])
                powers, e = {1: base}, base
                for m in range(2, int(mult[-1]) + 1):
                    e = e @ base
                    powers[m] = e
                rows = [powers[m][:n] for m in mult]
            else:
                rows = [self.full(h)[:n] for h in offsets]
            top = np.stack(rows)                                        # (p, n, 4n)
            st = tuple(np.ascontiguousarray(top[:, :, i * n:(i + 1) * n]) for i in (1, 2, 3))
            if len(self.stack_cache) < 16:
                self.stack_cache[key] = st
        return st


def _window(network, forcing, fan, y, f0, jac, b_u, blocks, bounds, max_step, out, k, check,
            locate=False, tol=1e-3, max_iter=8):
    """Advance a whole window [bounds[0], bounds[-1]] (no airflow update inside) at once, by Newton's
    method on the window.

    The window is cut into segments at ``bounds`` (the segment grid and the weather samples, so that the
    forcing is linear on each). On each segment the derivative is taken as linear in time between its
    values at the two ends, each linearised about the iterate's state there with its own Jacobian
    (one vectorised right-hand-side call gives the values and Jacobians at all segment ends); the segment
    is then advanced exactly with the window's propagator (:class:`_Blocks`). The end value depends on the
    unknown end state, which makes each segment's advance an affine map of its start state,
    n_{j+1} = P_j n_j + q_j; all P_j, q_j are formed at once and chained. Iterating to a fixed point
    (quadratic convergence, ``tol`` [K]) leaves each segment with the exact derivative at both ends, as
    the sequential scheme's second-order correction aims at.

    Parameters
    ----------
    jac : (n_tot, n_nodes) array
        The window's Jacobian (its node rows make the propagator); b_u: df/du for the first guess.
    check : (index, level, direction) or None
        A sensor level: the window stops at the first segment where it is reached.
    locate : bool
        True: ``check`` is the switching level and the window stops at the crossing itself, located on the
        segment's exact solution (:func:`_crossing`). False: the window stops at the start of the segment
        where the level is reached.

    Returns
    -------
    None when the iteration does not converge; otherwise (t_stop, y_stop, times, states, k, n_iter,
    crossed): the window is accepted up to t_stop with the output instants inside (bounds[0], t_stop]; crossed
    tells that t_stop is a located crossing.
    """
    nn = jac.shape[1]
    hs = np.diff(bounds)
    n_seg = hs.size
    x0 = y[:nn]
    jw = jac
    g0, g1 = blocks.segment_stacks(hs)                                    # (K, nn, nn) each
    u_b = np.stack([forcing.at(tb) for tb in bounds], axis=1)             # (n_u, K + 1)
    # First guess: the start's linear model in state and forcing, carried over the window.
    fu = b_u @ (u_b - u_b[:, :1])                                         # (n_tot, K + 1)
    xs = np.empty((n_seg + 1, nn))
    xs[0] = x0
    for j in range(n_seg):
        a = f0[:nn] + fu[:nn, j] + jw[:nn] @ (xs[j] - x0)
        xs[j + 1] = xs[j] + g0[j] @ a + g1[j] @ ((fu[:nn, j + 1] - fu[:nn, j]) / hs[j])
    eye = np.eye(nn)
    h3 = hs[:, None, None]
    for n_iter in range(1, max_iter + 1):
        f_e, j_e = _values_and_jacobians(network, xs[1:].T, u_b[:, 1:], fan)
        f_all = np.concatenate([f0[:, None], f_e], axis=1).T               # (K + 1, n_tot)
        j_all = np.concatenate([jw[None], j_e], axis=0)                   # (K + 1, n_tot, nn)
        # a_j = alpha_j + J_j n_j;  r_j = rho_j + (J_{j+1} - J_j) n_j  (derivative at the end minus a_j)
        jx = np.einsum("kij,kj->ki", j_all, xs)
        alpha = f_all[:-1] - jx[:-1]
        rho = f_all[1:] - jx[1:] - alpha
        dj = j_all[1:] - j_all[:-1]
        # Segment advance z = S^-1 (G0 a + G1 r / h) with S = I - G1 (J_{j+1} - J_w) / h.
        sm = eye - g1 @ (j_all[1:, :nn] - jw[:nn]) / h3
        rhs_m = g0 @ j_all[:-1, :nn] + g1 @ dj[:, :nn] / h3                 # (K, nn, nn)
        rhs_c = np.einsum("kij,kj->ki", g0, alpha[:, :nn]) + np.einsum("kij,kj->ki", g1, rho[:, :nn]) / hs[:, None]
        sol = np.linalg.solve(sm, np.concatenate([rhs_m, rhs_c[:, :, None]], axis=2))
        pm, qc = sol[:, :, :nn] + eye, sol[:, :, nn]
        new = np.empty_like(xs)
        new[0] = x0
        for j in range(n_seg):
            new[j + 1] = pm[j] @ new[j] + qc[j]
        moved = float(np.max(np.abs(new - xs)))
        xs = new
        if moved < tol:
            break
    else:
        return None
    z = xs[1:] - xs[:-1]
    a_s = alpha + np.einsum("kij,kj->ki", j_all[:-1], xs[:-1])
    r_s = rho + np.einsum("kij,kj->ki", dj, xs[:-1])
    b_s = (r_s + np.einsum("kij,kj->ki", j_all[1:] - jw[None], z)) / hs[:, None]
    # Fill in the output instants and the books directly from each segment's start (exact, no stepping),
    # checking that the sensor stays short of its level at instants at most max_step apart: all segments
    # at once up to the first where the level is reached, then that one on its own.
    jb_t = jw[nn:].T
    times, states, k, books, j_c = _fill(blocks, bounds, xs, a_s, b_s, y[nn:], jb_t, max_step, out, k, check)
    t_stop, crossed = bounds[-1], False
    x = xs[j_c] if j_c < n_seg else xs[-1]
    if j_c < n_seg:
        # the segment where the level is reached: stop at its start, or at the located crossing
        j = j_c
        lo, hi = bounds[j], bounds[j + 1]
        if not locate:
            return lo, np.concatenate([x, books]), times, states, k, n_iter, False
        first, kk = k, k
        while kk < out.size and out[kk] <= hi + 1e-6:
            kk += 1
        offsets = _offsets(out[first:kk] - lo, hi - lo, max_step)
        g0s, g1s, g2s = blocks.stacks(offsets)
        a, b = a_s[j], b_s[j]
        zs = g0s @ a[:nn] + g1s @ b[:nn]                                       # (p, nn)
        i_s, level, direction = check
        reached = (x[i_s] + zs[:, i_s] - level) * direction >= 0.0
        p = int(np.argmax(reached))
        tau = _crossing(blocks, a[:nn], b[:nn], x[i_s], i_s, level, direction,
                        offsets[p - 1] if p > 0 else 0.0, offsets[p], zs[p - 1] if p > 0 else np.zeros(nn))
        _, g0t, g1t, g2t = blocks.get(tau, cache=False)
        keep = offsets < tau - 1e-9
        offsets, zs = offsets[keep], zs[keep]
        g1s, g2s = g1s[keep], g2s[keep]
        while kk > first and out[kk - 1] - lo > tau + 1e-6:
            kk -= 1
        offsets = np.append(offsets, tau)
        zs = np.vstack([zs, g0t @ a[:nn] + g1t @ b[:nn]])
        g1s = np.concatenate([g1s, g1t[None]])
        g2s = np.concatenate([g2s, g2t[None]])
        t_stop, crossed = lo + tau, True
        book_pts = (books + np.outer(offsets, a[nn:]) + 0.5 * np.outer(offsets**2, b[nn:])
                    + (g1s @ a[:nn] + g2s @ b[:nn]) @ jb_t)
        if kk > first:
            rows = np.searchsorted(offsets, np.round(out[first:kk] - lo, 6))
            times.extend(out[first:kk].tolist())
            states.extend(np.concatenate([x + zs[rows], book_pts[rows]], axis=1))
        k = kk
        x, books = x + zs[-1], book_pts[-1]
    return t_stop, np.concatenate([x, books]), times, states, k, n_iter, crossed


def _offsets(out_offsets, h, max_step):
    """Instants inside a segment of length h where states are evaluated: its output instants, a grid of
    max_step (for the crossing check) and its end; sorted, rounded to the microsecond."""
    return np.unique(np.round(np.concatenate([out_offsets, np.arange(max_step, h - 1e-6, max_step), [h]]), 6))


def _fill(blocks, bounds, xs, a_s, b_s, books0, jb_t, max_step, out, k, check):
    """Output states and books of the window's segments, all at once, up to the first segment where the
    sensor reaches the ``check`` level.

    Segments with the same length and the same output offsets share their stacked G matrices
    (:meth:`_Blocks.stacks`); states are z(s) = G0(s) a + G1(s) b from each segment's start and the books
    b0 + a_b s + b_b s^2 / 2 + J_b (G1(s) a + G2(s) b) (exact integrals of their linear rates).

    Returns (times, states, k, books, j_c): the output instants and full states of segments before j_c,
    the next output index, the books at the start of segment j_c, and j_c (n_seg when none reached).
    """
    nn = xs.shape[1]
    hs = np.diff(bounds)
    n_seg = hs.size
    ke = np.searchsorted(out, bounds[1:] + 1e-6, side="right")
    ke = np.maximum(ke, k)
    ks = np.concatenate([[k], ke[:-1]])
    groups = {}
    for j in range(n_seg):
        o_out = np.round(out[ks[j]:ke[j]] - bounds[j], 6)
        groups.setdefault((round(float(hs[j]), 6), o_out.tobytes()), []).append(j)
    inc = np.empty((n_seg, books0.size))
    per_seg = [None] * n_seg
    j_c = n_seg
    for (h, _), idx in groups.items():
        idx = np.asarray(idx)
        j0 = idx[0]
        o_out = np.round(out[ks[j0]:ke[j0]] - bounds[j0], 6)
        offsets = _offsets(o_out, h, max_step)
        rows = np.searchsorted(offsets, o_out)
        g0s, g1s, g2s = blocks.stacks(offsets)
        an, bn = a_s[idx, :nn], b_s[idx, :nn]
        zs = np.einsum("pij,kj->kpi", g0s, an) + np.einsum("pij,kj->kpi", g1s, bn)        # (m, p, nn)
        if check is not None:
            i_s, level, direction = check
            hit = np.any((xs[idx, i_s][:, None] + zs[:, :, i_s] - level) * direction >= 0.0, axis=1)
            if np.any(hit):
                j_c = min(j_c, int(idx[np.argmax(hit)]))
        ints = np.einsum("pij,kj->kpi", g1s, an) + np.einsum("pij,kj->kpi", g2s, bn)
        bk = (offsets[None, :, None] * a_s[idx, None, nn:] + 0.5 * (offsets**2)[None, :, None] * b_s[idx, None, nn:]
              + ints @ jb_t)                                                              # (m, p, nb)
        inc[idx] = bk[:, -1]
        for m, j in enumerate(idx):
            per_seg[j] = (zs[m, rows], bk[m, rows])
    starts = books0 + np.concatenate([np.zeros((1, books0.size)), np.cumsum(inc, axis=0)[:-1]])
    times, states = [], []
    for j in range(j_c):
        if ke[j] > ks[j]:
            zr, br = per_seg[j]
            times.extend(out[ks[j]:ke[j]].tolist())
            states.extend(np.concatenate([xs[j] + zr, starts[j] + br], axis=1))
    k_next = ks[j_c] if j_c < n_seg else ke[-1]
    books = starts[j_c] if j_c < n_seg else starts[-1] + inc[-1]
    return times, states, int(k_next), books, j_c


def _crossing(blocks, a, b, x_s, i_s, level, direction, lo, hi, z_lo):
    """Time after the segment start [s] where the sensor reaches ``level``, between offsets ``lo`` and ``hi``
    that bracket it (z_lo: the nodes' change at ``lo``).

    The exact solution of dz/ds = J z + a + b s is stepped from ``lo`` in steps of at most 1 s (one shared
    exponential); in the step that brackets the crossing the sensor is a cubic Hermite interpolant of its
    exact values and slopes (error of order h^4, under a millisecond here), whose root Brent's method finds.
    """
    jn = blocks.jn
    n_sub = max(1, math.ceil(hi - lo - 1e-9))
    h = (hi - lo) / n_sub
    phi, g0, g1, _ = blocks.get(h)
    z, s = z_lo, lo
    g_lo = (x_s + z[i_s] - level) * direction
    if g_lo >= 0.0:
        return lo
    d_lo = (jn[i_s] @ z + a[i_s] + b[i_s] * s) * direction
    for _ in range(n_sub):
        z_new = phi @ z + g0 @ (a + b * s) + g1 @ b
        g_new = (x_s + z_new[i_s] - level) * direction
        d_new = (jn[i_s] @ z_new + a[i_s] + b[i_s] * (s + h)) * direction
        if g_new >= 0.0:
            def cubic(u):  # Hermite basis on [0, 1]
                return ((2 * u**3 - 3 * u**2 + 1) * g_lo + (u**3 - 2 * u**2 + u) * h * d_lo
                        + (-2 * u**3 + 3 * u**2) * g_new + (u**3 - u**2) * h * d_new)
            return s + h * brentq(cubic, 0.0, 1.0, xtol=1e-9)
        z, s, g_lo, d_lo = z_new, s + h, g_new, d_new
    return hi


def _flow_key(air):
    """The flows the network's derivatives read from an airflow state, as a tuple (a re-solved state close to
    the one a propagator was built with, as at most switches, keeps that propagator)."""
    if air is None:
        return None
    return tuple(float(getattr(air, name)) for name in kernel.AIR_ORDER)


def _flows_close(a, b, rel=0.05):
    """Two flow keys within ``rel`` of each other (the propagator needs only to be near the true Jacobian:
    the Newton iteration takes the exact one at every segment end)."""
    if a is None or b is None:
        return a is b
    return all(abs(x - y) <= rel * max(abs(x), abs(y)) + 1e-12 for x, y in zip(a, b))


def _values_and_jacobians(network, temps, forcing_cols, fan):
    """f and df/dx (forward differences, as :func:`_linearise`) at m states in one vectorised call.

    temps: (n_nodes, m) node temperatures; forcing_cols: (n_u, m). Returns f (n_tot, m) and
    J (m, n_tot, n_nodes)."""
    nn, m = temps.shape
    h_x = FD_STEP * np.maximum(1.0, np.abs(temps))               # (nn, m)
    block = np.repeat(temps[:, :, None], nn + 1, axis=2)          # (nn, m, nn + 1)
    idx = np.arange(nn)
    block[idx, :, 1 + idx] += h_x
    cols = block.reshape(nn, m * (nn + 1))
    d = network.derivatives(cols, np.repeat(forcing_cols, nn + 1, axis=1), fan).reshape(-1, m, nn + 1)
    f = d[:, :, 0]
    jacs = (d[:, :, 1:] - f[:, :, None]) / h_x.T[None, :, :]       # (n_tot, m, nn)
    return f, np.transpose(jacs, (1, 0, 2))


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
                   segment=600.0, jacobian_every=600.0, max_step=60.0, jacobian_drift=1.0, near_band=0.5,
                   windows=True, window=21600.0, fine_window=1800.0, window_jacobian_every=21600.0,
                   window_jacobian_drift=5.0) -> HybridRun:
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
        Within this distance of the next switching temperature the sensor is advanced in short segments
        (fine windows, or freshly linearised sequential segments) [K].
    max_step : float
        Largest step between event checks [s]; also the fine windows' segment length.
    windows : bool
        Advance in Newton-iterated windows (default); False: the sequential scheme throughout.
    window, fine_window : float
        Longest coarse and fine window [s].
    window_jacobian_every, window_jacobian_drift : float
        A window propagator is renewed after this long [s] or when a node has moved this much [K].
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
    props = {}  # fan state -> (Jacobian, df/du, time, node states, airflow state, blocks)
    no_window_until = fine_until = -math.inf
    t_jac, calls = -math.inf, 0
    need_air = airflow is not None
    next_air = t
    settle_until = -math.inf
    n_tot = y.size

    while t < t_end - 1e-9:
        if need_air and t >= next_air - 1e-9:
            f = forcing.at(t)
            network.air = airflow.solve(float(network.mean_air(y)), f[0], f[2], fan, with_depressurisation=True,
                                        pressure=f[FORCING_BASE.index("pressure")],
                                        temp_room=f[FORCING_BASE.index("temp_room")])
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
        win_end = min(t_end, next_air)
        if windows and t >= no_window_until - 1e-9 and win_end - t > 1e-6:
            # Fine windows while settling after a switch (15 s segments for two minutes, then 60 s) or near
            # the switching level (60 s segments, the crossing located inside); coarse windows otherwise,
            # stopped where the sensor comes within near_band of its level.
            fine = near or t < settle_until or t < fine_until
            # Grids are absolute multiples of their step (and the first max_step multiple after t is a
            # boundary), so that output instants fall at the same offsets in every segment and the
            # segments' exponentials are shared.
            if t < settle_until:
                quick = settle_until - 180.0
                grid = np.concatenate([np.arange(math.ceil(t / 15.0 + 1e-9) * 15.0, quick + 1e-6, 15.0),
                                       np.arange(math.ceil(quick / max_step + 1e-9) * max_step, settle_until + 1e-6,
                                                 max_step)])
                win_end = min(win_end, math.ceil(settle_until / max_step - 1e-9) * max_step)
            elif fine:
                win_end = min(win_end, max(math.floor((t + fine_window) / max_step) * max_step, t + max_step))
                grid = np.arange((math.floor(t / max_step + 1e-9) + 1) * max_step, win_end - 1e-6, max_step)
            else:
                win_end = min(win_end, max(math.floor((t + window) / segment) * segment, t + segment))
                grid = np.arange((math.floor(t / segment + 1e-9) + 1) * segment, win_end - 1e-6, segment)
            samples = np.arange((math.floor(t / w_step + 1e-9) + 1) * w_step, win_end - 1e-6, w_step)
            grid = np.union1d(grid, samples)
            grid = np.union1d(grid, [(math.floor(t / max_step + 1e-9) + 1) * max_step])
            grid = grid[(grid > t + 1e-6) & (grid < win_end - 1e-6)]
            bounds = np.concatenate([[t], grid, [win_end]])
            # The window's propagator Jacobian may be older than the sequential one (the Newton iteration
            # takes fresh Jacobians at every segment end); it is renewed with the fan state or the airflow.
            # One propagator per fan state, kept while the airflow state holds and the nodes stay near.
            kept = props.get(fan)
            air_now = _flow_key(getattr(network, "air", None))
            if (kept is None or not _flows_close(kept[4], air_now) or t - kept[2] >= window_jacobian_every
                    or np.max(np.abs(y[:n_nodes] - kept[3])) > window_jacobian_drift):
                f0, jac_w, b_w = _linearise(network, forcing, t, y, fan, n_nodes)
                blocks = _Blocks(jac_w[:n_nodes, :n_nodes])
                props[fan] = (jac_w, b_w, t, y[:n_nodes].copy(), air_now, blocks)
            else:
                jac_w, b_w, _, _, _, blocks = kept
                f0 = network.derivatives(y[:n_nodes, None], forcing.at(t)[:, None], fan)[:, 0]
            calls += 1
            if k < out.size and abs(out[k] - t) < 1e-6:
                ts.append(t)
                ys.append(y.copy())
                fans.append(fan)
                airs.append(getattr(network, "air", None))
                k += 1
            check = None
            if controller is not None:
                level, direction = controller.next_switch(fan)
                check = (i_sensor, level if fine else level - direction * near_band, direction)
            res = _window(network, forcing, fan, y, f0, jac_w[:, :n_nodes], b_w, blocks, bounds, max_step, out,
                          k, check, locate=fine)
            if res is None:
                no_window_until = t + fine_window  # no convergence: step through
            else:
                t_stop, y_new, w_times, w_states, k, n_iter, crossed = res
                calls += n_iter
                ts.extend(w_times)
                ys.extend(w_states)
                fans.extend([fan] * len(w_times))
                airs.extend([getattr(network, "air", None)] * len(w_times))
                if not fine and t_stop < win_end - 1e-9:
                    fine_until = t_stop + 1e-6  # the sensor comes near its level: fine window from there
                t, y = t_stop, y_new
                if crossed:
                    fan = not fan
                    events.append((t, fan, float(y[i_sensor])))
                    jac = None
                    settle_until = t + 300.0
                    if need_air:
                        next_air = t
                continue
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
            no_window_until = -math.inf
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
