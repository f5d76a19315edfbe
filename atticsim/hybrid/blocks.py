"""Compiled exact-discretisation blocks for dz/ds = J z + a + b s (numba, no Python objects inside).

For a step h the block exponential (Van Loan 1978, "Computing integrals involving the matrix
exponential", IEEE TAC 23(3))

    E(h) = expm([[J, I, 0, 0], [0, 0, I, 0], [0, 0, 0, I], [0, 0, 0, 0]] h)

has the first block row [Phi, G0, G1, G2], G_k = int_0^h e^{J (h - tau)} tau^k / k! dtau, so that

    z(h) = Phi z(0) + G0 a + G1 b,        int_0^h z ds = G0 z(0) + G1 a + G2 b        (exact).

Its lower block rows are known in closed form ([0, I, h I, h^2/2 I], ...), so products of two such
exponentials need only the first rows: E(p) E(q) = E(p + q) gives

    Phi = Pp Pq,  G0 = Pp G0q + G0p,  G1 = Pp G1q + q G0p + G1p,  G2 = Pp G2q + q^2/2 G0p + q G1p + G2p

(four n x n products). A short step s with ||J s|| <= 1/4 comes from the Taylor series
Phi = sum (J s)^m / m!, G_k = s^(k+1) sum (J s)^m / (m + k + 1)! (12 terms: remainder below 1e-17);
longer steps are composed from a chain of doublings of that step and, for any length, from its binary
digits (scaling and squaring, Moler & Van Loan 2003, "Nineteen dubious ways...", SIAM Review 45(1),
method 3, applied to the block form). Tests hold these to ``scipy.linalg.expm`` of the block matrix.

Arrays of blocks have shape (4, n, n): Phi, G0, G1, G2.
"""

from __future__ import annotations

import numba as nb
import numpy as np

from atticsim import jitcache

jitcache.check()  # stale compiled code out before numba loads any (see atticsim.jitcache)

#: Taylor terms for a base step with ||J s||_inf <= TAYLOR_NORM (remainder (1/4)^13 / 13! ~ 2e-18).
TAYLOR_TERMS = 12
TAYLOR_NORM = 0.25


@nb.njit(cache=True)
def matmul(a, b, out):
    """out = a @ b for small square matrices (plain loops: faster than a BLAS call at n ~ 10)."""
    n = a.shape[0]
    for i in range(n):
        for j in range(n):
            out[i, j] = 0.0
        for m in range(n):
            aim = a[i, m]
            for j in range(n):  # contiguous inner loop
                out[i, j] += aim * b[m, j]


@nb.njit(cache=True)
def matvec(a, x, out):
    """out = a @ x."""
    for i in range(a.shape[0]):
        s = 0.0
        for m in range(x.shape[0]):
            s += a[i, m] * x[m]
        out[i] = s


@nb.njit(cache=True)
def matvec_add(a, x, scale, out):
    """out += scale * (a @ x)."""
    for i in range(a.shape[0]):
        s = 0.0
        for m in range(x.shape[0]):
            s += a[i, m] * x[m]
        out[i] += scale * s


@nb.njit(cache=True)
def inf_norm(a):
    """Largest absolute row sum."""
    best = 0.0
    for i in range(a.shape[0]):
        s = 0.0
        for j in range(a.shape[1]):
            s += abs(a[i, j])
        best = max(best, s)
    return best


@nb.njit(cache=True)
def taylor(jac, s, out):
    """Blocks over a short step s (||jac s|| <= 1/4 for full accuracy) from their Taylor series."""
    n = jac.shape[0]
    power = np.eye(n)           # (J s)^m
    tmp = np.empty((n, n))
    js = jac * s
    fact = 1.0                  # m!
    for q in range(4):
        out[q, :, :] = 0.0
    for m in range(TAYLOR_TERMS + 1):
        if m > 0:
            matmul(power, js, tmp)
            power[:, :] = tmp
            fact *= m
        c0 = 1.0 / fact                         # 1 / m!
        c1 = c0 / (m + 1)                       # 1 / (m + 1)!
        c2 = c1 / (m + 2)
        c3 = c2 / (m + 3)
        for i in range(n):
            for j in range(n):
                p = power[i, j]
                out[0, i, j] += c0 * p
                out[1, i, j] += c1 * s * p
                out[2, i, j] += c2 * s * s * p
                out[3, i, j] += c3 * s * s * s * p


@nb.njit(cache=True)
def compose(p_blk, q_blk, q, out):
    """Blocks over p + q from those over p (``p_blk``) and over q (``q_blk``, length ``q``)."""
    n = p_blk.shape[1]
    t0 = np.empty((n, n))
    t1 = np.empty((n, n))
    t2 = np.empty((n, n))
    t3 = np.empty((n, n))
    matmul(p_blk[0], q_blk[0], t0)
    matmul(p_blk[0], q_blk[1], t1)
    matmul(p_blk[0], q_blk[2], t2)
    matmul(p_blk[0], q_blk[3], t3)
    half_q2 = 0.5 * q * q
    for i in range(n):
        for j in range(n):
            g0, g1, g2 = p_blk[1, i, j], p_blk[2, i, j], p_blk[3, i, j]
            out[3, i, j] = t3[i, j] + half_q2 * g0 + q * g1 + g2
            out[2, i, j] = t2[i, j] + q * g0 + g1
            out[1, i, j] = t1[i, j] + g0
            out[0, i, j] = t0[i, j]


@nb.njit(cache=True)
def chain(jac, s0, levels):
    """Blocks over s0, 2 s0, 4 s0, ... (``levels`` doublings), shape (levels + 1, 4, n, n)."""
    n = jac.shape[0]
    out = np.empty((levels + 1, 4, n, n))
    taylor(jac, s0, out[0])
    s = s0
    for lev in range(1, levels + 1):
        compose(out[lev - 1], out[lev - 1], s, out[lev])
        s *= 2.0
    return out


@nb.njit(cache=True)
def blocks_for(jac, h, s0, links, out):
    """Blocks over any step h from the doubling chain ``links`` of s0 (binary digits of h / s0) and a
    Taylor step for the remainder shorter than s0."""
    n = jac.shape[1]
    count = int(np.floor(h / s0 + 1e-9))
    rest = h - count * s0
    if rest > 1e-12 * s0:
        taylor(jac, rest, out)
        length = rest
    else:
        for q in range(4):
            out[q, :, :] = 0.0
        for i in range(n):
            out[0, i, i] = 1.0
        length = 0.0
    tmp = np.empty_like(out)
    lev = 0
    step = s0
    while count > 0:
        if count & 1:
            if lev >= links.shape[0]:
                raise ValueError("step longer than the doubling chain")
            compose(out, links[lev], step, tmp)
            out[:, :, :] = tmp
            length += step
        count >>= 1
        lev += 1
        step *= 2.0
    return length


def base_step(jac, unit, min_halvings=6):
    """The chain's base step: ``unit`` / 2^k with k >= ``min_halvings`` and ||J s|| <= 1/4."""
    norm = float(inf_norm(np.ascontiguousarray(jac)))
    k = min_halvings
    while norm * unit / 2.0**k > TAYLOR_NORM:
        k += 1
    return unit / 2.0**k, k
