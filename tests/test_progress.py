"""What a long command says while it runs: stages with their times on a terminal, nothing in a pipe or a log;
counted progress with an ETA (a study's points, the placements)."""

import io
import re

from click.testing import CliRunner

from atticsim.cli.main import cli
from atticsim.progress import Progress, Stages, announced


class Terminal(io.StringIO):
    """A text stream that says it is a terminal."""

    def isatty(self):
        return True


def lines(stream):
    """The lines a terminal would keep: each carriage return starts the line over, ESC[K clears its rest."""
    out = []
    for raw in stream.getvalue().replace("\x1b[K", "").split("\n"):
        out.append(raw.split("\r")[-1])
    return [line for line in out if line]


def test_stages_on_a_terminal_keep_one_line_each_with_its_time():
    term = Terminal()
    with Stages(term, tick=0) as stage:
        stage("reading the weather")
        stage("simulating 2025-07-01 with the fan")
        stage.part("segment 3")
        stage("writing 2 files")
    got = lines(term)
    assert [re.sub(r"\d+\.\d s$", "T", line) for line in got] == [
        "atticsim: reading the weather ... T",
        "atticsim: simulating 2025-07-01 with the fan ... T",  # the part is shown while running, not kept
        "atticsim: writing 2 files ... T",
    ]
    assert [name for name, _ in stage.times] == ["reading the weather", "simulating 2025-07-01 with the fan",
                                                "writing 2 files"]


def test_a_stage_told_again_with_its_share_done_shows_it_and_stays_one_stage():
    term = Terminal()
    with Stages(term, tick=0) as stage:
        stage("simulating 2025 with the fan")
        stage("simulating 2025 with the fan", 0.25)
        stage("simulating 2025 with the fan", 1.0)
        stage("writing 8 files")
    assert "\ratticsim: simulating 2025 with the fan: 25 % ... " in term.getvalue()
    assert [re.sub(r"\d+\.\d s$", "T", line) for line in lines(term)] == [
        "atticsim: simulating 2025 with the fan ... T", "atticsim: writing 8 files ... T"]
    assert len(stage.times) == 2


def test_stages_refresh_the_running_line_from_a_thread():
    import time

    term = Terminal()
    with Stages(term, tick=0.01) as stage:
        stage("a long stage")
        time.sleep(0.2)
    shown = term.getvalue().count("\ratticsim: a long stage ... ")
    assert shown >= 5  # shown at the start, refreshed while it ran, and finished


def test_stages_are_quiet_when_not_a_terminal():
    log = io.StringIO()  # a file, a pipe, a test's capture
    with Stages(log) as stage:
        stage("simulating")
        stage.part("x")
    assert log.getvalue() == "" and not stage.active
    assert announced({"a.csv": print}, stage) == {"a.csv": print}  # nothing wrapped when nothing is shown


def test_announced_writers_name_each_file_in_one_stage(tmp_path):
    term = Terminal()
    written = []
    with Stages(term, tick=0) as stage:
        writers = announced({"summary.json": written.append, "timeseries.csv": written.append}, stage)
        for name, write in writers.items():
            write(tmp_path / name)
    assert written == [tmp_path / "summary.json", tmp_path / "timeseries.csv"]
    assert "writing 2 files: timeseries.csv ... " in term.getvalue()
    assert [re.sub(r"\d+\.\d s$", "T", line) for line in lines(term)] == ["atticsim: writing 2 files ... T"]


def test_progress_counts_with_an_eta_in_place_on_a_terminal_and_every_5_percent_in_a_log():
    term = Terminal()
    bar = Progress(40, 10, term, label="sweep")
    bar.start()
    for _ in range(30):
        bar.update({"status": "ok"})
    bar.close()
    last = lines(term)[-1].strip()
    assert re.fullmatch(r"sweep: 40/40 points \(10 reused\) 100%  elapsed \d+:\d\d:\d\d  ETA \d+:\d\d:\d\d", last), last
    log = io.StringIO()
    bar = Progress(100, 0, log, label="placements", unit="runs")
    bar.start()
    for i in range(100):
        bar.update({"status": "ok" if i else "failed"})
    rows = log.getvalue().splitlines()
    assert len(rows) == 1 + 20  # the start, then every 5 runs
    assert rows[-1].startswith("placements: 100/100 runs (0 reused, 1 failed) 100%")


def test_simulate_tells_its_stages_in_order(demo):
    from atticsim.pipeline import simulate

    said, shares = [], []

    def progress(stage, fraction=None):  # words as each stage begins; the share done where it is known
        (said.append(stage) if fraction is None else shares.append((stage, fraction)))

    simulate(demo.model_copy(update={"simulation": demo.simulation.model_copy(update={"spinup_days": 1})}),
             start="2025-07-01", end="2025-07-01", progress=progress)
    assert shares and all(0.0 <= f <= 1.0 for _, f in shares) and shares[-1][1] == 1.0
    assert said == ["reading the weather", "sun on each roof plane and the sky",
                    "simulating 2025-07-01 with the fan", "simulating 2025-07-01 without the fan",
                    "temperatures, flows and the season's figures"]


def test_run_says_no_stages_into_a_pipe(tmp_path):
    r = CliRunner().invoke(cli, ["run", "--out", str(tmp_path / "r"), "--start", "2025-07-01", "--end", "2025-07-01",
                                 "--set", "simulation.spinup_days=1"])
    assert r.exit_code == 0, r.output
    assert "atticsim: simulating" not in r.output and " ... 0." not in r.output


def test_design_day_tells_each_try_and_writes_parquet_on_request(tmp_path, demo):
    from atticsim.pipeline import design_day

    said = []
    r = design_day(demo, "2025-07-21", 35.0, 9.0, dew_point=24.0, progress=said.append)
    tries = [s for s in said if s.startswith("the design day after")]
    assert tries[0] == "the design day after 2 repeated days, with and without the fan"
    assert len(tries) == {2: 1, 4: 2, 8: 3, 16: 4, 32: 5, 64: 6}[r.summary["spinup_days_used"]]
    assert said[-1] == "temperatures, flows and the day's figures"
    out = tmp_path / "dd"
    res = CliRunner().invoke(cli, ["designday", "--date", "2025-07-21", "--tmax", "95degF", "--range", "18degF",
                                   "--format", "parquet", "--out", str(out)])
    assert res.exit_code == 0, res.output
    assert (out / "timeseries.parquet").is_file() and not (out / "timeseries.csv").exists()
    assert "atticsim: the design day after" not in res.output  # not a terminal: no stages
