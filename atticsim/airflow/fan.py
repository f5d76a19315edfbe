"""Fan curve: delivered flow against static pressure, affinity laws and electric power.

A curve is given by points as makers publish them (free-air flow and the flows at one or two static
pressures, e.g. 0.1 and 0.2 in. w.c. = 24.9 and 49.8 Pa), in SI: static pressure rise [Pa], volume flow
[m^3/s], electric power [W] (one figure, or one per point).

Interpolation (pressure -> flow) is monotone piecewise-cubic Hermite (PCHIP, Fritsch & Carlson 1980,
SIAM J. Numer. Anal. 17(2)): it never overshoots between published points and passes straight lines
exactly. Outside the published range the curve continues on the straight line through its two end
points on that side: below the first pressure (the fan helped along by a pressure drop) the flow rises
above free air, above the last one it falls to zero at the extended shut-off pressure and then turns
negative (air forced back through the fan). That keeps flow strictly decreasing in pressure, so the
attic balance has a single root; an operating point off the published points is flagged by the
balance. Electric power per point is interpolated linearly in pressure and held at the end values
outside the range (common practice, no source).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from atticsim.airflow.openings import require_non_negative, require_positive

#: Standard air density for fan ratings [kg/m^3] (AMCA 210 / ASHRAE 51 standard air, 1.2 kg/m^3).
STANDARD_AIR_DENSITY = 1.2


@dataclass(frozen=True)
class FanCurve:
    """A fan's published performance at one speed.

    Parameters
    ----------
    pressure : sequence of float
        Static pressure rise across the fan [Pa], strictly increasing, at least two points, >= 0.
    flow : sequence of float
        Volume flow at each pressure [m^3/s], strictly decreasing, >= 0.
    power : float or sequence of float
        Electric power [W]: one figure for the whole curve, or one per point.
    rating_density : float, default 1.2
        Air density at which the curve was measured [kg/m^3].
    """

    pressure: tuple
    flow: tuple
    power: tuple | float
    rating_density: float = STANDARD_AIR_DENSITY

    def __post_init__(self):
        p = np.atleast_1d(np.asarray(self.pressure, dtype=float))
        q = np.atleast_1d(np.asarray(self.flow, dtype=float))
        if p.ndim != 1 or q.shape != p.shape or p.size < 2:
            raise ValueError("fan curve needs at least two (pressure, flow) points of equal count, "
                             f"got {p.size} pressures and {q.size} flows")
        require_non_negative("fan curve pressure", p, "[Pa]")
        require_non_negative("fan curve flow", q, "[m^3/s]")
        if np.any(np.diff(p) <= 0.0):
            raise ValueError(f"fan curve pressures must be strictly increasing [Pa], got {p.tolist()}")
        if np.any(np.diff(q) >= 0.0):
            raise ValueError(f"fan curve flows must fall strictly as pressure rises [m^3/s], got {q.tolist()}")
        w = np.asarray(self.power, dtype=float)
        if w.ndim == 0:
            w = np.full(p.shape, float(w))
        if w.shape != p.shape:
            raise ValueError(f"fan power must be one figure or one per curve point ({p.size}), got {w.size}")
        require_non_negative("fan electric power", w, "[W]")
        require_positive("fan rating density", self.rating_density, "[kg/m^3]")
        object.__setattr__(self, "pressure", tuple(p.tolist()))
        object.__setattr__(self, "flow", tuple(q.tolist()))
        object.__setattr__(self, "power", tuple(w.tolist()))

    @cached_property
    def _pchip(self):
        from scipy.interpolate import PchipInterpolator

        return PchipInterpolator(np.array(self.pressure), np.array(self.flow), extrapolate=False)

    @cached_property
    def _segments(self):
        """Per-segment cubic coefficients of the PCHIP interpolant, as plain floats (for the compiled
        pressure balance, atticsim.airflow.balance_kernel.curve_flow)."""
        c = self._pchip.c
        return tuple(tuple(float(v) for v in c[:, i]) for i in range(c.shape[1]))

    @property
    def free_air_flow(self):
        """Flow at zero static pressure [m^3/s] (extrapolated if the first point is above 0 Pa)."""
        return float(self.base_flow(0.0))

    @property
    def shutoff_pressure(self):
        """Static pressure at which the (extended) curve delivers no flow [Pa]."""
        p, q = self.pressure, self.flow
        if q[-1] == 0.0:
            return p[-1]
        # Straight line through the last two points, extended to zero flow.
        return p[-1] + q[-1] * (p[-1] - p[-2]) / (q[-2] - q[-1])

    def base_flow(self, x):
        """Flow of the curve as published (its speed and rating density) at a static pressure.

        Parameters
        ----------
        x : float or numpy.ndarray
            Static pressure rise [Pa].

        Returns
        -------
        float or numpy.ndarray
            Volume flow [m^3/s].
        """
        p, q = self.pressure, self.flow
        x = np.asarray(x, dtype=float)
        inside = self._pchip(np.clip(x, p[0], p[-1]))
        # Straight-line continuation through the end points (see module docstring).
        low = q[0] + (q[1] - q[0]) / (p[1] - p[0]) * (x - p[0])
        high = q[-1] + (q[-1] - q[-2]) / (p[-1] - p[-2]) * (x - p[-1])
        out = np.where(x < p[0], low, np.where(x > p[-1], high, inside))
        return float(out) if out.ndim == 0 else out

    def pressure_factor(self, speed_ratio=1.0, density=None):
        """Factor that maps an operating pressure onto the published curve, (rho_rating / rho) / N^2.

        Fan laws: at corresponding points dp ~ rho N^2 and Q ~ N (AMCA 201; ASHRAE Handbook HVAC
        Systems and Equipment, fans chapter).

        Parameters
        ----------
        speed_ratio : float, default 1.0
            Fan speed relative to the curve's speed [-].
        density : float, optional
            Density of the air moved [kg/m^3]; default the rating density.

        Returns
        -------
        float
            Factor [-].
        """
        require_positive("fan speed ratio", speed_ratio, "[-]")
        rho = self.rating_density if density is None else density
        require_positive("air density", rho, "[kg/m^3]")
        return (self.rating_density / rho) / speed_ratio**2

    def flow_at(self, pressure_rise, speed_ratio=1.0, density=None):
        """Volume flow delivered against a static pressure rise.

        Parameters
        ----------
        pressure_rise : float or array_like
            Static pressure rise across the fan, discharge minus suction [Pa].
        speed_ratio : float, default 1.0
            Fan speed relative to the curve's speed [-].
        density : float, optional
            Density of the air moved [kg/m^3]; default the rating density.

        Returns
        -------
        float or numpy.ndarray
            Volume flow [m^3/s] (negative beyond the extended shut-off pressure).

        References
        ----------
        Fan laws Q ~ N, dp ~ rho N^2 (AMCA 201; ASHRAE Handbook HVAC Systems and Equipment, fans chapter).
        """
        factor = self.pressure_factor(speed_ratio, density)
        if np.ndim(pressure_rise) == 0:
            return speed_ratio * self.base_flow(float(pressure_rise) * factor)  # Q ~ N (fan law)
        return speed_ratio * self.base_flow(np.asarray(pressure_rise, dtype=float) * factor)

    def power_at(self, pressure_rise, speed_ratio=1.0, density=None):
        """Electric power drawn at a static pressure rise [W] (same parameters as :meth:`flow_at`).

        Fan law P ~ rho N^3 (AMCA 201; ASHRAE Handbook HVAC Systems and Equipment, fans chapter),
        applied to the electric power as if motor efficiency were constant (common practice).
        """
        factor = self.pressure_factor(speed_ratio, density)
        rho = self.rating_density if density is None else density
        x = np.asarray(pressure_rise, dtype=float) * factor
        w = np.interp(x, self.pressure, self.power) * speed_ratio**3 * rho / self.rating_density
        return float(w) if np.ndim(w) == 0 else w

    def scaled(self, speed_ratio):
        """The curve at another speed by the affinity laws: Q x N, dp x N^2, P x N^3.

        Parameters
        ----------
        speed_ratio : float
            New speed over the curve's speed [-].

        Returns
        -------
        FanCurve
        """
        require_positive("fan speed ratio", speed_ratio, "[-]")
        s = float(speed_ratio)
        # Affinity laws (AMCA 201; ASHRAE Handbook HVAC Systems and Equipment, fans chapter).
        return FanCurve(pressure=[p * s * s for p in self.pressure], flow=[q * s for q in self.flow],
                        power=[w * s**3 for w in self.power], rating_density=self.rating_density)
