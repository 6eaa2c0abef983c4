"""Gap models against the committed field-solution table (shared by test and benchmark)."""

from __future__ import annotations

import csv
import math
import warnings
from pathlib import Path

import numpy as np

from optimag.constants import MU0
from optimag.errors import ValidityRangeWarning
from optimag.physics import fringing, magnetic

TABLE = Path(__file__).resolve().parents[1] / "data" / "fem_gap_inductance.csv"


def reference_rows() -> list[dict[str, str]]:
    with open(TABLE, newline="") as handle:
        return list(csv.DictReader(handle))


def model_inductance(
    row: dict[str, str], model: str, face_from_ae: bool = False, window: bool = False
) -> float:
    """L/N² [H] of a table row's core and gap by a gap model and the catalogue's le, Ae.

    ``face_from_ae`` takes the catalogue Ae as the gap face (the behaviour before the gapped
    leg's own shape was known).
    """
    number = {key: float(value) for key, value in row.items()
              if key not in ("core", "family", "gap_kind")}  # fmt: skip
    stack = number["stack"]
    round_leg = row["family"] == "pot"
    width = number["leg_width_mm"] * 1e-3
    depth = width if round_leg else number["leg_depth_mm"] * 1e-3 * stack
    face = math.pi / 4 * width * width if round_leg else width * depth
    ae = number["Ae_mm2"] * 1e-6
    if face_from_ae:
        face = ae
    geometry = fringing.GapGeometry(
        ae_m2=face,
        winding_length_m=number["window_height_mm"] * 1e-3,
        leg_width_m=width,
        leg_depth_m=depth,
        round_leg=round_leg,
        window_width_m=number["window_width_mm"] * 1e-3,
        outer_leg_width_m=number["outer_leg_width_mm"] * 1e-3,
        outer_area_m2=number["outer_leg_area_mm2"] * 1e-6 * (1.0 if round_leg else stack),
        outer_legs=1.0 if round_leg else 2.0,
        yoke_thickness_m=number["yoke_thickness_mm"] * 1e-3,
        spacer=row["gap_kind"] == "spacer",
    )
    gap = number["gap_mm"] * 1e-3
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityRangeWarning)
        r_gap = fringing.gap_reluctance(gap, face, geometry.winding_length_m, width, depth,
                                        model, geometry=geometry)
    r_core = number["le_mm"] * 1e-3 / (MU0 * number["mu_r"] * ae)
    if not window:
        return float(1.0 / (r_core + r_gap))
    return float(1.0 / (r_core + r_gap) + magnetic.window_permeance(
        *window_dimensions(geometry, row["gap_kind"] == "spacer", gap),
        centre_share(geometry, gap, model, r_core),
    ))


def window_dimensions(geometry, spacer: bool, gap: float) -> tuple[float, float, float]:
    width = float(geometry.window_width_m)
    if geometry.round_leg:
        length = 2.0 * math.pi * (0.5 * float(geometry.leg_width_m) + 0.5 * width)
    else:
        length = 2.0 * float(geometry.leg_depth_m)
    return length, width, float(geometry.winding_length_m) + (gap if spacer else 0.0)


def centre_share(geometry, gap: float, model: str, r_core: float) -> float:
    centre_only = fringing.GapGeometry(**{**vars(geometry), "spacer": False})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityRangeWarning)
        r_centre = float(fringing.gap_reluctance(gap, 0, 0, 0, 0, model, geometry=centre_only))
        r_all = float(fringing.gap_reluctance(gap, 0, 0, 0, 0, model, geometry=geometry))
    total = r_core + r_all
    return (r_centre + 0.5 * r_core) / total


def relative_errors(model: str, face_from_ae: bool = False, window: bool = False) -> np.ndarray:
    rows = reference_rows()
    return np.array([
        model_inductance(row, model, face_from_ae, window)
        / (float(row["inductance_per_turn2_nH"]) * 1e-9) - 1.0
        for row in rows
    ])
