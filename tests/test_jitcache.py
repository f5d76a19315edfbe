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


def test_a_first_short_run_uses_the_reference_while_the_fast_solver_compiles(tmp_path, monkeypatch):
    """On a cold cache a run of up to FIRST_RUN_DAYS starts the background compile, says so once and runs with
    the reference solver (its notes say so); a longer one, or one that asks for a solver, compiles now and says
    that; a warm cache says nothing. (The cache state and the background start are stood in for here; the real
    thing runs in the test below.)"""
    from click.testing import CliRunner

    from atticsim.cli.main import cli

    started = []
    monkeypatch.setattr(jitcache, "compile_in_background", lambda command: started.append(command) or True)
    monkeypatch.setattr(jitcache, "cold", lambda: True)
    day = ["run", "--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=0"]
    r = CliRunner().invoke(cli, day + ["--out", str(tmp_path / "a")])
    assert r.exit_code == 0, r.output
    assert r.output.count("compiled in the background") == 1 and "solver: reference" in r.output
    assert started and started[0][1:] == ["-m", "atticsim.cli.warm"]
    for extra in (["--solver", "fast"], ["--end", "2025-07-10"]):
        r = CliRunner().invoke(cli, day + extra + ["--out", str(tmp_path / extra[1])])
        assert r.exit_code == 0, r.output
        assert r.output.count("compiling the solver for this machine, once") == 1
        assert "solver: reference" not in r.output and "background" not in r.output
    assert len(started) == 1
    monkeypatch.setattr(jitcache, "cold", lambda: False)
    r = CliRunner().invoke(cli, day + ["--out", str(tmp_path / "b")])
    assert r.exit_code == 0 and "compil" not in r.output and "solver: reference" not in r.output


def test_the_first_run_on_a_fresh_cache_compiles_the_fast_solver_in_the_background(tmp_path):
    """As a user meets it, in fresh processes with empty caches: the first one-day run uses the reference solver
    and starts the compile; the compile ends by itself and fills the cache; the next run uses the fast solver and
    says nothing of compiling."""
    import time

    env = dict(os.environ, ATTICSIM_CACHE_DIR=str(tmp_path / "cache"), XDG_CACHE_HOME=str(tmp_path / "xdg"))
    env.pop("NUMBA_CACHE_DIR", None)
    day = [sys.executable, "-m", "atticsim.cli.main", "run", "--start", "2025-07-01", "--end", "2025-07-01"]
    first = subprocess.run(day + ["--out", str(tmp_path / "a")], env=env, capture_output=True, text=True)
    assert first.returncode == 0, first.stderr
    assert "compiled in the background" in first.stderr and "solver: reference" in first.stdout
    probe = [sys.executable, "-c", "from atticsim import jitcache; print(jitcache.compiling(), jitcache.cold())"]
    deadline = time.monotonic() + 600
    while True:
        state = subprocess.run(probe, env=env, capture_output=True, text=True, check=True).stdout.split()
        if state == ["False", "False"] or time.monotonic() > deadline:
            break
        time.sleep(2)
    assert state == ["False", "False"]  # the compile ended and left the solver in the cache
    second = subprocess.run(day + ["--out", str(tmp_path / "b")], env=env, capture_output=True, text=True)
    assert second.returncode == 0, second.stderr
    assert "compil" not in second.stderr and "solver: reference" not in second.stdout
