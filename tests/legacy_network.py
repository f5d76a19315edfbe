"""The network's heat flows as they were written in numpy before the compiled network became their one
source, kept only to show the compiled flows equal to them (tests/test_kernel_rhs.py); to be deleted once
the network's physics changes."""

from dataclasses import dataclass

import numpy as np

from atticsim.air import H_FG, air_density, humidity_ratio
from atticsim.constants import CP_AIR, GRAVITY, KELVIN, SIGMA
from atticsim.network.heat_transfer import natural_convection_walton
from atticsim.network.kernel import BOOKS
from atticsim.network.placement import INTAKE_FULL_SPEED, STILL_ATTIC_SPEED


def forced_convection_sparrow(wind_speed, perimeter, area, roughness, windward_factor=0.75):
    v = np.maximum(np.asarray(wind_speed, dtype=float), 0.0)
    return 2.537 * windward_factor * roughness * np.sqrt(perimeter * v / area)


@dataclass
class LocalConditions:
    """What the sensor sees (arrays or floats).

    t_air : local air temperature [degC]
    speed : local air speed [m/s]
    t_rad : mean temperature of the surfaces it faces [degC]
    t_contact : temperature of a surface it touches [degC] (used with g_contact)
    g_contact : conductance to that surface [W/K] (0 when it touches nothing)
    """

    t_air: object
    speed: object
    t_rad: object
    t_contact: object = 0.0
    g_contact: float = 0.0


def ridge(ctx) -> LocalConditions:
    """Near the ridge, in the upper air layer.

    Sees the upper (hottest) air; speed 0.15 m/s with the fan off, 0.5 m/s with it on (the fan draws
    the upper air along the ridge); faces the deck underside.
    """
    return LocalConditions(ctx.t_upper, np.where(ctx.fan_on, 0.5, STILL_ATTIC_SPEED), ctx.t_deck)


def mid(ctx) -> LocalConditions:
    """Mid attic, hanging at the layer interface.

    Sees the mean of upper and lower air; 0.15 m/s fan off, 0.3 m/s fan on; faces deck and attic floor
    equally.
    """
    return LocalConditions(0.5 * (ctx.t_upper + ctx.t_lower), np.where(ctx.fan_on, 0.3, STILL_ATTIC_SPEED),
                           0.5 * (ctx.t_deck + ctx.t_floor))


def exhaust(ctx) -> LocalConditions:
    """In the fan's inlet stream.

    Sees the upper air the fan draws; when the fan runs the air speed is the fan's face velocity
    (flow / opening area), otherwise 0.15 m/s; faces the deck.
    """
    face = ctx.fan_flow / ctx.fan_area
    return LocalConditions(ctx.t_upper, np.where(ctx.fan_on, np.maximum(face, STILL_ATTIC_SPEED),
                                                 STILL_ATTIC_SPEED), ctx.t_deck)


def intake(ctx) -> LocalConditions:
    """Near the soffit intake vents, low in the attic.

    Sees lower-layer air mixed with the entering outdoor air, the outdoor share growing with the intake
    face velocity v_in = Q_in / A_intake up to 1 at 1 m/s (phi = min(1, v_in / 1 m/s)); local speed
    half the face velocity (the jet has spread by the sensor), at least 0.15 m/s; faces the attic floor
    and the eave deck.
    """
    v_in = ctx.intake_flow / ctx.intake_area
    phi = np.minimum(1.0, v_in / INTAKE_FULL_SPEED)
    return LocalConditions(ctx.t_lower + phi * (ctx.t_out - ctx.t_lower),
                           np.maximum(0.5 * v_in, STILL_ATTIC_SPEED), 0.5 * (ctx.t_deck + ctx.t_floor))


def deck(ctx) -> LocalConditions:
    """Taped to the underside of the roof deck.

    Touches the deck through ``sensor.contact_conductance`` (area-weighted mean deck temperature) and
    loses to the upper air at 0.15 m/s (0.3 m/s with the fan on); faces the attic floor.
    """
    return LocalConditions(ctx.t_upper, np.where(ctx.fan_on, 0.3, STILL_ATTIC_SPEED), ctx.t_floor,
                           t_contact=ctx.t_deck, g_contact=ctx.contact_conductance)


def board(ctx) -> LocalConditions:
    """On the control board, inside the enclosure beside the triac.

    Sees the enclosure's inside air (the ``enclosure`` node, heated by the triac's conduction loss while
    the fan runs and cooled to the lower attic air through ``sensor.enclosure_conductance``), still
    (0.05 m/s); faces the enclosure walls at the same temperature.
    """
    return LocalConditions(ctx.t_enclosure, 0.05, ctx.t_enclosure)


OLD_PLACEMENTS = {"ridge": ridge, "mid": mid, "exhaust": exhaust, "intake": intake, "deck": deck, "board": board}


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




class Legacy:
    """The old numpy flows and derivatives of a network."""

    def __init__(self, net, room_temperature=24.0):
        from atticsim.air import humidity_ratio_from_rh

        self.room_temperature = room_temperature
        self.room_humidity_ratio = humidity_ratio_from_rh(room_temperature, net.room_relative_humidity, net.pressure)
        for name in ("plane_names", "area", "cos_tilt", "perimeter", "roughness", "absorptance", "emittance",
                     "f_sky", "f_ground", "c_cover", "c_deck", "u_cover_deck", "g_deck_floor", "floor_area",
                     "c_air", "upper_fraction", "layers", "layer_mixing", "fan_mixing_ratio", "interface_area",
                     "framing_area", "c_framing", "c_ceiling_top", "c_gypsum", "r_insulation", "r_room",
                     "placement", "sensor_body", "sensor_conductance",
                     "sensor_capacity", "sensor_power", "contact_conductance", "fan_area", "intake_area",
                     "enclosure_conductance", "c_enclosure", "triac_loss", "pressure", "node_names", "air",
                     "index", "i_lower", "i_upper", "f_up", "w_up", "i_enclosure", "n_planes", "n_nodes"):
            setattr(self, name, getattr(net, name))
        self.place = OLD_PLACEMENTS[net.placement]

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


