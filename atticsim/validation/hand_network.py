"""The constant-weather house worked by hand: the attic's heat paths written out from the model's documented
structure with the published correlations, solved for the steady state, independently of atticsim's network.

Paths (one well-mixed attic air node; sealed attic: no ventilation, fan off):

- outdoors -> each roof plane's outer surface: absorbed sun alpha I; long-wave eps sigma (F_sky (T_sky^4 - T^4)
  + F_ground (T_out^4 - T^4)), F_sky = (1 + cos b)/2, F_ground = (1 - cos b)/2 (Duffie & Beckman, sect. 2.15 and
  3.9); convection h = h_forced + h_natural, Sparrow's forced term 2.537 W_f R_f sqrt(P V / A) with W_f 0.75
  (wind direction not modelled) and R_f 1.67 for granulated shingles, Walton's natural term (Walton 1983,
  NBSIR 83-2655);
- outer surface -> inner surface (the deck's underside): conduction through the WHOLE covering and sheathing,
  R = t_cover/k_cover + t_sheathing/k_sheathing (a layer lumped at its centre reaches each of its surfaces
  through half its resistance, so the surfaces are a whole layer apart);
- deck underside -> attic air: Walton's natural convection (surface facing down); deck underside -> top of the
  insulation: gray two-surface exchange sigma G (T1^4 - T2^4), G = 1/((1-e1)/(e1 A1) + 1/A1 + (1-e2)/(e2 A2)),
  each plane seeing its share of the floor (Incropera & DeWitt, radiation exchange chapter);
- top of the insulation -> attic air: Walton (surface facing up); top of the insulation -> rooms: the
  insulation's R-value, the WHOLE gypsum board and the room-side film in series;
- framing: no net heat in the steady state (it exchanges only with the attic air).
"""

from __future__ import annotations

import math

SIGMA = 5.670374419e-8  # W/(m2 K4), Stefan-Boltzmann constant (CODATA 2018)
KELVIN = 273.15
#: Sparrow, Ramsey & Mass (1979) texture multiplier of the brick/granulated class (Walton 1983; from memory)
R_GRANULAR = 1.67


def walton(dt, cos_tilt, facing_up):
    """Walton's (1983) natural convection coefficient [W/m2K] for surface minus air dt [K]."""
    c = abs(cos_tilt)
    unstable = dt > 0.0 if facing_up else dt < 0.0
    cube = abs(dt) ** (1.0 / 3.0)
    return 9.482 * cube / (7.238 - c) if unstable else 1.810 * cube / (1.382 + c)


def sparrow(wind, perimeter, area, r_f=R_GRANULAR, w_f=0.75):
    """Sparrow's forced convection term [W/m2K] as Walton (1983) gives it."""
    return 2.537 * w_f * r_f * math.sqrt(perimeter * wind / area)


def steady_state(scenario, t_out, wind, poa, t_sky=None, layer_share=1.0):
    """The sealed attic's steady state under constant weather, worked by hand.

    Parameters
    ----------
    scenario : Scenario
        One air layer, no openings, passive air changes 0 (checked).
    t_out : float
        Outdoor air [degC] (the ground at the same temperature).
    wind : float
        Wind speed [m/s].
    poa : sequence of float
        Irradiance on each roof plane [W/m2].
    t_sky : float, optional
        Sky temperature [degC]; default the outdoor air.
    layer_share : float
        Share of each layer's resistance (the roof's two layers, the gypsum) in the path: 1 for the physics
        above; 0.5 reproduces a network that leaves half of each layer out (a diagnosis, not a model).

    Returns
    -------
    dict
        ``cover`` and ``deck`` (lists per plane), ``air``, ``floor`` [degC]; ``ceiling_w`` [W] and
        ``ceiling_w_m2`` [W/m2] into the rooms.
    """
    import numpy as np
    from scipy.optimize import root

    roof, attic, ceiling = scenario.roof, scenario.attic, scenario.ceiling
    if attic.air_layers != 1 or scenario.vents.openings or scenario.vents.passive_ach != 0.0 \
            or scenario.fan.enabled or roof.surface_texture != "granular":
        raise ValueError("the hand-worked network is a sealed attic with one air layer, no fan, granular roof")
    planes = roof.planes
    area = [p.area for p in planes]
    cos_b = [math.cos(math.radians(p.tilt)) for p in planes]
    perim = [p.perimeter or 4.0 * math.sqrt(p.area) for p in planes]
    r_layers = layer_share * sum(layer.prop("thickness") / layer.prop("conductivity")
                                 for layer in (roof.covering, roof.sheathing))
    gyp = ceiling.gypsum
    r_down = ceiling.insulation + layer_share * gyp.prop("thickness") / gyp.prop("conductivity") + ceiling.room_film
    a_floor = attic.floor_area
    share = [a_floor * a / sum(area) for a in area]
    e_f, e_u = attic.floor_emittance, roof.underside_emittance
    g = [1.0 / ((1 - e_f) / (e_f * s) + 1.0 / s + (1 - e_u) / (e_u * a)) for s, a in zip(share, area)]
    eps, alpha = roof.emittance, roof.absorptance
    k_out = t_out + KELVIN
    k_sky = (t_out if t_sky is None else t_sky) + KELVIN
    n = len(planes)

    def residuals(x):
        cov, deck, air, floor = x[:n], x[n:2 * n], x[2 * n], x[2 * n + 1]
        res = np.empty(2 * n + 2)
        to_air = to_floor = 0.0
        for p in range(n):
            kc = cov[p] + KELVIN
            f_sky, f_gnd = (1 + cos_b[p]) / 2, (1 - cos_b[p]) / 2
            h_ext = sparrow(wind, perim[p], area[p]) + walton(cov[p] - t_out, cos_b[p], True)
            outside = (alpha * poa[p] + eps * SIGMA * (f_sky * (k_sky**4 - kc**4) + f_gnd * (k_out**4 - kc**4))
                       + h_ext * (t_out - cov[p]))
            through = (cov[p] - deck[p]) / r_layers
            q_air = walton(deck[p] - air, cos_b[p], False) * (deck[p] - air) * area[p]
            q_rad = SIGMA * g[p] * ((deck[p] + KELVIN) ** 4 - (floor + KELVIN) ** 4)
            res[p] = outside - through
            res[n + p] = through * area[p] - q_air - q_rad
            to_air += q_air
            to_floor += q_rad
        floor_air = walton(floor - air, 1.0, True) * (floor - air) * a_floor
        res[2 * n] = to_air + floor_air
        res[2 * n + 1] = to_floor - floor_air - a_floor * (floor - ceiling.room_temperature) / r_down
        return res

    # a start with every surface a little apart from the air (|dT|^(1/3) has no slope at dT = 0)
    hot = float(t_out) + alpha * max(poa) / 15.0
    x0 = np.array([hot + 0.3] * n + [hot] * n + [0.5 * (hot + t_out) - 0.3, 0.5 * (hot + t_out) - 0.6])
    sol = root(residuals, x0, method="hybr", tol=1e-12)
    if not sol.success or np.max(np.abs(residuals(sol.x))) > 1e-6:
        raise RuntimeError(f"the hand-worked network did not converge: {sol.message}")
    x = sol.x
    q = a_floor * (x[2 * n + 1] - ceiling.room_temperature) / r_down
    return {"cover": list(x[:n]), "deck": list(x[n:2 * n]), "air": float(x[2 * n]), "floor": float(x[2 * n + 1]),
            "ceiling_w": float(q), "ceiling_w_m2": float(q / a_floor)}
