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

Used by the validation cases (``atticsim validate``) and by ``tests/network/test_network_steady.py``.
"""

from __future__ import annotations

T_OUT, T_ROOM, WIND, DEW, PRESSURE = 35.0, 24.0, 2.0, 20.0, 101325.0
DAYS = 20


def roof_optics(roof):
    """(absorptance, emittance) of the roof covering: the scenario's own values, or, where the schema leaves
    them to the covering's finish, the finish's preset (``Roof.optics``)."""
    if hasattr(roof, "optics"):
        values, _ = roof.optics()
        return values["absorptance"], values["emittance"]
    return roof.absorptance, roof.emittance


def quiet_house():
    """The demo bungalow (fictional) with one well-mixed air node, no ventilation and the fan stopped."""
    from atticsim.scenario import demo_scenario

    return demo_scenario(["attic.air_layers=1", "vents.passive_ach=0", "fan.enabled=false"])


def constant_forcing(net, poa, n, step=3600.0):
    """Forcing of ``n`` samples ``step`` apart: constant weather (sky at air temperature) and constant
    irradiance ``poa`` [W/m2] on every plane."""
    import numpy as np

    from atticsim.constants import KELVIN
    from atticsim.forcing.build import Forcing
    from atticsim.network.model import FORCING_BASE

    base = {"temp_out": T_OUT, "temp_sky_k": T_OUT + KELVIN, "wind_speed": WIND, "temp_dew": DEW,
            "pressure": PRESSURE, "temp_room": T_ROOM}
    rows = [np.full(n, base[c]) for c in FORCING_BASE] + [np.full(n, poa)] * net.n_planes
    return Forcing(times=None, step=step, values=np.vstack(rows), channels=[], notes=[])


def steady_run(net, poa):
    """The network after DAYS of constant weather (sky at air temperature) and constant irradiance ``poa``
    [W/m2] on every plane; returns the last state and the flows there."""
    import numpy as np

    from atticsim.hybrid.solve import run_fast
    from atticsim.network.model import BOOKS

    step = 3600.0
    n = int(DAYS * 86400 / step) + 1
    forcing = constant_forcing(net, poa, n, step)
    net.air = net.airflow.solve(T_OUT, T_OUT, WIND, False)
    y0 = np.concatenate([np.full(net.n_nodes, T_OUT), np.zeros(len(BOOKS))])
    t_end = (n - 1) * step
    out = np.arange(0.0, t_end + 1.0, 86400.0)  # daily outputs on one grid from the start
    run = run_fast(net, forcing, 0.0, t_end, y0, out)
    x0, x1 = run.y[:net.n_nodes, -2], run.y[:net.n_nodes, -1]
    if np.max(np.abs(x1 - x0)) >= 1e-4:
        raise RuntimeError(f"not steady after {DAYS} days: the last day moved a node {np.max(np.abs(x1 - x0)):.2e} K")
    q = net.flows(x1[:, None], forcing.values[:, -1:], False)
    return x1, {k: v[..., 0] for k, v in q.items()}


def hand_worked(net, sc, poa):
    """The steady state by the series-parallel resistance sum, per unit roof or floor area; the film
    coefficients iterated at the temperatures it gives. Returns outer surface, deck underside, attic air,
    insulation top temperatures [degC] and the ceiling's heat flow [W]."""
    from atticsim.constants import KELVIN, SIGMA
    from atticsim.network.heat_transfer import forced_convection_sparrow, walton_natural

    roof, ceiling = sc.roof, sc.ceiling
    r_layers = sum(layer.prop("thickness") / layer.prop("conductivity") for layer in (roof.covering, roof.sheathing))
    r_gyp = ceiling.gypsum.prop("thickness") / ceiling.gypsum.prop("conductivity")
    r_ceiling = ceiling.insulation + r_gyp + ceiling.room_film            # insulation top -> rooms
    a_roof, a_floor = float(net.area.sum()), sc.attic.floor_area
    area, perimeter, cos_t = float(net.area[0, 0]), float(net.perimeter[0, 0]), float(net.cos_tilt[0, 0])
    g = float(net.g_deck_floor.sum())                                      # gray exchange factor [m2]
    alpha, eps = roof_optics(roof)
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
        t_so = (alpha * poa * a_roof + h_o * a_roof * T_OUT + T_ROOM / r_in) / (
            h_o * a_roof + 1.0 / r_in)
        q = (t_so - T_ROOM) / r_in                                                     # W, outer surface -> rooms
        t_si = t_so - q * r_layers / a_roof
        t_ct = T_ROOM + q * r_ceiling / a_floor
        # the air between deck and floor on the convective path
        q_conv = q - u_rad * (t_si - t_ct)
        t_air = t_si - q_conv / u_conv_deck
    return t_so, t_si, t_air, t_ct, q


def first_warming_rate(net, sc, poa):
    """The roof covering's warming rate [K/s] at the instant constant sun ``poa`` [W/m2] comes on, the house
    uniformly at the outdoor temperature under a sky at that temperature, worked by hand.

    The covering is lumped at its centre, half its resistance r/2 below its massless outer surface. At the
    first instant every node is at T_o, so the surface takes the absorbed sun and passes it on to the outdoor
    film and into the covering: alpha I = h_o (T_s - T_o) + (T_s - T_o) / (r/2), with h_o the exterior film
    (Sparrow's forced and Walton's natural convection, and long-wave exactly linearised as in
    :func:`hand_worked`) at T_s, iterated; the covering's centre warms at (T_s - T_o) / (r/2) / (rho c t).
    """
    from atticsim.constants import KELVIN, SIGMA
    from atticsim.network.heat_transfer import forced_convection_sparrow, walton_natural

    cover = sc.roof.covering
    r_half = 0.5 * cover.prop("thickness") / cover.prop("conductivity")
    capacity = cover.prop("density") * cover.prop("specific_heat") * cover.prop("thickness")  # J/(m2 K)
    area, perimeter, cos_t = float(net.area[0, 0]), float(net.perimeter[0, 0]), float(net.cos_tilt[0, 0])
    h_f = forced_convection_sparrow(WIND, perimeter, area, net.roughness)
    alpha, eps = roof_optics(sc.roof)
    absorbed = alpha * poa
    t_s = T_OUT + 10.0
    for _ in range(60):
        k_s, k_o = t_s + KELVIN, T_OUT + KELVIN
        h_o = (h_f + walton_natural(t_s - T_OUT, cos_t, True)
               + eps * SIGMA * (k_s**2 + k_o**2) * (k_s + k_o))
        t_s = T_OUT + absorbed / (h_o + 1.0 / r_half)
    return (t_s - T_OUT) / r_half / capacity
