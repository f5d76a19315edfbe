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

The right-hand side is :func:`atticsim.network.kernel.rhs`, the network's one source of heat flows.
:class:`CompiledStepper` is this solver's face to the hybrid driver (:mod:`atticsim.hybrid.driver`), which
owns the events, the airflow updates and the records; the reference stepper
(:mod:`atticsim.hybrid.reference`, LSODA) stays the accuracy standard.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numba as nb
import numpy as np

from atticsim import jitcache
from atticsim.hybrid.blocks import (BLOCKS, base_step, block_mv, block_mv_add, blocks_for, chain_into, matmul, matvec,
                                    taylor)
from atticsim.hybrid.stepper import StepperFailed
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
#: Relative finite-difference step for the Jacobians (numerical choice, ours).
FD_STEP = 1e-4

# Status codes of :func:`advance`.
DONE, SWITCH, OFF_GRID, FAILED = 0, 1, -1, -2


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
        for i in range(n):
            term[i] = nxt[i]
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
    for i in range(n):  # element by element: a slice assignment compiles its shape checks' messages
        for j in range(n):
            jac[i, j] = jac_all[i, j]
    for i in range(jac_b.shape[0]):
        for j in range(n):
            jac_b[i, j] = jac_all[n + i, j]
    s0, _ = base_step(jac, q_step, unit_halvings)
    # links up to the longest length asked for (segment, or two check steps): its highest binary digit
    levels = min(int(np.floor(np.log2(max(segment, 2.0 * q_step) / s0) + 1e-9)), links.shape[0] - 1)
    chain_into(jac, s0, levels, links)
    meta[0], meta[1], meta[2], meta[3] = 1.0, s0, levels, t
    _assign(x_lin, x)
    _assign(air_lin, air)
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


class _Work(NamedTuple):
    """Scratch vectors of :func:`advance` (made once per call by :func:`_work`): the forcing at a segment's
    start, end and middle (u0, u1, um) and the rates there (f0, f1, fm); the remainder a + b s + c s^2 and the
    previous segment's b, c; the ends z1, zm and their next iterates; the outputs' vectors (zs, zt, yb, ybt,
    p*, q*, r*); the crossing's (zi, it_, v0, v1, tmp, sub)."""

    u0: np.ndarray
    u1: np.ndarray
    um: np.ndarray
    f0: np.ndarray
    f1: np.ndarray
    fm: np.ndarray
    a: np.ndarray
    b: np.ndarray
    c: np.ndarray
    b_prev: np.ndarray
    c_prev: np.ndarray
    z1: np.ndarray
    zm: np.ndarray
    g0a: np.ndarray
    g0a_m: np.ndarray
    z1n: np.ndarray
    zmn: np.ndarray
    xe: np.ndarray
    rm: np.ndarray
    r1: np.ndarray
    bb: np.ndarray
    cb: np.ndarray
    zs: np.ndarray
    zi: np.ndarray
    zt: np.ndarray
    it_: np.ndarray
    v0: np.ndarray
    v1: np.ndarray
    tmp: np.ndarray
    yb: np.ndarray
    ybt: np.ndarray
    p0: np.ndarray
    p1: np.ndarray
    p2: np.ndarray
    q0: np.ndarray
    q1: np.ndarray
    q2: np.ndarray
    r0: np.ndarray
    r1b: np.ndarray
    r2: np.ndarray
    sub: np.ndarray


@nb.njit(cache=True, inline="always")
def _work(n, nb_, n_u):
    """The scratch vectors of :func:`advance` for n nodes, nb_ books and n_u forcing channels."""
    n_tot = n + nb_
    return _Work(np.empty(n_u), np.empty(n_u), np.empty(n_u), np.empty(n_tot), np.empty(n_tot), np.empty(n_tot),
                 np.empty(n), np.zeros(n), np.zeros(n), np.zeros(n), np.zeros(n), np.empty(n), np.empty(n),
                 np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n),
                 np.empty(nb_), np.empty(nb_), np.empty(n), np.empty(n), np.empty(n), np.empty(n), np.empty(n),
                 np.empty(n), np.empty(n), np.empty(nb_), np.empty(nb_), np.empty(n), np.empty(n), np.empty(n),
                 np.empty(n), np.empty(n), np.empty(n), np.empty(nb_), np.empty(nb_), np.empty(nb_),
                 np.empty((BLOCKS, n, n)))


class _System(NamedTuple):
    """What the network's rates depend on besides its state: fan state, held air flows, packed parameters
    (:class:`atticsim.network.kernel.Packed`), the forcing's samples and their spacing [s]."""

    fan: float
    air: np.ndarray
    prm: np.ndarray
    planes: np.ndarray
    ints: np.ndarray
    heat: np.ndarray
    f_values: np.ndarray
    f_step: float


@nb.njit(cache=True, _nrt=False)
def _fixed_point(w, s, x, t, h, jac, jac_b, blk, blk_m, tol, tol_iter, eta):
    """One try of the segment [t, t + h]: the fixed point for the remainder's slope b and curvature c (its
    true values at the segment's middle and end), from the previous segment's.

    Returns (converged, iterations, contraction estimate eta, right-hand sides). Stops when the last change,
    or the error left that the contraction rate implies, is below tol_iter (the stopping rule of simplified
    Newton iterations and its carried rate, Hairer & Wanner, Solving ODEs II, sect. IV.8; from memory), or
    early when the segment is already far outside ``tol`` (rejection is sure: a segment too long also
    converges slowly). Compiled on its own without reference counting (it allocates nothing): inlined, each
    array it takes from the scratch and system tuples cost an atomic reference count at every try.
    """
    w_b, w_b_prev, w_c, w_c_prev, w_a, w_g0a = w.b, w.b_prev, w.c, w.c_prev, w.a, w.g0a
    w_g0a_m, w_z1, w_zm, w_u1, w_um, w_xe = w.g0a_m, w.z1, w.zm, w.u1, w.um, w.xe
    w_f1, w_fm, w_r1, w_rm, w_z1n, w_zmn = w.f1, w.fm, w.r1, w.rm, w.z1n, w.zmn
    fan, air, prm, planes, ints, heat, f_values, f_step = s  # once: each array taken out costs a reference
    n = x.size
    _assign(w_b, w_b_prev)
    _assign(w_c, w_c_prev)
    block_mv(blk, 1, w_a, w_g0a)        # G0 a over h and h / 2: fixed through the iterations
    block_mv(blk_m, 1, w_a, w_g0a_m)
    _with_g0a(blk, w_g0a, w_b, w_c, w_z1)
    _with_g0a(blk_m, w_g0a_m, w_b, w_c, w_zm)
    _forcing_at(f_values, f_step, t + h, w_u1)
    _forcing_at(f_values, f_step, t + 0.5 * h, w_um)
    converged = False
    change_prev = math.inf
    n_rhs = 0
    # the error the first iteration leaves is estimated with the contraction of earlier segments (1 at the
    # start of a call: no estimate yet), raised to the power 0.8 per try so that it drifts back towards 1
    eta = max(eta, 1e-16) ** 0.8
    iters = 0
    for iters in range(1, 31):
        for i in range(n):
            w_xe[i] = x[i] + w_z1[i]
        kernel.rhs(w_xe, w_u1, fan, air, prm, planes, ints, heat, w_f1)
        for i in range(n):
            w_xe[i] = x[i] + w_zm[i]
        kernel.rhs(w_xe, w_um, fan, air, prm, planes, ints, heat, w_fm)
        n_rhs += 2
        matvec(jac, w_z1, w_r1)
        matvec(jac, w_zm, w_rm)
        for i in range(n):
            w_r1[i] = w_f1[i] - w_r1[i]
            w_rm[i] = w_fm[i] - w_rm[i]
            # the quadratic through r(0) = a, r(h/2) = rm, r(h) = r1
            w_b[i] = (4.0 * w_rm[i] - w_r1[i] - 3.0 * w_a[i]) / h
            w_c[i] = 2.0 * (w_r1[i] - 2.0 * w_rm[i] + w_a[i]) / (h * h)
        if iters >= 2 and h > 1.0 and _largest(w_c) * h * h * h / 6.0 > 8.0 * tol:
            break
        _with_g0a(blk, w_g0a, w_b, w_c, w_z1n)
        _with_g0a(blk_m, w_g0a_m, w_b, w_c, w_zmn)
        change = max(_max_change(w_z1n, w_z1), _max_change(w_zmn, w_zm))
        # theta = change / change_prev, eta = theta / (1 - theta): the error left is about eta change
        if iters >= 2:
            theta = change / change_prev
            eta = theta / (1.0 - theta) if theta < 1.0 else 1.0
        if change < tol_iter or eta * change < tol_iter:
            converged = True
            # the rates were taken at the previous iterate: carry them to the accepted one by the linear model
            # (the next segment starts from f1; only the middle's book rates are used)
            _shift_rates(jac, jac_b, w_z1n, w_z1, w_f1, w_r1, True)
            _shift_rates(jac, jac_b, w_zmn, w_zm, w_fm, w_rm, False)
        _assign(w_z1, w_z1n)
        _assign(w_zm, w_zmn)
        if converged:
            break
        change_prev = change
        if not change < 1e6:
            break
    return converged, iters, eta, n_rhs


@nb.njit(cache=True, inline="always")
def _largest(c):
    """max |c_i|: with it, the error a remainder linear between the ends would leave (it misses the middle by
    c h^2 / 4, about (2/3) h |c| h^2 / 4 = |c| h^3 / 6 in the nodes; the quadratic taken errs far less)."""
    err = 0.0
    for i in range(c.size):
        err = max(err, abs(c[i]))
    return err


#: What :func:`_verdict` makes of a try of a segment.
_ACCEPT, _RETRY, _GIVE_UP = 0, 1, 2


@nb.njit(cache=True, _nrt=False)
def _verdict(converged, c, h, segment, j_pref, tol, first_after_switch, n_rej, meta):
    """What a try of the segment [t, t + h] (its fixed point, :func:`_fixed_point`) comes to: accepted when it
    converged within the error check (:func:`_largest`), else tried again at half the length, or given up when
    even half a second would not converge. ``j_pref`` indexes the preferred length segment / 2^j: twice as long
    next when well inside the tolerance (error ~ h^3), halved with each rejection. Returns (verdict, h, j_pref,
    first_after_switch). Compiled without reference counting: the caller looks up the try's blocks."""
    if not converged and h < 0.5:
        return _GIVE_UP, h, j_pref, first_after_switch
    if converged:
        err = _largest(c)
        err *= h * h * h / 6.0
        if err <= tol or h <= 1.0:
            # the error this curvature gives over the preferred length: a segment cut short (by the grid
            # after a switch, a weather sample or the end) errs less by (h / h_pref)^3 and on its own
            # would let the next segment double too soon
            h_pref = segment / 2.0**j_pref
            err_pref = err * (h_pref / h) ** 3 if h < h_pref else err
            if first_after_switch:
                # where the next switch into this state starts: this spacing, twice it when it was the
                # first try and far inside the tolerance (a start that is too long costs rejected segments,
                # one too short a few more segments)
                grow = n_rej == 0 and err_pref < tol / 512.0
                meta[4] = h_pref * (2.0 if grow else 1.0)
                first_after_switch = False
            if err_pref < 0.125 * tol and j_pref > 0:
                j_pref -= 1
            return _ACCEPT, h, j_pref, first_after_switch
    h = 0.5 * h
    while segment / 2.0**j_pref > h + 1e-9 and j_pref < 40:
        j_pref += 1
    return _RETRY, h, j_pref, first_after_switch


@nb.njit(cache=True, _nrt=False)
def _book_remainder(w, jac_b, h, n):
    """The books' rates f_b(x0) + J_b z + r_b(s): the same quadratic remainder r_b = f0 + bb s + cb s^2
    through their true values at the segment's start, middle and end."""
    w_z1, w_bb, w_zm, w_cb, w_f1, w_fm = w.z1, w.bb, w.zm, w.cb, w.f1, w.fm
    w_f0 = w.f0
    matvec(jac_b, w_z1, w_bb)
    matvec(jac_b, w_zm, w_cb)
    for i in range(w_bb.size):
        rb1 = w_f1[n + i] - w_bb[i]
        rbm = w_fm[n + i] - w_cb[i]
        w_bb[i] = (4.0 * rbm - rb1 - 3.0 * w_f0[n + i]) / h
        w_cb[i] = 2.0 * (rb1 - 2.0 * rbm + w_f0[n + i]) / (h * h)


@nb.njit(cache=True, inline="always")
def _check_blocks(t, h, origin, q_step, store, lens, cnt, jac, jac_b, k_q, s0, chain_):
    """The blocks the outputs and sensor checks on the check grid inside (t, t + h] need (found in the cache
    or computed: allocations, so here and not in :func:`_check_loop`): the first step's length to the grid,
    whether the full steps are expanded, the blocks of a full check step (and K = J_b G0(q), per block) and
    the first step's own blocks (unless it is a full check step on the grid or the segment's last)."""
    first = origin + (math.floor((t - origin) / q_step + 1e-9) + 1.0) * q_step - t
    i_q = _lookup(q_step, lens, store, cnt, jac, s0, chain_)
    blk_q = store[i_q]
    if i_q != cnt[1]:
        matmul(jac_b, blk_q[1], k_q)  # K = J_b G0(q)
        cnt[1] = i_q
    expanded = first + q_step < h - 1e-6
    own = not (first >= h - 1e-6 or (expanded and abs(first - q_step) < 1e-9))
    blk_f = store[_lookup(first, lens, store, cnt, jac, s0, chain_)] if own else blk_q
    return first, expanded, blk_q, blk_f


@nb.njit(cache=True, _nrt=False)
def _check_loop(w, x, books, t, h, q_step, first, expanded, blk, blk_q, blk_f, jac_b, k_q, out_t, k, out_y,
                i_sensor, level, direction):
    """The outputs and the sensor checks on the check grid inside (t, t + h], from the segment's exact
    solution (blocks from :func:`_check_blocks`). A check step from sigma by q_step costs two matrix-vector
    products: z(sigma + q) = Phi z + P0 + sigma P1 + sigma^2 P2 and J_b int z grows by K z + R0 + sigma R1 +
    sigma^2 R2 (the remainder r(sigma) = a + b sigma + c sigma^2 expanded; P, R per segment).

    Returns (status, crossed, sigma, step, k): status OFF_GRID when an output instant is off the check grid;
    when the sensor reached its level within the check step from sigma, crossed is True (w.zs and w.yb hold
    the state and the books' increment at sigma); else the outputs up to t + h are written. Compiled without
    reference counting (it allocates nothing): every array handed to an inlined helper, and every array of a
    tuple so handed, costs an atomic reference count and its release."""
    w_a, w_b, w_c, w_p0, w_p1, w_p2 = w.a, w.b, w.c, w.p0, w.p1, w.p2
    w_q0, w_q1, w_q2, w_r0, w_r1b, w_r2 = w.q0, w.q1, w.q2, w.r0, w.r1b, w.r2
    w_zs, w_yb, w_zt, w_f0, w_bb, w_cb = w.zs, w.yb, w.zt, w.f0, w.bb, w.cb
    w_ybt = w.ybt
    n, nb_ = x.size, books.size
    if expanded:
        _expanded(blk_q, w_a, w_b, w_c, w_p0, w_p1, w_p2, w_q0, w_q1, w_q2)
        matvec(jac_b, w_q0, w_r0)
        matvec(jac_b, w_q1, w_r1b)
        matvec(jac_b, w_q2, w_r2)
    sigma = 0.0
    _zero(w_zs)
    _zero(w_yb)
    g_prev = (x[i_sensor] - level) * direction
    step = 0.0
    last = False
    n_out = out_t.size
    while not last:
        step = first if sigma == 0.0 else q_step
        if sigma + step >= h - 1e-6:
            step = h - sigma
            last = True
        if expanded and sigma > 0.0 and not last and abs(step - q_step) < 1e-9:
            # a full check step on the grid (the most frequent): the expansion, inline
            block_mv(blk_q, 0, w_zs, w_zt)
            matvec(k_q, w_zs, w_ybt)
            s2 = sigma * sigma
            for i in range(n):
                w_zt[i] += w_p0[i] + sigma * w_p1[i] + s2 * w_p2[i]
            for i in range(nb_):
                w_ybt[i] += w_yb[i] + w_r0[i] + sigma * w_r1b[i] + s2 * w_r2[i]
        else:
            on_grid = expanded and abs(step - q_step) < 1e-9
            _check_step(w, blk, blk_q, blk_f, jac_b, k_q, sigma, step, last, on_grid, n, nb_)
        s_new = sigma + step
        if direction != 0:
            g_new = (x[i_sensor] + w_zt[i_sensor] - level) * direction
            if g_prev < 0.0 <= g_new:
                return DONE, True, sigma, step, k
            g_prev = g_new
        now = t + s_new
        while k < n_out and out_t[k] <= now + 1e-6:
            if abs(out_t[k] - now) > 1e-6:
                return OFF_GRID, False, sigma, step, k
            for i in range(n):
                out_y[i, k] = x[i] + w_zt[i]
            for i in range(nb_):
                out_y[n + i, k] = (books[i] + (w_f0[n + i] + (0.5 * w_bb[i] + w_cb[i] / 3.0 * s_new) * s_new) * s_new
                                   + w_ybt[i])
            k += 1
        _assign(w_zs, w_zt)
        _assign(w_yb, w_ybt)
        sigma = s_new
    return DONE, False, sigma, step, k


@nb.njit(cache=True, _nrt=False)
def _check_step(w, blk, blk_q, blk_f, jac_b, k_q, sigma, step, last, on_grid, n, nb_):
    """The state w.zt and the books' increment w.ybt after a check step of length ``step`` from sigma (from
    w.zs, w.yb): by the expansion for a full check step on the grid (:func:`_check_loop`), straight from the
    segment's blocks at its end, or from the step's own blocks ``blk_f`` for the first step to the grid.
    Compiled on its own without reference counting (it allocates nothing): inlined, each array it takes from
    the scratch tuple cost an atomic reference count, twice a segment."""
    w_zt, w_p0, w_ybt, w_yb, w_r0, w_z1 = w.zt, w.p0, w.ybt, w.yb, w.r0, w.z1
    w_zs, w_p1, w_p2, w_r1b, w_r2, w_a = w.zs, w.p1, w.p2, w.r1b, w.r2, w.a
    w_it_, w_b, w_c = w.it_, w.b, w.c
    if on_grid:
        # (at sigma = 0, z = 0: z = P0, J_b int z = R0); the segment's end keeps z1 itself
        if sigma == 0.0:
            _assign(w_zt, w_p0)
            _assign(w_ybt, w_r0)
        else:
            if last:
                _assign(w_zt, w_z1)
            else:
                block_mv(blk_q, 0, w_zs, w_zt)
            matvec(k_q, w_zs, w_ybt)
            s2 = sigma * sigma
            if not last:
                for i in range(n):
                    w_zt[i] += w_p0[i] + sigma * w_p1[i] + s2 * w_p2[i]
            for i in range(nb_):
                w_ybt[i] += w_yb[i] + w_r0[i] + sigma * w_r1b[i] + s2 * w_r2[i]
    elif last:
        # the segment's end: straight from the h blocks (int z = G1 a + G2 b + 2 G3 c)
        _assign(w_zt, w_z1)
        block_mv(blk, 2, w_a, w_it_)
        block_mv_add(blk, 3, w_b, 1.0, w_it_)
        block_mv_add(blk, 4, w_c, 2.0, w_it_)
        matvec(jac_b, w_it_, w_ybt)
    else:
        # the first step (to the check grid) from z = 0: G0 a + G1 b + 2 G2 c, int G1 a + G2 b + 2 G3 c
        _from_start(blk_f, w_a, w_b, w_c, w_zt)
        block_mv(blk_f, 2, w_a, w_it_)
        block_mv_add(blk_f, 3, w_b, 1.0, w_it_)
        block_mv_add(blk_f, 4, w_c, 2.0, w_it_)
        matvec(jac_b, w_it_, w_ybt)


@nb.njit(cache=True, inline="always")
def _locate(w, x, jac, chain_, s0, levels, sigma, step, i_sensor, level, direction):
    """The crossing in (sigma, sigma + step], w.zs the state at sigma. Binary descent on the doubling chain:
    from the longest link that fits down to the base step, step on by a link when the sensor stays short of its
    level at the link's end (so the bracket's lower end moves up and the crossing stays in it), then the root of
    a cubic Hermite interpolant of the sensor's exact values and slopes in the last base step, and the state
    there by the Taylor series. Returns the crossing's sigma; w.zt holds the state there and w.zi the integral
    of z from the first sigma on."""
    w_zi, w_zs, w_v0, w_v1, w_c, w_zt = w.zi, w.zs, w.v0, w.v1, w.c, w.zt
    w_it_, w_sub, w_a, w_b, w_tmp = w.it_, w.sub, w.a, w.b, w.tmp
    n = x.size
    s_hi = sigma + step
    _zero(w_zi)
    g_lo = (x[i_sensor] + w_zs[i_sensor] - level) * direction
    lev = levels
    while lev > 0 and s0 * 2.0**lev > step + 1e-9:
        lev -= 1
    while lev >= 1:
        hl = s0 * 2.0**lev
        if sigma + hl < s_hi - 1e-9:
            _remainder_at(w, sigma, n)
            _step_on(chain_[lev], w_zs, w_zi, w_v0, w_v1, w_c, w_zt, w_it_)
            g_hi = (x[i_sensor] + w_zt[i_sensor] - level) * direction
            if g_hi < 0.0:
                _assign(w_zs, w_zt)
                _assign(w_zi, w_it_)
                g_lo = g_hi
                sigma += hl
        lev -= 1
    base = chain_[0]
    while True:
        hs = min(s0, s_hi - sigma)
        if abs(hs - s0) < 1e-12:
            sb = base
        else:
            taylor(jac, hs, w_sub)
            sb = w_sub
        _remainder_at(w, sigma, n)
        _step_on(sb, w_zs, w_zi, w_v0, w_v1, w_c, w_zt, w_it_)
        g_hi = (x[i_sensor] + w_zt[i_sensor] - level) * direction
        if g_hi >= 0.0 or sigma + hs >= s_hi - 1e-9:
            # slopes from the model: z' = J z + r(s)
            s_end = sigma + hs
            d_lo = w_v0[i_sensor]
            d_hi = w_a[i_sensor] + (w_b[i_sensor] + w_c[i_sensor] * s_end) * s_end
            for j in range(n):
                d_lo += jac[i_sensor, j] * w_zs[j]
                d_hi += jac[i_sensor, j] * w_zt[j]
            theta = _cubic_root(g_lo, d_lo * direction, max(g_hi, 0.0), d_hi * direction, hs)
            delta = theta * hs
            _taylor_state(jac, w_zs, w_v0, w_v1, w_c, delta, w_zt, w_tmp)
            for i in range(n):
                w_zi[i] += w_tmp[i]
            return sigma + delta
        _assign(w_zi, w_it_)
        _assign(w_zs, w_zt)
        g_lo = g_hi
        sigma += hs


@nb.njit(cache=True, inline="always")
def _remainder_at(w, sigma, n):
    """v0 = r(sigma) and v1 = r'(sigma) of the remainder a + b s + c s^2."""
    w_v0, w_a, w_b, w_c, w_v1 = w.v0, w.a, w.b, w.c, w.v1
    for i in range(n):
        w_v0[i] = w_a[i] + (w_b[i] + w_c[i] * sigma) * sigma
        w_v1[i] = w_b[i] + 2.0 * w_c[i] * sigma


@nb.njit(cache=True, nogil=True)  # lets go of the GIL: a second simulation or the caller's threads run beside it
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
    n, nb_ = x.size, books.size
    s = _System(fan, air, prm, planes, ints, heat, f_values, f_step)
    w = _work(n, nb_, f_values.shape[0])
    w_u0, w_f0, w_a, w_um, w_fm, w_b_prev = w.u0, w.f0, w.a, w.um, w.fm, w.b_prev
    w_bb, w_cb, w_ybt, w_z1, w_f1, w_u1 = w.bb, w.cb, w.ybt, w.z1, w.f1, w.u1
    w_b, w_c, w_c_prev, w_zi, w_yb, w_zt = w.b, w.c, w.c_prev, w.zi, w.yb, w.zt
    # every array once, here: each array handed to an inlined helper (or held in a tuple so handed) costs an
    # atomic reference count and its release, so the helpers called per segment take plain arrays, or are
    # compiled without reference counting
    jac, jac_b, links, store, lens, meta, cnt, x_lin, air_lin, k_q = lin
    w_c = w.c
    n_rhs, n_jac, n_rej, n_seg = 0, 0, 0, 0
    if k < out_t.size and abs(out_t[k] - t) < 1e-6:
        for i in range(n):
            out_y[i, k] = x[i]
        for i in range(nb_):
            out_y[n + i, k] = books[i]
        k += 1
    _forcing_at(f_values, f_step, t, w_u0)
    kernel.rhs(x, w_u0, fan, air, prm, planes, ints, heat, w_f0)
    n_rhs += 1
    if not (meta[0] > 0.0 and _max_change(x, x_lin) <= drift and t - meta[3] <= age and _air_close(air, air_lin)):
        _relinearise(x, w_u0, t, fan, air, prm, planes, ints, heat, w_f0, lin, q_step, unit_halvings, segment)
        n_rhs += n
        n_jac += 1
    j_pref = 0
    if after_switch:
        # the state moves fast after a switch: start at the spacing remembered from the previous switch into
        # this fan state (about two check steps the first time), and let the segments grow
        start = meta[4] if meta[4] > 0.0 else 2.0 * q_step
        while segment / 2.0**j_pref > start and j_pref < 40:
            j_pref += 1
    first_after_switch = after_switch
    eta = 1.0
    iters = 0
    while t < t_end - 1e-9:
        # renew the linearisation when the nodes have moved or it is old
        if _max_change(x, x_lin) > drift or t - meta[3] > age or iters > slow_iters:
            _relinearise(x, w_u0, t, fan, air, prm, planes, ints, heat, w_f0, lin, q_step, unit_halvings, segment)
            n_rhs += n
            n_jac += 1
        if cnt[0] > _CACHE - 28:
            cnt[0] = 0  # full: start over (a segment, halved down to 1 s, needs at most 26 entries)
            cnt[1] = -1
        s0, chain_ = meta[1], links[:int(meta[2]) + 1]
        h = _segment_length(t, t_end, origin, segment, j_pref, f_step)
        _assign(w_a, w_f0)
        if n_seg > 0 and _slope_jump(f_values, f_step, t, w_u0, w_um):
            # at a weather sample the forcing's slope changes, and the remainder's slope with it by
            # df/du (u'_after - u'_before): one directional difference over KINK_SPAN carries the prediction
            # across the kink (a prediction only: the fixed point still matches the true rates)
            kernel.rhs(x, w_um, fan, air, prm, planes, ints, heat, w_fm)
            n_rhs += 1
            for i in range(n):
                w_b_prev[i] += (w_fm[i] - w_f0[i]) / KINK_SPAN
        # the segment: tried at length h and halved until its fixed point converges within the error check
        tries = 0
        while True:
            blk = store[_lookup(h, lens, store, cnt, jac, s0, chain_)]
            blk_m = store[_lookup(0.5 * h, lens, store, cnt, jac, s0, chain_)]
            converged, iters, eta, nr = _fixed_point(w, s, x, t, h, jac, jac_b, blk, blk_m, tol, tol_iter, eta)
            n_rhs += nr
            verdict, h, j_pref, first_after_switch = _verdict(converged, w_c, h, segment, j_pref, tol,
                                                              first_after_switch, tries, meta)
            if verdict != _RETRY:
                break
            tries += 1
        n_rej += tries
        if verdict == _GIVE_UP:
            return FAILED, t, k, n_rhs, n_jac, n_rej, n_seg
        n_seg += 1
        _book_remainder(w, jac_b, h, n)
        first, expanded, blk_q, blk_f = _check_blocks(t, h, origin, q_step, store, lens, cnt, jac, jac_b, k_q, s0,
                                                      chain_)
        status, crossed, sigma, step, k = _check_loop(w, x, books, t, h, q_step, first, expanded, blk, blk_q, blk_f,
                                                      jac_b, k_q, out_t, k, out_y, i_sensor, level, direction)
        if status == OFF_GRID:
            return OFF_GRID, t, k, n_rhs, n_jac, n_rej, n_seg
        if not crossed:
            for i in range(nb_):
                books[i] = books[i] + (w_f0[n + i] + (0.5 * w_bb[i] + w_cb[i] / 3.0 * h) * h) * h + w_ybt[i]
            for i in range(n):
                x[i] += w_z1[i]
            t = t + h
            _assign(w_f0, w_f1)
            _assign(w_u0, w_u1)
            for i in range(n):
                w_b_prev[i] = w_b[i] + 2.0 * w_c[i] * h   # the remainder's slope and curvature carried on
                w_c_prev[i] = w_c[i]
            continue
        sigma = _locate(w, x, jac, chain_, s0, int(meta[2]), sigma, step, i_sensor, level, direction)
        # the books to the crossing: up to the check step (yb) and over its part (J_b int z)
        for i in range(nb_):
            acc = 0.0
            for j in range(n):
                acc += jac_b[i, j] * w_zi[j]
            books[i] = (books[i] + (w_f0[n + i] + (0.5 * w_bb[i] + w_cb[i] / 3.0 * sigma) * sigma) * sigma
                        + w_yb[i] + acc)
        for i in range(n):
            x[i] += w_zt[i]
        return SWITCH, t + sigma, k, n_rhs, n_jac, n_rej, n_seg
    return DONE, t, k, n_rhs, n_jac, n_rej, n_seg


@nb.njit(cache=True, inline="always")
def _segment_length(t, t_end, origin, segment, j_pref, f_step):
    """The next segment's length: to the next instant of the grid of the preferred length (segment / 2^j,
    nested in the segment grid, so that lengths repeat and their blocks come from the cache), a weather
    sample or the end."""
    h_pref = segment / 2.0**j_pref
    t_pref = origin + (math.floor((t - origin) / h_pref + 1e-9) + 1.0) * h_pref
    t_w = (math.floor(t / f_step + 1e-9) + 1.0) * f_step
    return min(t_pref, t_w, t_end) - t



jitcache.restore()

#: Longest doubling chain kept (base steps down to 2^-40 of the segment).
_MAX_LEVELS = 40


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


class CompiledStepper:
    """The compiled stepper of the hybrid driver (:mod:`atticsim.hybrid.driver`): :func:`advance` from one
    event or airflow update to the next, keeping a linearisation (and its block cache) per fan state.

    Parameters
    ----------
    network, forcing : AtticNetwork, Forcing
    output_times : numpy.ndarray
        On one regular grid from the period's start (the last instant, the period's end, may be off it).
    out_y : numpy.ndarray
        (n_nodes + books, len(output_times)): receives the output rows.
    tol, tol_iter, drift, age, slow_iters, segment, check_step
        As described in the module docstring (error per segment [K], the fixed point's convergence [K], the
        linearisation's renewal after drift [K], age [s] or slow iterations, the longest segment and the
        largest spacing of the sensor checks [s]).

    Raises
    ------
    ValueError
        When the output instants are not on one regular grid (the reference stepper takes any outputs).
    """

    name = "fast"

    def __init__(self, network, forcing, output_times, out_y, tol=5e-3, tol_iter=3e-5, drift=40.0, age=21600.0,
                 slow_iters=6, segment=SEGMENT, check_step=CHECK_STEP):
        out = np.ascontiguousarray(output_times, dtype=float)
        steps = grid_steps(out, float(out[0]) if out.size else 0.0, segment, check_step)
        if steps is None:
            raise ValueError("the compiled solver needs the output instants on one regular grid")
        _, self.q_step, self.segment = steps
        self.origin = float(out[0]) if out.size else 0.0
        self.packed = kernel.pack(network)
        self.n_nodes = network.n_nodes
        self.i_sensor = network.index["sensor"]
        self.out_t, self.out_y = out, out_y
        self.f_values = np.ascontiguousarray(forcing.values, dtype=float)
        self.f_step = float(forcing.step)
        self.settings = (tol, tol_iter, drift, age, slow_iters)
        n_books = out_y.shape[0] - network.n_nodes
        self.lins = {False: new_linearisation(network.n_nodes, n_books),
                     True: new_linearisation(network.n_nodes, n_books)}
        self.n_rhs = 0

    def advance(self, t, t_stop, y, fan, air, level, direction, after_switch, k):
        """See :mod:`atticsim.hybrid.driver`."""
        n = self.n_nodes
        x, books = y[:n], y[n:]
        pk = self.packed
        tol, tol_iter, drift, age, slow_iters = self.settings
        status, t_new, k_new, n_rhs, _, _, _ = advance(
            t, t_stop, self.origin, self.segment, self.q_step, x, books, 1.0 if fan else 0.0, air, pk.prm,
            pk.planes, pk.ints, pk.heat, self.f_values, self.f_step, self.out_t, k, self.out_y, self.i_sensor,
            float(level), int(direction), tol, tol_iter, drift, age, 6, self.lins[bool(fan)], after_switch,
            slow_iters)
        self.n_rhs += n_rhs
        if status == OFF_GRID:
            raise StepperFailed("an output instant off the check grid", t_new, k_new)
        if status == FAILED:
            raise StepperFailed("a segment would not converge even at half a second", t_new, k_new)
        return status == SWITCH, t_new, k_new

    def write_row(self, k, y):
        """The state y as output row k."""
        self.out_y[:, k] = y
