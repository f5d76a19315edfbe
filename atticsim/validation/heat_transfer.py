"""Validation cases: roof and attic heat transfer (sol-air, film coefficients, convection, radiation)."""

from __future__ import annotations

from functools import lru_cache

from atticsim.validation.registry import Comparison, case

_SOL_AIR = "ASHRAE Handbook - Fundamentals, nonresidential cooling and heating load chapter, sol-air temperature"


@case(group="roof and attic heat transfer", name="Sol-air temperature, horizontal roof",
      source=_SOL_AIR + "; value worked by hand", unit="degC", tolerance=0.05, digits=2,
      inputs="air 35 degC, absorptance 0.9, 1000 W/m2, h_o 17 W/m2K, eps dR 63 W/m2 (horizontal): "
             "35 + (900 - 63)/17 = 84.24 degC")
def sol_air_temperature():
    from atticsim.network.heat_transfer import sol_air_temperature as sol_air

    return Comparison(float(sol_air(35.0, 1000.0, 0.9, 17.0, 63.0)), 35.0 + (0.9 * 1000.0 - 63.0) / 17.0)


@case(group="roof and attic heat transfer", name="Roof in the sun: equivalent outside film coefficient",
      source=_SOL_AIR + ": summer design h_o = 17 W/m2K at 3.4 m/s wind (from memory)", unit="W/m2K",
      tolerance=0.25, kind="rel", digits=1,
      inputs=("the demo house's roof covering (dark shingles, absorptance 0.92) with no heat flow inward, "
              "1000 W/m2 on the plane, air 35 degC, wind 3.4 m/s, sky and ground at air temperature; the "
              "network's own convection (Walton 1983) and long-wave exchange balance the sun at t_e, and "
              "h = alpha I / (t_e - t_o). 25 %: exterior correlations differ that much between handbooks"))
def roof_film_coefficient():
    import numpy as np
    from scipy.optimize import brentq

    from atticsim.assembly import build_network
    from atticsim.scenario import demo_scenario
    from atticsim.validation.hand_network import roof_optics

    sc = demo_scenario()
    net = build_network(sc)
    t_o, irr, wind = 35.0, 1000.0, 3.4
    column = _weather_forcing(sc, t_o, wind, irr, 1).values[:, [0]]
    net.air = net.airflow.solve(t_o, t_o, wind, False)
    i_cover = net.index[f"cover_{sc.roof.planes[0].name}"]

    def balance(t_cov):
        # every node at the covering's temperature: nothing flows inward, the outside alone balances the sun
        return float(net.derivatives(np.full((net.n_nodes, 1), t_cov), column, np.array([False]))[i_cover, 0])

    t_e = brentq(balance, t_o, t_o + 150.0)
    return Comparison(roof_optics(sc.roof)[0] * irr / (t_e - t_o), 17.0,
                      note=f"roof covering settles at {t_e:.1f} degC")


@case(group="roof and attic heat transfer", name="Wind convection on a roof plane (forced term)",
      source=("Sparrow, Ramsey & Mass (1979) as given by Walton (1983), Thermal Analysis Research Program "
              "reference manual, NBSIR 83-2655 (from memory); value worked by hand"),
      unit="W/m2K", tolerance=0.005, digits=3,
      inputs="h_f = 2.537 W_f R_f sqrt(P V / A): 100 m2, perimeter 40 m, 3 m/s, R_f 1.67, windward W_f 1 "
             "-> 2.537 x 1.67 x sqrt(1.2) = 4.641 W/m2K")
def forced_convection():
    from atticsim.network.heat_transfer import forced_convection_sparrow

    return Comparison(float(forced_convection_sparrow(3.0, 40.0, 100.0, 1.67, windward_factor=1.0)),
                      2.537 * 1.67 * 1.2 ** 0.5)


@case(group="roof and attic heat transfer", name="Natural convection, warm surface facing up",
      source="Walton (1983), NBSIR 83-2655, simple natural convection correlation (from memory); "
             "value worked by hand", unit="W/m2K", tolerance=0.001, digits=4,
      inputs=("attic floor 8 K warmer than the air (unstable, horizontal): 9.482 x 8^(1/3) / (7.238 - 1) "
              "= 3.0401 W/m2K; atticsim rounds |dT|^(1/3) off within 0.05 K of zero, 7e-6 relative here"))
def natural_convection():
    from atticsim.network.heat_transfer import natural_convection_walton

    return Comparison(float(natural_convection_walton(8.0, 1.0, True)), 9.482 * 2.0 / (7.238 - 1.0))


@case(group="roof and attic heat transfer", name="Long-wave exchange of two gray surfaces",
      source=("Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, radiation exchange chapter: "
              "infinite parallel planes, q/A = sigma (T1^4 - T2^4) / (1/e1 + 1/e2 - 1)"),
      unit="-", tolerance=1e-9, digits=5,
      inputs="deck underside and attic floor as parallel planes, both emittance 0.9: 1/(2/0.9 - 1) = 0.81818")
def gray_exchange():
    from atticsim.network.heat_transfer import gray_two_surface_factor

    return Comparison(float(gray_two_surface_factor(1.0, 0.9, 1.0, 0.9)), 1.0 / (2.0 / 0.9 - 1.0))


@case(group="roof and attic heat transfer", name="R-30 ceiling insulation in SI",
      source=("NIST Special Publication 811 (2008), Guide for the Use of the SI, Appendix B: "
              "1 ft2 degF h/Btu_IT = 0.1761102 m2K/W"), unit="m2K/W", tolerance=1e-6, digits=4,
      inputs='the scenario value "R-30" read by atticsim: 30 x 0.1761102 = 5.2833 m2K/W')
def r_value():
    from atticsim.units import to_si

    return Comparison(float(to_si("R-30", "r_value")), 30 * 0.1761102)


# --- the constant-weather house against the network worked by hand ---------------------------------------------

def _weather_forcing(scenario, t_out, wind, poa, days):
    """A Forcing built from hand-made constant weather for ``days``: outdoor air, sky (at the air temperature)
    and ground at ``t_out`` [degC], ``wind`` [m/s], ``poa`` [W/m2] on every plane (set by channel name)."""
    from atticsim.forcing.build import build_forcing
    from atticsim.validation.houses import constant_weather

    sky_ir = 5.670374419e-8 * (t_out + 273.15) ** 4  # a sky radiating at the air temperature
    frame, meta = constant_weather(t_out, hours=24 * days + 2, wind=wind, sky_ir=sky_ir)
    forcing = build_forcing(frame, meta, scenario)
    for plane in scenario.roof.planes:
        forcing.values[forcing.channels.index(f"poa_{plane.name}")] = poa
    return forcing


_HAND = ("the handbook's series-parallel resistance sum, worked by hand (ASHRAE Handbook - Fundamentals, heat "
         "transmission chapter: films and layers in series, parallel paths as conductances; the sol-air form "
         "for the sunlit surface), films from the same correlations iterated at the temperatures it gives "
         "(atticsim.validation.hand_network)")
_QUIET = ("the demo house (fictional: two 78.3 m2 planes at 6/12, dark shingles on 11 mm OSB, 140 m2 of R-30 over "
          "gypsum) with one air node, no vents and the fan stopped, under constant weather: outdoor air, sky and "
          "ground at 35 degC, wind 2 m/s, rooms at 24 degC, {sun}; atticsim (fast solver) started with the whole "
          "house at 35 degC, after 20 days (with sun, the final value of the step response whose start is the "
          "first warming rate below)")


@lru_cache(maxsize=None)
def _quiet(poa):
    """(atticsim's steady state: nodes and flows, the hand-worked one, the scenario) with ``poa`` W/m2."""
    from atticsim.assembly import build_network
    from atticsim.validation.hand_network import hand_worked, quiet_house, steady_run

    sc = quiet_house()
    net = build_network(sc)
    x, q = steady_run(net, poa)
    return {n: float(x[i]) for n, i in net.index.items()}, q, hand_worked(net, sc, poa), sc


def _quiet_case(key, name, poa, unit, tolerance, kind, digits, pick, extra=""):
    def run():
        nodes, q, hand, sc = _quiet(poa)
        tool, ref = pick(nodes, q, hand, sc)
        return Comparison(float(tool), float(ref))

    run.__name__ = key
    sun = "no sun" if poa == 0.0 else f"{poa:g} W/m2 on each plane"
    case(group="roof and attic heat transfer", name=name, source=_HAND, unit=unit, tolerance=tolerance, kind=kind,
         digits=digits, inputs=_QUIET.format(sun=sun) + extra)(run)


for _poa, _words in ((0.0, "no sun"), (600.0, "constant sun")):
    _tag = "sun" if _poa else "no_sun"
    _quiet_case(f"steady_deck_{_tag}", f"Constant weather, {_words}: deck underside (steady state)", _poa, "degC",
                0.01, "abs", 3, lambda n, q, h, sc: (q["deck_underside"][0], h[1]))
    _quiet_case(f"steady_air_{_tag}", f"Constant weather, {_words}: attic air (steady state)", _poa, "degC", 0.01,
                "abs", 3, lambda n, q, h, sc: (n["air"], h[2]))
    _quiet_case(f"steady_ceiling_{_tag}", f"Constant weather, {_words}: heat through the ceiling (steady state)",
                _poa, "W/m2", 1e-3, "rel", 3,
                lambda n, q, h, sc: (q["ceiling_gain"] / sc.attic.floor_area, h[4] / sc.attic.floor_area))

_quiet_case("steady_roof_layers", "Constant sun: the roof's layers' resistance between its surfaces", 600.0,
            "m2K/W", 1e-3, "rel", 4,
            lambda n, q, h, sc: ((q["roof_surface"][0] - q["deck_underside"][0])
                                 / (q["ceiling_gain"] / sum(p.area for p in sc.roof.planes)),
                                 sum(layer.prop("thickness") / layer.prop("conductivity")
                                     for layer in (sc.roof.covering, sc.roof.sheathing))),
            extra=("; atticsim's figure: the drop from outer surface to deck underside over the heat crossing the "
                   "roof (at steady state all of it reaches the rooms); the reference: shingle 6 mm / 0.077 W/mK "
                   "+ OSB 11 mm / 0.13 W/mK = 0.1625 m2K/W (plane wall, Incropera & DeWitt chapter 3)"))


@case(group="roof and attic heat transfer",
      name="Sun switched on (step response): the roof covering's first warming rate",
      source=("the covering's energy balance at the first instant, worked by hand (atticsim.validation."
              "hand_network.first_warming_rate): the massless outer surface splits the absorbed sun between the "
              "outdoor film and half the covering's resistance, alpha I = (h_o + 2/r) (T_s - T_o); the centre "
              "warms at (T_s - T_o) (2/r) / (rho c t)"), unit="K/min", tolerance=0.01, kind="rel", digits=3,
      inputs=("the same quiet demo house uniformly at 35 degC under a sky and ground at 35 degC, wind 2 m/s, "
              "600 W/m2 switched on at t = 0 on each plane; atticsim's rate from its first two seconds of output "
              "(fast solver, second-order difference), 1 % for the solver's and the difference's error"))
def sun_step_rate():
    import numpy as np

    from atticsim.hybrid.solve import run_fast
    from atticsim.network.model import BOOKS
    from atticsim.assembly import build_network
    from atticsim.validation.hand_network import T_OUT, WIND, constant_forcing, first_warming_rate, quiet_house

    sc = quiet_house()
    net = build_network(sc)
    forcing = constant_forcing(net, 600.0, 3)
    net.air = net.airflow.solve(T_OUT, T_OUT, WIND, False)
    y0 = np.concatenate([np.full(net.n_nodes, T_OUT), np.zeros(len(BOOKS))])
    out = np.arange(0.0, 10.5, 1.0)
    run = run_fast(net, forcing, 0.0, 10.0, y0, out)
    t_cov = run.y[net.index[f"cover_{sc.roof.planes[0].name}"]]
    rate = (-3.0 * t_cov[0] + 4.0 * t_cov[1] - t_cov[2]) / 2.0  # K/s at t = 0, second-order forward difference
    return Comparison(60.0 * rate, 60.0 * first_warming_rate(net, sc, 600.0))
