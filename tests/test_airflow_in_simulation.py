"""The vent/fan pressure balance inside whole runs: mass conservation and the practitioner's facts."""

from pathlib import Path

import numpy as np
import pytest

from atticsim.forcing.weather import load_weather
from atticsim.air import air_density
from atticsim.pipeline import run_raw, simulate
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parent.parent
FAST = ["weather.start=2025-07-01", "weather.end=2025-07-01", "simulation.spinup_days=0"]


@pytest.fixture(scope="module")
def weather():
    return load_weather(str(ROOT / "weather_demo" / "saltmarsh_point_2025.csv"))


def study(name, extra=(), weather=None):
    sc = load_scenario(ROOT / "scenarios" / f"{name}.toml", FAST + list(extra))
    return simulate(sc, weather=weather)


@pytest.fixture(scope="module")
def starved(weather):
    return study("starved_intakes", weather=weather)


@pytest.fixture(scope="module")
def generous(weather):
    return study("generous_intakes", weather=weather)


def test_mass_balances_at_every_output_step(starved, weather):
    # Flows in = flows out within 1e-6 relative at every output step (the balance's residual).
    assert starved.timeseries["airflow_mass_residual"].abs().max() < 1e-6
    # And the house, checked independently from the reported volume flows at every airflow solve: the
    # mass the ceiling draws up (house air, 24 C) equals the mass the envelope lets in (outdoor air),
    # with rho = p / (R_d T) (ideal gas).
    sc = load_scenario(ROOT / "scenarios" / "starved_intakes.toml", FAST)
    raw = run_raw(sc, weather, include_no_fan=False)
    names = raw.network.airflow.path_names
    i_c, i_e = names.index("ceiling"), names.index("house envelope")
    pressure = raw.network.pressure
    drawn = [(t, st) for t, st in raw.with_fan.air_updates if st.path_flows[i_c] > 0 and st.path_flows[i_e] > 0]
    assert len(drawn) > 0.3 * len(raw.with_fan.air_updates)  # the starved attic draws house air much of the day
    for t, st in drawn:
        t_out = raw.forcing.at(t)[0]
        m_ceiling = st.path_flows[i_c] * air_density(24.0, pressure)
        m_envelope = st.path_flows[i_e] * air_density(t_out, pressure)
        assert m_ceiling == pytest.approx(m_envelope, rel=1e-6)


def test_starved_intakes_draw_conditioned_air_and_warn(starved, generous):
    s, g = starved.summary, generous.summary
    assert s["conditioned_air_drawn_m3"] > g["conditioned_air_drawn_m3"] > 0
    assert any("Intake net free area" in w for w in s["warnings"])
    assert not any("Intake net free area" in w for w in g["warnings"])
    assert s["net_benefit_kwh"] < 0


def test_more_intake_area_draws_less_house_air(weather):
    # A fact any practitioner expects (and the reason for the 1 ft2 per 300 cfm rule).
    drawn = []
    for area in ("1 ft2", "4 ft2", "12 ft2"):
        sc = load_scenario(ROOT / "scenarios" / "starved_intakes.toml",
                           FAST + [f'vents.openings.0.net_free_area="{area}"'])
        raw = run_raw(sc, weather, include_no_fan=False)
        q = [max(st.ceiling_flow, 0.0) for _, st in raw.with_fan.air_updates if st.fan_flow > 0]
        drawn.append(np.mean(q))
    assert drawn[0] > drawn[1] > drawn[2]


def test_faster_fan_cools_more_and_costs_more(weather):
    # Fan laws on the same curve: a faster fan moves more air, keeps the attic cooler, draws more power.
    out = []
    for ratio in (0.8, 1.2):
        sc = load_scenario(ROOT / "scenarios" / "generous_intakes.toml",
                           FAST + [f"fan.speed_ratio={ratio}", "thermostat.on=30", "thermostat.off=25"])
        r = simulate(sc, weather=weather)
        out.append(r.summary)
    assert out[1]["attic_air_max_c"] < out[0]["attic_air_max_c"]
    assert out[1]["fan_energy_kwh"] > out[0]["fan_energy_kwh"]
    assert out[1]["fan_flow_mean_m3s"] > out[0]["fan_flow_mean_m3s"]


def test_energy_books_close_with_balance_airflow(starved):
    assert abs(starved.summary["energy_balance_error_pct"]) < 0.5


def test_simple_state_equals_the_constructed_state():
    # AirflowModel.simple_state fills a per-fan-state template instead of calling the frozen constructor;
    # it must give the very state the constructor gives (an equivalence of two code paths: the flows
    # themselves are checked against the ideal gas in test_compiled_solver)
    from atticsim import demo_scenario
    from atticsim.airflow.model import AirflowModel, AirflowState

    model = AirflowModel(demo_scenario([]))
    for running in (False, True, False, True):
        for rho in (1.05, 1.2):
            q = model.passive + (model.rated_flow if running else 0.0)
            expected = AirflowState(outdoor_in=rho * q, house_in=0.0, attic_to_house=0.0, outdoor_flow=q,
                                    fan_flow=model.rated_flow if running else 0.0,
                                    fan_power=model.rated_power if running else 0.0,
                                    in_lower=rho * q, out_upper=rho * q)
            state = model.simple_state(rho, running)
            assert state == expected
            assert state is not model.simple_state(rho, running)  # a fresh object each call
            with pytest.raises(AttributeError):
                state.outdoor_in = 0.0  # still frozen
