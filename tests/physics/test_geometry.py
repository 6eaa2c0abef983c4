"""Tests of optimag.physics.geometry (boxed volume, surface, mass, cost).

The box shapes are common practice, no source; the checks are hand geometry and an
independent numerical route (scipy ConvexHull of the box corners).
"""

import itertools

import numpy as np
import pytest
from scipy.spatial import ConvexHull

from optimag.errors import ValidityRangeWarning
from optimag.physics import geometry as g


def _hull(length, width, height) -> ConvexHull:
    corners = np.array(list(itertools.product([0, length], [0, width], [0, height])), float)
    return ConvexHull(corners)


def test_e_type_box_winding_inside_and_protruding():
    # Hand geometry: 40 x 12 x 34 mm pair, 12 mm deep leg, wall 1 mm, build 3 mm: the
    # winding leaves the core by 4 mm each side -> 20 mm wide. A 20 mm deep core hides it.
    length, width, height = g.wound_box_e_type(40e-3, 12e-3, 34e-3, 12e-3, 1, 1e-3, 3e-3)
    assert (length, width, height) == pytest.approx((40e-3, 20e-3, 34e-3))
    _, widths, heights = g.wound_box_e_type(
        40e-3, np.array([12e-3, 30e-3, 12e-3]), 34e-3, 12e-3, np.array([1, 1, 2]), 1e-3, 3e-3
    )
    # Two stacked sets: 2 x 12 mm of core, winding 24 + 8 mm.
    np.testing.assert_allclose(widths, [20e-3, 30e-3, 32e-3])
    np.testing.assert_allclose(heights, 34e-3)


def test_pot_box_stacks_along_height():
    assert g.wound_box_pot(18e-3, 10.6e-3, 1) == pytest.approx((18e-3, 18e-3, 10.6e-3))
    _, _, heights = g.wound_box_pot(18e-3, 10.6e-3, np.array([1, 2, 3]))
    np.testing.assert_allclose(heights, [10.6e-3, 21.2e-3, 31.8e-3])


def test_toroid_box_adds_build_on_every_side():
    # OD 25, ID 15, H 10 mm, build 2 mm: 29 x 29 x 14 mm; two stacked: 29 x 29 x 24 mm.
    assert g.wound_box_toroid(25e-3, 15e-3, 10e-3, 1, 2e-3) == pytest.approx((29e-3, 29e-3, 14e-3))
    _, _, heights = g.wound_box_toroid(25e-3, 15e-3, 10e-3, np.array([1, 2]), 2e-3)
    np.testing.assert_allclose(heights, [14e-3, 24e-3])


def test_toroid_box_warns_when_winding_fills_the_hole():
    with pytest.warns(ValidityRangeWarning):
        g.wound_box_toroid(25e-3, 15e-3, 10e-3, 1, np.array([2e-3, 8e-3]))


def test_volume_and_surface_against_convex_hull():
    # scipy ConvexHull of the 8 corners: volume and surface area (independent numeric).
    dims = [(10e-3, 20e-3, 30e-3), (7e-3, 7e-3, 3e-3)]
    for length, width, height in dims:
        hull = _hull(length, width, height)
        assert g.box_volume(length, width, height) == pytest.approx(hull.volume, rel=1e-9)
        assert g.surface_area_box(length, width, height) == pytest.approx(hull.area, rel=1e-9)
    lengths, widths, heights = (np.array(axis) for axis in zip(*dims, strict=True))
    np.testing.assert_allclose(
        g.box_volume(lengths, widths, heights), [_hull(*d).volume for d in dims], rtol=1e-9
    )
    np.testing.assert_allclose(
        g.surface_area_box(lengths, widths, heights), [_hull(*d).area for d in dims], rtol=1e-9
    )


def test_footprint():
    assert g.footprint(10e-3, 20e-3) == pytest.approx(200e-6)
    np.testing.assert_allclose(g.footprint(np.array([1.0, 2.0]), 3.0), [3.0, 6.0])


def test_copper_mass_one_metre_of_one_mm2():
    # Copper density 8.89 g/cm^3 (handbook, from memory): 1 m of 1 mm^2 weighs 8.89 g.
    assert g.copper_mass(10, 0.1, 1e-6) == pytest.approx(8.89e-3, rel=1e-3)
    np.testing.assert_allclose(
        g.copper_mass(np.array([10, 20]), 0.1, 1e-6), [8.89e-3, 17.78e-3], rtol=1e-3
    )


def test_core_mass():
    # MnZn ferrite about 4.8 g/cm^3 (common practice, no source): 10 cm^3 x 2 sets = 96 g.
    assert g.core_mass(10e-6, 4800.0, 2) == pytest.approx(0.096)
    np.testing.assert_allclose(g.core_mass(10e-6, 4800.0, np.array([1, 3])), [0.048, 0.144])


def test_part_cost_hand_sum():
    # 2 sets x 0.50 x 1.2 + 0.02 kg x 15 /kg + 30 turns x 0.01 = 1.20 + 0.30 + 0.30.
    assert g.part_cost(0.50, 2, 1.2, 0.02, 15.0, 30, 0.01) == pytest.approx(1.80)
    costs = g.part_cost(0.50, np.array([1, 2]), 1.2, 0.02, 15.0, np.array([30, 0]), 0.01)
    np.testing.assert_allclose(costs, [1.20, 1.50])


def test_energy_cost_hand_calculation():
    # 1.5 W for 20,000 h is 30 kWh (energy = power x time; 1 kWh = 3.6 MJ, BIPM SI
    # brochure, 9th ed., table 8); at 0.25 per kWh that is 7.50.
    assert g.energy_cost(1.5, 20_000.0, 0.25) == pytest.approx(7.50)
    # Same in joules: 1.5 W x 20,000 h x 3600 s/h = 108 MJ = 30 kWh.
    assert g.energy_cost(1.5, 20_000.0, 1.0) == pytest.approx(1.5 * 20_000 * 3600 / 3.6e6)
    np.testing.assert_allclose(g.energy_cost(np.array([0.0, 2.0]), 1000.0, 0.3), [0.0, 0.6])
