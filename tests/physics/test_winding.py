"""Tests of optimag.physics.winding against standards, papers and independent solutions.

Reference values and tolerances: tests/data/check_values.md (section "Conductors" and
"Winding AC resistance").
"""

import math

import numpy as np
import pytest
from scipy.integrate import solve_bvp
from scipy.spatial import ConvexHull

from optimag.errors import ValidityRangeWarning
from optimag.physics import ac_resistance as acr
from optimag.physics import winding as w

RHO_20C = 1.0 / 58.0e6  # IEC 60028, 1/58 Ohm mm^2/m (from memory)


# --------------------------------------------------------------------------- copper


def test_copper_resistivity_1mm_wire_iec60028():
    # IEC 60028: 1.0 mm wire 21.952 mOhm/m at 20 degC, 28.854 mOhm/m at 100 degC (rel 1e-4).
    area = math.pi * 0.5e-3**2
    assert w.copper_resistivity(20.0) / area * 1e3 == pytest.approx(21.952, rel=1e-4)
    per_metre = w.copper_resistivity(np.array([20.0, 100.0])) / area * 1e3
    np.testing.assert_allclose(per_metre, [21.952, 28.854], rtol=1e-4)


def test_copper_resistivity_warns_outside_linear_range():
    with pytest.warns(ValidityRangeWarning):
        w.copper_resistivity(np.array([25.0, 400.0]))


def test_awg_diameter_astm_b258_formula():
    # ASTM B258 formula values, check_values.md. They are printed to 0.00001 mm, so the
    # tolerance is half that digit (rel 1e-5 as listed is tighter than the rounding of
    # 0.07987 mm for AWG 40).
    gauges = np.array([10, 20, 24, 30, 36, 40])
    expected_mm = [2.58819, 0.81182, 0.51056, 0.25464, 0.12700, 0.07987]
    np.testing.assert_allclose(w.awg_diameter_m(gauges) * 1e3, expected_mm, rtol=0, atol=5e-6)
    assert w.awg_diameter_m(36) == pytest.approx(0.127e-3, rel=1e-12)


def test_awg_diameter_against_printed_table_in_inches():
    # ASTM B258 printed table rounded to 0.0001 in (values from memory): abs 0.00254 mm.
    gauges = np.array([10, 20, 24, 30, 40])
    table_in = np.array([0.1019, 0.0320, 0.0201, 0.0100, 0.0031])
    np.testing.assert_allclose(w.awg_diameter_m(gauges) * 1e3, table_in * 25.4, atol=0.00254)


def test_awg_diameter_warns_outside_table():
    with pytest.warns(ValidityRangeWarning):
        w.awg_diameter_m(60)


def test_skin_depth_check_values():
    # delta = sqrt(rho / (pi f mu0)); check_values.md (rel 1e-4).
    frequency = np.array([10e3, 100e3, 1e6])
    at_20 = w.skin_depth(frequency, w.copper_resistivity(20.0)) * 1e3
    at_100 = w.skin_depth(frequency, w.copper_resistivity(100.0)) * 1e3
    np.testing.assert_allclose(at_20, [0.66085, 0.20898, 0.066085], rtol=1e-4)
    np.testing.assert_allclose(at_100, [0.75765, 0.23959, 0.075765], rtol=1e-4)


def test_skin_depth_johnson_rule_of_thumb():
    # W. C. Johnson, Transmission Lines and Networks, 1963: 6.64/sqrt(f) cm, i.e. about
    # 66/sqrt(f) mm for copper at 20 degC (within 1 %).
    frequency = np.geomspace(1e3, 1e7, 9)
    np.testing.assert_allclose(
        w.skin_depth(frequency, RHO_20C) * 1e3, 66.0 / np.sqrt(frequency), rtol=0.01
    )
    assert w.skin_depth(50e3, RHO_20C) * 1e3 == pytest.approx(66.0 / math.sqrt(50e3), rel=0.01)


def test_skin_depth_at_dc_is_infinite_and_ac_factor_is_one():
    assert np.isinf(w.skin_depth(0.0, RHO_20C))
    assert acr.foil_ac_factor(0.0, RHO_20C, 1e-3, 4.0) == 1.0


# --------------------------------------------------------------------------- Dowell

DOWELL_TABLE = {
    # Delta: (m=1, m=2, m=5); check_values.md, Dowell Proc. IEE 1966 (M + N), rel 1e-6.
    0.5: (1.005542, 1.026323, 1.171788),
    1.0: (1.085636, 1.406009, 3.648623),
    2.0: (1.897806, 5.146489, 27.88727),
}


def test_dowell_table_values_broadcast():
    deltas = np.array(list(DOWELL_TABLE))[:, None]
    layers = np.array([1.0, 2.0, 5.0])[None, :]
    expected = np.array(list(DOWELL_TABLE.values()))
    np.testing.assert_allclose(acr.dowell_factor(deltas, layers), expected, rtol=1e-6)


def test_dowell_scalar():
    assert acr.dowell_factor(1.0, 2) == pytest.approx(1.406009, rel=1e-6)


def _dowell_by_field_diffusion(delta: float, layers: int) -> float:
    """Dowell's F_R from the 1-D field diffusion in each foil layer, solved by solve_bvp.

    Lengths in skin depths, layer current 1 per unit breadth: H'' = 2j H across each layer,
    H = p - 1 and p on its faces; loss of a layer is the integral of |H'|^2.
    """

    def rhs(x, y):
        h_re, h_im, j_re, j_im, _ = y
        return np.vstack([j_re, j_im, -2.0 * h_im, 2.0 * h_re, j_re**2 + j_im**2])

    total = 0.0
    for p in range(1, layers + 1):

        def faces(ya, yb, p=p):
            return np.array([ya[0] - (p - 1), ya[1], yb[0] - p, yb[1], ya[4]])

        x = np.linspace(0.0, delta, 201)
        guess = np.zeros((5, x.size))
        guess[0] = p - 1 + x / delta
        guess[2] = 1.0 / delta
        solution = solve_bvp(rhs, faces, x, guess, tol=1e-10, max_nodes=100_000)
        assert solution.success
        total += solution.sol(delta)[4]
    return total / (layers / delta)


@pytest.mark.parametrize(("delta", "layers"), [(1.0, 2), (2.0, 3), (0.5, 5)])
def test_dowell_against_independent_diffusion_solution(delta, layers):
    # Independent numerical solution (scipy solve_bvp) of the field diffusion, rel 1e-7.
    expected = _dowell_by_field_diffusion(delta, layers)
    assert acr.dowell_factor(delta, layers) == pytest.approx(expected, rel=1e-7)


def test_dowell_low_frequency_series():
    # Series F_R = 1 + (5m^2 - 1) Delta^4 / 45 + O(Delta^8), check_values.md: within 0.04 %
    # at Delta = 0.5 for the tabulated m <= 5; its leading term fixes F_R - 1 to rel 1e-3
    # for Delta <= 0.2 (the Delta^8 term is below 1e-3 of it there, for any m).
    layers = np.array([1.0, 2.0, 5.0])
    series = 1.0 + (5.0 * layers**2 - 1.0) * 0.5**4 / 45.0
    np.testing.assert_allclose(acr.dowell_factor(0.5, layers), series, rtol=4e-4)
    layers = np.array([1.0, 2.0, 5.0, 20.0])
    deltas = np.array([0.02, 0.05, 0.1, 0.2])[:, None]
    excess = acr.dowell_factor(deltas, layers) - 1.0
    np.testing.assert_allclose(excess, (5.0 * layers**2 - 1.0) * deltas**4 / 45.0, rtol=1e-3)


def test_dowell_continuous_across_series_switch():
    # The series/closed-form switch must not show as a step.
    below = np.nextafter(acr.DOWELL_SERIES_LIMIT, 0.0)
    layers = np.array([1.0, 3.0, 10.0, 50.0])
    np.testing.assert_allclose(
        acr.dowell_factor(below, layers),
        acr.dowell_factor(acr.DOWELL_SERIES_LIMIT, layers),
        rtol=1e-12,
    )


def test_dowell_high_frequency_limit_without_overflow():
    # Dowell's limit Delta (2m^2 + 1)/3 for Delta >> 1 (exponentially small remainder).
    deltas = np.array([30.0, 1e3, 1e6])
    layers = np.array([1.0, 4.0, 7.0])
    np.testing.assert_allclose(
        acr.dowell_factor(deltas, layers), deltas * (2.0 * layers**2 + 1.0) / 3.0, rtol=1e-12
    )


def test_dowell_at_zero_is_one():
    assert acr.dowell_factor(0.0, 3) == 1.0


def test_dowell_fractional_layers_warn_below_one():
    with pytest.warns(ValidityRangeWarning):
        factor = acr.dowell_factor(np.array([0.5, 2.0]), 0.5)
    assert np.all(np.isfinite(factor)) and np.all(factor >= 1.0)
    # Non-integer m >= 1 is in range and lies between its integer neighbours.
    f15 = acr.dowell_factor(1.0, 1.5)
    assert acr.dowell_factor(1.0, 1.0) < f15 < acr.dowell_factor(1.0, 2.0)


# --------------------------------------------------------------------------- round wire


def test_equivalent_foil_example_ferreira():
    # Ferreira 1994 / Erickson & Maksimovic ch. 13 form: d = 0.5 mm, 100 kHz, 20 degC,
    # N_l = 10, b = 6 mm -> Delta 1.82218, F_R 1.69618 (m=1), 8.48543 (m=3); rel 1e-5.
    delta_skin = w.skin_depth(100e3, w.copper_resistivity(20.0))
    delta = acr.equivalent_foil_delta(0.5e-3, 10, 6e-3, delta_skin)
    assert delta == pytest.approx(1.82218, rel=1e-5)
    np.testing.assert_allclose(acr.dowell_factor(delta, [1.0, 3.0]), [1.69618, 8.48543], rtol=1e-5)
    deltas = acr.equivalent_foil_delta(
        np.array([0.5e-3, 0.5e-3]), np.array([10, 5]), 6e-3, delta_skin
    )
    # Halving the wires per layer halves the porosity: Delta scales with sqrt(porosity).
    assert deltas[1] == pytest.approx(deltas[0] / math.sqrt(2.0), rel=1e-12)


def test_equivalent_foil_warns_when_wires_overlap():
    with pytest.warns(ValidityRangeWarning):
        acr.equivalent_foil_delta(1e-3, 10, 5e-3, 0.2e-3)


def test_round_wire_ac_factor_matches_example_and_harmonic_axis():
    # Same example through the frequency-level function (rel 1e-5).
    assert acr.round_wire_ac_factor(100e3, RHO_20C, 0.5e-3, 10, 6e-3, 3) == pytest.approx(
        8.48543, rel=1e-5
    )
    harmonics = 100e3 * np.arange(1, 6)
    diameters = np.array([0.3e-3, 0.5e-3, 0.8e-3])
    factors = acr.round_wire_ac_factor(harmonics, RHO_20C, diameters, 5, 6e-3, 3,
                                       harmonic_axis=True)
    assert factors.shape == (3, 5)
    for i, d in enumerate(diameters):
        for k, f in enumerate(harmonics):
            assert factors[i, k] == pytest.approx(
                acr.round_wire_ac_factor(f, RHO_20C, d, 5, 6e-3, 3), rel=1e-14
            )


def test_foil_ac_factor_one_skin_depth_thick():
    # t = delta gives Delta = 1: Dowell table m = 2 -> 1.406009 (rel 1e-6).
    thickness = w.skin_depth(200e3, RHO_20C)
    assert acr.foil_ac_factor(200e3, RHO_20C, thickness, 2.0) == pytest.approx(1.406009, rel=1e-6)
    factors = acr.foil_ac_factor(
        np.array([[200e3, 400e3]]),
        RHO_20C,
        np.array([thickness, 0.5 * thickness]),
        2.0,
        harmonic_axis=True,
    )
    assert factors.shape == (2, 2)
    assert factors[0, 0] == pytest.approx(1.406009, rel=1e-6)
    # Half the thickness at four times the frequency is Delta = 1 again.
    assert acr.foil_ac_factor(800e3, RHO_20C, 0.5 * thickness, 2.0) == pytest.approx(
        1.406009, rel=1e-6
    )


# --------------------------------------------------------------------------- litz


def test_litz_factor_check_value():
    # Sullivan, IEEE TPEL 14(2) 1999: n=50, N=10, d_c=0.1 mm, b_c=10 mm, 100 kHz, 20 degC
    # -> 1.067377 (check_values.md, rel 1e-6).
    delta = w.skin_depth(100e3, w.copper_resistivity(20.0))
    assert acr.litz_factor(50, 10, 0.1e-3, 10e-3, delta) == pytest.approx(1.067377, rel=1e-6)
    factors = acr.litz_factor(np.array([50, 100]), 10, 0.1e-3, 10e-3, delta)
    # The excess scales with the square of the strand count.
    assert (factors[1] - 1.0) == pytest.approx(4.0 * (factors[0] - 1.0), rel=1e-12)


def test_litz_factor_papers_own_example():
    # Sullivan 1999, worked example: 14 turns, 130 strands AWG 48, 375 kHz, breadth
    # 6.3 mm -> about 1.03 (abs 0.005).
    delta = w.skin_depth(375e3, w.copper_resistivity(20.0))
    factor = acr.litz_factor(130, 14, w.awg_diameter_m(48), 6.3e-3, delta)
    assert factor == pytest.approx(1.03, abs=0.005)


def test_litz_ac_factor_from_frequency():
    factors = acr.litz_ac_factor(
        np.array([100e3, 200e3]), RHO_20C, 50, 10, 0.1e-3, np.array([[10e-3], [20e-3]])
    )
    assert factors.shape == (2, 2)
    assert factors[0, 0] == pytest.approx(1.067377, rel=1e-6)
    # Excess grows as 1/delta^4 = f^2 and falls as 1/b^2 (Sullivan's equation).
    assert factors[0, 1] - 1.0 == pytest.approx(4.0 * (factors[0, 0] - 1.0), rel=1e-12)
    assert factors[1, 0] - 1.0 == pytest.approx((factors[0, 0] - 1.0) / 4.0, rel=1e-12)
    per_harmonic = acr.litz_ac_factor(
        np.array([100e3, 200e3]),
        RHO_20C,
        np.array([50, 25]),
        10,
        0.1e-3,
        10e-3,
        harmonic_axis=True,
    )
    assert per_harmonic.shape == (2, 2)


def test_litz_ac_factor_scalar():
    # Same Sullivan check value through the frequency-level function (rel 1e-6).
    factor = acr.litz_ac_factor(100e3, w.copper_resistivity(20.0), 50, 10, 0.1e-3, 10e-3)
    assert factor == pytest.approx(1.067377, rel=1e-6)


def test_litz_warns_when_strand_thicker_than_skin_depth():
    with pytest.warns(ValidityRangeWarning):
        acr.litz_factor(10, 10, 0.5e-3, 10e-3, 0.2e-3)


# --------------------------------------------------------------------------- layout


def _place_by_hand(turns: int, parallel: int, outer: float, breadth: float):
    """Lay conductors one by one, left to right, starting a new layer when full."""
    per_layer = 0
    while (per_layer + 1) * outer <= breadth * (1 + 1e-12):
        per_layer += 1
    layers, position = (1, 0) if per_layer else (0, 0)
    for _ in range(turns * parallel):
        if position == per_layer:
            layers, position = layers + 1, 0
        position += 1
    return per_layer, layers


@pytest.mark.parametrize(
    ("turns", "parallel", "outer", "breadth"),
    [(25, 1, 1e-3, 10e-3), (25, 2, 1e-3, 10e-3), (7, 3, 0.3e-3, 3e-3), (1, 1, 2e-3, 2.5e-3)],
)
def test_round_layout_matches_placement_by_hand(turns, parallel, outer, breadth):
    # Independent placement loop (hand counting); orthocyclic nesting ignored as documented.
    per_layer, layers = _place_by_hand(turns, parallel, outer, breadth)
    layout = w.round_layout(turns, parallel, outer, breadth, 1.0)
    assert layout.conductors_per_layer == per_layer
    assert layout.layers == layers
    assert layout.build_m == pytest.approx(layers * outer, rel=1e-12)


def test_round_layout_fit_rules_on_arrays():
    # 25 turns of 1 mm in a 10 mm breadth: 10 per layer, 3 layers, 3 mm build.
    layout = w.round_layout(
        np.array([25, 25, 25, 4]),
        np.array([1, 1, 1, 12]),
        1e-3,
        np.array([10e-3, 10e-3, 0.5e-3, 10e-3]),
        np.array([3e-3, 2.9e-3, 3e-3, 10e-3]),
    )
    np.testing.assert_array_equal(layout.conductors_per_layer, [10, 10, 0, 10])
    np.testing.assert_array_equal(layout.fits, [True, False, False, False])
    assert np.all(np.isfinite(layout.build_m))


def test_foil_layout():
    # 10 turns x 2 foils of 0.1 mm + 0.05 mm insulation: 20 layers, 3 mm build.
    layout = w.foil_layout(10, 2, 0.1e-3, 0.05e-3, 8e-3, 9e-3, 3e-3)
    assert layout.layers == 20
    assert layout.build_m == pytest.approx(3e-3, rel=1e-12)
    assert layout.fits
    layouts = w.foil_layout(
        np.array([10, 10, 10]),
        2,
        0.1e-3,
        0.05e-3,
        np.array([8e-3, 10e-3, 8e-3]),
        9e-3,
        np.array([3e-3, 3e-3, 2e-3]),
    )
    np.testing.assert_array_equal(layouts.fits, [True, False, False])


def _offset_perimeter(width: float, depth: float, offset: float) -> float:
    """Perimeter of the set of points within `offset` of a rectangle, by convex hull."""
    angles = np.linspace(0.0, 2.0 * math.pi, 4000, endpoint=False)
    corners = np.array([[0, 0], [width, 0], [width, depth], [0, depth]], dtype=float)
    circle = offset * np.column_stack([np.cos(angles), np.sin(angles)])
    points = (corners[:, None, :] + circle[None, :, :]).reshape(-1, 2)
    return ConvexHull(points).area  # in 2-D, "area" is the perimeter


def test_mean_turn_length_round_and_rectangular_legs():
    # Round leg: the mid-build turn is a circle of diameter d + 2(wall + build/2).
    d, wall, build = 10e-3, 1e-3, 4e-3
    assert w.mean_turn_length(math.pi * d, wall, build) == pytest.approx(
        math.pi * (d + 2 * wall + build), rel=1e-12
    )
    # Rectangular leg: perimeter of the offset rectangle, convex hull (independent numeric).
    a, b = 8e-3, 12e-3
    builds = np.array([0.0, 2e-3, 6e-3])
    expected = [_offset_perimeter(a, b, wall + bb / 2) for bb in builds]
    np.testing.assert_allclose(w.mean_turn_length(2 * (a + b), wall, builds), expected, rtol=1e-5)


def test_mean_turn_length_toroid_offset_cross_section():
    # Offset of the (OD - ID)/2 x H cross-section by build/2, convex hull (numeric).
    od, id_, h = 25e-3, 15e-3, 10e-3
    builds = np.array([0.0, 1e-3, 3e-3])
    expected = [_offset_perimeter((od - id_) / 2, h, bb / 2) for bb in builds]
    np.testing.assert_allclose(w.mean_turn_length_toroid(od, id_, h, builds), expected, rtol=1e-5)
    assert w.mean_turn_length_toroid(od, id_, h, 0.0) == pytest.approx(2 * (5e-3 + h))


def test_fill_factor():
    # Definition Ku = A_cu / W_a (McLyman): 20 turns of 1 mm wire in 100 mm^2.
    copper = 20 * math.pi * 0.5e-3**2
    assert w.fill_factor(copper, 100e-6) == pytest.approx(0.15708, rel=1e-4)
    np.testing.assert_allclose(w.fill_factor(np.array([10e-6, 40e-6]), 100e-6), [0.1, 0.4])


def test_dc_resistance_iec_wire():
    # 10 turns x 50 mm MLT of 1.0 mm wire at 20 degC: 0.5 m x 21.952 mOhm/m (IEC 60028).
    area = math.pi * 0.5e-3**2
    resistance = w.dc_resistance(w.copper_resistivity(20.0), 50e-3, 10, area)
    assert resistance == pytest.approx(0.5 * 21.952e-3, rel=1e-4)
    both = w.dc_resistance(RHO_20C, 50e-3, np.array([10, 20]), np.array([area, 2 * area]))
    np.testing.assert_allclose(both, [0.5 * 21.952e-3] * 2, rtol=1e-4)


# --------------------------------------------------------------------------- loss


def _triangle_harmonics(ripple_pp: float, duty: float, samples: int = 4096):
    """Peak amplitudes of a triangle ripple by FFT (independent of the Fourier formula)."""
    t = np.arange(samples) / samples
    wave = np.where(t < duty, t / duty, (1.0 - t) / (1.0 - duty)) * ripple_pp
    spectrum = np.fft.rfft(wave - wave.mean()) / samples
    return 2.0 * np.abs(spectrum[1:])


def test_winding_loss_equals_rms_loss_when_factors_are_one():
    # I_rms^2 = I_dc^2 + dI^2/12 for DC + triangle (check_values.md): 10 A + 3 A p-p
    # -> I_rms = 10.037430 A, rel 1e-6; amplitudes from an FFT of the waveform.
    amplitudes = _triangle_harmonics(3.0, 0.3)
    resistance = 0.02
    loss = w.winding_loss(resistance, 10.0, amplitudes, np.ones_like(amplitudes))
    assert loss == pytest.approx(resistance * 10.037430**2, rel=1e-6)


def test_winding_loss_split_on_arrays():
    amplitudes = np.array([[1.0, 0.5], [2.0, 0.0]])
    factors = np.array([[1.5, 3.0], [2.0, 9.0]])
    dc, ac = w.winding_loss_split(np.array([0.1, 0.2]), np.array([4.0, 1.0]), amplitudes, factors)
    np.testing.assert_allclose(dc, [0.1 * 16, 0.2 * 1])
    # Hand sum of R F I^2 / 2 over the harmonics.
    np.testing.assert_allclose(ac, [0.1 * (1.5 * 1 + 3 * 0.25) / 2, 0.2 * 2 * 4 / 2])
    total = w.winding_loss(np.array([0.1, 0.2]), np.array([4.0, 1.0]), amplitudes, factors)
    np.testing.assert_allclose(total, dc + ac)
    # One candidate: 0.1 Ohm, 4 A DC, one 1 A harmonic at F_R = 2 -> 1.6 W + 0.1 W.
    dc_one, ac_one = w.winding_loss_split(0.1, 4.0, [1.0], [2.0])
    assert (dc_one, ac_one) == pytest.approx((1.6, 0.1))


def test_litz_outside_range_when_strands_exceed_the_skin_depth():
    """Sullivan's strand model holds for strands thin against the skin depth
    delta = sqrt(rho / (pi f mu0)) (standard skin-depth formula)."""
    rho, f = 1.72e-8, 100e3
    delta = math.sqrt(rho / (math.pi * f * 4e-7 * math.pi))
    flags = acr.litz_outside_range(np.array([0.9, 1.1]) * delta, f, rho)
    assert flags.tolist() == [False, True]
