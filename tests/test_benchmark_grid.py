"""The benchmark's sweep grid has exactly the number of points asked for, over its fixed ranges."""

import importlib.util
from pathlib import Path

import pytest

_spec = importlib.util.spec_from_file_location("bench_run", Path(__file__).resolve().parent.parent / "benchmarks" / "run.py")
bench = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(bench)


@pytest.mark.parametrize("points", [1, 7, 20, 200, 999, 1000])
def test_grid_has_exactly_the_points_asked_for(points):
    side, other = bench.grid_sides(points)
    assert side * other == points and side <= other


def test_spread_runs_from_low_to_high():
    values = [float(v) for v in bench.spread(36.0, 39.0, 25).split(",")]
    assert len(values) == 25 and values[0] == 36.0 and values[-1] == 39.0
    assert values == sorted(values)
    assert bench.spread(1.0, 2.55, 1) == "1"
