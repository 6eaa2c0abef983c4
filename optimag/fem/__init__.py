"""Field solutions of gapped cores (finite elements, scikit-fem and a 3-D tensor solver).

- `solve_section`: 2-D magnetostatics (axisymmetric r-z or planar x-y) of rectangular
  regions with permeability and current density.
- `CoreSection`, `solve_core_section`: a gapped two-half core (round-post pot core
  axisymmetric, E core planar) with its winding current: inductance per turn², the field
  solution for flux plots and ∫|B|² over any region.
- `LegGap`, `solve_leg_gap`, `depth_fringing`: 3-D scalar-potential solve of a
  rectangular-leg gap with ideal iron, for the fringing along the leg's depth.
- `core_section_for`, `leg_gap_for`, `reference_inductance`: the same from a catalogue
  core (dimensions in mm), used by the reference table and by design checks.
"""

from optimag.fem.catalog_cores import (
    GappedCore,
    core_section_for,
    gapped_core_from_row,
    leg_gap_for,
    reference_inductance,
)
from optimag.fem.cores import CoreSection, SectionResult, solve_core_section
from optimag.fem.gap3d import GapPermeance, LegGap, depth_fringing, solve_leg_gap
from optimag.fem.mesh import Rect, graded_axis
from optimag.fem.section import Region, SectionSolution, solve_section

__all__ = [
    "CoreSection",
    "GapPermeance",
    "GappedCore",
    "LegGap",
    "Rect",
    "Region",
    "SectionResult",
    "SectionSolution",
    "core_section_for",
    "depth_fringing",
    "gapped_core_from_row",
    "graded_axis",
    "leg_gap_for",
    "reference_inductance",
    "solve_core_section",
    "solve_leg_gap",
    "solve_section",
]
