"""The demo data: invented, reproducible, and consistent with the built-in demo house."""

import importlib.util
from pathlib import Path

from atticsim.scenario import demo_scenario, load_scenario

ROOT = Path(__file__).resolve().parents[2]


def test_demo_weather_files_are_reproducible(tmp_path):
    spec = importlib.util.spec_from_file_location("make_demo_weather", ROOT / "weather_demo" / "make_demo_weather.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    for path in module.make(tmp_path):
        shipped = ROOT / "weather_demo" / path.name
        assert path.read_bytes() == shipped.read_bytes(), path.name
        assert "invented: yes" in shipped.read_text()[:600]


def test_scenario_file_is_the_built_in_demo_house():
    file_sc = load_scenario(ROOT / "scenarios" / "heron_lane_bungalow.toml")
    built_in = demo_scenario()
    assert file_sc.model_copy(update={"weather": built_in.weather}) == built_in


def test_every_demo_scenario_loads_and_says_it_is_fictional():
    for path in sorted((ROOT / "scenarios").glob("*.toml")):
        sc = load_scenario(path)
        assert "fictional" in sc.house.name.lower()
        assert Path(sc.weather.file).exists() or sc.weather.file.startswith("demo:")


def test_api_names_are_functions():
    import atticsim
    import atticsim.pipeline  # noqa: F401  (importing submodules must not shadow the API)

    assert callable(atticsim.simulate) and callable(atticsim.load_scenario)
