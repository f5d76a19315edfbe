"""A catalogue of bad input, given to the commands the way a careless or unlucky user would: each case must
end in exit status 2 with one line on stderr, ``atticsim: error: <file or --option>: <key>: <reason>``, naming
the file or option and the key, and must leave nothing written (no --out folder, no stray files).

The houses, sites, weather and circuit values are the project's fictional demo data; the typical-year files
are pvlib's, cut short here to make damaged copies.
"""

import fcntl
import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli

ROOT = Path(__file__).resolve().parents[2]
DEMO = (ROOT / "atticsim" / "data" / "demo_house.toml").read_text()
CIRCUIT = (ROOT / "scenarios" / "heron_lane_circuit.toml").read_text().replace(
    'file = "../weather_demo/saltmarsh_point_2025.csv"', 'file = "demo:saltmarsh-point"')
DAY = ["--start", "2025-07-01", "--end", "2025-07-01"]
SET = "<built-in demo house> (with --set)"


def _scenario(old: str, new: str, base: str = DEMO) -> str:
    assert old in base, old
    return base.replace(old, new, 1)


def _pvlib(name: str) -> bytes:
    from atticsim.forcing.weather import pvlib_data_file

    return pvlib_data_file(name).read_bytes()


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    """The input files the cases name (all made here from the demo data; damaged ones on purpose)."""
    from atticsim.forcing.weather import load_weather
    from atticsim.io import write_weather_csv

    d = tmp_path_factory.mktemp("in")
    files = {
        "house.toml": DEMO,
        "circuit.toml": CIRCUIT,
        "two_typos.toml": _scenario('flow = "1200 cfm"', 'flw = "1200 cfm"').replace(
            'volume = "175 m3"', 'volum = "175 m3"'),
        "missing_key.toml": _scenario('insulation = "R-30"\n', ''),
        "renamed.toml": _scenario('action = "close-on-rise"', 'mode = "close-on-rise"'),
        "syntax.toml": DEMO + "\n[fan\nflow = 3\n",
        "house_is_number.toml": "house = 3\n" + DEMO.split("[house]", 1)[1].split("\n", 3)[3],
        "deep.toml": "x = " + "[" * 5000 + "]" * 5000 + "\n",
        "feedback_huge.toml": _scenario('feedback = "300 kohm"', 'feedback = "5 Gohm"', CIRCUIT),
        "feedback_tiny_hysteresis.toml": _scenario('feedback = "300 kohm"', 'feedback = "900 Mohm"', CIRCUIT),
        "rail_zero.toml": _scenario('rail = "9.1 V"', 'rail = "0 V"', CIRCUIT),
        "r25_kg.toml": CIRCUIT.replace('thermistor_r25 = "47 kohm"', 'thermistor_r25 = "47 kg"'),
        "two_thermistors.toml": CIRCUIT.replace('thermistor_r25 = "47 kohm"',
                                                'thermistor_r25 = "47 kohm"\nthermistor_table = [[0, 1], [1, 2], '
                                                '[2, 3]]'),
        "existing.toml": "# a file the user keeps\n",
        "weather_bad_number.csv": None, "weather_unknown_column.csv": None, "weather_humid.csv": None,
        "weather_cut.csv": None, "weather.csv": None, "study_typo.toml": '[limit]\nstarts_per_hour = 6\n',
        "study_vary_typo.toml": '[[vary]]\nkey = "thermostat.on"\nstrt = 36\nstop = 40\nstep = 2\nunit = "degC"\n',
    }
    for name, text in files.items():
        if text is not None:
            (d / name).write_text(text)
    assert "thermistor_r25" in (d / "r25_kg.toml").read_text()
    (d / "binary.toml").write_bytes(bytes(range(256)) * 4)
    (d / "nul.toml").write_text(DEMO[:200] + "\x00" + DEMO[200:])
    (d / "huge.toml").write_text("# padding\n" * 300_000)
    (d / "folder.toml").mkdir()
    frame, meta = load_weather("demo:saltmarsh-point")  # invented weather
    write_weather_csv(frame.loc["2025-07-01":"2025-07-03"], meta, d / "weather.csv")
    good = (d / "weather.csv").read_text().splitlines()
    header = [i for i, line in enumerate(good) if line.startswith("time,")][0]
    cols = good[header].split(",")
    bad = list(good)
    bad[header + 5] = bad[header + 5].replace(bad[header + 5].split(",")[1], "abc", 1)
    (d / "weather_bad_number.csv").write_text("\n".join(bad) + "\n")
    unknown = list(good)
    unknown[header] = unknown[header].replace(cols[1], "colour", 1)
    (d / "weather_unknown_column.csv").write_text("\n".join(unknown) + "\n")
    humid = list(good)
    rh = cols.index("relative_humidity_pct") if "relative_humidity_pct" in cols else None
    if rh is not None:
        fields = humid[header + 3].split(",")
        fields[rh] = "150"
        humid[header + 3] = ",".join(fields)
    else:  # dew point above dry bulb: impossible
        fields = humid[header + 3].split(",")
        fields[cols.index("temp_dew_c")] = "60"
        humid[header + 3] = ",".join(fields)
    (d / "weather_humid.csv").write_text("\n".join(humid) + "\n")
    (d / "weather_cut.csv").write_text("\n".join(good[:header + 10]) + "\n" + good[header + 10][:17] + "\n")
    (d / "empty.csv").write_text("")
    (d / "noise.csv").write_bytes(os.urandom(3000))
    tmy2 = _pvlib("12839.tm2")
    (d / "miami_cut.tm2").write_bytes(tmy2[: len(tmy2) // 2 + 50])
    tmy3 = _pvlib("723170TYA.CSV")
    (d / "tmy3_short.csv").write_bytes(b"\n".join(tmy3.split(b"\n")[:4000]) + b"\n")
    (d / "tmy3_bom.csv").write_bytes(b"\xef\xbb\xbf" + tmy3)
    return d


# (id, arguments: {in} is the input folder, {out} a new output folder; what the line must name)
CASES = [
    # --- scenario values given with --set ---------------------------------------------------------------
    ("set-insulation-inf", ["run", *DAY, "--set", "ceiling.insulation=inf"], [SET, "ceiling.insulation", "finite"]),
    ("set-power-inf", ["run", *DAY, "--set", "fan.power=inf"], ["fan.power", "finite"]),
    ("set-volume-inf", ["run", *DAY, "--set", "attic.volume=inf"], ["attic.volume", "finite"]),
    ("set-volume-1e400", ["run", *DAY, "--set", "attic.volume=1e400"], ["attic.volume", "finite"]),
    ("set-volume-huge-int", ["run", *DAY, "--set", "attic.volume=" + "9" * 400], ["attic.volume", "too large"]),
    ("set-short-cycle-inf", ["run", *DAY, "--set", "simulation.short_cycle=inf"], ["simulation.short_cycle", "finite"]),
    ("set-short-cycle-10h", ["run", *DAY, "--set", 'simulation.short_cycle="10 h"'],
     ["simulation.short_cycle", "at most 3600 s"]),
    ("set-ridge-1000km", ["run", *DAY, "--set", 'attic.ridge_height="1000 km"'], ["attic.ridge_height", "at most 30 m"]),
    ("set-flow-nan", ["run", *DAY, "--set", "fan.flow=nan"], ["fan.flow", "finite"]),
    ("set-flow-negative", ["run", *DAY, "--set", "fan.flow=-1"], ["fan.flow", "greater than 0 m3/s"]),
    ("set-flow-bare-cfm", ["run", *DAY, "--set", "fan.flow=1200"], ["fan.flow", "at most 100 m3/s", '"1200 cfm"']),
    ("set-flow-misspelt", ["run", *DAY, "--set", "fan.flw=1"], ["fan.flw", "did you mean fan.flow?"]),
    ("set-table-misspelt", ["run", *DAY, "--set", "fann.flow=1"], ["fann", "did you mean fan?"]),
    ("set-key-wrong-table", ["run", *DAY, "--set", 'fan.placement="ridge"'], ["fan.placement", "sensor.placement"]),
    ("set-unit-bracket", ["run", *DAY, "--set", 'fan.flow="1 (m3/s"'], ["fan.flow", "unknown unit"]),
    ("set-unit-divide-by-zero", ["run", *DAY, "--set", 'fan.flow="1 m3/s/0"'], ["fan.flow", "unknown unit"]),
    ("set-unit-power-tower", ["run", *DAY, "--set", 'fan.flow="1 m3/s*10**10**10"'], ["fan.flow", "exponent"]),
    ("set-unit-wrong-kind", ["run", *DAY, "--set", 'fan.flow="12 kg"'], ["fan.flow", "volume flow"]),
    ("set-nested-list", ["run", *DAY, "--set", "fan.flow=[[[[[[1]]]]]]"], ["fan.flow", "expected a volume flow"]),
    ("set-deeply-nested", ["run", *DAY, "--set", "fan.flow=" + "[" * 3000 + "1" + "]" * 3000], ["fan.flow"]),
    ("set-long-text", ["run", *DAY, "--set", "fan.flow=" + "1" * 5000 + " cfm"], ["fan.flow", "characters"]),
    ("set-output-step-1us", ["run", *DAY, "--set", 'simulation.output_step="1 us"'],
     ["simulation.output_step", "at least 1 s"]),
    ("set-output-step-tiny", ["run", *DAY, "--set", "simulation.output_step=1e-6"], ["simulation.output_step"]),
    ("set-output-rows", ["run", "--months", "year", "--set", "simulation.output_step=2"],
     ["simulation.output_step", "output rows"]),
    ("set-spinup-huge", ["run", *DAY, "--set", "simulation.spinup_days=1e30"], ["simulation.spinup_days", "whole"]),
    ("set-spinup-bool", ["run", *DAY, "--set", "simulation.spinup_days=true"], ["simulation.spinup_days", "true/false"]),
    ("set-cop-bool", ["run", *DAY, "--set", "house.cooling_cop=true"], ["house.cooling_cop", "true/false"]),
    ("set-hysteresis-tiny", ["run", *DAY, "--set", "thermostat.off=39.999"], ["thermostat", "hysteresis"]),
    ("set-off-above-on", ["run", *DAY, "--set", "thermostat.off=45"], ["thermostat", "off < on"]),
    ("set-kind-unknown", ["run", *DAY, "--set", 'thermostat.kind="magic"'], ["thermostat", "kind must be one of"]),
    ("set-thermostat-typo", ["run", *DAY, "--set", "thermostat.onn=3"], ["thermostat.onn", "thermostat.on?"]),
    ("set-list-item-missing", ["run", *DAY, "--set", "roof.planes.5.area=3"], ["--set", "roof.planes.5.area",
                                                                              "no list item"]),
    ("set-list-item-negative", ["run", *DAY, "--set", "roof.planes.-1.area=3"], ["roof.planes.-1.area"]),
    ("set-no-planes", ["run", *DAY, "--set", "roof.planes=[]"], ["roof.planes", "at least 1 item"]),
    ("set-finish-unknown", ["run", *DAY, "--set", 'roof.covering.finish="pink"'], ["roof.covering.finish", "dark"]),
    ("set-material-unknown", ["run", *DAY, "--set", 'roof.covering.material="straw"'],
     ["roof.covering.material", "asphalt-shingle"]),
    ("set-placement-unknown", ["run", *DAY, "--set", 'sensor.placement="roof"'], ["sensor.placement", "ridge"]),
    ("set-latitude", ["run", *DAY, "--set", "site.latitude=129.3"], ["site.latitude", "at most 90 deg"]),
    ("set-utc-offset", ["run", *DAY, "--set", "site.utc_offset=99"], ["site.utc_offset", "at most 14"]),
    ("set-weather-empty", ["run", *DAY, "--set", 'weather.file=""'], ["weather.file", "empty"]),
    ("set-weather-tab", ["run", *DAY, "--set", 'weather.file="a\\tb"'], ["weather.file", "control characters"]),
    ("set-months-text", ["run", *DAY, "--set", 'house.cooling_months="xyz"'], ["house.cooling_months", "month"]),
    ("set-leak-over-ceiling", ["run", *DAY, "--set", "ceiling.leakage_area=300"],
     ["ceiling.leakage_area", "more than the whole ceiling", '"300 in2"']),
    ("set-volume-over-ridge", ["run", *DAY, "--set", "attic.ridge_height=1"], ["attic.volume", "does not fit"]),
    ("set-attic-mean-height", ["run", *DAY, "--set", "attic.volume=10000"], ["attic.volume", "mean height"]),
    ("set-curve-inf", ["run", *DAY, "--set", 'fan.curve_flow=[1,"inf"]', "--set", "fan.curve_pressure=[0,50]"],
     ["fan.curve_flow.1"]),
    ("set-curve-half", ["run", *DAY, "--set", "fan.curve_pressure=[0,50]"], ["fan", "curve_flow"]),
    ("set-openings-no-curve", ["run", *DAY, "--set",
                               'vents.openings=[{name="s", kind="soffit", net_free_area=1, height=0}]'],
     ["fan", "curve"]),
    ("set-no-equals", ["run", *DAY, "--set", "fan.flow"], ["--set", "fan.flow", "KEY=VALUE"]),
    ("set-empty-key", ["run", *DAY, "--set", "=3"], ["--set", "empty key"]),
    ("set-not-a-table", ["run", *DAY, "--set", "fan.flow.x=1"], ["fan.flow.x", "not a table"]),
    ("set-table-as-text", ["run", *DAY, "--set", 'thermostat="x"'], ["thermostat", "table"]),
    ("set-solver-unknown", ["run", *DAY, "--set", 'simulation.solver="magic"'], ["simulation.solver", "fast"]),
    ("set-tolerance-zero", ["run", *DAY, "--set", "simulation.fast_tolerance=0"],
     ["simulation.fast_tolerance", "at least"]),
    ("set-rtol-one", ["run", *DAY, "--set", "simulation.rtol=1"], ["simulation.rtol", "at most"]),
    ("set-humidity-150", ["run", *DAY, "--set", "house.indoor_relative_humidity=150"],
     ["house.indoor_relative_humidity", "at most 100"]),
    ("set-time-constant-2h", ["run", *DAY, "--set", 'sensor.time_constant="2 h"'], ["sensor.time_constant",
                                                                                   "at most 3600 s"]),
    ("set-floor-zero", ["run", *DAY, "--set", "attic.floor_area=0"], ["attic.floor_area", "at least 1 m2 (10.76 ft2)"]),
    ("set-tilt-90", ["run", *DAY, "--set", "roof.planes.0.tilt=90"], ["roof.planes.0.tilt", "less than 90 deg"]),
    ("set-balance-points", ["run", *DAY, "--set", "house.heating_balance_point=25"],
     ["house", "heating_balance_point"]),
    ("set-sky-model", ["run", *DAY, "--set", 'weather.sky_model="cloudy"'], ["weather.sky_model", "berdahl-martin"]),
    ("set-fan-power-30kW", ["run", *DAY, "--set", 'fan.power="30 kW"'], ["fan.power", "at most 20000 W"]),
    ("set-spin-up-negative", ["run", *DAY, "--set", 'fan.spin_up="-3 s"'], ["fan.spin_up", "at least 0 s"]),
    ("set-coast-down-two-hours", ["run", *DAY, "--set", 'fan.coast_down="2 h"'], ["fan.coast_down", "at most 3600 s"]),
    ("set-start-energy-as-power", ["run", *DAY, "--set", 'fan.start_energy="300 W"'], ["fan.start_energy", "energy"]),
    ("set-start-energy-twice", ["run", *DAY, "--set", 'fan.start_energy="300 J"', "--set",
                                'fan.locked_rotor_current="6 A"', "--set", 'fan.locked_rotor_time="1 s"'],
     ["fan", "not both"]),
    ("set-locked-rotor-alone", ["run", *DAY, "--set", 'fan.locked_rotor_current="6 A"'], ["fan", "go together"]),
    ("set-insulation-r500", ["run", *DAY, "--set", 'ceiling.insulation="R-500"'], ["ceiling.insulation",
                                                                                  "at most 35 m2K/W"]),
    ("set-designday-bad", ["designday", "--date", "2025-07-21", "--tmax", "35degC", "--range", "10K",
                           "--set", "fan.power=-3"], ["fan.power"]),
    ("set-placements-bad", ["placements", *DAY, "--set", "fan.flw=3"], ["fan.flw", "fan.flow"]),
    # --- scenario files ---------------------------------------------------------------------------------
    ("file-missing", ["run", "{in}/nothere.toml"], ["nothere.toml", "file not found"]),
    ("file-binary", ["run", "{in}/binary.toml"], ["binary.toml", "not a UTF-8 text file"]),
    ("file-nul", ["run", "{in}/nul.toml"], ["nul.toml", "NUL"]),
    ("file-syntax", ["run", "{in}/syntax.toml"], ["syntax.toml", "TOML syntax error"]),
    ("file-device", ["run", "/dev/zero"], ["/dev/zero", "not a regular file"]),
    ("file-folder", ["run", "{in}/folder.toml"], ["SCENARIO", "folder.toml"]),
    ("file-table-as-number", ["run", "{in}/house_is_number.toml"], ["house_is_number.toml", "house", "table"]),
    ("file-two-typos", ["run", "{in}/two_typos.toml"], ["two_typos.toml", "fan.flw", "fan.flow", "attic.volum",
                                                         "attic.volume, which is required"]),
    ("file-renamed-key", ["run", "{in}/renamed.toml"], ["renamed.toml", "thermostat.mode", "thermostat.action"]),
    ("file-huge", ["run", "{in}/huge.toml"], ["huge.toml", "larger than"]),
    ("file-nested-too-deep", ["run", "{in}/deep.toml"], ["deep.toml", "nested too deeply"]),
    ("file-required-missing", ["run", "{in}/missing_key.toml"], ["missing_key.toml", "ceiling.insulation",
                                                                 "required"]),
    ("file-designday", ["designday", "{in}/binary.toml", "--date", "2025-07-21", "--tmax", "35degC",
                        "--range", "10K"], ["binary.toml"]),
    # --- weather ----------------------------------------------------------------------------------------
    ("weather-missing", ["run", *DAY, "--weather", "{in}/nothere.csv"], ["nothere.csv", "not found"]),
    ("weather-folder", ["run", *DAY, "--weather", "{in}"], ["--weather", "directory"]),
    ("weather-binary", ["run", *DAY, "--weather", "{in}/noise.csv"], ["noise.csv", "format"]),
    ("weather-device", ["run", *DAY, "--weather", "/dev/zero"], ["/dev/zero", "not a regular file"]),
    ("weather-empty", ["run", *DAY, "--weather", "{in}/empty.csv"], ["empty.csv", "empty"]),
    ("weather-scenario-as-weather", ["run", *DAY, "--weather", "{in}/house.toml"], ["house.toml", "format"]),
    ("weather-csv-cut", ["run", *DAY, "--weather", "{in}/weather_cut.csv"], ["weather_cut.csv"]),
    ("weather-csv-number", ["run", *DAY, "--weather", "{in}/weather_bad_number.csv"],
     ["weather_bad_number.csv", "'abc'", "not a number"]),
    ("weather-csv-column", ["run", *DAY, "--weather", "{in}/weather_unknown_column.csv"],
     ["weather_unknown_column.csv", "colour", "unknown column"]),
    ("weather-csv-impossible", ["run", *DAY, "--weather", "{in}/weather_humid.csv"], ["weather_humid.csv"]),
    ("weather-tmy2-cut", ["run", *DAY, "--weather", "{in}/miami_cut.tm2", "--set", "site.utc_offset=-5"],
     ["miami_cut.tm2", "line"]),
    ("weather-tmy3-short", ["run", *DAY, "--weather", "{in}/tmy3_short.csv"], ["tmy3_short.csv", "line"]),
    ("weather-tmy3-bom", ["run", *DAY, "--weather", "{in}/tmy3_bom.csv"], ["tmy3_bom.csv", "byte-order mark"]),
    ("weather-demo-unknown", ["run", *DAY, "--weather", "demo:nowhere"], ["demo:nowhere", "saltmarsh-point"]),
    ("weather-demo-year", ["run", *DAY, "--weather", "demo:saltmarsh-point:abc"], ["demo:saltmarsh-point:abc",
                                                                                   "YEAR"]),
    ("weather-pvlib-missing", ["run", *DAY, "--weather", "pvlib:nothere.tm2"], ["pvlib:nothere.tm2"]),
    ("weather-year-on-dated", ["run", *DAY, "--weather", "{in}/weather.csv", "--year", "1999"],
     ["weather.csv", "year", "--year 1999", "dated"]),
    ("weather-year-range", ["run", *DAY, "--year", "99999"], ["--year", "99999"]),
    ("weather-year-text", ["run", *DAY, "--year", "abc"], ["--year", "abc"]),
    ("weather-period-outside", ["run", "--start", "2024-01-01", "--end", "2024-01-02"], ["period", "outside"]),
    ("weather-start-garbage", ["run", "--start", "someday", "--end", "2025-07-02"], ["start", "someday"]),
    ("weather-months-garbage", ["run", "--months", "xyz"], ["--months", "xyz"]),
    ("weather-months-and-dates", ["run", "--months", "jul", "--start", "2025-07-01"], ["--months", "--start"]),
    ("weather-end-before-start", ["run", "--start", "2025-07-03", "--end", "2025-07-01"], ["end", "after it starts"]),
    ("weather-sweep-missing", ["sweep", *DAY, "--vary", "thermostat.on=38,40degC", "--weather", "{in}/nothere.csv"],
     ["nothere.csv", "not found"]),
    ("weather-placements-pvlib-missing", ["placements", *DAY, "--weather", "pvlib:nothere.tm2"], ["pvlib:nothere.tm2"]),
    # --- the thermostat circuit ---------------------------------------------------------------------------
    ("circuit-feedback-5G", ["thermostat", "{in}/feedback_huge.toml"], ["feedback_huge.toml",
                                                                        "thermostat.circuit.feedback", "at most"]),
    ("circuit-zero-hysteresis", ["thermostat", "{in}/feedback_tiny_hysteresis.toml"],
     ["feedback_tiny_hysteresis.toml", "thermostat.circuit", "hysteresis"]),
    ("circuit-zero-hysteresis-run", ["run", "{in}/feedback_tiny_hysteresis.toml", *DAY], ["hysteresis"]),
    ("circuit-rail-zero", ["thermostat", "{in}/rail_zero.toml"], ["rail_zero.toml", "thermostat.circuit.rail"]),
    ("circuit-r25-kg", ["thermostat", "{in}/r25_kg.toml"], ["r25_kg.toml", "thermostat.circuit.thermistor_r25",
                                                             "resistance"]),
    ("circuit-two-thermistors", ["thermostat", "{in}/two_thermistors.toml"], ["two_thermistors.toml",
                                                                               "thermistor"]),
    ("circuit-frequency", ["thermostat", "{in}/circuit.toml", "--set", 'thermostat.mains.frequency="55 Hz"'],
     ["thermostat.mains", "50 or 60"]),
    ("circuit-line-voltage", ["thermostat", "{in}/circuit.toml", "--set", 'thermostat.mains.line_voltage="1000 V"'],
     ["thermostat.mains.line_voltage", "at most 264 V"]),
    ("circuit-seed-negative", ["thermostat", "{in}/circuit.toml", "--set", "thermostat.tolerances.seed=-1"],
     ["thermostat.tolerances.seed"]),
    ("circuit-key-of-setpoints", ["thermostat", "{in}/circuit.toml", "--set", "thermostat.on=40"],
     ["thermostat.on", "circuit thermostat"]),
    ("circuit-design-no-off", ["thermostat", "{in}/circuit.toml", "--design", "--on", "40degC"], ["--design", "--off"]),
    ("circuit-design-on-400", ["thermostat", "{in}/circuit.toml", "--design", "--on", "400degC", "--off", "35degC"],
     ["--on", "-40 to 120 degC"]),
    ("circuit-design-on-kg", ["thermostat", "{in}/circuit.toml", "--design", "--on", "40kg", "--off", "35degC"],
     ["--on", "temperature"]),
    ("circuit-design-hysteresis-zero", ["thermostat", "{in}/circuit.toml", "--design", "--on", "40degC",
                                        "--hysteresis", "0K"], ["--hysteresis"]),
    ("circuit-setpoints-scenario", ["thermostat"], ["thermostat.kind", "circuit"]),
    ("circuit-write-without-design", ["thermostat", "{in}/circuit.toml", "--write", "{in}/new.toml"],
     ["--write", "--design"]),
    ("circuit-write-existing", ["thermostat", "{in}/circuit.toml", "--design", "--on", "40degC", "--off", "35degC",
                                "--write", "{in}/existing.toml"], ["existing.toml", "--force"]),
    # --- studies --------------------------------------------------------------------------------------------
    ("study-too-many-points", ["sweep", "--vary", "thermostat.on=30:80:0.01degC", "--vary",
                               "thermostat.hysteresis=1:1000:1K"], ["--vary", "5,001,000 points", "20,000"]),
    ("study-step-zero", ["sweep", "--vary", "thermostat.on=36:44:0degC"], ["--vary", "STEP must not be zero"]),
    ("study-months-bad", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--months", "julyish"],
     ["--months", "julyish", "not a month"]),
    ("study-months-and-dates", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--months", "jul", "--start",
                                "2025-07-01"], ["--months", "not both"]),
    ("study-step-sign", ["sweep", "--vary", "thermostat.on=44:36:1degC"], ["--vary", "flip its sign"]),
    ("study-axis-too-long", ["sweep", "--vary", "fan.flow=1:1e9:1"], ["--vary", "values"]),
    ("study-vary-no-equals", ["sweep", "--vary", "thermostat.on"], ["--vary", "KEY=START:STOP:STEP"]),
    ("study-vary-bad-unit", ["sweep", *DAY, "--vary", "thermostat.on=36:44:2kg"], ["--vary", "thermostat.on",
                                                                                  "temperature"]),
    ("study-vary-typo", ["sweep", *DAY, "--vary", "fan.flw=1,2"], ["--vary", "fan.flw", "fan.flow"]),
    ("study-vary-inf", ["sweep", *DAY, "--vary", "thermostat.on=36:inf:1degC"], ["--vary"]),
    ("study-lhs-no-points", ["sweep", "--vary", "thermostat.on=36:44degC", "--sample", "lhs"], ["--points"]),
    ("study-points-on-grid", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--points", "5"], ["--points"]),
    ("study-points-huge", ["sweep", "--vary", "thermostat.on=36:44degC", "--sample", "lhs", "--points",
                           "100000000000"], ["--points", "100,000,000,000"]),
    ("study-seed-negative", ["sweep", "--vary", "thermostat.on=36:44degC", "--sample", "lhs", "--points", "4",
                             "--seed", "-1"], ["--seed"]),
    ("study-starts-limit", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--starts-limit", "0"],
     ["--starts-limit"]),
    ("study-heat-tolerance", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--heat-tolerance", "200%"],
     ["--heat-tolerance"]),
    ("study-comfort-limit", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--comfort-limit", "500degC"],
     ["--comfort-limit"]),
    ("study-resume-and-force", [
        "sweep", "--vary", "thermostat.on=36:44:2degC", "--resume", "--force"], ["--resume", "--force"]),
    ("study-file-missing", ["sweep", "--study", "{in}/nothere.toml"], ["nothere.toml", "not found"]),
    ("study-file-typo", ["sweep", "--study", "{in}/study_typo.toml"], ["study_typo.toml", "limit",
                                                                        "did you mean limits?"]),
    ("study-file-vary-typo", ["sweep", "--study", "{in}/study_vary_typo.toml"], ["study_vary_typo.toml",
                                                                                  "strt", "start"]),
    ("study-file-binary", ["sweep", "--study", "{in}/binary.toml"], ["binary.toml", "UTF-8"]),
    ("study-workers-zero", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--workers", "0"], ["--workers"]),
    ("study-workers-huge", ["sweep", "--vary", "thermostat.on=36:44:2degC", "--workers", "100000"], ["--workers"]),
    ("study-no-vary", ["sweep"], ["--vary", "at least one"]),
    ("study-hysteresis-circuit", ["sweep", "{in}/circuit.toml", *DAY, "--vary", "thermostat.hysteresis=1,2K"],
     ["thermostat.hysteresis", "setpoints"]),
    ("study-hysteresis-with-off", ["sweep", "--vary", "thermostat.hysteresis=1,2K", "--vary",
                                   "thermostat.off=30,31degC"], ["thermostat.hysteresis", "thermostat.off"]),
    ("study-output-rows", ["sweep", "--vary", "thermostat.on=38,40degC", "--set", "simulation.output_step=1",
                           "--start", "2025-01-01", "--end", "2025-12-31"], ["simulation.output_step", "output rows"]),
    ("study-period-outside", ["sweep", "--vary", "thermostat.on=38,40degC", "--start", "2019-07-01", "--end",
                              "2019-07-02"], ["period", "outside"]),
    # --- output folders and options --------------------------------------------------------------------------
    ("out-dev-null", ["run", *DAY, "--out", "/dev/null"], ["/dev/null", "not a folder"]),
    ("out-under-proc", ["run", *DAY, "--out", "/proc/atticsim-test/x"], ["/proc/atticsim-test/x", "cannot create"]),
    ("out-is-a-file", ["run", *DAY, "--out", "{in}/existing.toml"], ["existing.toml"]),
    ("out-holds-files", ["run", *DAY, "--out", "{full}"], ["--force", "holds files"]),
    ("out-in-use", ["run", *DAY, "--out", "{locked}"], ["another atticsim run", "--out"]),
    ("out-in-use-force", ["run", *DAY, "--force", "--out", "{locked}"], ["another atticsim run"]),
    ("out-sweep-holds-files", ["sweep", *DAY, "--vary", "thermostat.on=38,40degC", "--out", "{full}"],
     ["--resume", "--force"]),
    ("out-sweep-in-use", ["sweep", *DAY, "--vary", "thermostat.on=38,40degC", "--resume", "--out", "{locked}"],
     ["another atticsim run"]),
    ("opt-unknown", ["run", *DAY, "--oot", "x"], ["--oot", "no such option", "--out"]),
    ("opt-out-missing", ["run", *DAY], ["--out", "required"]),
    ("opt-unknown-command", ["rn"], ["rn", "no such command", "run"]),
    ("opt-units", ["run", *DAY, "--units", "imperial"], ["--units", "imperial"]),
    ("opt-solver", ["run", *DAY, "--solver", "magic"], ["--solver", "magic"]),
    ("opt-set-no-value", ["run", *DAY, "--out", "{out}", "--set"], ["--set", "requires an argument"]),
    ("opt-extra-argument", ["run", "{in}/house.toml", "extra.toml", *DAY], ["extra.toml"]),
    ("designday-date", ["designday", "--date", "2025-02-30", "--tmax", "35degC", "--range", "10K"],
     ["--date", "2025-02-30"]),
    ("designday-tmax", ["designday", "--date", "2025-07-21", "--tmax", "350degC", "--range", "10K"],
     ["--tmax", "-60 to 60 degC"]),
    ("designday-range", ["designday", "--date", "2025-07-21", "--tmax", "35degC", "--range", "-5K"], ["--range"]),
    ("designday-wind", ["designday", "--date", "2025-07-21", "--tmax", "35degC", "--range", "10K", "--wind", "fast"],
     ["--wind", "speed"]),
    ("designday-date-missing", ["designday", "--tmax", "35degC", "--range", "10K"], ["--date", "required"]),
    ("placements-only", ["placements", *DAY, "--only", "ridge,roof"], ["--only", "roof"]),
    ("placements-workers", ["placements", *DAY, "--workers", "0"], ["--workers"]),
]


def _files(folder: Path) -> set:
    return {str(p.relative_to(folder)) for p in folder.rglob("*")}


@pytest.mark.parametrize("case_id,args,expect", CASES, ids=[c[0] for c in CASES])
def test_bad_input_is_refused_in_one_line(inputs, tmp_path, case_id, args, expect):
    out = tmp_path / "out"
    full = tmp_path / "full"
    full.mkdir()
    (full / "keep.txt").write_text("the user's own file\n")
    locked = tmp_path / "locked"
    locked.mkdir()
    places = {"{in}": inputs, "{out}": out, "{full}": full, "{locked}": locked}
    argv = []
    for a in args:
        for name, path in places.items():
            a = a.replace(name, str(path))
        argv.append(a)
    if "--out" not in argv and args[0] in ("run", "designday", "placements", "sweep") and case_id != "opt-out-missing":
        argv += ["--out", str(out)]
    before_in, before_tmp = _files(inputs), _files(tmp_path)
    fd = os.open(locked / ".atticsim-lock", os.O_RDWR | os.O_CREAT)
    fcntl.flock(fd, fcntl.LOCK_EX)  # another run holds this folder
    try:
        result = CliRunner().invoke(cli, argv)
    finally:
        os.close(fd)
    err = [line for line in result.stderr.splitlines() if line.strip()]
    errors = [line for line in err if not line.startswith(("atticsim: warning:", "simulating", "running one"))]
    assert result.exit_code == 2, (result.exit_code, result.output)
    assert "Traceback" not in result.output
    assert len(errors) == 1 and errors[0].startswith("atticsim: error: "), err
    for word in expect:
        assert word in errors[0], (word, errors[0])
    # nothing written: no output folder, the other folders and the inputs as they were
    assert not out.exists()
    assert _files(inputs) == before_in
    (locked / ".atticsim-lock").unlink()
    assert _files(tmp_path) - {"locked/.atticsim-lock"} == before_tmp - {"locked/.atticsim-lock"}


def test_the_catalogue_is_large_and_covers_every_kind():
    kinds = {case_id.split("-")[0] for case_id, _, _ in CASES}
    assert len(CASES) >= 100
    assert {"set", "file", "weather", "circuit", "study", "out", "opt"} <= kinds
