"""Validation cases: field studies. A field study measured other houses in their own weather; the cases run
our fictional demo house in the nearest real climate pvlib ships (typical-year files) and compare the tool's
figure with the published one or its range, saying which house and climate stand on each side."""

from __future__ import annotations

from functools import lru_cache

from atticsim.validation.registry import OUTSIDE, Comparison, case

_PARKER = ("Parker, Sonne & Sherwin (2002), Comparative Evaluation of the Impact of Roofing Systems on "
           "Residential Cooling Energy Demand in Florida, ACEEE Summer Study, FSEC-CR-1220-00: the attic at "
           "the peak summer hour")
_FLORIDA = ("Ours: the demo house (fictional; 140 m2 gable attic, 4 air changes an hour of passive "
            "ventilation, fan disabled) with R-19 over the ceiling, on pvlib's typical year 12839.tm2 (Miami, "
            "FL, hot-humid) for 8-31 July; the figure is the mean day's air at mid-attic height (the mean of the "
            "two air layers, which meet there) minus outdoor air at the hour the outdoor air peaks. Theirs: side-by-side unoccupied houses in Ft. Myers, FL, "
            "R-19 ceilings, 8-31 July 2000, attic air measured at mid-attic")
# (every optical property given; a finish the demo's covering may carry is dropped with its material)
_WHITE = {"roof": {"absorptance": 0.30, "emittance": 0.90, "surface_texture": "glassy",
                   "covering": {"material": "metal", "finish": None}}}


@lru_cache(maxsize=None)
def _florida_july(insulation="R-19", white=False, absorptance=None, air_changes=None):
    """Hourly mean day (outdoor air, attic air, the south roof's outer surface, ceiling flux) of the demo house
    without its fan in Miami, 8-31 July of the typical year (laid on 2000, the year the field houses were
    measured); ``white`` puts the white metal roof on, ``absorptance`` and ``air_changes`` [1/h] vary it."""
    import copy

    from atticsim.forcing.weather import load_weather
    from atticsim.pipeline import simulate
    from atticsim.validation.houses import demo_house

    changes = {"fan": {"enabled": False}, "simulation": {"spinup_days": 3}, "ceiling": {"insulation": insulation}}
    if white:
        changes.update(copy.deepcopy(_WHITE))
    if absorptance is not None:
        changes.setdefault("roof", {})["absorptance"] = absorptance
    if air_changes is not None:
        changes["vents"] = {"passive_ach": air_changes}
    weather = load_weather("pvlib:12839.tm2", year=2000)
    r = simulate(demo_house(changes, "field case"), weather=weather, start="2000-07-08", end="2000-07-31")
    ts = r.timeseries
    surface = f"roof_surface_{r.scenario.roof.planes[0].name}_c"
    # the air at mid-attic height, where the field houses were measured: between the two layers, their mean
    ts = ts.assign(mid_attic_air_c=0.5 * (ts["air_upper_c"] + ts["air_lower_c"]))
    day = ts[["outdoor_air_c", "mid_attic_air_c", surface, "ceiling_heat_gain_w"]].groupby(ts.index.hour).mean()
    day["roof_surface_c"] = day[surface]
    day["ceiling_flux_w_m2"] = day["ceiling_heat_gain_w"] / r.scenario.attic.floor_area
    return day


def _peak_hour_excess(day):
    hour = int(day["outdoor_air_c"].idxmax())
    return float(day["mid_attic_air_c"][hour] - day["outdoor_air_c"][hour]), hour


@case(group="field comparisons", name="Dark shingles: attic air above outdoor air at the peak hour",
      source=_PARKER + ", control house with standard dark shingles: 40 degF (22.2 K) above ambient",
      unit="K", tolerance=5.0, digits=1,
      inputs=_FLORIDA + ". One measured house, so the band (±5 K) is ours: attics of one construction differ "
             "by a few kelvin with their vents, shading and sensors")
def dark_roof_excess():
    excess, hour = _peak_hour_excess(_florida_july())
    return Comparison(excess, 40.0 / 1.8, note=f"outdoor air peaks in the {hour:02d}:00 hour (standard time)")


@case(group="field comparisons", name="White metal roof: attic air above outdoor air at the peak hour",
      source=_PARKER + ", highly reflective roofs (white metal, white tile): no greater than ambient",
      unit="K", tolerance=0.0, kind="range", digits=1, expected=OUTSIDE,
      inputs=_FLORIDA.replace("with R-19", "with a white metal roof (solar absorptance 0.30, emittance 0.90; "
                                           "from memory for new white paint) and R-19")
      + "; the published bound is taken as a range from -10 K to 0 K",
      why=("In the model a white roof that still absorbs 30 % of the sun stays well above the outdoor air at "
           "midday, and the attic air follows it; the measured attics stayed at or below the outdoor air. F2's "
           "line in the case list below gives this run's roof surface excess at that hour and the attic's with a "
           "lower absorptance (0.25) and with twice the ventilation (8 air changes an hour): neither alone closes "
           "the gap. The dark roof (F1) is within its band, so the miss lies in how little heat a reflective "
           "roof lets through, which the model overstates or the single measured house understates; not "
           "resolved here"))
def white_roof_excess():
    day = _florida_july(white=True)
    excess, hour = _peak_hour_excess(day)
    surface = float(day["roof_surface_c"][hour] - day["outdoor_air_c"][hour])
    lower = _peak_hour_excess(_florida_july(white=True, absorptance=0.25))[0]
    vented = _peak_hour_excess(_florida_july(white=True, air_changes=8.0))[0]
    return Comparison(excess, (-10.0, 0.0),
                      note=f"outdoor air peaks in the {hour:02d}:00 hour (standard time); the south roof's outer "
                           f"surface {surface:.1f} K above it; the attic {lower:.1f} K above with absorptance 0.25, "
                           f"{vented:.1f} K with 8 air changes an hour")


_FILMS = 0.16 + 0.16 + 0.0127 / 0.16  # m2K/W: still-air films above and below (heat flow down) + 12.7 mm gypsum


def _ceiling_flux_case(insulation, r_si):
    def run():
        day = _florida_july(insulation)
        measured_excess = 40.0 / 1.8  # the field study's dark-shingle attic at the peak hour [K]
        hour = int(day["outdoor_air_c"].idxmax())
        reference = (day["outdoor_air_c"][hour] + measured_excess - 24.0) / (r_si + _FILMS)
        late = int(day["ceiling_flux_w_m2"].idxmax())
        return Comparison(float(day["ceiling_flux_w_m2"].max()), float(reference),
                          note=f"the flux peaks in the {late:02d}:00 hour, the outdoor air in the {hour:02d}:00 hour")

    run.__name__ = f"ceiling_flux_{insulation.replace('-', '').lower()}"
    case(group="field comparisons", name=f"Ceiling heat flux through {insulation}, dark shingles, peak of the day",
         source=_PARKER + " (22.2 K above ambient), carried through the ceiling by steady conduction, worked by "
                "hand: films from ASHRAE Handbook - Fundamentals (still air, heat flow down, 0.16 m2K/W each; "
                "from memory), gypsum k 0.16 W/mK",
         unit="W/m2", tolerance=0.25, kind="rel", digits=2,
         inputs=_FLORIDA.replace("with R-19", f"with {insulation}")
         + f". The study quotes no flux; the reference is its peak-hour attic air (this run's outdoor peak + 22.2 K) "
           f"conducted to rooms at 24 degC through {insulation} ({r_si:.2f} m2K/W) and films and gypsum "
           f"({_FILMS:.2f} m2K/W). 25 % (ours): the air-to-room estimate leaves out the hot deck's radiation onto "
           "the insulation, which the model carries, and the insulation's heat capacity, which delays the peak")(run)


_ceiling_flux_case("R-19", 19 * 0.1761102)
_ceiling_flux_case("R-30", 30 * 0.1761102)


_TOOLEY = ("Tooley & Davis (1995), powered attic ventilators in eight North Carolina houses, EEBA Excellence in "
           "Building conference (from memory)")
_CAROLINA = ("Ours: the demo house (fictional) with its vents, leaks and fan described as in "
             "scenarios/starved_intakes.toml (1 ft2 of soffit, 2 ft2 of gable vents, a 1600 cfm roof fan on its "
             "curve, 30 in2 of ceiling leaks, 90 in2 of envelope leakage; thermostat on at 40, off at 35 degC) on "
             "pvlib's typical year 723170TYA.CSV (Greensboro, NC, mixed-humid) for July, the pressure balance "
             "solved every 5 minutes; figure averaged over the solves while the fan runs. Theirs: eight "
             "occupied North Carolina houses with powered attic ventilators, tested fan on against fan off")
_VENTED = {
    "house": {"envelope_leakage_area": "90 in2", "atmospheric_appliances": True},
    "ceiling": {"leakage_area": "30 in2"},
    "vents": {"passive_ach": None, "openings": [
        {"name": "soffit", "kind": "soffit", "net_free_area": "1 ft2", "height": "0.15 m"},
        {"name": "gable vents", "kind": "gable", "net_free_area": "2 ft2", "height": "1.8 m"}]},
    "fan": {"flow": None, "power": "250 W", "kind": "roof-vent", "height": "2.0 m",
            "curve_pressure": ["0 in_wc", "0.05 in_wc", "0.1 in_wc", "0.15 in_wc", "0.2 in_wc"],
            "curve_flow": ["1600 cfm", "1480 cfm", "1330 cfm", "1130 cfm", "880 cfm"]},
    "simulation": {"spinup_days": 1},
}


@lru_cache(maxsize=None)
def _carolina_july(soffit="1 ft2"):
    """(mean depressurisation [Pa], mean house air drawn into the attic [cfm]) while the fan runs."""
    import math

    import numpy as np

    from atticsim.forcing.weather import load_weather
    from atticsim.pipeline import run_raw
    from atticsim.validation.houses import demo_house

    vents = dict(_VENTED["vents"])
    vents["openings"] = [dict(vents["openings"][0], net_free_area=soffit), vents["openings"][1]]
    sc = demo_house({**_VENTED, "vents": vents}, "field case")
    weather = load_weather("pvlib:723170TYA.CSV", year=2025)
    raw = run_raw(sc, weather=weather, start="2025-07-01", end="2025-07-31", include_no_fan=False)
    running = [s for _, s in raw.with_fan.air_updates if s.fan_flow > 0.0]
    if not running:
        raise RuntimeError("the fan never ran in the period")
    depress = [s.depressurisation for s in running if math.isfinite(s.depressurisation)]
    cfm = 60.0 / 0.3048**3
    return float(np.mean(depress)), float(np.mean([max(s.ceiling_flow, 0.0) for s in running])) * cfm


@case(group="field comparisons", name="Powered attic fan: house depressurised while it runs",
      source=_TOOLEY + ": houses depressurised 0.5-2.5 Pa", unit="Pa", tolerance=0.0, kind="range", digits=2,
      inputs=_CAROLINA)
def fan_depressurisation():
    generous = _carolina_july("10 ft2")[0]
    return Comparison(_carolina_july()[0], (0.5, 2.5),
                      note=f"with 10 ft2 of soffit instead (the generous_intakes variant) {generous:.2f} Pa, below "
                           "the field range: the figure follows the intake area, which the study's houses are "
                           "not described by here")


@case(group="field comparisons", name="Powered attic fan: house air drawn up through the ceiling",
      source=_TOOLEY + ": 104-646 cfm of conditioned air pulled into the attic (231 cfm on average)", unit="cfm",
      tolerance=0.0, kind="range", digits=0, inputs=_CAROLINA)
def fan_house_air_drawn():
    generous = _carolina_july("10 ft2")[1]
    return Comparison(_carolina_july()[1], (104.0, 646.0),
                      note=f"with 10 ft2 of soffit instead {generous:.0f} cfm")
