"""The massless surfaces of the roof layers: the network's Newton steps against the surface balance solved to
machine precision (scipy's brentq, Brent 1973) on states from calm night to hot sunlit noon."""

import numpy as np
import pytest
from scipy.optimize import brentq

from atticsim.constants import KELVIN, SIGMA
from atticsim.network import kernel
from atticsim.network.heat_transfer import walton_natural


def outer_balance(t, t_node, r_half, absorbed, t_out, t_sky, f_sky, f_ground, eps, h_forced, cos_tilt):
    """Absorbed sun + long-wave + convection + conduction from the layer's centre [W/m2] at surface t."""
    k, k_sky, k_out = t + KELVIN, t_sky + KELVIN, t_out + KELVIN
    return (absorbed + eps * SIGMA * (f_sky * (k_sky**4 - k**4) + f_ground * (k_out**4 - k**4))
            - (h_forced + walton_natural(t - t_out, cos_tilt, True)) * (t - t_out) + (t_node - t) / r_half)


def inner_balance(t, t_node, r_half, cos_tilt, f_up, t_up, t_lo, g, t_ct):
    k, k_ct = t + KELVIN, t_ct + KELVIN
    return ((t_node - t) / r_half - f_up * walton_natural(t - t_up, cos_tilt, False) * (t - t_up)
            - (1 - f_up) * walton_natural(t - t_lo, cos_tilt, False) * (t - t_lo) - SIGMA * g * (k**4 - k_ct**4))


@pytest.mark.parametrize("r_half", [0.039, 0.005, 2.5e-6])  # half a shingle, half a tile, half a metal sheet
def test_outer_surface_newton_against_brentq(r_half):
    rng = np.random.default_rng(int(r_half * 1e7))
    worst = 0.0
    for _ in range(300):
        t_node, t_out = rng.uniform(-10, 85), rng.uniform(-10, 45)
        args = (t_node, r_half, rng.uniform(0, 1000), t_out, t_out - rng.uniform(0, 30), 0.93, 0.07,
                rng.uniform(0.1, 0.95), rng.uniform(0, 15), np.cos(np.radians(26.6)))
        exact = brentq(outer_balance, -80, 200, args=args, xtol=1e-13)
        got = kernel._outer_surface(args[0], r_half, args[2], t_out, (args[4] + KELVIN) ** 4, (t_out + KELVIN) ** 4,
                                    *args[5:])
        worst = max(worst, abs(got - exact))
    assert worst < 1e-4  # K: far below any temperature the tool reports to


@pytest.mark.parametrize("r_half", [0.042, 0.005])  # half an OSB sheet, a thin board
def test_inner_surface_newton_against_brentq(r_half):
    rng = np.random.default_rng(7)
    worst = 0.0
    for _ in range(300):
        args = (rng.uniform(0, 80), r_half, np.cos(np.radians(26.6)), 0.5, rng.uniform(5, 60), rng.uniform(5, 50),
                rng.uniform(0.3, 0.8), rng.uniform(5, 60))
        exact = brentq(inner_balance, -80, 200, args=args, xtol=1e-13)
        t_node, r, cos_t, f_up, t_up, t_lo, g, t_ct = args
        got = kernel._inner_surface(t_node, r, cos_t, f_up, t_up, t_lo, g, (t_ct + KELVIN) ** 4, 0.0)
        worst = max(worst, abs(got - exact))
    assert worst < 1e-4


def test_fan_driven_forced_convection_inside_is_the_flat_plate_correlation():
    # The fan's flow over the attic's mean cross-section: V = Q / A_x along the attic's length L; average
    # flat-plate Nusselt number, laminar Nu = 0.664 Re^(1/2) Pr^(1/3) (Incropera & DeWitt eq. 7.30), and for
    # Re above 5e5 the mixed boundary layer Nu = (0.037 Re^(4/5) - 871) Pr^(1/3) (eq. 7.38). Air properties
    # from atticsim.sensor.air (US Standard Atmosphere 1976 viscosity and conductivity, tested there).
    from atticsim.sensor.air import properties

    prm = np.zeros(kernel.N_PRM)
    prm[kernel._CROSS_SECTION], prm[kernel._FLOW_LENGTH] = 12.5, 14.0
    t_air = 40.0
    p = properties(t_air)
    for flow in (0.566, 20.0):  # 1200 cfm (laminar, about 0.05 m/s), and a flow fast enough to go turbulent
        re = flow / 12.5 * 14.0 / p.kinematic_viscosity
        nu = 0.664 * re**0.5 * p.prandtl ** (1 / 3) if re < 5e5 else (0.037 * re**0.8 - 871) * p.prandtl ** (1 / 3)
        assert kernel._inside_forced(flow, t_air, 101325.0, prm) == pytest.approx(nu * p.conductivity / 14.0,
                                                                                   rel=1e-9)
    # 1200 cfm over the demo's 12.5 m2 section barely sweeps the surfaces: about 0.2 W/m2K
    assert kernel._inside_forced(0.566, t_air, 101325.0, prm) == pytest.approx(0.22, abs=0.02)
    assert kernel._inside_forced(0.0, t_air, 101325.0, prm) == 0.0
    # mixed with natural convection: (h_n^3 + h_f^3)^(1/3) (Churchill & Usagi 1972)
    assert kernel._mixed(3.0, 4.0) == pytest.approx((27.0 + 64.0) ** (1 / 3))
    assert kernel._mixed(3.0, 0.0) == 3.0
