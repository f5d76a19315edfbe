"""Passive ventilation as an air-change rate, for the simple airflow form of :mod:`atticsim.airflow.model`
(used where a scenario describes no openings)."""

from __future__ import annotations

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
