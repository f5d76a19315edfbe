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
