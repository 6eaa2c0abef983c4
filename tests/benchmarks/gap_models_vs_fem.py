"""Print each gap model's inductance error against the committed field-solution table.

    python tests/benchmarks/gap_models_vs_fem.py

Rows: core series (stack) and gap kind; columns: largest error over lg/sqrt(Ae) 0.01-0.5,
in per cent, for McLyman with Ae as the gap face (the model before the gapped leg's shape
was known), and McLyman, Mühlethaler and the leg-edge model (default) on the leg's own face
with the window's own permeance added, as the design model does.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "physics"))

from gap_reference import reference_rows, relative_errors

rows = reference_rows()
columns = {
    "McLyman, Ae face": relative_errors("mclyman", face_from_ae=True),
    "McLyman": relative_errors("mclyman", window=True),
    "Mühlethaler": relative_errors("muhlethaler", window=True),
    "leg edges": relative_errors("leg_edges", window=True),
}
keys = sorted({(r["core"], r["stack"], r["gap_kind"]) for r in rows})
print(f"{'core':12s} {'stack':>5s} {'gap':7s}" + "".join(f"{name:>22s}" for name in columns))
for key in keys:
    mask = np.array([(r["core"], r["stack"], r["gap_kind"]) == key for r in rows])
    cells = []
    for errors in columns.values():
        e = errors[mask]
        cells.append(f"{100 * e.min():+7.1f} .. {100 * e.max():+6.1f} %")
    print(f"{key[0]:12s} {key[1]:>5s} {key[2]:7s}" + "".join(f"{c:>22s}" for c in cells))
print("largest |error|:" + "".join(f"{100 * np.abs(e).max():>20.1f} %" for e in columns.values()))
