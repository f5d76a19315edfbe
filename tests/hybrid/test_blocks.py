"""The compiled exact-discretisation blocks [Phi, G0, G1, G2] against closed forms and scipy.linalg.expm."""

import numpy as np
import pytest
from scipy.linalg import expm

from atticsim.hybrid import blocks as B


def _chain(jac, s0, levels):
    out = np.empty((levels + 1, B.BLOCKS) + jac.shape)
    B.chain_into(jac, s0, levels, out)
    return out


def _symmetric(n=6, seed=1):
    # a stable symmetric system with time constants from 3 s to 10 days: J = V diag(lam) V^T
    rng = np.random.default_rng(seed)
    lam = -1.0 / np.geomspace(3.0, 864000.0, n)
    v, _ = np.linalg.qr(rng.standard_normal((n, n)))
    return v @ np.diag(lam) @ v.T, lam, v


def _closed_form(lam, v, h):
    # eigen-wise integrals: G0 = (e - 1)/l, G1 = (G0 - h)/l, G2 = (G1 - h^2/2)/l (repeated integration of
    # e^{l (h - tau)} tau^k / k!, by parts)
    e = np.exp(lam * h)
    g0 = np.expm1(lam * h) / lam
    g1 = (g0 - h) / lam
    g2 = (g1 - h * h / 2) / lam
    return [v @ np.diag(x) @ v.T for x in (e, g0, g1, g2)]


def _van_loan(jac, h):
    # the block matrix of Van Loan (1978) exponentiated by scipy (Pade, scaling and squaring)
    n = jac.shape[0]
    m = np.zeros((4 * n, 4 * n))
    m[:n, :n] = jac
    for i in range(3):
        m[i * n:(i + 1) * n, (i + 1) * n:(i + 2) * n] = np.eye(n)
    e = expm(m * h)
    return [e[:n, i * n:(i + 1) * n] for i in range(4)]


@pytest.mark.parametrize("h", [0.4, 1.0, 60.0, 600.0, 737.5])
def test_blocks_match_the_closed_form_and_expm(h):
    jac, lam, v = _symmetric()
    s0, _ = B.base_step(jac, 60.0)
    links = _chain(jac, s0, 12)
    out = np.empty((4,) + jac.shape)
    length = B.blocks_for(jac, h, s0, links, out)
    assert length == pytest.approx(h, rel=1e-12)
    exact = _closed_form(lam, v, h)
    ref = _van_loan(jac, h)
    for q in range(2):  # Phi, G0: the closed form is good to rounding
        assert np.max(np.abs(out[q] - exact[q])) <= 1e-11 * np.max(np.abs(exact[q]))
    for q in range(4):
        # G1 and G2's closed forms lose digits to cancellation for the slow modes (h |lambda| << 1): all four
        # against scipy's expm, itself good to about 1e-9 here
        assert np.max(np.abs(out[q] - ref[q])) <= 1e-7 * np.max(np.abs(ref[q]))


def test_composition_is_the_product_of_exponentials():
    # E(p) E(q) = E(p + q): blocks composed from two steps equal the blocks of the sum
    jac, _, _ = _symmetric(seed=4)
    p, q = 37.0, 52.5
    bp, bq, both = (np.empty((4,) + jac.shape) for _ in range(3))
    B.taylor(jac, p / 64, bp)  # start from short Taylor steps and double them up
    for _ in range(6):
        tmp = np.empty_like(bp)
        B.compose(bp, bp, p / 64 * 2 ** _, tmp)
        bp = tmp
    ref_p = _van_loan(jac, p)
    assert np.allclose(bp, ref_p, rtol=1e-9, atol=1e-12 * p**3)
    bq[:] = _van_loan(jac, q)
    B.compose(bp, bq, q, both)
    ref = _van_loan(jac, p + q)
    for k in range(4):
        assert np.allclose(both[k], ref[k], rtol=1e-9, atol=1e-12 * np.max(np.abs(ref[k])))


def test_blocks_solve_the_forced_linear_system():
    # z(h) = Phi z0 + G0 a + G1 b and int z = G0 z0 + G1 a + G2 b for dz/ds = J z + a + b s, against a
    # fine RK4 integration (independent reference)
    jac, _, _ = _symmetric(n=4, seed=7)
    rng = np.random.default_rng(3)
    z0, a, b = rng.standard_normal(4), 1e-2 * rng.standard_normal(4), 1e-5 * rng.standard_normal(4)
    h = 400.0
    s0, _ = B.base_step(jac, 60.0)
    out = np.empty((4, 4, 4))
    B.blocks_for(jac, h, s0, _chain(jac, s0, 12), out)
    z, w, t, dt = z0.copy(), np.zeros(4), 0.0, h / 40000

    def f(t_, z_):
        return jac @ z_ + a + b * t_

    for _ in range(40000):  # RK4 on (z, int z)
        k1 = f(t, z)
        k2 = f(t + dt / 2, z + dt / 2 * k1)
        k3 = f(t + dt / 2, z + dt / 2 * k2)
        k4 = f(t + dt, z + dt * k3)
        w = w + dt / 6 * (z + 2 * (z + dt / 2 * k1) + 2 * (z + dt / 2 * k2) + (z + dt * k3))
        z, t = z + dt / 6 * (k1 + 2 * k2 + 2 * k3 + k4), t + dt
    assert np.allclose(out[0] @ z0 + out[1] @ a + out[2] @ b, z, rtol=1e-8, atol=1e-10)
    assert np.allclose(out[1] @ z0 + out[2] @ a + out[3] @ b, w, rtol=1e-8, atol=1e-8)


def test_base_step_keeps_the_taylor_series_short():
    jac, _, _ = _symmetric()
    s0, k = B.base_step(jac, 60.0)
    assert k >= 6 and s0 == 60.0 / 2**k
    assert np.max(np.sum(np.abs(jac), axis=1)) * s0 <= B.TAYLOR_NORM
