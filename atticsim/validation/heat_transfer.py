"""Validation cases: roof and attic heat transfer (sol-air, film coefficients, convection, radiation)."""

from __future__ import annotations

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

    from atticsim.network.model import build_network
    from atticsim.scenario import demo_scenario

    sc = demo_scenario()
    net = build_network(sc)
    t_o, irr, wind = 35.0, 1000.0, 3.4
    planes = net.n_planes
    net.air = net.airflow.solve(t_o, t_o, wind, False)

    def balance(t_cov):
        temps = np.full((net.n_nodes, 1), t_cov)
        forcing = np.array([[t_o], [t_o + 273.15], [wind], [t_o - 10.0]] + [[irr]] * planes)
        q = net.flows(temps, forcing, np.array([False]))
        return float((q["solar"] + q["sky"] + q["ground"] + q["exterior_convection"])[0, 0])

    t_e = brentq(balance, t_o, t_o + 150.0)
    return Comparison(sc.roof.absorptance * irr / (t_e - t_o), 17.0,
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
