"""How large a run may be: checked before it starts, so that a mistyped step is refused in one line instead of
exhausting the machine's memory an hour later.

A run holds every output instant of every node and book in memory (twice: with and without the fan), and
writes them to ``timeseries.csv``. A year at the default 1-minute step is 525,601 rows (some 84 MB of arrays
and a 137 MB file); :data:`MAX_OUTPUT_ROWS` allows twice that.
"""

from __future__ import annotations

from atticsim.scenario.load import ScenarioError

#: Most output instants one run may produce: a year at 30 s (twice a year at the default minute).
MAX_OUTPUT_ROWS = 1_100_000


def check_output_rows(scenario, seconds: float, source: str) -> int:
    """The number of output rows of a run ``seconds`` long; ScenarioError when more than MAX_OUTPUT_ROWS.

    Parameters
    ----------
    scenario : Scenario
        Its ``simulation.output_step`` [s] sets the rows.
    seconds : float
        Length of the simulated period [s].
    source : str
        Where the scenario came from (the file, for the message).
    """
    step = scenario.simulation.output_step
    rows = int(seconds // step) + 1
    if rows > MAX_OUTPUT_ROWS:
        days = seconds / 86400.0
        raise ScenarioError(source, "simulation.output_step",
                            f"{step:g} s over {days:.4g} days makes {rows:,} output rows, more than the "
                            f"{MAX_OUTPUT_ROWS:,} a run may hold (a year at {365 * 86400 // MAX_OUTPUT_ROWS + 1:.0f} s);"
                            f" use a longer step or a shorter period")
    return rows
