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


DEMOS = ["heron_lane_bungalow", "heron_lane_circuit", "mesa_ranch", "starved_intakes"]


@pytest.mark.parametrize("name", DEMOS)
def test_fast_agrees_with_reference(name):
    base = ["simulation.spinup_days=1"]
    path = ROOT / "scenarios" / f"{name}.toml"
    sc_ref = load_scenario(path, base + ['simulation.solver="reference"'])
    start = sc_ref.weather.start
    end = (np.datetime64(start) + np.timedelta64(1, "D")).astype(str)
    ref = run_raw(sc_ref, start=start, end=end, include_no_fan=False)
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
