"""The circuit thermostat in scenarios, in the simulation and in the ``thermostat`` command."""

import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from atticsim.circuit import air_temperatures, switching_temperatures, thermistor_power
from atticsim.cli.main import cli
from atticsim.forcing.weather import load_weather
from atticsim.pipeline import simulate
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]
CIRCUIT = ROOT / "scenarios" / "heron_lane_circuit.toml"


@pytest.fixture(scope="module")
def run():
    sc = load_scenario(CIRCUIT, ["weather.start=2025-07-01", "weather.end=2025-07-01", "simulation.spinup_days=1"])
    return sc, simulate(sc, weather=load_weather(str(ROOT / "weather_demo" / "saltmarsh_point_2025.csv")))


def test_run_switches_at_the_circuit_thresholds(run):
    sc, r = run
    th = switching_temperatures(sc.thermostat.circuit_params())
    ev = r.events
    assert len(ev) >= 2
    assert np.allclose(ev[ev.fan == "on"].sensor_c, th.on_c, atol=1e-6)
    assert np.allclose(ev[ev.fan == "off"].sensor_c, th.off_c, atol=1e-6)


def test_sensor_is_heated_by_its_divider_power(run):
    # Steady self-heating: T_thermistor - T_air = P / delta (dissipation constant definition). At night
    # the air changes slowly, so the sensor node must sit P(T_s)/delta above the air (within 0.05 K).
    sc, r = run
    ts = r.timeseries.between_time("01:00", "04:00")
    p = thermistor_power(sc.thermostat.circuit_params(), ts["sensor_c"].to_numpy(), ts["fan_on"].to_numpy() > 0)
    rise = ts["sensor_c"] - ts["attic_air_c"]
    assert np.allclose(rise, p / sc.sensor.dissipation_constant, atol=0.05)
    # the demo's 47 k NTC dissipates about 0.4 mW at night (3.2 V across about 25 k): 0.4 mW / 1.5 mW/K is
    # about 0.25 K, well above the 0.05 K tolerance, so the check cannot pass with no heating at all
    assert rise.mean() > 0.15


def test_air_temperature_at_switch_on_matches_the_report(run):
    # The report's steady-state "air temperature at switch-on" and the air around the sensor in the
    # simulation at the switch-on instant agree (the sensor lags the slowly warming air by well under 0.2 K).
    sc, r = run
    params = sc.thermostat.circuit_params()
    on_air, _ = air_temperatures(switching_temperatures(params), params, sc.sensor.dissipation_constant)
    t_on = r.events[r.events.fan == "on"].time.iloc[0]
    # the local air at the switch instant, extrapolated from the last two rows before it (the rows after it
    # already see the fan's cool air)
    before = r.timeseries.loc[:t_on, "sensor_local_air_c"].iloc[-2:]
    dt = (before.index[1] - before.index[0]).total_seconds()
    slope = (before.iloc[1] - before.iloc[0]) / dt
    air_at = before.iloc[1] + slope * (t_on - before.index[1]).total_seconds()
    assert air_at == pytest.approx(on_air, abs=0.2)


def test_thermostat_command_json_keys():
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--json"])
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    for key in ("on_c", "off_c", "hysteresis_k", "on_air_c", "off_air_c", "on_band_c", "off_band_c"):
        assert key in data
    assert data["on_band_c"][0] < data["on_c"] < data["on_band_c"][1]
    assert data["on_air_c"] < data["on_c"]  # a self-heated NTC switches before the air gets there
    assert any("mains potential" in c for c in data["cautions"])


def test_thermostat_design_command():
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--design", "--on", "42degC", "--off", "36degC",
                                 "--json"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.output)
    # by default the wanted temperatures are the air's (self-heating included)
    assert d["basis"] == "air" and d["on_air_c"] == pytest.approx(42.0, abs=1e-6)
    assert d["on_air_c"] - d["off_air_c"] >= 6.0 - 1e-9  # feedback rounded in the safe direction (wider)
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--design", "--on", "42degC", "--off", "36degC",
                                 "--basis", "thermistor", "--json"])
    d = json.loads(r.output)
    assert d["on_c"] == pytest.approx(42.0, abs=1e-6) and d["hysteresis_k"] >= 6.0 - 1e-9
    assert d["on_air_c"] < d["on_c"]  # the air is cooler than the self-heated thermistor


def test_contradictory_thermistor_position_is_refused(tmp_path):
    text = CIRCUIT.read_text().replace('feedback_on = "sense"', 'feedback_on = "sense"\nthermistor_position = "upper"')
    p = tmp_path / "bad.toml"
    p.write_text(text)
    r = CliRunner().invoke(cli, ["thermostat", str(p)])
    assert r.exit_code == 2
    line = r.output.strip().splitlines()[-1]
    assert str(p) in line and "thermostat" in line and "upper" in line, line


def test_setpoint_scenario_is_refused_by_thermostat_command():
    r = CliRunner().invoke(cli, ["thermostat"])
    assert r.exit_code == 2 and "circuit" in r.output
    assert "<built-in demo house>: thermostat.kind:" in r.output
    setpoints = Path(__file__).resolve().parents[2] / "scenarios" / "heron_lane_bungalow.toml"
    r = CliRunner().invoke(cli, ["thermostat", str(setpoints)])
    assert r.exit_code == 2
    assert f"{setpoints}: thermostat.kind: is 'setpoints'" in r.output.strip().splitlines()[-1]


def _air_at_first_switch_on(result):
    """The sensor's local air at the first switch-on instant, extrapolated from the two rows before it."""
    t_on = result.events[result.events.fan == "on"].time.iloc[0]
    before = result.timeseries.loc[:t_on, "sensor_local_air_c"].iloc[-2:]
    slope = (before.iloc[1] - before.iloc[0]) / (before.index[1] - before.index[0]).total_seconds()
    return before.iloc[1] + slope * (t_on - before.index[1]).total_seconds()


def test_design_for_the_air_written_and_simulated(tmp_path):
    # Design for the AIR at 40 degC / 35 degC, write the scenario with the chosen parts, simulate it: the air
    # around the sensor at the simulated switch-on is at 40 degC (within 0.2 K: the sensor lags the slowly
    # warming air by well under that), while the thermistor itself switches about 0.3 K higher.
    out = tmp_path / "designed.toml"
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--design", "--on", "40degC", "--off", "35degC",
                                 "--json", "--write", str(out)])
    assert r.exit_code == 0, r.output
    d = json.loads(r.output[r.output.index("{"):r.output.rindex("}") + 1])
    assert d["basis"] == "air" and d["on_air_c"] == pytest.approx(40.0, abs=1e-6)
    assert d["on_c"] > 40.2
    text = out.read_text()
    assert "FICTIONAL" in text and "CAUTION" in text  # the user's comments are kept
    sc = load_scenario(out, ["weather.start=2025-07-01", "weather.end=2025-07-01", "simulation.spinup_days=1"])
    assert sc.thermostat.circuit.sense_trim == pytest.approx(d["sense_trim_ohm"], rel=1e-5)
    assert sc.thermostat.circuit.feedback == d["feedback_ohm"]
    result = simulate(sc, weather=load_weather(str(ROOT / "weather_demo" / "saltmarsh_point_2025.csv")))
    # (the file gives the trimmer to 6 significant digits, 0.1 ohm: 2e-5 K on the threshold)
    assert result.events[result.events.fan == "on"].sensor_c.iloc[0] == pytest.approx(d["on_c"], abs=1e-3)
    assert _air_at_first_switch_on(result) == pytest.approx(40.0, abs=0.2)
    # the file is not overwritten without --force
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--design", "--on", "41degC", "--off", "35degC",
                                 "--write", str(out)])
    assert r.exit_code == 2 and "--force" in r.output.strip().splitlines()[-1] and out.read_text() == text


def test_design_text_in_ip_units_and_on_the_thermistor_basis():
    r = CliRunner().invoke(cli, ["thermostat", str(CIRCUIT), "--design", "--on", "104degF", "--off", "95degF",
                                 "--basis", "thermistor", "--units", "ip"])
    assert r.exit_code == 0, r.output
    assert "design for the THERMISTOR itself: ON at 104.0 °F, OFF at 95.0 °F" in r.output
    # 104 degF = 40 degC on the thermistor; its self-heating puts the air about 0.3 K (0.5 degF) lower
    assert "the AIR switches ON at 103.5 °F" in r.output and "°C" not in r.output.split("!")[0]
