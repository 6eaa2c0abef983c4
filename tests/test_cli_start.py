"""`optimag check` and `optimag --help` import only what they use (a fast start; the
times are printed by tests/benchmarks/start_time.py)."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO_STUDY = ROOT / "studies" / "cargo-bike-buck.toml"

#: Heavy modules neither path may import.
HEAVY = ("pandas", "scipy.special", "scipy", "optimag.search.run", "optimag.model")

PROBE = """
import contextlib, io, json, sys
import optimag.cli
code = None
with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
    try:
        code = optimag.cli.main(sys.argv[1:])
    except SystemExit as stop:
        code = stop.code
print(json.dumps({"code": code, "loaded": [m for m in %r if m in sys.modules]}))
"""


def _loaded(*args: str) -> dict:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-c", PROBE % (HEAVY,), *args], cwd=ROOT, env=env,
                          capture_output=True, text=True, check=True, timeout=120)
    return json.loads(done.stdout.strip().splitlines()[-1])


@pytest.mark.parametrize("args", [["check", str(DEMO_STUDY)], ["check", "catalogs/demo"],
                                  ["--help"]], ids=["check-study", "check-catalog", "help"])
def test_start_imports_only_what_it_uses(args):
    outcome = _loaded(*args)
    assert outcome["code"] == 0
    assert outcome["loaded"] == []


def test_the_probe_sees_heavy_imports():
    """The same probe on `evaluate` (which needs the model) does list them."""
    outcome = _loaded("evaluate", str(DEMO_STUDY), "--core", "nonexistent", "--material", "x",
                      "--turns", "10", "--wire", "y")
    assert outcome["code"] == 2
    assert "optimag.model" in outcome["loaded"]
