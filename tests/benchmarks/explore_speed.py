"""Exhaustive-search speed and memory on the example studies and on a 50-million space.

Prints, per case: candidates evaluated, candidates/s, wall time, peak resident memory;
and the speed-up of the factorised search over a plain per-design evaluation loop.
Each case runs in its own subprocess so its peak memory is its own.

    python tests/benchmarks/explore_speed.py            # all cases
    python tests/benchmarks/explore_speed.py --quick    # example studies only
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

LARGE_SPACE_EDIT = {
    "turns_min = ": "turns_min = 1\n#",
    "turns_max = ": "turns_max = 160\n#",
    "stack_max = ": "stack_max = 3\n#",
    "parallel_max = ": "parallel_max = 12\n#",
}

CHILD = r"""
import json, resource, sys, time
import numpy as np
from optimag import model
from optimag.catalog import load_catalog
from optimag.search.exhaustive import explore_exhaustive, magnetic_grid
from optimag.study import load_study

study = load_study(sys.argv[1])
catalog = load_catalog(study.catalog.path)
space = model.build_design_space(study, catalog)
objectives = list(study.search.objectives)
explore_exhaustive(space, objectives)  # warm-up (imports, caches)
start = time.perf_counter()
outcome = explore_exhaustive(space, objectives)
wall = time.perf_counter() - start

# Plain per-design loop on a random sample of the same space, for the ratio.
rng = np.random.default_rng(0)
mag = magnetic_grid(space)
n_sample = int(sys.argv[2])
rows = rng.integers(0, len(mag["core"]), n_sample)
cands = model.Candidates(
    core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
    turns=mag["turns"][rows], gap_option=mag["gap_option"][rows],
    wire=rng.integers(0, len(space.wires.ids), n_sample),
    parallel=rng.choice(space.parallels, n_sample),
)
t0 = time.perf_counter()
for i in range(n_sample):
    model.evaluate(space, cands.take(slice(i, i + 1)))
per_design = (time.perf_counter() - t0) / n_sample
print(json.dumps({
    "candidates": outcome.total, "feasible": outcome.feasible, "front": len(outcome.front),
    "wall_s": wall, "per_s": outcome.total / wall,
    "peak_rss_MB": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
    "plain_per_design_s": per_design, "stages": outcome.stage_sizes,
}))
"""


def run_case(label: str, study: Path, sample: int) -> None:
    out = subprocess.run(
        [sys.executable, "-c", CHILD, str(study), str(sample)],
        capture_output=True, text=True, check=True, cwd=ROOT,
    )
    figures = json.loads(out.stdout.strip().splitlines()[-1])
    ratio = figures["per_s"] * figures["plain_per_design_s"]
    print(
        f"{label:28s} candidates {figures['candidates']:>12,d}  "
        f"{figures['per_s'] / 1e6:7.2f} M candidates/s  wall {figures['wall_s']:7.2f} s  "
        f"peak memory {figures['peak_rss_MB']:7.0f} MB  front {figures['front']:5d}  "
        f"speed-up over per-design loop x{ratio:,.0f}"
    )
    print(f"{'':28s} stage sizes {figures['stages']}")


def large_study(tmp: Path) -> Path:
    text = (ROOT / "studies" / "cargo-bike-buck.toml").read_text(encoding="utf-8")
    lines = []
    for line in text.splitlines():
        for key, new in LARGE_SPACE_EDIT.items():
            if line.startswith(key):
                line = new.split("\n")[0]
                break
        lines.append(line)
    body = "\n".join(lines)
    for key, new in LARGE_SPACE_EDIT.items():
        if key.strip() not in body:
            body = body.replace("[search]\n", f"[search]\n{new.split(chr(10))[0]}\n")
    demo = (ROOT / "catalogs/demo").as_posix()
    body = body.replace('path = "../catalogs/demo"', f'path = "{demo}"')
    path = tmp / "large.toml"
    path.write_text(body, encoding="utf-8")
    return path


def main() -> None:
    quick = "--quick" in sys.argv
    for study in sorted((ROOT / "studies").glob("*.toml")):
        run_case(study.stem, study, sample=300)
    if not quick:
        with tempfile.TemporaryDirectory() as tmp:
            run_case("large space (demo, wide)", large_study(Path(tmp)), sample=100)


if __name__ == "__main__":
    main()
