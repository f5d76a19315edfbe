"""Work in threads beside the caller's, where the work lets go of the GIL (compiled solver code, numpy's
large operations, Arrow's encoders): :class:`Beside` runs one piece of work in a thread of its own (the
no-fan run beside the fan's); :func:`ahead` produces an iterator's items in a thread a few ahead of the
caller (a table's next batch converted while the last one is written). Both hand what the work raised to
the caller; the threads are daemons, so a run stopped meanwhile never waits for them at exit.

Tried and dropped: writing a year's time series beside the figures. matplotlib and the table's conversion
both want the GIL most of the time: the figure took 0.3 s longer, the whole run no less (measured side by
side, 2026-12-05).
"""

from __future__ import annotations

import queue
import threading


class Beside:
    """``work(cancel)`` run in a thread of its own while the caller goes on; :meth:`result` waits for it and
    returns what it returned or raises what it raised. ``cancel`` is a :class:`threading.Event` the work
    looks at between its steps: :meth:`stop` sets it and waits, so that a caller that fails (a run stopped
    by a signal) never leaves the work running while Python shuts down (compiled code running on in a
    daemon thread can crash the interpreter at its exit: measured, a run stopped by SIGTERM ended with
    SIGSEGV about one time in four before it waited)."""

    def __init__(self, work):
        self._value, self._error = None, None
        self.cancel = threading.Event()
        self._thread = threading.Thread(target=self._run, args=(work,), name="atticsim-beside", daemon=True)
        self._thread.start()

    def _run(self, work):
        try:
            self._value = work(self.cancel)
        except BaseException as exc:  # noqa: BLE001 - handed to the caller by result()
            self._error = exc

    def result(self):
        self._thread.join()
        if self._error is not None:
            raise self._error
        return self._value

    def stop(self) -> None:
        """Ask the work to end at its next step and wait for it (what it raised is dropped)."""
        self.cancel.set()
        self._thread.join()

    @property
    def running(self) -> bool:
        return self._thread.is_alive()


def ahead(items, depth: int = 2):
    """``items`` (an iterator) produced in a thread of its own, up to ``depth`` ahead of the caller: a table's
    next batch is converted (numpy, which lets go of the GIL) while the writer encodes and writes the last
    one (Arrow, which does too). The items and their order are the same; what the producer raises is raised
    here, and a caller that stops early stops the producer."""
    out = queue.Queue(maxsize=depth)
    done, stop = object(), threading.Event()

    def put(entry) -> bool:  # False once the caller has stopped taking items
        while not stop.is_set():
            try:
                out.put(entry, timeout=0.1)
                return True
            except queue.Full:
                continue
        return False

    def produce():
        try:
            for item in items:
                if not put((item, None)):
                    return
            put((done, None))
        except BaseException as exc:  # noqa: BLE001 - handed to the caller below
            put((done, exc))

    thread = threading.Thread(target=produce, name="atticsim-batches", daemon=True)
    thread.start()
    try:
        while True:
            item, error = out.get()
            if item is done:
                if error is not None:
                    raise error
                return
            yield item
    finally:
        stop.set()
        thread.join()  # within one item (or 0.1 s): nothing left running while the process exits
