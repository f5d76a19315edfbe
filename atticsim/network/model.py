"""The attic's lumped thermal network: nodes, capacities, heat flows and the energy books.

Nodes (temperatures in degC in the state vector):

- per roof plane p: ``cover_p`` (roofing layer, outer surface) and ``deck_p`` (sheathing, inner surface);
- ``air`` (one well-mixed attic air node), ``framing`` (rafters, trusses, gables);
- ``ceiling_top`` (insulation top surface, carrying half the insulation's heat capacity) and
  ``gypsum`` (gypsum board plus the other half of the insulation);
- ``sensor`` (the thermistor, a small mass coupled to attic air; kept out of the building's books).

Heat flows [W] (positive into the node written first):

- exterior: absorbed solar alpha*I_poa*A; long-wave to sky and ground eps*sigma*A*F*(T^4 - T_x^4) with
  view factors (1 +/- cos tilt)/2 and the ground at air temperature; convection by the TARP sum of
  Sparrow's forced term and Walton's natural term (pure convection, radiation kept separate);
- conduction cover->deck through half of each layer's resistance, insulation top->gypsum through the
  insulation's R-value, gypsum->rooms through the room-side film (plus half the gypsum);
- interior: Walton natural convection deck/ceiling/framing -> air; long-wave deck <-> attic floor by
  the exact gray two-surface exchange sigma*G*(T1^4 - T2^4) (not linearised; each plane sees the share of the
  floor in proportion to its area; the framing takes no part in radiation, a simplification);
- ventilation: c_p [m_out (T_out - T_air) + m_house (T_room - T_air)] for the outdoor and house air
  entering the attic (mass flows from :mod:`atticsim.airflow.model`, held constant between airflow
  updates; what leaves carries the attic air temperature);
- sensor: dT_s/dt = (T_air - T_s)/tau + P_self/C_s with C_s = delta*tau (delta the dissipation constant).

The books integrate, as extra ODE states, the heat that crosses the boundary of the building nodes
(solar, sky, ground, exterior convection, ventilation, ceiling gain to the rooms), the fan's electric
energy, and the load that air exchanged through the ceiling puts on the rooms (sensible and latent,
outside the attic's closure); the storage change plus the attic's books must close.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from atticsim.airflow.model import AirflowModel
from atticsim.constants import CP_AIR, KELVIN, P_STANDARD, SIGMA
from atticsim.io.weather_frame import saturation_vapour_pressure
from atticsim.materials import INSULATION, WOOD_SPECIFIC_HEAT
from atticsim.network.heat_transfer import (ROUGHNESS, air_density, forced_convection_sparrow,
                                            gray_two_surface_factor, natural_convection_walton,
                                            view_factors_tilted)

#: Names of the energy books, in state order after the temperatures.
BOOKS = ("solar", "sky", "ground", "exterior_convection", "ventilation", "ceiling_gain", "fan_electric",
         "house_air_sensible", "house_air_latent")
#: Books that cross the attic's boundary (the energy closure uses these).
ATTIC_BOOKS = BOOKS[:6]
#: Forcing channels before the per-plane irradiance channels.
FORCING_BASE = ("temp_out", "temp_sky_k", "wind_speed", "temp_dew")
#: Latent heat of vaporisation at 0 degC [J/kg] (ASHRAE Handbook Fundamentals, psychrometrics chapter).
H_FG = 2501e3


@dataclass
class AtticNetwork:
    """Parameters of the network, all SI, arrays of shape (P, 1) for per-plane values."""

    plane_names: list[str]
    area: np.ndarray
    cos_tilt: np.ndarray
    perimeter: np.ndarray
    roughness: float
    absorptance: float
    emittance: float
    f_sky: np.ndarray
    f_ground: np.ndarray
    c_cover: np.ndarray          # J/K
    c_deck: np.ndarray           # J/K
    u_cover_deck: np.ndarray     # W/(m2 K)
    g_deck_floor: np.ndarray     # m2 (radiative exchange factor)
    floor_area: float
    c_air: float
    framing_area: float
    c_framing: float
    c_ceiling_top: float
    c_gypsum: float
    r_insulation: float          # m2K/W
    r_room: float                # m2K/W (room film + half gypsum)
    room_temperature: float      # degC
    room_humidity_ratio: float   # kg/kg
    airflow: object              # AirflowModel
    sensor_tau: float            # s
    sensor_capacity: float       # J/K
    sensor_power: object         # W, or a function (sensor temp, fan_on) -> W
    pressure: float = P_STANDARD
    node_names: list[str] = field(default_factory=list)
    air: object = None           # the AirflowState held by the event loop

    @property
    def n_planes(self) -> int:
        return len(self.plane_names)

    @property
    def n_nodes(self) -> int:
        return 2 * self.n_planes + 5

    @property
    def index(self) -> dict[str, int]:
        return {name: i for i, name in enumerate(self.node_names)}

    @property
    def capacities(self) -> np.ndarray:
        """Heat capacity of each building node [J/K] (the sensor excluded: NaN)."""
        return np.concatenate([self.c_cover.ravel(), self.c_deck.ravel(),
                               [self.c_air, self.c_framing, self.c_ceiling_top, self.c_gypsum, np.nan]])

    def flows(self, temps, forcing, fan_on, air=None):
        """Every heat flow of the network [W], vectorised over trailing (time) axes.

        Parameters
        ----------
        temps : numpy.ndarray
            Node temperatures [degC], shape (n_nodes, m).
        forcing : numpy.ndarray
            Forcing channels (:data:`FORCING_BASE` then one irradiance row per plane), shape (4 + P, m).
        fan_on : numpy.ndarray
            Fan state, shape (m,).
        air : AirflowState or namespace of arrays, optional
            Air flows; default the state held by the event loop (``self.air``).

        Returns
        -------
        dict of numpy.ndarray
            Named flows; per-plane flows have shape (P, m), the others (m,).
        """
        P = self.n_planes
        t_cov, t_deck = temps[:P], temps[P:2 * P]
        t_air, t_fr, t_ct, t_gyp, t_s = temps[2 * P:2 * P + 5]
        t_out, t_sky_k, wind, t_dew = forcing[0], forcing[1], forcing[2], forcing[3]
        poa = forcing[4:4 + P]
        air = self.air if air is None else air
        k_cov = t_cov + KELVIN
        k_out = t_out + KELVIN
        area = self.area

        q_solar = self.absorptance * poa * area
        q_sky = self.emittance * SIGMA * area * self.f_sky * (t_sky_k**4 - k_cov**4)
        q_ground = self.emittance * SIGMA * area * self.f_ground * (k_out**4 - k_cov**4)
        h_ext = (forced_convection_sparrow(wind, self.perimeter, area, self.roughness)
                 + natural_convection_walton(t_cov - t_out, self.cos_tilt, True))
        q_ext = h_ext * area * (t_out - t_cov)
        q_cond = self.u_cover_deck * area * (t_cov - t_deck)
        h_deck = natural_convection_walton(t_deck - t_air, self.cos_tilt, False)
        q_deck_air = h_deck * area * (t_deck - t_air)
        q_deck_floor = SIGMA * self.g_deck_floor * ((t_deck + KELVIN)**4 - (t_ct + KELVIN)**4)
        h_fr = natural_convection_walton(t_fr - t_air, 0.0, True)
        q_frame_air = h_fr * self.framing_area * (t_fr - t_air)
        h_ct = natural_convection_walton(t_ct - t_air, 1.0, True)
        q_ceiling_air = h_ct * self.floor_area * (t_ct - t_air)
        q_vent = CP_AIR * (air.outdoor_in * (t_out - t_air) + air.house_in * (self.room_temperature - t_air))
        # Load on the rooms from air exchanged through the ceiling: drawn house air is replaced by outdoor
        # air through the envelope; attic air entering the house brings its heat (ASHRAE Handbook
        # Fundamentals, ventilation and infiltration chapter, infiltration heat gain).
        q_house_s = CP_AIR * (air.house_in * (t_out - self.room_temperature)
                              + air.attic_to_house * (t_air - self.room_temperature))
        w_out = humidity_ratio(t_dew, self.pressure)
        q_house_l = H_FG * (air.house_in + air.attic_to_house) * (w_out - self.room_humidity_ratio)
        q_insulation = self.floor_area * (t_ct - t_gyp) / self.r_insulation
        q_room = self.floor_area * (t_gyp - self.room_temperature) / self.r_room
        q_sensor = self.sensor_capacity / self.sensor_tau * (t_air - t_s)
        p_self = self.sensor_power(t_s, fan_on) if callable(self.sensor_power) else self.sensor_power
        p_fan = np.asarray(fan_on, dtype=float) * air.fan_power
        return {
            "solar": q_solar, "sky": q_sky, "ground": q_ground, "exterior_convection": q_ext,
            "cover_deck": q_cond, "deck_air": q_deck_air, "deck_floor": q_deck_floor,
            "framing_air": q_frame_air, "ceiling_air": q_ceiling_air, "ventilation": q_vent,
            "insulation": q_insulation, "ceiling_gain": q_room, "sensor": q_sensor,
            "fan_electric": p_fan, "house_air_sensible": q_house_s, "house_air_latent": q_house_l,
            "sensor_self_heating": p_self,
        }

    def derivatives(self, temps, forcing, fan_on):
        """Time derivatives of node temperatures [K/s] and of the books [W], shape (n_nodes + books, m)."""
        q = self.flows(temps, forcing, fan_on)
        d_cover = (q["solar"] + q["sky"] + q["ground"] + q["exterior_convection"] - q["cover_deck"]) / self.c_cover
        d_deck = (q["cover_deck"] - q["deck_air"] - q["deck_floor"]) / self.c_deck
        d_air = (q["deck_air"].sum(axis=0) + q["framing_air"] + q["ceiling_air"] + q["ventilation"]) / self.c_air
        d_fr = -q["framing_air"] / self.c_framing
        d_ct = (q["deck_floor"].sum(axis=0) - q["ceiling_air"] - q["insulation"]) / self.c_ceiling_top
        d_gyp = (q["insulation"] - q["ceiling_gain"]) / self.c_gypsum
        d_s = (q["sensor"] + q["sensor_self_heating"]) / self.sensor_capacity
        books = [q["solar"].sum(axis=0), q["sky"].sum(axis=0), q["ground"].sum(axis=0),
                 q["exterior_convection"].sum(axis=0), q["ventilation"], q["ceiling_gain"],
                 q["fan_electric"] * np.ones_like(d_air), q["house_air_sensible"] * np.ones_like(d_air),
                 q["house_air_latent"] * np.ones_like(d_air)]
        return np.vstack([d_cover, d_deck, d_air, d_fr, d_ct, d_gyp, d_s, *books])


def humidity_ratio(temp_dew, pressure):
    """Humidity ratio W = 0.621945 p_w / (p - p_w) [kg/kg], p_w the saturation pressure at the dew point
    (ASHRAE Handbook Fundamentals, psychrometrics chapter, eq. 20 and 36)."""
    p_w = saturation_vapour_pressure(temp_dew)
    return 0.621945 * p_w / (pressure - p_w)


def humidity_ratio_from_rh(temp, relative_humidity, pressure):
    """Humidity ratio [kg/kg] at a temperature [degC] and relative humidity [%] (same source)."""
    p_w = relative_humidity / 100.0 * saturation_vapour_pressure(temp)
    return 0.621945 * p_w / (pressure - p_w)


def sensor_power(scenario):
    """Power heating the sensor: the circuit's divider dissipation at the thermistor's temperature and the
    comparator's state (exact node solution, atticsim.circuit), or the scenario's constant self_heating."""
    th = scenario.thermostat
    if th.kind == "circuit":
        from atticsim.circuit import thermistor_power_function

        return thermistor_power_function(th.circuit_params())
    return scenario.sensor.self_heating


def build_network(scenario, pressure: float = P_STANDARD) -> AtticNetwork:
    """Build the network's parameters from a validated scenario (see the module docstring)."""
    roof, attic, ceiling = scenario.roof, scenario.attic, scenario.ceiling
    planes = roof.planes
    col = lambda values: np.asarray(values, dtype=float).reshape(-1, 1)  # noqa: E731
    area = col([p.area for p in planes])
    tilt = np.array([p.tilt for p in planes])
    f_sky, f_ground = view_factors_tilted(tilt)
    perimeter = col([p.perimeter if p.perimeter else 4.0 * np.sqrt(p.area) for p in planes])

    def layer_capacity_and_r(layer):
        thickness = layer.prop("thickness")
        return (layer.prop("density") * layer.prop("specific_heat") * thickness,  # J/(m2 K)
                thickness / layer.prop("conductivity"))  # m2K/W

    cap_cov, r_cov = layer_capacity_and_r(roof.covering)
    cap_sh, r_sh = layer_capacity_and_r(roof.sheathing)
    cap_gyp, r_gyp = layer_capacity_and_r(ceiling.gypsum)
    # Insulation depth that carries the R-value at the default conductivity sets its mass.
    cap_ins = ceiling.insulation * INSULATION["conductivity"] * ceiling.insulation_density * INSULATION["specific_heat"]
    total_area = float(area.sum())
    floor_share = attic.floor_area * area / total_area
    g = np.array([gray_two_surface_factor(fs, attic.floor_emittance, a, roof.underside_emittance)
                  for fs, a in zip(floor_share.ravel(), area.ravel())]).reshape(-1, 1)
    # Attic air capacity at 35 degC (rho ~1.146 kg/m3); its small change with temperature is ignored.
    c_air = float(air_density(35.0, pressure)) * CP_AIR * attic.volume
    sensor = scenario.sensor
    names = ([f"cover_{p.name}" for p in planes] + [f"deck_{p.name}" for p in planes]
             + ["air", "framing", "ceiling_top", "gypsum", "sensor"])
    return AtticNetwork(
        plane_names=[p.name for p in planes], area=area, cos_tilt=col(np.cos(np.radians(tilt))),
        perimeter=perimeter, roughness=ROUGHNESS[roof.roughness], absorptance=roof.absorptance,
        emittance=roof.emittance, f_sky=col(f_sky), f_ground=col(f_ground),
        c_cover=cap_cov * area, c_deck=cap_sh * area,
        u_cover_deck=np.full_like(area, 1.0 / (0.5 * r_cov + 0.5 * r_sh)),
        g_deck_floor=g, floor_area=attic.floor_area, c_air=c_air, framing_area=attic.framing_area,
        c_framing=attic.framing_mass * WOOD_SPECIFIC_HEAT,
        c_ceiling_top=0.5 * cap_ins * attic.floor_area,
        c_gypsum=(cap_gyp + 0.5 * cap_ins) * attic.floor_area,
        r_insulation=ceiling.insulation, r_room=ceiling.room_film + 0.5 * r_gyp,
        room_temperature=ceiling.room_temperature,
        room_humidity_ratio=float(humidity_ratio_from_rh(ceiling.room_temperature,
                                                         scenario.house.indoor_relative_humidity, pressure)),
        airflow=AirflowModel(scenario, pressure),
        sensor_tau=sensor.time_constant, sensor_capacity=sensor.dissipation_constant * sensor.time_constant,
        sensor_power=sensor_power(scenario), pressure=pressure, node_names=names,
    )
