"""Tests for the typical-year readers (TMY3, TMY2, EPW) in atticsim.io.typical_year.

The pvlib package ships real typical-year files (pvlib/data): 723170TYA.CSV (TMY3,
Greensboro NC, mixed-humid), 703165TY.csv (TMY3, Sand Point AK, cold) and 12839.tm2
(TMY2, Miami FL, hot-humid).  Each is read here a second time, independently of pvlib
and of atticsim: the TMY3 files with the csv module, the TMY2 file by plain text
slicing at the field positions of the NREL TMY2 user's manual (Marion & Urban 1995,
Tables 3-1 and 3-2, positions from memory; they agree with the manual's sample
record in Figure 3-1 and with the file: e.g. dry-bulb "0200" = 20.0 degC on Jan 1, 01:00;
total and opaque sky cover in tenths at columns 60-61 and 64-65).

Time conventions checked (TMY3 user's manual, Wilcox & Marion 2008, NREL/TP-581-43156;
TMY2 user's manual section 3): the hour-ending 13:00 record's irradiance is the mean of
12:00-13:00 and belongs at 12:30; its temperature is the 13:00 value.
"""

import csv
import os

import numpy as np
import pytest

from atticsim.io import read_epw, read_tmy2, read_tmy3, read_weather

pvlib = pytest.importorskip("pvlib")
DATA = os.path.join(os.path.dirname(pvlib.__file__), "data")
TMY3_FILES = ["723170TYA.CSV", "703165TY.csv"]
TMY2_FILE = os.path.join(DATA, "12839.tm2")


def tmy3_by_csv(name):
    """Independent parse of a TMY3 file with the csv module: (header fields, column names, rows)."""
    with open(os.path.join(DATA, name), newline="", encoding="latin-1") as handle:
        rows = list(csv.reader(handle))
    return rows[0], rows[1], rows[2:]


def tmy2_by_slicing():
    """Independent parse of the TMY2 file by fixed field positions (1-based, inclusive)."""
    with open(TMY2_FILE, encoding="latin-1") as handle:
        lines = handle.read().splitlines()

    def field(line, first, last):
        return line[first - 1 : last]

    head = lines[0]
    header = {
        "tz": float(field(head, 34, 36)),
        "lat": (1 if field(head, 38, 38) == "N" else -1)
        * (float(field(head, 40, 41)) + float(field(head, 43, 44)) / 60.0),
        "lon": (1 if field(head, 46, 46) == "E" else -1)
        * (float(field(head, 48, 50)) + float(field(head, 52, 53)) / 60.0),
        "elev": float(field(head, 56, 59)),
    }
    records = [
        {
            "month": int(field(r, 4, 5)),
            "day": int(field(r, 6, 7)),
            "hour": int(field(r, 8, 9)),
            "ghi": float(field(r, 18, 21)),  # Wh/m^2 over the hour ending
            "total_cover": float(field(r, 60, 61)),  # tenths of the sky dome at the hour
            "opaque_cover": float(field(r, 64, 65)),
            "dry_bulb": float(field(r, 68, 71)) / 10.0,  # tenths of degC at the hour
        }
        for r in lines[1:]
    ]
    return header, records


@pytest.fixture(scope="module")
def tmy2_read():
    return read_tmy2(TMY2_FILE)


# ------------------------------------------------------------------ TMY3


@pytest.mark.parametrize("name", TMY3_FILES)
def test_tmy3_annual_sums_and_site_match_independent_parse(name):
    head, cols, rows = tmy3_by_csv(name)
    frame, meta, report = read_weather(os.path.join(DATA, name))
    ghi_kwh = sum(float(r[cols.index("GHI (W/m^2)")]) for r in rows) / 1000.0
    mean_db = np.mean([float(r[cols.index("Dry-bulb (C)")]) for r in rows])
    assert len(frame) == 8760 and len(rows) == 8760
    # Annual global horizontal irradiation [kWh/m^2]: hourly means x 1 h.
    assert frame["ghi"].sum() / 1000.0 == pytest.approx(ghi_kwh, rel=1e-12)
    # Mid-hour temperatures are means of neighbouring hour-end values over a periodic year,
    # so the annual mean is unchanged.
    assert frame["temp_air"].mean() == pytest.approx(mean_db, abs=1e-9)
    # Site from the file's first line: USAF, name, state, UTC offset, latitude, longitude, elevation.
    assert meta.utc_offset == float(head[3])
    assert meta.latitude == float(head[4])
    assert meta.longitude == float(head[5])
    assert meta.altitude == float(head[6])
    assert meta.source_format == "tmy3"
    assert frame.index[0].utcoffset().total_seconds() == float(head[3]) * 3600.0
    assert report.repairs == []


def test_tmy3_record_lands_at_mid_hour():
    head, cols, rows = tmy3_by_csv("723170TYA.CSV")
    frame, _, _ = read_tmy3(os.path.join(DATA, "723170TYA.CSV"), year=2025)
    stamps = [(r[0][:5], r[1]) for r in rows]
    at13 = rows[stamps.index(("07/01", "13:00"))]
    at12 = rows[stamps.index(("07/01", "12:00"))]
    row = frame.loc["2025-07-01T12:30:00-05:00"]
    ghi, db, dni = (cols.index(c) for c in ("GHI (W/m^2)", "Dry-bulb (C)", "DNI (W/m^2)"))
    assert row["ghi"] == float(at13[ghi])
    assert row["dni"] == float(at13[dni])
    assert row["temp_air"] == pytest.approx((float(at12[db]) + float(at13[db])) / 2.0)
    # First half hour of a full typical year: between Dec 31 24:00 and Jan 1 01:00.
    assert frame["temp_air"].iloc[0] == pytest.approx((float(rows[-1][db]) + float(rows[0][db])) / 2.0)
    # Pressure mbar -> Pa.
    p = cols.index("Pressure (mbar)")
    assert row["pressure"] == pytest.approx(100.0 * (float(at12[p]) + float(at13[p])) / 2.0)


def test_tmy3_runs_as_any_chosen_year():
    frame, _, report = read_tmy3(os.path.join(DATA, "723170TYA.CSV"), year=2031)
    assert len(frame) == 8760
    assert frame.index[0].isoformat() == "2031-01-01T00:30:00-05:00"
    assert frame.index[-1].isoformat() == "2031-12-31T23:30:00-05:00"
    assert frame.index.is_monotonic_increasing and frame.index.is_unique
    assert (np.diff(frame.index.asi8) == np.diff(frame.index.asi8)[0]).all()
    assert "records laid on calendar year 2031" in report.notes


def test_tmy3_leap_year_repeats_feb_28():
    head, cols, rows = tmy3_by_csv("723170TYA.CSV")
    frame, _, report = read_tmy3(os.path.join(DATA, "723170TYA.CSV"), year=2024)
    ghi = cols.index("GHI (W/m^2)")
    feb28 = sum(float(r[ghi]) for r in rows if r[0].startswith("02/28"))
    total = sum(float(r[ghi]) for r in rows)
    assert len(frame) == 8784
    assert frame["ghi"].sum() == pytest.approx(total + feb28, rel=1e-12)
    assert frame.loc["2024-02-29T12:30:00-05:00", "ghi"] == frame.loc["2024-02-28T12:30:00-05:00", "ghi"]
    assert any("Feb 28 repeated as Feb 29" in n for n in report.notes)


# ------------------------------------------------------------------ TMY2


def test_tmy2_annual_sums_and_site_match_fixed_width_slicing(tmy2_read):
    header, records = tmy2_by_slicing()
    frame, meta, report = tmy2_read
    assert len(frame) == len(records) == 8760
    ghi_kwh = sum(r["ghi"] for r in records) / 1000.0
    mean_db = np.mean([r["dry_bulb"] for r in records])
    assert frame["ghi"].sum() / 1000.0 == pytest.approx(ghi_kwh, rel=1e-12)
    assert frame["temp_air"].mean() == pytest.approx(mean_db, abs=1e-9)
    assert meta.latitude == pytest.approx(header["lat"], abs=1e-9)  # N 25 48 -> 25.8
    assert meta.longitude == pytest.approx(header["lon"], abs=1e-9)  # W 80 16 -> -80.267
    assert meta.utc_offset == header["tz"]
    assert meta.altitude == header["elev"]
    assert meta.source_format == "tmy2"
    assert report.repairs == []


def test_tmy2_record_lands_at_mid_hour(tmy2_read):
    _, records = tmy2_by_slicing()
    frame, _, _ = tmy2_read
    keys = [(r["month"], r["day"], r["hour"]) for r in records]
    at13, at12 = records[keys.index((7, 1, 13))], records[keys.index((7, 1, 12))]
    row = frame.loc["2025-07-01T12:30:00-05:00"]
    assert row["ghi"] == at13["ghi"]
    assert row["temp_air"] == pytest.approx((at12["dry_bulb"] + at13["dry_bulb"]) / 2.0)


# ------------------------------------------------------------------ EPW (hand-written, invented)

EPW_HEADER = [
    "LOCATION,Invented Mesa,AZ,USA,invented for atticsim tests,999999,33.450,-112.070,-7.0,340.0",
    "DESIGN CONDITIONS,0",
    "TYPICAL/EXTREME PERIODS,0",
    "GROUND TEMPERATURES,0",
    "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0",
    "COMMENTS 1,Invented two-day weather written by the atticsim tests; not a real climate",
    "COMMENTS 2,All values made up",
    "DATA PERIODS,1,1,Data,Tuesday, 7/ 1, 7/ 2",
]


def epw_records():
    """Invented values for July 1-2 (hour-ending 1..24), as written into the file."""
    records = []
    for day in (1, 2):
        for hour in range(1, 25):
            ghi = max(0, round(900 * np.sin(np.pi * (hour - 6.5) / 13.0))) if 7 <= hour <= 19 else 0
            records.append(
                {
                    "day": day, "hour": hour,
                    "temp_air": round(27.0 + 8.0 * np.sin(np.pi * (hour - 9) / 12.0), 1),
                    "temp_dew": 12.0, "rh": 40, "pressure": 97000,
                    "ir": 380 + hour, "ghi": ghi, "dni": round(0.8 * ghi), "dhi": round(0.2 * ghi),
                    "wind_direction": 200, "wind_speed": 3.5,
                    "total_cover": hour % 11, "opaque_cover": (hour % 11) // 2,
                }
            )
    return records


def write_epw(tmp_path, records, name="mesa.epw"):
    # Field order of an EPW data line (Crawley, Hand & Lawrie 1999, Proc. Building Simulation '99; from memory):
    # year, month, day, hour, minute, source flags, dry bulb, dew point, RH, pressure, ETR, ETRN,
    # horizontal IR, GHI, DNI, DHI, 4 illuminance/luminance fields, wind dir, wind speed,
    # total and opaque sky cover, visibility, ceiling, weather obs/codes, precipitable water,
    # AOD, snow depth, days since snow, albedo, liquid precipitation depth and quantity.
    lines = list(EPW_HEADER)
    for r in records:
        lines.append(
            f"2025,7,{r['day']},{r['hour']},60,?9?9?9?9E0?9?9?9?9?9?9?9?9?9?9?9?9?9?9?9*9*9?9?9?9,"
            f"{r['temp_air']},{r['temp_dew']},{r['rh']},{r['pressure']},9999,9999,{r['ir']},"
            f"{r['ghi']},{r['dni']},{r['dhi']},999999,999999,999999,9999,"
            f"{r['wind_direction']},{r['wind_speed']},{r['total_cover']},{r['opaque_cover']},"
            f"9999,77777,9,999999999,20,0.1,0,88,0.2,0,1"
        )
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="latin-1")
    return path


def test_epw_handwritten_file(tmp_path):
    records = epw_records()
    records[9]["dni"] = 9999  # July 1, hour-ending 10: missing-value code -> a 1 h gap
    frame, meta, report = read_weather(write_epw(tmp_path, records))
    # Site as written on the LOCATION line.
    assert (meta.latitude, meta.longitude, meta.utc_offset, meta.altitude) == (33.45, -112.07, -7.0, 340.0)
    assert meta.name == "Invented Mesa, AZ, USA" and meta.source_format == "epw"
    assert len(frame) == 48
    assert frame.index[0].isoformat() == "2025-07-01T00:30:00-07:00"
    assert frame.index[-1].isoformat() == "2025-07-02T23:30:00-07:00"
    row = frame.loc["2025-07-01T12:30:00-07:00"]
    assert row["ghi"] == records[12]["ghi"]  # hour-ending 13 -> 12:30
    assert row["temp_air"] == pytest.approx((records[11]["temp_air"] + records[12]["temp_air"]) / 2.0)
    # The file's own sky long-wave column is used (hour-end values, interpolated to mid-hour).
    assert row["sky_ir"] == pytest.approx((392 + 393) / 2.0)
    assert row["pressure"] == 97000.0
    # The missing DNI is interpolated between hour-ending 9 and 11 and counted.
    assert frame.loc["2025-07-01T09:30:00-07:00", "dni"] == pytest.approx(
        (records[8]["dni"] + records[10]["dni"]) / 2.0
    )
    assert report.repairs == ["interpolated 1 gap of 1 h in dni (first at 2025-07-01T10:00:00-07:00)"]
    # Partial year: the first half hour holds the first hour-end value.
    assert frame["temp_air"].iloc[0] == records[0]["temp_air"]
    assert any("first half hour held" in n for n in report.notes)


def test_epw_chosen_year(tmp_path):
    frame, _, _ = read_epw(write_epw(tmp_path, epw_records()), year=2030)
    assert frame.index[0].isoformat() == "2030-07-01T00:30:00-07:00"


def test_epw_long_gap_is_an_error(tmp_path):
    records = epw_records()
    for r in records[3:8]:
        r["temp_air"] = 99.9  # EPW missing-value code for dry bulb, 5 hours
    path = write_epw(tmp_path, records)
    with pytest.raises(ValueError) as exc:
        read_weather(path)
    message = str(exc.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: dry bulb temperature: gap of 5 h from 2025-07-01T04:00:00-07:00")


def test_epw_subhourly_is_refused(tmp_path):
    path = write_epw(tmp_path, epw_records())
    path.write_text(path.read_text().replace("DATA PERIODS,1,1,", "DATA PERIODS,1,4,"))
    with pytest.raises(ValueError, match="DATA PERIODS: 4 records per hour"):
        read_epw(path)


def test_bad_year_argument():
    with pytest.raises(ValueError, match="year: 25 is not a four-digit calendar year"):
        read_tmy3(os.path.join(DATA, "723170TYA.CSV"), year=25)


# ------------------------------------------------------------------ sky cover


@pytest.mark.parametrize("name", TMY3_FILES)
def test_tmy3_sky_cover_matches_independent_parse(name):
    head, cols, rows = tmy3_by_csv(name)
    frame, _, _ = read_tmy3(os.path.join(DATA, name), year=2025)
    total, opaque = cols.index("TotCld (tenths)"), cols.index("OpqCld (tenths)")
    # Tenths of the sky dome -> fraction; the annual mean survives the periodic mid-hour interpolation.
    assert frame["total_sky_cover"].mean() == pytest.approx(np.mean([float(r[total]) for r in rows]) / 10, abs=1e-12)
    assert frame["opaque_sky_cover"].mean() == pytest.approx(np.mean([float(r[opaque]) for r in rows]) / 10,
                                                             abs=1e-12)
    stamps = [(r[0][:5], r[1]) for r in rows]
    at12, at13 = rows[stamps.index(("07/01", "12:00"))], rows[stamps.index(("07/01", "13:00"))]
    row = frame.loc["2025-07-01T12:30:00"]
    # Cover is observed at the hour: the 12:30 row lies halfway between the 12:00 and 13:00 observations.
    assert row["opaque_sky_cover"] == pytest.approx((float(at12[opaque]) + float(at13[opaque])) / 20.0)
    assert row["total_sky_cover"] == pytest.approx((float(at12[total]) + float(at13[total])) / 20.0)


def test_tmy2_sky_cover_matches_fixed_width_slicing(tmy2_read):
    _, records = tmy2_by_slicing()
    frame, _, _ = tmy2_read
    assert frame["total_sky_cover"].mean() == pytest.approx(np.mean([r["total_cover"] for r in records]) / 10,
                                                            abs=1e-12)
    assert frame["opaque_sky_cover"].mean() == pytest.approx(np.mean([r["opaque_cover"] for r in records]) / 10,
                                                             abs=1e-12)
    keys = [(r["month"], r["day"], r["hour"]) for r in records]
    for hour in (6, 13, 20):
        before, now = records[keys.index((7, 1, hour - 1))], records[keys.index((7, 1, hour))]
        row = frame.loc[f"2025-07-01T{hour - 1:02d}:30:00-05:00"]
        assert row["opaque_sky_cover"] == pytest.approx((before["opaque_cover"] + now["opaque_cover"]) / 20.0)
        assert row["total_sky_cover"] == pytest.approx((before["total_cover"] + now["total_cover"]) / 20.0)


def test_epw_sky_cover_kept(tmp_path):
    records = epw_records()
    frame, _, _ = read_weather(write_epw(tmp_path, records))
    row = frame.loc["2025-07-01T12:30:00-07:00"]  # between hour-ending 12 and 13
    assert row["total_sky_cover"] == pytest.approx((12 % 11 + 13 % 11) / 20.0)  # (1 + 2) / 2 tenths
    assert row["opaque_sky_cover"] == pytest.approx(((12 % 11) // 2 + (13 % 11) // 2) / 20.0)


def test_sky_cover_outside_tenths_is_refused(tmp_path):
    records = epw_records()
    records[5]["opaque_cover"] = 12
    path = write_epw(tmp_path, records)
    with pytest.raises(ValueError, match=r"line 14: opaque sky cover: 12 tenths in record 6 is outside 0..10"):
        read_weather(path)


# ------------------------------------------------------------------ incomplete files are refused


def copy_lines(tmp_path, name, lines):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="latin-1")
    return path


def original_lines(name):
    with open(os.path.join(DATA, name), encoding="latin-1") as handle:
        return handle.read().splitlines()


def cli_error(path, tmp_path):
    """Run ``atticsim run --weather PATH`` and return (exit code, output lines, out folder exists)."""
    from click.testing import CliRunner

    from atticsim.cli.main import cli

    out = tmp_path / "out"
    result = CliRunner().invoke(cli, ["run", "--weather", str(path), "--months", "jul", "--out", str(out)])
    return result.exit_code, result.output.strip().splitlines(), out.exists()


def test_tmy2_record_cut_short_is_refused_through_the_cli(tmp_path):
    lines = original_lines("12839.tm2")
    lines[-1] = lines[-1][:100]  # the last record loses its last 42 characters
    path = copy_lines(tmp_path, "cut.tm2", lines)
    code, output, written = cli_error(path, tmp_path)
    assert code == 2 and not written
    assert output[-1] == (f"atticsim: error: {path}: line 8761: record 8760 is 100 characters long, a TMY2 record "
                          f"is 142; the file is cut short or damaged (complete records are needed, nothing is "
                          f"patched)")
    assert not any("Traceback" in line for line in output)


def test_tmy3_record_with_missing_fields_is_refused_through_the_cli(tmp_path):
    lines = original_lines("723170TYA.CSV")
    lines[-1] = ",".join(lines[-1].split(",")[:20])  # the last record cut after its 20th field
    path = copy_lines(tmp_path, "cut.csv", lines)
    code, output, written = cli_error(path, tmp_path)
    assert code == 2 and not written and not any("Traceback" in line for line in output)
    assert output[-1].startswith(f"atticsim: error: {path}: line 8762: record 8760 has 20 fields, TMY3 records "
                                 f"have 71; the file is cut short")


def test_tmy3_record_with_an_empty_value_is_refused(tmp_path):
    lines = original_lines("703165TY.csv")
    header = lines[1].split(",")
    fields = lines[500].split(",")
    fields[header.index("Dry-bulb (C)")] = ""
    lines[500] = ",".join(fields)
    path = copy_lines(tmp_path, "hole.csv", lines)
    with pytest.raises(ValueError) as exc:
        read_weather(path)
    assert str(exc.value) == (f"{path}: line 501: record 499 has an empty field (Dry-bulb (C)); the file is cut "
                              f"short or damaged (complete records are needed, nothing is patched)")


@pytest.mark.parametrize("name, keep, fmt, stops", [
    ("12839.tm2", 8001, "TMY2", "line 8001: the file stops at record 8000 (11/30 08:00), before 12/31 24:00"),
    ("723170TYA.CSV", 5002, "TMY3", "line 5002: the file stops at record 5000 (07/28 08:00), before 12/31 24:00"),
])
def test_typical_year_that_stops_early_is_refused_through_the_cli(tmp_path, name, keep, fmt, stops):
    path = copy_lines(tmp_path, "short_" + name, original_lines(name)[:keep])
    code, output, written = cli_error(path, tmp_path)
    assert code == 2 and not written and not any("Traceback" in line for line in output)
    assert output[-1] == (f"atticsim: error: {path}: {stops} (a {fmt} file holds a whole year of hourly "
                          f"records); the file is cut short (nothing is patched)")


def test_epw_cut_short_or_stopping_early_is_refused(tmp_path):
    records = epw_records()
    path = write_epw(tmp_path, records)
    lines = path.read_text(encoding="latin-1").splitlines()
    # The last record cut in the middle of its fields.
    cut = copy_lines(tmp_path, "cut.epw", lines[:-1] + [lines[-1][:60]])
    code, output, written = cli_error(cut, tmp_path)
    assert code == 2 and not written
    assert f"{cut}: line 56: record 48 has " in output[-1] and "EPW records have 35" in output[-1]
    # The records stop before the end date of the DATA PERIODS line (7/2).
    short = copy_lines(tmp_path, "short.epw", lines[:-5])
    with pytest.raises(ValueError) as exc:
        read_weather(short)
    assert str(exc.value) == (f"{short}: line 51: the file stops at record 43 (07/02 19:00), before 07/02 24:00 "
                              f"(the dates of its DATA PERIODS line); the file is cut short (nothing is patched)")
