"""Output folders: claimed by one run at a time, written all at once, nothing left by a failure, what a killed
run left removed by the next claim."""

import signal
import sys

import pytest

from atticsim import stopping
from atticsim.errors import InputError, InterruptedRun, OutputError, WriteFailure
from atticsim.results.output import LOCK, claim_output, write_outputs


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
