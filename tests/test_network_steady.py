"""The network at steady state under constant weather against the resistance network worked by hand.

A house of our own (the demo bungalow with one well-mixed air node, no vents, the fan stopped) under constant
weather with the sky at air temperature: heat flows from the outdoor air through the exterior film, the whole
covering and sheathing, the attic's inside films (in parallel with the deck's radiation to the attic floor)
and the whole ceiling to the rooms. The hand calculation is the handbook's series-parallel resistance sum
(ASHRAE Handbook Fundamentals, heat transmission chapter: U = 1 / sum R, films and layers in series,
parallel paths added as conductances), its film coefficients taken from the same correlations at the surface
temperatures the sum itself gives (iterated, as a design calculation iterates its film temperatures); with
constant sun on the roof the outer surface balance is the sol-air form (ASHRAE Handbook Fundamentals,
sol-air temperature) with the inward path as one more resistance.
"""

import numpy as np
import pytest

from atticsim.constants import KELVIN, SIGMA
from atticsim.forcing.build import Forcing
from atticsim.hybrid.compiled import integrate_compiled
from atticsim.network.heat_transfer import forced_convection_sparrow, walton_natural
from atticsim.network.model import BOOKS, FORCING_BASE, build_network
from atticsim.scenario import demo_scenario

T_OUT, T_ROOM, WIND, DEW, PRESSURE = 35.0, 24.0, 2.0, 20.0, 101325.0
DAYS = 20


def quiet_house():
    """The demo bungalow (fictional) with one well-mixed air node, no ventilation and the fan stopped."""
    return demo_scenario(["attic.air_layers=1", "vents.passive_ach=0", "fan.enabled=false"])


def steady_run(net, poa):
    """The network after DAYS of constant weather (sky at air temperature) and constant irradiance ``poa``
    [W/m2] on every plane; returns the last state and the flows there."""
    step = 3600.0
    n = int(DAYS * 86400 / step) + 1
    base = {"temp_out": T_OUT, "temp_sky_k": T_OUT + KELVIN, "wind_speed": WIND, "temp_dew": DEW,
            "pressure": PRESSURE, "temp_room": T_ROOM}
    rows = [np.full(n, base[c]) for c in FORCING_BASE] + [np.full(n, poa)] * net.n_planes
    forcing = Forcing(times=None, step=step, values=np.vstack(rows), channels=[], notes=[])
    net.air = net.airflow.solve(T_OUT, T_OUT, WIND, False)
    y0 = np.concatenate([np.full(net.n_nodes, T_OUT), np.zeros(len(BOOKS))])
    t_end = (n - 1) * step
    out = np.arange(0.0, t_end + 1.0, 86400.0)  # daily outputs on one grid from the start
    run = integrate_compiled(net, forcing, None, 0.0, t_end, y0, False, out)
    x0, x1 = run.y[:net.n_nodes, -2], run.y[:net.n_nodes, -1]
    assert np.max(np.abs(x1 - x0)) < 1e-4  # steady: the last day changed nothing
    q = net.flows(x1[:, None], forcing.values[:, -1:], False)
    return x1, {k: v[..., 0] for k, v in q.items()}


def hand_worked(net, sc, poa):
    """The steady state by the series-parallel resistance sum, per unit roof or floor area; the film
    coefficients iterated at the temperatures it gives. Returns outer surface, deck underside, attic air,
    insulation top temperatures [degC] and the ceiling's heat flow [W]."""
    roof, ceiling = sc.roof, sc.ceiling
    r_layers = sum(layer.prop("thickness") / layer.prop("conductivity") for layer in (roof.covering, roof.sheathing))
    r_gyp = ceiling.gypsum.prop("thickness") / ceiling.gypsum.prop("conductivity")
    r_ceiling = ceiling.insulation + r_gyp + ceiling.room_film            # insulation top -> rooms
    a_roof, a_floor = float(net.area.sum()), sc.attic.floor_area
    area, perimeter, cos_t = float(net.area[0, 0]), float(net.perimeter[0, 0]), float(net.cos_tilt[0, 0])
    g = float(net.g_deck_floor.sum())                                      # gray exchange factor [m2]
    eps = roof.emittance
    h_f = forced_convection_sparrow(WIND, perimeter, area, net.roughness)  # Sparrow et al. 1979
    t_so, t_si, t_air, t_ct = T_OUT + 10, T_OUT + 5, T_OUT, T_OUT - 2
    for _ in range(60):
        k_so, k_o, k_si, k_ct = t_so + KELVIN, T_OUT + KELVIN, t_si + KELVIN, t_ct + KELVIN
        # exterior film: convection (Sparrow + Walton) and long-wave to sky and ground at air temperature,
        # eps sigma (T^4 - T_o^4) = eps sigma (T^2 + T_o^2)(T + T_o) (T - T_o) exactly
        h_o = h_f + walton_natural(t_so - T_OUT, cos_t, True) + eps * SIGMA * (k_so**2 + k_o**2) * (k_so + k_o)
        # inside: deck underside -> air -> floor (convection) in parallel with deck -> floor (radiation)
        u_conv_deck = walton_natural(t_si - t_air, cos_t, False) * a_roof            # W/K
        u_conv_floor = walton_natural(t_ct - t_air, 1.0, True) * a_floor             # W/K
        u_rad = SIGMA * g * (k_si**2 + k_ct**2) * (k_si + k_ct)                        # W/K
        u_inside = 1.0 / (1.0 / u_conv_deck + 1.0 / u_conv_floor) + u_rad             # W/K, deck -> floor
        # from the outer surface to the rooms: layers, inside, ceiling in series [K/W]
        r_in = r_layers / a_roof + 1.0 / u_inside + r_ceiling / a_floor
        # outer surface: absorbed sun + film from outdoors = flow inwards (sol-air form with the inward path)
        t_so = (roof.absorptance * poa * a_roof + h_o * a_roof * T_OUT + T_ROOM / r_in) / (
            h_o * a_roof + 1.0 / r_in)
        q = (t_so - T_ROOM) / r_in                                                     # W, outer surface -> rooms
        t_si = t_so - q * r_layers / a_roof
        t_ct = T_ROOM + q * r_ceiling / a_floor
        # the air between deck and floor on the convective path
        q_conv = q - u_rad * (t_si - t_ct)
        t_air = t_si - q_conv / u_conv_deck
    return t_so, t_si, t_air, t_ct, q


@pytest.mark.parametrize("poa", [0.0, 600.0])
def test_steady_state_is_the_hand_worked_resistance_network(poa):
    sc = quiet_house()
    net = build_network(sc)
    x, q = steady_run(net, poa)
    t_so, t_si, t_air, t_ct, q_hand = hand_worked(net, sc, poa)
    idx = net.index
    assert q["roof_surface"] == pytest.approx([t_so, t_so], abs=0.01)
    assert q["deck_underside"] == pytest.approx([t_si, t_si], abs=0.01)
    assert x[idx["air"]] == pytest.approx(t_air, abs=0.01)
    assert x[idx["ceiling_top"]] == pytest.approx(t_ct, abs=0.01)
    assert q["ceiling_gain"] == pytest.approx(q_hand, rel=1e-3)
    if poa == 0.0:
        # outdoors at 35 degC, rooms at 24 degC: heat flows in, and all of it reaches the rooms
        assert q_hand > 0.0


def test_the_whole_of_both_roof_layers_is_in_the_path():
    # At a sunlit steady state the temperature drop across covering + sheathing, over the heat flowing
    # through them, is the two layers' whole resistance: shingle 6 mm / 0.077 W/mK + OSB 11 mm / 0.13 W/mK
    # = 0.0779 + 0.0846 = 0.1625 m2K/W (plane wall, Incropera & DeWitt chapter 3; material values of the
    # project's defaults, from memory).
    sc = quiet_house()
    net = build_network(sc)
    _, q = steady_run(net, 600.0)
    flux = q["ceiling_gain"] / float(net.area.sum())  # at steady state all of it crosses the roof layers
    r = (q["roof_surface"][0] - q["deck_underside"][0]) / flux
    assert r == pytest.approx(0.006 / 0.077 + 0.011 / 0.13, rel=1e-3)
    assert r == pytest.approx(0.1625, abs=5e-4)
