"""The compiled solver's cache: in atticsim's own folder, cleared when a compiled-in source changes."""

import os
import subprocess
import sys

import numba
import pytest

from atticsim import jitcache
from atticsim.hybrid import blocks, compiled
from atticsim.network import kernel


def test_compiled_functions_cache_in_atticsims_folder_only():
    where = jitcache.folder()
    if where is None:
        pytest.skip("NUMBA_CACHE_DIR is set or no cache folder is writable: numba's own place is used")
    for func in (compiled.advance, blocks.taylor, kernel.rhs):
        path = func._cache._impl.locator.get_cache_path()
        assert os.path.commonpath([path, str(where)]) == str(where)
    # numba's setting for everyone else is left as it was
    assert numba.config.CACHE_DIR == os.environ.get("NUMBA_CACHE_DIR", "")


def test_check_empties_the_folder_when_the_sources_change(tmp_path):
    # a cache folder whose stamp is not the sources' hash loses its compiled files; the stamp is renewed
    code = (
        "from atticsim import jitcache; w = jitcache.folder(); sub = w / 'hybrid_0'; sub.mkdir(exist_ok=True);"
        "(sub / 'x.nbi').write_text(''); (sub / 'x.1.nbc').write_text(''); (w / 'keep.txt').write_text('');"
        "(w / 'atticsim-jit.stamp').write_text('old'); jitcache.check();"
        "print(sorted(p.name for p in w.rglob('*') if p.is_file()),"
        " (w / 'atticsim-jit.stamp').read_text() == jitcache._digest())"
    )
    env = dict(os.environ, ATTICSIM_CACHE_DIR=str(tmp_path))
    env.pop("NUMBA_CACHE_DIR", None)
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True).stdout
    assert out.strip() == "['atticsim-jit.stamp', 'keep.txt'] True"


def test_an_empty_cache_is_said_before_the_first_simulation(tmp_path):
    # a fresh install's folder holds no compiled solver: cold, and run says so once on stderr before it
    # simulates; a folder holding the solver's index is warm (checked in fresh processes, as a user meets it)
    code = ("from atticsim import jitcache; w = jitcache.folder(); print(jitcache.cold());"
            "sub = w / 'hybrid_0'; sub.mkdir(); (sub / 'compiled.advance-900.py311.nbi').write_text('');"
            "import atticsim.jitcache as j; print(j.cold())")
    env = dict(os.environ, ATTICSIM_CACHE_DIR=str(tmp_path))
    env.pop("NUMBA_CACHE_DIR", None)
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True).stdout
    assert out.split() == ["True", "False"]


def test_run_says_it_compiles_only_when_the_cache_is_cold(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from atticsim.cli.main import cli

    args = ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=0"]
    monkeypatch.setattr(jitcache, "cold", lambda: True)
    r = CliRunner().invoke(cli, args + ["--out", str(tmp_path / "a")])
    assert r.exit_code == 0 and r.output.count("compiling the solver for this machine, once") == 1
    monkeypatch.setattr(jitcache, "cold", lambda: False)
    r = CliRunner().invoke(cli, args + ["--out", str(tmp_path / "b")])
    assert r.exit_code == 0 and "compiling" not in r.output
