"""The compiled fast solver: exact discretisation of the network with a frozen propagator, compiled.

Between switching events and airflow updates the fan state and the air flows are fixed and the node
temperatures x obey dx/dt = f(x, u(t)). The run is cut into segments on a grid of ``segment`` seconds
(and at the weather samples, so that the forcing u is linear on each). On a segment starting at x0,
z = x - x0 obeys

    dz/ds = J z + r(s),      r(s) = f(x0 + z, u) - J z,

with J the Jacobian of f at the last linearisation (finite differences, renewed when a node has moved
``drift`` K from the linearisation state, after ``age`` seconds and at every switch). The remainder r
(the part of the right-hand side the frozen linear model misses) is taken as linear in time between its
true values at the two ends of the segment, r = a + b s with a = f(x0, u0) and b fixed by the end:
the trapezoidal exponential scheme, second order, exact for a linear network. The segment is advanced
exactly for that model with the blocks [Phi, G0, G1, G2] of :mod:`atticsim.hybrid.blocks`:

    z(h) = G0 a + G1 b        (implicit in z(h) through b; fixed-point iteration to ``tol_iter`` K).

Error control (our design): the true remainder at the segment's middle is compared with the linear one;
a deviation d means an error of about (2/3) h |d| in the nodes (the integral of the quadratic that the
linear fit misses). Above ``tol`` K the segment is halved and tried again.

Outputs and event checks are evaluated inside the accepted segment on the output grid (at most 60 s
apart) from the same exact solution; the energy books, whose rates are r_b = f_b(x0) + J_b z + c s
(c matching the true book rates at the segment's end), are integrated exactly with
int z = G0 z0 + G1 a + G2 b. Where the sensor reaches its switching level between two check instants,
the segment's exact solution is stepped in steps of the chain's base step (under a second) and the
crossing is the root of a cubic Hermite interpolant of the sensor's exact values and slopes over the
bracketing step (error of order h^4, far below a millisecond); the state there comes from the Taylor
series of the segment's solution.

The right-hand side is :func:`atticsim.network.kernel.rhs`, a compiled mirror of
:meth:`atticsim.network.model.AtticNetwork.derivatives` (tests hold the two equal). The Python driver
:func:`integrate_compiled` re-solves the airflow (pure Python) between compiled calls. The reference
solver (``atticsim.hybrid.events.integrate``) stays the accuracy standard.
"""

from __future__ import annotations

import math

import numba as nb
import numpy as np

from atticsim.hybrid.blocks import blocks_for, chain, matvec, matvec_add, taylor
from atticsim.hybrid.events import HybridRun
from atticsim.network import kernel

#: Relative finite-difference step for the Jacobian (numerical choice, ours; as the Python solvers).
FD_STEP = 1e-4
#: Largest spacing of the sensor checks inside a segment [s] (a crossing and a return within less than
#: this is not seen; the Python solvers check at the same spacing).
CHECK_STEP = 60.0
#: Blocks kept per linearisation (step lengths met repeatedly: segment, half segment, check step...).
_CACHE = 64

# Status codes of :func:`advance`.
DONE, SWITCH, OFF_GRID, FAILED = 0, 1, -1, -2


@nb.njit(cache=True)
def _forcing_at(values, step, t, u):
    """Forcing channels at t [s], linear between samples, clamped at the ends (as Forcing.at)."""
    n = values.shape[1]
    x = t / step
    i = int(x)
    if i >= n - 1:
        u[:] = values[:, n - 1]
    elif i < 0:
        u[:] = values[:, 0]
    else:
        frac = x - i
        for c in range(values.shape[0]):
            u[c] = values[c, i] + frac * (values[c, i + 1] - values[c, i])


@nb.njit(cache=True)
def _jacobian(x, u, fan, air, prm, planes, ints, heat, f0, jac):
    """Forward-difference Jacobian of all rates (nodes and books) with respect to the nodes."""
    n = x.size
    xp = x.copy()
    fp = np.empty_like(f0)
    for j in range(n):
        hx = FD_STEP * max(1.0, abs(x[j]))
        xp[j] = x[j] + hx
        kernel.rhs(xp, u, fan, air, prm, planes, ints, heat, fp)
        for i in range(f0.size):
            jac[i, j] = (fp[i] - f0[i]) / hx
        xp[j] = x[j]


@nb.njit(cache=True)
def _lookup(h, lens, store, count, jac, s0, links):
    """Index of the blocks over h in the cache, computing them when missing (the cache wraps around)."""
    for i in range(count[0]):
        if abs(lens[i] - h) < 1e-9:
            return i
    i = count[0]
    blocks_for(jac, h, s0, links, store[i])
    lens[i] = h
    count[0] += 1
    return i


@nb.njit(cache=True)
def _cubic_root(g_lo, d_lo, g_hi, d_hi, h):
    """Root in [0, 1] of the cubic Hermite interpolant (values g, slopes d per unit time, step h) with
    g_lo < 0 <= g_hi, by bisection to 1e-12."""
    lo, hi = 0.0, 1.0
    for _ in range(45):
        m = 0.5 * (lo + hi)
        v = ((2 * m**3 - 3 * m**2 + 1) * g_lo + (m**3 - 2 * m**2 + m) * h * d_lo
             + (-2 * m**3 + 3 * m**2) * g_hi + (m**3 - m**2) * h * d_hi)
        if v >= 0.0:
            hi = m
        else:
            lo = m
    return hi


@nb.njit(cache=True)
def _taylor_state(jac, z, c, b, delta, z_out, int_out):
    """z(delta) and int_0^delta z of dz/ds = J z + c + b s from z(0) = z, by the Taylor series
    (delta under the chain's base step, ||J delta|| <= 1/4: 20 terms are far below rounding)."""
    n = z.size
    term = np.empty(n)
    nxt = np.empty(n)
    matvec(jac, z, term)
    for i in range(n):
        term[i] += c[i]                      # z'(0)
        z_out[i] = z[i] + delta * term[i]
        int_out[i] = delta * z[i] + 0.5 * delta * delta * term[i]
    coef_z = delta                           # delta^m / m!
    coef_i = 0.5 * delta * delta             # delta^(m+1) / (m+1)!
    for m in range(2, 22):
        matvec(jac, term, nxt)
        if m == 2:
            for i in range(n):
                nxt[i] += b[i]
        term[:] = nxt
        coef_z *= delta / m
        coef_i *= delta / (m + 1)
        for i in range(n):
            z_out[i] += coef_z * term[i]
            int_out[i] += coef_i * term[i]


@nb.njit(cache=True)
def advance(t, t_end, origin, segment, q_step, x, books, fan, air, prm, planes, ints, heat,
            f_values, f_step, out_t, k, out_y, i_sensor, level, direction, tol, tol_iter, drift, age,
            unit_halvings):
    """Advance from t to t_end (fan state and air flows fixed) or to the first switching crossing.

    x (nodes) and books are updated in place; output rows are written into out_y[:, k...].
    Returns (status, t, k, n_rhs, n_jacobians, n_rejected, n_segments): status DONE at t_end, SWITCH at a located
    crossing (t its instant), OFF_GRID when an output instant does not fall on the check grid, FAILED when
    a segment's end does not converge even at half a second.
    """
    n = x.size
    nb_ = books.size
    n_tot = n + nb_
    n_u = f_values.shape[0]
    u0 = np.empty(n_u)
    u1 = np.empty(n_u)
    um = np.empty(n_u)
    f0 = np.empty(n_tot)
    f1 = np.empty(n_tot)
    fm = np.empty(n_tot)
    jac_all = np.empty((n_tot, n))
    jac = np.empty((n, n))
    jac_b = np.empty((nb_, n))
    x_lin = x.copy()
    t_lin = t
    z1 = np.empty(n)
    zn = np.empty(n)
    xe = np.empty(n)
    a = np.empty(n)
    b = np.zeros(n)
    b_prev = np.zeros(n)
    rb = np.empty(nb_)
    zs = np.empty(n)
    zi = np.empty(n)
    zt = np.empty(n)
    it_ = np.empty(n)
    tmp = np.empty(n)
    lens = np.zeros(_CACHE)
    count = np.zeros(1, dtype=np.int64)
    store = np.empty((_CACHE, 4, n, n))
    n_rhs = 0
    n_jac = 0
    n_rej = 0
    n_seg = 0
    n_out = out_t.size

    if k < n_out and abs(out_t[k] - t) < 1e-6:
        out_y[:n, k] = x
        out_y[n:, k] = books
        k += 1
    _forcing_at(f_values, f_step, t, u0)
    kernel.rhs(x, u0, fan, air, prm, planes, ints, heat, f0)
    n_rhs += 1
    # linearisation
    _jacobian(x, u0, fan, air, prm, planes, ints, heat, f0, jac_all)
    n_rhs += n
    n_jac += 1
    jac[:, :] = jac_all[:n]
    jac_b[:, :] = jac_all[n:]
    s0 = q_step / 2.0**unit_halvings
    norm = 0.0
    for i in range(n):
        row = 0.0
        for j in range(n):
            row += abs(jac[i, j])
        norm = max(norm, row)
    while norm * s0 > 0.25:
        s0 *= 0.5
    levels = int(np.ceil(np.log2(max(segment, 2.0 * q_step) / s0)))
    links = chain(jac, s0, levels)
    base = links[0]
    j_pref = 0
    dev = 0.0

    while t < t_end - 1e-9:
        # renew the linearisation when the nodes have moved or it is old
        moved = 0.0
        for i in range(n):
            moved = max(moved, abs(x[i] - x_lin[i]))
        if moved > drift or t - t_lin > age:
            _jacobian(x, u0, fan, air, prm, planes, ints, heat, f0, jac_all)
            n_rhs += n
            n_jac += 1
            jac[:, :] = jac_all[:n]
            jac_b[:, :] = jac_all[n:]
            x_lin[:] = x
            t_lin = t
            s0 = q_step / 2.0**unit_halvings
            norm = 0.0
            for i in range(n):
                row = 0.0
                for j in range(n):
                    row += abs(jac[i, j])
                norm = max(norm, row)
            while norm * s0 > 0.25:
                s0 *= 0.5
            levels = int(np.ceil(np.log2(max(segment, 2.0 * q_step) / s0)))
            links = chain(jac, s0, levels)
            base = links[0]
            count[0] = 0
        if count[0] > _CACHE - 28:
            count[0] = 0  # full: start over (a segment, halved down to 1 s, needs at most 26 entries)
        # segment end: the next instant of the grid of the preferred length (segment / 2^j, nested in the
        # segment grid, so that lengths repeat and their blocks come from the cache), a weather sample or
        # the end
        h_pref = segment / 2.0**j_pref
        t_pref = origin + (math.floor((t - origin) / h_pref + 1e-9) + 1.0) * h_pref
        t_w = (math.floor(t / f_step + 1e-9) + 1.0) * f_step
        h = min(t_pref, t_w, t_end) - t
        for i in range(n):
            a[i] = f0[i]
        # --- the segment: fixed point for b, then the midpoint error check; halve until accepted
        while True:
            i_h = _lookup(h, lens, store, count, jac, s0, links)
            blk = store[i_h]
            b[:] = b_prev
            matvec(blk[1], a, z1)
            matvec_add(blk[2], b, 1.0, z1)
            _forcing_at(f_values, f_step, t + h, u1)
            converged = False
            for _ in range(30):
                for i in range(n):
                    xe[i] = x[i] + z1[i]
                kernel.rhs(xe, u1, fan, air, prm, planes, ints, heat, f1)
                n_rhs += 1
                matvec(jac, z1, tmp)
                for i in range(n):
                    b[i] = (f1[i] - tmp[i] - a[i]) / h
                matvec(blk[1], a, zn)
                matvec_add(blk[2], b, 1.0, zn)
                change = 0.0
                for i in range(n):
                    d = abs(zn[i] - z1[i])
                    if not d <= change:
                        change = d  # (NaN propagates: a diverging iteration never counts as converged)
                z1[:] = zn
                if change < tol_iter:
                    converged = True
                    break
            if not converged and h < 0.5:
                return FAILED, t, k, n_rhs, n_jac, n_rej, n_seg
            accepted = False
            if converged:
                i_m = _lookup(0.5 * h, lens, store, count, jac, s0, links)
                blk_m = store[i_m]
                matvec(blk_m[1], a, zs)
                matvec_add(blk_m[2], b, 1.0, zs)
                for i in range(n):
                    xe[i] = x[i] + zs[i]
                _forcing_at(f_values, f_step, t + 0.5 * h, um)
                kernel.rhs(xe, um, fan, air, prm, planes, ints, heat, fm)
                n_rhs += 1
                matvec(jac, zs, tmp)
                dev = 0.0
                for i in range(n):
                    d = abs(fm[i] - tmp[i] - a[i] - 0.5 * h * b[i])
                    if not d <= dev:
                        dev = d
                accepted = 2.0 / 3.0 * h * dev <= tol or h <= 1.0
            if accepted:
                n_seg += 1
                # next: twice as long when well inside the tolerance (error ~ h^3)
                if 2.0 / 3.0 * h * dev < 0.125 * tol and j_pref > 0:
                    j_pref -= 1
                break
            n_rej += 1
            h = 0.5 * h
            while segment / 2.0**j_pref > h + 1e-9 and j_pref < 40:
                j_pref += 1
        # the end of the segment: nodes x + z1, books from their rates matched at both ends
        matvec(jac_b, z1, rb)
        for i in range(nb_):
            rb[i] = (f1[n + i] - rb[i] - f0[n + i]) / h      # c: slope of the book rates' remainder
        # --- outputs and sensor checks on the check grid inside (t, t + h]
        first = origin + (math.floor((t - origin) / q_step + 1e-9) + 1.0) * q_step - t
        i_q = _lookup(q_step, lens, store, count, jac, s0, links)
        i_f = _lookup(first, lens, store, count, jac, s0, links) if first < h - 1e-6 else i_q
        sigma = 0.0
        zs[:] = 0.0
        zi[:] = 0.0
        g_prev = (x[i_sensor] - level) * direction
        crossed = False
        sig_lo = 0.0
        step = 0.0
        last = False
        while not last:
            step = first if sigma == 0.0 else q_step
            if sigma + step >= h - 1e-6:
                step = h - sigma
                last = True
            if last:
                # the segment's end: straight from the h blocks
                zt[:] = z1
                matvec(blk[2], a, it_)
                matvec_add(blk[3], b, 1.0, it_)
            else:
                sb = store[i_f] if sigma == 0.0 else store[i_q]
                for i in range(n):
                    tmp[i] = a[i] + b[i] * sigma
                matvec(sb[0], zs, zt)
                matvec_add(sb[1], tmp, 1.0, zt)
                matvec_add(sb[2], b, 1.0, zt)
                it_[:] = zi
                matvec_add(sb[1], zs, 1.0, it_)
                matvec_add(sb[2], tmp, 1.0, it_)
                matvec_add(sb[3], b, 1.0, it_)
            s_new = sigma + step
            if direction != 0:
                g_new = (x[i_sensor] + zt[i_sensor] - level) * direction
                if g_prev < 0.0 <= g_new:
                    crossed = True
                    sig_lo = sigma
                    break
                g_prev = g_new
            now = t + s_new
            while k < n_out and out_t[k] <= now + 1e-6:
                if abs(out_t[k] - now) > 1e-6:
                    return OFF_GRID, t, k, n_rhs, n_jac, n_rej, n_seg
                for i in range(n):
                    out_y[i, k] = x[i] + zt[i]
                for i in range(nb_):
                    s = 0.0
                    for j in range(n):
                        s += jac_b[i, j] * it_[j]
                    out_y[n + i, k] = books[i] + f0[n + i] * s_new + 0.5 * rb[i] * s_new * s_new + s
                k += 1
            zs[:] = zt
            zi[:] = it_
            sigma = s_new
        if not crossed:
            for i in range(nb_):
                s = 0.0
                for j in range(n):
                    s += jac_b[i, j] * it_[j]
                books[i] = books[i] + f0[n + i] * h + 0.5 * rb[i] * h * h + s
            for i in range(n):
                x[i] += z1[i]
            t = t + h
            f0[:] = f1
            u0[:] = u1
            b_prev[:] = b
            continue
        # --- locate the crossing in (sig_lo, sig_lo + step]: substeps of the base step from sig_lo
        s_hi = sig_lo + step
        sigma = sig_lo
        g_lo = (x[i_sensor] + zs[i_sensor] - level) * direction
        sub = np.empty((4, n, n))
        while True:
            hs = min(s0, s_hi - sigma)
            if abs(hs - s0) < 1e-12:
                sb = base
            else:
                taylor(jac, hs, sub)
                sb = sub
            for i in range(n):
                tmp[i] = a[i] + b[i] * sigma
            matvec(sb[0], zs, zt)
            matvec_add(sb[1], tmp, 1.0, zt)
            matvec_add(sb[2], b, 1.0, zt)
            g_hi = (x[i_sensor] + zt[i_sensor] - level) * direction
            if g_hi >= 0.0 or sigma + hs >= s_hi - 1e-9:
                d_lo = tmp[i_sensor]
                d_hi = a[i_sensor] + b[i_sensor] * (sigma + hs)
                for j in range(n):
                    d_lo += jac[i_sensor, j] * zs[j]
                    d_hi += jac[i_sensor, j] * zt[j]
                theta = _cubic_root(g_lo, d_lo * direction, max(g_hi, 0.0), d_hi * direction, hs)
                delta = theta * hs
                _taylor_state(jac, zs, tmp, b, delta, zt, it_)
                for i in range(n):
                    zi[i] += it_[i]
                sigma += delta
                break
            it_[:] = zi
            matvec_add(sb[1], zs, 1.0, it_)
            matvec_add(sb[2], tmp, 1.0, it_)
            matvec_add(sb[3], b, 1.0, it_)
            zi[:] = it_
            zs[:] = zt
            g_lo = g_hi
            sigma += hs
        for i in range(nb_):
            s = 0.0
            for j in range(n):
                s += jac_b[i, j] * zi[j]
            books[i] = books[i] + f0[n + i] * sigma + 0.5 * rb[i] * sigma * sigma + s
        for i in range(n):
            x[i] += zt[i]
        return SWITCH, t + sigma, k, n_rhs, n_jac, n_rej, n_seg
    return DONE, t, k, n_rhs, n_jac, n_rej, n_seg


def grid_steps(output_times, t_start, max_segment=600.0, check_step=CHECK_STEP):
    """(output step, check step, segment) for outputs on a regular grid from t_start (the last instant,
    the period end, may be off it); None when the outputs are not on one grid."""
    out = np.asarray(output_times, dtype=float)
    inner = out[:-1] if out.size > 1 else out[:0]
    if inner.size >= 2:
        steps = np.diff(inner)
        dto = float(steps[0])
        if not np.allclose(steps, dto, rtol=0.0, atol=1e-6) or abs(inner[0] - t_start) > 1e-6:
            return None
        if inner.size and np.any(np.abs((inner - t_start) / dto - np.rint((inner - t_start) / dto)) > 1e-6):
            return None
    elif inner.size == 1:
        if abs(inner[0] - t_start) > 1e-6:
            return None
        dto = check_step
    else:
        dto = check_step
    q = dto / math.ceil(dto / check_step - 1e-9)
    segment = dto * max(1, math.floor(max_segment / dto + 1e-9))
    return dto, q, segment


def integrate_compiled(network, forcing, controller, t_start, t_end, y0, fan_on, output_times,
                       segment=600.0, check_step=CHECK_STEP, tol=2e-4, tol_iter=1e-6, drift=10.0,
                       age=7200.0) -> HybridRun | None:
    """Integrate the hybrid system like :func:`atticsim.hybrid.events.integrate`, compiled.

    Parameters
    ----------
    network, forcing, controller, t_start, t_end, y0, fan_on, output_times
        As for :func:`atticsim.hybrid.events.integrate`.
    segment : float
        Longest segment [s] (rounded down to a multiple of the output step).
    check_step : float
        Largest spacing of the sensor checks [s].
    tol : float
        Error allowed per segment in the nodes [K] (midpoint check; the segment is halved above it).
    tol_iter : float
        Convergence of the fixed point for a segment's end [K].
    drift, age : float
        The linearisation is renewed when a node has moved ``drift`` K from it or after ``age`` s.

    Returns
    -------
    HybridRun, or None when the output instants are not on one regular grid from t_start or a segment
    does not converge (the caller then uses :func:`atticsim.hybrid.fast.integrate_fast`).
    """
    steps = grid_steps(output_times, t_start, segment, check_step)
    if steps is None:
        return None
    _, q_step, seg = steps
    packed = kernel.pack(network)
    airflow = getattr(network, "airflow", None)
    update = airflow.update_interval if airflow is not None else math.inf
    need_air = airflow is not None
    n_nodes = network.n_nodes
    i_sensor = network.index["sensor"]
    out = np.ascontiguousarray(output_times, dtype=float)
    y = np.asarray(y0, dtype=float).copy()
    x, books = y[:n_nodes].copy(), y[n_nodes:].copy()
    out_y = np.empty((y.size, out.size))
    fans = np.zeros(out.size, dtype=bool)
    airs = [None] * out.size
    events, updates = [], []
    f_values = np.ascontiguousarray(forcing.values, dtype=float)
    t, fan, k = float(t_start), bool(fan_on), 0
    next_air = t
    calls = 0
    air_vec = np.zeros(7)
    while t < t_end - 1e-9:
        if need_air and t >= next_air - 1e-9:
            f = forcing.at(t)
            network.air = airflow.solve(float(network.mean_air(np.concatenate([x, books]))), f[0], f[2], fan,
                                        with_depressurisation=True)
            updates.append((t, network.air))
            air_vec = kernel.air_vector(network.air)
            next_air = (math.floor(t / update + 1e-9) + 1) * update if math.isfinite(update) else math.inf
        stop = min(t_end, next_air)
        level, direction = controller.next_switch(fan) if controller is not None else (0.0, 0)
        k0 = k
        status, t, k, n_rhs, _, _, _ = advance(
            t, stop, float(t_start), seg, q_step, x, books, 1.0 if fan else 0.0, air_vec,
            packed.prm, packed.planes, packed.ints, packed.heat, f_values, float(forcing.step), out, k, out_y,
            i_sensor, float(level), int(direction), tol, tol_iter, drift, age, 6)
        calls += n_rhs
        fans[k0:k] = fan
        airs[k0:k] = [getattr(network, "air", None)] * (k - k0)
        if status in (OFF_GRID, FAILED):
            # an output off the check grid (not from run_raw) or a segment whose end would not converge
            # even at half a second: the caller runs the window solver instead
            return None
        if status == SWITCH:
            fan = not fan
            events.append((t, fan, float(x[i_sensor])))
            if need_air:
                next_air = t  # flows follow the new fan state at once, as in the reference solver
    if k < out.size and abs(out[k] - t) < 1e-6:
        out_y[:n_nodes, k], out_y[n_nodes:, k] = x, books
        fans[k], airs[k] = fan, getattr(network, "air", None)
        k += 1
    return HybridRun(t=out[:k].copy(), y=out_y[:, :k], fan=fans[:k], air=airs[:k], events=events,
                     y_end=np.concatenate([x, books]), n_rhs=calls, air_updates=updates)
