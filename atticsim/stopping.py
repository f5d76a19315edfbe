"""A stop asked for by a signal (SIGTERM, SIGHUP): raised as :class:`~atticsim.errors.InterruptedRun` at once,
remembered in case the exception is lost, and held off while finished outputs are moved into place.

Python runs a signal handler between two instructions of whatever Python code runs next, and that can be
code whose exception nobody sees: a finaliser (``__del__``, a weak-reference callback), whose exception is
printed and dropped, or a method an extension module calls and then clears every error of (an attribute
probe such as C-level ``hasattr``), which drops it without a word. A stop raised at that instant vanished and
the run went on to commit its files and exit 0. The stop is therefore also remembered:
:func:`raise_if_stopped` raises it again where a command is about to make its results final, and
:func:`held` keeps the few instructions that move them into place from being cut in half (the stop is raised
as soon as the block ends).
"""

from __future__ import annotations

import signal
from contextlib import contextmanager

from atticsim.errors import InterruptedRun

_asked: list[int] = []  # the signal of a stop asked for during the current command (at most one)
_holding: list[bool] = []  # True while a block must not be cut


def _stop(signum: int) -> InterruptedRun:
    return InterruptedRun(signum, signal.Signals(signum).name)


def handler(signum, frame) -> None:
    """The signal handler: ask for a stop and raise it (later signals are ignored while the clean-up runs)."""
    if _asked:
        return
    _asked.append(signum)
    if not _holding:
        raise _stop(signum)


def reset() -> None:
    """Forget an earlier stop (a new command begins)."""
    _asked.clear()
    _holding.clear()


def raise_if_stopped() -> None:
    """Raise the stop a signal asked for, if any (its first exception may have been dropped by a finaliser)."""
    if _asked:
        raise _stop(_asked[0])


@contextmanager
def held():
    """A block a stop must not cut in half; a stop asked for during it is raised when it ends."""
    raise_if_stopped()
    _holding.append(True)
    try:
        yield
    finally:
        _holding.clear()
    raise_if_stopped()
