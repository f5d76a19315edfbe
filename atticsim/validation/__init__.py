"""How atticsim compares with the outside world: validation cases, their runner and the page they make.

Each case (a small function registered with :func:`case`) computes one figure with atticsim beside a
reference figure: a published test case, a handbook formula worked by hand, a reference tool (ngspice, the
LSODA reference solver) or a field study's range. ``atticsim validate`` runs them all and writes
``validation.md`` and ``validation.json``; ``tests/validation/test_validation.py`` runs the same registry under pytest.
"""

from atticsim.validation.registry import (  # noqa: F401
    ERROR, GROUPS, NOT_RUN, OUTSIDE, WITHIN, Case, CaseResult, Comparison, NotRun, all_cases, case, run_case,
    run_cases)
