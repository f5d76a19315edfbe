"""Scenario: the house, attic, fan, vents, sensor and thermostat, read from TOML and validated."""

from atticsim.scenario.load import ScenarioError, apply_overrides, demo_scenario, load_scenario  # noqa: F401
from atticsim.scenario.schema import Scenario  # noqa: F401
