"""The sensor as a small lumped body: heat capacity, coupling to air and surroundings, self-heating.

A :class:`SensorBody` is a bead, disc or probe with a surface area, a heat capacity and an emittance.
Its conductance to the air comes from the correlations of :mod:`atticsim.sensor.convection` at the
local air speed and temperature, so the time constant and the dissipation constant follow the
placement instead of being fixed numbers. Temperatures are in degC at the interface.

Model
-----
- One lumped node: the body is small and conducts well compared with its air film (Biot number
  h (V/A) / k_body = 30 W/m^2K x 0.4 mm / 0.6 W/mK = 0.02 for a 2.4 mm filled-epoxy bead, below the
  0.1 of the lumped-capacitance criterion; k of filled epoxy from memory), so
  C dT_s/dt = P - G_c (T_s - T_air) - G_r (T_s - T_rad) (lumped capacitance, Incropera & DeWitt
  section 5.1).
- Convection G_c = h A, h from :func:`atticsim.sensor.convection.h_sensor`. Beads are spheres; a disc
  is taken as the sphere of equal surface area, D_eq = sqrt(A / pi) (our approximation: for a thin
  disc of radius R it overstates the still-air conduction limit by 11 %, 4 pi R / sqrt(2) against
  the disc's conduction shape factor 8 R, the analogue of a disc's electrostatic capacitance 8 eps0 R);
  a probe is a horizontal cylinder across the flow (its tip counted in the area).
- Radiation G_r = eps sigma A (T_s^2 + T_r^2)(T_s + T_r), the exact secant form of
  q = eps sigma A (T_s^4 - T_r^4) for a small body in large surroundings (Incropera & DeWitt
  section 1.2.3, eq. 1.9, from memory; it equals 4 eps sigma T^3 A when T_s = T_r). In :meth:`SensorBody.conductance`
  the surroundings are taken at the air temperature when ``radiation=True``: that is how makers
  measure in still air, and a network that computes long-wave exchange with the actual surfaces should
  ask for ``radiation=False`` and use :meth:`SensorBody.radiative_conductance` itself.
- Conduction along the leads or the cable is not modelled. Give ``datasheet_dissipation_constant``
  to calibrate: the convective part is scaled so that the body reproduces it under the makers' test
  condition (leads assumed to scale with air speed like the body; our assumption).

Makers' test conditions used here (thermistor makers' catalogue notes; IEC 60539-1 defines the
quantities): the dissipation constant is the power that self-heats the part by 1 K in still air at
25 degC; the thermal time constant is the time to cover 63.2 % of a step, one maker's stated condition
being from 50 degC into still air at 25 degC (until 34.2 degC).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from atticsim.constants import KELVIN, P_STANDARD, SIGMA
from atticsim.sensor import air
from atticsim.sensor.convection import _h, _require

#: Shapes of sensor body and the convection geometry each uses.
BODY_SHAPES = {"bead": "sphere", "disc": "sphere", "probe": "cylinder"}
#: Still-air temperature of the makers' dissipation-constant and time-constant tests [degC].
DATASHEET_AIR_TEMP = 25.0
#: Self-heating at which the makers' dissipation constant is stated [K].
DATASHEET_SELF_HEATING = 1.0
#: Start temperature of the makers' time-constant step into still air at 25 degC [degC].
DATASHEET_STEP_FROM = 50.0

# Gauss-Legendre nodes for the response-time quadrature (20 points; numerical choice, ours).
_GL_X, _GL_W = np.polynomial.legendre.leggauss(20)


def _temp(name, value):
    """Check an air or surface temperature against the property fits and return it in K."""
    return air._kelvin(value, name)


@dataclass(frozen=True)
class SensorBody:
    """A thermistor body: geometry, heat capacity (or a known time constant) and emittance.

    Parameters
    ----------
    shape : {"bead", "disc", "probe"}
        Bead: a sphere. Disc: a flat cylinder of ``diameter`` and thickness ``length``. Probe: a sheath
        of ``diameter`` and exposed length ``length``, lying across the flow.
    diameter : float
        Bead, disc or sheath diameter [m].
    length : float
        Disc thickness or probe exposed length [m]; 0 for a bead.
    mass : float, optional
        Mass of the body [kg]; with ``specific_heat``.
    specific_heat : float, optional
        Mean specific heat of the body [J/(kg K)]; with ``mass``.
    datasheet_time_constant : float, optional
        Instead of mass and specific heat: the thermal time constant [s] measured the makers' way
        (63.2 % of a step from 50 degC into air at 25 degC) at ``datasheet_air_speed``.
    datasheet_air_speed : float
        Air speed of that measurement [m/s]; 0 (still air) by default.
    emittance : float
        Long-wave emittance of the surface [-], 0 to 1.
    datasheet_dissipation_constant : float, optional
        Dissipation constant in still air at 25 degC [W/K] (power per kelvin of self-heating); when
        given, the convective part is scaled to reproduce it (leads and mounting included that way).
    name : str
        A label for reports.
    """

    shape: str
    diameter: float
    length: float = 0.0
    mass: float | None = None
    specific_heat: float | None = None
    datasheet_time_constant: float | None = None
    datasheet_air_speed: float = 0.0
    emittance: float = 0.9
    datasheet_dissipation_constant: float | None = None
    name: str = ""
    _scale: float = field(init=False, repr=False, compare=False, default=1.0)
    _capacity: float = field(init=False, repr=False, compare=False, default=0.0)

    def __post_init__(self):
        if self.shape not in BODY_SHAPES:
            raise ValueError(f"sensor shape must be one of {', '.join(BODY_SHAPES)}, got {self.shape!r}")
        _scalar_positive("sensor diameter", self.diameter, "m")
        if self.shape == "bead":
            if self.length != 0.0:
                raise ValueError(f"sensor length must be 0 for a bead (it is a sphere), got {self.length!r}")
        else:
            what = "disc thickness" if self.shape == "disc" else "probe length"
            _scalar_positive(f"sensor {what} (length)", self.length, "m")
        if not (isinstance(self.emittance, (float, int)) and 0.0 <= self.emittance <= 1.0):
            raise ValueError(f"sensor emittance must lie between 0 and 1, got {self.emittance!r}")
        has_mass = self.mass is not None or self.specific_heat is not None
        if has_mass == (self.datasheet_time_constant is not None):
            raise ValueError("sensor heat capacity: give either mass and specific_heat or "
                             "datasheet_time_constant, not both and not neither")
        if self.datasheet_dissipation_constant is not None:
            _scalar_positive("datasheet dissipation constant", self.datasheet_dissipation_constant, "W/K")
            t_a = DATASHEET_AIR_TEMP + KELVIN
            t_s = t_a + DATASHEET_SELF_HEATING
            g_rad = self._g_rad(t_a, t_s)
            scale = (self.datasheet_dissipation_constant - g_rad) / self._g_conv(0.0, t_a, t_s, P_STANDARD)
            if scale <= 0.0:
                raise ValueError(f"datasheet dissipation constant {self.datasheet_dissipation_constant!r} W/K "
                                 f"is below this body's radiative loss alone ({g_rad:.3g} W/K)")
            object.__setattr__(self, "_scale", scale)
        if has_mass:
            _scalar_positive("sensor mass", self.mass, "kg")
            _scalar_positive("sensor specific heat", self.specific_heat, "J/(kg K)")
            capacity = self.mass * self.specific_heat
        else:
            _scalar_positive("datasheet time constant", self.datasheet_time_constant, "s")
            if not (isinstance(self.datasheet_air_speed, (float, int)) and 0.0 <= self.datasheet_air_speed
                    < float("inf")):
                raise ValueError(f"datasheet air speed must be finite and >= 0 m/s, "
                                 f"got {self.datasheet_air_speed!r}")
            t_end = DATASHEET_AIR_TEMP + (DATASHEET_STEP_FROM - DATASHEET_AIR_TEMP) * math.exp(-1.0)
            per_capacity = self._time_per_capacity(DATASHEET_STEP_FROM, t_end, self.datasheet_air_speed,
                                                   DATASHEET_AIR_TEMP, 0.0, True, P_STANDARD)
            capacity = self.datasheet_time_constant / per_capacity
        object.__setattr__(self, "_capacity", capacity)

    # --- geometry ----------------------------------------------------------------------------------

    @property
    def area(self):
        """Surface area exchanging heat [m^2] (sphere; both faces and rim of a disc; sheath and tip)."""
        d = self.diameter
        if self.shape == "bead":
            return math.pi * d * d
        if self.shape == "disc":
            return 0.5 * math.pi * d * d + math.pi * d * self.length
        return math.pi * d * self.length + 0.25 * math.pi * d * d

    @property
    def convection_diameter(self):
        """Diameter used in the convection correlation [m] (disc: sphere of equal area)."""
        if self.shape == "disc":
            return math.sqrt(self.area / math.pi)
        return self.diameter

    @property
    def heat_capacity(self):
        """Heat capacity of the body [J/K]."""
        return self._capacity

    # --- conductances --------------------------------------------------------------------------------

    def _g_conv(self, v, t_air_k, t_s_k, pressure):
        return self._scale * self.area * _h(BODY_SHAPES[self.shape], self.convection_diameter, v,
                                            t_air_k, t_s_k, pressure)

    def _g_rad(self, t_r_k, t_s_k):
        # small body in large surroundings, Incropera & DeWitt eq. 1.9 (secant form of eps sigma dT^4)
        return self.emittance * SIGMA * self.area * (t_s_k * t_s_k + t_r_k * t_r_k) * (t_s_k + t_r_k)

    def _g(self, v, t_air_k, t_s_k, radiation, pressure):
        g = self._g_conv(v, t_air_k, t_s_k, pressure)
        return g + self._g_rad(t_air_k, t_s_k) if radiation else g

    def _checked(self, air_speed, temp_air, temp_surface, pressure):
        _require("air speed", air_speed, " m/s", 0.0)
        t_air_k = _temp("air temperature", temp_air)
        t_s_k = t_air_k if temp_surface is None else _temp("sensor temperature", temp_surface)
        air._check_pressure(pressure)
        return t_air_k, t_s_k

    def convective_conductance(self, air_speed, temp_air, temp_surface=None, pressure=P_STANDARD):
        """Convective conductance to the air, G_c = h A (times the datasheet calibration) [W/K].

        Parameters
        ----------
        air_speed : float or array_like
            Local air speed [m/s], >= 0.
        temp_air : float or array_like
            Local air temperature [degC].
        temp_surface : float or array_like, optional
            Sensor temperature [degC]; None takes the air temperature (the small-signal limit, where
            free convection vanishes and a bead in still air is at its conduction limit).
        pressure : float or array_like
            Air pressure [Pa].

        Returns
        -------
        float or numpy.ndarray
            Conductance [W/K]; heat flow to the air is G_c (T_s - T_air).
        """
        t_air_k, t_s_k = self._checked(air_speed, temp_air, temp_surface, pressure)
        return self._g_conv(air_speed, t_air_k, t_s_k, pressure)

    def radiative_conductance(self, temp_surroundings, temp_surface):
        """Long-wave conductance to large surroundings, eps sigma A (T_s^2 + T_r^2)(T_s + T_r) [W/K].

        Exact for a small gray body in large surroundings (Incropera & DeWitt eq. 1.9): the heat flow
        is this times (T_s - T_r).

        Parameters
        ----------
        temp_surroundings : float or array_like
            Mean radiant temperature of what the sensor faces [degC].
        temp_surface : float or array_like
            Sensor temperature [degC].

        Returns
        -------
        float or numpy.ndarray
            Conductance [W/K].
        """
        t_r = _temp("surroundings temperature", temp_surroundings)
        t_s = _temp("sensor temperature", temp_surface)
        return self._g_rad(t_r, t_s)

    def conductance(self, air_speed, temp_air, temp_surface=None, radiation=True, pressure=P_STANDARD):
        """Total conductance to the air, G = G_c + G_r with the surroundings at the air temperature [W/K].

        Parameters
        ----------
        air_speed : float or array_like
            Local air speed [m/s], >= 0.
        temp_air : float or array_like
            Local air temperature [degC].
        temp_surface : float or array_like, optional
            Sensor temperature [degC]; None takes the air temperature (small-signal limit).
        radiation : bool
            Add the radiative conductance to surroundings at the air temperature (True, as in the
            makers' still-air tests) or give convection only (False, for a network that computes
            long-wave exchange with the surfaces itself).
        pressure : float or array_like
            Air pressure [Pa].

        Returns
        -------
        float or numpy.ndarray
            Conductance [W/K].
        """
        t_air_k, t_s_k = self._checked(air_speed, temp_air, temp_surface, pressure)
        return self._g(air_speed, t_air_k, t_s_k, radiation, pressure)

    def dissipation_constant(self, air_speed, temp_air, temp_surface=None, radiation=True,
                             pressure=P_STANDARD):
        """Dissipation constant: power per kelvin of self-heating, the same as :meth:`conductance` [W/K].

        The makers' figure corresponds to ``air_speed=0, temp_air=25, temp_surface=26``.
        """
        return self.conductance(air_speed, temp_air, temp_surface, radiation, pressure)

    def time_constant(self, air_speed, temp_air, temp_surface=None, radiation=True, pressure=P_STANDARD):
        """Thermal time constant tau = C / G at one operating point [s].

        Parameters are those of :meth:`conductance`. Free convection makes G depend on the sensor's
        excess temperature, so a large step is not exactly exponential; evaluate at the mean film
        temperature of the step for the best single tau, or use :meth:`response_time`.

        Returns
        -------
        float or numpy.ndarray
            Time constant [s].
        """
        return self._capacity / self.conductance(air_speed, temp_air, temp_surface, radiation, pressure)

    def self_heating_rise(self, power, air_speed, temp_air, radiation=True, pressure=P_STANDARD):
        """Steady self-heating of the sensor above the air, dT = P / G(dT) [K].

        Solved by fixed-point iteration on dT = P / G(T_air + dT), since G grows slowly with dT
        (free convection). P / delta with delta the dissipation constant (makers' definition).

        Parameters
        ----------
        power : float or array_like
            Electrical power dissipated in the sensor [W], >= 0.
        air_speed : float or array_like
            Local air speed [m/s], >= 0.
        temp_air : float or array_like
            Local air temperature [degC].
        radiation : bool
            As in :meth:`conductance`.
        pressure : float or array_like
            Air pressure [Pa].

        Returns
        -------
        float or numpy.ndarray
            Temperature rise of the sensor above the air [K].
        """
        _require("sensor power", power, " W", 0.0)
        t_air_k, _ = self._checked(air_speed, temp_air, None, pressure)
        return self._rise(power, air_speed, t_air_k, radiation, pressure)

    def _rise(self, power, v, t_air_k, radiation, pressure):
        rise = power / self._g(v, t_air_k, t_air_k, radiation, pressure)
        for _ in range(60):
            new = power / self._g(v, t_air_k, t_air_k + rise, radiation, pressure)
            done = np.all(np.abs(new - rise) <= 1e-12 + 1e-10 * np.abs(new))
            rise = new
            if done:
                break
        if t_air_k + np.max(rise) > air.T_MAX_K:
            raise ValueError(f"sensor power {power!r} W self-heats the sensor beyond the air property "
                             f"range ({air.T_MAX_K - KELVIN:.2f} degC)")
        return rise

    def response_time(self, temp_start, temp_end, air_speed, temp_air, power=0.0, radiation=True,
                      pressure=P_STANDARD):
        """Time for the sensor to go from ``temp_start`` to ``temp_end`` in steady air [s].

        Integrates dt = C dT / (P - G(T)(T - T_air)) with G recomputed at each temperature (so the
        free-convection nonlinearity is kept), by 20-point Gauss-Legendre quadrature in
        u = ln|T - T_eq|, where T_eq is the self-heated equilibrium (the integrand is then smooth and
        the result exact for constant G: tau ln(theta_0 / theta_1)). Scalars only.

        Parameters
        ----------
        temp_start, temp_end : float
            Sensor temperature at the start and the end [degC]; the end must lie between the start and
            the equilibrium temperature T_air + self-heating.
        air_speed : float
            Air speed [m/s], >= 0.
        temp_air : float
            Air temperature [degC].
        power : float
            Power dissipated in the sensor [W], >= 0.
        radiation : bool
            As in :meth:`conductance`.
        pressure : float
            Air pressure [Pa].

        Returns
        -------
        float
            Time [s].
        """
        return self._capacity * self._time_per_capacity(temp_start, temp_end, air_speed, temp_air, power,
                                                        radiation, pressure)

    def _time_per_capacity(self, temp_start, temp_end, air_speed, temp_air, power, radiation, pressure):
        for name, value in (("start temperature", temp_start), ("end temperature", temp_end),
                            ("air speed", air_speed), ("air temperature", temp_air), ("sensor power", power),
                            ("air pressure", pressure)):
            if not isinstance(value, (float, int)):
                raise ValueError(f"{name} must be a single number for a response time, got {value!r}")
        _require("sensor power", power, " W", 0.0)
        t_air_k, _ = self._checked(air_speed, temp_air, None, pressure)
        t0 = _temp("start temperature", temp_start)
        t1 = _temp("end temperature", temp_end)
        t_eq = t_air_k + (self._rise(power, air_speed, t_air_k, radiation, pressure) if power > 0 else 0.0)
        theta0, theta1 = t0 - t_eq, t1 - t_eq
        if theta0 == 0.0 or theta1 == 0.0 or theta0 * theta1 < 0.0 or abs(theta1) >= abs(theta0):
            raise ValueError(f"end temperature {temp_end!r} degC is not reached from {temp_start!r} degC: "
                             f"the sensor settles at {t_eq - KELVIN:.3f} degC")
        sign = 1.0 if theta0 > 0.0 else -1.0
        u0, u1 = math.log(abs(theta0)), math.log(abs(theta1))
        u = 0.5 * (u0 + u1) + 0.5 * (u0 - u1) * _GL_X
        theta = sign * np.exp(u)
        temps = t_eq + theta
        # C dT/dt = P - G (T - T_air); dT = theta du  ->  dt/C = theta du / (P - G (T - T_air))
        rate = power - self._g(air_speed, t_air_k, temps, radiation, pressure) * (temps - t_air_k)
        integrand = theta / rate
        return float(-0.5 * (u0 - u1) * np.dot(_GL_W, integrand))


def _scalar_positive(name, value, unit):
    if not (isinstance(value, (float, int)) and 0.0 < value < float("inf")):
        raise ValueError(f"{name} must be a finite number > 0 {unit}, got {value!r}")


# --- presets ------------------------------------------------------------------------------------------
# Masses from the volume times a mean density; densities, specific heats and emittances are typical
# handbook figures for the materials (from memory), not measurements of any one part.

def _sphere_volume(d):
    return math.pi * d ** 3 / 6.0


def _probe_body():
    # 6 mm x 30 mm stainless sheath, 0.3 mm wall and closed tip (stainless 7900 kg/m^3, 500 J/kgK),
    # with epoxy potting filling the last 10 mm around the thermistor (1500 kg/m^3, 1000 J/kgK);
    # lightly oxidised stainless emittance 0.3 (from memory).
    d, length, wall, potted = 6.0e-3, 30.0e-3, 0.3e-3, 10.0e-3
    sheath = 7900.0 * (math.pi * d * length + 0.25 * math.pi * d * d) * wall
    potting = 1500.0 * 0.25 * math.pi * (d - 2 * wall) ** 2 * potted
    capacity = 500.0 * sheath + 1000.0 * potting
    return SensorBody("probe", d, length, mass=sheath + potting, specific_heat=capacity / (sheath + potting),
                      emittance=0.3, name="stainless probe 6 mm x 30 mm")


#: Named sensor bodies (see each comment for the basis).
PRESETS = {
    # 2.4 mm epoxy-coated bead: filled epoxy around a small oxide-ceramic chip, mean density
    # 1800 kg/m^3 (filled epoxy 1600-2000, chip about 5000), mean specific heat 900 J/kgK (epoxy
    # about 1000, ceramic about 750), emittance 0.9 (from memory).
    "epoxy-bead-2mm": SensorBody("bead", 2.4e-3, mass=1800.0 * _sphere_volume(2.4e-3), specific_heat=900.0,
                                 emittance=0.9, name="epoxy bead 2.4 mm"),
    # 1.0 mm glass-encapsulated bead: glass 2200-2600 kg/m^3 around a denser chip, mean 3000 kg/m^3,
    # 800 J/kgK, emittance 0.9 (from memory).
    "glass-bead-1mm": SensorBody("bead", 1.0e-3, mass=3000.0 * _sphere_volume(1.0e-3), specific_heat=800.0,
                                 emittance=0.9, name="glass bead 1.0 mm"),
    # 5 mm disc, 2.5 mm thick with its coating: oxide ceramic (about 5000 kg/m^3) under a lacquer or
    # epoxy coat, mean 3500 kg/m^3, 750 J/kgK, emittance 0.9 (from memory). Its leads, which carry a
    # good part of a leaded disc's dissipation, are not modelled (see the module notes).
    "disc-5mm": SensorBody("disc", 5.0e-3, 2.5e-3, mass=3500.0 * math.pi / 4 * 5.0e-3 ** 2 * 2.5e-3,
                           specific_heat=750.0, emittance=0.9, name="disc 5 mm"),
    "probe-6mm": _probe_body(),
}


def preset(name):
    """The preset :class:`SensorBody` called ``name`` (one of :data:`PRESETS`)."""
    try:
        return PRESETS[name]
    except KeyError:
        raise ValueError(f"sensor preset must be one of {', '.join(PRESETS)}, got {name!r}") from None
