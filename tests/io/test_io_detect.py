"""Tests for format detection from content (atticsim.io.detect): the extension may lie."""

import os
import shutil

import pytest

from atticsim.io import detect_format, read_weather

pvlib = pytest.importorskip("pvlib")
DATA = os.path.join(os.path.dirname(pvlib.__file__), "data")

OWN_CSV = """# site: Invented Flats
# latitude: 35.0
# longitude: -97.0
# altitude_m: 350
# utc_offset_h: -6
# invented: yes
time,temp_air_c,relative_humidity_pct,wind_speed_m_s,ghi_w_m2,dni_w_m2,dhi_w_m2
2025-07-01T10:00:00-06:00,30.0,50,3.0,700,600,120
2025-07-01T11:00:00-06:00,31.0,48,3.2,800,650,130
"""

EPW_TEXT = "\n".join(
    [
        "LOCATION,Invented Mesa,AZ,USA,invented for atticsim tests,999999,33.450,-112.070,-7.0,340.0",
        "DESIGN CONDITIONS,0",
        "TYPICAL/EXTREME PERIODS,0",
        "GROUND TEMPERATURES,0",
        "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0",
        "COMMENTS 1,Invented one-day weather written by the atticsim tests; not a real climate",
        "COMMENTS 2,",
        "DATA PERIODS,1,1,Data,Tuesday, 7/ 1, 7/ 1",
    ]
    + [
        f"2025,7,1,{h},60,?9?9?9?9E0?9?9?9?9?9?9?9?9?9?9?9?9?9?9?9*9*9?9?9?9,{20 + h},12.0,40,97000,"
        f"9999,9999,380,0,0,0,999999,999999,999999,9999,200,3.5,0,0,9999,77777,9,999999999,20,0.1,0,88,0.2,0,1"
        for h in range(1, 25)  # the whole day its DATA PERIODS line declares: a shorter file is refused
    ]
) + "\n"


@pytest.mark.parametrize(
    "source, lie, expected",
    [
        ("12839.tm2", "miami.csv", "tmy2"),
        ("723170TYA.CSV", "greensboro.epw", "tmy3"),
        ("703165TY.csv", "sandpoint.tm2", "tmy3"),
    ],
)
def test_pvlib_files_detected_whatever_the_extension(tmp_path, source, lie, expected):
    target = tmp_path / lie
    shutil.copy(os.path.join(DATA, source), target)
    assert detect_format(target) == expected


def test_epw_content_named_csv_is_read_as_epw(tmp_path):
    path = tmp_path / "mesa.csv"
    path.write_text(EPW_TEXT, encoding="latin-1")
    assert detect_format(path) == "epw"
    frame, meta, report = read_weather(path)
    assert meta.source_format == "epw" and len(frame) == 24
    assert "content is epw although the file name ends in .csv: read as epw" in report.notes


def test_own_csv_named_epw_is_read_as_own_csv(tmp_path):
    path = tmp_path / "flats.epw"
    path.write_text(OWN_CSV, encoding="utf-8")
    assert detect_format(path) == "atticsim-csv"
    frame, meta, report = read_weather(path)
    assert meta.source_format == "atticsim-csv" and meta.invented
    assert frame.loc["2025-07-01T10:00:00-06:00", "temp_air"] == 30.0


def test_tmy3_named_epw_reads_same_as_original(tmp_path):
    target = tmp_path / "greensboro.epw"
    shutil.copy(os.path.join(DATA, "723170TYA.CSV"), target)
    frame, meta, report = read_weather(target)
    original, _, _ = read_weather(os.path.join(DATA, "723170TYA.CSV"))
    assert meta.source_format == "tmy3"
    assert frame.equals(original)


def test_unrecognised_content_is_a_one_line_error(tmp_path):
    path = tmp_path / "notes.csv"
    path.write_text("station,temperature\nA,20\n")
    with pytest.raises(ValueError) as exc:
        detect_format(path)
    message = str(exc.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: format: not recognised")


def test_missing_file_is_a_one_line_error(tmp_path):
    with pytest.raises(ValueError, match="file: not found"):
        read_weather(tmp_path / "nothing.epw")
