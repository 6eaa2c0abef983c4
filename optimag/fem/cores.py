"""Gapped core sections for the 2-D solvers, and their inductance.

A round-post (pot) core is solved axisymmetrically; an E core's cross-section through
the window is solved planar and multiplied by the leg depth (no depth-direction
fringing: see `optimag.fem.gap3d` for that). Both use the same section: the gapped leg
(post radius or half the centre-leg width), the window, the outer leg (skirt) and the
yoke (plate), with the winding filling the window inside the bobbin wall.

Only one quadrant (planar) or half (axisymmetric) is meshed: the gap's mid-plane is a
symmetry plane, and a planar E core is odd about its centre line (the current goes into
one window and out of the other).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from optimag.fem.mesh import Rect, graded_axis
from optimag.fem.section import Region, SectionSolution, solve_section

__all__ = [
    "CoreSection",
    "SectionResult",
    "refinement_sequence",
    "section_from_dimensions_mm",
    "solve_core_section",
]

GapKind = Literal["centre", "spacer"]


@dataclass(frozen=True)
class CoreSection:
    """Dimensions of a gapped two-half core as seen in its 2-D section [m].

    Parameters
    ----------
    kind : "axisymmetric" (round post, pot core) or "planar" (E core)
    leg_half_width_m : post radius, or half the centre-leg width
    window_width_m : from the gapped leg to the outer leg (skirt)
    outer_width_m : width of one outer leg (E) or the skirt's radial thickness (pot)
    window_height_m : window height of the closed core without gap (the winding length)
    yoke_thickness_m : yoke (plate) thickness
    depth_m : E core: leg depth (stack included); unused for an axisymmetric section
    bobbin_wall_m : clearance between the winding and the iron on every side
    mu_r : relative permeability of the core [1]
    """

    kind: Literal["axisymmetric", "planar"]
    leg_half_width_m: float
    window_width_m: float
    outer_width_m: float
    window_height_m: float
    yoke_thickness_m: float
    depth_m: float = 1.0
    bobbin_wall_m: float = 0.0
    mu_r: float = 2000.0

    @property
    def outer_edge_m(self) -> float:
        return self.leg_half_width_m + self.window_width_m + self.outer_width_m


@dataclass
class SectionResult:
    """Inductance of a solved core section and the solution it came from.

    Attributes
    ----------
    inductance_per_turn2_H : L/N² of the whole core [H]
    solution : the solved quarter/half section (for fields, flux plots, ∫|B|²)
    coil : the winding rectangle in the solved part [m]
    centre_gap_m, outer_gap_m : gap lengths per leg [m]
    scale : factor from the solved part to the whole core for energies and ∫|B|² (planar:
        per metre of depth times the depth)
    """

    inductance_per_turn2_H: float
    solution: SectionSolution
    coil: Rect
    centre_gap_m: float
    outer_gap_m: float
    scale: float


def _gaps(gap_m: float, gap_kind: GapKind) -> tuple[float, float]:
    if gap_kind == "centre":
        return gap_m, 0.0
    if gap_kind == "spacer":
        return gap_m, gap_m
    raise ValueError(f"unknown gap kind {gap_kind!r}; choose 'centre' or 'spacer'")


def solve_core_section(
    section: CoreSection,
    gap_m: float,
    gap_kind: GapKind = "centre",
    resolution: float = 1.0,
    ampere_turns: float = 1.0,
) -> SectionResult:
    """Solve a gapped core section with its winding current and return L/N².

    Parameters
    ----------
    section : CoreSection
        Core dimensions.
    gap_m : float
        Centre gap: ground depth of the gapped leg (total gap, both halves); spacer:
        thickness of the spacer, which gaps every leg by this length [m].
    gap_kind : {"centre", "spacer"}
        How the gap is made. A spacer lifts the halves apart, so the window grows by
        the spacer thickness.
    resolution : float
        Mesh density factor (1 = default, 2 = twice as many grid lines per axis) [1].
    ampere_turns : float
        Winding ampere-turns NI [A] (the inductance is linear, so only the fields scale).

    Returns
    -------
    SectionResult

    Notes
    -----
    The stored energy of the whole core is W = ½ ∫ J·A dV = ½ L I², so
    L/N² = ∫ J·A dV / (NI)². Half (axisymmetric) or a quarter (planar) is solved.
    """
    centre_gap, outer_gap = _gaps(gap_m, gap_kind)
    s = section
    lift = 0.5 * outer_gap  # a spacer lifts each half by half its thickness
    r_post = s.leg_half_width_m
    r_win = r_post + s.window_width_m
    r_out = s.outer_edge_m
    z_win = 0.5 * s.window_height_m + lift
    z_top = z_win + s.yoke_thickness_m
    size = max(r_out, z_top)
    x_end, y_end = 3.0 * size + r_out, 3.0 * size + z_top
    iron = [
        Rect(0.0, r_post, 0.5 * centre_gap, z_win),
        Rect(r_win, r_out, 0.5 * outer_gap, z_win),
        Rect(0.0, r_out, z_win, z_top),
    ]
    wall = s.bobbin_wall_m
    coil = Rect(r_post + wall, r_win - wall, 0.0, z_win - wall)
    if coil.empty:
        raise ValueError("the bobbin wall leaves no room for the winding")
    coil_area = 2.0 * coil.area  # both halves
    density = ampere_turns / coil_area
    regions = [Region(rect, mu_r=s.mu_r, name="core") for rect in iron if not rect.empty]
    regions.append(Region(coil, current_density_A_m2=density, name="coil"))

    # Grid: every edge a grid line, refined towards the gap corners.
    smallest_gap = min(g for g in (centre_gap, outer_gap, s.window_height_m) if g > 0.0)
    fine = min(smallest_gap / 6.0, size / 60.0) / resolution
    coarse = size / (12.0 * resolution)
    x_breaks = [0.0, r_post, r_win, r_out, coil.x0, coil.x1, x_end]
    y_breaks = [0.0, 0.5 * centre_gap, 0.5 * outer_gap, z_win, z_top, coil.y1, y_end]
    x_grid = graded_axis(x_breaks, [r_post, r_win, r_out], fine, coarse)
    y_grid = graded_axis(y_breaks, [0.5 * centre_gap, 0.5 * outer_gap, z_win], fine, coarse)
    if s.kind == "axisymmetric":
        solution = solve_section("axisymmetric", regions, x_grid, y_grid, ("left", "right", "top"))
        scale = 2.0  # upper half solved
    else:
        solution = solve_section("planar", regions, x_grid, y_grid, ("left", "right", "top"))
        scale = 4.0 * s.depth_m  # one quadrant per metre of depth
    al = scale * solution.source_integral / ampere_turns**2
    return SectionResult(al, solution, coil, centre_gap, outer_gap, scale)


def section_from_dimensions_mm(
    family: str,
    leg_width_mm: float,
    leg_depth_mm: float,
    window_width_mm: float,
    window_height_mm: float,
    outer_width_mm: float,
    yoke_thickness_mm: float,
    bobbin_wall_mm: float = 0.0,
    mu_r: float = 2000.0,
    stack: int = 1,
) -> CoreSection:
    """A `CoreSection` from catalogue-style dimensions in mm (E or pot family)."""
    if family == "pot":
        return CoreSection(
            "axisymmetric", 0.5e-3 * leg_width_mm, 1e-3 * window_width_mm,
            1e-3 * outer_width_mm, 1e-3 * window_height_mm, 1e-3 * yoke_thickness_mm,
            1.0, 1e-3 * bobbin_wall_mm, mu_r,
        )
    if family == "E":
        return CoreSection(
            "planar", 0.5e-3 * leg_width_mm, 1e-3 * window_width_mm, 1e-3 * outer_width_mm,
            1e-3 * window_height_mm, 1e-3 * yoke_thickness_mm, 1e-3 * leg_depth_mm * stack,
            1e-3 * bobbin_wall_mm, mu_r,
        )
    raise ValueError(f"no gapped section for family {family!r}")


def refinement_sequence(
    section: CoreSection, gap_m: float, gap_kind: GapKind = "centre",
    resolutions: tuple[float, ...] = (1.0, 2.0),
) -> np.ndarray:
    """L/N² [H] at increasing mesh resolutions (for convergence checks)."""
    return np.array(
        [solve_core_section(section, gap_m, gap_kind, r).inductance_per_turn2_H
         for r in resolutions]
    )
