"""The command line: the run command's files, and one-line errors for bad input."""

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli

DEMO = Path(__file__).resolve().parents[2] / "atticsim" / "data" / "demo_house.toml"


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def one_line_error(result):
    err = result.output.strip().splitlines()
    return err[-1] if err else ""


def write_scenario(tmp_path, replace_from=None, replace_to=None, extra=""):
    text = DEMO.read_text()
    if replace_from is not None:
        assert replace_from in text
        text = text.replace(replace_from, replace_to)
    p = tmp_path / "house.toml"
    p.write_text(text + extra)
    return p


def test_run_writes_results_for_one_day(tmp_path):
    out = tmp_path / "res"
    r = invoke("run", "--out", out, "--start", "2025-07-01", "--end", "2025-07-01",
               "--set", "simulation.spinup_days=1", "--units", "ip")
    assert r.exit_code == 0, r.output
    for name in ("summary.json", "daily.csv", "timeseries.csv", "events.csv", "temperatures.png"):
        assert (out / name).stat().st_size > 0
    s = json.loads((out / "summary.json").read_text())
    for key in ("fan_run_hours", "fan_starts", "fan_energy_kwh", "short_cycles", "cycle_minutes_median",
                "attic_air_max_c", "attic_air_mean_c", "ceiling_heat_gain_kwh", "ceiling_heat_gain_no_fan_kwh",
                "energy_balance_error_pct", "period_start", "period_end"):
        assert key in s
    assert "°F" in r.output and "mains potential" in r.output
    # times in ISO 8601 extended form throughout: the offset as +hh:mm beside hh:mm:ss (ISO 8601; from memory)
    import re

    first_row = (out / "timeseries.csv").read_text().splitlines()[1]
    assert re.match(r"^2025-07-01T00:00:00[+-]\d\d:\d\d,", first_row), first_row
    from PIL import Image

    assert "Software" not in Image.open(out / "temperatures.png").info  # no tool names in the file's metadata
    events = (out / "events.csv").read_text().splitlines()
    assert all(re.match(r"^2025-07-\d\dT\d\d:\d\d:\d\d\.\d{6}[+-]\d\d:\d\d,", row) for row in events[1:]), events
    # existing output is not overwritten without --force, and is left as it was
    before = (out / "summary.json").read_text()
    r2 = invoke("run", "--out", out, "--start", "2025-07-01", "--end", "2025-07-01")
    assert r2.exit_code != 0 and "--force" in one_line_error(r2)
    assert (out / "summary.json").read_text() == before


@pytest.mark.parametrize("change,key,reason", [
    (('flow = "1200 cfm"', 'flow = "1200 kg"'), "fan.flow", "volume flow"),
    (('area = "78.3 m2"', 'area = "-78.3 m2"'), "roof.planes.0.area", "greater than 0"),
    (('off = "35 degC"', 'off = "45 degC"'), "thermostat", "closes on rise needs off < on"),
    (('flow = "1200 cfm"', 'flow = "0 cfm"'), "fan.flow", "greater than 0"),
    (('[vents]', '[vents]\ncolour = "red"'), "vents.colour", "unknown key"),
    (('insulation = "R-30"\n', ''), "ceiling.insulation", "required key is missing"),
    (('kind = "setpoints"', 'kind = "magic"'), "thermostat", "kind"),
    (('latitude = 29.3', 'latitude = 129.3'), "site.latitude", "must be at most 90 deg"),
    # renamed keys name their successors
    (('action = "close-on-rise"', 'mode = "heat"'), "thermostat.mode", "use thermostat.action"),
    (('underside_emittance = 0.90', 'underside_emittance = 0.90\nroughness = "rough"'), "roof.roughness",
     "use roof.surface_texture"),
])
def test_bad_scenarios_give_one_line_errors(tmp_path, change, key, reason):
    p = write_scenario(tmp_path, *change)
    out = tmp_path / "res"
    r = invoke("run", p, "--out", out)
    assert r.exit_code == 2
    line = one_line_error(r)
    assert line.startswith("atticsim: error: ") and str(p) in line and key in line and reason in line, line
    assert not out.exists()  # nothing half-written


def test_malformed_toml_and_missing_file(tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text("[fan\nflow = 3")
    r = invoke("run", p, "--out", tmp_path / "o")
    assert r.exit_code == 2 and "TOML syntax error" in one_line_error(r)
    r = invoke("run", tmp_path / "nope.toml", "--out", tmp_path / "o")
    assert r.exit_code == 2 and "file not found" in one_line_error(r)


def test_action_words_close_on_fall(tmp_path):
    # a switch that closes on fall runs the fan when cold: on below off
    r = invoke("run", "--out", tmp_path / "o", "--start", "2025-07-01", "--end", "2025-07-01",
               "--set", 'thermostat.action="close-on-fall"', "--set", "thermostat.on=20degC",
               "--set", "thermostat.off=22degC")
    assert r.exit_code == 0, r.output
    r = invoke("run", "--out", tmp_path / "p", "--set", 'thermostat.action="close-on-fall"')
    assert r.exit_code == 2 and "closes on fall needs on < off" in one_line_error(r)
    r = invoke("run", "--out", tmp_path / "q", "--set", 'thermostat.mode="cold"')
    assert r.exit_code == 2 and "thermostat.mode: renamed: use thermostat.action" in one_line_error(r)


def test_bad_set_override(tmp_path):
    r = invoke("run", "--out", tmp_path / "o", "--set", "fan.speed=3")
    assert r.exit_code == 2 and "fan.speed" in one_line_error(r) and "unknown key" in one_line_error(r)
    r = invoke("run", "--out", tmp_path / "o", "--set", "fan.flow")
    assert r.exit_code == 2 and "KEY=VALUE" in one_line_error(r)


def test_period_outside_weather(tmp_path):
    r = invoke("run", "--out", tmp_path / "o", "--start", "2031-01-01", "--end", "2031-01-02")
    assert r.exit_code == 2 and "outside the weather data" in one_line_error(r)


def test_help_is_fast_to_import():
    import subprocess
    import sys

    code = "import sys, atticsim.cli.main; print(sorted(m for m in ('matplotlib', 'pvlib', 'pandas', 'scipy.integrate', 'numba') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


# --- valid input the commands must take (each was once refused or mangled) ----------------------------------

ONE_DAY = ["--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=0"]


def _demo_weather_csv(path):
    from atticsim.forcing.weather import load_weather
    from atticsim.io import write_weather_csv

    frame, meta = load_weather("demo:saltmarsh-point")  # invented weather
    path.parent.mkdir(parents=True, exist_ok=True)
    write_weather_csv(frame.loc["2025-07-01":"2025-07-02"], meta, path)
    return path


def test_a_byte_order_mark_is_not_content(tmp_path):
    # editors on some systems start a UTF-8 file with a byte-order mark; it is read, not refused
    scenario = tmp_path / "bom.toml"
    scenario.write_bytes(b"\xef\xbb\xbf" + DEMO.read_bytes())
    weather = _demo_weather_csv(tmp_path / "plain.csv")
    (tmp_path / "bom.csv").write_bytes(b"\xef\xbb\xbf" + weather.read_bytes())
    r = invoke("run", scenario, "--weather", tmp_path / "bom.csv", "--out", tmp_path / "o", *ONE_DAY)
    assert r.exit_code == 0, r.output


def test_a_weather_path_with_backslashes_reaches_the_run_as_typed(tmp_path):
    # a folder named with backslashes (as a Windows path pasted on Linux): "\t" must stay backslash-t, never a tab
    weather = _demo_weather_csv(tmp_path / "C:\\tmp\\new" / "w.csv")
    r = invoke("run", "--weather", weather, "--out", tmp_path / "o", *ONE_DAY)
    assert r.exit_code == 0, r.output
    r = invoke("sweep", "--weather", weather, "--vary", "thermostat.on=38,40degC", "--workers", "1",
               "--out", tmp_path / "s", *ONE_DAY)
    assert r.exit_code == 0, r.output
    rec = json.loads((tmp_path / "s" / "study.json").read_text())
    assert rec["scenario"]["weather"]["file"] == str(weather)


def test_pvlib_and_demo_weather_are_taken_by_every_command(tmp_path):
    # pvlib's hot-humid typical year (a real climate, TMY2); the file names its site
    for i, args in enumerate((["run"], ["placements", "--only", "ridge,mid", "--workers", "1"],
                              ["sweep", "--vary", "thermostat.on=38,40degC", "--workers", "1"])):
        for weather in ("pvlib:12839.tm2", "demo:dry-wash-flats"):
            r = invoke(*args, "--weather", weather, "--out", tmp_path / f"{i}{weather[:4]}", *ONE_DAY)
            assert r.exit_code == 0, (args, weather, r.output)


def test_a_fan_curve_without_vent_openings_runs(tmp_path):
    r = invoke("run", "--out", tmp_path / "o", *ONE_DAY, "--set", "fan.curve_pressure=[0, 50]",
               "--set", 'fan.curve_flow=["1200 cfm", "0 cfm"]')
    assert r.exit_code == 0, r.output


def test_a_bug_is_one_line_saying_so_and_exit_1(tmp_path, monkeypatch):
    import atticsim.pipeline

    def broken(*a, **kw):
        raise KeyError("a key this test removed")

    monkeypatch.setattr(atticsim.pipeline, "simulate", broken)
    r = invoke("run", "--out", tmp_path / "o", *ONE_DAY)
    assert r.exit_code == 1
    assert r.stderr.strip().splitlines()[-1] == (
        "atticsim: internal error: KeyError: 'a key this test removed' (a bug in atticsim, not in your input; "
        "please report it with the command you ran; ATTICSIM_DEBUG=1 shows the traceback)")
    assert "Traceback" not in r.output and not (tmp_path / "o").exists()


def test_placements_says_what_in_the_input_looks_wrong(tmp_path):
    """A bare 0.5 for the indoor humidity is read as 0.5 %: placements warns as run does, before its runs, and
    keeps the warning in placements.json."""
    r = invoke("placements", "--only", "ridge", "--workers", "1", "--out", tmp_path / "p", *ONE_DAY,
               "--set", "house.indoor_relative_humidity=0.5")
    assert r.exit_code == 0, r.output
    said = [line for line in r.output.splitlines() if line.startswith("atticsim: warning:")]
    assert len(said) == 1 and "read as 0.5 % relative humidity" in said[0]
    kept = json.loads((tmp_path / "p" / "placements.json").read_text())["warnings"]
    assert len(kept) == 1 and "0.5 % relative humidity" in kept[0]
