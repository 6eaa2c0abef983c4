"""3-D ideal-iron gap solver: exact plate gap, refinement, depth-edge behaviour."""

from __future__ import annotations

import numpy as np
import pytest

from optimag.constants import MU0
from optimag.fem import LegGap, depth_fringing, solve_leg_gap
from optimag.fem.gap3d import _tensor_laplacian
from optimag.fem.mesh import graded_axis


def test_tensor_assembly_reproduces_a_parallel_plate_gap_exactly() -> None:
    # Closed form: between two parallel equipotential plates (sides as symmetry planes)
    # the potential is linear and the flux is A/h per unit potential; trilinear elements
    # reproduce a linear field exactly.
    x = graded_axis([0.0, 2.0], [0.3], 0.05, 0.4)
    y = graded_axis([0.0, 1.5], [], 0.0, 0.3)
    z = graded_axis([0.0, 0.7], [0.0], 0.02, 0.2)
    stiffness = _tensor_laplacian(x, y, z)
    pz = np.meshgrid(x, y, z, indexing="ij")[2].ravel()
    potential = pz / 0.7
    top = np.isclose(pz, 0.7)
    flux = (stiffness @ potential)[top].sum()
    assert flux == pytest.approx(2.0 * 1.5 / 0.7, rel=1e-10)


LEG = LegGap(5.6e-3, 6e-3, 3e-3, 2.6e-3, 11e-3, 2.6e-3)


def test_leg_gap_permeance_converges_under_refinement() -> None:
    coarse = solve_leg_gap(LEG, 1.5e-3, "centre", False, 1.0).centre_H
    fine = solve_leg_gap(LEG, 1.5e-3, "centre", False, 1.6).centre_H
    assert coarse == pytest.approx(fine, rel=0.03)


def test_gap_permeance_exceeds_the_plate_gap_and_endless_depth() -> None:
    real = solve_leg_gap(LEG, 1.5e-3, "spacer", False)
    endless = solve_leg_gap(LEG, 1.5e-3, "spacer", True)
    plate = MU0 * LEG.leg_width_m * LEG.leg_depth_m / 1.5e-3
    assert endless.centre_H > plate
    assert real.centre_H > endless.centre_H
    assert real.outer_H > endless.outer_H > 0.0


def test_depth_fringing_is_an_edge_effect() -> None:
    # The depth-proportional part is carried by the endless solve, so what depth fringing
    # adds belongs to the two depth edges and does not grow with the depth (edges of a
    # long parallel-plate gap; within 10 % between depths 6 and 12 mm).
    shallow, _ = depth_fringing(LEG, 1.5e-3)
    deep_leg = LegGap(5.6e-3, 12e-3, 3e-3, 2.6e-3, 11e-3, 2.6e-3)
    deep, _ = depth_fringing(deep_leg, 1.5e-3)
    assert shallow > 0.0
    assert deep == pytest.approx(shallow, rel=0.1)
