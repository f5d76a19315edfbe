"""Output folders: claimed by one run at a time, written all at once, nothing left by a failure, what a killed
run left removed by the next claim."""

import os
import signal
import sys

import pytest

from atticsim import stopping
from atticsim.errors import InputError, InterruptedRun, OutputError, WriteFailure
from atticsim.results.output import LOCK, apart, claim_output, write_outputs


def test_a_claim_is_exclusive_and_released(tmp_path):
    out = tmp_path / "a" / "b" / "out"
    claim = claim_output(out)
    assert (out / LOCK).exists() and claim.created == [tmp_path / "a", tmp_path / "a" / "b", out]
    with pytest.raises(OutputError, match="another atticsim run is writing to this folder"):
        claim_output(out)
    with pytest.raises(OutputError, match="another atticsim run"):
        claim_output(out, force=True)  # --force does not take a folder in use
    files = claim.write({"x.txt": lambda p: p.write_text("x"), "y.txt": lambda p: p.write_text("y")})
    claim.release()
    assert sorted(p.name for p in out.iterdir()) == ["x.txt", "y.txt"] and files == [out / "x.txt", out / "y.txt"]
    with pytest.raises(OutputError, match="holds files .*--force"):
        claim_output(out)
    with claim_output(out, force=True) as again:
        again.write({"x.txt": lambda p: p.write_text("new")})
    assert (out / "x.txt").read_text() == "new" and (out / "y.txt").read_text() == "y"


def test_a_failed_write_leaves_nothing(tmp_path):
    out = tmp_path / "new" / "out"

    def broken(path):
        path.write_text("half")
        raise RuntimeError("a bug in a writer")

    with pytest.raises(RuntimeError):
        write_outputs(out, {"good.txt": lambda p: p.write_text("ok"), "bad.txt": broken})
    assert not (tmp_path / "new").exists()  # the folders the claim made are gone again


def test_a_failed_write_keeps_the_users_folder_as_it_was(tmp_path):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "notes.txt").write_text("the user's")

    def no_space(path):
        raise OSError(28, "No space left on device")

    with pytest.raises(WriteFailure) as err:
        write_outputs(out, {"a.txt": lambda p: p.write_text("a"), "b.txt": no_space}, force=True)
    assert err.value.errno == 28 and "cannot write b.txt: no space left on the disk" in err.value.strerror
    assert [p.name for p in out.iterdir()] == ["notes.txt"]


def test_leftovers_of_a_killed_run_are_removed_with_a_note(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / LOCK).write_text('{"pid": 999999, "host": "elsewhere", "started": 0}\n')
    left = out / ".atticsim-tmp-999999-files"
    left.mkdir()
    (left / "timeseries.csv").write_text("partial")
    (out / ".tmp-study.json").write_text("{")  # an earlier version's temporary file
    with claim_output(out) as claim:  # nothing visible in the folder: it counts as empty
        assert len(claim.notes) == 1 and "pid 999999" in claim.notes[0]
        assert not left.exists() and not (out / ".tmp-study.json").exists()
        claim.write({"a.txt": lambda p: p.write_text("a")})
    assert [p.name for p in out.iterdir()] == ["a.txt"]


@pytest.mark.parametrize("where,reason", [("/dev/null", "exists and is not a folder"),
                                          ("/proc/atticsim-test/out", "cannot create the folder")])
def test_unusable_places_are_refused_before_anything_runs(where, reason):
    with pytest.raises(InputError, match=reason):
        claim_output(where)


def test_hidden_folders_of_earlier_versions_beside_the_output_are_reported(tmp_path):
    # earlier versions wrote into .<name>.<8 random characters>/ beside DIR and left it when stopped by SIGTERM
    (tmp_path / ".out.k3j2h9x_").mkdir()
    (tmp_path / ".other.k3j2h9x_").mkdir()  # another folder's: not this one's to report
    with claim_output(tmp_path / "out") as claim:
        assert len(claim.notes) == 1 and ".out.k3j2h9x_: looks like the unfinished files" in claim.notes[0]
    assert (tmp_path / ".out.k3j2h9x_").exists()  # said, not removed


# --- a stop asked for by a signal (atticsim.stopping) -------------------------------------------------------

@pytest.fixture
def no_stop():
    stopping.reset()
    yield
    stopping.reset()


class _Finaliser:
    """Runs the signal handler inside ``__del__``, where Python prints the exception it raises and drops it."""

    def __del__(self):
        stopping.handler(signal.SIGTERM, None)


def test_a_stop_dropped_by_a_finaliser_is_raised_before_the_files_are_moved(tmp_path, no_stop, monkeypatch):
    dropped = []
    monkeypatch.setattr(sys, "unraisablehook", lambda what: dropped.append(what.exc_type))

    def writer(path):
        path.write_text("x")
        _Finaliser()  # the stop raised in here is lost to the writer: the write goes on

    with pytest.raises(InterruptedRun):
        write_outputs(tmp_path / "o", {"a.txt": writer, "b.txt": lambda p: p.write_text("y")})
    assert dropped == [InterruptedRun]  # it was dropped where it was raised
    assert not (tmp_path / "o").exists()  # nothing claimed, nothing left behind


def test_a_stop_during_a_held_block_waits_for_its_end(no_stop):
    done = []
    with pytest.raises(InterruptedRun) as caught:
        with stopping.held():
            stopping.handler(signal.SIGHUP, None)  # not raised here
            done.append("rest of the block")
    assert done == ["rest of the block"] and caught.value.name == "SIGHUP"


def test_without_a_signal_nothing_is_raised(tmp_path, no_stop):
    stopping.raise_if_stopped()
    assert [p.name for p in write_outputs(tmp_path / "o", {"a.txt": lambda p: p.write_text("x")})] == ["a.txt"]


# --- writers run in a child process (results.output.apart) -----------------------------------------------------

def _gone(pid: int) -> bool:
    """The process has ended and been reaped (no entry left, not even a zombie's)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    return False


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="figures are drawn apart on Linux only")
def test_writers_apart_run_in_a_child_and_the_ones_after_them_see_their_files(tmp_path):
    seen = {}

    def whose(path):
        path.write_text(str(os.getpid()))

    def page(path):  # after the figures: they must be there
        seen.update({name: (path.parent / name).read_text() for name in ("a.png", "b.png")})
        path.write_text("page")

    files = write_outputs(tmp_path / "o", {"t.csv": whose, "a.png": apart(lambda p: whose(p)),
                                           "b.png": apart(lambda p: whose(p)), "r.html": page})
    assert [p.name for p in files] == ["t.csv", "a.png", "b.png", "r.html"]
    child = (tmp_path / "o" / "a.png").read_text()
    assert child != str(os.getpid()) and (tmp_path / "o" / "b.png").read_text() == child
    assert (tmp_path / "o" / "t.csv").read_text() == str(os.getpid())
    assert seen == {"a.png": child, "b.png": child}
    assert _gone(int(child))  # ended and reaped


def test_a_child_that_fails_leaves_its_files_to_this_process(tmp_path):
    parent = os.getpid()

    def only_here(path):
        if os.getpid() != parent:
            raise RuntimeError("no figures in the child")  # e.g. the child ran out of memory
        path.write_text("drawn here")

    write_outputs(tmp_path / "o", {"a.png": apart(only_here)})
    assert (tmp_path / "o" / "a.png").read_text() == "drawn here"


def test_a_failure_here_stops_the_child_and_leaves_nothing(tmp_path):
    import time

    def slow(path):
        (tmp_path / "child.pid").write_text(str(os.getpid()))
        time.sleep(30)  # a child still drawing when the run fails
        path.write_text("late")

    def full_disk_later(path):
        for _ in range(500):  # once the child is drawing
            if (tmp_path / "child.pid").exists():
                break
            time.sleep(0.01)
        raise OSError(28, "No space left on device")

    t0 = time.monotonic()
    with pytest.raises(WriteFailure, match="cannot write t.csv: no space left"):
        write_outputs(tmp_path / "o", {"t.csv": full_disk_later, "a.png": apart(slow)})
    assert time.monotonic() - t0 < 20.0  # the child was not waited for
    assert not (tmp_path / "o").exists() and _gone(int((tmp_path / "child.pid").read_text()))


def test_a_childs_write_failure_is_met_and_reported_here(tmp_path):
    def full_disk(path):
        raise OSError(28, "No space left on device")

    with pytest.raises(WriteFailure, match="cannot write a.png: no space left"):
        write_outputs(tmp_path / "o", {"a.png": apart(full_disk)})
    assert not (tmp_path / "o").exists()
