"""The network at steady state under constant weather against the resistance network worked by hand: the
house, the weather and the handbook's series-parallel sum (with its sources) are in
atticsim.validation.hand_network, shared with the validation cases."""

import pytest

from atticsim.assembly import build_network
from atticsim.validation.hand_network import hand_worked, quiet_house, steady_run


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
