"""Time `optimag verify` on the demo study's short-listed designs (target: under 60 s per
design on a 2-core machine). Prints one line per design; not collected by pytest.

    python tests/benchmarks/verify_speed.py [RUN_DIR] [N]

Without RUN_DIR the cargo-bike demo study is explored into a temporary folder first.
"""

from __future__ import annotations

import json
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def main() -> None:
    from optimag.runfolder import write_run
    from optimag.search.run import explore
    from optimag.verify import verify_design

    if len(sys.argv) > 1:
        run_dir = Path(sys.argv[1])
    else:
        run_dir = Path(tempfile.mkdtemp(prefix="verify-speed-")) / "run"
        write_run(explore(ROOT / "studies" / "cargo-bike-buck.toml"), run_dir)
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 6
    designs = json.loads((run_dir / "shortlist.json").read_text())["designs"]
    checked = [d for d in designs if d["gap_mm"] > 0][:count]
    print(f"{'design':8} {'core':10} {'gap mm':>7} {'wall s':>7} {'cpu s':>7} "
          f"{'L model':>8} {'L FEM':>8} {'error':>7}")
    for design in checked:
        wall, cpu = time.perf_counter(), time.process_time()
        result = verify_design(run_dir, design["design_id"])
        wall, cpu = time.perf_counter() - wall, time.process_time() - cpu
        print(f"{design['design_id']:8} {design['core']:10} {design['gap_mm']:7.3f} "
              f"{wall:7.1f} {cpu:7.1f} {result['inductance_model_uH']:8.2f} "
              f"{result['inductance_fem_uH']:8.2f} {100 * result['inductance_error']:+6.1f}%")


if __name__ == "__main__":
    main()
