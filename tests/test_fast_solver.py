"""The fast solver against matrix-exponential and analytic references, and against the reference solver
on every demo scenario (the agreement the project promises: 0.05 K, 5 s, same starts, books to 0.1 %)."""

from pathlib import Path

import numpy as np
import pytest
from scipy.linalg import expm

from atticsim.hybrid.fast import _Segment
from atticsim.pipeline import run_raw
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parent.parent


def test_segment_step_is_the_analytic_rc_response():
    # dz/dt = -z/tau + c0 + c1 t, z(0) = z0 has the closed form (first-order linear ODE, integrating factor):
    # z(t) = z0 e^{-t/tau} + tau c0 (1 - e^{-t/tau}) + c1 tau (t - tau (1 - e^{-t/tau})).
    tau, c0, c1, z0 = 120.0, 0.05, 1e-4, 2.0
    seg = _Segment(np.array([[-1.0 / tau]]), np.array([c0]), np.array([c1]))
    for t in (1.0, 60.0, 600.0, 3600.0):
        w = seg.step(np.array([z0, 1.0, 0.0]), t)
        e = np.exp(-t / tau)
        expected = z0 * e + tau * c0 * (1 - e) + c1 * tau * (t - tau * (1 - e))
        assert w[0] == pytest.approx(expected, rel=1e-10)
        assert w[2] == pytest.approx(t)  # the clock state


def test_segment_step_matches_expm_of_the_full_system():
    # A random stable 4-node system with affine-in-time forcing: the augmented step equals a direct
    # integration written as one scipy.linalg.expm of the same augmented generator, and a fine RK4 run.
    rng = np.random.default_rng(0)
    a = -np.diag(rng.uniform(0.001, 0.05, 4)) + 0.001 * rng.standard_normal((4, 4))
    c0, c1 = rng.standard_normal(4), 1e-3 * rng.standard_normal(4)
    seg = _Segment(a, c0, c1)
    w0 = np.concatenate([rng.standard_normal(4), [1.0, 0.0]])
    h = 300.0
    w = seg.step(w0, h)
    # RK4 with 30000 steps on dz/dt = A z + c0 + c1 t (independent reference)
    z, t, dt = w0[:4].copy(), 0.0, h / 30000

    def f(t_, z_):
        return a @ z_ + c0 + c1 * t_

    for _ in range(30000):
        k1 = f(t, z)
        k2 = f(t + dt / 2, z + dt / 2 * k1)
        k3 = f(t + dt / 2, z + dt / 2 * k2)
        k4 = f(t + dt, z + dt * k3)
        z, t = z + dt / 6 * (k1 + 2 * k2 + 2 * k3 + k4), t + dt
    assert np.allclose(w[:4], z, rtol=1e-9, atol=1e-9)
    assert np.allclose(w, expm(seg.m * h) @ w0)


DEMOS = ["heron_lane_bungalow", "heron_lane_circuit", "mesa_ranch", "starved_intakes", "generous_intakes"]


def _windows_only(sim):
    # the Python window solver (the compiled solver's fallback) on its own
    from atticsim.hybrid.fast import integrate_fast

    return lambda *a: integrate_fast(*a, max_step=min(60.0, sim.max_step))


@pytest.mark.parametrize("solver", ["compiled", "windows"])
@pytest.mark.parametrize("name", DEMOS)
def test_fast_agrees_with_reference(name, solver, monkeypatch):
    import atticsim.pipeline as pipeline

    base = ["simulation.spinup_days=1"]
    path = ROOT / "scenarios" / f"{name}.toml"
    sc_ref = load_scenario(path, base + ['simulation.solver="reference"'])
    start = sc_ref.weather.start
    end = (np.datetime64(start) + np.timedelta64(1, "D")).astype(str)
    ref = run_raw(sc_ref, start=start, end=end, include_no_fan=False)
    if solver == "windows":
        monkeypatch.setattr(pipeline, "integrator", _windows_only)
    fast = run_raw(load_scenario(path, base + ['simulation.solver="fast"']), start=start, end=end,
                   include_no_fan=False)
    n = ref.network.n_nodes
    a, b = ref.with_fan, fast.with_fan
    assert a.t.size == b.t.size and np.allclose(a.t, b.t)
    assert np.max(np.abs(a.y[:n] - b.y[:n])) < 0.05                      # K, every output step
    ea, eb = [e[0] for e in a.events], [e[0] for e in b.events]
    assert len(ea) == len(eb) and sum(e[1] for e in a.events) == sum(e[1] for e in b.events)
    assert np.max(np.abs(np.array(ea) - np.array(eb)), initial=0.0) < 5.0  # s
    books_a, books_b = a.y_end[n:], b.y_end[n:]
    big = np.abs(books_a) > 1e5  # books of more than 0.03 kWh
    assert np.all(np.abs(books_b[big] - books_a[big]) <= 1e-3 * np.abs(books_a[big]))  # 0.1 %


def test_block_exponential_gives_the_integrals_it_claims():
    # _Blocks: G_k(h) = int_0^h e^{J (h - tau)} tau^k / k! dtau (k = 0, 1, 2), checked against adaptive
    # quadrature of those definitions with scipy.linalg.expm inside (independent of the block trick).
    from scipy.integrate import quad_vec

    from atticsim.hybrid.fast import _Blocks

    rng = np.random.default_rng(1)
    jn = -np.diag(rng.uniform(0.001, 0.02, 3)) + 0.002 * rng.standard_normal((3, 3))
    h = 600.0
    phi, g0, g1, g2 = _Blocks(jn).get(h)
    assert np.allclose(phi, expm(jn * h), rtol=1e-8, atol=1e-10)  # to round-off relative to the norm
    for k, g in enumerate((g0, g1, g2)):
        want, _ = quad_vec(lambda tau, k=k: expm(jn * (h - tau)) * tau**k / [1, 1, 2][k], 0.0, h,
                           epsabs=1e-10, epsrel=1e-10)
        assert np.allclose(g, want, rtol=1e-8, atol=1e-8 * np.abs(want).max()), k
    # evenly spaced instants come from powers of one exponential: same as direct exponentials
    offsets = np.array([60.0, 120.0, 180.0, 600.0])
    st = _Blocks(jn).stacks(offsets)
    for i, off in enumerate(offsets):
        direct = _Blocks(jn).get(off)
        for a, b in zip(st, direct[1:]):
            assert np.allclose(a[i], b, rtol=1e-8, atol=1e-9 * np.abs(b).max())


class _LinearNetwork:
    """dx/dt = A x + c0 + C u(t) for the window tests (books: the integral of x[0], a 'heat' channel)."""

    def __init__(self, a, c0, cu):
        self.a, self.c0, self.cu = a, c0, cu

    def derivatives(self, temps, forcing, fan_on):
        d_nodes = self.a @ temps + self.c0[:, None] + self.cu @ forcing
        return np.vstack([d_nodes, temps[:1]])


class _RampForcing:
    step = 3600.0

    def __init__(self, values):
        self.values = values

    def at(self, t):
        x = t / self.step
        i = min(int(x), self.values.shape[1] - 2)
        return self.values[:, i] + (x - i) * (self.values[:, i + 1] - self.values[:, i])


def test_window_is_exact_on_a_linear_network():
    # On a linear network with forcing linear between samples, the window scheme is the exact solution:
    # compare with a fine RK4 integration of the same ODE (independent reference), outputs and books.
    from atticsim.hybrid.fast import _Blocks, _window

    rng = np.random.default_rng(2)
    a = -np.diag([1 / 900.0, 1 / 4000.0, 1 / 150.0]) + 1e-4 * rng.standard_normal((3, 3))
    c0, cu = rng.standard_normal(3) * 1e-3, rng.standard_normal((3, 2)) * 1e-3
    net = _LinearNetwork(a, c0, cu)
    forcing = _RampForcing(rng.standard_normal((2, 6)) * 5.0)
    y0 = np.array([20.0, 25.0, 30.0, 0.0])
    jac = np.vstack([a, [[1.0, 0.0, 0.0]]])
    bounds = np.concatenate([[0.0], np.arange(600.0, 3 * 3600.0, 600.0), [3 * 3600.0]])
    out = np.arange(0.0, 3 * 3600.0 + 1.0, 60.0)
    f0 = net.derivatives(y0[:3, None], forcing.at(0.0)[:, None], False)[:, 0]
    res = _window(net, forcing, False, y0, f0, jac, np.vstack([cu, [[0.0, 0.0]]]),
                  _Blocks(a), bounds, 60.0, out, 1, None)
    t_stop, y_end, times, states, k, n_iter, crossed = res
    assert t_stop == bounds[-1] and not crossed and n_iter <= 2 and k == out.size
    # RK4 at 1 s steps
    x, t, dt = y0.copy(), 0.0, 1.0
    rk = {}
    for step in range(int(bounds[-1])):
        def f(t_, x_):
            return net.derivatives(x_[:3, None], forcing.at(t_)[:, None], False)[:, 0]
        k1 = f(t, x)
        k2 = f(t + dt / 2, x + dt / 2 * k1)
        k3 = f(t + dt / 2, x + dt / 2 * k2)
        k4 = f(t + dt, x + dt * k3)
        x, t = x + dt / 6 * (k1 + 2 * k2 + 2 * k3 + k4), t + dt
        if step % 60 == 59:
            rk[round(t)] = x.copy()
    for tt, st in zip(times, states):
        assert np.allclose(st, rk[round(tt)], rtol=1e-8, atol=1e-7)
    assert np.allclose(y_end, rk[round(bounds[-1])], rtol=1e-8, atol=1e-7)


def test_window_stops_at_a_located_crossing():
    # A single cooling node crossing a level: the located time is the analytic one,
    # x(t) = x_inf + (x0 - x_inf) e^{-t/tau}  =>  t* = tau ln((x0 - x_inf) / (level - x_inf)).
    from atticsim.hybrid.fast import _Blocks, _window

    tau, x_inf, x0, level = 300.0, 20.0, 40.0, 30.0
    a = np.array([[-1.0 / tau]])
    net = _LinearNetwork(a, np.array([x_inf / tau]), np.zeros((1, 1)))
    forcing = _RampForcing(np.zeros((1, 3)))
    jac = np.array([[-1.0 / tau], [1.0]])
    bounds = np.arange(0.0, 1801.0, 60.0)
    out = np.arange(0.0, 1801.0, 60.0)
    y0 = np.array([x0, 0.0])
    f0 = net.derivatives(y0[:1, None], forcing.at(0.0)[:, None], False)[:, 0]
    res = _window(net, forcing, False, y0, f0, jac, np.zeros((2, 1)), _Blocks(a), bounds, 60.0,
                  out, 1, (0, level, -1), locate=True)
    t_stop, y_end, times, states, k, n_iter, crossed = res
    t_star = tau * np.log((x0 - x_inf) / (level - x_inf))
    assert crossed and abs(t_stop - t_star) < 1e-2
    assert y_end[0] == pytest.approx(level, abs=1e-4)
    assert max(times) < t_stop and len(times) == int(t_star // 60)


def test_sequential_fallback_agrees_with_reference():
    # windows=False is the fallback a non-converging window uses: it must meet the same agreement.
    import atticsim.pipeline as pipeline
    from atticsim.hybrid.fast import integrate_fast

    path = ROOT / "scenarios" / "heron_lane_bungalow.toml"
    base = ["simulation.spinup_days=1"]
    sc_ref = load_scenario(path, base + ['simulation.solver="reference"'])
    start = sc_ref.weather.start
    ref = run_raw(sc_ref, start=start, end=start, include_no_fan=False)
    original = pipeline.integrator
    pipeline.integrator = lambda sim: (lambda *a: integrate_fast(*a, windows=False))
    try:
        seq = run_raw(load_scenario(path, base), start=start, end=start, include_no_fan=False)
    finally:
        pipeline.integrator = original
    n = ref.network.n_nodes
    assert np.max(np.abs(ref.with_fan.y[:n] - seq.with_fan.y[:n])) < 0.05
    ea = np.array([e[0] for e in ref.with_fan.events])
    eb = np.array([e[0] for e in seq.with_fan.events])
    assert ea.size == eb.size and np.max(np.abs(ea - eb), initial=0.0) < 5.0
