"""Work beside the caller's thread (atticsim.beside): what it returns or raises reaches the caller, items made
ahead come whole and in order, and a caller that stops stops the producer."""

import threading

import pytest

from atticsim.beside import Beside, ahead


def test_what_the_run_beside_raises_is_raised_to_the_caller():
    def fails(cancel):
        raise ZeroDivisionError("no-fan run")

    with pytest.raises(ZeroDivisionError, match="no-fan run"):
        Beside(fails).result()
    assert Beside(lambda cancel: 42).result() == 42


def test_work_beside_that_is_stopped_ends_at_its_next_step():
    steps = []

    def work(cancel):
        while not cancel.is_set():
            steps.append(1)
            cancel.wait(0.01)
        return "ended"

    job = Beside(work)
    threading.Event().wait(0.05)
    assert job.running
    job.stop()
    assert not job.running and steps


def test_batches_made_ahead_come_in_order_and_whole():
    assert list(ahead(iter(range(1000)), depth=2)) == list(range(1000))
    assert list(ahead(iter([]))) == []


def test_a_batch_that_fails_fails_the_writer_and_a_writer_that_stops_stops_the_batches():
    def failing():
        yield 1
        raise ValueError("column 7: cannot convert")

    got = []
    with pytest.raises(ValueError, match="column 7"):
        for item in ahead(failing()):
            got.append(item)
    assert got == [1]

    made = []

    def endless():
        i = 0
        while True:
            made.append(i)
            yield i
            i += 1

    it = ahead(endless(), depth=2)
    assert [next(it) for _ in range(3)] == [0, 1, 2]
    it.close()  # the writer failed (a full disk): the producer ends before close() returns
    assert not [t for t in threading.enumerate() if t.name == "atticsim-batches"]
    assert len(made) <= 3 + 2 + 1
