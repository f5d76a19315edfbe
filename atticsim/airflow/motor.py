"""The fan motor's speed between switchings: a first-order spin-up when switched on, a first-order coast-down
when switched off.

    s(t) = s_target + (s_0 - s_target) exp(-(t - t_0) / tau)

with s the blades' speed as a fraction of full speed, s_target 1 and tau = ``fan.spin_up`` after a switch-on,
s_target 0 and tau = ``fan.coast_down`` after a switch-off, s_0 the speed at the switch (a motor switched on
while it still coasts starts from there). A first-order lag is the simplest motor-and-load model (the
torque to spare falls as the speed nears its running value; common practice, no source); the fan laws make
the flow proportional to the speed at a fixed system curve (AMCA 201).

The hybrid loop holds the air flows over stretches; during a transition it re-solves them at the instants
``t_0 + tau * STRETCHES`` and holds, over each stretch, the flows of the stretch's mean speed, so that the
air the fan moves over each stretch is the first-order solution's. The last stretch also carries the rest
of the transition (its tail beyond ``t_0 + tau * STRETCHES[-1]``, 2 % of the change), so the whole
transition moves the first-order solution's volume; from there on the speed is the target.
"""

from __future__ import annotations

import math

#: Ends of the stretches of a transition, in time constants after the switch (a numerical choice of ours:
#: four flow levels per transition, the last one 2 % from the target).
STRETCHES = (0.5, 1.0, 2.0, 4.0)


class Motor:
    """The blades' speed over a run (see the module docstring).

    Parameters
    ----------
    spin_up, coast_down : float
        Time constants [s] (0: the speed follows the switch at once).
    start_energy : float
        Energy each start costs beyond the running power [J] (booked at the switch-on).
    """

    def __init__(self, spin_up: float = 0.0, coast_down: float = 0.0, start_energy: float = 0.0):
        for name, value in (("spin_up", spin_up), ("coast_down", coast_down), ("start_energy", start_energy)):
            if not 0.0 <= value < math.inf:
                raise ValueError(f"motor {name} must be finite and >= 0 (got {value!r})")
        self.spin_up, self.coast_down, self.start_energy = float(spin_up), float(coast_down), float(start_energy)
        self.start(0.0, False)

    @property
    def instant(self) -> bool:
        """The speed follows every switch at once (no transition to hold flows over)."""
        return self.spin_up == 0.0 and self.coast_down == 0.0

    def start(self, t: float, on: bool) -> None:
        """Begin at t switched ``on`` or off, at the speed that holds (no transition under way)."""
        self.on, self.t0 = bool(on), t
        self.s0 = self.target
        self.tau = 0.0

    @property
    def target(self) -> float:
        return 1.0 if self.on else 0.0

    def switch(self, t: float, on: bool) -> None:
        """The motor is switched on or off at t: a transition starts from the present speed."""
        s = self.speed(t)
        self.on, self.t0, self.s0 = bool(on), t, s
        self.tau = self.spin_up if self.on else self.coast_down

    def _settles(self) -> float:
        """The instant from which the speed is taken as the target [s]."""
        return self.t0 + self.tau * STRETCHES[-1] if self.tau > 0.0 and self.s0 != self.target else -math.inf

    def speed(self, t: float) -> float:
        """The first-order speed at t [-] (the target once the transition has settled)."""
        if t >= self._settles():
            return self.target
        return self.target + (self.s0 - self.target) * math.exp(-(t - self.t0) / self.tau)

    def next_change(self, t: float) -> float:
        """The next instant after t at which the held flows must change with the speed [s] (inf: none)."""
        if t >= self._settles() - 1e-9:
            return math.inf
        for x in STRETCHES:
            end = self.t0 + self.tau * x
            if end > t + 1e-9:
                return end
        return math.inf

    def mean_speed(self, a: float, b: float) -> float:
        """The speed to hold over [a, b]: the first-order speed's mean there [-]; over the last stretch of a
        transition the mean includes the transition's tail (see the module docstring)."""
        settles = self._settles()
        if a >= settles - 1e-9:
            return self.target
        if b <= a:
            return self.speed(a)
        x0, x1 = (a - self.t0) / self.tau, (b - self.t0) / self.tau
        tail = math.exp(-x1) if b < settles - 1e-9 else 0.0  # the last stretch carries the rest
        return self.target + (self.s0 - self.target) * (math.exp(-x0) - tail) * self.tau / (b - a)
