"""Tests of atticsim.airflow.fan: curve interpolation, extrapolation rule and the fan laws."""

import numpy as np
import pytest
from scipy.interpolate import PchipInterpolator

from atticsim.airflow.fan import FanCurve

# A curve as makers publish it: free air, 0.1 and 0.2 in. w.c. (24.9 / 49.8 Pa), flows in m^3/s
# (about 1400, 1165 and 700 cfm); watts per point.
PUBLISHED = FanCurve(pressure=[0.0, 24.9, 49.8], flow=[0.66, 0.55, 0.33], power=[200.0, 190.0, 175.0])


def test_straight_line_curve_is_reproduced_exactly():
    # Monotone cubic Hermite interpolation reproduces linear data exactly (Fritsch & Carlson 1980):
    # line 40 Pa shut-off, 0.6 m^3/s free air -> at 10 Pa, 0.6 * (1 - 10/40) = 0.45 m^3/s.
    c = FanCurve([0.0, 20.0, 40.0], [0.6, 0.3, 0.0], 150.0)
    assert c.flow_at(10.0) == pytest.approx(0.45, rel=1e-12)
    assert c.flow_at(np.array([5.0, 30.0])) == pytest.approx([0.525, 0.15], rel=1e-12)


def test_interpolation_matches_scipy_pchip_reference():
    # Reference tool: scipy's PchipInterpolator on the published points.
    ref = PchipInterpolator(PUBLISHED.pressure, PUBLISHED.flow)
    x = np.linspace(0.0, 49.8, 41)
    assert PUBLISHED.flow_at(x) == pytest.approx(ref(x), rel=1e-12)
    assert [PUBLISHED.flow_at(float(v)) for v in x] == pytest.approx(ref(x), rel=1e-12)


def test_interpolation_is_monotone_without_overshoot():
    # Shape preservation (Fritsch & Carlson 1980): flow falls strictly between published points.
    x = np.linspace(0.0, 49.8, 200)
    q = PUBLISHED.flow_at(x)
    assert np.all(np.diff(q) < 0.0)
    assert q.max() <= 0.66 and q.min() >= 0.33


def test_extrapolation_follows_the_end_segments():
    # Documented rule: straight line through the two end points on each side (hand-worked).
    # Above 49.8 Pa: slope (0.33 - 0.55) / 24.9 per Pa; shut-off at 49.8 + 0.33 * 24.9 / 0.22 = 87.15 Pa.
    assert PUBLISHED.shutoff_pressure == pytest.approx(87.15, rel=1e-12)
    assert PUBLISHED.flow_at(87.15) == pytest.approx(0.0, abs=1e-12)
    assert PUBLISHED.flow_at(100.0) < 0.0
    # Below 0 Pa (fan helped by a pressure drop): 0.66 + 0.11 * 10 / 24.9 at -10 Pa.
    assert PUBLISHED.flow_at(-10.0) == pytest.approx(0.66 + 0.11 * 10.0 / 24.9, rel=1e-12)


def test_affinity_laws_at_80_percent_speed():
    # Fan laws (AMCA 201): Q ~ N, dp ~ N^2, P ~ N^3. A point at 24.9 Pa moves to 0.64 * 24.9 Pa with
    # 0.8 x the flow and 0.512 x the power.
    s = 0.8
    assert PUBLISHED.flow_at(24.9 * s**2, speed_ratio=s) == pytest.approx(0.8 * 0.55, rel=1e-12)
    assert PUBLISHED.power_at(24.9 * s**2, speed_ratio=s) == pytest.approx(0.512 * 190.0, rel=1e-12)
    slow = PUBLISHED.scaled(s)
    assert slow.flow == pytest.approx([0.528, 0.44, 0.264], rel=1e-12)
    assert slow.pressure == pytest.approx([0.0, 15.936, 31.872], rel=1e-12)
    x = np.linspace(-5.0, 60.0, 27)
    assert slow.flow_at(x) == pytest.approx(PUBLISHED.flow_at(x, speed_ratio=s), rel=1e-12, abs=1e-15)


def test_density_correction():
    # Fan laws (AMCA 201): at fixed speed the pressure at a point scales with density. At 1.0 kg/m^3
    # (about 80 degC) the point (24.9 Pa, 0.55 m^3/s) rated at 1.2 kg/m^3 sits at 24.9 / 1.2 Pa.
    assert PUBLISHED.flow_at(24.9 / 1.2, density=1.0) == pytest.approx(0.55, rel=1e-12)
    assert PUBLISHED.power_at(24.9 / 1.2, density=1.0) == pytest.approx(190.0 / 1.2, rel=1e-12)


def test_constant_power_and_clamping():
    c = FanCurve([0.0, 25.0], [0.5, 0.3], 120.0)
    assert c.power == (120.0, 120.0)
    # Per-point power is held at the end values outside the published range (documented rule).
    assert PUBLISHED.power_at(-5.0) == pytest.approx(200.0) and PUBLISHED.power_at(80.0) == pytest.approx(175.0)


@pytest.mark.parametrize("kwargs, match", [
    (dict(pressure=[0.0], flow=[0.5], power=100.0), "at least two"),
    (dict(pressure=[0.0, 25.0], flow=[0.5, 0.6], power=100.0), "fall strictly"),
    (dict(pressure=[25.0, 0.0], flow=[0.5, 0.6], power=100.0), "strictly increasing"),
    (dict(pressure=[0.0, 25.0], flow=[0.5, -0.1], power=100.0), "flow"),
    (dict(pressure=[0.0, 25.0], flow=[0.5, 0.3], power=[100.0, 90.0, 80.0]), "one per curve point"),
])
def test_bad_curves_raise_value_error(kwargs, match):
    with pytest.raises(ValueError, match=match):
        FanCurve(**kwargs)


def test_bad_speed_ratio_raises():
    with pytest.raises(ValueError, match="speed ratio"):
        PUBLISHED.flow_at(10.0, speed_ratio=0.0)
