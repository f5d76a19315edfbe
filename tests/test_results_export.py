"""IP units in the files: with --units ip every SI column and key stays and an IP companion sits beside it."""

import json

import pandas as pd
import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli
from atticsim.results.export import ip_summary, ip_table
from atticsim.units import ip_companion


@pytest.mark.parametrize("name,value,ip_name,ip_value", [
    # temperature: degF = degC * 9/5 + 32 (definition of the Fahrenheit scale); 40 degC = 104 degF
    ("attic_air_max_c", 40.0, "attic_air_max_f", 104.0),
    ("hysteresis_k", 5.0, "hysteresis_delta_f", 9.0),
    # 1 W = 3.412142 Btu_IT/h (NIST SP 811, appendix B)
    ("ceiling_heat_gain_w", 1000.0, "ceiling_heat_gain_btu_h", 3412.14163),
    # 1 cfm = 0.3048^3 / 60 m3/s = 4.719474e-4 m3/s (NIST SP 811); the demo fan's 1200 cfm = 0.566337 m3/s
    ("fan_flow_m3_s", 0.5663369318, "fan_flow_cfm", 1200.0),
    ("fan_flow_mean_m3s", 0.5663369318, "fan_flow_mean_cfm", 1200.0),
    # 1 kWh = 3412.14 Btu_IT = 3.41214 kBtu (NIST SP 811)
    ("fan_energy_kwh", 10.0, "fan_energy_kbtu", 34.1214163),
    # 1 in. w.c. (60 degF) = 248.84 Pa; the project's inch of water column is 249.0889 Pa (4 degC)
    ("attic_pressure_pa", 249.0889, "attic_pressure_in_wc", 1.0),
    # 1 mph = 0.44704 m/s exactly
    ("wind_speed_m_s", 4.4704, "wind_speed_mph", 10.0),
    # 1 Btu/(h ft2) = 3.154591 W/m2 (NIST SP 811)
    ("poa_south_w_m2", 3.154591, "poa_south_btu_h_ft2", 1.0),
])
def test_ip_companions(name, value, ip_name, ip_value):
    new, convert = ip_companion(name)
    assert new == ip_name
    assert convert(value) == pytest.approx(ip_value, rel=2e-6)


def test_keys_without_a_unit_ending_get_no_companion():
    for name in ("fan_starts", "fan_on", "days", "dissipation_constant_w_per_k", "natural_ach_mean", "date"):
        assert ip_companion(name) is None


def test_companions_sit_beside_their_si_column_and_si_stays():
    df = pd.DataFrame({"date": ["2025-07-01"], "fan_starts": [3], "attic_air_max_c": [50.0], "fan_energy_kwh": [1.0]})
    out = ip_table(df, "ip")
    assert list(out.columns) == ["date", "fan_starts", "attic_air_max_c", "attic_air_max_f", "fan_energy_kwh",
                                 "fan_energy_kbtu"]
    assert out["attic_air_max_f"].iloc[0] == pytest.approx(122.0)
    assert ip_table(df, "si") is df
    s = ip_summary({"attic_air_max_c": 50.0, "on_band_c": [39.0, 41.0], "fan_starts": 2, "warnings": []}, "ip")
    assert list(s) == ["attic_air_max_c", "attic_air_max_f", "on_band_c", "on_band_f", "fan_starts", "warnings"]
    assert s["on_band_f"] == pytest.approx([102.2, 105.8])


def test_run_with_ip_units_writes_ip_columns_in_every_file(tmp_path):
    out = tmp_path / "ip"
    r = CliRunner().invoke(cli, ["run", "--out", str(out), "--start", "2025-07-01", "--end", "2025-07-01",
                                 "--set", "simulation.spinup_days=1", "--units", "ip"])
    assert r.exit_code == 0, r.output
    s = json.loads((out / "summary.json").read_text())
    assert s["attic_air_max_f"] == pytest.approx(s["attic_air_max_c"] * 1.8 + 32.0)
    assert s["fan_flow_mean_cfm"] == pytest.approx(1200.0, rel=1e-6)  # the demo fan is rated 1200 cfm
    ts = pd.read_csv(out / "timeseries.csv", nrows=5)
    cols = list(ts.columns)
    assert cols.index("attic_air_f") == cols.index("attic_air_c") + 1
    assert cols.index("ceiling_heat_gain_btu_h") == cols.index("ceiling_heat_gain_w") + 1
    assert cols.index("fan_flow_cfm") == cols.index("fan_flow_m3_s") + 1
    daily = pd.read_csv(out / "daily.csv")
    assert "fan_energy_kbtu" in daily and "attic_air_max_f" in daily and "attic_air_max_c" in daily
    assert "sensor_f" in pd.read_csv(out / "events.csv")
    # SI only without --units ip
    out2 = tmp_path / "si"
    r = CliRunner().invoke(cli, ["run", "--out", str(out2), "--start", "2025-07-01", "--end", "2025-07-01",
                                 "--set", "simulation.spinup_days=1"])
    assert r.exit_code == 0
    assert not any(c.endswith("_f") for c in pd.read_csv(out2 / "timeseries.csv", nrows=1).columns)
