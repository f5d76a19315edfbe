"""The fast solver against the reference solver on every demo scenario (the agreement the project promises:
0.05 K, 5 s, same starts, books to 0.1 %); its blocks against matrix exponentials in tests/hybrid/test_blocks.py."""

from pathlib import Path

import numpy as np
import pytest

from atticsim.pipeline import run_raw
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]


DEMOS = ["heron_lane_bungalow", "heron_lane_circuit", "mesa_ranch", "starved_intakes", "generous_intakes"]


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
