"""The attic's shape: how its two air layers share the volume, the deck and the section (solid geometry worked
by hand)."""

import math

import pytest

from atticsim.assembly import build_network
from atticsim.scenario import demo_scenario
from atticsim.scenario.geometry import attic_geometry, section_share, volume_share_above


def test_gable_layer_above_mid_height_holds_a_quarter_of_the_air_and_half_the_deck():
    # A triangle's part above half its height is a similar triangle of half the size: a quarter of the area
    # (the volume along the length) and half of each sloped side (similar triangles).
    g = attic_geometry(demo_scenario())
    assert g.shape == "gable" and g.inferred
    assert g.upper_volume_share == pytest.approx(0.25, abs=1e-12)
    assert g.upper_deck_share == pytest.approx(0.5, abs=1e-12)
    assert g.interface_area == pytest.approx(0.5 * 140.0, abs=1e-9)
    # the demo's 6/12 roof over a 10 m span rises 2.5 m: V = A H / 2 = 140 x 2.5 / 2 = 175 m3 (its volume)
    assert g.height == pytest.approx(2.5) and g.span == pytest.approx(10.0) and g.length == pytest.approx(14.0)
    assert g.cross_section == pytest.approx(10.0 * 2.5 / 2)  # the triangle across the span


def test_square_pyramid_shares():
    # A square pyramid (a hip roof with L = W, r = 1): the section at half height is a quarter of the floor;
    # the pyramid above it is an eighth of the volume, and its sloped sides a quarter of the roof
    # (similar solids: areas scale with the square, volumes with the cube).
    assert section_share(0.5, 1.0) == pytest.approx(0.25)
    assert volume_share_above(0.5, 1.0) == pytest.approx(0.125)
    assert volume_share_above(0.0, 0.3) == pytest.approx(1.0) and volume_share_above(1.0, 0.3) == pytest.approx(0.0)


def test_hip_height_from_the_volume():
    # Four planes at 6/12 over 12 m x 12 m, 144 m3 of air: a square pyramid has V = A H / 3, so H = 3 m,
    # and a 6/12 pitch over a 6 m half-span rises 3 m: the geometry is consistent.
    import tomllib
    from importlib import resources

    from atticsim.scenario.load import scenario_from_dict

    data = tomllib.loads(resources.files("atticsim.data").joinpath("demo_house.toml").read_text())
    data["roof"]["planes"] = [{"name": f"p{az}", "area": "40 m2", "tilt": "6/12", "azimuth": f"{az} deg"}
                              for az in (0, 90, 180, 270)]
    data["attic"].update(floor_area="144 m2", volume="144 m3")
    sc = scenario_from_dict(data, "hip house")
    g = attic_geometry(sc)
    assert g.shape == "hip" and g.inferred
    assert g.height == pytest.approx(3.0, rel=1e-6)
    assert g.upper_volume_share == pytest.approx(0.125, rel=1e-6)
    assert g.upper_deck_share == pytest.approx(0.25, rel=1e-6)


def test_upper_volume_fraction_overrides_and_moves_the_interface():
    # Half the air above the interface in a gable: (1 - s)^2 = 1/2, s = 1 - 1/sqrt 2 = 0.2929 of the height;
    # the deck above it is 1 - s = 0.7071 of the deck.
    g = attic_geometry(demo_scenario(["attic.upper_volume_fraction=0.5"]))
    assert g.interface_height == pytest.approx(2.5 * (1 - 1 / math.sqrt(2)), rel=1e-6)
    assert g.upper_deck_share == pytest.approx(1 / math.sqrt(2), rel=1e-6)
    net = build_network(demo_scenario(["attic.upper_volume_fraction=0.5"]))
    assert net.w_up == pytest.approx(0.5, rel=1e-9) and net.f_up == pytest.approx(1 / math.sqrt(2), rel=1e-6)


def test_network_takes_the_deck_share_from_the_geometry():
    net = build_network(demo_scenario())
    assert (net.w_up, net.f_up, net.f_up_framing) == pytest.approx((0.25, 0.5, 0.25))
