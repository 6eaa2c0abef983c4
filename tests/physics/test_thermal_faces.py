"""Face-by-face convection, radiation and conduction paths of optimag.physics.thermal.

Each correlation is checked against a worked example of Incropera, DeWitt, Bergman and
Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, 2007; the examples' data
and printed answers are copied (from memory) in tests/data/incropera_convection_examples.json.
Conduction paths are checked against hand calculations written out beside each check, and
the coupled solutions against scipy's brentq on the same heat balance.
"""

import json
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from optimag.physics import convection, heat_balance, heat_paths
from optimag.physics import thermal as th

DATA = json.loads(
    (Path(__file__).parents[1] / "data" / "incropera_convection_examples.json").read_text()
)


def _rayleigh(example: dict, delta_T: float, length: float) -> float:
    return (
        example["gravity_m_s2"] * example["beta_per_K"] * delta_T * length**3
        / (example["nu_m2_s"] * example["alpha_m2_s"])
    )


# --------------------------------------------------------------------------- textbook examples


def test_vertical_plate_churchill_chu_example_9_2():
    ex = DATA["example_9_2_vertical_plate"]
    delta_T = ex["surface_C"] - ex["air_C"]
    ra = _rayleigh(ex, delta_T, ex["height_m"])
    assert ra == pytest.approx(ex["answer_rayleigh"], rel=2e-3)
    nu = convection.nusselt_vertical_plate(ra, ex["prandtl"])
    # The book prints Nu = 147, h = 7.0 W/m^2K and q = 1060 W (rounded: 0.5 %).
    assert nu == pytest.approx(ex["answer_nusselt"], rel=5e-3)
    h = nu * ex["k_W_mK"] / ex["height_m"]
    assert h == pytest.approx(ex["answer_h_W_m2K"], rel=5e-3)
    q = h * ex["height_m"] * ex["width_m"] * delta_T
    assert q == pytest.approx(ex["answer_q_W"], rel=5e-3)


def test_duct_example_9_3_sides_top_and_bottom():
    ex = DATA["example_9_3_duct"]
    delta_T = ex["surface_C"] - ex["air_C"]
    k = ex["k_W_mK"]
    # Sides: laminar Churchill-Chu (eq. 9.27) on the height.
    ra_side = _rayleigh(ex, delta_T, ex["height_m"])
    h_side = convection.nusselt_vertical_plate_laminar(ra_side, ex["prandtl"]) * k / ex["height_m"]
    assert h_side == pytest.approx(ex["answer_h_side_W_m2K"], rel=5e-3)
    # Top and bottom on L = A/P = w/2 for a long duct.
    top_length = ex["width_m"] / 2
    ra_top = _rayleigh(ex, delta_T, top_length)
    h_top = convection.nusselt_upper_hot_surface(ra_top) * k / top_length
    assert h_top == pytest.approx(ex["answer_h_top_W_m2K"], rel=5e-3)
    h_bottom = convection.nusselt_lower_hot_surface(ra_top) * k / top_length
    assert h_bottom == pytest.approx(ex["answer_h_bottom_W_m2K"], rel=5e-3)
    per_metre = (2 * h_side * ex["height_m"] + (h_top + h_bottom) * ex["width_m"]) * delta_T
    assert per_metre == pytest.approx(ex["answer_q_per_m_W_m"], rel=5e-3)
    # Each inside its published range in this example.
    assert convection.CORRELATION_RANGES["upper_hot_lloyd_moran"][0] <= ra_top
    assert ra_top <= convection.CORRELATION_RANGES["lower_hot_surface"][1]


def test_laminar_flat_plate_example_7_1():
    ex = DATA["example_7_1_flat_plate"]
    re = ex["speed_m_s"] * ex["length_m"] / ex["nu_m2_s"]
    assert re == pytest.approx(ex["answer_reynolds"], rel=2e-3)
    nu = convection.nusselt_flat_plate_laminar(re, ex["prandtl"])
    assert nu == pytest.approx(ex["answer_nusselt"], rel=5e-3)
    h = nu * ex["k_W_mK"] / ex["length_m"]
    assert h == pytest.approx(ex["answer_h_W_m2K"], rel=5e-3)
    q = h * ex["length_m"] * (ex["air_C"] - ex["surface_C"])
    assert q == pytest.approx(ex["answer_q_per_m_W_m"], rel=5e-3)


def test_air_table_reproduces_the_examples_properties():
    rows = DATA["air_table_a4"]["rows"]
    for t, nu, k, alpha, pr in rows:
        air = convection.air_properties(t)
        np.testing.assert_allclose(
            [air.kinematic_viscosity_m2_s, air.conductivity_W_mK, air.diffusivity_m2_s,
             air.prandtl], [nu, k, alpha, pr], rtol=1e-9,
        )
    # Example 9.3 reads the table at 303 K: interpolation gives its values within 1 %.
    ex = DATA["example_9_3_duct"]
    air = convection.air_properties(303.0)
    np.testing.assert_allclose(
        [air.kinematic_viscosity_m2_s, air.conductivity_W_mK, air.diffusivity_m2_s,
         air.prandtl], [ex["nu_m2_s"], ex["k_W_mK"], ex["alpha_m2_s"], ex["prandtl"]],
        rtol=1e-2,
    )
    # The Rayleigh number from the table agrees with Example 9.2 (g 9.80665 vs 9.8).
    ex = DATA["example_9_2_vertical_plate"]
    ra = convection.rayleigh_number(ex["surface_C"] - ex["air_C"], ex["height_m"], ex["film_K"])
    assert ra == pytest.approx(ex["answer_rayleigh"], rel=3e-3)


def test_small_plate_form_meets_lloyd_moran_at_its_lower_bound():
    # Two published correlations for the upward-facing hot plate must agree where the
    # one hands over to the other (Ra = 1e4, air): within 10 %.
    ra = convection.CORRELATION_RANGES["upper_hot_lloyd_moran"][0]
    small = convection.nusselt_upper_hot_surface_low_rayleigh(ra, 0.707)
    assert small == pytest.approx(convection.nusselt_upper_hot_surface(ra), rel=0.10)
    # Below the hand-over the thick boundary layer keeps Nu above the 1/4-power law.
    low = np.array([1.0, 10.0, 100.0, 1000.0])
    assert np.all(convection.nusselt_upper_hot_surface_low_rayleigh(low, 0.707) > 0.54 * low**0.25)


def test_mixed_convection_never_below_either_part():
    forced, natural = np.array([1.0, 5.0, 0.0]), np.array([2.0, 1.0, 3.0])
    combined = convection.combine_mixed_convection(forced, natural)
    np.testing.assert_allclose(combined, np.cbrt(forced**3 + natural**3))
    assert np.all(combined >= np.maximum(forced, natural))


# --------------------------------------------------------------------------- faces of a part


def test_face_conductance_is_the_sum_over_five_free_faces():
    # 20 x 16 x 10 mm part, 30 K above 40 degC air, emissivity 0.9: hand sum of the faces.
    length, width, height, rise, ambient = 0.020, 0.016, 0.010, 30.0, 40.0
    film = ambient + 273.15 + rise / 2
    air = convection.air_properties(film)
    ra_side = convection.rayleigh_number(rise, height, film)
    nusselt_side = convection.nusselt_vertical_plate(ra_side, air.prandtl)
    h_side = nusselt_side * air.conductivity_W_mK / height
    top_length = length * width / (2 * (length + width))
    ra_top = convection.rayleigh_number(rise, top_length, film)
    assert ra_top < 1e4  # a small part: the small-plate form applies
    h_top = (
        convection.nusselt_upper_hot_surface_low_rayleigh(ra_top, air.prandtl)
        * air.conductivity_W_mK / top_length
    )
    h_rad = th.radiation_coefficient(ambient + rise, ambient, 0.9)
    expected = (h_side + h_rad) * 2 * (length + width) * height + (h_top + h_rad) * length * width
    part = th.ThermalContext(ambient, 0.0, height, 0.9, None, length, width)
    assert th.conductance_faces(rise, part) == pytest.approx(expected, rel=1e-12)
    faces = convection.face_coefficients(rise, ambient, length, width, height, 0.9)
    assert faces.inside_range


def test_range_flags_follow_the_correlations_ranges():
    # A 0.3 mm part at 0.01 K: vertical Ra below 0.1, outside Churchill-Chu's data.
    assert not convection.face_coefficients(0.01, 25.0, 3e-4, 3e-4, 3e-4, 0.9).inside_range
    # A 1 m plate in a 10 m/s stream: Re ~ 6e5, past the laminar flat plate.
    assert not convection.face_coefficients(20.0, 25.0, 1.0, 1.0, 0.1, 0.9, 10.0).inside_range
    assert convection.face_coefficients(20.0, 25.0, 0.02, 0.02, 0.01, 0.9, 2.0).inside_range


def test_forced_air_cools_and_more_air_cools_more():
    kwargs = {"length_m": 0.02, "width_m": 0.016, "model": "faces"}
    still = heat_balance.loss_temperature_fixed_point(40.0, (1.5, 0.0, 0.0), 0.0, 0.01, **kwargs)
    temps = [
        heat_balance.loss_temperature_fixed_point(
            40.0, (1.5, 0.0, 0.0), 0.0, 0.01, air_speed_m_s=speed, **kwargs
        ).temperature_C
        for speed in (0.5, 1.0, 3.0)
    ]
    assert still.temperature_C > temps[0] > temps[1] > temps[2] > 40.0


# --------------------------------------------------------------------------- conduction paths


def test_potting_shape_factor_hand_calculation():
    # 20 x 16 x 10 mm, 3 mm compound (Incropera Table 4.1, cases 8 and 9):
    # faces (320 + 2*36*10) mm^2 / 3 mm = 346.667 mm; edges 0.54 (72 + 40) = 60.48 mm;
    # corners 4 * 0.15 * 3 = 1.8 mm; S = 408.947 mm.
    s, inside = heat_paths.potting_shape_factor(0.020, 0.016, 0.010, 0.003)
    assert s == pytest.approx(0.408947, rel=1e-5)
    assert inside
    # Thicker than five times the smallest side: beyond the edge factor's condition.
    assert not heat_paths.potting_shape_factor(0.020, 0.016, 0.010, 0.06)[1]


def test_thicker_potting_heats():
    temps = []
    for thickness in (0.002, 0.004, 0.008):
        s, _ = heat_paths.potting_shape_factor(0.02, 0.016, 0.01, thickness)
        temps.append(
            heat_balance.loss_temperature_fixed_point(
                60.0, (2.0, 0.0, 0.0), 0.0, 0.01, model="faces", length_m=0.02,
                width_m=0.016, air_exposed=0.0, fixed_conductance_W_K=0.5 * s,
            ).temperature_C
        )
    # Constant conductance: T = T_wall + P / (k S) exactly.
    s, _ = heat_paths.potting_shape_factor(0.02, 0.016, 0.01, 0.002)
    assert temps[0] == pytest.approx(60.0 + 2.0 / (0.5 * s), rel=1e-9)
    assert temps[0] < temps[1] < temps[2]


def test_board_conductance_hand_calculation():
    # Footprint 4 cm^2, terminals of 1 mm^2 copper, 10 cm^2 board copper:
    # into pads 2*398*1e-6/5e-3 + 0.0278*4e-4/0.5e-3 = 0.1592 + 0.02224 = 0.18144 W/K;
    # spreading 2 pi 398 35e-6 / ln(sqrt(14/4)) = 0.087524 / 0.626381 = 0.139730 W/K;
    # series: 1 / (1/0.18144 + 1/0.139730) = 0.078938 W/K.
    g = heat_paths.board_conductance(4e-4, 1e-6, 10e-4)
    assert g == pytest.approx(0.078938, rel=1e-4)
    assert heat_paths.board_conductance(4e-4, 1e-6, 0.0) == 0.0


def test_hotter_board_heats_and_matches_an_independent_balance():
    g_board = heat_paths.board_conductance(4e-4, 1e-6, 10e-4)
    part = {"length_m": 0.02, "width_m": 0.02, "model": "faces"}
    temps = []
    for board_C in (40.0, 60.0, 80.0):
        result = heat_balance.loss_temperature_fixed_point(
            40.0, (1.5, 0.0, 0.0), 0.0, 0.01, fixed_conductance_W_K=g_board,
            heat_offset_W=g_board * (board_C - 40.0), **part,
        )
        temps.append(float(result.temperature_C))

        def surplus(t, board_C=board_C):
            air = th.conductance_faces(
                t - 40.0, th.ThermalContext(40.0, 0.0, 0.01, 0.9, None, 0.02, 0.02)
            ) * (t - 40.0)
            return air + g_board * (t - board_C) - 1.5

        assert temps[-1] == pytest.approx(brentq(surplus, 40.0, 400.0, xtol=1e-10), rel=1e-6)
    assert temps[0] < temps[1] < temps[2]


def test_winding_conductivity_hand_calculation_and_bounds():
    # Foil 0.2 mm copper + 0.05 mm insulation: 0.25 / (0.2/398 + 0.05/0.2) mm/(mm K/W)
    # = 0.25 / 0.2505025 = 0.997994 W/(m K).
    k = heat_paths.winding_conductivity_across_layers(0.25e-3, 0.2e-3)
    assert k == pytest.approx(0.997994, rel=1e-5)
    # All insulation: k_ins; all copper: k_cu.
    assert heat_paths.winding_conductivity_across_layers(1e-3, 0.0) == pytest.approx(0.2)
    assert heat_paths.winding_conductivity_across_layers(1e-3, 1e-3) == pytest.approx(398.0)


def test_slab_rise_against_finite_differences():
    # Independent numerical solution of k T'' = -q on [0, t], T'(0) = 0, T(t) = 0, by
    # second-order finite differences (exact for the quadratic profile).
    power, thickness, area, k = 2.0, 2e-3, 5e-4, 0.8
    n = 201
    x = np.linspace(0.0, thickness, n)
    dx = x[1] - x[0]
    q = power / (area * thickness)
    matrix = np.zeros((n, n))
    rhs = np.full(n, -q * dx * dx / k)
    for i in range(1, n - 1):
        matrix[i, i - 1 : i + 2] = [1.0, -2.0, 1.0]
    matrix[0, :2] = [-2.0, 2.0]  # mirror node: zero gradient
    matrix[-1, -1], rhs[-1] = 1.0, 0.0
    temperature = np.linalg.solve(matrix, rhs)
    expected = heat_paths.slab_generation_rise(power, thickness, area, k)
    assert temperature[0] == pytest.approx(expected, rel=1e-9)


# --------------------------------------------------------------------------- enclosure


def test_enclosure_air_rise_inverts_its_heat_curve_and_balances_both_walls():
    box = heat_paths.Enclosure(1e-3, 0.9)
    heats = np.array([0.2, 1.0, 5.0])
    rises = heat_paths.enclosure_air_rise(heats, 30.0, box)
    np.testing.assert_allclose(heat_paths.enclosure_heat_shed(rises, 30.0, box), heats, rtol=1e-3)
    # Independent split of one rise by brentq: outside and inside paths carry equal heat.
    side, rise = 0.1, float(rises[1])

    def outside(wall):
        f = convection.face_coefficients(wall, 30.0, side, side, side, 0.9)
        return ((f.side_W_m2K + f.radiation_W_m2K) * 4 * side**2
                + (f.top_W_m2K + f.radiation_W_m2K) * side**2) * wall

    def inside(wall):
        f = convection.face_coefficients(rise - wall, 30.0 + wall, side, side, side, 0.0)
        return (f.side_W_m2K * 4 * side**2 + f.top_W_m2K * side**2) * (rise - wall)

    wall = brentq(lambda w: outside(w) - inside(w), 0.0, rise, xtol=1e-12)
    assert outside(wall) == pytest.approx(1.0, rel=1e-3)


def test_part_in_an_enclosure_runs_hotter_and_hotter_in_a_smaller_box():
    part = {"length_m": 0.02, "width_m": 0.02, "model": "faces"}
    free = heat_balance.loss_temperature_fixed_point(40.0, (1.0, 0.004, 0.0), 0.0, 0.01, **part)
    temps = [
        float(heat_balance.loss_temperature_fixed_point(
            40.0, (1.0, 0.004, 0.0), 0.0, 0.01, enclosure=heat_paths.Enclosure(v), **part
        ).temperature_C)
        for v in (5e-3, 1e-3, 0.2e-3)
    ]
    assert free.temperature_C < temps[0] < temps[1] < temps[2]
    # Consistent state: part over the inside air by its own balance at the settled loss.
    loss = 1.0 + 0.004 * temps[1]
    air = 40.0 + float(heat_paths.enclosure_air_rise(loss, 40.0, heat_paths.Enclosure(1e-3)))
    g = th.conductance_faces(
        temps[1] - air, th.ThermalContext(air, 0.0, 0.01, 0.9, None, 0.02, 0.02)
    )
    assert g * (temps[1] - air) == pytest.approx(loss, rel=1e-4)


def _cell_conductivity(diameter_ratio: float, k_copper: float, k_matrix: float, n: int = 120):
    """Effective conductivity across a square cell holding one round conductor, by an
    independent finite-volume solution of div(k grad T) = 0: T = 1 on the top face, 0 on
    the bottom, insulated sides; k = heat flow / (cell width x unit gradient)."""
    from scipy.sparse import lil_matrix
    from scipy.sparse.linalg import spsolve

    h = 1.0 / n
    centres = (np.arange(n) + 0.5) * h
    x, y = np.meshgrid(centres, centres, indexing="ij")
    inside = (x - 0.5) ** 2 + (y - 0.5) ** 2 <= (diameter_ratio / 2) ** 2
    k = np.where(inside, k_copper, k_matrix)
    index = np.arange(n * n).reshape(n, n)
    matrix = lil_matrix((n * n, n * n))
    rhs = np.zeros(n * n)
    for i in range(n):
        for j in range(n):
            row = index[i, j]
            for di, dj in ((1, 0), (-1, 0), (0, 1), (0, -1)):
                a, b = i + di, j + dj
                if 0 <= a < n and 0 <= b < n:
                    g = 2 * k[i, j] * k[a, b] / (k[i, j] + k[a, b])
                    matrix[row, row] += g
                    matrix[row, index[a, b]] -= g
                elif 0 <= a < n and (b < 0 or b >= n):
                    g = 2 * k[i, j]  # half a cell to the fixed-temperature face
                    matrix[row, row] += g
                    rhs[row] += g * (1.0 if b >= n else 0.0)
    temperature = spsolve(matrix.tocsr(), rhs).reshape(n, n)
    flow = np.sum(2 * k[:, 0] * temperature[:, 0])  # into the bottom face, per unit depth
    return flow  # cell width 1, temperature difference 1


def test_layers_in_series_bound_the_round_wire_winding_from_below():
    # Wiener's lower bound (series layers) must not exceed an independent numerical
    # solution of the round conductor in its square cell; the model uses the bound, so its
    # hot spot is not underestimated. Enamelled wire: copper 0.9 of the pitch.
    # The solver itself: a uniform cell conducts at its own conductivity.
    assert _cell_conductivity(0.5, 0.7, 0.7, n=40) == pytest.approx(0.7, rel=1e-9)
    ratio = 0.9
    fraction = np.pi / 4 * ratio**2
    series = heat_paths.winding_conductivity_across_layers(1.0, fraction)
    numerical = _cell_conductivity(ratio, 398.0, 0.2)
    assert series <= numerical
    # ... and not absurdly low: here 0.55 against 1.03 W/(m K), within a factor of ten.
    assert numerical < 10 * series


def test_radiation_coefficient_example_1_2():
    ex = DATA["example_1_2_radiation"]
    perimeter = np.pi * ex["diameter_m"]
    delta_T = ex["surface_C"] - ex["surroundings_C"]
    h_rad = th.radiation_coefficient(ex["surface_C"], ex["surroundings_C"], ex["emissivity"])
    radiation = h_rad * perimeter * delta_T
    convection = ex["h_W_m2K"] * perimeter * delta_T
    assert radiation == pytest.approx(ex["answer_radiation_W_m"], rel=2e-3)
    assert convection == pytest.approx(ex["answer_convection_W_m"], rel=2e-3)
    assert radiation + convection == pytest.approx(ex["answer_total_W_m"], rel=2e-3)


def test_enclosure_flags_its_own_correlations():
    box = heat_paths.Enclosure(1e-3, 0.9)
    flags = heat_paths.enclosure_inside_range(np.array([1e-3, 5.0, 30.0]), 30.0, box)
    # 1 mK inside a 10 cm box: the inside film's Rayleigh number falls below the data.
    np.testing.assert_array_equal(flags, [False, True, True])
