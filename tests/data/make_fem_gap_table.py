"""Regenerate tests/data/fem_gap_inductance.csv: inductance versus gap from field solutions.

For one core of every gapped series of the demo catalogue (the series are parametric, so
one size stands for its series; E cores also stacked three high), both gap kinds, and
gaps lg/sqrt(Ae) from 0.01 to 0.5, the inductance per turn² is computed with
`optimag.fem.reference_inductance` (pot: axisymmetric solve of the whole core with its
winding; E: planar solve of the whole core with its winding, depth-direction fringing
from 3-D ideal-iron solves). Core permeability 2000 (the demo's mid-frequency ferrite).

    python tests/data/make_fem_gap_table.py            # rewrites the table (about 30 min)
    python tests/data/make_fem_gap_table.py --only E-flat-22:3 --out part.csv   # one core

The core dimensions used are written into every row, so a test can recompute any gap
model from the table alone.
"""

from __future__ import annotations

import argparse
import csv
import math
import os
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from optimag.fem import gapped_core_from_row, reference_inductance  # noqa: E402

CORES = (("E-shape-20", 1), ("E-shape-20", 3), ("E-flat-22", 1), ("E-flat-22", 3),
         ("pot-18", 1))  # fmt: skip
GAP_RATIOS = (0.01, 0.02, 0.035, 0.05, 0.08, 0.12, 0.2, 0.3, 0.5)
GAP_KINDS = ("centre", "spacer")
MU_R = 2000.0
COLUMNS = (
    "core", "family", "stack", "gap_kind", "gap_over_sqrt_ae", "gap_mm",
    "inductance_per_turn2_nH", "section_nH", "ungapped_nH", "depth_factor", "mu_r",
    "Ae_mm2", "le_mm", "leg_width_mm", "leg_depth_mm", "window_width_mm", "window_height_mm",
    "outer_leg_width_mm", "outer_leg_area_mm2", "yoke_thickness_mm", "bobbin_wall_mm",
)  # fmt: skip


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=HERE / "fem_gap_inductance.csv")
    parser.add_argument("--only", action="append", default=[],
                        help="CORE:STACK to compute (repeatable); default every core")
    args = parser.parse_args()
    selected = CORES
    if args.only:
        selected = tuple((text.split(":")[0], int(text.split(":")[1])) for text in args.only)
    with open(HERE.parents[1] / "catalogs" / "demo" / "cores.csv", newline="") as handle:
        catalogue = {row["id"]: row for row in csv.DictReader(handle)}
    rows = []
    for core_id, stack in selected:
        row = catalogue[core_id]
        core = gapped_core_from_row(row)
        ae = float(row["Ae_mm2"]) * stack
        for kind in GAP_KINDS:
            for ratio in GAP_RATIOS:
                gap_mm = ratio * math.sqrt(ae)
                result = reference_inductance(core, gap_mm * 1e-3, kind, MU_R, stack,
                                              resolution=1.0, resolution_3d=1.0)
                rows.append({
                    "core": core_id, "family": core.family, "stack": stack, "gap_kind": kind,
                    "gap_over_sqrt_ae": ratio, "gap_mm": f"{gap_mm:.6g}",
                    "inductance_per_turn2_nH": f"{result['inductance_per_turn2_H'] * 1e9:.6g}",
                    "section_nH": f"{result['section_H'] * 1e9:.6g}",
                    "ungapped_nH": f"{result['ungapped_H'] * 1e9:.6g}",
                    "depth_factor": f"{result['depth_factor']:.6g}", "mu_r": f"{MU_R:g}",
                    "Ae_mm2": f"{ae:g}", "le_mm": row["le_mm"],
                    "leg_width_mm": core.leg_width_mm, "leg_depth_mm": core.leg_depth_mm,
                    "window_width_mm": core.window_width_mm,
                    "window_height_mm": core.window_height_mm,
                    "outer_leg_width_mm": core.outer_leg_width_mm,
                    "outer_leg_area_mm2": core.outer_leg_area_mm2,
                    "yoke_thickness_mm": f"{core.yoke_thickness_mm:.6g}",
                    "bobbin_wall_mm": core.bobbin_wall_mm,
                })  # fmt: skip
                print(core_id, stack, kind, ratio, rows[-1]["inductance_per_turn2_nH"],
                      rows[-1]["depth_factor"], flush=True)
    handle, temp = tempfile.mkstemp(dir=args.out.parent, suffix=".tmp")
    with os.fdopen(handle, "w", newline="") as out:
        writer = csv.DictWriter(out, fieldnames=COLUMNS, lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)
    os.replace(temp, args.out)


if __name__ == "__main__":
    main()
