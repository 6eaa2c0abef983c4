"""The committed field-solution table is what the solvers give (spot checks)."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from optimag.fem import GappedCore, reference_inductance

TABLE = Path(__file__).resolve().parents[1] / "data" / "fem_gap_inductance.csv"


def _row(core: str, stack: str, kind: str, ratio: float) -> dict[str, str]:
    with open(TABLE, newline="") as handle:
        for row in csv.DictReader(handle):
            if (row["core"], row["stack"], row["gap_kind"]) == (core, stack, kind) and abs(
                float(row["gap_over_sqrt_ae"]) - ratio
            ) < 0.002:
                return row
    raise AssertionError(f"no table row {core} x{stack} {kind} {ratio}")


def _recompute(row: dict[str, str], resolution: float) -> float:
    core = GappedCore(
        row["family"], *(float(row[k]) for k in (
            "leg_width_mm", "leg_depth_mm", "window_width_mm", "window_height_mm",
            "outer_leg_width_mm", "outer_leg_area_mm2", "yoke_thickness_mm", "bobbin_wall_mm",
        )),
    )  # fmt: skip
    result = reference_inductance(core, float(row["gap_mm"]) * 1e-3, row["gap_kind"],
                                  float(row["mu_r"]), int(row["stack"]), resolution)
    return result["inductance_per_turn2_H"] * 1e9


def test_pot_row_is_reproduced() -> None:
    row = _row("pot-18", "1", "spacer", 0.2)
    assert _recompute(row, 0.8) == pytest.approx(float(row["inductance_per_turn2_nH"]), rel=5e-3)


@pytest.mark.slow
def test_e_core_row_is_reproduced() -> None:
    row = _row("E-flat-22", "1", "centre", 0.3)
    assert _recompute(row, 1.0) == pytest.approx(float(row["inductance_per_turn2_nH"]), rel=2e-3)
