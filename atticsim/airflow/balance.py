"""Attic pressure balance: the fan against the vents, natural ventilation, and air drawn from the house.

Three zones: outdoors (the pressure reference), the attic and the conditioned house below it, each
air column hydrostatic at its own temperature. Heights are measured from the attic floor (the ceiling
plane, z = 0); a vent's height is its centre. Pressures ``pressure_attic`` and ``pressure_house`` are
gauge pressures of that zone's air at z = 0, relative to the undisturbed outdoor static pressure at
z = 0 (negative = depressurised).

Paths and their sign convention (every flow positive *into the attic*, except the house envelope,
positive *into the house*):

- vent (soffit, gable, ridge, roof vent; outdoors <-> attic): orifice law with the wind pressure
  Cp rho V^2 / 2 on the outside and the stack term;
- fan (attic -> outdoors): its curve at the pressure rise from the attic to the outdoor air at its
  discharge (wind included); a stopped fan is a vent of its idle free area;
- ceiling leak (house <-> attic): power law Q = C dp^n;
- house envelope (outdoors <-> house): one lumped power law at an effective height.

Mass flow is the volume flow times the density of the air it comes from (upstream density). The
pressure difference across a path at height z is (p_from + wind - rho_from g z) - (p_to - rho_to g z);
the difference of the two columns' weights is the stack pressure of
:func:`atticsim.airflow.openings.stack_pressure` with the neutral level at z = 0.

Solution: the house pressure is solved for each trial attic pressure (inner 1-D root find), and the
attic pressure so that the attic's net mass flow is zero (outer root find). Both net flows are strictly
monotone in the unknown, so each has a single root; both are found with Brent's method on a bracket
that is widened until the net flow changes sign, and an :class:`AirflowSolveError` is raised if it
never does or Brent's method does not converge (never a silent non-convergence). The two root finds
run compiled (:mod:`atticsim.airflow.balance_kernel`); the flows at the solution are formed here. Below
:data:`DP_LAMINAR` (1e-4 Pa) the path laws run linear through zero so that the root is well
conditioned; flows in and out then match to round-off (checked to 1e-6 relative by the tests).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from atticsim.airflow.fan import FanCurve
from atticsim.airflow.openings import (DEFAULT_CP, default_cp, leakage_coefficient, require_exponent,
                                       require_finite, require_non_negative, require_positive,
                                       require_temperature)
from atticsim.constants import CP_AIR, P_STANDARD
from atticsim.air import air_density

#: Mass flow below which a zone counts as having no throughput, for the relative residual [kg/s]
#: (1e-6 kg/s is about 3 litres of air an hour; numerical choice, ours).
MASS_FLOW_FLOOR = 1e-6
#: Below this pressure difference the solver's path laws run linear through zero, continuous at the
#: threshold [Pa]: the square-root and power laws have an infinite slope at dp = 0, which would leave a
#: root find with a mass error of order sqrt(round-off). Numerical regularisation, ours (multizone codes
#: use a laminar regime at very low flow); it changes flows only below 1e-4 Pa, under 1 % of the flow at
#: 1 Pa.
DP_LAMINAR = 1e-4
#: Largest pressure the bracket search tries before giving up [Pa] (numerical choice, ours).
MAX_BRACKET_PRESSURE = 1e7
#: Latent heat of vaporisation of water at 0 degC [J/kg] (ASHRAE Handbook Fundamentals,
#: psychrometrics chapter, moist-air enthalpy h = 1.006 t + W (2501 + 1.86 t) kJ/kg).
LATENT_HEAT_WATER = 2501e3

_ROLES = ("intake", "exhaust")
_BRENT_XTOL = 1e-18  # [Pa]; the relative tolerance governs
_BRENT_RTOL = 1e-15  # about 4.5 machine epsilons: as fine as a root in doubles can be asked for
_BRENT_MAXITER = 200
#: The compiled root finds' settings (layout: atticsim.airflow.balance_kernel).
_SETTINGS = np.array([DP_LAMINAR, MAX_BRACKET_PRESSURE, _BRENT_XTOL, _BRENT_RTOL, float(_BRENT_MAXITER)])


class AirflowSolveError(RuntimeError):
    """The attic or house pressure balance has no root in the search range or did not converge."""


# --- description of the paths --------------------------------------------------------------------------

@dataclass(frozen=True)
class Vent:
    """A passive vent between outdoors and the attic.

    Parameters
    ----------
    area : float
        Net free area [m^2].
    height : float
        Height of the vent's centre above the attic floor [m].
    kind : str, default "soffit"
        Position, one of :data:`atticsim.airflow.openings.DEFAULT_CP` (sets the default ``cp``).
    cd : float, default 0.61
        Discharge coefficient [-].
    cp : float, optional
        Wind pressure coefficient [-]; default by ``kind``.
    role : {"intake", "exhaust"}, optional
        Design role, used by the code and intake-area checks only; default "intake" for soffit kinds,
        "exhaust" for the others. The balance decides the actual direction of flow.
    name : str, optional
        Label in the results; default the kind.
    """

    area: float
    height: float
    kind: str = "soffit"
    cd: float = 0.61
    cp: float | None = None
    role: str | None = None
    name: str = ""

    def __post_init__(self):
        require_non_negative("vent area", self.area, "[m^2]")
        require_finite("vent height", self.height, "[m]")
        require_positive("vent discharge coefficient", self.cd, "[-]")
        default_cp(self.kind)  # validates the kind
        if self.cp is not None:
            require_finite("vent pressure coefficient", self.cp, "[-]")
        if self.role is not None and self.role not in _ROLES:
            raise ValueError(f"vent role must be 'intake' or 'exhaust', got {self.role!r}")

    @property
    def wind_cp(self):
        """Wind pressure coefficient used [-]."""
        return default_cp(self.kind) if self.cp is None else self.cp

    @property
    def is_intake(self):
        """True if the vent is meant as an intake (soffit kinds by default)."""
        return self.role == "intake" if self.role else self.kind.startswith("soffit")

    @property
    def label(self):
        """Name in the results: ``name``, or the kind."""
        return self.name or self.kind


@dataclass(frozen=True)
class CeilingLeak:
    """Air leakage through the ceiling between the house and the attic (power law).

    Parameters
    ----------
    coefficient : float
        Flow coefficient C [m^3/(s Pa^n)].
    exponent : float, default 0.65
        Flow exponent n [-].
    height : float, default 0.0
        Height of the leak above the attic floor [m].
    name : str, default "ceiling"
        Label in the results.
    """

    coefficient: float
    exponent: float = 0.65
    height: float = 0.0
    name: str = "ceiling"

    def __post_init__(self):
        require_non_negative("ceiling leakage coefficient", self.coefficient, "[m^3/(s Pa^n)]")
        require_exponent("ceiling leakage exponent", self.exponent)
        require_finite("ceiling leak height", self.height, "[m]")

    @classmethod
    def from_leakage_area(cls, area, exponent=0.65, dp_ref=4.0, cd=1.0, height=0.0, name="ceiling"):
        """Ceiling leak from an effective leakage area (default the 4 Pa, Cd = 1 ELA; see
        :func:`atticsim.airflow.openings.leakage_coefficient`) [m^2]."""
        return cls(leakage_coefficient(area, exponent, dp_ref, cd), exponent, height, name)


@dataclass(frozen=True)
class HouseEnvelope:
    """The house's own leakage to outdoors (walls, floor, windows), lumped into one power law.

    Parameters
    ----------
    coefficient : float
        Flow coefficient C [m^3/(s Pa^n)], e.g. from a blower-door test.
    exponent : float, default 0.65
        Flow exponent n [-].
    height : float, default -1.25
        Effective height of the leakage [m], negative below the attic floor (mid-height of a one-storey
        house with 2.5 m ceilings).
    cp : float, default DEFAULT_CP["wall"]
        Wind pressure coefficient averaged over the envelope [-].
    """

    coefficient: float
    exponent: float = 0.65
    height: float = -1.25
    cp: float = DEFAULT_CP["wall"]

    def __post_init__(self):
        require_non_negative("house leakage coefficient", self.coefficient, "[m^3/(s Pa^n)]")
        require_exponent("house leakage exponent", self.exponent)
        require_finite("house leakage height", self.height, "[m]")
        require_finite("house pressure coefficient", self.cp, "[-]")

    @classmethod
    def from_leakage_area(cls, area, exponent=0.65, dp_ref=4.0, cd=1.0, height=-1.25,
                          cp=DEFAULT_CP["wall"]):
        """House envelope from an effective leakage area (default the 4 Pa, Cd = 1 ELA) [m^2]."""
        return cls(leakage_coefficient(area, exponent, dp_ref, cd), exponent, height, cp)


@dataclass(frozen=True)
class Fan:
    """A powered ventilator exhausting from the attic to outdoors.

    Parameters
    ----------
    curve : FanCurve
        Its published curve.
    height : float
        Height of the fan above the attic floor [m].
    kind : str, default "gable"
        Where it discharges, for the default wind pressure coefficient (see ``DEFAULT_CP``).
    cp : float, optional
        Wind pressure coefficient at the discharge [-]; default by ``kind``.
    idle_area : float, default 0.0
        Free area through the stopped fan [m^2] (0 for a shutter that closes).
    idle_cd : float, default 0.61
        Discharge coefficient of that area [-].
    name : str, default "fan"
        Label in the results.
    """

    curve: FanCurve
    height: float
    kind: str = "gable"
    cp: float | None = None
    idle_area: float = 0.0
    idle_cd: float = 0.61
    name: str = "fan"

    def __post_init__(self):
        if not isinstance(self.curve, FanCurve):
            raise ValueError(f"fan curve must be a FanCurve, got {type(self.curve).__name__}")
        require_finite("fan height", self.height, "[m]")
        default_cp(self.kind)
        if self.cp is not None:
            require_finite("fan pressure coefficient", self.cp, "[-]")
        require_non_negative("fan idle area", self.idle_area, "[m^2]")
        require_positive("fan idle discharge coefficient", self.idle_cd, "[-]")

    @property
    def wind_cp(self):
        """Wind pressure coefficient at the discharge [-]."""
        return default_cp(self.kind) if self.cp is None else self.cp


@dataclass(frozen=True)
class AtticAirPaths:
    """Everything air can pass through: vents, an optional fan, ceiling leaks and the house envelope.

    Parameters
    ----------
    vents : sequence of Vent
    fan : Fan, optional
    ceiling_leaks : sequence of CeilingLeak, optional
    house : HouseEnvelope, optional
        The house's leakage to outdoors. Without it the house is held at the outdoor pressure
        (``pressure_house = 0``: envelope far leakier than the ceiling, the largest ceiling flow).
    """

    vents: tuple = ()
    fan: Fan | None = None
    ceiling_leaks: tuple = ()
    house: HouseEnvelope | None = None

    def __post_init__(self):
        object.__setattr__(self, "vents", tuple(self.vents))
        object.__setattr__(self, "ceiling_leaks", tuple(self.ceiling_leaks))
        for v in self.vents:
            if not isinstance(v, Vent):
                raise ValueError(f"vents must be Vent objects, got {type(v).__name__}")
        for c in self.ceiling_leaks:
            if not isinstance(c, CeilingLeak):
                raise ValueError(f"ceiling_leaks must be CeilingLeak objects, got {type(c).__name__}")
        if self.fan is not None and not isinstance(self.fan, Fan):
            raise ValueError(f"fan must be a Fan, got {type(self.fan).__name__}")
        if self.house is not None and not isinstance(self.house, HouseEnvelope):
            raise ValueError(f"house must be a HouseEnvelope, got {type(self.house).__name__}")

    @cached_property
    def _packed(self):
        """The paths as arrays for the compiled root finds (layout: atticsim.airflow.balance_kernel)."""
        vents = np.array([(v.cd * v.area, v.height, v.wind_cp) for v in self.vents], dtype=float).reshape(-1, 3)
        leaks = np.array([(c.coefficient, c.exponent, c.height) for c in self.ceiling_leaks],
                         dtype=float).reshape(-1, 3)
        h = self.house
        house = np.array([1.0, h.coefficient, h.exponent, h.height, h.cp] if h is not None else [0.0] * 5)
        f = self.fan
        if f is None:
            fan = np.zeros(5)
            curve_p, curve_q, curve_seg = np.array([0.0, 1.0]), np.zeros(2), np.zeros((1, 4))
        else:
            fan = np.array([1.0, f.height, f.wind_cp, f.idle_cd * f.idle_area, f.curve.shutoff_pressure])
            curve_p, curve_q = np.array(f.curve.pressure), np.array(f.curve.flow)
            curve_seg = np.array(f.curve._segments, dtype=float).reshape(-1, 4)
        return vents, leaks, house, fan, curve_p, curve_q, curve_seg

    @property
    def intake_area(self):
        """Net free area of the vents meant as intakes [m^2]."""
        return sum(v.area for v in self.vents if v.is_intake)

    @property
    def vent_area(self):
        """Net free area of all passive vents [m^2]."""
        return sum(v.area for v in self.vents)


# --- results ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class PathFlow:
    """Flow through one path at the balance.

    Attributes
    ----------
    name : str
        The path's label.
    kind : str
        "vent", "fan", "ceiling" or "envelope".
    volume_flow : float
        Volume flow at the density of the air it comes from [m^3/s]; positive into the attic (the
        envelope: positive into the house).
    mass_flow : float
        Mass flow [kg/s], same sign.
    pressure_difference : float
        Driving pressure difference in the positive direction [Pa]; for the fan, the static pressure
        rise from the attic to its discharge.
    """

    name: str
    kind: str
    volume_flow: float
    mass_flow: float
    pressure_difference: float


@dataclass(frozen=True)
class AtticBalance:
    """The solved pressures and flows (see the module docstring for conventions).

    Attributes
    ----------
    pressure_attic, pressure_house : float
        Zone pressures at the attic floor relative to outdoors [Pa].
    paths : tuple of PathFlow
        Every path's flow, vents first, then the fan, the ceiling leaks and the house envelope.
    fan_flow : float
        Volume flow exhausted by the running fan at attic density [m^3/s] (0 when it is off).
    fan_pressure : float
        Static pressure rise across the running fan [Pa] (0 when it is off).
    fan_power : float
        Electric power of the running fan [W] (0 when it is off).
    fan_on_published_curve : bool
        True when the running fan's operating pressure lies within its published points (also True
        when it is off).
    ceiling_flow : float
        Net volume flow from the house into the attic [m^3/s]; positive = conditioned air drawn.
    ceiling_mass_flow : float
        The same as mass flow [kg/s].
    envelope_flow : float
        Volume flow from outdoors into the house [m^3/s].
    attic_mass_in, attic_mass_out : float
        Total mass flow into and out of the attic [kg/s] (both >= 0).
    residual : float
        |in - out| / max(in, out, MASS_FLOW_FLOOR) for the attic [-].
    house_residual : float
        The same for the house [-] (0 without ceiling leaks or house envelope).
    density_outdoor, density_attic, density_house : float
        Air densities used [kg/m^3].
    """

    pressure_attic: float
    pressure_house: float
    paths: tuple
    fan_flow: float
    fan_pressure: float
    fan_power: float
    fan_on_published_curve: bool
    ceiling_flow: float
    ceiling_mass_flow: float
    envelope_flow: float
    attic_mass_in: float
    attic_mass_out: float
    residual: float
    house_residual: float
    density_outdoor: float
    density_attic: float
    density_house: float

    @property
    def attic_exhaust_flow(self):
        """Air leaving the attic (fan and vents), at attic density [m^3/s]: its ventilation rate."""
        return self.attic_mass_out / self.density_attic

    @property
    def outdoor_air_flow(self):
        """Outdoor air entering the attic through vents (and fan back-flow), at outdoor density [m^3/s]."""
        m = sum(p.mass_flow for p in self.paths if p.kind in ("vent", "fan") and p.mass_flow > 0.0)
        return m / self.density_outdoor

    def path(self, name):
        """The first :class:`PathFlow` with this name."""
        for p in self.paths:
            if p.name == name:
                return p
        raise KeyError(f"no path named {name!r}")


# --- the solve -------------------------------------------------------------------------------------------------

def solve_attic_balance(paths, temp_attic, temp_outdoor, temp_house=None, wind_speed=0.0, fan_on=False,
                        fan_speed_ratio=1.0, pressure=P_STANDARD):
    """Solve the attic (and house) pressures so that every zone's mass flows balance.

    Parameters
    ----------
    paths : AtticAirPaths
        Vents, fan, ceiling leaks and house envelope.
    temp_attic : float
        Attic air temperature [degC].
    temp_outdoor : float
        Outdoor air temperature [degC].
    temp_house : float, optional
        Conditioned-space air temperature [degC]; required when there are ceiling leaks or a house
        envelope.
    wind_speed : float, default 0.0
        Wind speed at roof height [m/s].
    fan_on : bool, default False
        Whether the fan runs (ignored without a fan).
    fan_speed_ratio : float, default 1.0
        Fan speed relative to its curve's speed [-] (affinity laws).
    pressure : float, default 101325
        Barometric pressure for the air densities [Pa].

    Returns
    -------
    AtticBalance

    Raises
    ------
    ValueError
        For bad inputs, or an attic with no open path at all.
    AirflowSolveError
        If a balance has no sign change in the search range or Brent's method does not converge.

    References
    ----------
    ASHRAE Handbook - Fundamentals, Ventilation and Infiltration chapter (orifice and power-law paths,
    stack and wind pressures); multizone mass balance as in common practice.
    """
    from atticsim.airflow import balance_kernel as bk  # numba: loaded when a balance is first solved

    if not isinstance(paths, AtticAirPaths):
        raise ValueError(f"paths must be an AtticAirPaths, got {type(paths).__name__}")
    require_temperature("attic air temperature", temp_attic)
    require_temperature("outdoor air temperature", temp_outdoor)
    has_house_paths = bool(paths.ceiling_leaks) or paths.house is not None
    if has_house_paths:
        if temp_house is None:
            raise ValueError("house temperature is required when there are ceiling leaks or a house envelope")
        require_temperature("house air temperature", temp_house)
    require_non_negative("wind speed", wind_speed, "[m/s]")
    require_positive("barometric pressure", pressure, "[Pa]")
    fan = paths.fan
    running = bool(fan_on) and fan is not None
    if running:
        require_positive("fan speed ratio", fan_speed_ratio, "[-]")

    rho_o = float(air_density(temp_outdoor, pressure))
    rho_a = float(air_density(temp_attic, pressure))
    rho_h = float(air_density(temp_house, pressure)) if has_house_paths else rho_a
    q_wind = 0.5 * rho_o * float(wind_speed) ** 2  # velocity pressure rho V^2 / 2 [Pa]
    house = paths.house
    if running:
        curve = fan.curve
        fan_factor = curve.pressure_factor(fan_speed_ratio, rho_a)
        speed = float(fan_speed_ratio)
    # the paths and conditions as the compiled root finds take them (layout: atticsim.airflow.balance_kernel);
    # the stack and wind offsets below are its functions too, so each formula is written once
    vents, leaks, house_row, fan_row, curve_p, curve_q, curve_seg = paths._packed
    cond = np.array([rho_o, rho_a, rho_h, q_wind, 1.0 if running else 0.0,
                     fan_factor if running else 1.0, speed if running else 1.0])

    # Orifice paths outdoors <-> attic: (label, k = Cd A, outdoor minus attic pressure at the path for
    # p_attic = 0).
    orifices = [(v.label, v.cd * v.area, bk.outdoor_offset(v.height, v.wind_cp, cond)) for v in paths.vents]
    if fan is not None and not running and fan.idle_area > 0.0:
        orifices.append((fan.name, fan.idle_cd * fan.idle_area, bk.outdoor_offset(fan.height, fan.wind_cp, cond)))
    ceilings = [(c.name, c.coefficient, c.exponent, bk.leak_offset(c.height, cond)) for c in paths.ceiling_leaks]
    if not (any(k > 0.0 for _, k, _ in orifices) or any(c > 0.0 for _, c, _, _ in ceilings) or running):
        raise ValueError("the attic has no open path: every vent area and ceiling leak is zero and the fan is off")
    env_offset = bk.envelope_offset(house_row, cond)
    fan_offset = bk.outdoor_offset(fan.height, fan.wind_cp, cond) if running else 0.0

    # The two nested root finds (house pressure for each trial attic pressure, attic pressure that
    # balances the attic), compiled.
    p_a, p_h, status = bk.solve_pressures(vents, leaks, house_row, fan_row, curve_p, curve_q, curve_seg, cond,
                                          _SETTINGS)
    if status != bk.SOLVED:
        what = "house pressure balance" if status in (bk.HOUSE_NO_SIGN_CHANGE, bk.HOUSE_NOT_CONVERGED) \
            else "attic pressure balance"
        if status in (bk.ATTIC_NO_SIGN_CHANGE, bk.HOUSE_NO_SIGN_CHANGE):
            raise AirflowSolveError(
                f"{what}: net mass flow does not change sign between -{MAX_BRACKET_PRESSURE:g} and "
                f"{MAX_BRACKET_PRESSURE:g} Pa; check the openings and the fan curve")
        raise AirflowSolveError(f"{what}: root find did not converge in {_BRENT_MAXITER} iterations")
    p_a, p_h = float(p_a), float(p_h)

    # Flows at the solution.
    flows = []
    for label, k, off in orifices:
        dp = off - p_a
        m = bk.orifice_mass(dp, k, rho_o, rho_a, DP_LAMINAR)
        flows.append(PathFlow(label, "vent", m / (rho_o if dp >= 0.0 else rho_a), m, dp))
    fan_flow = fan_dp = fan_power = 0.0
    on_curve = True
    if running:
        fan_dp = fan_offset - p_a  # pressure rise attic -> outdoors at the fan
        x = fan_dp * fan_factor  # on the published curve (fan laws)
        fan_flow = speed * bk.curve_flow(x, curve_p, curve_q, curve_seg)
        fan_power = curve.power_at(fan_dp, speed, rho_a)
        on_curve = curve.pressure[0] <= x <= curve.pressure[-1]
        m = fan_flow * (rho_a if fan_flow >= 0.0 else rho_o)
        flows.append(PathFlow(fan.name, "fan", -fan_flow, -m, fan_dp))
    ceiling_m = ceiling_q = 0.0
    for label, c, n, off in ceilings:
        dp = p_h - p_a + off
        m = bk.power_law_mass(dp, c, n, rho_h, rho_a, DP_LAMINAR)
        q = m / (rho_h if dp >= 0.0 else rho_a)
        ceiling_m += m
        ceiling_q += q
        flows.append(PathFlow(label, "ceiling", q, m, dp))
    envelope_q = 0.0
    house_res = 0.0
    if house is not None:
        dp = env_offset - p_h
        m_env = bk.power_law_mass(dp, house.coefficient, house.exponent, rho_o, rho_h, DP_LAMINAR)
        envelope_q = m_env / (rho_o if dp >= 0.0 else rho_h)
        flows.append(PathFlow("house envelope", "envelope", envelope_q, m_env, dp))
        h_in = max(m_env, 0.0) + max(-ceiling_m, 0.0)
        h_out = max(-m_env, 0.0) + max(ceiling_m, 0.0)
        house_res = abs(h_in - h_out) / max(h_in, h_out, MASS_FLOW_FLOOR)

    attic_paths = [f for f in flows if f.kind != "envelope"]
    m_in = sum(f.mass_flow for f in attic_paths if f.mass_flow > 0.0)
    m_out = -sum(f.mass_flow for f in attic_paths if f.mass_flow < 0.0)
    residual = abs(m_in - m_out) / max(m_in, m_out, MASS_FLOW_FLOOR)

    return AtticBalance(
        pressure_attic=p_a, pressure_house=p_h, paths=tuple(flows), fan_flow=fan_flow,
        fan_pressure=fan_dp, fan_power=fan_power, fan_on_published_curve=on_curve,
        ceiling_flow=ceiling_q, ceiling_mass_flow=ceiling_m, envelope_flow=envelope_q,
        attic_mass_in=m_in, attic_mass_out=m_out, residual=residual, house_residual=house_res,
        density_outdoor=rho_o, density_attic=rho_a, density_house=rho_h)


def house_depressurisation(paths, temp_attic, temp_outdoor, temp_house, wind_speed=0.0, fan_speed_ratio=1.0,
                           pressure=P_STANDARD):
    """How far the running fan lowers the house pressure: p_house(fan off) - p_house(fan on) [Pa].

    This is the net change a combustion-appliance-zone test reads against its baseline (fan-on
    reading minus the natural, fan-off reading; common practice of combustion-safety testing), so
    stack and wind pressures that exist anyway are not charged to the fan. Positive = depressurised.

    Parameters
    ----------
    paths : AtticAirPaths
        Must include a fan.
    temp_attic, temp_outdoor, temp_house : float
        Air temperatures [degC].
    wind_speed : float, default 0.0
        Wind speed [m/s].
    fan_speed_ratio : float, default 1.0
        Fan speed relative to its curve [-].
    pressure : float, default 101325
        Barometric pressure [Pa].

    Returns
    -------
    float
        Depressurisation of the house caused by the fan [Pa].
    """
    if not isinstance(paths, AtticAirPaths) or paths.fan is None:
        raise ValueError("house depressurisation needs AtticAirPaths with a fan")
    kw = dict(temp_house=temp_house, wind_speed=wind_speed, fan_speed_ratio=fan_speed_ratio, pressure=pressure)
    off = solve_attic_balance(paths, temp_attic, temp_outdoor, fan_on=False, **kw)
    on = solve_attic_balance(paths, temp_attic, temp_outdoor, fan_on=True, **kw)
    return off.pressure_house - on.pressure_house


def conditioned_air_load(mass_flow, temp_outdoor, temp_house, humidity_ratio_outdoor=None,
                         humidity_ratio_house=None):
    """Heat load on the house from conditioned air drawn into the attic and replaced by outdoor air.

    Sensible q_s = m c_p (t_o - t_h); latent q_l = m h_fg (W_o - W_h) (ASHRAE Handbook Fundamentals,
    Ventilation and Infiltration chapter, heat gain from infiltration air; h_fg = 2501 kJ/kg).

    Parameters
    ----------
    mass_flow : float or array_like
        Mass flow of house air drawn through the ceiling [kg/s], >= 0 (pass the positive part of
        :attr:`AtticBalance.ceiling_mass_flow`).
    temp_outdoor, temp_house : float or array_like
        Outdoor and house air temperatures [degC].
    humidity_ratio_outdoor, humidity_ratio_house : float or array_like, optional
        Humidity ratios [kg water / kg dry air]; latent load is 0 without them.

    Returns
    -------
    tuple of (float or numpy.ndarray, float or numpy.ndarray)
        Sensible and latent heat gain of the house [W] (positive = load on cooling).
    """
    require_non_negative("drawn mass flow", mass_flow, "[kg/s]")
    require_temperature("outdoor air temperature", temp_outdoor)
    require_temperature("house air temperature", temp_house)
    m = np.asarray(mass_flow, dtype=float)
    # Sensible infiltration gain (ASHRAE Handbook Fundamentals, ventilation chapter).
    sensible = m * CP_AIR * (np.asarray(temp_outdoor, dtype=float) - np.asarray(temp_house, dtype=float))
    if humidity_ratio_outdoor is None or humidity_ratio_house is None:
        latent = np.zeros_like(sensible)
    else:
        require_non_negative("outdoor humidity ratio", humidity_ratio_outdoor, "[kg/kg]")
        require_non_negative("house humidity ratio", humidity_ratio_house, "[kg/kg]")
        # Latent infiltration gain (ASHRAE Handbook Fundamentals, ventilation chapter).
        latent = m * LATENT_HEAT_WATER * (np.asarray(humidity_ratio_outdoor, dtype=float)
                                          - np.asarray(humidity_ratio_house, dtype=float))
    if sensible.ndim == 0 and np.ndim(latent) == 0:
        return float(sensible), float(latent)
    return sensible, latent
