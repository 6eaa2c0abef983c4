"""How fast the command starts: `optimag check` on the demo study and `optimag --help`,
each the median wall time of several fresh processes.

Prints ``check seconds: 0.21`` and ``help seconds: 0.12`` (target: check under 0.3 s).

    python tests/benchmarks/start_time.py [--runs 7]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO_STUDY = ROOT / "studies" / "cargo-bike-buck.toml"


def median_seconds(args: list[str], runs: int) -> float:
    """Median wall time of ``python -m optimag ARGS`` in fresh processes [s]."""
    # Byte-code caching as in an ordinary install (the first, warming run writes it).
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = str(ROOT)
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        subprocess.run([sys.executable, "-m", "optimag", *args], cwd=ROOT, env=env,
                       check=True, stdout=subprocess.DEVNULL)
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    runs = parser.parse_args().runs
    median_seconds(["check", str(DEMO_STUDY)], 1)  # warm the file and byte-code caches
    print(f"check seconds: {median_seconds(['check', str(DEMO_STUDY)], runs):.2f}")
    print(f"help seconds: {median_seconds(['--help'], runs):.2f}")


if __name__ == "__main__":
    main()
