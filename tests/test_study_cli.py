"""The ``sweep`` command: one-line errors for bad options, and a small study end to end."""

import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from atticsim.cli.main import AtticsimGroup
from atticsim.cli.sweep import sweep

# The command inside a group that handles errors like the atticsim group does (one line, exit status 2).
GROUP = AtticsimGroup(commands={"sweep": sweep})
FAST = ["--set", "simulation.spinup_days=0", "--set", "simulation.rtol=1e-4", "--start", "2025-07-01",
        "--end", "2025-07-01"]


def invoke(*args):
    return CliRunner().invoke(GROUP, ["sweep", *[str(a) for a in args]])


@pytest.mark.parametrize("vary,reason", [
    ("thermostat.on=36:44:0degC", "STEP must not be zero"),
    ("thermostat.on=44:36:2degC", "flip its sign"),
    ("thermostat.on", "expected KEY=START:STOP:STEP"),
    ("fan.flow=1000cfm,1200cfm", "write the unit once"),
    ("thermostat.on=36:44degC", "a grid needs START:STOP:STEP"),
    ("thermostat.onn=36:44:2degC", "thermostat.onn: unknown key"),
    ("thermostat.on=36:44:2kg", "temperature"),
    ("thermostat.hysteresis=-1,2K", "greater than 0 K"),
])
def test_bad_vary_gives_one_line_naming_the_option(tmp_path, vary, reason):
    r = invoke("--vary", vary, "--out", tmp_path / "o", *FAST)
    assert r.exit_code == 2, r.output
    lines = r.output.strip().splitlines()
    assert len(lines) == 1, r.output
    assert lines[0].startswith("atticsim: error: --vary") and reason in lines[0], lines[0]
    assert not (tmp_path / "o").exists()  # nothing written for a rejected study


def test_bad_limits_and_sampling_options(tmp_path):
    r = invoke("--vary", "thermostat.on=36,38degC", "--out", tmp_path / "o", "--starts-limit", "lots")
    assert r.exit_code == 2 and "--starts-limit" in r.output.strip().splitlines()[-1]
    r = invoke("--vary", "thermostat.on=36:44degC", "--sample", "lhs", "--out", tmp_path / "o")
    assert r.exit_code == 2 and "--points" in r.output.strip().splitlines()[-1]


def test_small_sweep_end_to_end(tmp_path):
    out = tmp_path / "study"
    r = invoke("--vary", "thermostat.hysteresis=1,4K", "--out", out, "--workers", "1", "--starts-limit", "6/h",
               *FAST)
    assert r.exit_code == 0, r.output
    assert "recommended point" in r.output or "recommendation: none" in r.output
    rec = json.loads((out / "recommendation.json").read_text())
    assert rec["starts_limit_per_hour"] == 6.0
    study = json.loads((out / "study.json").read_text())
    assert study["command"]["sweep"]["vary"] == ["thermostat.hysteresis=1,4K"]
    # a second run into the same folder needs --resume (nothing to recompute) or --force
    r2 = invoke("--vary", "thermostat.hysteresis=1,4K", "--out", out, "--workers", "1", *FAST)
    assert r2.exit_code == 2 and "--resume" in r2.output.strip().splitlines()[-1]
    r3 = invoke("--vary", "thermostat.hysteresis=1,4K", "--out", out, "--workers", "1", "--resume", *FAST)
    assert r3.exit_code == 0 and "0 computed, 2 reused" in r3.output


def test_circuit_study_recommends_standard_value_parts(tmp_path):
    # A study on the circuit thermostat: the recommended point comes with E24 parts that realise it
    # (design by the exact node equations; IEC 60063 E24 values).
    from atticsim.circuit import E24

    scenario = Path(__file__).resolve().parent.parent / "scenarios" / "heron_lane_circuit.toml"
    out = tmp_path / "c"
    r = invoke(scenario, "--vary", "thermostat.circuit.feedback=39,47kohm", "--out", out, "--workers", "1",
               "--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=0")
    assert r.exit_code == 0, r.output
    rec = json.loads((out / "recommendation.json").read_text())
    parts = rec["circuit_parts"]
    mantissa = parts["feedback_ohm"] / 10 ** np.floor(np.log10(parts["feedback_ohm"]))
    assert any(abs(mantissa - v) < 1e-9 for v in E24)
    assert parts["realised_on_c"] == pytest.approx(parts["on_c"], abs=1e-6)
    assert "standard parts (E24)" in r.output
