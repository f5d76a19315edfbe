"""Faults a user meets: two runs into one folder, a run stopped by Ctrl-C's cousins (SIGTERM, SIGHUP) or killed
outright (SIGKILL) while simulating or while writing, a study killed and resumed, a full disk.

What must hold: a second run into a folder in use fails at once; a stopped run leaves nothing half-written
and says so in one line; what a killed run left is removed by the next run into the folder; a killed
study's workers end with it and its resume gives the same table, byte for byte; a full disk is one line.

The commands run in their own processes (``python -m atticsim.cli.main``), on the fictional demo house and
its invented weather. Kept short: a month or a year of the demo house, a four-point study.
"""

import errno
import resource
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli

ATTICSIM = [sys.executable, "-m", "atticsim.cli.main"]
MONTH = ["--start", "2025-07-01", "--end", "2025-07-31"]
STUDY = ["sweep", "--start", "2025-07-01", "--end", "2025-07-31", "--vary", "thermostat.on=36,38,40,42degC",
         "--set", "simulation.spinup_days=0", "--workers", "2"]


def start(args, **kw):
    return subprocess.Popen(ATTICSIM + [str(a) for a in args], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, **kw)


def wait_for(condition, timeout=60.0, step=0.005):
    t_end = time.monotonic() + timeout
    while time.monotonic() < t_end:
        if condition():
            return True
        time.sleep(step)
    return False


def stderr_line(proc, text, timeout=60.0):
    """Read the process's stderr until a line holding ``text`` (returned), or fail."""
    t_end = time.monotonic() + timeout
    while time.monotonic() < t_end:
        line = proc.stderr.readline()
        if text in line:
            return line
        if not line and proc.poll() is not None:
            break
    raise AssertionError(f"no line with {text!r} on stderr")


def tmp_files(out: Path):
    return [p for p in out.glob(".atticsim-tmp-*-files/*")] if out.exists() else []


def children(pid: int) -> list[int]:
    """Process ids whose parent is ``pid`` (from /proc)."""
    out = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                out.append(int(entry.name))
    return out


def ended(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return True
    return state in ("Z", "X")  # a zombie has ended; only its exit status is left for its new parent


def test_two_runs_into_one_fresh_folder(tmp_path):
    out = tmp_path / "r"
    first = start(["run", *MONTH, "--out", out])
    assert wait_for(lambda: (out / ".atticsim-lock").exists())
    t0 = time.monotonic()
    for extra in ([], ["--force"]):
        second = subprocess.run(ATTICSIM + ["run", *MONTH, "--out", str(out), *extra], capture_output=True,
                                text=True)
        assert second.returncode == 2, second.stderr
        assert second.stderr.strip().splitlines()[-1].startswith(f"atticsim: error: {out}: another atticsim run "
                                                                 f"is writing to this folder (pid {first.pid}")
    assert time.monotonic() - t0 < 20.0  # refused at once, not after simulating
    _, err = first.communicate(timeout=120)
    assert first.returncode == 0, err
    assert sorted(p.name for p in out.iterdir()) == ["daily.csv", "events.csv", "monthly.csv", "monthly.png",
                                                     "report.html", "summary.json", "temperatures.png",
                                                     "timeseries.csv"]


@pytest.mark.parametrize("sig,code", [(signal.SIGTERM, 143), (signal.SIGHUP, 129)])
def test_signal_while_simulating_leaves_nothing(tmp_path, sig, code):
    out = tmp_path / "r"
    proc = start(["run", "--months", "year", "--out", out])
    stderr_line(proc, "simulating")
    time.sleep(0.3)
    assert not tmp_files(out)  # still simulating: nothing being written yet
    proc.send_signal(sig)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == code, err
    assert err.strip().splitlines()[-1] == (f"atticsim: stopped by {signal.Signals(sig).name}; nothing "
                                            f"half-written was left behind")
    assert not out.exists()


@pytest.mark.parametrize("sig,code", [(signal.SIGTERM, 143), (signal.SIGHUP, 129)])
def test_signal_while_writing_leaves_nothing(tmp_path, sig, code):
    out = tmp_path / "r"
    proc = start(["run", *MONTH, "--out", out])
    assert wait_for(lambda: len(tmp_files(out)) > 0), "the run never started writing"
    proc.send_signal(sig)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == code, err
    assert "stopped by" in err.strip().splitlines()[-1]
    assert not out.exists()  # no hidden temporary folder left behind either


def test_signal_while_a_year_is_written_ends_its_figures_child_and_leaves_nothing(tmp_path):
    # a year's figures are drawn in a child process while its tables are written (results.output.apart)
    out = tmp_path / "r"
    proc = start(["run", "--months", "year", "--out", out])
    assert wait_for(lambda: len(tmp_files(out)) > 0), "the run never started writing"
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 143, err
    assert "stopped by SIGTERM" in err.strip().splitlines()[-1]
    assert not out.exists()
    assert not running_with(str(out))  # the figures' child (a fork: the same command line) ended with it


def running_with(text: str) -> list[int]:
    """Process ids whose command line holds ``text``."""
    found = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                if text in (entry / "cmdline").read_bytes().replace(b"\0", b" ").decode(errors="replace"):
                    found.append(int(entry.name))
            except OSError:
                continue
    return found


def test_sigkill_while_writing_is_cleaned_up_by_the_next_run(tmp_path):
    out = tmp_path / "r"
    proc = start(["run", *MONTH, "--out", out])
    assert wait_for(lambda: len(tmp_files(out)) > 0), "the run never started writing"
    proc.kill()
    proc.communicate(timeout=60)
    left = tmp_files(out)
    assert left  # a killed process cleans nothing: its partial files are there
    again = subprocess.run(ATTICSIM + ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--out", str(out)],
                           capture_output=True, text=True)
    assert again.returncode == 0, again.stderr
    assert f"removed the unfinished files of an earlier run that was stopped without cleaning up (pid {proc.pid}" \
        in again.stderr
    assert not list(out.glob(".atticsim-*"))  # its lock released, nothing hidden left
    assert (out / "summary.json").exists()


def test_sigkill_while_simulating_leaves_a_folder_the_next_run_takes(tmp_path):
    out = tmp_path / "r"
    proc = start(["run", "--months", "year", "--out", out])
    stderr_line(proc, "simulating")
    proc.kill()
    proc.communicate(timeout=60)
    assert [p.name for p in out.iterdir()] == [".atticsim-lock"]  # nothing else: no results claimed
    again = subprocess.run(ATTICSIM + ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--out", str(out)],
                           capture_output=True, text=True)
    assert again.returncode == 0, again.stderr  # the lock of a dead process holds nothing


@pytest.fixture(scope="module")
def uninterrupted(tmp_path_factory):
    out = tmp_path_factory.mktemp("study") / "whole"
    done = subprocess.run(ATTICSIM + STUDY + ["--out", str(out)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    return out


def test_killed_study_ends_its_workers_and_resumes_byte_identical(tmp_path, uninterrupted):
    out = tmp_path / "s"
    proc = start(STUDY + ["--out", out])
    assert wait_for(lambda: (out / "journal.jsonl").exists() and (out / "journal.jsonl").read_text().count("\n") >= 1)
    workers = children(proc.pid)
    assert workers  # the pool is running
    proc.kill()
    proc.wait(timeout=30)
    # the workers end with their parent (PR_SET_PDEATHSIG, else their watchdog within half a second)
    assert wait_for(lambda: all(ended(w) for w in workers), timeout=5.0), [w for w in workers if not ended(w)]
    proc.stdout.close()
    proc.stderr.close()
    resumed = subprocess.run(ATTICSIM + STUDY + ["--out", str(out), "--resume"], capture_output=True, text=True)
    assert resumed.returncode == 0, resumed.stderr
    assert "reused" in resumed.stderr
    for name in ("points.csv", "pareto.csv", "recommendation.json"):
        assert (out / name).read_bytes() == (uninterrupted / name).read_bytes(), name


def test_study_stopped_by_sigterm_keeps_its_points_for_resume(tmp_path, uninterrupted):
    out = tmp_path / "s"
    proc = start(STUDY + ["--out", out])
    assert wait_for(lambda: (out / "journal.jsonl").exists() and (out / "journal.jsonl").read_text().count("\n") >= 1)
    workers = children(proc.pid)
    proc.terminate()
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 143, err
    assert "--resume" in err and err.strip().splitlines()[-1].startswith("atticsim: stopped by SIGTERM")
    assert wait_for(lambda: all(ended(w) for w in workers), timeout=5.0)
    assert not list(out.glob(".atticsim-tmp-*"))
    second = subprocess.run(ATTICSIM + STUDY + ["--out", str(out)], capture_output=True, text=True)
    assert second.returncode == 2 and "--resume" in second.stderr  # not silently started over
    resumed = subprocess.run(ATTICSIM + STUDY + ["--out", str(out), "--resume"], capture_output=True, text=True)
    assert resumed.returncode == 0, resumed.stderr
    assert (out / "points.csv").read_bytes() == (uninterrupted / "points.csv").read_bytes()


def _file_size_limit(limit):
    def apply():
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)  # a write past the limit then fails with EFBIG
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))
    return apply


def test_a_full_disk_is_one_line_and_leaves_nothing(tmp_path):
    # the kernel's file-size limit stands in for a full disk: writes past it fail (EFBIG, "File too large")
    out = tmp_path / "r"
    done = subprocess.run(ATTICSIM + ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--out", str(out)],
                          capture_output=True, text=True, preexec_fn=_file_size_limit(50_000))
    assert done.returncode == 1, done.stderr
    last = done.stderr.strip().splitlines()[-1]
    assert last.startswith(f"atticsim: error: {out}: cannot write ") and "nothing was written" in last, last
    assert "Traceback" not in done.stderr and not out.exists()
    study = tmp_path / "s"
    done = subprocess.run(ATTICSIM + STUDY + ["--out", str(study)], capture_output=True, text=True,
                          preexec_fn=_file_size_limit(3_000))
    assert done.returncode == 1, done.stderr
    assert done.stderr.strip().splitlines()[-1].startswith(f"atticsim: error: {study}: cannot write study.json")
    assert not study.exists()


def test_no_space_left_on_the_device_in_one_line(tmp_path, monkeypatch):
    # ENOSPC itself, raised by a writer (in this process)
    import atticsim.results.export as export

    real = export.result_writers

    def full_disk(result, units="si", series_format="csv"):
        writers = real(result, units, series_format)

        def no_space(path):
            Path(path).write_text("partial")
            raise OSError(errno.ENOSPC, "No space left on device", str(path))

        writers["timeseries.csv"] = no_space
        return writers

    monkeypatch.setattr(export, "result_writers", full_disk)
    out = tmp_path / "r"
    result = CliRunner().invoke(cli, ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--out", str(out),
                                      "--set", "simulation.spinup_days=0"])
    assert result.exit_code == 1
    assert result.stderr.strip().splitlines()[-1] == (f"atticsim: error: {out}: cannot write timeseries.csv: no space "
                                                      f"left on the disk; nothing was written")
    assert not out.exists()
