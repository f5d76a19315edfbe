"""atticsim: attic thermal simulation with a thermostat-switched ventilation fan.

Python API (the CLI only wraps it)::

    import atticsim
    sc = atticsim.load_scenario("scenarios/heron_lane_bungalow.toml", ["fan.flow=1500 cfm"])
    result = atticsim.simulate(sc, start="2025-07-01", end="2025-07-03")
    result.summary, result.daily, result.timeseries, result.events

Heavy libraries load on first use, so ``import atticsim`` stays light.
"""

from atticsim.version import __version__

__all__ = ["load_scenario", "demo_scenario", "simulate", "__version__"]


def __getattr__(name):
    if name in ("load_scenario", "demo_scenario"):
        from atticsim import scenario

        return getattr(scenario, name)
    if name == "simulate":
        from atticsim.pipeline import simulate

        return simulate
    raise AttributeError(f"module 'atticsim' has no attribute {name!r}")
