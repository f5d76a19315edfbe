"""Sensor physics: air properties, convection from small bodies, and the thermistor as a lumped body.

Pure functions and one frozen dataclass over SI floats or numpy arrays (temperatures in degC at the
interface). The thermal network calls these from its right-hand side, so they stay cheap on scalars.

- :mod:`atticsim.sensor.air`: dry-air conductivity, viscosity, Prandtl number.
- :mod:`atticsim.sensor.convection`: Nusselt correlations (sphere and cylinder; forced, free, mixed)
  and :func:`h_sensor`.
- :mod:`atticsim.sensor.body`: :class:`SensorBody` (conductance, time constant, dissipation constant,
  self-heating, response time) and named presets.
"""

from atticsim.sensor.body import PRESETS, SensorBody, preset
from atticsim.sensor.convection import (
    h_sensor, nusselt_cylinder_churchill_bernstein, nusselt_cylinder_natural_churchill_chu, nusselt_mixed,
    nusselt_sphere_natural_churchill, nusselt_sphere_ranz_marshall, nusselt_sphere_whitaker, rayleigh_number,
    reynolds_number)

__all__ = [
    "PRESETS", "SensorBody", "preset", "h_sensor", "nusselt_cylinder_churchill_bernstein",
    "nusselt_cylinder_natural_churchill_chu", "nusselt_mixed", "nusselt_sphere_natural_churchill",
    "nusselt_sphere_ranz_marshall", "nusselt_sphere_whitaker", "rayleigh_number", "reynolds_number",
]
