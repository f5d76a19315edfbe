"""Worker processes that end with their parent.

A process pool's workers outlive a parent that is killed outright (SIGKILL, an out-of-memory kill): they
finish the point they hold, then wait on a queue nobody writes to (measured before this module: 30-90 s and
more). :func:`process_pool` gives every worker two guards, started by the pool's initializer:

- on Linux, ``prctl(PR_SET_PDEATHSIG, SIGKILL)``: the kernel kills the worker when the thread that forked it
  ends (the parent process, for the workers a pool forks from its caller's thread);
- everywhere, a watchdog thread that ends the worker (``os._exit``) within :data:`WATCH_S` of the parent's
  death, seen as a change of the worker's parent process id (it is re-parented) or the parent's pid gone.

Workers also take SIGTERM and SIGHUP's default action (end at once), whatever handlers the parent set: the
pool ends them that way when it is shut down.
"""

from __future__ import annotations

import concurrent.futures as cf
import os
import signal
import sys
import threading
import time

#: How often a worker's watchdog looks for its parent [s].
WATCH_S = 0.5
_PR_SET_PDEATHSIG = 1


def _parent_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _watch(parent_pid: int, first_ppid: int) -> None:
    while True:
        time.sleep(WATCH_S)
        if os.getppid() != first_ppid or not _parent_alive(parent_pid):
            os._exit(1)


def worker_init(parent_pid: int) -> None:
    """A pool worker's initializer: end with the parent (see the module's docstring)."""
    for name in ("SIGTERM", "SIGHUP"):
        if hasattr(signal, name):
            signal.signal(getattr(signal, name), signal.SIG_DFL)
    if sys.platform.startswith("linux") and os.getppid() == parent_pid:
        try:
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
        except (OSError, AttributeError):
            pass
    if not _parent_alive(parent_pid):  # the parent died before this worker started
        os._exit(1)
    threading.Thread(target=_watch, args=(parent_pid, os.getppid()), daemon=True,
                     name="atticsim-parent-watch").start()


def process_pool(workers: int, mp_context=None) -> cf.ProcessPoolExecutor:
    """A ``ProcessPoolExecutor`` of ``workers`` processes that end when this process ends.

    Parameters
    ----------
    workers : int
        Worker processes (at least 1).
    mp_context : multiprocessing context, optional
        How workers start (fork, forkserver, spawn); default the platform's.
    """
    return cf.ProcessPoolExecutor(max_workers=max(1, int(workers)), mp_context=mp_context,
                                  initializer=worker_init, initargs=(os.getpid(),))
