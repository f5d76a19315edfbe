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
from atticsim.air import air_density


@dataclass(frozen=True)
class AirflowState:
    """Air flows held over an interval (SI; mass flows in kg/s, volume flows in m^3/s).

    outdoor_in : mass of outdoor air entering the attic (through vents, or the fan if reversed)
    house_in : mass of house air entering the attic through the ceiling (conditioned air drawn)
    attic_to_house : mass of attic air entering the house through the ceiling
    outdoor_flow : volume of outdoor air entering the attic [m^3/s]
    fan_flow : the fan's volume flow [m^3/s] (0 when off)
    fan_power : the fan's electric power when running [W]
    ceiling_flow : volume flow through the ceiling, + into the attic [m^3/s]
    pressure_attic, pressure_house : gauge pressures at the attic floor relative to outdoors [Pa]
    depressurisation : fall of the house pressure caused by the running fan [Pa] (NaN when not solved)
    residual : relative mass residual of the attic balance [-]
    in_lower, in_upper : outdoor air mass entering the lower / upper air layer [kg/s]
    out_lower, out_upper : attic air mass leaving the lower / upper layer to outdoors [kg/s]
        (openings below the layer interface belong to the lower layer; with one well-mixed layer
        everything is "lower"... and "upper" is the same node)
    path_flows : per-path volume flows, + into the attic [m^3/s] (names in AirflowModel.path_names)
    """

    outdoor_in: float
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
    path_flows: tuple = ()


AIR_FIELDS = tuple(f.name for f in fields(AirflowState) if f.name != "path_flows")


def stack_states(states, names=AIR_FIELDS, runs=None) -> dict:
    """A list of AirflowState -> dict of numpy arrays, one per scalar field in ``names`` (default all),
    plus ``path_flows`` (shape (n, paths)) when all fields are asked for and the states carry per-path
    flows. ``runs``: (row starts, states) of the runs of one state in ``states`` when known
    (``HybridRun.air_runs``), which saves finding them."""
    # The solvers hold one state over long runs of output rows: read each run's state once, then repeat it.
    if runs is not None:
        starts, held = runs
    else:
        ids = np.fromiter(map(id, states), dtype=np.int64, count=len(states))
        starts = np.flatnonzero(np.concatenate(([True], ids[1:] != ids[:-1]))) if ids.size else ids
        held = [states[i] for i in starts]
    lengths = np.diff(np.append(starts, len(states)))
    out = {name: np.repeat(np.array([getattr(s, name) for s in held], dtype=float), lengths) for name in names}
    if names is AIR_FIELDS and states and states[0].path_flows:
        out["path_flows"] = np.repeat(np.array([s.path_flows for s in held], dtype=float), lengths, axis=0)
    return out


@functools.lru_cache(maxsize=64)
def _simple_template(outdoor_flow, fan_flow, fan_power) -> AirflowState:
    """The simple form's state with these fixed flows and no mass flows (AirflowModel.simple_state fills them)."""
    return AirflowState(outdoor_in=0.0, house_in=0.0, attic_to_house=0.0, outdoor_flow=outdoor_flow,
                        fan_flow=fan_flow, fan_power=fan_power)


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
        self.layer_height = scenario.attic.layer_height
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
        self.path_heights = {} if self.paths is None else (
            {(v.name or v.kind): v.height for v in self.paths.vents} | {"fan": self.paths.fan.height})
        self.path_names = [] if self.paths is None else (
            [v.name or v.kind for v in self.paths.vents] + ["fan"]
            + [c.name for c in self.paths.ceiling_leaks] + (["house envelope"] if self.paths.house else []))

    def solve(self, temp_attic: float, temp_outdoor: float, wind_speed: float, fan_on: bool,
              with_depressurisation: bool = False) -> AirflowState:
        """Flows for the present conditions.

        Parameters
        ----------
        temp_attic, temp_outdoor : float
            Air temperatures [degC].
        wind_speed : float
            Wind speed [m/s].
        fan_on : bool
            Fan state (ignored when the fan is disabled).
        with_depressurisation : bool
            Also solve the fan-off case to report the house depressurisation caused by the fan.
        """
        running = bool(fan_on) and self.enabled
        if self.kind == "simple":
            return self.simple_state(float(air_density(temp_outdoor, self.pressure)), running)
        from atticsim.airflow.balance import solve_attic_balance

        kw = dict(temp_house=self.room_temperature, wind_speed=max(float(wind_speed), 0.0),
                  fan_speed_ratio=self.speed_ratio, pressure=self.pressure)
        b = solve_attic_balance(self.paths, temp_attic, temp_outdoor, fan_on=running, **kw)
        depress = math.nan
        if with_depressurisation and running:
            off = solve_attic_balance(self.paths, temp_attic, temp_outdoor, fan_on=False, **kw)
            depress = off.pressure_house - b.pressure_house
        outside = [p for p in b.paths if p.kind in ("vent", "fan")]
        outdoor_in = sum(p.mass_flow for p in outside if p.mass_flow > 0.0)
        outdoor_vol = sum(p.volume_flow for p in outside if p.volume_flow > 0.0)
        layer = {name: ("upper" if z >= self.layer_height else "lower") for name, z in self.path_heights.items()}
        flows = {"in_lower": 0.0, "in_upper": 0.0, "out_lower": 0.0, "out_upper": 0.0}
        for p in outside:
            side = layer.get(p.name, "upper")
            if p.mass_flow > 0.0:
                flows[f"in_{side}"] += p.mass_flow
            else:
                flows[f"out_{side}"] -= p.mass_flow
        return AirflowState(
            outdoor_in=outdoor_in, house_in=max(b.ceiling_mass_flow, 0.0),
            attic_to_house=max(-b.ceiling_mass_flow, 0.0), outdoor_flow=outdoor_vol,
            fan_flow=b.fan_flow if running else 0.0, fan_power=b.fan_power if running else 0.0,
            ceiling_flow=b.ceiling_flow, pressure_attic=b.pressure_attic, pressure_house=b.pressure_house,
            depressurisation=depress, residual=b.residual, **flows,
            path_flows=tuple(self._path_flow(b, name) for name in self.path_names))

    def simple_state(self, density: float, running: bool) -> AirflowState:
        """The simple form's flows for outdoor air of ``density`` [kg/m^3] with the fan running or not:
        outdoor air enters low (soffits) and leaves high (ridge, fan); the passive air changes plus the
        fan's rated flow. (The compiled solver's switch loop forms the same flows: ``simple_parameters``.)"""
        q = self.passive + (self.rated_flow if running else 0.0)
        m = density * q
        template = _simple_template(q, self.rated_flow if running else 0.0, self.rated_power if running else 0.0)
        # the template's fields with the three mass flows set: the same state as the constructor gives (a
        # test holds the two equal) in a sixth of its time (the frozen constructor sets fields one by one;
        # a chattering summer builds a few thousand of these)
        state = object.__new__(AirflowState)
        fields_ = state.__dict__
        fields_.update(template.__dict__)
        fields_["outdoor_in"] = fields_["in_lower"] = fields_["out_upper"] = m
        return state

    def simple_parameters(self) -> tuple:
        """(passive flow [m^3/s], rated flow [m^3/s], rated power [W], fan enabled, pressure [Pa]) of the
        simple form, for the compiled switch loop."""
        return (float(self.passive), float(self.rated_flow), float(self.rated_power), bool(self.enabled),
                float(self.pressure))

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
