"""Compiled exact-discretisation blocks for dz/ds = J z + a + b s (numba, no Python objects inside).

For a step h the block exponential (Van Loan 1978, "Computing integrals involving the matrix
exponential", IEEE TAC 23(3))

    E(h) = expm([[J, I, 0, 0], [0, 0, I, 0], [0, 0, 0, I], [0, 0, 0, 0]] h)

has the first block row [Phi, G0, G1, G2], G_k = int_0^h e^{J (h - tau)} tau^k / k! dtau, so that

    z(h) = Phi z(0) + G0 a + G1 b,        int_0^h z ds = G0 z(0) + G1 a + G2 b        (exact).

Its lower block rows are known in closed form ([0, I, h I, h^2/2 I], ...), so products of two such
exponentials need only the first rows: E(p) E(q) = E(p + q) gives

    Phi = Pp Pq,  G0 = Pp G0q + G0p,  G1 = Pp G1q + q G0p + G1p,  G2 = Pp G2q + q^2/2 G0p + q G1p + G2p

(one n x n product per block). A short step s with ||J s|| <= 1/4 comes from the Taylor series
Phi = sum (J s)^m / m!, G_k = s^(k+1) sum (J s)^m / (m + k + 1)! (12 terms: remainder below 1e-17);
longer steps are composed from a chain of doublings of that step and, for any length, from its binary
digits (scaling and squaring, Moler & Van Loan 2003, "Nineteen dubious ways...", SIAM Review 45(1),
method 3, applied to the block form). Tests hold these to ``scipy.linalg.expm`` of the block matrix.

The same holds with more G's: with G3 (BLOCKS = 5 blocks), a forcing quadratic in time is integrated
exactly too (z(h) = Phi z0 + G0 a + G1 b + 2 G2 c for a + b s + c s^2, int z adds 2 G3 c). Arrays of
blocks have shape (BLOCKS, n, n): Phi, G0, G1, G2, G3.
"""

from __future__ import annotations

import numba as nb
import numpy as np

from atticsim import jitcache

jitcache.check()  # stale compiled code out before numba loads any (see atticsim.jitcache)
jitcache.route()  # this module's compiled functions cache in atticsim's own folder

#: Taylor terms for a base step with ||J s||_inf <= TAYLOR_NORM (remainder (1/4)^13 / 13! ~ 2e-18).
TAYLOR_TERMS = 12
TAYLOR_NORM = 0.25
#: Blocks kept: Phi, G0, G1, G2, G3 (the solver's remainder is quadratic in time; G3 integrates it).
BLOCKS = 5


@nb.njit(cache=True)
def matmul(a, b, out):
    """out = a @ b (BLAS through numba's np.dot: about 0.14 us at n = 10, three times the plain loops)."""
    np.dot(a, b, out)


#: Floating-point freedoms for the matrix-vector products: reassociation lets the compiler use SIMD sums,
#: contraction fused multiply-adds (results change by rounding only; NaN and infinity keep their meaning).
_SUMS = {"reassoc", "contract"}


@nb.njit(cache=True, fastmath=_SUMS, _nrt=False)
def matvec(a, x, out):
    """out = a @ x."""
    for i in range(a.shape[0]):
        s = 0.0
        for m in range(x.shape[0]):
            s += a[i, m] * x[m]
        out[i] = s


@nb.njit(cache=True, fastmath=_SUMS, _nrt=False)
def block_mv(blk, k, x, out):
    """out = blk[k] @ x, for an array of blocks (indexed in place: no view of blk[k] is made)."""
    for i in range(blk.shape[1]):
        s = 0.0
        for m in range(x.shape[0]):
            s += blk[k, i, m] * x[m]
        out[i] = s


@nb.njit(cache=True, fastmath=_SUMS, _nrt=False)
def block_mv_add(blk, k, x, scale, out):
    """out += scale * (blk[k] @ x), as :func:`block_mv`."""
    for i in range(blk.shape[1]):
        s = 0.0
        for m in range(x.shape[0]):
            s += blk[k, i, m] * x[m]
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
    """Blocks over a short step s (||jac s|| <= 1/4 for full accuracy).

    The last block from its Taylor series by Horner's rule, G_k = s^(k+1) sum_m (J s)^m / (m + k + 1)!, and
    the others down from it by G_(k-1) = J G_k + s^k / k! I and Phi = J G0 + I (integration by parts of
    G_k = int_0^s e^{J (s - tau)} tau^k / k! dtau)."""
    n = jac.shape[0]
    top = out.shape[0] - 2                 # index k of the last G
    js = jac * s
    acc = np.zeros((n, n))
    tmp = np.empty((n, n))
    fact = 1.0                             # (m + top + 1)! for m = TAYLOR_TERMS
    for m in range(1, TAYLOR_TERMS + top + 2):
        fact *= m
    for i in range(n):
        acc[i, i] = 1.0 / fact
    for m in range(TAYLOR_TERMS - 1, -1, -1):
        fact /= m + top + 2                # (m + top + 1)!
        np.dot(js, acc, tmp)
        for i in range(n):
            tmp[i, i] += 1.0 / fact
        for i in range(n):  # element by element: a slice assignment compiles its shape checks' messages
            for j in range(n):
                acc[i, j] = tmp[i, j]
    sk = s ** (top + 1)
    for i in range(n):
        for j in range(n):
            out[top + 1, i, j] = sk * acc[i, j]
    kfact = 1.0
    for m in range(1, top + 1):
        kfact *= m                         # top!
    for k in range(top, -1, -1):
        # G_(k-1) = J G_k + s^k / k! I   (G_(-1) is Phi)
        np.dot(jac, out[k + 1], out[k])
        w = s ** k / kfact
        for i in range(n):
            out[k, i, i] += w
        if k > 0:
            kfact /= k


@nb.njit(cache=True, _nrt=False)
def _copy3(src, dst):
    """dst[q] = src[q] for the first dst.shape[0] blocks, element by element (a slice assignment compiles its
    shape checks' messages)."""
    for q in range(dst.shape[0]):
        for i in range(dst.shape[1]):
            for j in range(dst.shape[2]):
                dst[q, i, j] = src[q, i, j]


@nb.njit(cache=True)
def compose(p_blk, q_blk, q, out):
    """Blocks over p + q from those over p (``p_blk``) and over q (``q_blk``, length ``q``) into ``out``
    (distinct from both): Phi = Pp Pq and G_k = Pp G_k,q + sum_{j<=k} q^(k-j) / (k-j)! G_j,p (the first
    block row of E(p) E(q))."""
    n = p_blk.shape[1]
    nk = p_blk.shape[0]
    w = np.empty(nk)                       # q^e / e!
    w[0] = 1.0
    for e in range(1, nk):
        w[e] = w[e - 1] * q / e
    for k in range(nk):
        np.dot(p_blk[0], q_blk[k], out[k])
        for j in range(k):                 # G_(k-1) gains q^(k-1-j)/(k-1-j)! G_j,p (G_j is block 1 + j)
            wj = w[k - 1 - j]
            for i in range(n):
                for m in range(n):
                    out[k, i, m] += wj * p_blk[1 + j, i, m]


@nb.njit(cache=True)
def chain_into(jac, s0, levels, out):
    """Blocks over s0, 2 s0, 4 s0, ... (``levels`` doublings) into out[:levels + 1]."""
    taylor(jac, s0, out[0])
    s = s0
    for lev in range(1, levels + 1):
        compose(out[lev - 1], out[lev - 1], s, out[lev])
        s *= 2.0


@nb.njit(cache=True)
def blocks_for(jac, h, s0, links, out):
    """Blocks over any step h from the doubling chain ``links`` of s0 (binary digits of h / s0) and a
    Taylor step for the remainder shorter than s0."""
    count = int(np.floor(h / s0 + 1e-9))
    rest = h - count * s0
    lev = 0
    step = s0
    if rest > 1e-12 * s0:
        taylor(jac, rest, out)
        length = rest
    else:
        # no remainder: start from the lowest link taken (the identity and one composition saved)
        while count > 0 and not count & 1:
            count >>= 1
            lev += 1
            step *= 2.0
        if count == 0:  # h = 0: the identity and zero blocks
            out.fill(0.0)
            for i in range(jac.shape[1]):
                out[0, i, i] = 1.0
            return 0.0
        if lev >= links.shape[0]:
            raise ValueError("step longer than the doubling chain")
        _copy3(links[lev], out)
        length = step
        count >>= 1
        lev += 1
        step *= 2.0
    tmp = np.empty_like(out)
    while count > 0:
        if count & 1:
            if lev >= links.shape[0]:
                raise ValueError("step longer than the doubling chain")
            # (callers pass the chain's filled part: links[:levels + 1])
            compose(out, links[lev], step, tmp)
            _copy3(tmp, out)
            length += step
        count >>= 1
        lev += 1
        step *= 2.0
    return length


@nb.njit(cache=True)
def base_step(jac, unit, min_halvings=6):
    """The chain's base step: ``unit`` / 2^k with k >= ``min_halvings`` and ||J s|| <= 1/4."""
    norm = inf_norm(jac)
    k = min_halvings
    while norm * unit / 2.0**k > TAYLOR_NORM:
        k += 1
    return unit / 2.0**k, k


jitcache.restore()
