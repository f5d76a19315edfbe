"""The compiled network (atticsim.network.kernel): its rates conserve energy at any state, for every scenario,
placement, sensor body, layer count, fan state and held air flows; flows() and rhs() agree; the self-heating
table against the circuit's function."""

import zlib
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from atticsim.network import kernel
from atticsim.network.model import ATTIC_BOOKS, BOOKS
from atticsim.assembly import build_network
from atticsim.network.placement import PLACEMENTS
from atticsim.scenario import demo_scenario, load_scenario
from atticsim.sensor.body import BODY_SHAPES, PRESETS

ROOT = Path(__file__).resolve().parents[2]
SCENARIO_FILES = sorted(p.stem for p in (ROOT / "scenarios").glob("*.toml"))
BODIES = [None] + sorted(PRESETS)
N_STATES = 50


def demo_network(placement, body, layers, extra=()):
    overrides = [f'sensor.placement="{placement}"', f"attic.air_layers={layers}"] + list(extra)
    if body is not None:
        overrides.append(f'sensor.body="{body}"')
    return build_network(demo_scenario(overrides))


def file_network(name, extra=()):
    return build_network(load_scenario(ROOT / "scenarios" / f"{name}.toml", list(extra)))


def random_states(network, rng, m=N_STATES):
    """Node temperatures 5-70 degC and realistic forcing, with a few edge states added (equal layer
    temperatures, roof cover at outdoor temperature, no wind)."""
    P = network.n_planes
    temps = rng.uniform(5.0, 70.0, (network.n_nodes, m))
    t_out = rng.uniform(10.0, 40.0, m)
    forcing = np.vstack([t_out, rng.uniform(260.0, 300.0, m), rng.uniform(0.0, 8.0, m),
                         np.minimum(rng.uniform(0.0, 20.0, m), t_out), rng.uniform(95_000.0, 102_000.0, m),
                         rng.uniform(18.0, 26.0, m), rng.uniform(0.0, 1000.0, (P, m))])
    temps[network.i_upper, 0] = temps[network.i_lower, 0]       # softplus at exactly zero
    temps[:P, 1] = forcing[0, 1]                                 # Walton at dT = 0 on the roof
    forcing[2, 2] = 0.0                                          # Sparrow at no wind
    return temps, forcing


def assert_conserves(network, fan_on, rng, air_state=None):
    """At random states the rates close the building's energy balance: the heat stored per second,
    sum C_i dT_i/dt over the building nodes (the sensor is outside the books), equals what the attic's books
    bring in: solar + sky + ground + exterior convection + ventilation - ceiling gain + triac heat (the
    first law for the lumped nodes; the flows between nodes cancel). Returns the rates."""
    if air_state is None:
        air_state = network.airflow.solve(40.0, 35.0, 3.0, fan_on)
    network.air = air_state
    temps, forcing = random_states(network, rng)
    rates = network.derivatives(temps, forcing, fan_on, air_state)
    assert rates.shape == (network.n_nodes + len(BOOKS), N_STATES) and np.all(np.isfinite(rates))
    n = network.n_nodes
    caps = network.capacities[:n - 1]
    stored = np.sum(caps[:, None] * rates[:n - 1], axis=0)
    b = dict(zip(BOOKS, rates[n:]))
    inflow = (b["solar"] + b["sky"] + b["ground"] + b["exterior_convection"] + b["ventilation"] - b["ceiling_gain"]
              + b["triac_heat"])
    gross = sum(np.abs(b[k]) for k in ATTIC_BOOKS)
    np.testing.assert_allclose(stored, inflow, rtol=0.0, atol=1e-10 * float(np.max(gross)))
    # flows() is the same body: its books equal rhs's, its per-plane net gains the roof nodes' rates
    q = network.flows(temps, forcing, fan_on, air_state)
    for k, name in enumerate(BOOKS):
        np.testing.assert_allclose(q[name], rates[n + k], rtol=1e-13, atol=1e-9)
    P = network.n_planes
    np.testing.assert_allclose(q["cover_net"], rates[:P] * network.c_cover, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(q["deck_net"], rates[P:2 * P] * network.c_deck, rtol=1e-12, atol=1e-9)
    return rates


def test_every_placement_and_body_shape_has_a_code():
    assert sorted(p.code for p in PLACEMENTS.values()) == list(range(len(PLACEMENTS)))
    assert set(BODY_SHAPES.values()) <= set(kernel.SHAPE_CODES)


@pytest.mark.parametrize("fan_on", [False, True])
@pytest.mark.parametrize("name", SCENARIO_FILES)
def test_scenario_files(name, fan_on):
    rng = np.random.default_rng(zlib.crc32(f"{name}{fan_on}".encode()))
    assert_conserves(file_network(name), fan_on, rng)


@pytest.mark.parametrize("layers", [1, 2])
@pytest.mark.parametrize("body", BODIES)
@pytest.mark.parametrize("placement", sorted(PLACEMENTS))
def test_demo_placements_bodies_layers(placement, body, layers):
    rng = np.random.default_rng(7)
    net = demo_network(placement, body, layers)
    assert (net.sensor_body is None) == (body is None) and net.layers == layers
    for fan_on in (False, True):
        rates = assert_conserves(net, fan_on, rng)
        # the sensor row really depends on the placement's local conditions
        assert np.ptp(rates[net.n_nodes - 1]) > 0.0


def test_constant_self_heating_and_board_triac_heat():
    net = demo_network("board", "epoxy-bead-2mm", 2, ['sensor.self_heating="5 mW"', 'sensor.triac_loss="2 W"'])
    packed = kernel.pack(net)
    assert packed.heat.shape == (2, 1) and np.all(packed.heat == 5e-3) and packed.heat_error == 0.0
    rates = assert_conserves(net, True, np.random.default_rng(3))
    assert np.all(rates[net.n_nodes + BOOKS.index("triac_heat")] == 2.0)
    assert net.index["enclosure"] < net.n_nodes - 1


@pytest.mark.parametrize("placement,body", [("board", "probe-6mm"), ("intake", "disc-5mm"), ("deck", None)])
def test_circuit_thermostat_with_other_placements(placement, body):
    extra = [f'sensor.placement="{placement}"'] + ([f'sensor.body="{body}"'] if body else [])
    net = file_network("heron_lane_circuit", extra)
    assert callable(net.sensor_power)
    rng = np.random.default_rng(11)
    for fan_on in (False, True):
        assert_conserves(net, fan_on, rng)


@pytest.mark.parametrize("placement,layers", [("mid", 2), ("intake", 1), ("exhaust", 2), ("ridge", 1)])
def test_arbitrary_held_air_flows(placement, layers):
    # Flows the simple airflow model never gives: house air both ways, net flow between the layers of
    # either sign, fan flow with the fan off (the fan state alone must gate it), a stalled running fan
    # (exhaust face velocity below the still-attic speed).
    net = demo_network(placement, "glass-bead-1mm", layers)
    rng = np.random.default_rng(5)
    signs = set()
    for fan_on in (False, True):
        for k in range(4):
            v = rng.uniform(0.0, 0.8, len(kernel.AIR_ORDER))
            v[5] = 0.0 if k == 0 else v[5]
            v[6] = rng.uniform(50.0, 300.0)
            v[7] = float(k % 2)  # fan makeup or not
            air = SimpleNamespace(**dict(zip(kernel.AIR_ORDER, v)))
            assert np.array_equal(kernel.air_vector(air), v)
            assert_conserves(net, fan_on, rng, air_state=air)
            signs.add(np.sign(air.in_lower + air.house_in - air.out_lower - air.attic_to_house))
    assert signs == {-1.0, 1.0}


def test_heat_table_against_the_circuit_function():
    net = file_network("heron_lane_circuit")
    power = net.sensor_power
    packed = kernel.pack(net)
    heat, t0, dt = packed.heat, packed.prm[kernel._HEAT_T0], packed.prm[kernel._HEAT_DT]
    m = heat.shape[1]
    assert (t0, dt) == (kernel.HEAT_T_MIN, kernel.HEAT_STEP)
    assert t0 + dt * (m - 1) == pytest.approx(kernel.HEAT_T_MAX, abs=1e-9)
    grid = t0 + dt * np.arange(m)
    rng = np.random.default_rng(1)
    picks = rng.integers(0, m, 200)
    inside = rng.uniform(kernel.HEAT_T_MIN, kernel.HEAT_T_MAX, 2000)
    for row, on in enumerate((False, True)):
        # the nodes hold the function's own values (scalar calls)
        exact = np.array([power(float(grid[i]), on) for i in picks])
        assert np.allclose(heat[row, picks], exact, rtol=1e-12, atol=0.0)
        # between nodes: the kernel's interpolation within the stated bound of the function
        looked = np.array([kernel._self_heating(t, float(on), packed.prm, heat) for t in inside])
        err = np.max(np.abs(looked - power(inside, on)))
        assert err <= packed.heat_error
        # clamped outside the table
        assert kernel._self_heating(-120.0, float(on), packed.prm, heat) == heat[row, 0]
        assert kernel._self_heating(300.0, float(on), packed.prm, heat) == heat[row, -1]
        assert np.isnan(kernel._self_heating(np.nan, float(on), packed.prm, heat))
    # the fan state changes the divider dissipation (the rows differ), and the bound is tiny against the power
    assert np.max(np.abs(heat[1] - heat[0])) > 1e-6
    assert 0.0 < packed.heat_error < 1e-7 * np.max(heat)


def test_heat_table_from_a_scalar_only_function():
    net = demo_network("mid", None, 2)

    def scalar_power(temp_c, fan_on):
        if not isinstance(temp_c, float):
            raise TypeError("scalars only")
        return 1e-3 + 2e-5 * temp_c + (5e-4 if fan_on else 0.0)

    net.sensor_power = scalar_power
    packed = kernel.pack(net)
    for t in (-80.0, 12.345, 55.0, 160.0):
        for on in (False, True):
            assert kernel._self_heating(t, float(on), packed.prm, packed.heat) == pytest.approx(
                scalar_power(t, on), rel=1e-12)


def test_pack_refuses_an_unknown_placement():
    net = demo_network("mid", None, 2)
    net.placement = "rafters"
    with pytest.raises(ValueError, match="placement"):
        kernel.pack(net)
