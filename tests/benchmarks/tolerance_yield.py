"""Production yield of the example studies' short-lists, and the robust front against the
nominal one.

Prints, per example study: the short-list's yields (each design, then min / median / max),
the time the Monte Carlo adds to the run (samples x designs), the time per design, and —
with the exhaustive strategy — the sizes of the nominal and the robust front and the
search time with the corners inside it.

    python tests/benchmarks/tolerance_yield.py
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

import numpy as np

from optimag.search.run import explore
from optimag.study import load_study

ROOT = Path(__file__).resolve().parents[2]


def robust_copy(study_path: Path, folder: Path) -> Path:
    text = study_path.read_text(encoding="utf-8")
    text = text.replace("[search]\n", "[search]\nrobust = true\n", 1)
    copy = folder / study_path.name
    copy.write_text(text.replace('path = "../catalogs', f'path = "{ROOT}/catalogs'), "utf-8")
    return copy


def main() -> None:
    for path in sorted((ROOT / "studies").glob("*.toml")):
        study = load_study(path)
        if study.search.strategy != "exhaustive" or study.custom_core is not None:
            print(f"{path.stem}: skipped (not an exhaustive catalogue study)")
            continue
        start = time.perf_counter()
        result = explore(study)
        total = time.perf_counter() - start
        account = result.record["tolerance"]
        yields = np.array([r["yield_fraction"] for r in result.shortlist_records])
        print(f"{path.stem}: short-list of {len(yields)}, {account['samples']} builds each")
        print("  yields: " + " ".join(f"{y:.3f}" for y in yields))
        print(f"  yield min {yields.min():.3f}  median {np.median(yields):.3f}  "
              f"max {yields.max():.3f}; designs >= 0.99: {(yields >= 0.99).sum()}")
        print(f"  Monte Carlo time: {account['wall_time_s']:.2f} s of {total:.2f} s run "
              f"({account['wall_time_s'] / max(len(yields), 1):.3f} s per design)")
        with tempfile.TemporaryDirectory() as tmp:
            start = time.perf_counter()
            robust = explore(robust_copy(path, Path(tmp)))
            robust_time = time.perf_counter() - start
        nominal_front = len(result.pareto)
        robust_front = len(robust.pareto)
        corners = robust.record["counts"]["eliminated"].get("tolerance_corners", 0)
        print(f"  nominal front {nominal_front} designs; robust front {robust_front} designs "
              f"({corners} nominally feasible candidates fail a corner); robust run "
              f"{robust_time:.2f} s")


if __name__ == "__main__":
    main()
