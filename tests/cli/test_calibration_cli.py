"""``atticsim fit`` on the invented demo log: its files (fit.json, calibrated.toml through a TOML writer and ready to
run, the figures, the report page), the README's worked example, and one-line errors for bad input."""

import json
import os
import re
import tomllib
from pathlib import Path

import pandas as pd
import pytest
from click.testing import CliRunner
from matplotlib.colors import to_rgb

from atticsim.cli.main import cli
from atticsim.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[2]
BUNGALOW = ROOT / "scenarios" / "heron_lane_bungalow.toml"
DEMO_LOG = ROOT / "weather_demo" / "heron_lane_logger_2025.csv"
KEYS = "vents.passive_ach,roof.absorptance,ceiling.insulation,sensor.time_constant"


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def one_line_error(result):
    lines = result.output.strip().splitlines()
    return lines[-1] if lines else ""


@pytest.fixture(scope="module")
def demo_fit(tmp_path_factory):
    # run as the README shows it, from the repository's root with its relative paths
    out = tmp_path_factory.mktemp("fit") / "calibration"
    here = os.getcwd()
    os.chdir(ROOT)
    try:
        r = invoke("fit", "scenarios/heron_lane_bungalow.toml", "--measured", "weather_demo/heron_lane_logger_2025.csv",
                   "--fit", KEYS, "--out", out)
    finally:
        os.chdir(here)
    assert r.exit_code == 0, r.output
    return r, out


def test_fit_json_holds_the_values_intervals_and_misfit(demo_fit):
    _, out = demo_fit
    data = json.loads((out / "fit.json").read_text())
    assert set(data["fitted"]) == set(KEYS.split(",")) == set(data["interval_95"])
    for key, value in data["fitted"].items():
        lo, hi = data["interval_95"][key]
        assert lo <= value <= hi
    assert 0.1 < data["rmse_k"] < 0.5 and data["verdict"] == "good"
    # the invented truth the demo log was made with (weather_demo/make_demo_logger.py) lies inside each interval
    truth = {"vents.passive_ach": 2.5, "roof.absorptance": 0.85, "ceiling.insulation": 22 * 0.1761101836,
             "sensor.time_constant": 45.0}
    for key, value in truth.items():
        lo, hi = data["interval_95"][key]
        assert lo <= value <= hi, (key, lo, hi)
    assert data["cautions"] and data["fan_follows_log"] is True


def test_calibrated_toml_is_the_scenario_with_the_fitted_values(demo_fit, tmp_path):
    _, out = demo_fit
    data = json.loads((out / "fit.json").read_text())
    text = (out / "calibrated.toml").read_text()
    raw = tomllib.loads(text)
    # written in the user's own units, comments of the original kept, each value's interval beside it
    assert raw["ceiling"]["insulation"].startswith("R-") and raw["sensor"]["time_constant"].endswith(" s")
    assert "# Demo house \"Heron Lane bungalow\"" in text
    assert text.count("# fitted by atticsim fit to heron_lane_logger_2025.csv: 95 % interval") == 4
    sc = load_scenario(out / "calibrated.toml")
    for key, value in data["fitted"].items():
        section, name = key.split(".")
        assert getattr(getattr(sc, section), name) == pytest.approx(value, rel=2e-3)  # 4 significant figures
    # ready for atticsim run (its weather path points from the new file to the same weather)
    r = invoke("run", out / "calibrated.toml", "--start", "2025-07-15", "--end", "2025-07-15", "--set",
               "simulation.spinup_days=1", "--out", tmp_path / "run")
    assert r.exit_code == 0, r.output


def test_figures_series_and_report_page(demo_fit):
    _, out = demo_fit
    assert {p.name for p in out.iterdir()} == {"fit.json", "calibrated.toml", "series.csv", "overlay.png",
                                               "misfit.png", "report.html"}
    s = pd.read_csv(out / "series.csv")
    assert {"attic_air_c", "attic_air_model_c", "attic_air_start_c", "sensor_c", "fan_on", "in_fit"} <= set(s.columns)
    assert len(s) == 2881 and s["in_fit"].sum() == 2881 - 288
    page = (out / "report.html").read_text()
    assert "Calibration report" in page and "vents.passive_ach" in page and "data:image/png;base64," in page
    assert not re.search(r"(src|href)=\"https?:", page)
    assert "capacitive-dropper supply gives NO" in page or "capacitive" in page  # the cautions


def test_fit_figures_give_each_series_its_own_colour(demo_fit):
    from atticsim.calibration.fit import fit_measured
    from atticsim.calibration.plots import misfit_figure, overlay_figure

    r = fit_measured(str(BUNGALOW), [], str(DEMO_LOG), ["vents.passive_ach"])
    for fig in (overlay_figure(r), misfit_figure(r, "ip")):
        by_label = {}
        for ax in fig.axes:
            for line in ax.lines:
                if not line.get_label().startswith("_"):
                    by_label.setdefault(line.get_label(), set()).add(to_rgb(line.get_color()))
            for coll in ax.collections:
                by_label.setdefault(coll.get_label(), set()).add(to_rgb(coll.get_facecolor()[0]))
        assert all(len(c) == 1 for c in by_label.values()), by_label
        colours = [next(iter(c)) for c in by_label.values()]
        assert len(colours) == len(set(colours)), by_label


def test_readme_shows_what_the_command_prints(demo_fit):
    r, _ = demo_fit
    readme = (ROOT / "README.md").read_text()
    block = readme.split("atticsim fit scenarios/heron_lane_bungalow.toml --measured")[1].split("```", 3)[2]
    shown = [line for line in block.strip().splitlines() if line.strip()]
    printed = [line.rstrip() for line in r.output.splitlines()]
    for line in shown:
        assert line.rstrip() in printed, line


@pytest.mark.parametrize("args, start", [
    (["--fit", "fan.speed"], "--fit: fan.speed: is not a scenario key with a number"),
    (["--fit", "attic.floor_emittance"], "--fit: attic.floor_emittance: has no default range: give one with --bounds"),
    (["--fit", "vents.passive_ach", "--bounds", "vents.passive_ach=2"], "--bounds: vents.passive_ach: '2' is not LOW:HIGH"),
    (["--fit", "vents.passive_ach", "--bounds", "roof.absorptance=0.5:0.9"],
     "--bounds: roof.absorptance: is not one of the keys given to --fit"),
    (["--fit", "vents.passive_ach", "--bounds", "vents.passive_ach=5:2"], "--bounds: vents.passive_ach: LOW 5 must be"),
    (["--fit", "ceiling.insulation", "--bounds", "ceiling.insulation=R-11:lots"], "--bounds: ceiling.insulation: 'lots'"),
    (["--fit", "vents.passive_ach", "--spinup", "9d"], "time: the log covers 10.00 days; the fit needs at least 2 days"),
    (["--fit", "vents.passive_ach", "--deck-plane", "west"], "--deck-plane: west: no such roof plane"),
])
def test_bad_options_give_one_line(tmp_path, args, start):
    out = tmp_path / "o"
    r = invoke("fit", BUNGALOW, "--measured", DEMO_LOG, *args, "--out", out)
    assert r.exit_code == 2, r.output
    line = one_line_error(r)
    assert line.startswith("atticsim: error: ") and start in line, line
    assert not out.exists()


def test_a_key_without_effect_in_this_scenario_is_refused(tmp_path):
    r = invoke("fit", ROOT / "scenarios" / "starved_intakes.toml", "--measured", DEMO_LOG, "--fit",
               "vents.passive_ach", "--out", tmp_path / "o")
    assert r.exit_code == 2
    assert "--fit: vents.passive_ach: has no effect: the scenario describes its vent openings" in one_line_error(r)


def test_weather_that_does_not_cover_the_log_and_a_log_too_short(tmp_path):
    from atticsim.forcing.weather import load_weather
    from atticsim.io.csv_format import write_weather_csv

    frame, meta = load_weather(str(ROOT / "weather_demo" / "saltmarsh_point_2025.csv"))
    june = write_weather_csv(frame.loc["2025-06-01":"2025-06-30"], meta, tmp_path / "june.csv")
    r = invoke("fit", BUNGALOW, "--measured", DEMO_LOG, "--fit", "vents.passive_ach", "--weather", june, "--out",
               tmp_path / "o")
    assert r.exit_code == 2 and f"--weather: {june}: covers 2025-06-01" in one_line_error(r)
    lines = DEMO_LOG.read_text().splitlines()
    short = tmp_path / "short.csv"
    short.write_text("\n".join(lines[:8 + 2 * 288]) + "\n")  # the header lines and two days
    r = invoke("fit", BUNGALOW, "--measured", short, "--fit", "vents.passive_ach", "--out", tmp_path / "o")
    assert r.exit_code == 2 and f"{short}: time: the log covers 2.00 days" in one_line_error(r)
    no_outdoor = tmp_path / "no_outdoor.csv"
    no_outdoor.write_text("\n".join(re.sub(r",[-\d.]+,(\d)$", r",\1", ln) if ln[:1].isdigit() else
                                    ln.replace(",outdoor_c", "") for ln in lines) + "\n")
    r = invoke("fit", BUNGALOW, "--measured", no_outdoor, "--fit", "vents.passive_ach", "--weather", "log",
               "--out", tmp_path / "o")
    assert r.exit_code == 2 and "--weather: log: " in one_line_error(r) and "no outdoor_c" in one_line_error(r)


def test_an_existing_folder_needs_force(demo_fit):
    _, out = demo_fit
    r = invoke("fit", BUNGALOW, "--measured", DEMO_LOG, "--fit", "vents.passive_ach", "--out", out)
    assert r.exit_code == 2 and "already holds files (calibrated.toml" in one_line_error(r) and "pass --force" in one_line_error(r)


def test_weather_from_the_logs_outdoor_column_and_a_typical_year(tmp_path):
    r = invoke("fit", BUNGALOW, "--measured", DEMO_LOG, "--fit", "vents.passive_ach,roof.absorptance", "--weather",
               "log", "--out", tmp_path / "a")
    assert r.exit_code == 0, r.output
    assert "weather: the log's outdoor readings with a clear sky (--weather log)" in r.output
    assert "a rough stand-in" in r.output
    # a typical year of another place (on UTC-5 h: the log's clock confirmed, its readings moved onto the weather's)
    r = invoke("fit", BUNGALOW, "--measured", DEMO_LOG, "--fit", "vents.passive_ach", "--weather",
               "pvlib:723170TYA.CSV", "--utc-offset", "-6", "--out", tmp_path / "b")
    assert r.exit_code == 0, r.output
    assert "WARNING: The weather is a typical year, not the weather of the logged days" in r.output


def test_a_logged_fan_needs_the_scenarios_fan(tmp_path):
    r = invoke("fit", BUNGALOW, "--set", "fan.enabled=false", "--measured", DEMO_LOG, "--fit", "vents.passive_ach",
               "--out", tmp_path / "o")
    assert r.exit_code == 2
    assert f"{DEMO_LOG}: fan_on: the log has the fan running but the scenario's fan.enabled is false" in \
        one_line_error(r)
