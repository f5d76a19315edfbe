"""Where the thermistor sits: the local air temperature and speed, and what else it exchanges heat with.

Each placement is a function of the network's temperatures, the held air flows and the fan state that
returns :class:`LocalConditions`. The sensor node then obeys

    C dT_s/dt = G_air(v) (T_local - T_s) + G_rad (T_rad - T_s) + G_contact (T_contact - T_s) + P_self

(lumped capacitance, Incropera & DeWitt section 5.1). Speeds and mixing weights below are engineering
assumptions, stated in each docstring (common practice, no source); they are the knobs a user changes
when the real installation differs.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Speed of the slow convective currents in an attic with the fan off [m/s] (common practice, no source:
#: buoyant boundary-layer and plume speeds of 0.1-0.2 m/s).
STILL_ATTIC_SPEED = 0.15
#: Intake face velocity at which the stream fully reaches a sensor about 0.3 m from the vent [m/s]
#: (common practice, no source).
INTAKE_FULL_SPEED = 1.0


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


PLACEMENTS = {"ridge": ridge, "mid": mid, "exhaust": exhaust, "intake": intake, "deck": deck, "board": board}
