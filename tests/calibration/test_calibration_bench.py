"""The sensor's still-air time constant from a timed run-on on the bench: the first-order inversion against a
textbook example, a numerical cooling curve and the sensor bodies' own convection; the scenario's thresholds,
self-heating and run-on rule; and the thermostat command's --run-on."""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from scipy.integrate import solve_ivp

from atticsim.calibration import CalibrationError
from atticsim.calibration.bench import bench_time_constant, scenario_bench, time_constant_from_run_on
from atticsim.circuit import thermistor_power
from atticsim.cli.main import cli
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]
BUNGALOW = ROOT / "scenarios" / "heron_lane_bungalow.toml"
CIRCUIT = ROOT / "scenarios" / "heron_lane_circuit.toml"


def test_inverse_of_a_textbook_lumped_capacitance_example():
    # Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, Example 5.1 (from memory): a thermocouple
    # junction of time constant 1.0 s in a 200 degC gas stream takes 5.2 s to go from 25 to 199 degC
    # (t = tau ln((200 - 25) / (200 - 199)) = 5.16 s, rounded in the book). Inverted: 1.0 s within that rounding.
    tau = time_constant_from_run_on(5.2, 25.0, 200.0, 199.0)
    assert abs(tau - 1.0) < 0.01


def test_recovers_the_time_constant_of_a_numerically_cooled_sensor():
    # dT/dt = -(T - T_room - rise) / tau integrated by scipy's RK45 to the switch-off temperature (our own bench
    # numbers: tau 37 s, room 24 degC, 0.3 K of self-heating, heated to 45 degC, off at 35 degC)
    tau, room, rise, start, off = 37.0, 24.0, 0.3, 45.0, 35.0
    ev = lambda t, y: y[0] - off  # noqa: E731
    ev.terminal = True
    sol = solve_ivp(lambda t, y: -(y - room - rise) / tau, (0, 1000), [start], events=ev, rtol=1e-10, atol=1e-12)
    run_on = float(sol.t_events[0][0])
    r = bench_time_constant(run_on, start, room, off, rise_k=rise, timing_s=0.5)
    assert abs(r.tau_s - tau) < 1e-5 * tau
    # the band is the inversion at the timing's ends
    assert r.band_s[0] == pytest.approx(tau * (run_on - 0.5) / run_on, rel=1e-9)
    assert r.band_s[1] == pytest.approx(tau * (run_on + 0.5) / run_on, rel=1e-9)
    # the same for a switch that closes on fall: the sensor cooled below its switch-on, warming back in the room
    sol = solve_ivp(lambda t, y: -(y - room) / tau, (0, 1000), [5.0], events=lambda t, y: y[0] - 12.0, rtol=1e-10,
                    atol=1e-12)
    r = bench_time_constant(float(sol.t_events[0][0]), 5.0, room, 12.0, action="close-on-fall")
    assert abs(r.tau_s - tau) < 1e-5 * tau


@pytest.mark.parametrize("body", ["epoxy-bead-2mm", "glass-bead-1mm", "disc-5mm", "probe-6mm"])
def test_agrees_with_the_sensor_bodies_own_convection(body):
    # The body presets cool by free convection and radiation (Churchill's sphere correlations, a conductance that
    # changes with the temperature difference): their response time from 45 to 35 degC in 24 degC still air,
    # inverted as a first-order body, gives their time constant at the mean surface temperature within 2 %.
    from atticsim.sensor.body import preset

    b = preset(body)
    run_on = b.response_time(45.0, 35.0, 0.0, 24.0)
    tau = bench_time_constant(run_on, 45.0, 24.0, 35.0).tau_s
    assert tau == pytest.approx(float(b.time_constant(0.0, 24.0, 40.0)), rel=0.02)


def test_repeats_widen_the_band():
    r = bench_time_constant([25.0, 27.0, 24.0], 45.0, 24.0, 35.0, timing_s=1.0)
    ln = math.log(21.0 / 11.0)
    assert r.tau_s == pytest.approx((76.0 / 3) / ln) and r.band_s == pytest.approx((23.0 / ln, 28.0 / ln))


@pytest.mark.parametrize("kwargs, option, reason", [
    ({"ambient_c": 35.5}, "--ambient", "the fan would never stop; do the test in a cooler room"),
    ({"start_c": 34.0}, "--heated-to", "not above the switch-off temperature 35.00 degC"),
    ({"rule_run_on_s": 30.0}, "--run-on", "no longer than the thermostat's own run-on (30 s)"),
])
def test_impossible_bench_figures_are_refused(kwargs, option, reason):
    args = {"run_on_s": 25.0, "start_c": 45.0, "ambient_c": 24.0, "off_c": 35.0, **kwargs}
    with pytest.raises(CalibrationError) as err:
        bench_time_constant(**args)
    assert str(err.value).startswith(option) and reason in str(err.value)


def test_circuit_scenario_gives_its_threshold_and_self_heating():
    sc = load_scenario(CIRCUIT)
    r = scenario_bench(sc, 25.0, 45.0, 24.0)
    t = sc.thermostat.thresholds()
    assert r.off_c == t.off_c and r.on_c == t.on_c
    # the divider's power at the switch-off point with the output sinking (the fan runs), over the still-air
    # dissipation constant (P / delta, the makers' definition)
    p = float(thermistor_power(sc.thermostat.circuit_params(), t.off_c, True))
    assert r.rise_k == pytest.approx(p / sc.sensor.dissipation_constant) and 0.1 < r.rise_k < 0.5


def test_the_thermostats_run_on_rule_comes_off_the_timing():
    plain = scenario_bench(load_scenario(BUNGALOW), 35.0, 45.0, 24.0)
    ruled = scenario_bench(load_scenario(BUNGALOW, ['thermostat.run_on="10 s"']), 45.0, 45.0, 24.0)
    assert ruled.tau_s == pytest.approx(plain.tau_s) and ruled.rule_run_on_s == 10.0


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def test_thermostat_command_shows_the_solution_and_writes_it(tmp_path):
    r = invoke("thermostat", BUNGALOW, "--run-on", "25s,27s,24s", "--ambient", "24degC", "--heated-to", "45degC")
    assert r.exit_code == 0, r.output
    assert "tau = t / ln((T_0 - T_final) / (T_off - T_final)) = 25.3 s / ln(21.00 K / 11.00 K)" in r.output
    assert "= 39.2 s" in r.output and "35.6 .. 43.3 s" in r.output
    r = invoke("thermostat", BUNGALOW, "--run-on", "25s", "--ambient", "75degF", "--heated-to", "45degC", "--json")
    data = json.loads(r.output)
    assert data["bench_tau_s"] == pytest.approx(25.0 / math.log((45 - 23.8889) / (35 - 23.8889)), rel=1e-4)
    out = tmp_path / "measured.toml"
    r = invoke("thermostat", BUNGALOW, "--run-on", "25s", "--ambient", "24degC", "--heated-to", "45degC",
               "--write", out)
    assert r.exit_code == 0, r.output
    assert load_scenario(out).sensor.time_constant == pytest.approx(38.7)  # 25 s / ln(21/11) = 38.66 s, 3 figures
    assert "from a bench run-on of 25s" in out.read_text()


def test_thermostat_command_bench_errors(tmp_path):
    r = invoke("thermostat", BUNGALOW, "--run-on", "25s", "--heated-to", "45degC")
    assert r.exit_code == 2 and "--run-on needs --ambient" in r.output
    r = invoke("thermostat", BUNGALOW, "--run-on", "25s", "--ambient", "36degC", "--heated-to", "45degC")
    assert r.exit_code == 2
    line = r.output.strip().splitlines()[-1]
    assert line.startswith("atticsim: error: --ambient: 36 degC: the sensor settles at 36.00 degC") and \
        "never stop" in line
    r = invoke("thermostat", BUNGALOW, "--set", 'sensor.body="epoxy-bead-2mm"', "--run-on", "25s", "--ambient",
               "24degC", "--heated-to", "45degC", "--write", tmp_path / "x.toml")
    assert r.exit_code == 2 and "sensor.body: is 'epoxy-bead-2mm'" in r.output
    assert not (tmp_path / "x.toml").exists()


def test_readme_shows_what_the_bench_command_prints():
    r = invoke("thermostat", CIRCUIT, "--run-on", "25s,27s,24s", "--ambient", "24degC", "--heated-to", "45degC")
    readme = (ROOT / "README.md").read_text()
    block = readme.split("atticsim thermostat scenarios/heron_lane_circuit.toml --run-on")[1].split("```", 3)[2]
    shown = [line.rstrip() for line in block.strip().splitlines() if line.strip()]
    printed = [line.rstrip() for line in r.output.splitlines()]
    assert shown and all(line in printed for line in shown), (shown, printed)
