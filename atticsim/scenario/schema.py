"""The scenario schema: every key a scenario TOML file may hold, its unit and its default.

Quantities accept a bare number in the SI unit named in the field description, or a string with a
unit ("1200 cfm", "38 degC", "R-38", "6/12"). Unknown keys are rejected. All values are held as SI
floats after validation.
"""

from __future__ import annotations

from typing import Annotated, Literal, Union

import numpy as np

from pydantic import BeforeValidator, Field, PrivateAttr, model_validator

from atticsim.materials import COVERING_FINISHES, MATERIALS
from atticsim.network.placement import PLACEMENTS
from atticsim.scenario.fields import StrictModel
from atticsim.scenario.fields import quantity as _q
from atticsim.scenario.thermostat import CircuitThermostat, SetpointThermostat


Length = Annotated[float, _q("length")]
Area = Annotated[float, _q("area")]
Volume = Annotated[float, _q("volume")]
Flow = Annotated[float, _q("flow")]
Power = Annotated[float, _q("power")]
Temperature = Annotated[float, _q("temperature")]
TempDiff = Annotated[float, _q("temperature_difference")]
Duration = Annotated[float, _q("time")]
Angle = Annotated[float, _q("angle")]
Mass = Annotated[float, _q("mass")]
Density = Annotated[float, _q("density")]
Conductivity = Annotated[float, _q("conductivity")]
SpecificHeat = Annotated[float, _q("specific_heat")]
RValue = Annotated[float, _q("r_value")]
Conductance = Annotated[float, _q("conductance")]
Pressure = Annotated[float, _q("pressure")]
Fraction = Annotated[float, _q("dimensionless")]
Percent = Annotated[float, _q("percent")]
Energy = Annotated[float, _q("energy")]
Current = Annotated[float, _q("current")]
Voltage = Annotated[float, _q("voltage")]
# TOML dates (2025-07-01) and date-times arrive as date objects; keep them as ISO text.
DateText = Annotated[str, BeforeValidator(lambda v: v.isoformat() if hasattr(v, "isoformat") else v)]


_MONTHS = ("jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec")


def month_set(text: str, where: str = "months") -> frozenset:
    """The months (1-12) of a text such as ``"may-sep"``, ``"nov-mar"`` (wrapping the year end), ``"7"``,
    ``"july"`` or a comma list of those (``"dec-feb, jul"``); an empty text is no month."""
    def month(m):
        m = m.strip().lower()
        if m.isdigit() and 1 <= int(m) <= 12:
            return int(m)
        if m[:3] in _MONTHS and (len(m) == 3 or m in ("january", "february", "march", "april", "june", "july",
                                                          "august", "september", "october", "november",
                                                          "december", "sept")):
            return _MONTHS.index(m[:3]) + 1
        raise ValueError(f"{where}: {text!r} is not a month range such as may-sep (months jan..dec or 1..12)")

    out = set()
    for item in filter(None, (part.strip() for part in str(text).split(","))):
        ends = item.split("-")
        if len(ends) > 2 or not all(e.strip() for e in ends):
            raise ValueError(f"{where}: {text!r} is not a month range such as may-sep")
        a, b = month(ends[0]), month(ends[-1])
        out.update(range(a, b + 1) if a <= b else [*range(a, 13), *range(1, b + 1)])
    return frozenset(out)


class _Model(StrictModel):
    """A scenario table: unknown keys refused, frozen, no inf or nan in any float, no true/false for a number
    (fields.StrictModel). The bounds below hold every quantity to physical sense for a house's attic, generous
    on both sides; values ordinary for a house but odd for this one are questioned by scenario/plausibility.py,
    not refused."""


class House(_Model):
    """The house below the attic: description, envelope leakage and cooling system."""

    name: str = Field("unnamed house", max_length=200)
    note: str = Field("", max_length=5000)
    envelope_leakage_area: Area | None = Field(
        None, gt=0.0, le=10.0, description="m2, effective leakage area of the house envelope at 4 Pa (blower door)")
    envelope_leakage_exponent: float = Field(0.65, ge=0.5, le=1.0)
    atmospheric_appliances: bool = Field(
        True, description="atmospherically vented combustion appliances in the house (water heater, furnace)")
    depressurisation_limit: Pressure = Field(5.0, gt=0.0, le=1000.0, description="Pa; warn above this")
    cooling_cop: float = Field(3.0, gt=0.5, le=10.0,
                               description="cooling system COP, W of heat removed per W electric")
    indoor_relative_humidity: Percent = Field(50.0, ge=0.0, le=100.0, description="% in the rooms")
    heating_setpoint: Temperature = Field(20.0, ge=5.0, le=30.0,
                                          description="degC, the rooms' temperature in the heating season")
    heating_efficiency: float = Field(
        0.8, gt=0.3, le=6.0, description="furnace efficiency (0.8: heat per unit of fuel) or heat-pump COP")
    heating_carrier: Literal["fuel", "electricity"] | None = Field(
        None, description="what the heating burns; default: fuel below efficiency 1, electricity from 1")
    season_rule: Literal["balance-point", "months"] = Field(
        "balance-point", description="how each day's season is decided (atticsim.forcing.seasons)")
    heating_balance_point: Temperature = Field(
        18.3, ge=-10.0, le=30.0, description="degC; a day whose mean outdoor air is below it is heated")
    cooling_balance_point: Temperature = Field(
        18.3, ge=-10.0, le=35.0, description="degC; a day whose mean outdoor air is above it is cooled")
    cooling_months: str = Field("may-sep", description="month range of the cooling season (season_rule months)")
    heating_months: str = Field("nov-mar", description="month range of the heating season (season_rule months)")

    @model_validator(mode="after")
    def _seasons(self):
        if self.heating_balance_point > self.cooling_balance_point:
            raise ValueError(f"heating_balance_point: {self.heating_balance_point:g} degC is above "
                             f"cooling_balance_point ({self.cooling_balance_point:g} degC); it must not be")
        cooling = month_set(self.cooling_months, "cooling_months")
        heating = month_set(self.heating_months, "heating_months")
        if cooling & heating:
            raise ValueError(f"cooling_months and heating_months share month(s) {sorted(cooling & heating)}")
        return self

    @property
    def heating_energy_carrier(self) -> str:
        """What the heating system draws: the given carrier, else fuel for an efficiency below 1 (a furnace)
        and electricity from 1 up (electric resistance at 1, a heat pump's COP above)."""
        if self.heating_carrier is not None:
            return self.heating_carrier
        return "fuel" if self.heating_efficiency < 1.0 else "electricity"


class Site(_Model):
    """Where the house is; used for the sun when the weather file does not say."""

    name: str = Field("unnamed site", max_length=200)
    latitude: Angle = Field(ge=-90.0, le=90.0, description="degrees north")
    longitude: Angle = Field(ge=-180.0, le=180.0, description="degrees east")
    altitude: Length = Field(0.0, ge=-500.0, le=9000.0, description="m above sea level")
    utc_offset: float = Field(ge=-12.0, le=14.0, description="h, local standard time minus UTC")
    ground_albedo: Fraction = Field(0.2, ge=0.0, le=1.0, description="solar reflectance of the ground")


class Weather(_Model):
    """Weather input and the simulated period."""

    file: str = Field(description="weather file path (relative to the scenario file) or 'demo:NAME'")
    start: DateText | None = Field(None, description="first day or instant (ISO 8601, local standard time)")
    end: DateText | None = Field(None, description="last day (inclusive) or end instant (ISO 8601)")
    sky_model: Literal["berdahl-martin", "swinbank"] = "berdahl-martin"

    @model_validator(mode="after")
    def _file(self):
        if not self.file.strip():
            raise ValueError("file: empty; give a weather file, pvlib:FILE or demo:NAME")
        if len(self.file) > 4096 or any(ord(c) < 32 for c in self.file):
            raise ValueError("file: not a file name (too long, or holds control characters such as a tab or a "
                             "line break)")
        return self


class Layer(_Model):
    """One roof layer: a named material with optional overrides (a covering also takes a finish)."""

    material: str
    finish: str | None = Field(None, description="roof covering's finish or colour: its optics preset "
                                                 "(see materials.COVERING_FINISHES); default the material's first")
    thickness: Length | None = Field(None, gt=0.0, le=1.0, description="m")
    density: Density | None = Field(None, gt=0.0, le=20000.0, description="kg/m3")
    conductivity: Conductivity | None = Field(None, gt=0.0, le=1000.0, description="W/(m K)")
    specific_heat: SpecificHeat | None = Field(None, gt=0.0, le=20000.0, description="J/(kg K)")

    @model_validator(mode="after")
    def _known_material(self):
        if self.material not in MATERIALS:
            raise ValueError(f"material: unknown material {self.material!r}; known: {', '.join(sorted(MATERIALS))}")
        finishes = COVERING_FINISHES.get(self.material, {})
        if self.finish is not None and self.finish not in finishes:
            known = ", ".join(finishes) if finishes else "none (it is not a roof covering)"
            raise ValueError(f"finish: unknown finish {self.finish!r} for {self.material}; known: {known}")
        return self

    def prop(self, name: str) -> float:
        """The layer's property in SI: the override if given, else the material default."""
        value = getattr(self, name)
        return MATERIALS[self.material][name] if value is None else value


class Plane(_Model):
    """One roof plane."""

    name: str = Field(max_length=100)
    area: Area = Field(gt=0.0, le=10000.0, description="m2, sloped area")
    tilt: Angle = Field(ge=0.0, lt=90.0, description="degrees from horizontal, or pitch 'rise/12'")
    azimuth: Angle = Field(ge=0.0, le=360.0, description="degrees clockwise from north the plane faces")
    perimeter: Length | None = Field(None, gt=0.0, le=2000.0, description="m; default 4*sqrt(area)")


class Roof(_Model):
    """Roof planes, their layers and surface properties."""

    planes: list[Plane] = Field(min_length=1, max_length=32)
    covering: Layer = Layer(material="asphalt-shingle")
    sheathing: Layer = Layer(material="osb")
    absorptance: Fraction | None = Field(
        None, gt=0.0, le=1.0, description="solar absorptance of the covering (default: its finish's preset)")
    emittance: Fraction | None = Field(
        None, gt=0.0, le=1.0, description="thermal emittance of the covering (default: its finish's preset)")
    underside_emittance: Fraction = Field(0.90, gt=0.0, le=1.0,
                                          description="thermal emittance of the deck underside")
    shape: Literal["gable", "hip"] | None = Field(
        None, description="gable (a triangular section: one or two sloped planes) or hip (slopes on all sides); "
                          "default inferred from the planes: one or two make a gable, more a hip")
    surface_texture: Literal["coarse", "granular", "textured", "planed", "fine", "glassy"] | None = Field(
        None, description="texture of the covering for wind convection: coarse (stucco), granular (brick, "
                          "granulated shingles), textured (concrete, tile), planed (wood), fine (smooth plaster), "
                          "glassy (glass, smooth metal, paint); default: the finish's preset")

    @model_validator(mode="after")
    def _has_optics(self):
        self.optics()  # every optical property given, or a preset for it
        return self

    def optics(self) -> tuple[dict, list[str]]:
        """The covering's absorptance, emittance and surface texture: each key given in the scenario, else its
        finish's preset (materials.COVERING_FINISHES); and a note saying which came from the preset."""
        finishes = COVERING_FINISHES.get(self.covering.material)
        finish = self.covering.finish or (next(iter(finishes)) if finishes else None)
        preset = finishes[finish] if finishes else {}
        values, taken = {}, []
        for key in ("absorptance", "emittance", "surface_texture"):
            given = getattr(self, key)
            if given is None and key not in preset:
                raise ValueError(f"roof.{key}: needed (the covering {self.covering.material!r} has no preset)")
            values[key] = given if given is not None else preset[key]
            if given is None:
                taken.append(f"{key} {values[key]}")
        notes = ([f"roof covering {self.covering.material}, {finish}: {', '.join(taken)} from its preset"]
                 if taken else [])
        return values, notes


#: The tallest attic a scenario may describe, floor to ridge [m] (physical sense for a house, generous).
MAX_ATTIC_HEIGHT = 30.0


class Attic(_Model):
    """The attic volume and its framing."""

    floor_area: Area = Field(ge=1.0, le=20000.0, description="m2, attic floor = ceiling area")
    volume: Volume = Field(ge=1.0, le=200000.0, description="m3 of attic air")
    framing_mass: Mass = Field(gt=0.0, le=1e6, description="kg of wood framing (rafters, trusses, gables)")
    framing_area: Area = Field(gt=0.0, le=1e5, description="m2 of framing surface exposed to attic air")
    floor_emittance: Fraction = Field(0.90, gt=0.0, le=1.0,
                                      description="thermal emittance of the insulation top")
    ridge_height: Length | None = Field(
        None, gt=0.0, le=MAX_ATTIC_HEIGHT, description="m above the attic floor; default the height that gives the volume for the "
                                  "roof's shape (gable: 2 V / A)")
    air_layers: Literal[1, 2] = Field(2, description="1 = well-mixed attic air, 2 = upper and lower layers")
    upper_volume_fraction: Fraction | None = Field(
        None, gt=0.0, lt=1.0, description="override: share of the air in the upper layer (default: the share "
                                           "above mid-height from the roof's shape, a gable 1/4)")
    layer_mixing_ach: float = Field(
        1.0, ge=0.0, le=10000.0, description="1/h, exchange between layers in stable stratification")
    fan_mixing_ratio: float = Field(
        1.0, ge=0.0, le=100.0, description="extra exchange between layers while the fan runs, x fan flow")

    @model_validator(mode="after")
    def _height(self):
        # an attic's air fits under its roof: no more than a box of the ridge height over the floor, and a
        # mean height (volume / floor) within the tallest attic's (common practice, no source)
        mean = self.volume / self.floor_area
        if self.ridge_height is not None and self.volume > self.floor_area * self.ridge_height * (1 + 1e-9):
            raise ValueError(f"volume: {self.volume:g} m3 does not fit under a ridge {self.ridge_height:g} m high "
                             f"over {self.floor_area:g} m2 of floor (at most {self.floor_area * self.ridge_height:g}"
                             f" m3, a box that high)")
        if mean > MAX_ATTIC_HEIGHT / 2:
            raise ValueError(f"volume: {self.volume:g} m3 over {self.floor_area:g} m2 of floor is a mean height of "
                             f"{mean:.3g} m; an attic's mean height is at most {MAX_ATTIC_HEIGHT / 2:g} m "
                             f"(a gable {MAX_ATTIC_HEIGHT:g} m high at the ridge)")
        return self


class Ceiling(_Model):
    """Insulation over gypsum, with the rooms below held at a setpoint."""

    insulation: RValue = Field(ge=0.01, le=35.0, description="m2K/W, or 'R-38' (IP) / 'RSI 6.7'; 0.01 for none, "
                                                              "at most R-199 (some 1.5 m of loose fill)")
    insulation_density: Density = Field(12.0, gt=0.0, le=1000.0, description="kg/m3")
    gypsum: Layer = Layer(material="gypsum")
    room_temperature: Temperature = Field(24.0, ge=5.0, le=40.0,
                                          description="degC, cooling setpoint of the rooms below")
    room_film: RValue = Field(0.16, gt=0.0, le=2.0,
                              description="m2K/W, room-side surface film (heat flow down, still air)")
    leakage_area: Area | None = Field(None, gt=0.0, le=10000.0,
                                      description="m2, effective leakage area of the ceiling at 4 Pa "
                                                  "(at most the attic floor)")
    leakage_exponent: float = Field(0.65, ge=0.5, le=1.0)


class Opening(_Model):
    """A passive vent between outdoors and the attic."""

    name: str = Field(max_length=100)
    kind: Literal["soffit", "gable", "ridge", "roof-vent"]
    net_free_area: Area = Field(gt=0.0, le=1000.0, description="m2 of net free area")
    height: Length = Field(ge=0.0, le=MAX_ATTIC_HEIGHT, description="m, centre of the opening above the attic "
                                                                     "floor")
    discharge_coefficient: Fraction = Field(0.61, gt=0.0, le=1.0)
    wind_pressure_coefficient: float | None = Field(None, ge=-2.0, le=2.0,
                                                    description="Cp; default by kind")
    role: Literal["intake", "exhaust"] | None = None


class Vents(_Model):
    """Passive ventilation: a baseline air change, or the openings themselves."""

    passive_ach: float = Field(1.5, ge=0.0, le=60.0,
                               description="attic air changes per hour (used when no openings are given)")
    openings: list[Opening] = Field(default_factory=list, max_length=100)


#: The largest fan a scenario may describe: 100 m3/s (212,000 cfm, several hundred times an attic fan's) and
#: 20 kW (physical sense, generous; an ordinary attic fan is checked by scenario/plausibility.py).
MAX_FAN_FLOW = 100.0
MAX_FAN_POWER = 20000.0
CurvePressure = Annotated[float, _q("pressure"), Field(ge=0.0, le=5000.0)]
CurveFlow = Annotated[float, _q("flow"), Field(ge=0.0, le=MAX_FAN_FLOW)]
CurvePower = Annotated[float, _q("power"), Field(gt=0.0, le=MAX_FAN_POWER)]


class Fan(_Model):
    """The powered attic ventilator: a rated flow, or its published curve (needed with openings)."""

    enabled: bool = True
    flow: Flow | None = Field(None, gt=0.0, le=MAX_FAN_FLOW,
                              description="m3/s delivered when running (simple airflow)")
    power: Power = Field(gt=0.0, le=MAX_FAN_POWER, description="W electric when running")
    curve_pressure: list[CurvePressure] | None = Field(None, max_length=100,
                                                       description="Pa, static pressures of the curve points")
    curve_flow: list[CurveFlow] | None = Field(None, max_length=100, description="m3/s, flows at those pressures")
    curve_power: list[CurvePower] | None = Field(None, max_length=100,
                                                 description="W at those points (default: power)")
    speed_ratio: float = Field(1.0, gt=0.0, le=2.0, description="speed relative to the curve (fan laws)")
    height: Length = Field(2.0, ge=0.0, le=MAX_ATTIC_HEIGHT, description="m above the attic floor")
    kind: Literal["gable", "roof-vent", "ridge"] = "gable"
    idle_area: Area = Field(0.0, ge=0.0, le=100.0, description="m2 free area through the stopped fan")
    diameter: Length = Field(0.36, gt=0.0, le=5.0, description="m, fan opening (sets the exhaust stream speed)")
    max_starts_per_hour: float = Field(
        6.0, gt=0.0, le=120.0, description="starts the motor may make in any 60 minutes (warn above)")
    spin_up: Duration = Field(0.0, ge=0.0, le=600.0,
                              description="s, time constant of the motor's first-order spin-up (0: full speed at once)")
    coast_down: Duration = Field(0.0, ge=0.0, le=3600.0,
                                 description="s, time constant of the blades' first-order coast-down after "
                                             "switch-off (0: stopped at once)")
    start_energy: Energy | None = Field(None, ge=0.0, le=1e6,
                                        description="J each start costs beyond the running power (inrush)")
    locked_rotor_current: Current | None = Field(
        None, gt=0.0, le=200.0, description="A drawn at standstill (the nameplate's locked-rotor amps), with "
                                            "locked_rotor_time: the start energy from them")
    locked_rotor_time: Duration | None = Field(None, gt=0.0, le=60.0,
                                               description="s the locked-rotor current lasts at a start")
    locked_rotor_power_factor: float = Field(0.5, gt=0.0, le=1.0,
                                             description="power factor at standstill (for the start energy)")
    supply_voltage: Voltage = Field(120.0, gt=0.0, le=1000.0, description="V, the motor's mains supply (for the "
                                                                        "start energy)")

    @model_validator(mode="after")
    def _curve(self):
        if (self.curve_pressure is None) != (self.curve_flow is None):
            raise ValueError("give both curve_pressure and curve_flow, or neither")
        if self.curve_flow is not None:
            if len(self.curve_flow) != len(self.curve_pressure) or len(self.curve_flow) < 2:
                raise ValueError("curve_pressure and curve_flow need the same number (>= 2) of points")
            if self.curve_power is not None and len(self.curve_power) != len(self.curve_flow):
                raise ValueError("curve_power needs one value per curve point")
        elif self.flow is None:
            raise ValueError("give the fan's rated flow, or its curve (curve_pressure and curve_flow)")
        if self.start_energy is not None and self.locked_rotor_current is not None:
            raise ValueError("give the start energy either as start_energy or from locked_rotor_current and "
                             "locked_rotor_time, not both")
        if (self.locked_rotor_current is None) != (self.locked_rotor_time is None):
            raise ValueError("locked_rotor_current and locked_rotor_time go together: the start energy needs both")
        return self

    @property
    def start_energy_j(self) -> float:
        """Energy each start costs beyond the running power [J]: ``start_energy``, or from the locked-rotor
        current, (V I_LR pf_LR - P) t_LR (the real power drawn at standstill, less the running power it
        replaces, over the time it lasts; 0 when not given)."""
        if self.start_energy is not None:
            return self.start_energy
        if self.locked_rotor_current is None:
            return 0.0
        real = self.supply_voltage * self.locked_rotor_current * self.locked_rotor_power_factor
        return max(real - self.power, 0.0) * self.locked_rotor_time

    @property
    def rated_flow(self) -> float:
        """Flow used by the simple airflow form: the rated flow, else the curve's free-air flow [m3/s]."""
        return self.flow if self.flow is not None else self.curve_flow[int(np.argmin(self.curve_pressure))]


class Sensor(_Model):
    """The thermistor: where it is, and its thermal behaviour.

    Without ``body`` it is a first-order mass with a fixed time constant and dissipation constant; with a
    ``body`` preset its coupling follows the local air speed (sphere/cylinder convection correlations).
    """

    placement: Literal[tuple(PLACEMENTS)] = Field(  # type: ignore[valid-type]
        "mid", description="where the sensor sits: " + "; ".join(f"{p.name}: {p.sees}" for p in PLACEMENTS.values()))
    body: Literal["epoxy-bead-2mm", "glass-bead-1mm", "disc-5mm", "probe-6mm"] | None = None
    time_constant: Duration = Field(20.0, gt=0.0, le=3600.0, description="s, in attic air (without body)")
    dissipation_constant: Conductance = Field(0.0015, gt=0.0, le=10.0,
                                              description="W/K, to attic air (without body)")
    self_heating: Power = Field(0.0, ge=0.0, le=1.0, description="W dissipated in the sensor (setpoints)")
    contact_conductance: Conductance = Field(0.005, gt=0.0, le=100.0,
                                             description="W/K to the deck (placement deck)")
    enclosure_conductance: Conductance = Field(0.25, gt=0.0, le=1000.0, description="W/K, control box to attic air")
    enclosure_capacity: Annotated[float, _q("heat_capacity")] = Field(
        400.0, gt=0.0, le=1e7, description="J/K of the control box")
    triac_loss: Power | None = Field(None, ge=0.0, le=1000.0, description="W heating the box while the fan runs")


Thermostat = Annotated[Union[SetpointThermostat, CircuitThermostat], Field(discriminator="kind")]


class Simulation(_Model):
    """Numerical and reporting settings."""

    output_step: Duration = Field(60.0, ge=1.0, le=3600.0, description="s between output rows")
    short_cycle: Duration = Field(300.0, gt=0.0, le=3600.0,
                                  description="s; complete runs shorter than this are short cycles")
    spinup_days: int = Field(2, ge=0, le=30, description="days of the first day repeated before the period")
    rtol: float = Field(1e-6, ge=1e-10, le=1e-2, description="relative tolerance of the reference solver")
    max_step: Duration = Field(300.0, ge=1.0, le=3600.0, description="s, largest integrator step")
    airflow_step: Duration = Field(300.0, ge=10.0, le=3600.0,
                                   description="s between re-solves of the vent/fan pressure balance")
    solver: Literal["fast", "reference"] = Field(
        "fast", description="fast: exact discretisation of the linearised network; reference: LSODA")
    fast_tolerance: TempDiff = Field(
        5e-3, ge=1e-5, le=0.1,
        description="K, error allowed per segment of the fast solver (tighten for a chattering thermostat)")


class Scenario(_Model):
    """A complete scenario.

    ``input_warnings`` holds what :func:`atticsim.scenario.load.load_scenario` found plausible but
    suspicious in the input (a bare number that looks like an IP value, a fan far from the trade's sizing);
    it is not part of the scenario's content (not dumped, not hashed).
    """

    _input_warnings: tuple = PrivateAttr(default=())

    @property
    def input_warnings(self) -> tuple:
        """Plausibility warnings found when the scenario was loaded (plain sentences)."""
        return self._input_warnings

    @model_validator(mode="after")
    def _airflow_needs(self):
        if self.vents.openings and self.fan.curve_flow is None:
            raise ValueError("fan: with vents.openings the fan needs its curve (curve_pressure, curve_flow)")
        leak = self.ceiling.leakage_area
        if leak is not None and leak > self.attic.floor_area:
            raise ValueError(f"ceiling.leakage_area: {leak:g} m2 is more than the whole ceiling "
                             f"(attic.floor_area {self.attic.floor_area:g} m2)")
        return self

    house: House = House()
    site: Site
    weather: Weather
    roof: Roof
    attic: Attic
    ceiling: Ceiling
    vents: Vents = Vents()
    fan: Fan
    sensor: Sensor = Sensor()
    thermostat: Thermostat
    simulation: Simulation = Simulation()
