"""Make the demo logger file in this folder. THE HOUSE, ITS READINGS AND THE "TRUE" VALUES ARE INVENTED.

Run from the repository root:  python weather_demo/make_demo_logger.py

``heron_lane_logger_2025.csv`` is what a data logger might have recorded in the fictional Heron Lane bungalow
(scenarios/heron_lane_bungalow.toml) from July 10 to July 20 of the invented 2025 weather of Saltmarsh Point:
a probe at mid-attic (``attic_air_c``), one taped beside the thermostat's sensor (``sensor_c``), the fan's state
from a current clamp (``fan_on``) and an outdoor probe in the shade (``outdoor_c``), every 5 minutes. It is the
model's own output (atticsim.calibration.synthetic) with "true" values that differ from the scenario's, plus
white noise and a slow drift (fixed seed: running this script again gives the same file, a test checks it):

- vents.passive_ach = 2.5 per hour (the scenario says 4: the soffit vents are half blocked by insulation)
- roof.absorptance = 0.85 (the scenario's dark-shingle preset says 0.92: the shingles have weathered lighter)
- ceiling.insulation = R-22 (the scenario says R-30: the loose fill has settled)
- sensor.time_constant = 45 s (the scenario says 20 s)

For demonstrations of ``atticsim fit`` only; not a measurement of any real attic.
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
FILE = "heron_lane_logger_2025.csv"
#: The invented "true" values the readings were made with.
TRUTH = {"vents.passive_ach": 2.5, "roof.absorptance": 0.85, "ceiling.insulation": '"R-22"',
         "sensor.time_constant": '"45 s"'}
START, END = "2025-07-10T00:00:00", "2025-07-20T00:00:00"
NOISE_K, DRIFT_K, DRIFT_HOURS, SEED = 0.15, 0.25, 12.0, 2025


def make(folder: Path = HERE) -> Path:
    """Write the demo logger file into ``folder``; return its path."""
    from atticsim.calibration.synthetic import synthetic_log, write_log
    from atticsim.scenario import load_scenario

    truth = load_scenario(ROOT / "scenarios" / "heron_lane_bungalow.toml", [f"{k}={v}" for k, v in TRUTH.items()])
    log = synthetic_log(truth, None, START, END, columns=("attic_air_c", "sensor_c"), step_s=300.0,
                        noise_k=NOISE_K, drift_k=DRIFT_K, drift_hours=DRIFT_HOURS, seed=SEED)
    header = {"house": "Heron Lane bungalow (fictional)",
              "logger": "invented: probes at mid-attic and beside the thermostat's sensor, the fan's state from a "
                        "current clamp, an outdoor probe in the shade; every 5 min",
              "invented": "yes"}
    notes = ["INVENTED readings made by weather_demo/make_demo_logger.py from atticsim's model of the fictional "
             "Heron Lane bungalow on the invented Saltmarsh Point weather; not a measurement of any real attic",
             "the invented true values: " + ", ".join(f"{k} = {str(v).strip(chr(34))}" for k, v in TRUTH.items()),
             f"white noise {NOISE_K:g} K and a slow drift of {DRIFT_K:g} K over about {DRIFT_HOURS:g} h on the "
             f"attic probes, seed {SEED}"]
    path = folder / FILE
    write_log(log, path, header, notes)
    return path


if __name__ == "__main__":
    print(make(Path(sys.argv[1]) if len(sys.argv) > 1 else HERE))
