"""Field solutions of catalogue cores: from a core's dimensions to its inductance.

A round-post (pot) core is solved whole in its axisymmetric section. An E core is solved
in its planar section (window-direction fringing, core permeability, winding current);
the fringing along the leg's depth comes from 3-D ideal-iron solves of the same gaps: the
planar gap reluctance is scaled by R_gap(real depth) / R_gap(endless depth) of the 3-D
solve, so L/N² = 1 / (R_core + k R_gap,planar) with R_core from the ungapped planar solve.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Literal

from optimag.fem.cores import CoreSection, solve_core_section
from optimag.fem.gap3d import LegGap, solve_leg_gap

__all__ = [
    "GappedCore",
    "core_section_for",
    "gapped_core_from_row",
    "leg_gap_for",
    "reference_inductance",
]

GapKind = Literal["centre", "spacer"]


@dataclass(frozen=True)
class GappedCore:
    """What a gapped E or pot core set looks like around its gaps [mm].

    family : "E" (rectangular centre leg) or "pot" (round post)
    leg_width_mm : centre-leg width, or the post diameter
    leg_depth_mm : centre-leg depth of one set (pot: the post diameter)
    window_width_mm, window_height_mm : winding window (height = winding length)
    outer_leg_width_mm : one outer leg's width (E) or the skirt's radial thickness (pot)
    outer_leg_area_mm2 : face area of all outer legs together at the gap (one set)
    yoke_thickness_mm : yoke (plate) thickness, (set height - window height) / 2
    bobbin_wall_mm : bobbin wall between winding and iron
    """

    family: str
    leg_width_mm: float
    leg_depth_mm: float
    window_width_mm: float
    window_height_mm: float
    outer_leg_width_mm: float
    outer_leg_area_mm2: float
    yoke_thickness_mm: float
    bobbin_wall_mm: float = 0.0


def gapped_core_from_row(row: Mapping[str, object]) -> GappedCore:
    """A `GappedCore` from one catalogue row (cores.csv columns)."""
    family = str(row["family"])
    if family not in ("E", "pot"):
        raise ValueError(f"family {family!r} has no discrete gap")

    def number(name: str) -> float:
        return float(row[name])  # type: ignore[arg-type]

    return GappedCore(
        family=family,
        leg_width_mm=number("leg_width_mm"),
        leg_depth_mm=number("leg_depth_mm"),
        window_width_mm=number("window_width_mm"),
        window_height_mm=number("window_breadth_mm"),
        outer_leg_width_mm=number("outer_leg_width_mm"),
        outer_leg_area_mm2=number("outer_leg_area_mm2"),
        yoke_thickness_mm=0.5 * (number("height_mm") - number("window_breadth_mm")),
        bobbin_wall_mm=number("bobbin_wall_mm"),
    )


def core_section_for(core: GappedCore, mu_r: float, stack: int = 1) -> CoreSection:
    """The 2-D section of a catalogue core.

    A pot core's slotted skirt becomes the full ring of the same face area (inner radius
    at the window), so the skirt gap has the catalogue's outer-leg area.
    """
    if core.family == "pot":
        r_in = 0.5 * core.leg_width_mm + core.window_width_mm
        r_out = math.sqrt(r_in**2 + core.outer_leg_area_mm2 / math.pi)
        return CoreSection(
            "axisymmetric", 0.5e-3 * core.leg_width_mm, 1e-3 * core.window_width_mm,
            1e-3 * (r_out - r_in), 1e-3 * core.window_height_mm, 1e-3 * core.yoke_thickness_mm,
            1.0, 1e-3 * core.bobbin_wall_mm, mu_r,
        )
    return CoreSection(
        "planar", 0.5e-3 * core.leg_width_mm, 1e-3 * core.window_width_mm,
        1e-3 * core.outer_leg_width_mm, 1e-3 * core.window_height_mm,
        1e-3 * core.yoke_thickness_mm, 1e-3 * core.leg_depth_mm * stack,
        1e-3 * core.bobbin_wall_mm, mu_r,
    )


def leg_gap_for(core: GappedCore, stack: int = 1) -> LegGap:
    """The 3-D ideal-iron gap geometry of a rectangular-leg (E) catalogue core."""
    if core.family != "E":
        raise ValueError("the 3-D leg solve is for rectangular legs (E cores)")
    return LegGap(
        1e-3 * core.leg_width_mm, 1e-3 * core.leg_depth_mm * stack, 1e-3 * core.window_width_mm,
        1e-3 * core.outer_leg_width_mm, 1e-3 * core.window_height_mm,
        1e-3 * core.yoke_thickness_mm,
    )


def _gap_reluctance_3d(leg: LegGap, gap_m: float, gap_kind: GapKind, endless: bool,
                       resolution: float) -> float:
    solved = solve_leg_gap(leg, gap_m, gap_kind, endless, resolution)
    reluctance = 1.0 / solved.centre_H
    if gap_kind == "spacer":
        reluctance += 1.0 / solved.outer_H
    return reluctance


def reference_inductance(
    core: GappedCore,
    gap_m: float,
    gap_kind: GapKind = "centre",
    mu_r: float = 2000.0,
    stack: int = 1,
    resolution: float = 1.0,
    resolution_3d: float | None = None,
) -> dict[str, float]:
    """Inductance per turn² of a gapped catalogue core from field solutions.

    Parameters
    ----------
    core : GappedCore
        The core's dimensions.
    gap_m : float
        Centre gap length, or spacer thickness (every leg) [m].
    gap_kind : {"centre", "spacer"}
        How the gap is made.
    mu_r : float
        Core permeability [1].
    stack : int
        Number of E sets side by side (pot: 1).
    resolution : float
        Mesh density factor of the 2-D solves [1].
    resolution_3d : float, optional
        Mesh density factor of the 3-D solves [1]; default `resolution`.

    Returns
    -------
    dict
        ``inductance_per_turn2_H`` (whole core), ``section_H`` (2-D section alone),
        ``ungapped_H`` (2-D section without gap), ``depth_factor`` (3-D gap reluctance
        real / endless depth; 1 for a pot core).
    """
    section = core_section_for(core, mu_r, stack)
    gapped = solve_core_section(section, gap_m, gap_kind, resolution).inductance_per_turn2_H
    closed = solve_core_section(section, 0.0, "centre", resolution).inductance_per_turn2_H
    if core.family == "pot" or gap_m <= 0.0:
        return {"inductance_per_turn2_H": gapped, "section_H": gapped, "ungapped_H": closed,
                "depth_factor": 1.0}
    leg = leg_gap_for(core, stack)
    fine = resolution if resolution_3d is None else resolution_3d
    factor = _gap_reluctance_3d(leg, gap_m, gap_kind, False, fine) / _gap_reluctance_3d(
        leg, gap_m, gap_kind, True, fine
    )
    core_reluctance = 1.0 / closed
    gap_reluctance = 1.0 / gapped - core_reluctance
    total = core_reluctance + factor * gap_reluctance
    return {"inductance_per_turn2_H": 1.0 / total, "section_H": gapped, "ungapped_H": closed,
            "depth_factor": factor}
