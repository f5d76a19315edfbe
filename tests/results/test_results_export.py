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


# --- how tables are written: numbers to their decimals, ISO times with offsets, CSV as RFC 4180 -------------

import csv  # noqa: E402

import numpy as np  # noqa: E402

from atticsim.results.export import (decimals, round_significant, write_csv,  # noqa: E402
                                     write_parquet)


def _cells(path):
    with open(path, newline="") as fh:
        return list(csv.reader(fh))


def _printf(value, places):
    """C's printf("%.*f") as Python's format gives it (the exact binary value correctly rounded, ties to even
    on the exact value: C99 7.19.6.1 and IEEE 754), with -0 written 0 and no value written empty."""
    if not np.isfinite(value):
        return ""
    text = format(value, f".{places}f")
    return text.lstrip("-") if not text.strip("-0.") else text


def test_csv_numbers_are_printf_text_to_each_columns_decimals(tmp_path):
    rng = np.random.default_rng(7)
    # random values, values on an exact half of the last decimal in decimal text but not in binary (0.0005 is
    # 0.000500000000000000010...: printf rounds it up), exact binary halves (0.125 to 2 places: to even),
    # negative zero, small negatives that round to zero, missing values and large heat rates
    base = np.concatenate([rng.normal(0.0, 40.0, 5000), np.round(rng.normal(0.0, 40.0, 2000), 3) + 0.0005,
                           [0.0005, -0.0005, 0.0015, 1.0005, 0.125, 2.675, -0.0, -0.0004, np.nan, np.inf,
                            123456.789]])
    frame = pd.DataFrame({"attic_air_c": base, "poa_south_w_m2": base * 10.0, "ceiling_heat_gain_w": base * 100.0,
                          "fan_flow_m3_s": base / 100.0, "attic_pressure_pa": base / 10.0, "wind_speed_m_s": base,
                          "fan_energy_kwh": base, "fan_on": (base > 0).astype(int)})
    path = tmp_path / "t.csv"
    write_csv(frame, path)
    rows = _cells(path)
    assert rows[0] == list(frame.columns)
    for j, name in enumerate(frame.columns):
        got = [r[j] for r in rows[1:]]
        if name == "fan_on":
            assert got == [str(v) for v in frame[name]]
            continue
        want = [_printf(v, decimals(name)) for v in frame[name]]
        assert got == want, name


def test_decimals_follow_the_unit_endings():
    assert [decimals(n) for n in ("attic_air_c", "attic_air_f", "hysteresis_k", "poa_south_w_m2",
                                  "ceiling_heat_gain_w", "ceiling_heat_gain_btu_h", "fan_flow_m3_s", "fan_flow_cfm",
                                  "attic_pressure_pa", "attic_pressure_in_wc", "wind_speed_m_s", "fan_energy_kwh",
                                  "fan_run_hours")] == [3, 3, 3, 1, 1, 1, 4, 1, 3, 5, 2, 4, 4]


def test_readme_states_the_decimals_the_files_are_written_with():
    import re
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text()
    table = readme.split("| column ending | what | written to |", 1)[1].split("\n\n", 1)[0]
    rows = [r.split("|")[1:4] for r in table.strip().splitlines()[1:]]
    assert len(rows) == 7
    checked = 0
    for endings, _, written in rows:
        groups = [re.findall(r"`(_[a-z0-9_]+)`", g) for g in endings.split(" / ")]
        places = [int(re.match(r"\s*(\d+)", part).group(1)) for part in written.split(" / ")]
        if endings.strip().startswith("anything else"):
            groups, places = [groups[0]], [places[0]]
        assert len(groups) == len(places), endings
        for names, want in zip(groups, places):
            for ending in names:
                assert decimals("x" + ending) == want, ending
                checked += 1
    assert checked == 15


def test_round_significant_gives_the_double_of_the_decimal_text():
    got = round_significant([3.14159e-12, -2.71828e-9, 0.0, 987654.0, np.nan, 1.05e-3], 2)
    assert got[0] == 3.1e-12 and got[1] == -2.7e-9 and got[2] == 0.0 and got[3] == 990000.0
    assert np.isnan(got[4]) and got[5] in (1.0e-3, 1.1e-3)  # 1.05e-3 lies on a half: either neighbour


@pytest.mark.parametrize("tz", ["Etc/GMT+6", "America/Chicago"])
def test_times_are_iso_8601_with_their_utc_offset(tmp_path, tz):
    # across a change of daylight saving time too (2025-03-09 02:00 in Chicago): each row in its own offset.
    # The reference is the same text through pandas' strftime, with the offset as +hh:mm (ISO 8601 extended
    # format; from memory)
    idx = pd.date_range("2025-03-09 06:00", periods=300, freq="37s", tz="UTC").tz_convert(tz)
    idx = (idx + pd.to_timedelta(np.arange(300) * 1234, unit="us")).rename("time")
    assert len(set(idx.map(lambda t: t.utcoffset()))) == (2 if tz == "America/Chicago" else 1)
    frame = pd.DataFrame({"attic_air_c": np.arange(300.0)}, index=idx)
    for unit, fmt in (("s", "%Y-%m-%dT%H:%M:%S"), ("us", "%Y-%m-%dT%H:%M:%S.%f")):
        path = tmp_path / f"{unit}.csv"
        write_csv(frame, path, index=True, time_unit=unit)
        rows = _cells(path)
        assert rows[0] == ["time", "attic_air_c"]
        text = idx.strftime(fmt + "%z")
        want = [t[:-2] + ":" + t[-2:] for t in text]
        assert [r[0] for r in rows[1:]] == want
    # and a column of times (the events' time)
    write_csv(frame.reset_index(), tmp_path / "col.csv", time_unit="us")
    assert _cells(tmp_path / "col.csv")[1][0] == want[0]


def test_strings_are_quoted_only_where_they_must_be(tmp_path):
    plain = pd.DataFrame({"date": ["2025-07-01", "2025-07-02"], "season": ["cooling", "neither"],
                          "fan_starts": [3, 0]})
    write_csv(plain, tmp_path / "plain.csv")
    assert (tmp_path / "plain.csv").read_text() == "date,season,fan_starts\n2025-07-01,cooling,3\n2025-07-02,neither,0\n"
    # a vent named with a comma and a quote: RFC 4180 quoting, read back as written
    odd = pd.DataFrame({'flow_ridge,"north"_m3_s': [0.1], "cause": ['run-on, then "off"']})
    write_csv(odd, tmp_path / "odd.csv")
    assert _cells(tmp_path / "odd.csv") == [list(odd.columns), ["0.1000", 'run-on, then "off"']]


def test_parquet_holds_the_csv_numbers_with_types_and_zone(tmp_path):
    import pyarrow.parquet as pq

    rng = np.random.default_rng(3)
    idx = pd.date_range("2025-07-01", periods=2000, freq="60s", tz="Etc/GMT+6", name="time")
    frame = pd.DataFrame({"attic_air_c": rng.normal(40.0, 8.0, 2000), "fan_on": (rng.random(2000) > 0.5).astype(int),
                          "ceiling_heat_gain_w": rng.normal(0.0, 300.0, 2000)}, index=idx)
    write_parquet(frame, tmp_path / "t.parquet")
    write_csv(frame, tmp_path / "t.csv", index=True)
    table = pq.read_table(tmp_path / "t.parquet")
    assert str(table.schema.field("time").type.tz) == "Etc/GMT+6"
    assert str(table.schema.field("fan_on").type) == "int64"
    back = table.to_pandas().set_index("time")
    assert (back.index == idx).all()
    rows = _cells(tmp_path / "t.csv")
    for j, name in enumerate(frame.columns, start=1):
        assert [float(r[j]) for r in rows[1:]] == back[name].tolist(), name


def test_run_writes_parquet_on_request_and_the_csv_matches_the_result(tmp_path):
    args = ["--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=1"]
    r = CliRunner().invoke(cli, ["run", "--out", str(tmp_path / "pq"), "--format", "parquet", *args])
    assert r.exit_code == 0, r.output
    assert (tmp_path / "pq" / "timeseries.parquet").is_file() and not (tmp_path / "pq" / "timeseries.csv").exists()
    parquet = pd.read_parquet(tmp_path / "pq" / "timeseries.parquet")
    r = CliRunner().invoke(cli, ["run", "--out", str(tmp_path / "csv"), *args])
    assert r.exit_code == 0, r.output
    text = pd.read_csv(tmp_path / "csv" / "timeseries.csv")
    assert list(text.columns) == list(parquet.columns) and len(text) == len(parquet) == 1441
    assert str(parquet["time"].dt.tz) == "Etc/GMT+6"  # the site's standard time, kept as a zone
    assert (pd.to_datetime(text["time"], format="ISO8601") == parquet["time"]).all()
    for name in text.columns[1:]:
        assert text[name].to_numpy() == pytest.approx(parquet[name].to_numpy(), abs=1e-9), name
    # and compare reads either
    from atticsim.results.compare import read_run_folder

    assert read_run_folder(tmp_path / "pq").series_file == "timeseries.parquet"


def test_every_chunk_of_a_column_has_one_type(tmp_path):
    # a column whose only huge value (a model gone wrong) sits in its last chunk, a text column missing in its
    # first chunk: both written whole, in one type throughout (chunks of 8192 rows)
    n = 20000
    huge = np.full(n, 1.5)
    huge[-1] = 1e300
    words = pd.Series([None] * 10000 + ["on"] * (n - 10000), dtype=object)
    frame = pd.DataFrame({"ceiling_heat_gain_w": huge, "fan": words})
    write_csv(frame, tmp_path / "t.csv")
    write_parquet(frame, tmp_path / "t.parquet", index=False)
    rows = _cells(tmp_path / "t.csv")
    assert len(rows) == n + 1 and rows[1] == ["1.5", ""] and rows[-1] == ["1e+300", "on"]
    back = pd.read_parquet(tmp_path / "t.parquet")
    assert back["ceiling_heat_gain_w"].iloc[-1] == 1e300 and back["fan"].iloc[-1] == "on"


# --- the next batch converted while the last one is written (atticsim.beside.ahead) ---------------------

def test_a_year_written_with_batches_ahead_is_the_file_written_one_batch_at_a_time(tmp_path, monkeypatch):
    # a table of several chunks, written through the thread and then in the caller alone: the same bytes
    from atticsim.results import export

    rng = np.random.default_rng(5)
    idx = pd.date_range("2025-01-01", periods=3 * export.CHUNK_ROWS + 17, freq="60s", tz="Etc/GMT+5", name="time")
    frame = pd.DataFrame({"attic_air_c": rng.normal(30.0, 9.0, len(idx)),
                          "fan_on": (rng.random(len(idx)) > 0.6).astype(int)}, index=idx)
    export.write_csv(frame, tmp_path / "a.csv", index=True)
    export.write_parquet(frame, tmp_path / "a.parquet")
    monkeypatch.setattr(export, "ahead", lambda items, depth=2: items)
    export.write_csv(frame, tmp_path / "b.csv", index=True)
    export.write_parquet(frame, tmp_path / "b.parquet")
    assert (tmp_path / "a.csv").read_bytes() == (tmp_path / "b.csv").read_bytes()
    assert (tmp_path / "a.parquet").read_bytes() == (tmp_path / "b.parquet").read_bytes()
