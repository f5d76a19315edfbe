"""Roof coverings by material and finish carry their optics; explicit keys override; the run says which
values came from the preset."""

import pytest

from atticsim.materials import COVERING_FINISHES
from atticsim.pipeline import model_notes
from atticsim.scenario import demo_scenario
from atticsim.scenario.load import ScenarioError


def covering(material, finish=None, extra=()):
    sets = [f'roof.covering.material="{material}"']
    sets.append(f'roof.covering.finish="{finish}"' if finish else 'roof.covering.finish="dark"')
    return demo_scenario(sets + list(extra))


def test_bare_metal_has_a_low_emittance_and_white_paint_a_low_absorptance():
    # bare galvanized steel emits little (0.05-0.25, ASHRAE Handbook Fundamentals emittance table, from
    # memory); white paint reflects most of the sun (Parker, Sonne & Sherwin 2002, from memory)
    bare = covering("metal", "bare").roof.optics()[0]
    white = covering("metal", "white-paint").roof.optics()[0]
    dark_shingle = demo_scenario().roof.optics()[0]
    assert bare["emittance"] < 0.3 < dark_shingle["emittance"]
    assert white["absorptance"] < 0.4 < dark_shingle["absorptance"]
    assert bare["surface_texture"] == "glassy" and dark_shingle["surface_texture"] == "granular"


def test_explicit_keys_override_and_the_notes_say_what_came_from_the_preset():
    sc = covering("tile", "terracotta", ["roof.absorptance=0.5"])
    optics, notes = sc.roof.optics()
    assert optics["absorptance"] == 0.5
    assert optics["emittance"] == COVERING_FINISHES["tile"]["terracotta"]["emittance"]
    assert notes and "emittance" in notes[0] and "absorptance" not in notes[0]
    assert any("terracotta" in n for n in model_notes(sc))


def test_a_finish_must_belong_to_its_material():
    with pytest.raises(ScenarioError, match="unknown finish 'dark' for metal"):
        demo_scenario(['roof.covering.material="metal"'])


def test_every_preset_is_physical():
    for material, finishes in COVERING_FINISHES.items():
        for finish, p in finishes.items():
            assert 0.0 < p["absorptance"] <= 1.0 and 0.0 < p["emittance"] <= 1.0, (material, finish)
