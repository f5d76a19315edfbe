"""Keep the solvers on one BLAS thread.

The solvers multiply and exponentiate matrices of at most a few dozen rows. A threaded BLAS gains
nothing there and loses much: on the 2-core development machine a 13-day run took 9.5 s wall and 19.5 s
of CPU with OpenBLAS's default threads against 6.4 s wall and 7.7 s of CPU with one thread (measured),
and parallel study workers oversubscribed the cores. Inside a solver call the BLAS pool is held to one
thread; the caller's setting is restored afterwards.

That limit is the process's, not a thread's, so calls that set it are taken one at a time
(:data:`ONE_AT_A_TIME`): a second simulation in a thread of its own (:func:`atticsim.pipeline.run_raw` runs
the no-fan one beside the fan's) waits for the first instead of restoring the pool under it.
"""

from __future__ import annotations

import functools
import threading

from threadpoolctl import threadpool_limits


#: Held while a call runs with the pool limited (reentrant: a limited call may make another).
ONE_AT_A_TIME = threading.RLock()


def one_blas_thread(func):
    """Decorator: run ``func`` with the BLAS thread pools limited to one thread (about 0.4 ms a call), one
    such call at a time in the process."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with ONE_AT_A_TIME, threadpool_limits(limits=1, user_api="blas"):
            return func(*args, **kwargs)

    return wrapper
