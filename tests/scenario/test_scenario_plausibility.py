"""Input that validates but is probably not meant: bare numbers absurd in SI and ordinary in IP, percentages,
the fan's size against the trade's rule of thumb, keys without effect. Warnings, not errors."""

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli
from atticsim.scenario import ScenarioError, demo_scenario, load_scenario

ROOT = Path(__file__).resolve().parents[2]
CFM = 0.3048**3 / 60.0  # m3/s per cfm (NIST SP 811 appendix B: 1 ft = 0.3048 m)


def test_a_bare_1200_for_a_flow_is_refused_naming_the_likely_unit():
    # 1200 m3/s (2.5 million cfm) is beyond any attic fan (the schema's bound, 100 m3/s): refused at once, with
    # the advice the warnings give
    with pytest.raises(ScenarioError) as err:
        demo_scenario(["fan.flow=1200"])
    line = str(err.value)
    assert "\n" not in line and "fan.flow: must be at most 100 m3/s" in line and "(got 1200 m3/s)" in line
    # 1200 cfm = 1200 x 0.000471947 = 0.5663 m3/s
    assert "1,200 cfm (0.5663 m3/s)" in line and 'write fan.flow = "1200 cfm"' in line


def test_a_bare_50_for_a_flow_names_the_likely_unit():
    sc = demo_scenario(["fan.flow=50"])
    assert sc.fan.flow == 50.0  # read as given: 50 m3/s, within the bounds (the scenario runs; it is a warning)
    w = [x for x in sc.input_warnings if x.startswith("fan.flow = 50 ")]
    assert len(w) == 1
    # 50 cfm = 50 x 0.000471947 = 0.0236 m3/s; 50 m3/s = 50 / 0.000471947 = 105,944 cfm
    assert "50 m3/s (105,944 cfm)" in w[0] and "50 cfm (0.0236 m3/s)" in w[0]
    assert 'write fan.flow = "50 cfm"' in w[0]
    # the fan is also far outside the trade's sizing (about 0.7 cfm per ft2 of attic floor)
    assert any("cfm per ft2" in x for x in sc.input_warnings)
    # with its unit it is an ordinary fan: no warning at all
    assert demo_scenario(['fan.flow="1200 cfm"']).input_warnings == ()


def test_a_percent_string_means_percent():
    assert demo_scenario(['house.indoor_relative_humidity="50 %"']).house.indoor_relative_humidity == 50.0
    assert demo_scenario(["house.indoor_relative_humidity=50"]).house.indoor_relative_humidity == 50.0
    sc = demo_scenario(["house.indoor_relative_humidity=0.5"])
    assert sc.house.indoor_relative_humidity == 0.5
    assert any("read as 0.5 % relative humidity" in w and "50 %" in w for w in sc.input_warnings)


@pytest.mark.parametrize("override,expected", [
    ("ceiling.insulation=30", 'write ceiling.insulation = "R-30"'),           # R-30 = 5.28 m2K/W
    ("thermostat.on=104", 'write thermostat.on = "104 degF"'),                 # 104 degF = 40 degC
    ("attic.floor_area=1500", 'write attic.floor_area = "1500 ft2"'),          # 1500 ft2 = 139.4 m2
    ("fan.power=0.25", 'write fan.power = "0.25 hp"'),                         # 0.25 hp = 186.4 W
    ("ceiling.leakage_area=30", 'write ceiling.leakage_area = "30 in2"'),     # 30 in2 = 0.0194 m2
])
def test_other_bare_numbers_name_their_likely_unit(override, expected):
    extra = ["thermostat.off=95"] if override.startswith("thermostat.on") else []
    sc = demo_scenario([override, *extra])
    assert any(expected in w for w in sc.input_warnings), sc.input_warnings


def test_fan_sizing_note_from_the_rule_of_thumb():
    # 0.7 cfm per ft2 of attic floor (common practice, from memory): the demo's 1200 cfm over 140 m2
    # (1507 ft2) is 0.80 cfm/ft2, ordinary; 300 cfm is 0.20, under a third of the rule: a note
    assert not any("cfm per ft2" in w for w in demo_scenario().input_warnings)
    notes = [w for w in demo_scenario(['fan.flow="300 cfm"']).input_warnings if "cfm per ft2" in w]
    assert len(notes) == 1 and "0.1991 cfm per ft2" in notes[0] and "about 1,055 cfm" in notes[0]


def test_keys_without_effect_are_named():
    assert any("fan.speed_ratio = 0.8 has no effect" in w for w in demo_scenario(["fan.speed_ratio=0.8"]).input_warnings)


@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "scenarios").glob("*.toml")))
def test_shipped_scenarios_raise_no_warning(name):
    assert load_scenario(ROOT / "scenarios" / name).input_warnings == ()


def test_run_prints_and_records_input_warnings(tmp_path):
    out = tmp_path / "r"
    r = CliRunner().invoke(cli, ["run", "--out", str(out), "--start", "2025-07-01", "--end", "2025-07-01",
                                 "--set", "simulation.spinup_days=0", "--set", "fan.flow=50"])
    assert r.exit_code == 0, r.output
    assert "WARNING: fan.flow = 50 is read as 50 m3/s" in r.output
    s = json.loads((out / "summary.json").read_text())
    assert any(w.startswith("fan.flow = 50 is read as") for w in s["warnings"])
    # such a fan (106,000 cfm) chatters: the run says so too
    assert s["short_cycles"] > 20 and any("short cycles" in w for w in s["warnings"])
