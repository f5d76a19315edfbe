"""The thermostat as a block with a discrete state that changes only at events: a level crossing of the sensor,
or the instant a time rule expires.

Two parts, as in the hardware:

- the **switch** (the comparator with hysteresis): it *calls* for the fan when the sensor crosses ``on`` and
  releases when it crosses ``off`` (a switch that closes on rise calls when the sensor rises to ``on``, off
  below it; one that closes on fall calls when it falls to ``on``, off above it);
- the **time rules** (a timer stage, or a controller's settings): ``start_delay`` (the call must last this long
  before the fan starts), ``run_on`` (the fan runs on this long after the call ends), ``min_run`` (once started
  it runs at least this long), ``min_rest`` (once stopped it rests at least this long). With no rule the fan
  follows the call at once.

The hybrid driver asks :meth:`Controller.watch` for the crossing that changes the call and
:meth:`Controller.deadline` for the instant a rule lets the fan change, advances the network to the earlier of
the two, and reports which happened (:meth:`Controller.crossed`, :meth:`Controller.expired`); both return the
cause of a fan switch at that instant (``"threshold"`` or the rule that held the fan until then), or None.
"""

from __future__ import annotations

import math

#: The switch's actions (the trade's words).
ACTIONS = ("close-on-rise", "close-on-fall")
#: The hysteresis a switch without any is given [K] (a numerical choice: it moves a crossing by under a
#: millisecond at any rate of change the attic sees).
ZERO_BAND = 1e-6
#: The time rules, in the order of their records.
RULES = ("start_delay", "run_on", "min_run", "min_rest")
#: Causes of a fan switch, for the event records: the switch's level, or the rule that held the fan.
CAUSES = ("threshold",) + RULES + ("log",)


def _rule_values(rules):
    """(start_delay, run_on, min_run, min_rest) [s] of a time-rules record (``atticsim.scenario.thermostat.
    TimeRules`` or any object with those attributes; None: no rules), checked."""
    if rules is None:
        return 0.0, 0.0, 0.0, 0.0
    values = tuple(float(getattr(rules, name)) for name in RULES)
    for name, value in zip(RULES, values):
        if not 0.0 <= value < math.inf:
            raise ValueError(f"time rule {name} must be a finite duration of 0 s or more (got {value!r})")
    return values


class Controller:
    """A thermostat: its switch and its time rules, with their state (see the module docstring).

    Parameters
    ----------
    action : {"close-on-rise", "close-on-fall"}
    on, off : float
        Sensor temperatures at which the switch calls for the fan and releases it [degC]; a switch that
        closes on rise needs off <= on (off == on only with a time rule, which then stops the chatter).
    rules : TimeRules, optional
        The time rules (``atticsim.scenario.thermostat.TimeRules``: start_delay, run_on, min_run, min_rest [s]).
    """

    def __init__(self, action: str, on: float, off: float, rules=None):
        if action not in ACTIONS:
            raise ValueError(f"action must be 'close-on-rise' or 'close-on-fall', got {action!r}")
        rises = action == "close-on-rise"
        if (off > on) if rises else (off < on):
            raise ValueError(f"a switch that closes on {'rise' if rises else 'fall'} needs off "
                             f"{'<' if rises else '>'} on")
        self.start_delay, self.run_on, self.min_run, self.min_rest = _rule_values(rules)
        if off == on and not (self.start_delay or self.min_run or self.min_rest):
            raise ValueError("a switch without hysteresis (off = on) needs a start delay, minimum run or rest")
        if off == on:
            # a switch without hysteresis, taken with 1 uK of it, so that each crossing is found on its own side
            off = on - ZERO_BAND if rises else on + ZERO_BAND
        self.action, self.on, self.off = action, float(on), float(off)
        self.rises = rises
        self.start(0.0, off if rises else on)

    def start(self, t: float, sensor_temp: float) -> bool:
        """Begin at t with the sensor at ``sensor_temp`` [degC]: the switch calls when the sensor is already
        beyond ``on``; the fan follows the call, no rule pending. Returns the fan state."""
        self.calling = sensor_temp >= self.on if self.rises else sensor_temp <= self.on
        self.fan = self.calling
        self.call_changed = -math.inf   # when the call last changed
        self.fan_changed = -math.inf    # when the fan last switched
        return self.fan

    def watch(self) -> tuple[float, int]:
        """(sensor level [degC], direction: +1 rising, -1 falling) of the crossing that changes the call."""
        sign = 1 if self.rises else -1
        return (self.off, -sign) if self.calling else (self.on, sign)

    def _pending(self) -> tuple[float, str]:
        """(instant, cause) at which the fan will follow the call, or (inf, "") when it already does."""
        if self.calling == self.fan:
            return math.inf, ""
        if self.calling:  # off, called on: the start delay and the rest period
            waits = (("start_delay", self.call_changed + self.start_delay), ("min_rest", self.fan_changed + self.min_rest))
        else:             # on, released: the run-on and the minimum run
            waits = (("run_on", self.call_changed + self.run_on), ("min_run", self.fan_changed + self.min_run))
        cause, when = max(waits, key=lambda w: (w[1], w[0] == waits[0][0]))
        return when, cause

    def deadline(self) -> float:
        """The instant a time rule lets the fan follow the call [s] (inf when nothing is pending)."""
        return self._pending()[0]

    def crossed(self, t: float) -> str | None:
        """The sensor crossed :meth:`watch`'s level at t: the call changes; returns "threshold" when the fan
        switches at once, else None (a rule holds it until :meth:`deadline`)."""
        self.calling = not self.calling
        self.call_changed = t
        when, _ = self._pending()
        if when <= t:
            return self._switch(t, "threshold")
        return None

    def expired(self, t: float) -> str | None:
        """The deadline has come at t: the fan follows the call; returns the rule that held it."""
        when, cause = self._pending()
        if when <= t + 1e-9:
            return self._switch(t, cause)
        return None

    def _switch(self, t: float, cause: str) -> str:
        self.fan = not self.fan
        self.fan_changed = t
        return cause


class HeldFan:
    """A controller that never switches: the fan held on or off for the whole run (the no-fan run, tests)."""

    def __init__(self, fan_on: bool = False):
        self.fan = bool(fan_on)

    def start(self, t, sensor_temp) -> bool:
        return self.fan

    def watch(self):
        return 0.0, 0

    def deadline(self) -> float:
        return math.inf

    def crossed(self, t):  # never asked: it watches no crossing
        return None

    def expired(self, t):
        return None


class LoggedFan:
    """A controller that follows a logged fan state: the fan switches exactly at the instants the log changes
    (a calibration against measured data drives the fan this way, so that the thermostat's own errors are
    kept apart). Events have the cause "log".

    Parameters
    ----------
    times : sequence of float
        Increasing instants [s on the forcing's clock] at which the log's state takes effect (or tz-aware
        timestamps, with :meth:`clocked` giving the controller on a forcing's clock).
    states : sequence of bool
        The fan state from each instant on (before the first: the first state).
    """

    @classmethod
    def at_instants(cls, instants, states):
        """A log given by tz-aware instants (pandas timestamps), to be put on a forcing's clock by
        :meth:`clocked` (``run_raw`` does so)."""
        log = cls.__new__(cls)
        log.instants, log.log_states = list(instants), [bool(s) for s in states]
        return log

    def clocked(self, origin):
        """This log on the clock of a forcing that starts at ``origin`` (a tz-aware timestamp)."""
        if not hasattr(self, "instants"):
            return self
        return LoggedFan([(i - origin).total_seconds() for i in self.instants], self.log_states)

    def __init__(self, times, states):
        self.times = [float(t) for t in times]
        self.states = [bool(s) for s in states]
        if len(self.times) != len(self.states) or not self.times:
            raise ValueError("a fan log needs one state per instant, and at least one")
        if any(b <= a for a, b in zip(self.times, self.times[1:])):
            raise ValueError("a fan log's instants must increase")
        self.fan, self._next = self.states[0], 0

    def start(self, t, sensor_temp) -> bool:
        i = sum(1 for ti in self.times if ti <= t + 1e-9)
        self.fan = self.states[max(i - 1, 0)]
        self._next = i
        self._skip_same()
        return self.fan

    def _skip_same(self):
        while self._next < len(self.times) and self.states[self._next] == self.fan:
            self._next += 1

    def watch(self):
        return 0.0, 0

    def deadline(self) -> float:
        return self.times[self._next] if self._next < len(self.times) else math.inf

    def crossed(self, t):
        return None

    def expired(self, t):
        if self._next < len(self.times) and self.times[self._next] <= t + 1e-9:
            self.fan = self.states[self._next]
            self._next += 1
            self._skip_same()
            return "log"
        return None
