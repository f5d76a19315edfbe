"""The airflow model the thermal network uses: simple air changes, or the full pressure balance.

Two forms, chosen by the scenario:

- **simple** (no ``[[vents.openings]]``): passive vents give a constant air-change rate and the fan
  adds its rated flow while it runs; no air is exchanged with the house.
- **balance** (openings described): every vent, the fan (on its curve) and the ceiling leaks are
  balanced by :func:`atticsim.airflow.balance.solve_attic_balance` for the present attic and outdoor
  temperatures, wind and fan state.

The flows are quasi-steady: the event loop re-solves them every ``simulation.airflow_step`` and at every
fan switch, and holds them constant in between (sequential "ping-pong" coupling of airflow and thermal
models, common practice in multizone building simulation). Within a held interval mass balances exactly,
so the energy books still close.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, fields

import numpy as np

from atticsim.airflow.ventilation import passive_flow
from atticsim.constants import P_STANDARD


@dataclass(frozen=True)
class AirflowState:
    """Air flows held over an interval (SI; volume flows in m^3/s, each at the density of the air it carries:
    the network forms the mass flows from them with the present temperatures and pressure).

    house_in : house air entering the attic's lower layer through the ceiling (conditioned air drawn)
    attic_to_house : lower-layer attic air entering the house through the ceiling
    outdoor_flow : outdoor air entering the attic, for the figures
    fan_flow : the fan's flow of attic (upper-layer) air (0 when off)
    fan_power : the fan's electric power when running [W]
    ceiling_flow : flow through the ceiling, + into the attic
    pressure_attic, pressure_house : gauge pressures at the attic floor relative to outdoors [Pa]
    depressurisation : fall of the house pressure caused by the running fan [Pa] (NaN when not solved)
    residual : relative mass residual of the attic balance [-]
    in_lower, in_upper : outdoor air entering the lower / upper air layer through the vents
    out_lower, out_upper : attic air leaving the lower / upper layer to outdoors through the vents
        (openings below the layer interface belong to the lower layer; with one well-mixed layer
        everything is "lower", and "upper" is the same node)
    fan_makeup : 1 when the fan's exhaust is made up by outdoor air entering the lower layer at the same
        mass flow (the simple form, which describes no vents), else 0 (the balance gives the vents' flows)
    fan_speed : the fan's speed as a fraction of its full speed [-] (1 running, 0 stopped; between while it
        spins up or coasts down)
    path_flows : per-path flows, + into the attic (names in AirflowModel.path_names)
    """

    house_in: float
    attic_to_house: float
    outdoor_flow: float
    fan_flow: float
    fan_power: float
    ceiling_flow: float = 0.0
    pressure_attic: float = 0.0
    pressure_house: float = 0.0
    depressurisation: float = math.nan
    residual: float = 0.0
    in_lower: float = 0.0
    in_upper: float = 0.0
    out_lower: float = 0.0
    out_upper: float = 0.0
    fan_makeup: float = 0.0
    fan_speed: float = 0.0
    path_flows: tuple = ()


AIR_FIELDS = tuple(f.name for f in fields(AirflowState) if f.name != "path_flows")


def stack_states(runs, n_rows, names=AIR_FIELDS) -> dict:
    """The held airflow states of a run's output rows as arrays: one per scalar field in ``names`` (default
    all), plus ``path_flows`` (shape (n, paths)) when all fields are asked for and the states carry per-path
    flows. ``runs``: (row starts, states), where each run of one held state begins among the ``n_rows`` rows
    (``HybridRun.air_runs``)."""
    starts, held = runs
    lengths = np.diff(np.append(np.asarray(starts, dtype=np.int64), n_rows))
    out = {name: np.repeat(np.array([getattr(s, name) for s in held], dtype=float), lengths) for name in names}
    if names is AIR_FIELDS and held and held[0].path_flows:
        out["path_flows"] = np.repeat(np.array([s.path_flows for s in held], dtype=float), lengths, axis=0)
    return out


class AirflowModel:
    """Airflow of one scenario; ``solve`` gives the AirflowState for given conditions.

    Attributes
    ----------
    kind : {"simple", "balance"}
    update_interval : float
        How often the event loop must re-solve the flows [s] (inf for the simple form, whose flows do
        not depend on temperatures).
    """

    def __init__(self, scenario, pressure: float = P_STANDARD):
        self.pressure = pressure
        from atticsim.scenario.geometry import attic_geometry

        geometry = attic_geometry(scenario)
        self.layer_height = geometry.interface_height if scenario.attic.air_layers == 2 else 0.0
        self.enabled = scenario.fan.enabled
        self.room_temperature = scenario.ceiling.room_temperature
        vents = scenario.vents
        fan = scenario.fan
        if not vents.openings:
            self.kind = "simple"
            self.update_interval = math.inf
            self.passive = passive_flow(vents.passive_ach, scenario.attic.volume)
            self.rated_flow = fan.flow
            self.rated_power = fan.power
            self.paths = None
        else:
            self.kind = "balance"
            self.update_interval = scenario.simulation.airflow_step
            self.paths = build_paths(scenario)
            self.speed_ratio = fan.speed_ratio
        # the motor: first-order spin-up and coast-down, and the energy of each start (atticsim.airflow.motor)
        self.spin_up, self.coast_down = (fan.spin_up, fan.coast_down) if fan.enabled else (0.0, 0.0)
        self.start_energy = fan.start_energy_j if fan.enabled else 0.0
        self.path_heights = {} if self.paths is None else (
            {(v.name or v.kind): v.height for v in self.paths.vents} | {"fan": self.paths.fan.height})
        self.path_names = [] if self.paths is None else (
            [v.name or v.kind for v in self.paths.vents] + ["fan"]
            + [c.name for c in self.paths.ceiling_leaks] + (["house envelope"] if self.paths.house else []))

    def motor(self):
        """A fresh :class:`atticsim.airflow.motor.Motor` for one run of this fan."""
        from atticsim.airflow.motor import Motor

        return Motor(self.spin_up, self.coast_down, self.start_energy)

    def solve(self, temp_attic: float, temp_outdoor: float, wind_speed: float, fan_on: bool,
              with_depressurisation: bool = False, pressure: float | None = None,
              temp_room: float | None = None, speed: float | None = None) -> AirflowState:
        """Flows for the present conditions.

        Parameters
        ----------
        temp_attic, temp_outdoor : float
            Air temperatures [degC].
        wind_speed : float
            Wind speed [m/s].
        fan_on : bool
            Whether the motor is switched on (it draws power; ignored when the fan is disabled).
        with_depressurisation : bool
            Also solve the fan-off case to report the house depressurisation caused by the fan.
        pressure, temp_room : float, optional
            The present station pressure [Pa] and the rooms' temperature [degC] (default: the model's).
        speed : float, optional
            The blades' speed as a fraction of full speed [-] (default 1 switched on, 0 off): below 1 while the
            motor spins up, above 0 while it coasts down. The fan laws scale the curve (flow ~ N).
        """
        on = bool(fan_on) and self.enabled
        speed = (1.0 if on else 0.0) if speed is None or not self.enabled else min(max(float(speed), 0.0), 1.0)
        moving = speed > 0.0
        if self.kind == "simple":
            if speed in (0.0, 1.0) and moving == on:
                return self.simple_state(on)
            return self._simple(on, speed)
        from atticsim.airflow.balance import solve_attic_balance

        kw = dict(temp_house=self.room_temperature if temp_room is None else temp_room,
                  wind_speed=max(float(wind_speed), 0.0),
                  pressure=self.pressure if pressure is None else pressure)
        ratio = self.speed_ratio * (speed if moving else 1.0)
        b = solve_attic_balance(self.paths, temp_attic, temp_outdoor, fan_on=moving, fan_speed_ratio=ratio, **kw)
        depress = math.nan
        if with_depressurisation and moving:
            off = solve_attic_balance(self.paths, temp_attic, temp_outdoor, fan_on=False,
                                      fan_speed_ratio=self.speed_ratio, **kw)
            depress = off.pressure_house - b.pressure_house
        power = 0.0
        if on:  # the motor draws its running power while switched on, spinning up or not
            power = b.fan_power if speed == 1.0 else solve_attic_balance(
                self.paths, temp_attic, temp_outdoor, fan_on=True, fan_speed_ratio=self.speed_ratio, **kw).fan_power
        return self._balance_state(b, moving, power, speed, depress)

    def _balance_state(self, b, moving, power, speed, depress) -> AirflowState:
        """An AirflowState from a solved balance: the flows between outdoors and each layer, through the vents
        and the fan, by the layer of their height."""
        layer = {name: ("upper" if z >= self.layer_height else "lower") for name, z in self.path_heights.items()}
        flows = {"in_lower": 0.0, "in_upper": 0.0, "out_lower": 0.0, "out_upper": 0.0}
        for p in b.paths:
            if p.kind not in ("vent", "fan"):
                continue
            side = layer.get(p.name, "upper")
            if p.volume_flow > 0.0:
                flows[f"in_{side}"] += p.volume_flow
            else:
                flows[f"out_{side}"] -= p.volume_flow
        return AirflowState(
            house_in=max(b.ceiling_flow, 0.0), attic_to_house=max(-b.ceiling_flow, 0.0),
            outdoor_flow=sum(p.volume_flow for p in b.paths if p.kind in ("vent", "fan") and p.volume_flow > 0.0),
            fan_flow=b.fan_flow if moving else 0.0, fan_power=power,
            ceiling_flow=b.ceiling_flow, pressure_attic=b.pressure_attic, pressure_house=b.pressure_house,
            depressurisation=depress, residual=b.residual, **flows, fan_speed=speed if moving else 0.0,
            path_flows=tuple(self._path_flow(b, name) for name in self.path_names))

    def simple_state(self, running: bool) -> AirflowState:
        """The simple form's flows with the fan running or not: outdoor air enters low (soffits) and leaves
        high (ridge, fan): the passive air changes, plus the fan's rated flow made up by outdoor air at the
        same mass flow. One state per fan state, made once."""
        return self._simple_states[bool(running)]

    @functools.cached_property
    def _simple_states(self) -> dict:
        return {running: self._simple(running, 1.0 if running else 0.0) for running in (False, True)}

    def _simple(self, on: bool, speed: float) -> AirflowState:
        """The simple form's flows with the blades at ``speed`` (fraction of full; flow ~ N) and the motor
        switched on or not."""
        fan = self.rated_flow * speed
        return AirflowState(house_in=0.0, attic_to_house=0.0, outdoor_flow=self.passive + fan, fan_flow=fan,
                            fan_power=self.rated_power if on else 0.0, in_lower=self.passive,
                            out_upper=self.passive, fan_makeup=1.0, fan_speed=speed)

    @staticmethod
    def _path_flow(balance, name):
        """Volume flow of a named path, + into the attic (house envelope: + into the house) [m^3/s]."""
        for p in balance.paths:
            if p.name == name:
                return p.volume_flow
        return 0.0  # a stopped fan without idle area is no path


def build_paths(scenario):
    """The airflow library's description of a scenario's vents, fan, ceiling leaks and house."""
    from atticsim.airflow.balance import AtticAirPaths, CeilingLeak, Fan, HouseEnvelope, Vent
    from atticsim.airflow.fan import FanCurve

    vents = tuple(
        Vent(area=o.net_free_area, height=o.height, kind=o.kind.replace("-", "_"), cd=o.discharge_coefficient,
             cp=o.wind_pressure_coefficient, role=o.role, name=o.name)
        for o in scenario.vents.openings)
    f = scenario.fan
    curve = FanCurve(pressure=tuple(f.curve_pressure), flow=tuple(f.curve_flow),
                     power=tuple(f.curve_power) if f.curve_power else f.power)
    fan = Fan(curve=curve, height=f.height, kind=f.kind.replace("-", "_"), idle_area=f.idle_area)
    leaks = ()
    ceiling = scenario.ceiling
    if ceiling.leakage_area:
        leaks = (CeilingLeak.from_leakage_area(ceiling.leakage_area, exponent=ceiling.leakage_exponent),)
    house = None
    if scenario.house.envelope_leakage_area:
        house = HouseEnvelope.from_leakage_area(scenario.house.envelope_leakage_area,
                                                exponent=scenario.house.envelope_leakage_exponent)
    return AtticAirPaths(vents=vents, fan=fan, ceiling_leaks=leaks, house=house)
