"""pint's disk cache: one environment's cache never breaks another's.

pint can cache its parsed definitions on disk, and its entries hold paths into the environment that wrote
them (its own default_en.txt). A cache shared by every environment with the same pint version (pint's
automatic cache folder, one for the whole user) breaks every other environment once the environment that
filled it is deleted: ``FileNotFoundError: .../pint/default_en.txt/constants_en.txt``. atticsim keys its pint
cache by the location and version of the pint it runs with, inside its own cache folder, and falls back to
no cache on any failure of it.

Two "environments" here are two copies of the installed pint package, each put first on the path of a
subprocess; both share one cache folder (``ATTICSIM_CACHE_DIR`` and ``XDG_CACHE_HOME``).
"""

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pint
import pytest

USE_UNITS = ("import pint; from atticsim.units import to_si; "
             "print(pint.__file__); print(to_si('1200 cfm', 'flow'), to_si('R-38', 'r_value'))")
PINT_SHARED = ("import sys, pint; u = pint.UnitRegistry(cache_folder=sys.argv[1]); "
               "print(u.Quantity(1.0, 'ft**3/min').to('m**3/s').magnitude)")


@pytest.fixture
def two_environments(tmp_path):
    installed = Path(pint.__file__).resolve().parent
    envs = []
    for name in ("env_a", "env_b"):
        shutil.copytree(installed, tmp_path / name / "pint")
        envs.append(tmp_path / name)
    shared = tmp_path / "shared-cache"
    shared.mkdir()
    return envs, shared


def run_in(env_dir: Path, shared: Path, code: str, *args):
    env = dict(os.environ, PYTHONPATH=str(env_dir), ATTICSIM_CACHE_DIR=str(shared), XDG_CACHE_HOME=str(shared))
    env.pop("NUMBA_CACHE_DIR", None)
    return subprocess.run([sys.executable, "-c", code, *map(str, args)], env=env, capture_output=True, text=True)


def test_the_failure_of_a_shared_pint_cache_reproduced(two_environments):
    # what a user-wide cache does (pint's own behaviour, shown with its cache in one shared folder):
    # the first environment fills it, is deleted, and the second one fails
    (env_a, env_b), shared = two_environments
    assert run_in(env_a, shared, PINT_SHARED, shared).returncode == 0
    shutil.rmtree(env_a)
    broken = run_in(env_b, shared, PINT_SHARED, shared)
    assert broken.returncode != 0 and "FileNotFoundError" in broken.stderr and "env_a" in broken.stderr


def test_atticsim_in_a_second_environment_runs_after_the_first_is_deleted(two_environments):
    (env_a, env_b), shared = two_environments
    first = run_in(env_a, shared, USE_UNITS)
    assert first.returncode == 0, first.stderr
    assert str(env_a) in first.stdout  # the subprocess really used the copy
    assert any(p.name.startswith("pint-") for p in shared.iterdir())  # it filled a cache in the shared folder
    shutil.rmtree(env_a)
    second = run_in(env_b, shared, USE_UNITS)
    assert second.returncode == 0, second.stderr
    # 1200 cfm = 1200 x 0.3048**3 / 60 m3/s; R-38 = 38 x 0.17611 m2K/W (NIST SP 811 appendix B)
    flow, r = (float(x) for x in second.stdout.splitlines()[-1].split())
    assert flow == pytest.approx(1200 * 0.3048**3 / 60, rel=1e-12) and r == pytest.approx(6.6922, abs=1e-4)
    # and again, now that the second environment has its own cache entries
    assert run_in(env_b, shared, USE_UNITS).returncode == 0


def test_a_damaged_cache_falls_back_to_no_cache(two_environments):
    (env_a, _), shared = two_environments
    assert run_in(env_a, shared, USE_UNITS).returncode == 0
    damaged = [p for p in shared.rglob("*") if p.is_file() and p.parent.name.startswith("pint-")]
    assert damaged
    for p in damaged:
        p.write_bytes(b"\x80garbage" if p.suffix == ".pickle" else b"{")
    again = run_in(env_a, shared, USE_UNITS)
    assert again.returncode == 0, again.stderr
