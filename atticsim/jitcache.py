"""Where the compiled solver's machine code is cached, and keeping that cache in step with its sources.

numba caches a compiled function beside its source (``__pycache__``) and checks the cache against that
one file (a hash of its content). Two problems follow for atticsim:

- the compiled solver inlines functions and constants from several modules (the network kernel, the
  blocks, the heat-transfer and sensor correlations...), so a change to one of them would leave the
  others' cached machine code stale;
- cache files written into an installed package are not in pip's record: they outlive ``pip uninstall``,
  and the folder left behind (a namespace package) would shadow a later editable install.

So atticsim's compiled functions cache in a folder of their own, one per install and Python version
(``$ATTICSIM_CACHE_DIR``, else ``$XDG_CACHE_HOME/atticsim``, else ``~/.cache/atticsim``): the modules that
define them call :func:`route` before their decorators and :func:`restore` after, which points numba's
``config.CACHE_DIR`` there for those functions only. :func:`check`, called before anything is compiled or
loaded, hashes the compiled-in sources and empties that folder when the hash differs from the one stored
in it. When the folder cannot be created, or ``NUMBA_CACHE_DIR`` is set (the user's choice wins), numba's
own location is used and :func:`check` clears the in-tree cache files instead.
"""

from __future__ import annotations

import hashlib
import os
import sys
from pathlib import Path

_ROOT = Path(__file__).resolve().parent
#: The modules whose code or constants end up in compiled functions.
SOURCES = ("constants.py", "air.py", "jitcache.py", "network/kernel.py", "network/model.py", "network/heat_transfer.py",
           "network/placement.py", "sensor/air.py", "sensor/convection.py", "sensor/body.py",
           "io/weather_frame.py", "hybrid/blocks.py", "hybrid/compiled.py",
           "airflow/balance_kernel.py")
_STAMP = "atticsim-jit.stamp"
_checked = False
_folder: list = []   # [Path or None] once computed
_saved: list = []    # numba.config.CACHE_DIR values to restore


def _digest() -> str:
    h = hashlib.sha256()
    for name in SOURCES:
        path = _ROOT / name
        h.update(name.encode())
        h.update(path.read_bytes() if path.exists() else b"")
    return h.hexdigest()


def folder() -> Path | None:
    """This install's cache folder (created), or None when numba's own location is to be used."""
    if not _folder:
        path = None
        if not os.environ.get("NUMBA_CACHE_DIR"):
            base = os.environ.get("ATTICSIM_CACHE_DIR") or os.path.join(
                os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache"), "atticsim")
            tag = hashlib.sha1(str(_ROOT).encode()).hexdigest()[:12]
            candidate = Path(base) / f"numba-{tag}-py{sys.version_info[0]}{sys.version_info[1]}"
            try:
                candidate.mkdir(parents=True, exist_ok=True)
                probe = candidate / ".write-test"
                probe.write_text("")
                probe.unlink()
                path = candidate
            except OSError:
                path = None
        _folder.append(path)
    return _folder[0]


def route() -> None:
    """Cache the compiled functions decorated from now on in :func:`folder` (until :func:`restore`)."""
    import numba

    _saved.append(numba.config.CACHE_DIR)
    where = folder()
    if where is not None:
        numba.config.CACHE_DIR = str(where)


def restore() -> None:
    """Undo the last :func:`route`."""
    import numba

    if _saved:
        numba.config.CACHE_DIR = _saved.pop()


def _clear(paths) -> None:
    for f in paths:
        try:
            f.unlink()
        except OSError:
            pass


def check() -> None:
    """Empty the cache of the compiled modules when their sources changed (once per process; cheap)."""
    global _checked
    if _checked:
        return
    _checked = True
    digest = _digest()
    where = folder()
    stamp = (where if where is not None else _ROOT / "hybrid" / "__pycache__") / _STAMP
    try:
        if stamp.exists() and stamp.read_text() == digest:
            return
        if where is not None:
            _clear(list(where.rglob("*.nbi")) + list(where.rglob("*.nbc")))
        for f in {(_ROOT / name).parent / "__pycache__" for name in SOURCES}:
            if f.is_dir():
                _clear(list(f.glob("*.nbi")) + list(f.glob("*.nbc")))
        stamp.parent.mkdir(parents=True, exist_ok=True)
        stamp.write_text(digest)
    except OSError:
        # a read-only place: numba then caches in its own user folder (or not at all); nothing to do
        pass


def cold() -> bool:
    """True when this install's compiled solver is not in the cache yet: its first use will compile it (a
    command says so before it starts)."""
    check()
    where = folder()
    roots = [where] if where is not None else [Path(os.environ["NUMBA_CACHE_DIR"])] if os.environ.get(
        "NUMBA_CACHE_DIR") else [_ROOT / "hybrid" / "__pycache__"]
    return not any(any(r.rglob("compiled.advance-*.nbi")) for r in roots if r.is_dir())


#: The marker a background compile holds in the cache folder while it runs (its process id inside).
_BUSY = ".compiling"


def _roots() -> list[Path]:
    where = folder()
    if where is not None:
        return [where]
    return [Path(os.environ["NUMBA_CACHE_DIR"])] if os.environ.get("NUMBA_CACHE_DIR") else []


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # another user's process: it exists
        return True
    return True


def compiling() -> bool:
    """True while a background compile started by :func:`compile_in_background` is still running."""
    for root in _roots():
        try:
            pid = int((root / _BUSY).read_text().strip() or 0)
        except (OSError, ValueError):
            continue
        if pid > 0 and _alive(pid):
            return True
    return False


def compile_in_background(command: list[str]) -> bool:
    """Start ``command`` (a process that compiles the solver into this cache and then ends) in a session of its
    own, unless one is already running; the command gets the marker's path as its last argument and should
    remove it when done (a marker whose process has ended counts as none). Returns False when there is no
    cache folder to compile into (numba's own location or none writable)."""
    import subprocess

    roots = _roots()
    if not roots:
        return False
    if compiling():
        return True
    marker = roots[0] / _BUSY
    try:
        roots[0].mkdir(parents=True, exist_ok=True)
        marker.unlink(missing_ok=True)  # an ended compile's marker
        fd = os.open(marker, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
    except OSError:  # another command took it this instant, or the folder is read-only
        return compiling()
    try:
        proc = subprocess.Popen([*command, str(marker)], stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                                stderr=subprocess.DEVNULL, start_new_session=True, close_fds=True)
        os.write(fd, str(proc.pid).encode())
    except OSError:
        os.close(fd)
        marker.unlink(missing_ok=True)
        return False
    os.close(fd)
    return True
