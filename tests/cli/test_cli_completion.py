"""Shell completion as the README documents it (click's completion protocol)."""

import os
import subprocess
import sys


def complete(words, cword):
    env = {**os.environ, "_ATTICSIM_COMPLETE": "bash_complete", "COMP_WORDS": words, "COMP_CWORD": str(cword)}
    code = "from atticsim.cli.main import cli; cli(prog_name='atticsim')"
    return subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=False).stdout


def test_bash_completion_offers_commands_and_options():
    assert "plain,compare" in complete("atticsim com", 1)
    out = complete("atticsim run --uni", 2)
    assert "plain,--units" in out
    script = subprocess.run([sys.executable, "-c", "from atticsim.cli.main import cli; cli(prog_name='atticsim')"],
                            env={**os.environ, "_ATTICSIM_COMPLETE": "bash_source"}, capture_output=True,
                            text=True, check=False).stdout
    assert "complete " in script and "_ATTICSIM_COMPLETE" in script
