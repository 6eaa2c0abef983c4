"""Parametric core geometry (IEC 60205 effective parameters) and the [custom_core] table."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pydantic import ValidationError
from scipy.integrate import quad

from optimag.errors import ValidityRangeWarning
from optimag.search import custom_core as cc
from optimag.study import custom_core as spec

MM, MM2, MM3 = 1e-3, 1e-6, 1e-9


def iec_60205(sections):
    """Hand calculation, IEC 60205: C1 = Σ l/A, C2 = Σ l/A², Ae = C1/C2, le = C1²/C2."""
    c1 = sum(length / area for length, area in sections)
    c2 = sum(length / area**2 for length, area in sections)
    return c1 / c2, c1 * c1 / c2


# --- E shape ------------------------------------------------------------------------------


def test_e_core_hand_calculation_with_unequal_sections():
    """IEC 60205 by hand for an E pair with outer legs and yokes thinner than usual.

    a = 10, d = 8, h = 12, w = 5, outer leg b = 4, yoke y = 3 (mm). Path segments, the
    two symmetric halves combined (their areas add):
      centre leg   l = h = 12                          A = a d = 80
      outer legs   l = h = 12                          A = 2 b d = 64
      yokes        l = 2 w = 10                        A = 2 y d = 48
      outer corners l = 2 (π/8)(b + y) = 7π/4           A = (64 + 48)/2 = 56
      centre corners l = 2 (π/8)(a/2 + y) = 2π          A = (80 + 48)/2 = 64
    Corner rule of IEC 60205 (mean circular path through the section centres, mean area),
    with the quarter ellipse taken as a quarter circle of the mean radius.
    """
    sections = [(12, 80), (12, 64), (10, 48), (7 * math.pi / 4, 56), (2 * math.pi, 64)]
    ae_mm2, le_mm = iec_60205(sections)
    g = cc.e_core_geometry(10 * MM, 8 * MM, 12 * MM, 5 * MM, outer_leg_width_m=4 * MM,
                           yoke_thickness_m=3 * MM)
    assert g.ae_m2 == pytest.approx(ae_mm2 * MM2, rel=1e-12)
    assert g.le_m == pytest.approx(le_mm * MM, rel=1e-12)
    assert g.ve_m3 == pytest.approx(ae_mm2 * le_mm * MM3, rel=1e-12)
    assert g.amin_m2 == pytest.approx(48 * MM2)
    # Outer size: 10 + 2*5 + 2*4 = 28 long, 8 deep, 12 + 2*3 = 18 high.
    assert (g.length_m, g.width_m, g.height_m) == pytest.approx((28 * MM, 8 * MM, 18 * MM))
    assert g.window_area_m2 == pytest.approx(60 * MM2)
    assert g.material_volume_m3 == pytest.approx((28 * 18 - 2 * 5 * 12) * 8 * MM3)


def test_e_core_default_proportions_have_uniform_area():
    """Outer legs and yokes of a/2: every IEC 60205 section has the area a d, so
    Ae = a d exactly and le = 2h + 2w + 2(π/8)(a) + 2(π/8)(a) = 2h + 2w + πa/2."""
    a, d, h, w = 6.0, 9.0, 14.0, 4.0
    g = cc.e_core_geometry(a * MM, d * MM, h * MM, w * MM)
    assert g.ae_m2 == pytest.approx(a * d * MM2, rel=1e-12)
    assert g.le_m == pytest.approx((2 * h + 2 * w + math.pi * a / 2) * MM, rel=1e-12)
    assert g.amin_m2 == pytest.approx(a * d * MM2, rel=1e-12)


def test_uniform_ring_gives_back_its_own_section():
    """Definition check (IEC 60050-221): one uniform section of length l and area A has
    Ae = A and le = l."""
    ae, le, ve = cc.effective_parameters(*cc.core_constants([0.05], [2e-5]))
    assert (ae, le, ve) == pytest.approx((2e-5, 0.05, 1e-6), rel=1e-12)


def test_core_constants_on_arrays():
    lengths = np.array([[10.0, 20.0], [5.0, 5.0]])
    areas = np.array([[2.0, 4.0], [1.0, 1.0]])
    c1, c2 = cc.core_constants(lengths, areas)
    np.testing.assert_allclose(c1, [10 / 2 + 20 / 4, 10.0])
    np.testing.assert_allclose(c2, [10 / 4 + 20 / 16, 10.0])


def test_e_core_on_arrays_matches_scalars():
    widths = np.array([3.0, 8.0, 15.0]) * MM
    batch = cc.e_core_geometry(widths, 10 * MM, 20 * MM, 6 * MM)
    assert batch.ae_m2.shape == (3,)
    for k, width in enumerate(widths):
        single = cc.e_core_geometry(width, 10 * MM, 20 * MM, 6 * MM)
        for name in cc.CoreGeometry._fields:
            assert getattr(batch, name)[k] == pytest.approx(float(getattr(single, name)))


# --- pot shape ----------------------------------------------------------------------------


def test_pot_core_against_hand_sections_and_quadrature():
    """IEC 60205 by hand for a pot pair, plates integrated numerically (scipy quad).

    D = 10 (r1 = 5), h = 8, w = 4 (r2 = 9), r3 = sqrt(9² + 5²) = sqrt(106), t = 2.5.
    Plates: radial sections of area 2π r t from r1 to r2, two of them.
    Corners: quarter circles of radius (e + t/2)/2, e = distance from the window edge to
    the half-area radius of the post (r1 - r1/√2) or wall (sqrt((r2² + r3²)/2) - r2).
    """
    r1, r2, h, t = 5.0, 9.0, 8.0, 2.5
    r3 = math.sqrt(r2**2 + r1**2)
    post, wall = math.pi * r1**2, math.pi * (r3**2 - r2**2)
    assert wall == pytest.approx(post)
    e_post = r1 - r1 / math.sqrt(2)
    e_wall = math.sqrt((r2**2 + r3**2) / 2) - r2
    corners = [
        (2 * math.pi / 4 * (e_post + t / 2), (post + 2 * math.pi * r1 * t) / 2),
        (2 * math.pi / 4 * (e_wall + t / 2), (wall + 2 * math.pi * r2 * t) / 2),
    ]
    sections = [(h, post), (h, wall), *corners]
    plate_c1 = 2 * quad(lambda r: 1 / (2 * math.pi * r * t), r1, r2)[0]
    plate_c2 = 2 * quad(lambda r: 1 / (2 * math.pi * r * t) ** 2, r1, r2)[0]
    c1 = sum(length / area for length, area in sections) + plate_c1
    c2 = sum(length / area**2 for length, area in sections) + plate_c2
    g = cc.pot_core_geometry(10 * MM, 8 * MM, 4 * MM)  # default t = D/4 = 2.5
    assert g.c1_per_m == pytest.approx(c1 / MM, rel=1e-9)
    assert g.c2_per_m3 == pytest.approx(c2 / MM3, rel=1e-9)
    assert g.ae_m2 == pytest.approx(c1 / c2 * MM2, rel=1e-9)
    assert g.le_m == pytest.approx(c1**2 / c2 * MM, rel=1e-9)
    assert g.height_m == pytest.approx((h + 2 * t) * MM)
    assert g.length_m == pytest.approx(2 * r3 * MM)
    # Smallest section: the plate where the flux enters it equals the post (2π r1 t = π r1²).
    assert g.amin_m2 == pytest.approx(post * MM2)


def test_pot_core_on_arrays_and_explicit_base():
    thin = cc.pot_core_geometry(np.array([8.0, 12.0]) * MM, 6 * MM, 3 * MM, 1.0 * MM)
    thick = cc.pot_core_geometry(np.array([8.0, 12.0]) * MM, 6 * MM, 3 * MM, 3.0 * MM)
    assert thin.ae_m2.shape == (2,)
    # A thinner base plate is a narrower section: smaller Amin, longer C1.
    assert np.all(thin.amin_m2 < thick.amin_m2)
    assert np.all(thin.c1_per_m > thick.c1_per_m)


# --- validity and price -----------------------------------------------------------------


def test_squat_window_warns():
    with pytest.warns(ValidityRangeWarning, match="window side"):
        cc.e_core_geometry(20 * MM, 10 * MM, 1.5 * MM, 6 * MM)
    with pytest.warns(ValidityRangeWarning, match="window side"):
        cc.pot_core_geometry(20 * MM, 6 * MM, 1.0 * MM)


def test_non_positive_dimension_is_refused():
    with pytest.raises(ValueError, match="window_width_m"):
        cc.e_core_geometry(5 * MM, 5 * MM, 10 * MM, 0.0)
    with pytest.raises(ValueError, match="post_diameter_m"):
        cc.pot_core_geometry(np.array([5 * MM, -1 * MM]), 10 * MM, 3 * MM)


def test_volume_price_scalar_and_array():
    # The study's affine rule: base + per_cm3 * volume; 2.5 cm³ at 0.08/cm³ plus 0.2.
    assert cc.volume_price(2.5e-6, 0.2, 0.08) == pytest.approx(0.4)
    np.testing.assert_allclose(cc.volume_price(np.array([0.0, 1e-6, 1e-5]), 0.2, 0.08),
                               [0.2, 0.28, 1.0])


# Dimensions inside the documented range: positive, window sides at least
# MIN_WINDOW_TO_LEG_RATIO times the leg (a hair above it, clear of rounding).
_leg = st.floats(0.5, 60.0)
_ratio = st.floats(cc.MIN_WINDOW_TO_LEG_RATIO * 1.001, 20.0)


@given(_leg, st.floats(0.5, 80.0), _ratio, _ratio)
@settings(max_examples=200, deadline=None)
def test_e_core_is_finite_and_consistent(leg, depth, breadth_ratio, width_ratio):
    g = cc.e_core_geometry(leg * MM, depth * MM, breadth_ratio * leg * MM,
                           width_ratio * leg * MM)
    for value in g:
        assert np.all(np.isfinite(value))
    # Ae is a weighted mean of the section areas; Ve = Ae le by definition.
    assert g.amin_m2 <= g.ae_m2 * (1 + 1e-12)
    assert g.ve_m3 == pytest.approx(g.ae_m2 * g.le_m, rel=1e-12)
    assert g.material_volume_m3 > 0


@given(_leg, _ratio, _ratio, st.one_of(st.none(), st.floats(0.05, 2.0)))
@settings(max_examples=200, deadline=None)
def test_pot_core_is_finite_and_consistent(post, breadth_ratio, width_ratio, base_ratio):
    base = None if base_ratio is None else base_ratio * post * MM
    g = cc.pot_core_geometry(post * MM, breadth_ratio * post * MM, width_ratio * post * MM,
                             base)
    for value in g:
        assert np.all(np.isfinite(value))
    assert g.amin_m2 <= g.ae_m2 * (1 + 1e-12)
    assert g.ve_m3 == pytest.approx(g.ae_m2 * g.le_m, rel=1e-12)
    assert g.material_volume_m3 > 0


# --- the [custom_core] table ------------------------------------------------------------


E_TABLE = {
    "family": "E", "leg_width_mm": [3, 20], "leg_depth_mm": [3, 25],
    "window_breadth_mm": [4, 30], "window_width_mm": [2, 15], "bobbin_wall_mm": 0.8,
    "price_base": 0.2, "price_per_cm3": 0.08,
}


def test_table_ranges_in_metres():
    table = spec.CustomCore.model_validate(E_TABLE)
    ranges = table.dimension_ranges_m()
    assert set(ranges) == {"leg_width", "leg_depth", "window_breadth", "window_width"}
    assert ranges["leg_width"] == pytest.approx((3e-3, 20e-3))


def test_table_number_fixes_a_dimension():
    table = spec.CustomCore.model_validate({**E_TABLE, "leg_depth_mm": 12})
    assert table.leg_depth_mm == (12.0, 12.0)


def test_spec_and_geometry_share_the_validity_limit():
    assert spec.MIN_WINDOW_TO_LEG_RATIO == cc.MIN_WINDOW_TO_LEG_RATIO


@pytest.mark.parametrize(
    ("change", "message"),
    [
        ({"leg_width_mm": None}, "leg_width_mm is required"),
        ({"post_diameter_mm": [4, 8]}, "does not apply"),
        ({"leg_depth_mm": [9, 3]}, "low <= high"),
        ({"window_width_mm": [0, 3]}, "low <= high"),
        ({"window_width_mm": [1, 3]}, "below 0.1 x the largest leg"),
        ({"max_height_mm": 5.0}, "below the lowest core"),
        ({"leg_depth_mm": "wide"}, "number"),
        ({"family": "U"}, "family"),
    ],
)
def test_table_faults(change, message):
    data = {**E_TABLE, **change}
    data = {k: v for k, v in data.items() if v is not None}
    with pytest.raises(ValidationError, match=message):
        spec.CustomCore.model_validate(data)


def test_pot_table():
    table = spec.CustomCore.model_validate({
        "family": "pot", "post_diameter_mm": [4, 16], "window_breadth_mm": [4, 20],
        "window_width_mm": [2, 10], "price_base": 0.1, "price_per_cm3": 0.1,
        "max_height_mm": 30,
    })
    assert set(table.dimension_ranges_m()) == {"post_diameter", "window_breadth",
                                               "window_width"}
    assert table.lowest_height_mm() == pytest.approx(4 + 2 * 1.0)
