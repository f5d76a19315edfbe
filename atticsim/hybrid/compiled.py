"""The compiled fast solver: exact discretisation of the network with a frozen propagator, compiled.

Between switching events and airflow updates the fan state and the air flows are fixed and the node
temperatures x obey dx/dt = f(x, u(t)). The run is cut into segments on a grid of ``segment`` seconds,
halved where the error check asks (and cut at the weather samples, so that the forcing u is linear on
each). On a segment starting at x0, z = x - x0 obeys

    dz/ds = J z + r(s),      r(s) = f(x0 + z, u) - J z,

with J the Jacobian of f at the last linearisation (finite differences). The remainder r (what the frozen
linear model misses) is taken as the quadratic in time through its true values at the segment's start,
middle and end, r = a + b s + c s^2 with a = f(x0, u0): an exponential integrator of Lobatto type (our
design), exact for a linear network. The segment is advanced exactly for that model with the blocks
[Phi, G0, G1, G2, G3] of :mod:`atticsim.hybrid.blocks` (Van Loan 1978):

    z(h) = G0 a + G1 b + 2 G2 c      (implicit through b and c: fixed point to ``tol_iter`` K).

The fixed point stops when its last change, or the error left that the contraction rate implies, is below
``tol_iter`` (at the first iteration the rate measured on earlier segments stands in, so that a segment
whose start was well predicted needs one iteration); the rates at the middle and the end, taken at the
previous iterate, are then carried to the accepted one by the linear model (J z), so that the next segment
starts from consistent rates. The iteration starts from the remainder's slope and curvature at the end of the
previous segment, the slope corrected at a weather sample by the forcing's change of slope there (through
df/du, one directional difference).

Error control (our design): a remainder linear between the ends would miss the middle by c h^2 / 4, an
error of about (2/3) h |c| h^2 / 4 = |c| h^3 / 6 in the nodes (the integral of the quadratic part it
misses). Above ``tol`` K the segment is halved and tried again (at once when, after two iterations, the
estimate is already eight times ``tol``); below an eighth of it the next segment may be twice as long
(for a segment cut short of the preferred length, by the grid after a switch, a weather sample or the
end, the estimate is first scaled to the preferred length by (h_pref / h)^3).
The quadratic actually taken errs far less than that estimate: the tests against the reference solver
measure it. After a switch the first segment starts at the grid spacing remembered from the previous
switch into the same fan state.

J and the cache of blocks built from it are kept per fan state from call to call, and renewed when a
segment's fixed point needs more than ``slow_iters`` iterations, when a node has moved ``drift`` K from
the linearisation state, after ``age`` seconds, or when the air flows differ by more than 5 %.

Outputs and event checks are evaluated inside each accepted segment on the output grid (at most 60 s
apart) from the same exact solution; the energy books, whose rates are f_b(x0) + J_b z + (the same
quadratic remainder fitted to the book rates), are integrated exactly with
int z = G0 z0 + G1 a + G2 b + 2 G3 c. Where the sensor reaches its switching level between two check
instants, the bracket is narrowed on the segment's exact solution by a binary descent on the doubling
chain down to its base step (under a second), and the crossing is the root of a cubic Hermite
interpolant of the sensor's exact values and slopes over that step (error of order h^4, far below a
millisecond); the state there comes from the Taylor series of the segment's solution. (A crossing and a
return within one check step are not seen, as in the other solvers.)

The right-hand side is :func:`atticsim.network.kernel.rhs`, a compiled mirror of
:meth:`atticsim.network.model.AtticNetwork.derivatives` (tests hold the two equal). With the simple
airflow form the switch loop is compiled too (:func:`run_simple`); with the pressure balance the Python
driver :func:`integrate_compiled` re-solves the airflow between compiled calls. The reference solver
(``atticsim.hybrid.events.integrate``) stays the accuracy standard.
"""

from __future__ import annotations

import math

import numba as nb
import numpy as np

from atticsim import jitcache
from atticsim.hybrid.blocks import (BLOCKS, base_step, block_mv, block_mv_add, blocks_for, chain_into, matmul, matvec,
                                    taylor)
from atticsim.hybrid.events import HybridRun
from atticsim.hybrid.fast import FD_STEP  # the Python solvers' finite-difference step
from atticsim.network import kernel

jitcache.route()  # this module's compiled functions cache in atticsim's own folder (atticsim.jitcache)

#: Largest spacing of the sensor checks inside a segment [s] (a crossing and a return within less than
#: this is not seen; the Python solvers check at the same spacing).
CHECK_STEP = 60.0
#: Longest segment [s] (rounded down to a multiple of the output step; weather samples, switches and the
#: error control cut segments shorter).
SEGMENT = 1200.0
#: Time over which the forcing's change of slope at a weather sample is differenced [s] (the forcing
#: moves by well under a sample's change over it).
KINK_SPAN = 60.0
#: Blocks kept per linearisation (step lengths met repeatedly: segment, half segment, check step...).
_CACHE = 64

#: Forcing channels the Python loop reads for the airflow.
_PRESSURE, _T_ROOM = kernel.FORCING_BASE.index("pressure"), kernel.FORCING_BASE.index("temp_room")

# Status codes of :func:`advance` (and FULL of :func:`run_simple`: its interval arrays are full).
DONE, SWITCH, OFF_GRID, FAILED, FULL = 0, 1, -1, -2, 2


@nb.njit(cache=True, _nrt=False)
def _forcing_at(values, step, t, u):
    """Forcing channels at t [s], linear between samples, clamped at the ends (as Forcing.at)."""
    n = values.shape[1]
    x = t / step
    i = int(x)
    if i >= n - 1 or i < 0:
        j = n - 1 if i >= n - 1 else 0
        for c in range(values.shape[0]):
            u[c] = values[c, j]
    else:
        frac = x - i
        for c in range(values.shape[0]):
            u[c] = values[c, i] + frac * (values[c, i + 1] - values[c, i])


@nb.njit(cache=True, _nrt=False)
def _slope_jump(values, step, t, u, out):
    """When t [s] is a forcing sample: out = u + KINK_SPAN (u'_after - u'_before), the forcing moved by
    its change of slope there (slopes of the linear interpolation, zero beyond the ends), and True; else
    False."""
    x = t / step
    i = int(math.floor(x + 0.5))
    if abs(x - i) > 1e-9:
        return False
    n = values.shape[1]
    for c in range(values.shape[0]):
        before = (values[c, i] - values[c, i - 1]) / step if 0 < i < n else 0.0
        after = (values[c, i + 1] - values[c, i]) / step if 0 <= i < n - 1 else 0.0
        out[c] = u[c] + KINK_SPAN * (after - before)
    return True


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
    """Index of the blocks over h in the cache, computing them when missing (the cache wraps around).
    The search runs from the newest entry: the lengths just used are the likely ones."""
    for i in range(count[0] - 1, -1, -1):
        if abs(lens[i] - h) < 1e-9:
            return i
    i = count[0]
    blocks_for(jac, h, s0, links, store[i])
    lens[i] = h
    count[0] += 1
    return i


@nb.njit(cache=True, _nrt=False)
def _assign(dst, src):
    """dst[:] = src, element by element (a slice assignment makes a view, with reference counting)."""
    for i in range(dst.size):
        dst[i] = src[i]


@nb.njit(cache=True, _nrt=False)
def _zero(dst):
    """dst[:] = 0."""
    for i in range(dst.size):
        dst[i] = 0.0


@nb.njit(cache=True, _nrt=False)
def _shift_rates(jac, jac_b, z_new, z_old, f, dz, nodes):
    """f += [J; J_b] (z_new - z_old): rates (nodes, then books) taken at z_old carried to z_new by the
    linearisation (dz: work array); the books' part only when ``nodes`` is False."""
    n = dz.size
    for i in range(n):
        dz[i] = z_new[i] - z_old[i]
    if nodes:
        for i in range(n):
            s = 0.0
            for m in range(n):
                s += jac[i, m] * dz[m]
            f[i] += s
    for i in range(jac_b.shape[0]):
        s = 0.0
        for m in range(n):
            s += jac_b[i, m] * dz[m]
        f[n + i] += s


@nb.njit(cache=True, _nrt=False)
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
def _taylor_state(jac, z, v0, v1, c, delta, z_out, int_out):
    """z(delta) and int_0^delta z of dz/ds = J z + v0 + v1 s + c s^2 from z(0) = z, by the Taylor series
    (delta under the chain's base step, ||J delta|| <= 1/4: 24 terms are far below rounding)."""
    n = z.size
    term = np.empty(n)
    nxt = np.empty(n)
    matvec(jac, z, term)
    for i in range(n):
        term[i] += v0[i]                     # z'(0)
        z_out[i] = z[i] + delta * term[i]
        int_out[i] = delta * z[i] + 0.5 * delta * delta * term[i]
    coef_z = delta                           # delta^m / m!
    coef_i = 0.5 * delta * delta             # delta^(m+1) / (m+1)!
    for m in range(2, 26):
        matvec(jac, term, nxt)
        if m == 2:
            for i in range(n):
                nxt[i] += v1[i]              # z'' = J z' + v1
        elif m == 3:
            for i in range(n):
                nxt[i] += 2.0 * c[i]         # z''' = J z'' + 2 c
        term[:] = nxt
        coef_z *= delta / m
        coef_i *= delta / (m + 1)
        for i in range(n):
            z_out[i] += coef_z * term[i]
            int_out[i] += coef_i * term[i]


@nb.njit(cache=True, _nrt=False)
def _from_start(blk, a, b, c, out):
    """z over a step from z = 0 with remainder a + b s + c s^2: G0 a + G1 b + 2 G2 c."""
    block_mv(blk, 1, a, out)
    block_mv_add(blk, 2, b, 1.0, out)
    block_mv_add(blk, 3, c, 2.0, out)


@nb.njit(cache=True, _nrt=False)
def _with_g0a(blk, g0a, b, c, out):
    """:func:`_from_start` with G0 a given (the same sums): g0a + G1 b + 2 G2 c."""
    _assign(out, g0a)
    block_mv_add(blk, 2, b, 1.0, out)
    block_mv_add(blk, 3, c, 2.0, out)


@nb.njit(cache=True, _nrt=False)
def _step_on(blk, z, acc, v0, v1, c, z_out, acc_out):
    """One step on from (z, int z) with the remainder v0 + v1 s + c s^2 from the step's start:
    z' = Phi z + G0 v0 + G1 v1 + 2 G2 c and int z' = int z + G0 z + G1 v0 + G2 v1 + 2 G3 c."""
    block_mv(blk, 0, z, z_out)
    block_mv_add(blk, 1, v0, 1.0, z_out)
    block_mv_add(blk, 2, v1, 1.0, z_out)
    block_mv_add(blk, 3, c, 2.0, z_out)
    _assign(acc_out, acc)
    block_mv_add(blk, 1, z, 1.0, acc_out)
    block_mv_add(blk, 2, v0, 1.0, acc_out)
    block_mv_add(blk, 3, v1, 1.0, acc_out)
    block_mv_add(blk, 4, c, 2.0, acc_out)


@nb.njit(cache=True, _nrt=False)
def _expanded(blk, a, b, c, p0, p1, p2, q0, q1, q2):
    """Per-segment vectors of a step from sigma with the remainder a + b s + c s^2 from the segment's start:
    the step adds P0 + sigma P1 + sigma^2 P2 to Phi z and Q0 + sigma Q1 + sigma^2 Q2 to G0 z in int z
    (P0 = G0 a + G1 b + 2 G2 c, P1 = G0 b + 2 G1 c, P2 = G0 c; Q with G1, G2, G3 in place of G0, G1, G2)."""
    _from_start(blk, a, b, c, p0)
    block_mv(blk, 1, b, p1)
    block_mv_add(blk, 2, c, 2.0, p1)
    block_mv(blk, 1, c, p2)
    block_mv(blk, 2, a, q0)
    block_mv_add(blk, 3, b, 1.0, q0)
    block_mv_add(blk, 4, c, 2.0, q0)
    block_mv(blk, 2, b, q1)
    block_mv_add(blk, 3, c, 2.0, q1)
    block_mv(blk, 2, c, q2)


@nb.njit(cache=True)
def _relinearise(x, u, t, fan, air, prm, planes, ints, heat, f0, lin, q_step, unit_halvings, segment):
    """A new linearisation at (x, u) into ``lin``: the Jacobian, its base step s0 (q_step / 2^k with
    ||J s0|| <= 1/4), the doubling chain, an empty block cache."""
    jac, jac_b, links, _, _, meta, cnt, x_lin, air_lin, _ = lin
    n = x.size
    jac_all = np.empty((f0.size, n))
    _jacobian(x, u, fan, air, prm, planes, ints, heat, f0, jac_all)
    jac[:, :] = jac_all[:n]
    jac_b[:, :] = jac_all[n:]
    s0, _ = base_step(jac, q_step, unit_halvings)
    # links up to the longest length asked for (segment, or two check steps): its highest binary digit
    levels = min(int(np.floor(np.log2(max(segment, 2.0 * q_step) / s0) + 1e-9)), links.shape[0] - 1)
    chain_into(jac, s0, levels, links)
    meta[0], meta[1], meta[2], meta[3] = 1.0, s0, levels, t
    x_lin[:] = x
    air_lin[:] = air
    cnt[0] = 0     # block cache: empty
    cnt[1] = -1    # J_b G0(q): to be formed


@nb.njit(cache=True, _nrt=False)
def _air_close(air, air_lin):
    """The held air flows within 5 % of those at the linearisation (the propagator need only be near the
    true Jacobian: each segment's remainder is matched to the true derivatives)."""
    for i in range(air.size):
        if abs(air[i] - air_lin[i]) > 0.05 * max(abs(air[i]), abs(air_lin[i])) + 1e-12:
            return False
    return True


@nb.njit(cache=True, _nrt=False)
def _max_change(p, q):
    """max |p - q|, NaN when any is NaN (a diverging iteration never counts as converged)."""
    change = 0.0
    for i in range(p.size):
        d = abs(p[i] - q[i])
        if not d <= change:
            change = d
    return change


@nb.njit(cache=True)
def advance(t, t_end, origin, segment, q_step, x, books, fan, air, prm, planes, ints, heat,
            f_values, f_step, out_t, k, out_y, i_sensor, level, direction, tol, tol_iter, drift, age,
            unit_halvings, lin, after_switch, slow_iters):
    """Advance from t to t_end (fan state and air flows fixed) or to the first switching crossing.

    ``lin`` (:func:`new_linearisation`) carries the linearisation and its block cache from call to call
    (one per fan state); it is renewed when the nodes have moved ``drift`` K from it, after ``age`` s or
    when the air flows differ by more than 5 %. ``after_switch``: the state moves fast, start with short
    segments.

    x (nodes) and books are updated in place; outputs are written into the columns out_y[:, k...] (one per
    output instant). Returns (status, t, k, n_rhs, n_jacobians, n_rejected, n_segments): status DONE at
    t_end, SWITCH at a located crossing (t its instant), OFF_GRID when an output instant does not fall on
    the check grid, FAILED when a segment's end does not converge even at half a second.
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
    jac, jac_b, links, store, lens, meta, cnt, x_lin, air_lin, k_q = lin
    a = np.empty(n)
    b = np.zeros(n)
    c = np.zeros(n)
    b_prev = np.zeros(n)
    c_prev = np.zeros(n)
    z1 = np.empty(n)
    zm = np.empty(n)
    g0a = np.empty(n)
    g0a_m = np.empty(n)
    z1n = np.empty(n)
    zmn = np.empty(n)
    xe = np.empty(n)
    rm = np.empty(n)
    r1 = np.empty(n)
    bb = np.empty(nb_)
    cb = np.empty(nb_)
    zs = np.empty(n)
    zi = np.empty(n)
    zt = np.empty(n)
    it_ = np.empty(n)
    v0 = np.empty(n)
    v1 = np.empty(n)
    tmp = np.empty(n)
    yb = np.empty(nb_)
    ybt = np.empty(nb_)
    p0 = np.empty(n)
    p1 = np.empty(n)
    p2 = np.empty(n)
    q0 = np.empty(n)
    q1 = np.empty(n)
    q2 = np.empty(n)
    r0 = np.empty(nb_)
    r1b = np.empty(nb_)
    r2 = np.empty(nb_)
    sub = np.empty((BLOCKS, n, n))
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
    if not (meta[0] > 0.0 and _max_change(x, x_lin) <= drift and t - meta[3] <= age and _air_close(air, air_lin)):
        _relinearise(x, u0, t, fan, air, prm, planes, ints, heat, f0, lin, q_step, unit_halvings, segment)
        n_rhs += n
        n_jac += 1
    s0 = meta[1]
    chain_ = links[:int(meta[2]) + 1]
    j_pref = 0
    iters = 0
    if after_switch:
        # the state moves fast after a switch: start at the spacing remembered from the previous switch into
        # this fan state (about two check steps the first time), and let the segments grow
        start = meta[4] if meta[4] > 0.0 else 2.0 * q_step
        while segment / 2.0**j_pref > start and j_pref < 40:
            j_pref += 1
    first_after_switch = after_switch
    err = 0.0
    eta = 1.0

    while t < t_end - 1e-9:
        # renew the linearisation when the nodes have moved or it is old
        if _max_change(x, x_lin) > drift or t - meta[3] > age or iters > slow_iters:
            _relinearise(x, u0, t, fan, air, prm, planes, ints, heat, f0, lin, q_step, unit_halvings, segment)
            n_rhs += n
            n_jac += 1
            s0 = meta[1]
            chain_ = links[:int(meta[2]) + 1]
        if cnt[0] > _CACHE - 28:
            cnt[0] = 0  # full: start over (a segment, halved down to 1 s, needs at most 26 entries)
            cnt[1] = -1
        # segment end: the next instant of the grid of the preferred length (segment / 2^j, nested in the
        # segment grid, so that lengths repeat and their blocks come from the cache), a weather sample or
        # the end
        h_pref = segment / 2.0**j_pref
        t_pref = origin + (math.floor((t - origin) / h_pref + 1e-9) + 1.0) * h_pref
        t_w = (math.floor(t / f_step + 1e-9) + 1.0) * f_step
        h = min(t_pref, t_w, t_end) - t
        _assign(a, f0)
        if n_seg > 0 and _slope_jump(f_values, f_step, t, u0, um):
            # at a weather sample the forcing's slope changes, and the remainder's slope with it by
            # df/du (u'_after - u'_before): one directional difference over KINK_SPAN carries the prediction
            # across the kink (a prediction only: the fixed point still matches the true rates)
            kernel.rhs(x, um, fan, air, prm, planes, ints, heat, fm)
            n_rhs += 1
            for i in range(n):
                b_prev[i] += (fm[i] - f0[i]) / KINK_SPAN
        # --- the segment: fixed point for the remainder's b and c (true values at its middle and end), then
        # the error check; halved until accepted
        while True:
            blk = store[_lookup(h, lens, store, cnt, jac, s0, chain_)]
            blk_m = store[_lookup(0.5 * h, lens, store, cnt, jac, s0, chain_)]
            _assign(b, b_prev)
            _assign(c, c_prev)
            block_mv(blk, 1, a, g0a)        # G0 a over h and h / 2: fixed through the iterations
            block_mv(blk_m, 1, a, g0a_m)
            _with_g0a(blk, g0a, b, c, z1)
            _with_g0a(blk_m, g0a_m, b, c, zm)
            _forcing_at(f_values, f_step, t + h, u1)
            _forcing_at(f_values, f_step, t + 0.5 * h, um)
            converged = False
            change_prev = math.inf
            # the error the first iteration leaves is estimated with the contraction of earlier segments
            # (1 at the start of a call: no estimate yet)
            eta = max(eta, 1e-16) ** 0.8
            for iters in range(1, 31):
                for i in range(n):
                    xe[i] = x[i] + z1[i]
                kernel.rhs(xe, u1, fan, air, prm, planes, ints, heat, f1)
                for i in range(n):
                    xe[i] = x[i] + zm[i]
                kernel.rhs(xe, um, fan, air, prm, planes, ints, heat, fm)
                n_rhs += 2
                matvec(jac, z1, r1)
                matvec(jac, zm, rm)
                for i in range(n):
                    r1[i] = f1[i] - r1[i]
                    rm[i] = fm[i] - rm[i]
                    # the quadratic through r(0) = a, r(h/2) = rm, r(h) = r1
                    b[i] = (4.0 * rm[i] - r1[i] - 3.0 * a[i]) / h
                    c[i] = 2.0 * (r1[i] - 2.0 * rm[i] + a[i]) / (h * h)
                if iters >= 2 and h > 1.0:
                    # far outside the tolerance already: halve without converging (rejection is sure
                    # enough, and a segment too long also converges slowly)
                    err = 0.0
                    for i in range(n):
                        err = max(err, abs(c[i]))
                    if err * h * h * h / 6.0 > 8.0 * tol:
                        break
                _with_g0a(blk, g0a, b, c, z1n)
                _with_g0a(blk_m, g0a_m, b, c, zmn)
                change = max(_max_change(z1n, z1), _max_change(zmn, zm))
                # converged when the change, or the error left estimated from the contraction rate
                # theta = change / change_prev, eta change with eta = theta / (1 - theta), is below tol_iter;
                # at the first iteration eta is the last one measured, raised to the power 0.8 per try of a
                # segment so that it drifts back towards 1 until measured again (the stopping rule of simplified Newton
                # iterations and its carried rate, Hairer & Wanner, Solving ODEs II, sect. IV.8; from memory)
                if iters >= 2:
                    theta = change / change_prev
                    eta = theta / (1.0 - theta) if theta < 1.0 else 1.0
                if change < tol_iter or eta * change < tol_iter:
                    converged = True
                    # the rates were taken at the previous iterate: carry them to the accepted one by the
                    # linear model (the next segment starts from f1)
                    _shift_rates(jac, jac_b, z1n, z1, f1, r1, True)
                    _shift_rates(jac, jac_b, zmn, zm, fm, rm, False)  # (only the middle's book rates are used)
                _assign(z1, z1n)
                _assign(zm, zmn)
                if converged:
                    break
                change_prev = change
                if not change < 1e6:
                    break
            if not converged and h < 0.5:
                return FAILED, t, k, n_rhs, n_jac, n_rej, n_seg
            if converged:
                # error check: a remainder linear between the ends would miss the middle by c h^2 / 4, an
                # error of about (2/3) h |c| h^2 / 4 in the nodes; the quadratic taken here errs far less
                err = 0.0
                for i in range(n):
                    err = max(err, abs(c[i]))
                err *= h * h * h / 6.0
                if err <= tol or h <= 1.0:
                    n_seg += 1
                    # the error this curvature gives over the preferred length: a segment cut short (by the
                    # grid after a switch, a weather sample or the end) errs less by (h / h_pref)^3 and on
                    # its own would let the next segment double too soon
                    h_pref = segment / 2.0**j_pref
                    err_pref = err * (h_pref / h) ** 3 if h < h_pref else err
                    if first_after_switch:
                        # where the next switch into this state starts: this spacing, twice it when it was
                        # the first try and far inside the tolerance (a start that is too long costs rejected
                        # segments, one too short a few more segments)
                        grow = n_rej == 0 and err_pref < tol / 512.0
                        meta[4] = h_pref * (2.0 if grow else 1.0)
                        first_after_switch = False
                    # next: twice as long when well inside the tolerance (error ~ h^3)
                    if err_pref < 0.125 * tol and j_pref > 0:
                        j_pref -= 1
                    break
            n_rej += 1
            h = 0.5 * h
            while segment / 2.0**j_pref > h + 1e-9 and j_pref < 40:
                j_pref += 1
        # the books' rates: the same quadratic remainder through their values at the start, middle and end
        matvec(jac_b, z1, bb)
        matvec(jac_b, zm, cb)
        for i in range(nb_):
            rb1 = f1[n + i] - bb[i]
            rbm = fm[n + i] - cb[i]
            bb[i] = (4.0 * rbm - rb1 - 3.0 * f0[n + i]) / h
            cb[i] = 2.0 * (rb1 - 2.0 * rbm + f0[n + i]) / (h * h)
        # --- outputs and sensor checks on the check grid inside (t, t + h]. Steps of q_step from sigma:
        # z(sigma + q) = Phi z + P0 + sigma P1 + sigma^2 P2 and J_b int z grows by K z + R0 + sigma R1
        # + sigma^2 R2 (the remainder r(sigma) = a + b sigma + c sigma^2 expanded; P, R per segment, K per
        # linearisation), so that an output instant costs two matrix-vector products.
        first = origin + (math.floor((t - origin) / q_step + 1e-9) + 1.0) * q_step - t
        i_q = _lookup(q_step, lens, store, cnt, jac, s0, chain_)
        blk_q = store[i_q]
        if i_q != cnt[1]:
            matmul(jac_b, blk_q[1], k_q)  # K = J_b G0(q)
            cnt[1] = i_q
        expanded = first + q_step < h - 1e-6
        if expanded:
            _expanded(blk_q, a, b, c, p0, p1, p2, q0, q1, q2)
            matvec(jac_b, q0, r0)
            matvec(jac_b, q1, r1b)
            matvec(jac_b, q2, r2)
        sigma = 0.0
        _zero(zs)
        _zero(yb)
        g_prev = (x[i_sensor] - level) * direction
        crossed = False
        step = 0.0
        last = False
        while not last:
            step = first if sigma == 0.0 else q_step
            if sigma + step >= h - 1e-6:
                step = h - sigma
                last = True
            if expanded and abs(step - q_step) < 1e-9:
                # a check step from sigma by the expansion (at sigma = 0, z = 0: z = P0, J_b int z = R0); the
                # segment's end keeps z1 itself
                if sigma == 0.0:
                    _assign(zt, p0)
                    _assign(ybt, r0)
                else:
                    if last:
                        _assign(zt, z1)
                    else:
                        block_mv(blk_q, 0, zs, zt)
                    matvec(k_q, zs, ybt)
                    s2 = sigma * sigma
                    if not last:
                        for i in range(n):
                            zt[i] += p0[i] + sigma * p1[i] + s2 * p2[i]
                    for i in range(nb_):
                        ybt[i] += yb[i] + r0[i] + sigma * r1b[i] + s2 * r2[i]
            elif last:
                # the segment's end: straight from the h blocks (int z = G1 a + G2 b + 2 G3 c)
                _assign(zt, z1)
                block_mv(blk, 2, a, it_)
                block_mv_add(blk, 3, b, 1.0, it_)
                block_mv_add(blk, 4, c, 2.0, it_)
                matvec(jac_b, it_, ybt)
            else:
                # the first step (to the check grid) from z = 0: G0 a + G1 b + 2 G2 c, int G1 a + G2 b + 2 G3 c
                blk_f = store[_lookup(step, lens, store, cnt, jac, s0, chain_)]
                _from_start(blk_f, a, b, c, zt)
                block_mv(blk_f, 2, a, it_)
                block_mv_add(blk_f, 3, b, 1.0, it_)
                block_mv_add(blk_f, 4, c, 2.0, it_)
                matvec(jac_b, it_, ybt)
            s_new = sigma + step
            if direction != 0:
                g_new = (x[i_sensor] + zt[i_sensor] - level) * direction
                if g_prev < 0.0 <= g_new:
                    crossed = True
                    break
                g_prev = g_new
            now = t + s_new
            while k < n_out and out_t[k] <= now + 1e-6:
                if abs(out_t[k] - now) > 1e-6:
                    return OFF_GRID, t, k, n_rhs, n_jac, n_rej, n_seg
                for i in range(n):
                    out_y[i, k] = x[i] + zt[i]
                for i in range(nb_):
                    out_y[n + i, k] = (books[i] + (f0[n + i] + (0.5 * bb[i] + cb[i] / 3.0 * s_new) * s_new) * s_new
                                       + ybt[i])
                k += 1
            _assign(zs, zt)
            _assign(yb, ybt)
            sigma = s_new
        if not crossed:
            for i in range(nb_):
                books[i] = books[i] + (f0[n + i] + (0.5 * bb[i] + cb[i] / 3.0 * h) * h) * h + ybt[i]
            for i in range(n):
                x[i] += z1[i]
            t = t + h
            _assign(f0, f1)
            _assign(u0, u1)
            for i in range(n):
                b_prev[i] = b[i] + 2.0 * c[i] * h   # the remainder's slope and curvature carried on
                c_prev[i] = c[i]
            continue
        # --- locate the crossing in (sigma, sigma + step]. Binary descent on the doubling chain: from the
        # longest link that fits down to the base step, step on by a link when the sensor stays short of its
        # level at the link's end (so the bracket's lower end moves up and the crossing stays in the
        # bracket), then a cubic Hermite root in the last base step. int z is kept from sigma on (the
        # books' part up to sigma is yb).
        s_hi = sigma + step
        _zero(zi)
        g_lo = (x[i_sensor] + zs[i_sensor] - level) * direction
        lev = int(meta[2])
        while lev > 0 and s0 * 2.0**lev > step + 1e-9:
            lev -= 1
        while lev >= 1:
            hl = s0 * 2.0**lev
            if sigma + hl < s_hi - 1e-9:
                for i in range(n):
                    v0[i] = a[i] + (b[i] + c[i] * sigma) * sigma
                    v1[i] = b[i] + 2.0 * c[i] * sigma
                _step_on(chain_[lev], zs, zi, v0, v1, c, zt, it_)
                g_hi = (x[i_sensor] + zt[i_sensor] - level) * direction
                if g_hi < 0.0:
                    _assign(zs, zt)
                    _assign(zi, it_)
                    g_lo = g_hi
                    sigma += hl
            lev -= 1
        base = chain_[0]
        while True:
            hs = min(s0, s_hi - sigma)
            if abs(hs - s0) < 1e-12:
                sb = base
            else:
                taylor(jac, hs, sub)
                sb = sub
            for i in range(n):
                v0[i] = a[i] + (b[i] + c[i] * sigma) * sigma
                v1[i] = b[i] + 2.0 * c[i] * sigma
            _step_on(sb, zs, zi, v0, v1, c, zt, it_)
            g_hi = (x[i_sensor] + zt[i_sensor] - level) * direction
            if g_hi >= 0.0 or sigma + hs >= s_hi - 1e-9:
                # slopes from the model: z' = J z + r(s)
                s_end = sigma + hs
                d_lo = v0[i_sensor]
                d_hi = a[i_sensor] + (b[i_sensor] + c[i_sensor] * s_end) * s_end
                for j in range(n):
                    d_lo += jac[i_sensor, j] * zs[j]
                    d_hi += jac[i_sensor, j] * zt[j]
                theta = _cubic_root(g_lo, d_lo * direction, max(g_hi, 0.0), d_hi * direction, hs)
                delta = theta * hs
                _taylor_state(jac, zs, v0, v1, c, delta, zt, tmp)
                for i in range(n):
                    zi[i] += tmp[i]
                sigma += delta
                break
            _assign(zi, it_)
            _assign(zs, zt)
            g_lo = g_hi
            sigma += hs
        for i in range(nb_):
            acc = 0.0
            for j in range(n):
                acc += jac_b[i, j] * zi[j]
            books[i] = (books[i] + (f0[n + i] + (0.5 * bb[i] + cb[i] / 3.0 * sigma) * sigma) * sigma + yb[i]
                        + acc)
        for i in range(n):
            x[i] += zt[i]
        return SWITCH, t + sigma, k, n_rhs, n_jac, n_rej, n_seg
    return DONE, t, k, n_rhs, n_jac, n_rej, n_seg



@nb.njit(cache=True)
def run_simple(t, t_end, origin, segment, q_step, x, books, fan, after, prm, planes, ints, heat, f_values,
               f_step, out_t, k, out_y, out_fan, i_sensor, levels, directions, simple, tol, tol_iter, drift, age,
               unit_halvings, lin_off, lin_on, slow_iters, iv_t, iv_k, ev_t, ev_s):
    """The switch loop of :func:`integrate_compiled` for the simple airflow form, compiled: :func:`advance`
    from switch to switch with the held flows of the fan state (``simple[j]``, the air vector of fan state
    j, 0 off, 1 on).

    ``levels[j]``, ``directions[j]``: the switching level and direction that end fan state j.
    Interval i (a stretch of one fan state) starts at iv_t[i], output row iv_k[i]; the fan state alternates
    from ``fan``. Switch e is at ev_t[e] with the sensor at ev_s[e].
    Returns (status, t, k, fan, after, n_intervals, n_switches, n_rhs): status DONE at t_end, FULL when
    the interval arrays are full (call again to go on), or advance's OFF_GRID or FAILED.
    """
    n_iv = 0
    n_ev = 0
    calls = 0
    while t < t_end - 1e-9:
        if n_iv >= iv_t.size or n_ev >= ev_t.size:
            return FULL, t, k, fan, after, n_iv, n_ev, calls
        iv_t[n_iv] = t
        iv_k[n_iv] = k
        n_iv += 1
        j = 1 if fan else 0
        k0 = k
        status, t, k, n_rhs, _, _, _ = advance(
            t, t_end, origin, segment, q_step, x, books, 1.0 if fan else 0.0, simple[j], prm, planes, ints, heat,
            f_values, f_step, out_t, k, out_y, i_sensor, levels[j], directions[j], tol, tol_iter, drift, age,
            unit_halvings, lin_on if fan else lin_off, after, slow_iters)
        calls += n_rhs
        for i in range(k0, k):
            out_fan[i] = fan
        if status == OFF_GRID or status == FAILED:
            return status, t, k, fan, after, n_iv, n_ev, calls
        after = status == SWITCH
        if after:
            fan = not fan
            ev_t[n_ev] = t
            ev_s[n_ev] = x[i_sensor]
            n_ev += 1
    return DONE, t, k, fan, after, n_iv, n_ev, calls


jitcache.restore()

#: Longest doubling chain kept (base steps down to 2^-40 of the segment).
_MAX_LEVELS = 40
#: Fan-state intervals recorded per call of :func:`run_simple` (it is called again when they are full).
_INTERVALS = 4096


def new_linearisation(n_nodes: int, n_books: int) -> tuple:
    """Empty linearisation state for :func:`advance` (one per fan state, reused from call to call):
    (J, J_b, doubling chain, block cache, cache lengths, [valid, s0, levels, t, first step], [cache count,
    cache index of J_b G0(q)], nodes and air flows at the linearisation, J_b G0(q)); the first step
    (meta[4]) is the grid spacing a switch into this fan state starts at (0: none yet), kept across
    linearisations."""
    n, nb_ = n_nodes, n_books
    return (np.zeros((n, n)), np.zeros((nb_, n)), np.zeros((_MAX_LEVELS + 1, BLOCKS, n, n)),
            np.zeros((_CACHE, BLOCKS, n, n)), np.zeros(_CACHE), np.zeros(5), np.array([0, -1], dtype=np.int64),
            np.zeros(n), np.zeros(len(kernel.AIR_ORDER)), np.zeros((nb_, n)))


def _integrate_simple(network, t_end, fan, args) -> HybridRun | None:
    """The rest of :func:`integrate_compiled` for the simple airflow form: :func:`run_simple`, then the
    airflow states, events and per-row records the other solvers give, built from its interval arrays."""
    (origin, seg, q_step, x, books, packed, f_values, f_step, out, out_y, fans, i_sensor, controller, airflow,
     tol, tol_iter, drift, age, lins, slow_iters) = args
    n_nodes = x.size
    ends = [controller.next_switch(state) for state in (False, True)]  # what ends fan off, fan on
    levels = np.array([e[0] for e in ends], dtype=float)
    directions = np.array([e[1] for e in ends], dtype=np.int64)
    simple = np.array([kernel.air_vector(airflow.simple_state(running)) for running in (False, True)])
    size = _INTERVALS + 2
    iv_t, iv_k = np.empty(size), np.empty(size, dtype=np.int64)
    ev_t, ev_s = np.empty(size), np.empty(size)
    airs = [None] * out.size
    events, updates = [], []
    run_starts, run_states = [], []  # the runs of one held state in airs (HybridRun.air_runs)
    t, k, after, calls = origin, 0, False, 0
    state = None
    while True:
        fan0 = fan
        status, t, k, fan, after, n_iv, n_ev, n_rhs = run_simple(
            t, t_end, origin, seg, q_step, x, books, fan, after, packed.prm, packed.planes, packed.ints,
            packed.heat, f_values, f_step, out, k, out_y, fans, i_sensor, levels, directions, simple, tol,
            tol_iter, drift, age, 6, lins[False], lins[True], slow_iters, iv_t, iv_k, ev_t, ev_s)
        calls += n_rhs
        if status in (OFF_GRID, FAILED):
            return None  # as integrate_compiled: the caller runs the window solver
        running = fan0
        for i in range(n_iv):
            state = airflow.simple_state(running and airflow.enabled)  # as solve()
            k0, k1 = int(iv_k[i]), (int(iv_k[i + 1]) if i + 1 < n_iv else k)
            if k1 > k0:
                airs[k0:k1] = [state] * (k1 - k0)
                if not run_states or run_states[-1] is not state:
                    run_starts.append(k0)
                    run_states.append(state)
            updates.append((float(iv_t[i]), state))
            running = not running
        events.extend((float(ev_t[e]), bool(fan0) != (e % 2 == 0), float(ev_s[e])) for e in range(n_ev))
        if status != FULL:
            break
    network.air = state if state is not None else network.air
    if k < out.size and abs(out[k] - t) < 1e-6:
        out_y[:n_nodes, k], out_y[n_nodes:, k] = x, books
        fans[k], airs[k] = fan, state  # (as the Python loop: the flows held last)
        if not run_states or run_states[-1] is not state:
            run_starts.append(k)
            run_states.append(state)
        k += 1
    starts = np.array(run_starts, dtype=np.int64)
    starts.setflags(write=False)
    return HybridRun(t=out[:k].copy(), y=out_y if k == out.size else out_y[:, :k].copy(), fan=fans[:k],
                     air=airs[:k], events=events, y_end=np.concatenate([x, books]), n_rhs=calls,
                     air_updates=updates, air_runs=(starts, run_states))


def grid_steps(output_times, t_start, max_segment=SEGMENT, check_step=CHECK_STEP):
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
                       segment=SEGMENT, check_step=CHECK_STEP, tol=5e-3, tol_iter=3e-5, drift=40.0,
                       age=21600.0, slow_iters=6, compiled_loop=True) -> HybridRun | None:
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
        Convergence of the fixed point for a segment's end [K]: the last change, or the error left estimated
        from the contraction rate (at the first iteration, the rate of earlier segments), below it.
    drift, age, slow_iters : float, float, int
        The linearisation (one per fan state, kept across switches) is renewed when a node has moved
        ``drift`` K from it, after ``age`` s, when a segment's fixed point needed more than ``slow_iters``
        iterations, or when the air flows differ from those it was made with by more than 5 %.
    compiled_loop : bool
        With the simple airflow form and a controller, run the switch loop compiled (:func:`run_simple`);
        False keeps it in Python, as for the balance form (the tests hold the two equal).

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
    out_y = np.empty((y.size, out.size))  # (variables, instants), as HybridRun.y
    fans = np.zeros(out.size, dtype=bool)
    airs = [None] * out.size
    events, updates = [], []
    f_values = np.ascontiguousarray(forcing.values, dtype=float)
    t, fan, k = float(t_start), bool(fan_on), 0
    next_air = t
    calls = 0
    air_vec = np.zeros(len(kernel.AIR_ORDER))
    lins = {False: new_linearisation(n_nodes, books.size), True: new_linearisation(n_nodes, books.size)}
    after_switch = False
    if compiled_loop and need_air and airflow.kind == "simple" and controller is not None:
        # the whole switch loop compiled (the simple form's flows need no Python solver)
        args = (float(t_start), seg, q_step, x, books, packed, f_values, float(forcing.step), out, out_y, fans,
                i_sensor, controller, airflow, tol, tol_iter, drift, age, lins, slow_iters)
        return _integrate_simple(network, float(t_end), fan, args)
    while t < t_end - 1e-9:
        if need_air and t >= next_air - 1e-9:
            # (the simple air changes do not depend on the attic temperature)
            t_attic = math.nan if airflow.kind == "simple" else float(network.mean_air(x))
            network.air = airflow.solve(t_attic, forcing.value(0, t), forcing.value(2, t), fan,
                                        with_depressurisation=True, pressure=forcing.value(_PRESSURE, t),
                                        temp_room=forcing.value(_T_ROOM, t))
            updates.append((t, network.air))
            air_vec = kernel.air_vector(network.air)
            next_air = (math.floor(t / update + 1e-9) + 1) * update if math.isfinite(update) else math.inf
        stop = min(t_end, next_air)
        level, direction = controller.next_switch(fan) if controller is not None else (0.0, 0)
        k0 = k
        status, t, k, n_rhs, _, _, _ = advance(
            t, stop, float(t_start), seg, q_step, x, books, 1.0 if fan else 0.0, air_vec,
            packed.prm, packed.planes, packed.ints, packed.heat, f_values, float(forcing.step), out, k, out_y,
            i_sensor, float(level), int(direction), tol, tol_iter, drift, age, 6, lins[fan], after_switch,
            slow_iters)
        after_switch = status == SWITCH
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
    return HybridRun(t=out[:k].copy(), y=out_y if k == out.size else out_y[:, :k].copy(), fan=fans[:k],
                     air=airs[:k], events=events, y_end=np.concatenate([x, books]), n_rhs=calls, air_updates=updates)
