"""Peak memory of the exhaustive search and of the catalogue check on very large inputs.

Prints, for each case, the peak resident memory (RSS) of a fresh process doing the work:

1. ``check`` of a generated catalogue of 1,000,000 cores (about 200 MB of CSV);
2. the exhaustive search over that catalogue, stopped after a time cut-off;
3. the exhaustive search over a space of at least 10^9 candidates (demo catalogue, wide
   turns and parallel ranges), stopped after a time cut-off.

The target is a peak under 1 GB in every case. Each case also prints what the search's own
plan estimated beforehand. Run from the repository root::

    python tests/benchmarks/memory_bounds.py [--cutoff SECONDS] [--cores N] [--keep DIR]

The generated catalogue scales the demo catalogue's cores by factors between 0.5 and 2
(lengths by s, areas by s^2, volumes and masses by s^3), so every row passes the checks.
"""

from __future__ import annotations

import argparse
import csv
import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "catalogs" / "demo"
STUDY = ROOT / "studies" / "cargo-bike-buck.toml"

LENGTH = {"le_mm", "window_breadth_mm", "window_width_mm", "leg_width_mm", "leg_depth_mm",
          "outer_leg_width_mm", "length_mm", "width_mm", "height_mm"}
AREA = {"Ae_mm2", "Amin_mm2", "window_area_mm2", "outer_leg_area_mm2", "surface_mm2"}
VOLUME = {"Ve_mm3", "mass_g"}


def generate_catalogue(folder: Path, n_cores: int) -> int:
    """Write a catalogue of ``n_cores`` scaled demo cores; return the size of cores.csv."""
    folder.mkdir(parents=True, exist_ok=True)
    for name in ("materials.csv", "wires.csv"):
        (folder / name).write_bytes((DEMO / name).read_bytes())
    with open(DEMO / "cores.csv", newline="", encoding="utf-8") as source:
        rows = list(csv.reader(source))
    header, demo = rows[0], rows[1:]
    with open(folder / "cores.csv", "w", newline="", encoding="utf-8") as out:
        writer = csv.writer(out, lineterminator="\n")
        writer.writerow(header)
        for i in range(n_cores):
            base = demo[i % len(demo)]
            scale = 0.5 + 1.5 * ((i * 7919) % 100_003) / 100_003
            row = []
            for name, cell in zip(header, base, strict=True):
                if name == "id":
                    row.append(f"{cell}-scaled-{i:07d}")
                elif cell == "":
                    row.append(cell)  # a column that does not apply to this family
                elif name in LENGTH or name == "bobbin_wall_mm":
                    row.append(f"{float(cell) * scale:.10g}")
                elif name in AREA:
                    row.append(f"{float(cell) * scale**2:.10g}")
                elif name in VOLUME:
                    row.append(f"{float(cell) * scale**3:.10g}")
                elif name == "price":
                    row.append(f"{float(cell) * scale**2:.10g}")
                else:
                    row.append(cell)
            writer.writerow(row)
    return (folder / "cores.csv").stat().st_size


CHILD = r"""
import json, resource, sys, time
from pathlib import Path
task, arg, cutoff = sys.argv[1], sys.argv[2], float(sys.argv[3])
result = {}
started = time.perf_counter()
if task == "check":
    from optimag.cli import main
    result["exit"] = main(["check", arg])
else:
    from optimag import model
    from optimag.catalog import load_catalog
    from optimag.search.exhaustive import explore_exhaustive, plan
    from optimag.study import load_study
    study = load_study(Path(arg))
    catalog = load_catalog(study.catalog.path)
    result["load_s"] = round(time.perf_counter() - started, 1)
    space = model.build_design_space(study, catalog)
    walk = plan(space)
    result["candidates"] = walk.candidates
    result["estimated_peak_MB"] = round(walk.peak_bytes / 1e6)
    search_start = time.perf_counter()
    seen = {"done": 0}

    def stop(done, total):
        seen["done"] = done
        if time.perf_counter() - search_start > cutoff:
            raise KeyboardInterrupt

    outcome = explore_exhaustive(space, list(study.search.objectives), progress=stop,
                                 search_plan=walk)
    wall = time.perf_counter() - search_start
    result["evaluated"] = seen["done"]
    result["search_s"] = round(wall, 1)
    result["per_s"] = round(seen["done"] / max(wall, 1e-9))
    result["interrupted"] = outcome.interrupted
    result["front"] = len(outcome.front)
result["wall_s"] = round(time.perf_counter() - started, 1)
result["peak_rss_MB"] = round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024)
print(json.dumps(result))
"""


def run_child(task: str, arg: str, cutoff: float) -> dict:
    out = subprocess.run(
        [sys.executable, "-c", CHILD, task, arg, str(cutoff)], capture_output=True, text=True,
        cwd=ROOT, env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"},
    )
    if out.returncode != 0:
        raise SystemExit(f"{task} failed:\n{out.stderr[-3000:]}")
    return json.loads(out.stdout.strip().splitlines()[-1])


def study_text(catalogue: Path, replace: dict[str, str]) -> str:
    lines = []
    for line in STUDY.read_text(encoding="utf-8").splitlines():
        key = line.split("=")[0].strip()
        if key in replace:
            line = f"{key} = {replace[key]}"
        elif key == "path":
            line = f'path = "{catalogue}"'
        lines.append(line)
    return "\n".join(lines) + "\n"


def wide_space(folder: Path) -> Path:
    """A study on the demo catalogue with at least 10^9 candidates."""
    from optimag import model
    from optimag.catalog import load_catalog
    from optimag.search.exhaustive import space_size
    from optimag.study import load_study

    catalog = load_catalog(DEMO)
    path = folder / "wide.toml"
    for turns_max in range(100, 10_001, 100):
        path.write_text(study_text(DEMO, {"turns_min": "1", "turns_max": str(turns_max),
                                          "parallel_max": "6", "stack_max": "3"}),
                        encoding="utf-8")
        study = load_study(path)
        if space_size(model.build_design_space(study, catalog)) >= 1_000_000_000:
            return path
    raise SystemExit("could not reach 10^9 candidates")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cutoff", type=float, default=60.0,
                        help="seconds of search per case (default 60)")
    parser.add_argument("--cores", type=int, default=1_000_000)
    parser.add_argument("--keep", help="write the generated files here and keep them")
    args = parser.parse_args()
    sys.path.insert(0, str(ROOT))
    with tempfile.TemporaryDirectory() as scratch:
        work = Path(args.keep) if args.keep else Path(scratch)
        folder = work / "big-catalogue"
        size = generate_catalogue(folder, args.cores)
        print(f"generated catalogue: {args.cores:,} cores, cores.csv {size / 1e6:,.0f} MB")

        checked = run_child("check", str(folder), args.cutoff)
        print(f"check of the {size / 1e6:,.0f} MB catalogue: exit {checked['exit']}, "
              f"{checked['wall_s']} s, peak RSS {checked['peak_rss_MB']} MB")

        big = work / "big-catalogue.toml"
        big.write_text(study_text(folder, {}), encoding="utf-8")
        searched = run_child("search", str(big), args.cutoff)
        print(f"exhaustive search, {args.cores:,}-core catalogue: "
              f"{searched['candidates']:,} candidates, {searched['evaluated']:,} evaluated in "
              f"{searched['search_s']} s ({searched['per_s']:,}/s; cut-off "
              f"{args.cutoff:g} s) after {searched['load_s']} s of loading; estimated peak "
              f"{searched['estimated_peak_MB']} MB, peak RSS {searched['peak_rss_MB']} MB")

        wide = wide_space(work)
        searched = run_child("search", str(wide), args.cutoff)
        print(f"exhaustive search, 10^9-candidate space: {searched['candidates']:,} "
              f"candidates, {searched['evaluated']:,} evaluated in {searched['search_s']} s "
              f"({searched['per_s']:,}/s; cut-off {args.cutoff:g} s); estimated peak "
              f"{searched['estimated_peak_MB']} MB, peak RSS {searched['peak_rss_MB']} MB")


if __name__ == "__main__":
    main()
