"""The thermostat's RC timer stage worked by hand, its tolerance band, and its keys in scenarios.

Closed forms: the first-order RC step response v(t) = v_f + (v_0 - v_f) exp(-t/RC) (Horowitz & Hill, The Art
of Electronics, 3rd ed., 2015, section 1.4; from memory), so charging from 0 V to V_th towards V takes
t = RC ln(V/(V - V_th)) and discharging from V_0 to V_th towards 0 V takes t = RC ln(V_0/V_th). The
numbers in the comments were worked by hand (a calculator's logarithms). The ngspice checks of the same
stages are in test_circuit_timer_ngspice.py.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from atticsim.circuit.timer import (
    TimerParams, TimerTolerances, charge_time, crossing_time, discharge_time, electrolytic_leakage_limit,
    node_levels, timer_analysis, timer_delays, timer_findings)
from atticsim.cli.main import cli
from atticsim.scenario import load_scenario
from atticsim.scenario.load import ScenarioError
from atticsim.scenario.thermostat import TimeRules, time_rules

ROOT = Path(__file__).resolve().parents[2]
CIRCUIT = ROOT / "scenarios" / "heron_lane_circuit.toml"


# --- closed forms ---------------------------------------------------------------------------------------

def test_charge_time_by_hand():
    # 1 Mohm x 100 uF = 100 s; to 8 V of 12 V: 100 s x ln(12/4) = 100 x 1.098612 = 109.861 s
    assert charge_time(1e6, 100e-6, 12.0, 8.0) == pytest.approx(109.8612, abs=1e-4)
    # at two thirds of any supply the factor is ln 3 = 1.0986 (timer IC makers' monostable formula, 1.1 R C)
    assert charge_time(1.0, 1.0, 9.1, 9.1 * 2 / 3) == pytest.approx(1.098612, abs=1e-6)
    # from a head start of 2 V: 100 s x ln((12 - 2)/(12 - 8)) = 100 x ln 2.5 = 91.629 s
    assert charge_time(1e6, 100e-6, 12.0, 8.0, v_start=2.0) == pytest.approx(91.6291, abs=1e-4)


def test_discharge_time_by_hand():
    # 470 kohm x 220 uF = 103.4 s; 9.1 V down to 4.55 V: 103.4 s x ln 2 = 103.4 x 0.693147 = 71.671 s
    assert discharge_time(470e3, 220e-6, 9.1, 4.55) == pytest.approx(71.6714, abs=1e-4)


def test_crossing_time_behind_and_never():
    # from 2 V towards 10 V the node passes 6 V after tau ln(8/4) = 0.693 tau
    assert crossing_time(10.0, 2.0, 10.0, 6.0) == pytest.approx(10.0 * math.log(2.0), rel=1e-12)
    assert crossing_time(10.0, 7.0, 10.0, 6.0) == 0.0  # already past it
    assert crossing_time(10.0, 0.0, 5.0, 6.0) == math.inf  # settles at 5 V, never reaches 6 V
    assert crossing_time(10.0, 0.0, 6.0, 6.0) == math.inf  # reaches it only after infinite time
    t = crossing_time(np.array([1.0, 2.0]), 0.0, 1.0, 0.5)  # vectorised
    assert t == pytest.approx([math.log(2.0), 2.0 * math.log(2.0)])


def test_node_levels_thevenin_by_hand():
    # 1 Mohm from 12 V, leakage 3 Mohm across 10 uF: R || R_L = 0.75 Mohm, tau = 7.5 s, settles at 9 V
    tau, v_f = node_levels(1e6, 10e-6, 12.0, 0.0, 3e6)
    assert tau == pytest.approx(7.5, rel=1e-12) and v_f == pytest.approx(9.0, rel=1e-12)
    # plus 1 uA flowing into the node: 0.75 Mohm x (12 uA + 1 uA) = 9.75 V
    assert node_levels(1e6, 10e-6, 12.0, 1e-6, 3e6)[1] == pytest.approx(9.75, rel=1e-12)


@pytest.mark.parametrize("wiring,on_call,want", [
    # 1 Mohm x 68 uF = 68 s, threshold 0.6: charging 68 ln(1/0.4) = 62.308 s, discharging 68 ln(1/0.6) = 34.736 s
    ("delay-start", "charges", {"start_delay": 62.3078}),
    ("delay-start", "discharges", {"start_delay": 34.7361}),
    ("delay-stop", "charges", {"run_on": 34.7361}),
    ("delay-stop", "discharges", {"run_on": 62.3078}),
    ("delay-both", "charges", {"start_delay": 62.3078, "run_on": 34.7361}),
    ("delay-both", "discharges", {"start_delay": 34.7361, "run_on": 62.3078}),
    # the monostable charges from 0 V: 68 ln(1/0.4) = 62.308 s
    ("minimum-run", "charges", {"min_run": 62.3078}),
])
def test_each_wiring_by_hand(wiring, on_call, want):
    p = TimerParams(wiring, 1e6, 68e-6, 0.6, 12.0, on_call)
    got = timer_delays(p)
    assert set(got) == set(want)
    for k in want:
        assert got[k] == pytest.approx(want[k], abs=1e-4)


def test_monostable_at_two_thirds_by_hand():
    # 2.2 Mohm x 100 uF = 220 s; t = 220 s x ln 3 = 241.695 s
    p = TimerParams("minimum-run", 2.2e6, 100e-6, 2.0 / 3.0, 9.1)
    assert timer_delays(p)["min_run"] == pytest.approx(241.6947, abs=1e-4)


def test_input_current_by_hand():
    # 10 Mohm x 10 uF = 100 s, threshold half of 9.1 V. 25 nA into the node lifts both levels by
    # 25 nA x 10 Mohm = 0.25 V: t = 100 s ln((9.35 - 0.25)/(9.35 - 4.55)) = 100 ln(9.1/4.8) = 63.966 s,
    # against 100 ln 2 = 69.315 s ideal: -7.7 %
    p = TimerParams("delay-start", 10e6, 10e-6, 0.5, 9.1, input_current=25e-9, capacitor="film")
    assert timer_delays(p, ideal=True)["start_delay"] == pytest.approx(69.3147, abs=1e-4)
    assert timer_delays(p)["start_delay"] == pytest.approx(63.9658, abs=1e-4)
    found = [f for f in timer_findings(p) if "input current" in f]
    assert found and "-7.7 %" in found[0] and "3.89 Mohm" in found[0]  # 10 Mohm x 3 % / 7.7 %
    # a tenth of the resistance (ten times the capacitance) shifts it a tenth as much: no finding
    small = TimerParams("delay-start", 1e6, 100e-6, 0.5, 9.1, input_current=25e-9, capacitor="film")
    assert not [f for f in timer_findings(small) if "input current" in f]


def test_leakage_by_hand():
    # 0.2 uA at 9.1 V is a 45.5 Mohm leak: R || R_L = 2.2 x 45.5 / 47.7 = 2.0985 Mohm, tau = 209.85 s, the
    # capacitor settles at 9.1 x 45.5 / 47.7 = 8.6803 V; to 2/3 of 9.1 V = 6.0667 V:
    # 209.85 s x ln(8.6803 / 2.6136) = 209.85 x 1.20033 = 251.89 s (ideal 241.69 s: +4.2 %)
    p = TimerParams("minimum-run", 2.2e6, 100e-6, 2.0 / 3.0, 9.1, leakage_current=0.2e-6, capacitor="electrolytic")
    assert timer_delays(p)["min_run"] == pytest.approx(251.890, abs=1e-3)
    assert any("+4.2 %" in f and "leakage" in f for f in timer_findings(p))


def test_electrolytic_leakage_limit_by_hand():
    # 0.01 C V (uA, with C in uF) or 3 uA, whichever is greater (makers' general-purpose series, from memory)
    assert electrolytic_leakage_limit(100e-6, 9.1) == pytest.approx(9.1e-6, rel=1e-12)  # 0.01 x 100 x 9.1
    assert electrolytic_leakage_limit(1e-6, 12.0) == 3e-6  # 0.12 uA -> the 3 uA floor
    # with no measured leakage an electrolytic at 2.2 Mohm gets the warning: 9.1 uA x 2.2 Mohm is 20 V
    p = TimerParams("minimum-run", 2.2e6, 100e-6, 2.0 / 3.0, 9.1, capacitor="electrolytic")
    assert any("rated limit" in f and "never stop" in f for f in timer_findings(p))
    # a film capacitor gets none
    assert not any("rated limit" in f for f in timer_findings(TimerParams("minimum-run", 2.2e6, 100e-6, 2 / 3, 9.1)))


def test_stuck_stage_gives_inf():
    # 5 uA of leakage at 12 V (2.4 Mohm) against 1 Mohm: the capacitor settles at 12 x 2.4/3.4 = 8.47 V,
    # below a 0.75 x 12 = 9 V threshold: the fan would never start
    p = TimerParams("delay-start", 1e6, 100e-6, 0.75, 12.0, leakage_current=5e-6)
    assert timer_delays(p)["start_delay"] == math.inf
    # discharging on a call without a diode: the capacitor cannot charge back above 9 V through R when the
    # call ends, so the fan would never stop; both delays are marked as never
    q = TimerParams("delay-both", 1e6, 100e-6, 0.75, 12.0, on_call="discharges", leakage_current=5e-6)
    assert timer_delays(q) == {"start_delay": math.inf, "run_on": math.inf}
    # with the reset diode (delay-start) the release recharges it through the diode, to within a diode drop
    # of 12 V (11.4 V), and the call discharges it through R || R_L = 0.70588 Mohm towards 0 V:
    # 70.588 s x ln(11.4/9) = 70.588 x 0.236389 = 16.686 s
    d = TimerParams("delay-start", 1e6, 100e-6, 0.75, 12.0, on_call="discharges", leakage_current=5e-6)
    assert timer_delays(d)["start_delay"] == pytest.approx(16.686, abs=1e-3)


def test_diode_reset_finding_by_hand():
    # the diode leaves the capacitor near 0.6 V: from there to 8 V of 12 V takes tau ln(11.4/4) = 1.04732 tau,
    # against tau ln 3 = 1.09861 tau: 4.7 % shorter
    p = TimerParams("delay-start", 1e6, 100e-6, 2.0 / 3.0, 12.0, capacitor="film")
    assert any("diode" in f and "5 % shorter" in f for f in timer_findings(p))


def test_other_findings():
    both = TimerParams("delay-both", 1e6, 100e-6, 0.5, 12.0, capacitor="film")
    assert any("remembers" in f and "300 s" in f for f in timer_findings(both))  # 3 R C
    ceramic = TimerParams("delay-both", 1e6, 10e-6, 0.5, 12.0, capacitor="ceramic")
    assert any("ceramic" in f for f in timer_findings(ceramic))
    # 11 V of a 12 V supply is inside the comparator's 1.5 V headroom (typical datasheet figure)
    high = TimerParams("minimum-run", 1e6, 10e-6, 11.0 / 12.0, 12.0)
    assert any("common-mode" in f for f in timer_findings(high))
    # discharging to 0.9 of the supply: t = tau ln(1/0.9); d ln t / d ln f = 1/ln(1/0.9) = 9.5
    steep = TimerParams("delay-stop", 1e6, 10e-6, 0.9, 12.0)
    assert any("9.5 %" in f for f in timer_findings(steep))
    assert not any("steeply" in f for f in timer_findings(both))  # at 0.5: 1/ln 2 = 1.44


# --- tolerance band ---------------------------------------------------------------------------------------

def test_band_contains_the_nominal_and_widens_with_the_tolerances():
    p = TimerParams("delay-both", 1e6, 100e-6, 0.6, 12.0, capacitor="film")
    narrow = timer_analysis(p, TimerTolerances(resistor=0.01, capacitor=0.05, threshold=0.01))
    wide = timer_analysis(p, TimerTolerances(resistor=0.05, capacitor=0.20, threshold=0.02))
    for k, d in narrow.delays.items():
        for r in (narrow, wide):
            assert r.worst[k][0] < r.band[k][0] < d < r.band[k][1] < r.worst[k][1]
        assert wide.band[k][0] < narrow.band[k][0] and wide.band[k][1] > narrow.band[k][1]
        assert wide.worst[k][0] < narrow.worst[k][0] and wide.worst[k][1] > narrow.worst[k][1]
    # no tolerances: no spread
    zero = timer_analysis(p, TimerTolerances(0.0, 0.0, 0.0))
    for k, d in zero.delays.items():
        assert zero.worst[k] == pytest.approx((d, d), rel=1e-12) and zero.band[k] == pytest.approx((d, d), rel=1e-12)


def test_worst_case_by_hand():
    # charging to 0.6: t = R C ln(1/(1 - f)) grows with R, C and f; longest with R +5 %, C +20 %, f +2 %:
    # 1.05 x 1.20 x 68 s x ln(1/(1 - 0.612)) = 85.68 x 0.946750 = 81.118 s; shortest 0.95 x 0.80 x 68 x
    # ln(1/(1 - 0.588)) = 51.68 x 0.886732 = 45.826 s
    p = TimerParams("delay-start", 1e6, 68e-6, 0.6, 12.0)
    r = timer_analysis(p, TimerTolerances(resistor=0.05, capacitor=0.20, threshold=0.02))
    assert r.worst["start_delay"] == pytest.approx((45.826, 81.118), abs=1e-3)


def test_band_is_reproducible_and_counts_stages_that_stick():
    p = TimerParams("minimum-run", 1e6, 100e-6, 0.99, 12.0, capacitor="film")
    a = timer_analysis(p, TimerTolerances(threshold=0.02), samples=500, seed=3)
    b = timer_analysis(p, TimerTolerances(threshold=0.02), samples=500, seed=3)
    assert a.band == b.band
    # 0.99 x 1.02 > 1: half of the corners (threshold +2 %) and some samples never reach the threshold
    assert a.never_switch >= 4
    assert any("never crosses" in f for f in a.findings)


def test_bad_timer_params_are_refused():
    with pytest.raises(ValueError, match="wiring"):
        TimerParams("delay-sometimes", 1e6, 1e-4, 0.5, 12.0)
    with pytest.raises(ValueError, match="threshold"):
        TimerParams("delay-start", 1e6, 1e-4, 1.0, 12.0)
    with pytest.raises(ValueError, match="resistance"):
        TimerParams("delay-start", math.inf, 1e-4, 0.5, 12.0)
    with pytest.raises(ValueError, match="tolerance"):
        TimerTolerances(capacitor=0.6)


# --- scenario keys ----------------------------------------------------------------------------------------

TIMER = ['thermostat.timer.wiring="minimum-run"', 'thermostat.timer.resistance="2.2 Mohm"',
         'thermostat.timer.capacitance="100 uF"', 'thermostat.timer.threshold="2/3"']


def test_rule_keys_parse_durations():
    sc = load_scenario(CIRCUIT, ['thermostat.start_delay="3 min"', 'thermostat.run_on="90 s"',
                                 "thermostat.min_run=45", 'thermostat.min_rest="0.5 h"'])
    assert time_rules(sc) == TimeRules(start_delay=180.0, run_on=90.0, min_run=45.0, min_rest=1800.0)
    # none by default, on both kinds of thermostat
    assert time_rules(load_scenario(CIRCUIT)) == TimeRules()
    demo = load_scenario(None, ['thermostat.min_rest="4 min"'])
    assert demo.thermostat.kind == "setpoints" and time_rules(demo) == TimeRules(min_rest=240.0)


def test_timer_keys_give_the_rule_they_implement():
    sc = load_scenario(CIRCUIT, TIMER + ['thermostat.min_rest="3 min"'])
    rules = time_rules(sc)
    # 2.2 Mohm x 100 uF x ln 3 = 241.69 s ideal; the default 25 nA input current shortens it a little
    # (the node's end point rises by 25 nA x 2.2 Mohm = 0.055 V)
    ideal = timer_delays(sc.thermostat.timer_params(), ideal=True)["min_run"]
    assert ideal == pytest.approx(241.6947, abs=1e-4)
    assert rules.min_run == pytest.approx(ideal, rel=0.02) and rules.min_run < ideal
    assert rules.min_rest == 180.0 and rules.start_delay == 0.0 and rules.run_on == 0.0
    assert sc.thermostat.time_rule_sources() == {"min_run": "thermostat.timer", "min_rest": "thermostat.min_rest"}
    # the supply defaults to the circuit's rail (the demo's 9.1 V zener)
    assert sc.thermostat.timer_params().supply == 9.1
    assert sc.thermostat.timer.tolerances().capacitor == 0.20  # electrolytic by default


@pytest.mark.parametrize("wiring,rule", [("delay-start", "start_delay"), ("delay-stop", "run_on"),
                                         ("delay-both", "start_delay"), ("delay-both", "run_on"),
                                         ("minimum-run", "min_run")])
def test_timer_and_the_rule_it_implements_are_refused_together(wiring, rule):
    overrides = TIMER[1:] + [f'thermostat.timer.wiring="{wiring}"', f'thermostat.{rule}="2 min"']
    with pytest.raises(ScenarioError) as err:
        load_scenario(CIRCUIT, overrides)
    line = str(err.value)
    assert "\n" not in line and "thermostat.timer" in line and f"thermostat.{rule}" in line
    # even a rule set to 0 names a second source for the same delay
    with pytest.raises(ScenarioError):
        load_scenario(CIRCUIT, TIMER[1:] + [f'thermostat.timer.wiring="{wiring}"', f"thermostat.{rule}=0"])


def test_rules_the_timer_does_not_implement_combine():
    sc = load_scenario(CIRCUIT, TIMER[1:] + ['thermostat.timer.wiring="delay-start"', 'thermostat.run_on="1 min"',
                                            'thermostat.min_run="5 min"', 'thermostat.min_rest="2 min"'])
    r = time_rules(sc)
    # delay-start charging to 2/3: 2.2 Mohm x 100 uF x ln 3 = 241.7 s (within 2 % with the input current)
    assert r.start_delay == pytest.approx(241.69, rel=0.02)
    assert (r.run_on, r.min_run, r.min_rest) == (60.0, 300.0, 120.0)


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


@pytest.mark.parametrize("override,key,reason", [
    ("thermostat.start_delay=-5", "thermostat.start_delay", "from 0 to one day"),
    ('thermostat.run_on="2 days"', "thermostat.run_on", "from 0 to one day"),
    ("thermostat.min_run=nan", "thermostat.min_run", "not a finite number"),
    ("thermostat.min_rest=inf", "thermostat.min_rest", "not a finite number"),
    ('thermostat.min_rest="5 degC"', "thermostat.min_rest", "expected a time"),
    ("thermostat.timer.threshold=1.2", "thermostat.timer.threshold", "less than 1"),
    ('thermostat.timer.threshold="2/0"', "thermostat.timer.threshold", "fraction"),
    ('thermostat.timer.capacitance="100 V"', "thermostat.timer.capacitance", "capacitance"),
    # 20 uA at 9.1 V is a 0.455 Mohm leak: the monostable's capacitor settles at 9.1 x 0.455/2.655 = 1.56 V
    ('thermostat.timer.leakage_current="20 uA"', "thermostat.timer", "never stop"),
    ('thermostat.timer.on_call="discharges"', "thermostat.timer", "monostable"),
])
def test_bad_values_give_one_line(tmp_path, override, key, reason):
    r = invoke("thermostat", CIRCUIT, *sum((["--set", o] for o in TIMER), []), "--set", override)
    assert r.exit_code == 2
    lines = r.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("atticsim: error: ")
    assert f"{CIRCUIT} (with --set): {key}: " in lines[0] and reason in lines[0], lines[0]


def test_timer_on_a_setpoint_thermostat_is_refused(tmp_path):
    r = invoke("run", "--out", tmp_path / "r", "--set", 'thermostat.timer.wiring="delay-start"')
    assert r.exit_code == 2
    line = r.output.strip().splitlines()[-1]
    assert "thermostat:" in line and 'kind = "circuit"' in line and "start_delay" in line
    assert not (tmp_path / "r").exists()


# --- the thermostat command -------------------------------------------------------------------------------

def test_thermostat_command_reports_the_timer():
    r = invoke("thermostat", CIRCUIT, *sum((["--set", o] for o in TIMER), []),
               "--set", 'thermostat.timer.leakage_current="0.2 uA"', "--set", 'thermostat.min_rest="3 min"', "--json")
    assert r.exit_code == 0, r.output
    d = json.loads(r.output)
    assert d["timer_wiring"] == "minimum-run"
    delay = d["timer_delay_s"]["min_run"]
    assert d["timer_band_s"]["min_run"][0] < delay < d["timer_band_s"]["min_run"][1]
    assert d["timer_worst_s"]["min_run"][0] < d["timer_band_s"]["min_run"][0]
    assert d["timer_ideal_delay_s"]["min_run"] == pytest.approx(241.6947, abs=1e-4)  # 220 s x ln 3
    assert d["time_rules_s"] == {"start_delay": 0.0, "run_on": 0.0, "min_run": delay, "min_rest": 180.0}
    assert d["time_rule_sources"] == {"min_run": "thermostat.timer", "min_rest": "thermostat.min_rest"}
    assert any("leakage" in f for f in d["timer_findings"])
    text = invoke("thermostat", CIRCUIT, *sum((["--set", o] for o in TIMER), []))
    assert text.exit_code == 0
    assert 'timer stage "minimum-run"' in text.output and "time rules for the simulation: minimum run" in text.output
    plain = invoke("thermostat", CIRCUIT, "--json")
    assert "timer_wiring" not in json.loads(plain.output)
    assert json.loads(plain.output)["time_rules_s"] == {"start_delay": 0.0, "run_on": 0.0, "min_run": 0.0,
                                                         "min_rest": 0.0}


def test_readme_timer_example_is_what_the_command_prints(tmp_path):
    # the README's worked example, run as the README says: its excerpt must be the command's own lines
    readme = (ROOT / "README.md").read_text()
    table = readme.split("and this table:\n\n```toml\n", 1)[1].split("```", 1)[0]
    excerpt = readme.split("`atticsim thermostat my_circuit.toml` prints (excerpt):\n\n```\n", 1)[1].split("```", 1)[0]
    text = CIRCUIT.read_text().replace('[thermostat]\nkind = "circuit"\n', '[thermostat]\nkind = "circuit"\nmin_rest = "3 min"\n')
    path = tmp_path / "my_circuit.toml"
    path.write_text(text + "\n" + table)
    r = invoke("thermostat", path)
    assert r.exit_code == 0, r.output
    printed = r.output.splitlines()
    for line in excerpt.strip("\n").splitlines():
        assert line in printed, line
