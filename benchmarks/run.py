"""Wall-time figures for atticsim (printed, never asserted).

    python benchmarks/run.py            # 7-day and 92-day demo runs
    python benchmarks/run.py --json     # the same as JSON

Each run is the full `simulate` (with-fan and no-fan simulations, each with its spin-up days).
"""

from __future__ import annotations

import argparse
import json
import platform
import resource
import time


def timed_run(days: int) -> dict:
    import pandas as pd

    import atticsim

    sc = atticsim.demo_scenario()
    start = pd.Timestamp("2025-06-01")
    end = start + pd.Timedelta(days=days - 1)
    t0 = time.perf_counter()
    result = atticsim.simulate(sc, start=start.date().isoformat(), end=end.date().isoformat())
    wall = time.perf_counter() - t0
    return {"days": days, "wall_s": round(wall, 2), "s_per_simulated_day": round(wall / days, 3),
            "fan_starts": result.summary["fan_starts"],
            "energy_balance_error_pct": result.summary["energy_balance_error_pct"]}


def main():
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--json", action="store_true", help="print JSON")
    ap.add_argument("--days", type=int, nargs="*", default=[7, 92])
    args = ap.parse_args()
    runs = [timed_run(d) for d in args.days]
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    figures = {"machine": f"{platform.machine()} {platform.processor() or ''}".strip(),
               "python": platform.python_version(), "runs": runs, "peak_mb": round(peak_mb, 1)}
    if args.json:
        print(json.dumps(figures, indent=2))
    else:
        for r in runs:
            print(f"{r['days']:4d}-day demo run: {r['wall_s']:8.2f} s  ({r['s_per_simulated_day']:.3f} s per day, "
                  f"{r['fan_starts']} starts)")
        print(f"peak memory: {peak_mb:.0f} MB")


if __name__ == "__main__":
    main()
