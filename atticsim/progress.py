"""What a long command is doing, told on a text stream (stderr): the stages of a run with their elapsed time,
and counted work (a study's points, the placements) with an ETA.

Both write only when the stream is a terminal, updating one line in place; to a log or a pipe they say
nothing, except :class:`Progress`, which writes a line every ~5 % there (a study runs long enough to want a
record). The library never prints: it calls a ``progress(text)`` callback at each stage (:func:`atticsim.
pipeline.simulate` and friends), and the commands hand it a :class:`Stages`.
"""

from __future__ import annotations

import threading
import time


def hms(seconds: float) -> str:
    seconds = max(0, int(round(seconds)))
    return f"{seconds // 3600}:{seconds // 60 % 60:02d}:{seconds % 60:02d}"


def _seconds(seconds: float) -> str:
    return f"{seconds:.1f} s" if seconds < 60.0 else hms(seconds)


def is_terminal(stream) -> bool:
    """Whether ``stream`` is an interactive terminal (False for None, files, pipes and test captures)."""
    return bool(stream is not None and getattr(stream, "isatty", lambda: False)())


class Progress:
    """Counted progress with an ETA on a text stream (stderr): updated in place on a terminal, else a line
    every ~5 %.

    Parameters
    ----------
    total : int
        Items to do (the reused ones included).
    reused : int
        Items already done before this run (a resumed study's points): they count as done but not in the ETA.
    stream : text stream, optional
        None for silence.
    label, unit : str
        What is counted: ``sweep: 12/40 points``.
    """

    def __init__(self, total: int, reused: int = 0, stream=None, label: str = "sweep", unit: str = "points"):
        self.total, self.reused, self.done, self.failed = total, reused, reused, 0
        self.stream, self.label, self.unit = stream, label, unit
        self.t0 = time.perf_counter()
        self.tty = is_terminal(stream)
        self.every = max(1, (total - reused) // 20)

    def line(self) -> str:
        computed = self.done - self.reused
        elapsed = time.perf_counter() - self.t0
        left = self.total - self.done
        eta = hms(elapsed / computed * left) if computed else "?"
        pct = 100.0 * self.done / self.total if self.total else 100.0
        extra = f" ({self.reused} reused{f', {self.failed} failed' if self.failed else ''})" \
            if self.reused or self.failed else ""
        return (f"{self.label}: {self.done}/{self.total} {self.unit}{extra} {pct:3.0f}%  elapsed {hms(elapsed)}  "
                f"ETA {eta}")

    def start(self) -> None:
        if self.stream is not None:
            self._emit()

    def update(self, record: dict | None = None) -> None:
        """One more item done (``record["status"]`` other than "ok" counts it as failed)."""
        self.done += 1
        self.failed += (record or {}).get("status", "ok") != "ok"
        if self.stream is not None and (self.tty or (self.done - self.reused) % self.every == 0
                                        or self.done == self.total):
            self._emit()

    def _emit(self) -> None:
        if self.tty:
            self.stream.write("\r" + self.line().ljust(79))
        else:
            self.stream.write(self.line() + "\n")
        self.stream.flush()

    def close(self) -> None:
        if self.stream is not None and self.tty:
            self.stream.write("\n")
            self.stream.flush()


class Stages:
    """The stages of a command, each on its own line with the time it took, on a terminal only.

    Call it with a stage's words to begin that stage (ending the one before), and again with the same words
    and the share of it done, ``stage(words, 0.4)``, where that is known (shown as ``40 %`` while it runs);
    :meth:`part` names the part of the stage under way (shown while it runs: ``writing the files:
    timeseries.csv``); :meth:`close` ends the last stage. While a stage runs, its line shows the seconds elapsed, refreshed every ``tick`` seconds by a
    background thread, so a long stage (a year with the reference solver) is seen to be alive; a finished
    stage keeps its line with the time it took::

        atticsim: simulating 2025-01-01 to 2025-12-31 with the fan ... 0.9 s

    Parameters
    ----------
    stream : text stream, optional
        stderr in the commands; nothing is written unless it is a terminal.
    prefix : str
        Put before each stage.
    tick : float
        Refresh interval of the running stage's line [s]; 0 for none.
    """

    def __init__(self, stream=None, prefix: str = "atticsim: ", tick: float = 0.5):
        self.stream = stream if is_terminal(stream) else None
        self.prefix, self.tick = prefix, tick
        self.text, self.detail, self.t_stage = None, "", 0.0
        self.t0 = time.perf_counter()
        self.times: list[tuple[str, float]] = []
        self._lock = threading.Lock()
        self._wake = threading.Event()
        self._thread = None

    @property
    def active(self) -> bool:
        """Whether anything is shown (the stream is a terminal)."""
        return self.stream is not None

    def __call__(self, text: str, fraction: float | None = None) -> None:
        now = time.perf_counter()
        with self._lock:
            if text != self.text:
                self._finish(now)
                self.text, self.detail, self.t_stage = text, "", now
            if fraction is not None:
                self.detail = f": {100.0 * min(max(fraction, 0.0), 1.0):.0f} %"
            self._show(now)
        if self.stream is not None and self.tick > 0 and self._thread is None:
            self._thread = threading.Thread(target=self._refresh, name="atticsim-stages", daemon=True)
            self._thread.start()

    def part(self, detail: str) -> None:
        """Name the part of the running stage under way (dropped from the line when the stage ends)."""
        with self._lock:
            self.detail = f": {detail}" if detail else ""
            self._show(time.perf_counter())

    def close(self) -> None:
        """End the running stage (its line gets its time) and stop refreshing."""
        with self._lock:
            self._finish(time.perf_counter())
            self.text = None
        self._wake.set()
        if self._thread is not None:
            self._thread.join()
            self._thread = None
        self._wake.clear()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False

    def _finish(self, now: float) -> None:
        if self.text is None:
            return
        self.times.append((self.text, now - self.t_stage))
        if self.stream is not None:
            self.stream.write(f"\r{self.prefix}{self.text} ... {_seconds(now - self.t_stage)}\033[K\n")
            self.stream.flush()

    def _show(self, now: float) -> None:
        if self.stream is not None and self.text is not None:
            self.stream.write(f"\r{self.prefix}{self.text}{self.detail} ... {_seconds(now - self.t_stage)}\033[K")
            self.stream.flush()

    def _refresh(self) -> None:
        while not self._wake.wait(self.tick):
            with self._lock:
                self._show(time.perf_counter())


def announced(writers: dict, stages) -> dict:
    """The writers (file name -> writer(path)) of :func:`atticsim.results.output.write_outputs`, the first
    beginning the stage "writing the files", each naming its file as the part under way."""
    if stages is None or not getattr(stages, "active", True):
        return writers
    first = next(iter(writers), None)

    def wrap(name, write):
        def announced_write(path):
            if name == first:
                stages(f"writing {len(writers)} files")
            stages.part(name)
            return write(path)

        return announced_write

    # (one drawn in a child process is not announced from there: the child keeps off the terminal)
    return {name: write if getattr(write, "apart", False) else wrap(name, write) for name, write in writers.items()}
