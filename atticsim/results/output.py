"""Output folders: claimed before a run, written all at once, nothing half-written left behind.

A command claims its output folder ``DIR`` before it reads or simulates anything
(:func:`claim_output`): it creates ``DIR`` (and its parents) if needed and takes an exclusive lock on the file
``DIR/.atticsim-lock`` (an advisory ``flock``: the kernel releases it when its owner ends, however it ends),
writing its process id there. A second run into the same folder fails at once, ``--force`` or not; a study's
``--resume`` takes the same claim. A folder that already holds files is refused unless the caller allows it
(``force``, or a study's resume).

The files are written into ``DIR/.atticsim-tmp-<pid>/`` and moved into ``DIR`` only when every one of them
is complete (:meth:`OutputClaim.write`). When the run fails or is stopped (Ctrl-C, SIGTERM, SIGHUP) the
temporary folder is removed, and so is ``DIR`` if the claim created it. A run killed outright (SIGKILL, a
power cut) cannot clean up: the next claim of the folder removes what it left (its lock being free) and
says so.

A folder that cannot be claimed fails in one line (:class:`~atticsim.errors.OutputError`: not a folder, a
path under ``/proc``, read-only, in use); writing that fails once claimed (a full disk) in one line too
(:class:`~atticsim.errors.WriteFailure`, an OSError keeping its errno).
"""

from __future__ import annotations

import errno
import json
import math
import os
import shutil
import signal
import socket
import sys
import time
import warnings
from pathlib import Path

from atticsim import stopping
from atticsim.errors import OutputError, WriteFailure
from atticsim.processes import worker_init

LOCK = ".atticsim-lock"
#: Prefix of the temporary files and folders a run writes inside its claimed folder.
TMP_PREFIX = ".atticsim-tmp-"
#: Temporary files of earlier versions (a study's ``.tmp-<file>``), cleaned up the same way.
_OLD_TMP_NAMES = tuple(f".tmp-{name}" for name in ("study.json", "points.csv", "points.parquet", "pareto.csv",
                                                    "pareto.png", "recommendation.json", "short_cycling_map.png"))


class OutputExistsError(OutputError):
    """DIR already holds files and overwriting was not asked for, or another run is writing there."""


def _clean(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if hasattr(value, "item"):
        return _clean(value.item())
    return value


def write_json(path: Path, data) -> None:
    """Write JSON with NaN/inf as null and numpy scalars as plain numbers."""
    path.write_text(json.dumps(_clean(data), indent=2) + "\n")


def _os_reason(exc: OSError) -> str:
    if exc.errno in (errno.ENOSPC, errno.EDQUOT):
        return "no space left on the disk"
    return exc.strerror or str(exc)


def _is_ours(name: str) -> bool:
    return name == LOCK or name.startswith(TMP_PREFIX) or name in _OLD_TMP_NAMES


def _visible_entries(out: Path) -> list[str]:
    return sorted(e.name for e in os.scandir(out) if not _is_ours(e.name))


def check_output_dir(out: Path, force: bool) -> None:
    """Raise OutputExistsError if ``out`` is not a folder, or holds files and ``force`` is False (a check
    only: :func:`claim_output` is what a run does)."""
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise OutputExistsError(f"{out}: exists and is not a folder")
    if out.is_dir() and not force:
        try:
            entries = _visible_entries(out)
        except OSError as exc:
            raise OutputError(f"{out}: cannot read the folder: {_os_reason(exc)}") from None
        if entries:
            raise OutputExistsError(f"{out}: folder already holds files; pass --force to overwrite")


def _owner(lock_path: Path) -> str:
    """'pid 1234 on host, since 12:03' from a lock file, or ''."""
    try:
        info = json.loads(lock_path.read_text() or "{}")
        if not isinstance(info, dict) or "pid" not in info:
            return ""
        since = time.strftime("%H:%M", time.localtime(info["started"])) if "started" in info else "?"
        return f"pid {info.get('pid')} on {info.get('host')}, since {since}"
    except (OSError, ValueError, KeyError, TypeError, OverflowError):
        return ""


def _lock(path: Path):
    """An exclusive flock on ``path`` (created if needed) -> file descriptor, or None when another process
    holds it. The lock belongs to the file the path names when it is taken (a lock on a file that another
    run removed meanwhile is dropped and taken again)."""
    try:
        import fcntl
    except ImportError:  # no flock on this system: an exclusive create (a killed run's lock is then removed by hand)
        try:
            return os.open(path, os.O_RDWR | os.O_CREAT | os.O_EXCL, 0o644)
        except FileExistsError:
            return None

    for _ in range(10):
        fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_CLOEXEC, 0o644)
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            os.close(fd)
            return None
        except OSError:
            os.close(fd)
            raise
        try:
            same = os.fstat(fd).st_ino == os.stat(path).st_ino
        except FileNotFoundError:
            same = False
        if same:
            return fd
        os.close(fd)
    raise OutputError(f"{path.parent}: cannot lock the folder (its lock file keeps changing)")


class OutputClaim:
    """A claimed output folder (see the module's docstring).

    Attributes
    ----------
    out : Path
        The folder.
    created : list of Path
        Folders the claim created (removed again if the run fails).
    notes : list of str
        What the claim cleaned up after an earlier run that was killed (for the terminal).
    """

    def __init__(self, out: Path, fd: int, created: list[Path], notes: list[str]):
        self.out, self._fd, self.created, self.notes = out, fd, created, notes
        self.committed = False

    @property
    def held(self) -> bool:
        return self._fd is not None

    def tmp_path(self, name: str) -> Path:
        """A temporary path inside the folder for the file ``name`` (removed by the next claim if this run is
        killed before it is moved into place)."""
        return self.out / f"{TMP_PREFIX}{os.getpid()}-{name}"

    def write(self, writers: dict) -> list[Path]:
        """Write every file, then move them all into the folder (replacing files of the same name).

        Parameters
        ----------
        writers : dict
            file name -> callable(path) that writes that file, in order. Writers marked with :func:`apart`
            (the figures) run in a child process started first, while the others before them run here;
            the writers after them run once the child is done (the report page reads the figures).

        Returns
        -------
        list of Path
            The files written (in their final place).
        """
        tmp = self.tmp_path("files")
        child = None
        try:
            tmp.mkdir()
            apart = {name: w for name, w in writers.items() if getattr(w, "apart", False)}
            child = ApartWriters([(w, tmp / name) for name, w in apart.items()])
            for name, write in writers.items():
                if name in apart:
                    if child is not None and not child.wait():  # (once; False: the child did not write them)
                        for again_name, again in apart.items():
                            self._write_one(again, tmp, again_name)
                    child = None
                    continue
                self._write_one(write, tmp, name)
            with stopping.held():  # a stop dropped by a finaliser is raised here; none cuts the moves in half
                for name in writers:
                    os.replace(tmp / name, self.out / name)
            tmp.rmdir()
        except WriteFailure:
            raise
        except OSError as exc:
            raise WriteFailure(exc.errno, f"{self.out}: cannot write the files: {_os_reason(exc)}") from None
        finally:
            if child is not None:
                child.stop()  # nothing may still be writing into the folder removed next
            shutil.rmtree(tmp, ignore_errors=True)
        self.committed = True
        return [self.out / name for name in writers]

    def _write_one(self, write, tmp: Path, name: str) -> None:
        try:
            write(tmp / name)
        except OSError as exc:
            if isinstance(exc, WriteFailure):
                raise
            raise WriteFailure(exc.errno, f"{self.out}: cannot write {name}: {_os_reason(exc)}; nothing "
                                          f"was written") from None

    def release(self, failed: bool | None = None) -> None:
        """Give the folder up. After a failure (``failed``, or nothing written yet), remove the temporary files
        and the folders the claim created when they hold nothing else."""
        if self._fd is None:
            return
        failed = (not self.committed) if failed is None else failed
        try:
            for entry in os.scandir(self.out):
                if entry.name.startswith(f"{TMP_PREFIX}{os.getpid()}-"):
                    _remove(Path(entry.path))
            (self.out / LOCK).unlink(missing_ok=True)
        except OSError:
            pass
        finally:
            os.close(self._fd)
            self._fd = None
        if failed:
            for folder in reversed(self.created):
                try:
                    folder.rmdir()  # only when empty: nothing of the user's is ever removed
                except OSError:
                    break

    def __enter__(self):
        return self

    def __exit__(self, kind, value, tb):
        self.release(failed=kind is not None or not self.committed)
        return False


def _remove(path: Path) -> None:
    if path.is_dir() and not path.is_symlink():
        shutil.rmtree(path, ignore_errors=True)
    else:
        path.unlink(missing_ok=True)


def claim_output(out: str | Path, force: bool = False, *, existing_ok: bool = False,
                 refuse_hint: str = "pass --force to overwrite") -> OutputClaim:
    """Claim an output folder for this process.

    Parameters
    ----------
    out : str or Path
        The folder (created with its parents when missing).
    force : bool
        Allow a folder that already holds files (they are replaced by files of the same name).
    existing_ok : bool
        Allow a folder that holds files without ``force`` (a study resumed there).
    refuse_hint : str
        What the refusal of a folder with files says to do.

    Returns
    -------
    OutputClaim
        Release it (or use it as a context manager) when the run ends.

    Raises
    ------
    OutputError
        One line: not a folder, cannot be created or written, already holds files, another run is writing.
    """
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise OutputExistsError(f"{out}: exists and is not a folder")
    created = []
    for folder in reversed([out, *out.parents]):
        if not folder.exists():
            created.append(folder)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        _remove_created(created)
        raise OutputError(f"{out}: cannot create the folder: {_os_reason(exc)}") from None
    created = [c for c in created if c.is_dir()]
    lock = out / LOCK
    try:
        fd = _lock(lock)
    except OSError as exc:
        _remove_created(created)
        raise OutputError(f"{out}: cannot write in the folder: {_os_reason(exc)}") from None
    if fd is None:
        owner = _owner(lock) or "it holds the folder's lock"
        raise OutputExistsError(f"{out}: another atticsim run is writing to this folder ({owner}); wait for it to "
                                f"finish or choose another --out")
    claim = OutputClaim(out, fd, created, [])
    try:
        claim.notes.extend(_clean_leftovers(out, lock) + _older_leftovers(out))
        info = {"pid": os.getpid(), "host": socket.gethostname(), "started": time.time(),
                "command": " ".join(sys.argv[:1] + sys.argv[1:8])[:300]}
        os.ftruncate(fd, 0)
        os.pwrite(fd, (json.dumps(info) + "\n").encode(), 0)
        entries = _visible_entries(out)
        if entries and not (force or existing_ok):
            raise OutputExistsError(f"{out}: folder already holds files ({', '.join(entries[:3])}"
                                    f"{', ...' if len(entries) > 3 else ''}); {refuse_hint}")
    except OSError as exc:
        claim.release(failed=True)
        raise OutputError(f"{out}: cannot write in the folder: {_os_reason(exc)}") from None
    except BaseException:
        claim.release(failed=True)
        raise
    return claim


def _remove_created(created: list[Path]) -> None:
    for folder in reversed(created):
        try:
            folder.rmdir()
        except OSError:
            break


def _clean_leftovers(out: Path, lock: Path) -> list[str]:
    """Remove the temporary files of earlier runs into ``out`` that ended without cleaning up (killed): this
    process holds the lock, so no other run is writing them. Returns what was removed, in words."""
    left = [e for e in os.scandir(out) if e.name.startswith(TMP_PREFIX) or e.name in _OLD_TMP_NAMES]
    if not left:
        return []
    owner = _owner(lock)
    for entry in left:
        _remove(Path(entry.path))
    names = ", ".join(sorted(e.name for e in left)[:3]) + (", ..." if len(left) > 3 else "")
    return [f"{out}: removed the unfinished files of an earlier run that was stopped without cleaning up"
            f"{f' ({owner})' if owner else ''}: {names}"]


def _older_leftovers(out: Path) -> list[str]:
    """Hidden folders beside ``out`` that runs of earlier atticsim versions left when stopped while writing
    (``.<name>.<8 random characters>``, ``.<name>.old``): said, not removed (nothing records their owner)."""
    import re

    pattern = re.compile(rf"^\.{re.escape(out.name)}\.(?:[a-z0-9_]{{8}}|old)$")
    try:
        found = sorted(e.name for e in os.scandir(out.parent) if e.is_dir() and pattern.match(e.name))
    except OSError:
        return []
    return [f"{out.parent / name}: looks like the unfinished files of a run of an earlier atticsim version that was "
            f"stopped while writing into {out.name}; delete it if no such run is going on" for name in found]


def apart(write):
    """The writer ``write`` marked to run in a child process while the writers before it run in this one
    (:meth:`OutputClaim.write`): for the figures, whose drawing holds the GIL (a thread would gain nothing)
    and reads only what the run computed. Off Linux it runs here, in turn."""
    write.apart = True
    return write


class ApartWriters:
    """Writers ``[(write, path), ...]`` run in a child process forked from this one (nothing to pickle: the
    child has the run's results as they are).

    The child ends with this process (:func:`atticsim.processes.worker_init`), writes nothing on the
    terminal (its output goes to the null device, so it never waits on a lock a thread of this process held
    at the fork) and reports by its exit status alone. :meth:`wait` says whether it wrote every file; a
    child that failed leaves the writing to this process, which then meets the failure itself and reports it.
    """

    def __init__(self, jobs):
        self.pid = None
        if not jobs or not sys.platform.startswith("linux"):  # (forking is safe for this on Linux, tested there)
            return
        parent = os.getpid()
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (OSError, ValueError):
                pass
        held = {signal.SIGINT, signal.SIGTERM, signal.SIGHUP}
        signal.pthread_sigmask(signal.SIG_BLOCK, held)  # no stop raised in the child before it is quiet
        try:
            with warnings.catch_warnings():  # (Python 3.12 warns about forking a process with threads: the
                warnings.simplefilter("ignore", DeprecationWarning)  # child uses no lock they could hold)
                pid = os.fork()
        except BaseException:
            signal.pthread_sigmask(signal.SIG_UNBLOCK, held)
            raise
        if pid == 0:
            code = 1
            try:
                _quiet_child(parent)
                signal.pthread_sigmask(signal.SIG_UNBLOCK, held)
                for write, path in jobs:
                    write(path)
                code = 0
            except BaseException:  # noqa: BLE001 - reported by the exit status; the parent writes instead
                pass
            finally:
                os._exit(code)
        self.pid = pid
        signal.pthread_sigmask(signal.SIG_UNBLOCK, held)  # a stop asked for meanwhile is raised here

    def wait(self) -> bool:
        """Wait for the child; True when it wrote every file (False too when there is no child)."""
        if self.pid is None:
            return False
        _, status = os.waitpid(self.pid, 0)
        self.pid = None
        return os.waitstatus_to_exitcode(status) == 0

    def stop(self) -> None:
        """End the child now, if it still runs, and reap it."""
        if self.pid is None:
            return
        try:
            os.kill(self.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        try:
            os.waitpid(self.pid, 0)
        except ChildProcessError:
            pass
        self.pid = None


def _quiet_child(parent: int) -> None:
    worker_init(parent)  # SIGTERM and SIGHUP: their default action
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, 1)
    os.dup2(null, 2)
    sys.stdout = sys.stderr = open(null, "w", closefd=False)  # fresh objects: no lock held at the fork


def write_outputs(out, writers: dict, force: bool = False) -> list[Path]:
    """Write files into ``out`` all at once (see :meth:`OutputClaim.write`).

    Parameters
    ----------
    out : str, Path or OutputClaim
        Target folder, or the claim a command took on it before running (the claim is kept).
    writers : dict
        file name -> callable(path) that writes that file.
    force : bool
        Replace files in a folder that already holds some (when ``out`` is a folder, not a claim).

    Returns
    -------
    list of Path
        The files written (in their final place).
    """
    if isinstance(out, OutputClaim):
        return out.write(writers)
    with claim_output(out, force) as claim:
        return claim.write(writers)
