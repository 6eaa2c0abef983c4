"""Exhaustive-search speed and memory: the example studies in one process, solar-pump-boost
on 1 and 2 Dask workers, and a space of 10^9 candidates.

Prints, per example study: candidates, candidates/s, wall time, peak resident memory, and
the speed-up of the factorised search over a plain per-design evaluation loop. Then, each
on its own line so a script can read them::

    solar-pump-boost 1 worker: 2.1 M candidates/s
    solar-pump-boost 2 workers: 3.9 M candidates/s
    2-worker speed-up: 1.83
    1e9 case: 52.1 s, peak 0.83 GB

The worker runs use local Dask clusters started (and warmed up with one search) before the
timed search; the start-up time is printed beside. The 10^9 case (the demo catalogue with
wide turns, stack and parallel ranges) runs on 2 workers; its peak is the largest resident
memory of any one process (the client or a worker), the sum of them printed beside. Each
case runs in its own subprocess so its peak memory is its own. The machine's load average
is printed first: figures taken on a busy machine are not comparable.

    python tests/benchmarks/explore_speed.py            # all cases
    python tests/benchmarks/explore_speed.py --quick    # without the 10^9 case
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "catalogs" / "demo"
SOLAR = ROOT / "studies" / "solar-pump-boost.toml"
WIDE_BASE = ROOT / "studies" / "cargo-bike-buck.toml"

ONE_PROCESS = r"""
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

ON_WORKERS = r"""
import json, resource, sys, time


def worker_peak_MB():
    import resource
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def main():
    from optimag import model
    from optimag.catalog import load_catalog
    from optimag.search import exhaustive, parallel
    from optimag.study import load_study

    study = load_study(sys.argv[1])
    workers, warm = int(sys.argv[2]), sys.argv[3] == "warm"
    space = model.build_design_space(study, load_catalog(study.catalog.path))
    objectives = list(study.search.objectives)
    walk = exhaustive.plan(space)
    started = time.perf_counter()
    with parallel.cluster(workers) as client:
        start_s = time.perf_counter() - started
        if warm:
            parallel.explore_on_cluster(space, objectives, client, search_plan=walk)
        start = time.perf_counter()
        outcome = parallel.explore_on_cluster(space, objectives, client, search_plan=walk)
        wall = time.perf_counter() - start
        peaks = list(client.run(worker_peak_MB).values())
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps({
        "candidates": outcome.total, "front": len(outcome.front), "wall_s": wall,
        "per_s": outcome.total / wall, "start_s": start_s,
        "peak_MB": max([own, *peaks]), "sum_MB": own + sum(peaks),
    }))


if __name__ == "__main__":
    main()
"""


def _child(code: str, *args: str) -> dict:
    out = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True,
                         cwd=ROOT)
    if out.returncode != 0:
        raise SystemExit(out.stderr[-3000:])
    return json.loads(out.stdout.strip().splitlines()[-1])


def _on_workers(study: Path, workers: int, warm: bool = True) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        script = Path(tmp) / "on_workers.py"  # a file: worker processes re-import __main__
        script.write_text(ON_WORKERS, encoding="utf-8")
        out = subprocess.run([sys.executable, str(script), str(study), str(workers),
                              "warm" if warm else "cold"], capture_output=True, text=True,
                             cwd=ROOT)
    if out.returncode != 0:
        raise SystemExit(out.stderr[-3000:])
    return json.loads(out.stdout.strip().splitlines()[-1])


def one_process(label: str, study: Path, sample: int) -> None:
    figures = _child(ONE_PROCESS, str(study), str(sample))
    ratio = figures["per_s"] * figures["plain_per_design_s"]
    print(
        f"{label:28s} candidates {figures['candidates']:>12,d}  "
        f"{figures['per_s'] / 1e6:7.2f} M candidates/s  wall {figures['wall_s']:7.2f} s  "
        f"peak memory {figures['peak_rss_MB']:7.0f} MB  front {figures['front']:5d}  "
        f"speed-up over per-design loop x{ratio:,.0f}"
    )
    print(f"{'':28s} stage sizes {figures['stages']}")


def wide_space(folder: Path, at_least: int = 1_000_000_000) -> Path:
    """The demo catalogue with turns from 1 up, 6 parallels and 3 stacks: the smallest
    such space (in steps of 100 turns) with at least ``at_least`` candidates."""
    sys.path.insert(0, str(ROOT))
    from optimag import model
    from optimag.catalog import load_catalog
    from optimag.search.exhaustive import space_size
    from optimag.study import load_study

    catalog = load_catalog(DEMO)
    path = folder / "wide.toml"
    base = WIDE_BASE.read_text(encoding="utf-8").splitlines()
    for turns_max in range(100, 10_001, 100):
        values = {"turns_min": "1", "turns_max": str(turns_max), "parallel_max": "6",
                  "stack_max": "3", "path": f'"{DEMO.as_posix()}"'}
        lines = [f"{line.split('=')[0].strip()} = {values[line.split('=')[0].strip()]}"
                 if line.split("=")[0].strip() in values else line for line in base]
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        if space_size(model.build_design_space(load_study(path), catalog)) >= at_least:
            return path
    raise SystemExit("could not reach the wanted number of candidates")


def main() -> None:
    quick = "--quick" in sys.argv
    load = os.getloadavg()
    print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f} on {os.cpu_count()} cores")
    for study in sorted((ROOT / "studies").glob("*.toml")):
        one_process(study.stem, study, sample=300)
    one = _on_workers(SOLAR, 1)
    two = _on_workers(SOLAR, 2)
    print(f"(local cluster start: {one['start_s']:.1f} s with 1 worker, {two['start_s']:.1f} s "
          f"with 2; searches timed after one warm-up search)")
    print(f"solar-pump-boost 1 worker: {one['per_s'] / 1e6:.2f} M candidates/s")
    print(f"solar-pump-boost 2 workers: {two['per_s'] / 1e6:.2f} M candidates/s")
    print(f"2-worker speed-up: {one['wall_s'] / two['wall_s']:.2f}")
    if not quick:
        with tempfile.TemporaryDirectory() as tmp:
            wide = wide_space(Path(tmp))
            big = _on_workers(wide, 2, warm=False)
        print(f"(1e9 case: {big['candidates']:,} candidates on 2 workers, "
              f"{big['per_s'] / 1e6:.1f} M candidates/s; sum of the processes' peaks "
              f"{big['sum_MB'] / 1e3:.2f} GB)")
        print(f"1e9 case: {big['wall_s']:.1f} s, peak {big['peak_MB'] / 1e3:.2f} GB")
    load = os.getloadavg()
    print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f} at the end")


if __name__ == "__main__":
    main()
