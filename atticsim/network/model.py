"""The attic's lumped thermal network: nodes, capacities, heat flows and the energy books.

Nodes (temperatures in degC in the state vector):

- per roof plane p: ``cover_p`` (roofing layer, outer surface) and ``deck_p`` (sheathing, inner surface);
- ``air`` (one well-mixed attic air node), ``framing`` (rafters, trusses, gables);
- ``ceiling_top`` (insulation top surface, carrying half the insulation's heat capacity) and
  ``gypsum`` (gypsum board plus the other half of the insulation);
- ``sensor`` (the thermistor, a small mass coupled to attic air; kept out of the building's books).

Heat flows [W] (positive into the node written first):

- exterior: absorbed solar alpha*I_poa*A; long-wave to sky and ground eps*sigma*A*F*(T^4 - T_x^4) with
  view factors (1 +/- cos tilt)/2 and the ground at air temperature; convection by the sum of
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
from atticsim.constants import CP_AIR, GRAVITY, KELVIN, P_STANDARD, SIGMA
from atticsim.air import H_FG, air_density, humidity_ratio, humidity_ratio_from_rh
from atticsim.materials import INSULATION, WOOD_SPECIFIC_HEAT
from atticsim.network.placement import PLACEMENTS
from atticsim.network.heat_transfer import (SURFACE_TEXTURE, forced_convection_sparrow,
                                            gray_two_surface_factor, natural_convection_walton,
                                            view_factors_tilted)

#: Names of the energy books, in state order after the temperatures.
BOOKS = ("solar", "sky", "ground", "exterior_convection", "ventilation", "ceiling_gain", "triac_heat",
         "fan_electric", "house_air_sensible", "house_air_latent")
#: Books that cross the attic's boundary (the energy closure uses these).
ATTIC_BOOKS = BOOKS[:7]
#: Forcing channels before the per-plane irradiance channels.
FORCING_BASE = ("temp_out", "temp_sky_k", "wind_speed", "temp_dew")


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
    c_air: float                 # J/K, all attic air
    upper_fraction: float        # share of the air (and of the deck and framing area) in the upper layer
    layers: int                  # 1 or 2
    layer_mixing: float          # m3/s, exchange between layers in stable stratification
    fan_mixing_ratio: float      # extra exchange while the fan runs, x fan flow
    interface_area: float        # m2, horizontal area between the layers
    framing_area: float
    c_framing: float
    c_ceiling_top: float
    c_gypsum: float
    r_insulation: float          # m2K/W
    r_room: float                # m2K/W (room film + half gypsum)
    room_temperature: float      # degC
    room_humidity_ratio: float   # kg/kg
    airflow: object              # AirflowModel
    placement: str
    sensor_body: object          # atticsim.sensor.body.SensorBody or None
    sensor_conductance: float    # W/K to local air (without a body)
    sensor_capacity: float       # J/K
    sensor_power: object         # W, or a function (sensor temp, fan_on) -> W
    contact_conductance: float   # W/K (deck placement)
    fan_area: float              # m2
    intake_area: float           # m2
    enclosure_conductance: float = 0.0  # W/K
    c_enclosure: float = 0.0     # J/K
    triac_loss: float = 0.0      # W while the fan runs
    pressure: float = P_STANDARD
    node_names: list[str] = field(default_factory=list)
    air: object = None           # the AirflowState held by the event loop

    def __post_init__(self):
        self.index = {name: i for i, name in enumerate(self.node_names)}
        one = self.layers == 1
        self.i_lower = self.index["air" if one else "air_lower"]
        self.i_upper = self.index["air" if one else "air_upper"]
        self.f_up = 0.5 if one else self.upper_fraction  # deck/framing area share; irrelevant when one node
        self.w_up = 0.0 if one else self.upper_fraction  # air volume share
        self.i_enclosure = self.index.get("enclosure")
        self.place = PLACEMENTS[self.placement]

    @property
    def n_planes(self) -> int:
        return len(self.plane_names)

    @property
    def n_nodes(self) -> int:
        return len(self.node_names)

    @property
    def capacities(self) -> np.ndarray:
        """Heat capacity of each building node [J/K] (the sensor excluded: NaN)."""
        c = np.full(self.n_nodes, np.nan)
        P = self.n_planes
        c[:P], c[P:2 * P] = self.c_cover.ravel(), self.c_deck.ravel()
        c[self.i_lower] = self.c_air * (1.0 - self.w_up)
        if self.layers == 2:
            c[self.i_upper] = self.c_air * self.w_up
        c[self.index["framing"]], c[self.index["ceiling_top"]] = self.c_framing, self.c_ceiling_top
        c[self.index["gypsum"]] = self.c_gypsum
        if self.i_enclosure is not None:
            c[self.i_enclosure] = self.c_enclosure
        return c

    def mean_air(self, temps):
        """Volume-weighted mean attic air temperature [degC]."""
        return (1.0 - self.w_up) * temps[self.i_lower] + self.w_up * temps[self.i_upper]

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
            Named flows [W] (per-plane flows shape (P, m), others (m,)); ``*_upper`` and ``*_lower``
            are the parts that reach each air layer.
        """
        P = self.n_planes
        idx = self.index
        t_cov, t_deck = temps[:P], temps[P:2 * P]
        t_lo, t_up = temps[self.i_lower], temps[self.i_upper]
        t_fr, t_ct, t_gyp, t_s = temps[idx["framing"]], temps[idx["ceiling_top"]], temps[idx["gypsum"]], temps[-1]
        t_out, t_sky_k, wind, t_dew = forcing[0], forcing[1], forcing[2], forcing[3]
        poa = forcing[4:4 + P]
        air = self.air if air is None else air
        k_cov = t_cov + KELVIN
        k_out = t_out + KELVIN
        area = self.area
        fan = np.asarray(fan_on, dtype=float)

        q_solar = self.absorptance * poa * area
        q_sky = self.emittance * SIGMA * area * self.f_sky * (t_sky_k**4 - k_cov**4)
        q_ground = self.emittance * SIGMA * area * self.f_ground * (k_out**4 - k_cov**4)
        h_ext = (forced_convection_sparrow(wind, self.perimeter, area, self.roughness)
                 + natural_convection_walton(t_cov - t_out, self.cos_tilt, True))
        q_ext = h_ext * area * (t_out - t_cov)
        q_cond = self.u_cover_deck * area * (t_cov - t_deck)
        # Deck underside: the upper share of each plane (above the layer interface) faces the upper air.
        f_up = self.f_up
        q_deck_up = natural_convection_walton(t_deck - t_up, self.cos_tilt, False) * f_up * area * (t_deck - t_up)
        q_deck_lo = natural_convection_walton(t_deck - t_lo, self.cos_tilt, False) * (1 - f_up) * area * (t_deck - t_lo)
        q_deck_floor = SIGMA * self.g_deck_floor * ((t_deck + KELVIN)**4 - (t_ct + KELVIN)**4)
        a_fr = self.framing_area
        q_fr_up = natural_convection_walton(t_fr - t_up, 0.0, True) * f_up * a_fr * (t_fr - t_up)
        q_fr_lo = natural_convection_walton(t_fr - t_lo, 0.0, True) * (1 - f_up) * a_fr * (t_fr - t_lo)
        q_ceiling_air = natural_convection_walton(t_ct - t_lo, 1.0, True) * self.floor_area * (t_ct - t_lo)

        # Air paths: outdoor air enters each layer at T_out, house air enters the lower layer at T_room;
        # what leaves carries the layer's temperature. The net flow F from the lower to the upper layer
        # carries the lower layer's enthalpy up (or the upper's down when F < 0).
        vent_lo = CP_AIR * (air.in_lower * (t_out - t_lo) + air.house_in * (self.room_temperature - t_lo))
        vent_up = CP_AIR * air.in_upper * (t_out - t_up)
        if self.layers == 2:
            f_lu = air.in_lower + air.house_in - air.out_lower - air.attic_to_house
            vent_up = vent_up + CP_AIR * np.maximum(f_lu, 0.0) * (t_lo - t_up)
            vent_lo = vent_lo + CP_AIR * np.maximum(-f_lu, 0.0) * (t_up - t_lo)
            # Exchange between the layers: a stable base rate, the fan's stirring, and buoyant overturning
            # when the lower layer is warmer: Q = 0.055 A sqrt(g' sqrt(A)) (Epstein 1988, exchange flow
            # through a horizontal opening, J. Fluid Mech. 189; from memory).
            # (the onset is smoothed over ~0.1 K, softplus, so the right-hand side stays differentiable)
            unstable = 0.1 * np.logaddexp(0.0, (t_lo - t_up) / 0.1)
            a_i = self.interface_area
            q_b = 0.055 * a_i * np.sqrt(GRAVITY * unstable / (0.5 * (t_lo + t_up) + KELVIN) * np.sqrt(a_i))
            q_mix_flow = self.layer_mixing + self.fan_mixing_ratio * fan * air.fan_flow + q_b
            q_mix = air_density(t_lo, self.pressure) * CP_AIR * q_mix_flow * (t_lo - t_up)
        else:
            q_mix = 0.0 * t_lo
        q_house_s = CP_AIR * (air.house_in * (t_out - self.room_temperature)
                              + air.attic_to_house * (t_lo - self.room_temperature))
        w_out = humidity_ratio(t_dew, self.pressure)
        q_house_l = H_FG * (air.house_in + air.attic_to_house) * (w_out - self.room_humidity_ratio)
        q_insulation = self.floor_area * (t_ct - t_gyp) / self.r_insulation
        q_room = self.floor_area * (t_gyp - self.room_temperature) / self.r_room

        q_triac = fan * self.triac_loss
        if self.i_enclosure is not None:
            t_enc = temps[self.i_enclosure]
            q_enc_air = self.enclosure_conductance * (t_enc - t_lo)
        else:
            t_enc, q_enc_air = t_lo, 0.0 * t_lo

        # The sensor: local conditions of its placement, then its balance.
        loc = self.sensor_local(temps, forcing, fan_on, air)
        if self.sensor_body is None:
            g_air, g_rad = self.sensor_conductance, 0.0
        else:
            body = self.sensor_body
            g_air = body._g_conv(loc.speed, loc.t_air + KELVIN, t_s + KELVIN, self.pressure)
            g_rad = body._g_rad(loc.t_rad + KELVIN, t_s + KELVIN)
        q_sensor = g_air * (loc.t_air - t_s) + g_rad * (loc.t_rad - t_s) + loc.g_contact * (loc.t_contact - t_s)
        p_self = self.sensor_power(t_s, fan_on) if callable(self.sensor_power) else self.sensor_power
        p_fan = fan * air.fan_power
        return {
            "solar": q_solar, "sky": q_sky, "ground": q_ground, "exterior_convection": q_ext,
            "cover_deck": q_cond, "deck_upper": q_deck_up, "deck_lower": q_deck_lo, "deck_floor": q_deck_floor,
            "framing_upper": q_fr_up, "framing_lower": q_fr_lo, "ceiling_air": q_ceiling_air,
            "ventilation_lower": vent_lo, "ventilation_upper": vent_up, "ventilation": vent_lo + vent_up,
            "layer_exchange": q_mix, "insulation": q_insulation, "ceiling_gain": q_room, "sensor": q_sensor,
            "fan_electric": p_fan, "house_air_sensible": q_house_s, "house_air_latent": q_house_l,
            "sensor_self_heating": p_self, "triac_heat": q_triac, "enclosure_air": q_enc_air,
            "sensor_local_air": loc.t_air, "sensor_local_speed": loc.speed,
        }

    def sensor_local(self, temps, forcing, fan_on, air=None):
        """The sensor's local conditions (air and radiant temperatures, air speed, contact) of its placement
        (:mod:`atticsim.network.placement`), vectorised like :meth:`flows` (same arguments)."""
        P = self.n_planes
        t_deck = temps[P:2 * P]
        t_lo, t_up = temps[self.i_lower], temps[self.i_upper]
        t_out = forcing[0]
        air = self.air if air is None else air
        fan = np.asarray(fan_on, dtype=float)
        t_enc = temps[self.i_enclosure] if self.i_enclosure is not None else t_lo
        a_deck = self.area / self.area.sum()
        ctx = _Context(t_upper=t_up, t_lower=t_lo, t_deck=(a_deck * t_deck).sum(axis=0),
                       t_floor=temps[self.index["ceiling_top"]], t_out=t_out, t_enclosure=t_enc, fan_on=fan > 0,
                       fan_flow=air.fan_flow, fan_area=self.fan_area,
                       intake_flow=air.in_lower / air_density(t_out, self.pressure), intake_area=self.intake_area,
                       contact_conductance=self.contact_conductance)
        return self.place(ctx)

    def derivatives(self, temps, forcing, fan_on):
        """Time derivatives of node temperatures [K/s] and of the books [W], shape (n_nodes + books, m)."""
        q = self.flows(temps, forcing, fan_on)
        P = self.n_planes
        idx = self.index
        m = temps.shape[1]
        d = np.zeros((self.n_nodes + len(BOOKS), m))
        d[:P] = (q["solar"] + q["sky"] + q["ground"] + q["exterior_convection"] - q["cover_deck"]) / self.c_cover
        d[P:2 * P] = (q["cover_deck"] - q["deck_upper"] - q["deck_lower"] - q["deck_floor"]) / self.c_deck
        lower = (q["deck_lower"].sum(axis=0) + q["framing_lower"] + q["ceiling_air"] + q["ventilation_lower"]
                 - q["layer_exchange"] + q["enclosure_air"])
        upper = q["deck_upper"].sum(axis=0) + q["framing_upper"] + q["ventilation_upper"] + q["layer_exchange"]
        if self.layers == 2:
            d[self.i_lower] = lower / (self.c_air * (1.0 - self.w_up))
            d[self.i_upper] = upper / (self.c_air * self.w_up)
        else:
            d[self.i_lower] = (lower + upper) / self.c_air
        d[idx["framing"]] = -(q["framing_upper"] + q["framing_lower"]) / self.c_framing
        d[idx["ceiling_top"]] = (q["deck_floor"].sum(axis=0) - q["ceiling_air"] - q["insulation"]) / self.c_ceiling_top
        d[idx["gypsum"]] = (q["insulation"] - q["ceiling_gain"]) / self.c_gypsum
        if self.i_enclosure is not None:
            d[self.i_enclosure] = (q["triac_heat"] - q["enclosure_air"]) / self.c_enclosure
        d[self.n_nodes - 1] = (q["sensor"] + q["sensor_self_heating"]) / self.sensor_capacity
        n = self.n_nodes
        for k, name in enumerate(BOOKS):
            v = q[name]
            d[n + k] = v.sum(axis=0) if np.ndim(v) == 2 else v
        return d


@dataclass
class _Context:
    """What a placement function may look at (see :mod:`atticsim.network.placement`)."""

    t_upper: object
    t_lower: object
    t_deck: object
    t_floor: object
    t_out: object
    t_enclosure: object
    fan_on: object
    fan_flow: object
    fan_area: float
    intake_flow: object
    intake_area: float
    contact_conductance: float


def sensor_power(scenario):
    """Power heating the sensor: the circuit's divider dissipation at the thermistor's temperature and the
    comparator's state (exact node solution, atticsim.circuit), or the scenario's constant self_heating."""
    th = scenario.thermostat
    if th.kind == "circuit":
        from atticsim.circuit import thermistor_power_function

        return thermistor_power_function(th.circuit_params())
    return scenario.sensor.self_heating


def triac_loss(scenario) -> float:
    """Heat the triac puts into the control box while the fan runs [W]: ``sensor.triac_loss`` if given,
    else the circuit's mains-side figure (P = V_T0 I_avg + r_T I_rms^2, atticsim.circuit.mains), else
    1.5 W (about 1 V across a triac carrying a 1.5 A fan; from memory)."""
    if scenario.sensor.triac_loss is not None:
        return scenario.sensor.triac_loss
    th = scenario.thermostat
    if th.kind == "circuit" and th.mains is not None:
        from atticsim.circuit.mains import triac_conduction_loss

        m = th.mains.mains_params()
        return float(triac_conduction_loss(m.fan_current, m.triac_v_t0, m.triac_r_t))
    return 1.5


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
    air_nodes = ["air"] if attic.air_layers == 1 else ["air_lower", "air_upper"]
    board = sensor.placement == "board"
    names = ([f"cover_{p.name}" for p in planes] + [f"deck_{p.name}" for p in planes]
             + air_nodes + ["framing", "ceiling_top", "gypsum"] + (["enclosure"] if board else []) + ["sensor"])
    body = None
    if sensor.body is not None:
        from atticsim.sensor.body import preset

        body = preset(sensor.body)
    openings = scenario.vents.openings
    if openings:
        intake_area = sum(o.net_free_area for o in openings if o.height < attic.layer_height or o.kind == "soffit")
    else:
        # Without described openings: the code minimum, half of 1/150 of the floor at the intakes
        # (IRC 2018 R806.2 with the usual half-high, half-low split).
        intake_area = attic.floor_area / 300.0
    return AtticNetwork(
        plane_names=[p.name for p in planes], area=area, cos_tilt=col(np.cos(np.radians(tilt))),
        perimeter=perimeter, roughness=SURFACE_TEXTURE[roof.surface_texture], absorptance=roof.absorptance,
        emittance=roof.emittance, f_sky=col(f_sky), f_ground=col(f_ground),
        c_cover=cap_cov * area, c_deck=cap_sh * area,
        u_cover_deck=np.full_like(area, 1.0 / (0.5 * r_cov + 0.5 * r_sh)),
        g_deck_floor=g, floor_area=attic.floor_area, c_air=c_air,
        upper_fraction=attic.upper_volume_fraction, layers=attic.air_layers,
        layer_mixing=attic.layer_mixing_ach * attic.volume / 3600.0, fan_mixing_ratio=attic.fan_mixing_ratio,
        # A gable attic's horizontal section at mid-height is half its floor (similar triangles).
        interface_area=0.5 * attic.floor_area,
        framing_area=attic.framing_area, c_framing=attic.framing_mass * WOOD_SPECIFIC_HEAT,
        c_ceiling_top=0.5 * cap_ins * attic.floor_area,
        c_gypsum=(cap_gyp + 0.5 * cap_ins) * attic.floor_area,
        r_insulation=ceiling.insulation, r_room=ceiling.room_film + 0.5 * r_gyp,
        room_temperature=ceiling.room_temperature,
        room_humidity_ratio=float(humidity_ratio_from_rh(ceiling.room_temperature,
                                                         scenario.house.indoor_relative_humidity, pressure)),
        airflow=AirflowModel(scenario, pressure),
        placement=sensor.placement, sensor_body=body, sensor_conductance=sensor.dissipation_constant,
        sensor_capacity=body.heat_capacity if body is not None else sensor.dissipation_constant * sensor.time_constant,
        sensor_power=sensor_power(scenario), contact_conductance=sensor.contact_conductance,
        fan_area=np.pi * scenario.fan.diameter**2 / 4.0, intake_area=intake_area,
        enclosure_conductance=sensor.enclosure_conductance if board else 0.0,
        c_enclosure=sensor.enclosure_capacity if board else 0.0,
        triac_loss=triac_loss(scenario) if board else 0.0,
        pressure=pressure, node_names=names,
    )
