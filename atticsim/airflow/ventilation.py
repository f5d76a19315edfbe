"""Attic ventilation flow used by the thermal network.

Baseline model: passive vents give a constant air-change rate; the fan adds its rated flow while it
runs. (The fan-curve / vent-orifice balance lives beside this module and replaces it where a scenario
describes openings.)
"""

from __future__ import annotations

import numpy as np

from atticsim.constants import HOUR


def passive_flow(ach, attic_volume):
    """Passive ventilation volume flow Q = ACH * V / 3600 [m^3/s] (definition of air changes per hour).

    Parameters
    ----------
    ach : float
        Air changes per hour [1/h].
    attic_volume : float
        Attic air volume [m^3].
    """
    return ach * attic_volume / HOUR


def ventilation_flow(fan_on, passive, fan_flow):
    """Total outdoor air flow through the attic [m^3/s]: passive baseline plus the fan's rated flow.

    Parameters
    ----------
    fan_on : bool or array_like of bool
        Fan state.
    passive : float
        Passive flow [m^3/s].
    fan_flow : float
        Fan flow when running [m^3/s].
    """
    return passive + np.asarray(fan_on, dtype=float) * fan_flow
