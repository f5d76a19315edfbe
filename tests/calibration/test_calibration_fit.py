"""The fit against synthetic truths: readings made by the model itself at known values (our own invented "true"
house: passive air changes 2.5 per hour, absorptance 0.85, R-22 insulation, against the scenario's 4, 0.92 and R-30)
plus a logger's white noise, and again plus a slow drift; the fit must recover the truth within its own 95 %
intervals, with intervals that are not absurdly wide; a key the log cannot see and two keys it cannot tell apart are
flagged; weather of the wrong days gives a bad fit, not a confident wrong answer."""

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from atticsim.calibration.fit import fit_measured
from atticsim.calibration.synthetic import synthetic_log, write_log
from atticsim.scenario import load_scenario
from atticsim.units import R_IP_TO_SI

ROOT = Path(__file__).resolve().parents[2]
BUNGALOW = ROOT / "scenarios" / "heron_lane_bungalow.toml"
TRUTH = {"vents.passive_ach": 2.5, "roof.absorptance": 0.85, "ceiling.insulation": 22.0 * R_IP_TO_SI}
TRUTH_SET = ["vents.passive_ach=2.5", "roof.absorptance=0.85", 'ceiling.insulation="R-22"']
KEYS = list(TRUTH)
START, END = "2025-07-10T00:00:00", "2025-07-20T00:00:00"
NOISE_K, DRIFT_K, SEED = 0.15, 0.25, 11


@pytest.fixture(scope="module")
def logs(tmp_path_factory):
    """Ten days of 5-minute readings at mid-attic and at the sensor, the fan's state and the outdoor air: white
    noise of 0.15 K alone, and with a drift of 0.25 K wandering over about 12 h (invented readings)."""
    folder = tmp_path_factory.mktemp("logs")
    truth = load_scenario(BUNGALOW, TRUTH_SET)
    out = {}
    for name, drift in (("white", 0.0), ("drift", DRIFT_K)):
        log = synthetic_log(truth, None, START, END, noise_k=NOISE_K, drift_k=drift, seed=SEED)
        write_log(log, folder / f"{name}.csv", {"invented": "yes"})
        out[name] = folder / f"{name}.csv"
    attic_only = synthetic_log(truth, None, START, END, columns=("attic_air_c",), noise_k=NOISE_K, seed=SEED,
                               outdoor=False)
    write_log(attic_only, folder / "attic_only.csv", {"invented": "yes"})
    out["attic_only"] = folder / "attic_only.csv"
    return out


@pytest.fixture(scope="module")
def fits(logs):
    return {name: fit_measured(str(BUNGALOW), [], str(logs[name]), KEYS) for name in ("white", "drift")}


def inside(result, key, value):
    lo, hi = result.interval_95[key]
    return lo <= value <= hi


def test_recovers_the_truth_from_white_noise(fits):
    r = fits["white"]
    for key, value in TRUTH.items():
        assert inside(r, key, value), (key, value, r.interval_95[key])
    # and the intervals are tight: 10 days of 0.15 K noise pin each key down
    lo, hi = r.interval_95["vents.passive_ach"]
    assert hi / lo < 1.1
    lo, hi = r.interval_95["roof.absorptance"]
    assert hi - lo < 0.015
    lo, hi = r.interval_95["ceiling.insulation"]
    assert hi / lo < 1.35
    # the misfit left is the logger's noise, and the fit says so
    assert r.rmse_k == pytest.approx(NOISE_K, abs=0.02) and r.verdict == "good"
    assert not any(r.flags.values()) and not r.warnings
    # the fan followed the log: the model's sensor at the logged switches sits at the set points
    sw = r.switching
    assert abs(sw["switch_on"]["error_k"]) < 0.2 and abs(sw["switch_off"]["error_k"]) < 0.2
    assert sw["model_starts"] == sw["logged_starts"]


def test_recovers_the_truth_through_a_drift(fits):
    r, white = fits["drift"], fits["white"]
    for key, value in TRUTH.items():
        assert inside(r, key, value), (key, value, r.interval_95[key])
    # not absurdly wide: the air changes and the absorptance identified (each interval under half its range),
    # the insulation (a small part of the attic's losses, the key a slow drift blurs most) narrowed inside its
    # bounds R-5..R-80 at both ends
    for key in ("vents.passive_ach", "roof.absorptance"):
        assert not {"poorly_identified", "at_bound"} & set(r.flags[key]), r.flags[key]
    lo, hi = r.interval_95["ceiling.insulation"]
    assert 5.0 * R_IP_TO_SI * 1.5 < lo and hi < 80.0 * R_IP_TO_SI / 1.2
    # wider than with white noise alone: the slow errors count as fewer independent readings
    for key in KEYS:
        assert np.ptp(np.log(r.interval_95[key])) > 2 * np.ptp(np.log(white.interval_95[key]))
        assert r.effective_samples[key] < 0.1 * r.fitted_rows
    # the correction is what holds the truth: the white-noise intervals of the same fit miss it for some key
    assert not all(r.interval_plain_95[k][0] <= v <= r.interval_plain_95[k][1] for k, v in TRUTH.items())


def test_a_key_the_log_cannot_see_is_flagged(logs):
    # the fan follows the log and no sensor column is logged: the sensor's lag cannot change any reading
    r = fit_measured(str(BUNGALOW), [], str(logs["attic_only"]), ["vents.passive_ach", "sensor.time_constant"])
    assert r.flags["sensor.time_constant"] == ["no_effect"]
    assert r.fitted["sensor.time_constant"] == 20.0 and r.interval_95["sensor.time_constant"] == [2.0, 600.0]
    assert any(w.startswith("sensor.time_constant has no visible effect") for w in r.warnings)
    assert r.flags["vents.passive_ach"] == []


def test_two_keys_the_log_cannot_tell_apart_are_flagged(logs):
    # the insulation and the rooms' surface film lie in series between the attic and the rooms: the log fixes
    # their sum, not each
    r = fit_measured(str(BUNGALOW), [], str(logs["white"]), KEYS + ["ceiling.room_film"],
                     bounds=["ceiling.room_film=0.05:2"])
    i, j = 2, 3
    assert r.correlation[i, j] < -0.9
    assert "correlated:ceiling.room_film" in r.flags["ceiling.insulation"]
    assert any(w.startswith("ceiling.insulation and ceiling.room_film cannot be told apart") for w in r.warnings)


def test_weather_of_the_wrong_days_is_a_bad_fit_not_a_confident_answer(logs, tmp_path):
    # the right place and season, the wrong days: the invented weather moved three days on
    from atticsim.forcing.weather import load_weather
    from atticsim.io.csv_format import write_weather_csv

    frame, meta = load_weather(str(ROOT / "weather_demo" / "saltmarsh_point_2025.csv"))
    moved = frame.copy()
    moved.index = moved.index + pd.Timedelta(days=3)
    moved = moved[moved.index.year == 2025]
    path = write_weather_csv(moved, meta, tmp_path / "wrong_days.csv")
    r = fit_measured(str(BUNGALOW), [], str(logs["drift"]), KEYS, weather=str(path))
    assert r.rmse_k > 1.0 and r.verdict != "good"
    assert any("barely improves on the scenario's own values" in w for w in r.warnings)
    for key, value in TRUTH.items():  # each truth inside its interval, or the key flagged
        assert inside(r, key, value) or r.flags[key], (key, r.interval_95[key], r.flags[key])
    assert sum(bool(f) for f in r.flags.values()) >= 2


def test_the_jacobian_in_parallel_gives_what_it_gives_in_one_process(logs):
    one = fit_measured(str(BUNGALOW), [], str(logs["white"]), KEYS, workers=1)
    two = fit_measured(str(BUNGALOW), [], str(logs["white"]), KEYS, workers=2)
    assert one.runs == two.runs and two.workers == 2 and one.workers == 1
    for key in KEYS:
        assert one.fitted[key] == pytest.approx(two.fitted[key], rel=1e-12)


def test_without_a_fan_column_the_thermostat_drives_the_fan(tmp_path):
    truth = load_scenario(BUNGALOW, TRUTH_SET)
    log = synthetic_log(truth, None, START, END, noise_k=NOISE_K, seed=SEED, fan=False)
    write_log(log, tmp_path / "no_fan.csv", {"invented": "yes"})
    r = fit_measured(str(BUNGALOW), [], str(tmp_path / "no_fan.csv"), KEYS)
    assert r.problem.fan_log is None and r.switching is None
    for key, value in TRUTH.items():
        assert inside(r, key, value), (key, value, r.interval_95[key])


def test_a_deck_probe_on_a_named_plane(tmp_path):
    # the underside of the north deck, logged with the attic air: the absorptance and the air changes recovered
    truth = load_scenario(BUNGALOW, TRUTH_SET)
    log = synthetic_log(truth, None, START, END, columns=("attic_air_c", "deck_c"), noise_k=NOISE_K, seed=SEED,
                        deck_plane=1)
    write_log(log, tmp_path / "deck.csv", {"invented": "yes"})
    r = fit_measured(str(BUNGALOW), ['ceiling.insulation="R-22"'], str(tmp_path / "deck.csv"),
                     ["vents.passive_ach", "roof.absorptance"], deck_plane="north")
    assert r.problem.deck_plane == 1
    for key in ("vents.passive_ach", "roof.absorptance"):
        assert inside(r, key, TRUTH[key]), (key, r.interval_95[key])
    # the wrong plane: the south deck runs hotter than the logged north one, and the fit is the worse for it
    wrong = fit_measured(str(BUNGALOW), ['ceiling.insulation="R-22"'], str(tmp_path / "deck.csv"),
                         ["vents.passive_ach", "roof.absorptance"])
    assert wrong.columns["deck_c"]["rmse_k"] > 2 * r.columns["deck_c"]["rmse_k"]


def test_a_logger_clock_an_hour_off_is_noticed(logs, tmp_path):
    # the same readings stamped an hour late (a clock on daylight-saving time written as standard time)
    lines = Path(logs["white"]).read_text().splitlines()
    out = []
    for line in lines:
        if line[:4].isdigit():
            stamp, rest = line.split(",", 1)
            line = (pd.Timestamp(stamp) + pd.Timedelta(hours=1)).isoformat() + "," + rest
        out.append(line)
    late = tmp_path / "late.csv"
    late.write_text("\n".join(out) + "\n")
    r = fit_measured(str(BUNGALOW), [], str(late), KEYS)
    # (the model's fan follows the late log too, so its response to the fan moves with the readings: the match
    # is found about an hour off, not to the minute)
    assert any("matches the model's best moved" in w and "min later" in w for w in r.warnings), r.warnings
    assert 2700.0 <= r.clock_lag_s <= 4800.0
    assert "clock" not in " ".join(fit_measured(str(BUNGALOW), [], str(logs["white"]), ["vents.passive_ach"]).warnings)
