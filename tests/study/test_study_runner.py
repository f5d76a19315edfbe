"""Running studies on the demo house: local processes, resume after an interruption, the Dask backend, and the
practitioner's expectation that wider hysteresis means fewer starts.

Kept quick: one simulated day, no spin-up, relaxed solver tolerance, four points.
"""

import json

import pandas as pd
import pytest

from atticsim.errors import InputError
from atticsim.study.runner import JOURNAL, run_study
from atticsim.study.spec import Study, StudyError, parse_vary

FAST = ["simulation.spinup_days=0", "simulation.rtol=1e-4"]
WIDTHS = "0.5,1,2,4K"


def hysteresis_study(**kw):
    return Study(axes=[parse_vary(f"thermostat.hysteresis={WIDTHS}")], base_overrides=list(FAST),
                 start="2025-07-01", end="2025-07-01", **kw)


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    """The uninterrupted study on two local worker processes."""
    out = tmp_path_factory.mktemp("study") / "ref"
    outcome = run_study(hysteresis_study(), out, workers=2)
    assert outcome.backend == "local processes x2" and outcome.computed == 4
    return outcome


def test_starts_fall_as_hysteresis_widens(reference):
    # A fact any practitioner expects: a wider switching band makes each cycle longer, so the fan starts
    # less often. On a hot day at the demo house, starts per day must not rise as the width grows from
    # 0.5 K to 4 K (allowing one start of noise from where the day's cycles fall), and must fall overall.
    t = reference.table.sort_values("hysteresis_k")
    assert list(t["hysteresis_k"]) == [0.5, 1.0, 2.0, 4.0]
    spd = t["starts_per_day"].to_list()
    assert all(b <= a + 1 for a, b in zip(spd, spd[1:])), spd
    assert spd[-1] < spd[0], spd
    assert (t["status"] == "ok").all()


def test_study_files_and_record(reference):
    out = reference.out
    for name in ("study.json", JOURNAL, "points.csv", "points.parquet", "pareto.csv", "recommendation.json",
                 "short_cycling_map.png"):
        assert (out / name).stat().st_size > 0, name
    rec = json.loads((out / "study.json").read_text())
    assert rec["versions"]["numpy"] and rec["versions"]["scipy"] and rec["versions"]["pvlib"]
    assert rec["scenario"]["thermostat"]["on"] == 40.0 and rec["study"]["period"]["start"] == "2025-07-01"
    assert [p["overrides"][-1] for p in rec["points"]] == [
        "thermostat.off=39.5", "thermostat.off=39.0", "thermostat.off=38.0", "thermostat.off=36.0"]
    # the parquet file holds the same table as the CSV
    pq = pd.read_parquet(out / "points.parquet")
    csv = pd.read_csv(out / "points.csv")
    assert list(pq.columns) == list(csv.columns)
    pd.testing.assert_series_equal(pq["fan_starts"], csv["fan_starts"])
    # the derived width is recorded in SI and as given, next to the off temperature it produced
    assert list(pq["thermostat.hysteresis_given"]) == ["0.5 K", "1 K", "2 K", "4 K"]
    assert list(pq["hysteresis_k"]) == pytest.approx([0.5, 1.0, 2.0, 4.0])
    r = json.loads((out / "recommendation.json").read_text())
    assert r["rule"] and set(r["pareto_points"]) <= {0, 1, 2, 3}


class Interrupted(Exception):
    """Stands in for Ctrl-C or a killed machine in the middle of a study."""


def test_resume_after_interruption_gives_the_uninterrupted_table(reference, tmp_path):
    out = tmp_path / "resumed"
    seen = []

    def stop_after_two(record, done, total):
        seen.append(record["point"])
        if done == 2:
            raise Interrupted

    with pytest.raises(Interrupted):
        run_study(hysteresis_study(), out, workers=1, on_point=stop_after_two)
    lines = (out / JOURNAL).read_text().splitlines()
    assert len(lines) == 2 and not (out / "points.csv").exists()
    with open(out / JOURNAL, "a") as fh:  # a write torn by the crash must not spoil the resume
        fh.write('{"index": 2, "key": "abc", "sta')
    with pytest.raises(InputError, match="--resume"):  # the folder is not silently reused
        run_study(hysteresis_study(), out, workers=1)
    outcome = run_study(hysteresis_study(), out, workers=1, resume=True)
    assert (outcome.reused, outcome.computed) == (2, 2)  # finished points are not recomputed
    assert len((out / JOURNAL).read_text().splitlines()) == 4
    resumed = pd.read_csv(out / "points.csv")
    uninterrupted = pd.read_csv(reference.out / "points.csv")
    pd.testing.assert_frame_equal(resumed, uninterrupted, check_exact=True)
    assert json.loads((out / "recommendation.json").read_text())["point"] == reference.recommendation["point"]


def test_resume_refuses_a_different_study(reference, tmp_path):
    import shutil

    out = tmp_path / "copy"
    shutil.copytree(reference.out, out)
    other = Study(axes=[parse_vary("thermostat.hysteresis=1,3K")], base_overrides=list(FAST),
                  start="2025-07-01", end="2025-07-01")
    with pytest.raises(StudyError, match="holds a different study"):
        run_study(other, out, workers=1, resume=True)


def test_dask_backend_gives_the_local_table(reference, tmp_path):
    distributed = pytest.importorskip("distributed")
    # A Dask cluster on loopback TCP inside this process (threads, no worker processes).
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False, protocol="tcp://",
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        assert cluster.scheduler_address.startswith("tcp://127.0.0.1:")
        outcome = run_study(hysteresis_study(), tmp_path / "dask", scheduler=cluster.scheduler_address)
    assert outcome.backend.startswith("dask tcp://") and outcome.computed == 4
    dask_table = pd.read_csv(tmp_path / "dask" / "points.csv")
    local_table = pd.read_csv(reference.out / "points.csv")
    pd.testing.assert_frame_equal(dask_table, local_table, check_exact=True)


def test_run_point_restores_the_garbage_collector():
    # run_point holds off cyclic collection while a point runs (speed); it must hand the collector back as
    # it found it, on success and on a failed point alike
    import gc

    from atticsim.study.runner import plan_study, run_point

    plan = plan_study(hysteresis_study())
    task = plan.points[0].task(plan.study)
    bad = dict(task, scenario=None)  # fails inside the point
    was = gc.isenabled()
    try:
        for enabled in (True, False):
            (gc.enable if enabled else gc.disable)()
            for t in (task, bad):
                out = run_point(t)
                assert out["status"] == ("ok" if t is task else "error")
                assert gc.isenabled() == enabled
    finally:
        (gc.enable if was else gc.disable)()


@pytest.mark.parametrize("error,code,line", [
    ("input", 2, "atticsim: error: sweep: every one of the 4 points failed, e.g. point 0 "
                 "(thermostat.hysteresis=0.5 K): WeatherError: made.csv: temp_air: a refusal made by this test"),
    ("bug", 1, "atticsim: internal error: RuntimeError: every one of the 4 points failed, e.g. point 0 "
               "(thermostat.hysteresis=0.5 K): ZeroDivisionError: a bug made by this test"),
])
def test_a_study_whose_every_point_fails_stops_in_one_line_leaving_nothing(tmp_path, monkeypatch, error, code, line):
    import atticsim.pipeline
    from click.testing import CliRunner

    from atticsim.cli.main import cli
    from atticsim.io import WeatherError

    def failing(*args, **kw):
        if error == "input":
            raise WeatherError("made.csv: temp_air: a refusal made by this test")
        raise ZeroDivisionError("a bug made by this test")

    monkeypatch.setattr(atticsim.pipeline, "simulate", failing)
    out = tmp_path / "study"
    r = CliRunner().invoke(cli, ["sweep", "--vary", f"thermostat.hysteresis={WIDTHS}", "--start", "2025-07-01",
                                 "--end", "2025-07-01", "--workers", "1", "--out", str(out),
                                 *[a for o in FAST for a in ("--set", o)]])
    assert r.exit_code == code, r.output
    assert r.stderr.strip().splitlines()[-1].startswith(line), r.stderr
    assert not out.exists()  # no journal, no study.json, no folder: nothing of value was made


def test_months_choose_the_period_in_the_weathers_year(tmp_path):
    """sweep --months feb runs February of the weather's first year (the demo weather's 2025, invented), as
    run --months does; study.json records the month range and the dates it became."""
    from click.testing import CliRunner

    from atticsim.cli.main import cli

    out = tmp_path / "s"
    r = CliRunner().invoke(cli, ["sweep", "--vary", "thermostat.on=38,40degC", "--months", "feb", "--workers", "1",
                                 "--out", str(out)])
    assert r.exit_code == 0, r.output
    period = json.loads((out / "study.json").read_text())["study"]["period"]
    assert period == {"start": "2025-02-01", "end": "2025-02-28", "months": "feb"}
    points = pd.read_csv(out / "points.csv")
    assert (points["days"] == 28).all()
