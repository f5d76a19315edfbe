"""Where the thermistor sits: the local air temperature and speed, and what else it exchanges heat with.

Each placement is one record (:class:`Placement`): its name and code, the words that explain it, whether it
needs a node of its own, and one scalar function of the network's temperatures, the held air flows and the
fan state that returns the local conditions ``(t_air, speed, t_rad, t_contact, g_contact)``. The compiled
network (:mod:`atticsim.network.kernel`) compiles these functions as they are; the schema and the CLI read
the names and words from :data:`PLACEMENTS`. The sensor node then obeys

    C dT_s/dt = G_air(v) (T_local - T_s) + G_rad (T_rad - T_s) + G_contact (T_contact - T_s) + P_self

(lumped capacitance, Incropera & DeWitt section 5.1). Speeds and mixing weights below are engineering
assumptions, stated in each docstring (common practice, no source); they are the knobs a user changes
when the real installation differs.

Every placement function takes, in this order: upper and lower air layer temperatures, the area-weighted
deck underside temperature, the attic floor (insulation top) temperature, the outdoor air temperature, the
control box's air temperature [degC]; the fan's speed as a fraction of full speed (1 running, 0 stopped,
between while the motor spins up or the blades coast down); the fan's volume flow [m3/s] and opening
area [m2]; the intake's outdoor-air volume flow [m3/s] and net free area [m2]; the deck contact
conductance [W/K].
"""

from __future__ import annotations

from dataclasses import dataclass

#: Speed of the slow convective currents in an attic with the fan off [m/s] (common practice, no source:
#: buoyant boundary-layer and plume speeds of 0.1-0.2 m/s).
STILL_ATTIC_SPEED = 0.15
#: Intake face velocity at which the stream fully reaches a sensor about 0.3 m from the vent [m/s]
#: (common practice, no source).
INTAKE_FULL_SPEED = 1.0
#: Air speed at the ridge with the fan running [m/s] (the fan draws the upper air along the ridge; common
#: practice, no source).
RIDGE_FAN_SPEED = 0.5
#: Air speed mid attic and along the deck with the fan running [m/s] (common practice, no source).
MID_FAN_SPEED = 0.3
#: Air speed inside a closed control box [m/s] (common practice, no source).
BOX_SPEED = 0.05


def with_fan(still, running, fan_speed):
    """A local air speed between the still attic's and the running fan's, in proportion to the fan's speed
    (its flow) [m/s]; exactly ``running`` at full speed and ``still`` stopped."""
    if fan_speed >= 1.0:
        return running
    if fan_speed <= 0.0:
        return still
    return still + (running - still) * fan_speed


def ridge(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
          contact_g):
    """Near the ridge, in the upper air layer: sees the upper (hottest) air; 0.15 m/s with the fan off,
    0.5 m/s with it at full speed; faces the deck underside."""
    return t_up, with_fan(STILL_ATTIC_SPEED, RIDGE_FAN_SPEED, fan_speed), t_deck, 0.0, 0.0


def mid(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
        contact_g):
    """Mid attic, hanging at the layer interface: sees the mean of upper and lower air; 0.15 m/s fan off,
    0.3 m/s fan on; faces deck and attic floor equally."""
    return 0.5 * (t_up + t_lo), with_fan(STILL_ATTIC_SPEED, MID_FAN_SPEED, fan_speed), 0.5 * (t_deck + t_floor), 0.0, 0.0


def exhaust(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
            contact_g):
    """In the fan's inlet stream: sees the upper air the fan draws; while the blades turn the air speed is the
    fan's face velocity (flow / opening area), otherwise 0.15 m/s; faces the deck."""
    speed = max(fan_flow / fan_area, STILL_ATTIC_SPEED) if fan_speed > 0.0 else STILL_ATTIC_SPEED
    return t_up, speed, t_deck, 0.0, 0.0


def intake(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
           contact_g):
    """Near the soffit intake vents, low in the attic: sees lower-layer air mixed with the entering outdoor
    air, the outdoor share growing with the intake face velocity v_in = Q_in / A_intake up to 1 at 1 m/s
    (phi = min(1, v_in / 1 m/s)); local speed half the face velocity (the jet has spread by the sensor), at
    least 0.15 m/s; faces the attic floor and the eave deck."""
    v_in = intake_flow / intake_area
    phi = min(1.0, v_in / INTAKE_FULL_SPEED)
    return (t_lo + phi * (t_out - t_lo), max(0.5 * v_in, STILL_ATTIC_SPEED), 0.5 * (t_deck + t_floor),
            0.0, 0.0)


def deck(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
         contact_g):
    """Taped to the underside of the roof deck: touches the deck through ``sensor.contact_conductance``
    (area-weighted mean deck underside temperature) and loses to the upper air at 0.15 m/s (0.3 m/s with the
    fan on); faces the attic floor."""
    return t_up, with_fan(STILL_ATTIC_SPEED, MID_FAN_SPEED, fan_speed), t_floor, t_deck, contact_g


def board(t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
          contact_g):
    """On the control board, inside the enclosure beside the triac: sees the enclosure's inside air (the
    ``enclosure`` node, heated by the triac's conduction loss while the fan runs and cooled to the lower
    attic air through ``sensor.enclosure_conductance``), still (0.05 m/s); faces the enclosure walls at the
    same temperature."""
    return t_enc, BOX_SPEED, t_enc, 0.0, 0.0


@dataclass(frozen=True)
class Placement:
    """One sensor placement: its name (the scenario's word), its code in the compiled network, what the
    sensor sees (for the README and the CLI), why it behaves as it does (the placements comparison's words),
    whether it needs the control-box node, its local-conditions function, and whether it reads the attic's
    own air (the ridge and mid placements: the baseline the placements comparison measures the others by)."""

    name: str
    code: int
    sees: str
    why: str
    needs_enclosure: bool
    function: object
    reads_attic_air: bool = False


PLACEMENTS = {p.name: p for p in (
    Placement("ridge", 0, "upper air layer; 0.15 m/s with the fan off, 0.5 m/s on; faces the deck",
              "it reads the hottest air near the ridge", False, ridge, reads_attic_air=True),
    Placement("mid", 1, "mean of upper and lower air; 0.15 / 0.3 m/s; faces deck and floor",
              "it reads the mixed mid-attic air", False, mid, reads_attic_air=True),
    Placement("exhaust", 2, "upper air in the fan's inlet stream; the fan's face velocity when running",
              "it sits in the fan's fast air stream, so it follows the attic air closely while the fan runs",
              False, exhaust),
    Placement("intake", 3, "lower air mixed with entering outdoor air, the outdoor share growing to 1 at "
                           "1 m/s intake face velocity",
              "it sits in the stream of outdoor air the fan pulls in: as soon as the fan starts it reads "
              "outdoor air, drops below the switch-off point and stops the fan; the attic heats again and "
              "the fan restarts", False, intake),
    Placement("deck", 4, "taped to the sheathing (sensor.contact_conductance), losing to the upper air",
              "it touches the sheathing, which runs hotter than the air in sun and colder at night, so the "
              "fan runs longer by day", False, deck),
    Placement("board", 5, "inside the control box, warmed by the triac's conduction loss while the fan runs",
              "the triac's own heat warms the control box while the fan runs, so the sensor reads high and "
              "holds the fan on", True, board),
)}
assert [p.code for p in PLACEMENTS.values()] == list(range(len(PLACEMENTS))), "codes index the compiled table"
