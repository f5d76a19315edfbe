"""Where the compiled solver's time goes, by function: run under ``perf record``, this script compiles the
solver in its own process (point ATTICSIM_CACHE_DIR at an empty folder: code loaded from numba's cache has no
addresses to map), writes ``/tmp/perf-<pid>.map`` naming every compiled function, then integrates the demo
house's year with the fan ``--repeat`` times (invented weather, fictional house).

    ATTICSIM_CACHE_DIR=$(mktemp -d) perf record -e cpu-clock -F 4000 -o year.data -- python benchmarks/perf_map.py
    perf report -i year.data --sort sym --stdio -n | head -40

A function's size in the map is the distance to the next address (numba does not give it), so a sample
just past a function's end can be named after its neighbour. Inlined helpers show as their caller.
"""

import argparse
import os
import sys
import time


def write_map() -> int:
    """Name every compiled function of atticsim's modules loaded in this process by its address."""
    from numba.core.registry import CPUDispatcher

    names = {}
    for module in list(sys.modules.values()):
        if not getattr(module, "__name__", "").startswith("atticsim"):
            continue
        for name, obj in list(vars(module).items()):
            if not isinstance(obj, CPUDispatcher):
                continue
            for cres in obj.overloads.values():
                library = cres.library
                for fn in library._final_module.functions:
                    if fn.is_declaration:
                        continue
                    address = library.get_pointer_to_function(fn.name)
                    if address:
                        names[address] = f"{module.__name__.split('.')[-1]}.{name}:{fn.name[:100]}"
    addresses = sorted(names)
    with open(f"/tmp/perf-{os.getpid()}.map", "w") as fh:
        for i, a in enumerate(addresses):
            size = min(addresses[i + 1] - a if i + 1 < len(addresses) else 1 << 16, 1 << 20)
            fh.write(f"{a:x} {size:x} {names[a]}\n")
    return len(addresses)


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    import atticsim
    import atticsim.pipeline as pipeline
    from atticsim.forcing.weather import load_weather

    scenario = atticsim.demo_scenario()
    weather = load_weather(scenario.weather.file)
    atticsim.simulate(scenario, weather=weather, start="2025-01-01", end="2025-01-02")  # compiles everything
    print(f"{write_map()} compiled functions mapped", file=sys.stderr)
    raw = None
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        raw = pipeline.run_raw(scenario, weather, start="2025-01-01", end="2025-12-30", include_no_fan=False)
        print(f"year with the fan: {time.perf_counter() - t0:.3f} s (run_raw, spin-up included)", file=sys.stderr)
    return raw


if __name__ == "__main__":
    main()
