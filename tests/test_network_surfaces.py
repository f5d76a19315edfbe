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
        got = kernel._inner_surface(t_node, r, cos_t, f_up, t_up, t_lo, g, (t_ct + KELVIN) ** 4)
        worst = max(worst, abs(got - exact))
    assert worst < 1e-4
