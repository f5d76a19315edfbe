"""Study specification: --vary parsing, grid and Latin-hypercube construction, derived hysteresis, study files."""

from pathlib import Path

import numpy as np
import pytest

from atticsim.scenario import demo_scenario
from atticsim.study.spec import (Study, StudyError, grid_points, latin_hypercube, lhs_points, load_study_file,
                                 parse_comfort_limit, parse_heat_tolerance, parse_short_cycles_allowed,
                                 parse_starts_limit, parse_vary, point_overrides)

ROOT = Path(__file__).resolve().parents[2]


def strata_hit_once(u):
    """True when, in every column, each of the n equal strata of [0, 1) holds exactly one of the n values
    (the defining property of a Latin hypercube: McKay, Beckman & Conover, Technometrics 21(2), 1979)."""
    n = u.shape[0]
    return all(sorted(np.floor(u[:, d] * n).astype(int)) == list(range(n)) for d in range(u.shape[1]))


# --- ranges and lists ---------------------------------------------------------------------------------

def test_range_includes_stop_on_the_grid_and_appends_the_unit():
    # "thermostat.on=36:44:2degC" -> 36, 38, 40, 42, 44 degC (STOP included when on the grid).
    ax = parse_vary("thermostat.on=36:44:2degC")
    assert [v.display for v in ax.values] == ["36 degC", "38 degC", "40 degC", "42 degC", "44 degC"]
    assert ax.values[0].literal == '"36 degC"'
    assert (ax.start, ax.stop, ax.step, ax.unit) == (36.0, 44.0, 2.0, "degC")


def test_range_stop_off_the_grid_is_not_reached():
    # 36 + 2k <= 45 -> last value 44 (like numpy.arange(36, 45, 2)).
    assert [v.number for v in parse_vary("thermostat.on=36:45:2 degC").values] == list(np.arange(36, 45, 2.0))


def test_decimal_range_survives_binary_rounding():
    # 0.1 * 3 = 0.30000000000000004 in binary floating point; the grid must still read 0.1 ... 0.5, five values.
    ax = parse_vary("roof.absorptance=0.1:0.5:0.1")
    assert [v.display for v in ax.values] == ["0.1", "0.2", "0.3", "0.4", "0.5"]


def test_descending_range_and_negative_numbers():
    assert [v.number for v in parse_vary("x.y=2:-2:-2").values] == [2.0, 0.0, -2.0]


def test_comma_lists_numbers_text_and_booleans():
    ax = parse_vary("fan.flow=1000,1200,1500cfm")
    assert [v.display for v in ax.values] == ["1000 cfm", "1200 cfm", "1500 cfm"]
    assert not ax.is_range
    sky = parse_vary("weather.sky_model=berdahl-martin,swinbank")
    assert [v.literal for v in sky.values] == ['"berdahl-martin"', '"swinbank"']
    fan = parse_vary("fan.enabled=true,false")
    assert [v.literal for v in fan.values] == ["true", "false"]
    dates = parse_vary("weather.start=2025-07-01,2025-08-01")  # TOML dates, not numbers
    assert [v.literal for v in dates.values] == ["2025-07-01", "2025-08-01"]
    quoted = parse_vary('weather.file="demo:saltmarsh-point","demo:saltmarsh-point:2024"')
    assert [v.display for v in quoted.values] == ["demo:saltmarsh-point", "demo:saltmarsh-point:2024"]


@pytest.mark.parametrize("text,reason", [
    ("thermostat.on", "expected KEY=START:STOP:STEP"),
    ("thermostat.on=", "no values"),
    ("=36:44:2degC", "not a dotted scenario key"),
    ("thermostat.on=36:44:0degC", "STEP must not be zero"),
    ("thermostat.on=44:36:2degC", "flip its sign"),
    ("thermostat.on=36:40:1:2degC", "START:STOP:STEP (got 4 numbers)"),
    ("thermostat.on=36:40,42degC", "mix of ':' and ','"),
    ("fan.flow=1000cfm,1200cfm", "write the unit once"),
    ("thermostat.on=0:1:1e-9", "more than 10000"),
])
def test_bad_vary_is_one_line_naming_option_and_reason(text, reason):
    with pytest.raises(StudyError) as err:
        parse_vary(text)
    msg = str(err.value)
    assert "\n" not in msg and msg.startswith("--vary ") and reason in msg


# --- grid and Latin hypercube -------------------------------------------------------------------------

def test_grid_is_the_full_product_first_axis_slowest():
    a, b = parse_vary("thermostat.on=36:40:2degC"), parse_vary("thermostat.hysteresis=1,2K")
    pts = grid_points([a, b])
    # 3 x 2 combinations in itertools.product order (by hand).
    assert [(p["thermostat.on"].display, p["thermostat.hysteresis"].display) for p in pts] == [
        ("36 degC", "1 K"), ("36 degC", "2 K"), ("38 degC", "1 K"), ("38 degC", "2 K"),
        ("40 degC", "1 K"), ("40 degC", "2 K")]


def test_latin_hypercube_hits_each_stratum_once_per_dimension():
    u = latin_hypercube(17, 3, seed=4)
    assert u.shape == (17, 3) and np.all((u >= 0) & (u < 1))
    assert strata_hit_once(u)


def test_stratum_check_agrees_with_scipy_reference_and_can_fail():
    from scipy.stats import qmc

    # scipy's Latin-hypercube sampler (an outside reference) passes the same check ...
    assert strata_hit_once(qmc.LatinHypercube(d=3, seed=1).random(17))
    # ... and a plain uniform sample of the same size fails it (so the check can fail).
    assert not strata_hit_once(np.random.default_rng(1).random((17, 3)))


def test_latin_hypercube_is_reproducible_from_its_seed():
    assert np.array_equal(latin_hypercube(10, 2, seed=7), latin_hypercube(10, 2, seed=7))
    assert not np.array_equal(latin_hypercube(10, 2, seed=7), latin_hypercube(10, 2, seed=8))


def test_lhs_points_on_ranges_stay_in_range_and_keep_the_strata():
    a = parse_vary("thermostat.on=36:44degC")  # START:STOP without a step is enough for sampling
    b = parse_vary("fan.flow=1000:1600:100cfm")
    pts = lhs_points([a, b], 8, seed=3)
    on = np.array([p["thermostat.on"].number for p in pts])
    flow = np.array([p["fan.flow"].number for p in pts])
    assert np.all((on >= 36) & (on <= 44)) and np.all((flow >= 1000) & (flow <= 1600))
    # Mapped back to [0, 1) the values still occupy every stratum once (values are rounded to 6 digits).
    assert strata_hit_once(np.column_stack([(on - 36) / 8 * (1 - 1e-12), (flow - 1000) / 600 * (1 - 1e-12)]))
    assert pts[0]["fan.flow"].display.endswith(" cfm")


def test_lhs_on_a_list_uses_each_value_equally_often():
    ax = parse_vary("vents.passive_ach=1,2,3,4")
    pts = lhs_points([ax], 8, seed=11)
    counts = {v: sum(p["vents.passive_ach"].display == v for p in pts) for v in ("1", "2", "3", "4")}
    assert counts == {"1": 2, "2": 2, "3": 2, "4": 2}  # 8 strata over 4 values: 2 each by construction


def test_study_checks_sampling_options():
    ax = parse_vary("thermostat.on=36:44:2degC")
    with pytest.raises(StudyError, match="--points"):
        Study(axes=[ax], sample="lhs").check()
    with pytest.raises(StudyError, match="varied twice"):
        Study(axes=[ax, ax]).check()
    with pytest.raises(StudyError, match="thermostat.off"):
        Study(axes=[parse_vary("thermostat.hysteresis=1,2K"), parse_vary("thermostat.off=30,32degC")]).check()
    with pytest.raises(StudyError, match="at least one"):
        Study(axes=[]).check()
    st = Study(axes=[ax], sample="lhs", points=5)
    st.sample_points()
    assert isinstance(st.seed, int)  # a drawn seed is kept so that the study can be recorded and repeated


# --- derived hysteresis -------------------------------------------------------------------------------

def test_hysteresis_width_sets_off_below_on_in_heat_mode():
    base = demo_scenario()  # switch closing on rise, on = 40 degC
    width = parse_vary("thermostat.hysteresis=3K").values[0]
    assert point_overrides({"thermostat.hysteresis": width}, base) == ["thermostat.off=37.0"]
    # with the point's own switch-on temperature (104 degF = 40 degC exactly, by the Fahrenheit definition)
    on = parse_vary("thermostat.on=104degF").values[0]
    off = point_overrides({"thermostat.on": on, "thermostat.hysteresis": width}, base)[-1]
    assert off.startswith("thermostat.off=") and float(off.split("=")[1]) == pytest.approx(37.0, abs=1e-9)
    # a width given in degF is a difference: 9 delta-degF = 5 K
    w_f = parse_vary("thermostat.hysteresis=9degF").values[0]
    assert point_overrides({"thermostat.hysteresis": w_f}, base) == ["thermostat.off=35.0"]


def test_hysteresis_width_sets_off_above_on_in_cold_mode():
    base = demo_scenario(['thermostat.action="close-on-fall"', "thermostat.on=5", "thermostat.off=8"])
    width = parse_vary("thermostat.hysteresis=2K").values[0]
    assert point_overrides({"thermostat.hysteresis": width}, base) == ["thermostat.off=7.0"]


def test_hysteresis_width_must_be_positive():
    width = parse_vary("thermostat.hysteresis=0K").values[0]
    with pytest.raises(StudyError, match="greater than 0"):
        point_overrides({"thermostat.hysteresis": width}, demo_scenario())


# --- a bigger fan is never free ----------------------------------------------------------------------

def test_varied_flow_scales_the_fans_power_at_its_watts_per_flow():
    # The demo fan: 180 W at 1200 cfm. 1500 cfm of the same kind: 180 x 1500 / 1200 = 225 W (proportion).
    base = demo_scenario()
    flow = parse_vary("fan.flow=1500cfm").values[0]
    overrides = point_overrides({"fan.flow": flow}, base)
    assert overrides[0] == 'fan.flow="1500 cfm"' and overrides[1].startswith("fan.power=")
    assert demo_scenario(overrides).fan.power == pytest.approx(225.0, rel=1e-12)
    # a varied power is the user's own figure: not scaled
    power = parse_vary("fan.power=150W").values[0]
    assert point_overrides({"fan.flow": flow, "fan.power": power}, base) == ['fan.flow="1500 cfm"',
                                                                              'fan.power="150 W"']


def test_speed_ratio_of_a_fan_without_a_curve_follows_the_fan_laws():
    # Fan laws (Q ~ N, P ~ N^3; fan affinity laws, from memory): at 80 % speed the demo fan's 1200 cfm and
    # 180 W become 960 cfm and 180 x 0.512 = 92.16 W.
    ratio = parse_vary("fan.speed_ratio=0.8").values[0]
    sc = demo_scenario(point_overrides({"fan.speed_ratio": ratio}, demo_scenario()))
    assert sc.fan.flow == pytest.approx(0.8 * 1200 * 0.3048**3 / 60, rel=1e-12)
    assert sc.fan.power == pytest.approx(92.16, rel=1e-12)
    assert sc.input_warnings == ()  # derived values carry their units: nothing to question
    # a fan described by its curve takes the ratio itself (the airflow model applies the laws on the curve)
    curved = Path(__file__).resolve().parents[2] / "scenarios" / "starved_intakes.toml"
    from atticsim.scenario import load_scenario

    assert point_overrides({"fan.speed_ratio": ratio}, load_scenario(curved)) == ["fan.speed_ratio=0.8"]


# --- limits and study files ---------------------------------------------------------------------------

@pytest.mark.parametrize("text,per_hour", [("6", 6.0), ("6/h", 6.0), ("6 per hour", 6.0), ("0.1/min", 6.0), (4, 4.0)])
def test_starts_limit_forms(text, per_hour):
    assert parse_starts_limit(text) == pytest.approx(per_hour)


@pytest.mark.parametrize("text", ["six", "0/h", "-1", "6/day"])
def test_starts_limit_rejects_bad_text(text):
    with pytest.raises(StudyError, match="--starts-limit"):
        parse_starts_limit(text)


def test_short_cycle_allowance_and_heat_tolerance():
    assert parse_short_cycles_allowed("0") == 0 and parse_short_cycles_allowed(3) == 3
    for bad in ("-1", "few", True):
        with pytest.raises(StudyError, match="--short-cycles-allowed"):
            parse_short_cycles_allowed(bad)
    # a tolerance is a percentage, bare or with its sign: 1 and "1 %" are both 1 % = 0.01
    assert parse_heat_tolerance(1) == pytest.approx(0.01) and parse_heat_tolerance("0.5 %") == pytest.approx(0.005)
    with pytest.raises(StudyError, match="--heat-tolerance"):
        parse_heat_tolerance("150 %")


def test_comfort_limit_converts_fahrenheit():
    assert parse_comfort_limit("100 degF") == pytest.approx(37.7777777778)  # (100 - 32) * 5/9
    with pytest.raises(StudyError, match="--comfort-limit"):
        parse_comfort_limit("38 kg")


def test_demo_study_file_loads():
    st = load_study_file(ROOT / "studies" / "hysteresis_demo.toml")
    assert [a.key for a in st.axes] == ["thermostat.on", "thermostat.hysteresis"]
    assert len(grid_points(st.axes)) == 25
    assert (st.start, st.end, st.sample, st.starts_limit, st.comfort_limit_c) == (
        "2025-07-01", "2025-07-07", "grid", 6.0, 38.0)


@pytest.mark.parametrize("body,where", [
    ('colour = "red"', "colour: unknown key"),
    ('[[vary]]\nkey = "thermostat.on"\nstart = 36\nstop = 40\nstep = 2\nvalues = [1]',
     "either start/stop/step or values"),
    ('[[vary]]\nkey = "thermostat.on"\nstart = "36 degC"\nstop = 40\nstep = 2', "vary.0.start"),
    ('[limits]\nstarts_per_hour = "many"', "limits.starts_per_hour"),
    ('[sampling]\npoints = 2.5', "sampling.points"),
    ('[[vary]]\nkey = "thermostat.on"\nstart = 36\nstop = 40\nstep = 0', "STEP must not be zero"),
])
def test_study_file_errors_name_file_and_key(tmp_path, body, where):
    p = tmp_path / "bad.toml"
    p.write_text(body + "\n")
    with pytest.raises(StudyError) as err:
        load_study_file(p)
    assert str(p) in str(err.value) and where in str(err.value) and "\n" not in str(err.value)


def test_a_study_file_takes_months_or_dates_not_both(tmp_path):
    p = tmp_path / "summer.toml"
    p.write_text('[period]\nmonths = "jun-aug"\n[[vary]]\nkey = "thermostat.on"\nvalues = [38, 40]\nunit = "degC"\n')
    st = load_study_file(p)
    assert (st.months, st.start, st.end) == ("jun-aug", None, None)
    p.write_text('[period]\nmonths = "jun-aug"\nstart = "2025-06-01"\n[[vary]]\nkey = "thermostat.on"\n'
                 'values = [38, 40]\nunit = "degC"\n')
    with pytest.raises(StudyError, match="summer.toml: period.months: give either months or start/end"):
        load_study_file(p)
