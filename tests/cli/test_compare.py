"""atticsim compare: two run folders side by side, CSV or Parquet time series, one-line errors."""

import json

import pandas as pd
import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli
from atticsim.results.compare import read_run_folder, summary_differences


def invoke(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    base = tmp_path_factory.mktemp("runs")
    a, b = base / "a", base / "b"
    for out, on in ((a, "40 degC"), (b, "37 degC")):
        r = invoke("run", "--out", out, "--start", "2025-07-01", "--end", "2025-07-01",
                   "--set", "simulation.spinup_days=1", "--set", f'thermostat.on="{on}"')
        assert r.exit_code == 0, r.output
    return a, b


def test_compare_reads_csv_and_parquet_alike(two_runs, tmp_path):
    a, b = two_runs
    ra = read_run_folder(a)
    ts = pd.read_csv(a / "timeseries.csv", usecols=["time", "attic_air_c"])
    assert len(ra.timeseries) == len(ts)
    assert str(ra.timeseries.index[0]) == "2025-07-01 00:00:00-06:00"  # the file's own offset, not UTC
    assert ra.timeseries["attic_air_c"].to_numpy() == pytest.approx(ts["attic_air_c"].to_numpy())
    # the same run as Parquet (what a later option writes) reads to the same frame
    pq = tmp_path / "pq"
    pq.mkdir()
    (pq / "summary.json").write_text((a / "summary.json").read_text())
    ra.timeseries.reset_index().to_parquet(pq / "timeseries.parquet")
    rp = read_run_folder(pq)
    assert rp.series_file == "timeseries.parquet"
    assert (rp.timeseries.index == ra.timeseries.index).all()
    assert rp.timeseries["fan_on"].to_numpy().tolist() == ra.timeseries["fan_on"].to_numpy().tolist()


def test_compare_command_table_and_files(two_runs, tmp_path):
    a, b = two_runs
    out = tmp_path / "cmp"
    r = invoke("compare", a, b, "--out", out)
    assert r.exit_code == 0, r.output
    sa, sb = (json.loads((p / "summary.json").read_text()) for p in (a, b))
    diffs = {k: d for k, va, vb, d in summary_differences(sa, sb)}
    assert diffs["fan_starts"] == sb["fan_starts"] - sa["fan_starts"]
    table = pd.read_csv(out / "compare.csv")
    row = table[table["key"] == "fan_run_hours"].iloc[0]
    assert row["b_minus_a"] == pytest.approx(sb["fan_run_hours"] - sa["fan_run_hours"])
    assert "fan run time" in r.output
    for name in ("compare.png", "report.html"):
        assert (out / name).stat().st_size > 0
    # an existing folder is not overwritten without --force
    r = invoke("compare", a, b, "--out", out)
    assert r.exit_code == 2 and "--force" in r.output


def test_compare_errors_are_one_line(tmp_path, two_runs):
    a, _ = two_runs
    empty = tmp_path / "empty"
    empty.mkdir()
    r = invoke("compare", a, empty)
    assert r.exit_code == 2
    assert r.output.strip().splitlines()[-1] == f"atticsim: error: {empty}: summary.json: not found (is this a run's --out folder?)"
    (empty / "summary.json").write_text("{}")
    r = invoke("compare", a, empty)
    assert r.exit_code == 2 and "timeseries.csv: not found" in r.output
