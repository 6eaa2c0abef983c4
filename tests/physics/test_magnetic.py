"""Tests of optimag.physics.magnetic against handbook formulas, papers and quadrature."""

import math

import numpy as np
import pytest
from scipy.integrate import quad

from optimag.constants import MU0
from optimag.errors import ValidityRangeWarning
from optimag.physics import fringing, saturation
from optimag.physics import magnetic as mag

# A mid-size E-core style geometry used by several tests: 1 cm^2 leg, 2 cm window.
AE = 1e-4
SIDE = 1e-2
WINDOW = 2e-2
LE = 0.05
MU_R = 2000.0


# --------------------------------------------------------------------------- reluctances


def test_core_reluctance_scalar_matches_circuit_law():
    # Magnetic circuit law R = l/(mu0 mu_r A), evaluated by hand with math.pi.
    expected = 0.05 / (4e-7 * math.pi * 2000.0 * 1e-4)
    assert mag.core_reluctance(LE, AE, MU_R) == pytest.approx(expected, rel=1e-12)


def test_core_reluctance_array_scales_with_length_and_inverse_area():
    le = np.array([0.02, 0.04, 0.08])
    reluctance = mag.core_reluctance(le, AE, MU_R)
    assert reluctance.shape == (3,)
    np.testing.assert_allclose(reluctance / reluctance[0], [1.0, 2.0, 4.0], rtol=1e-14)
    np.testing.assert_allclose(
        mag.core_reluctance(LE, np.array([AE, 2 * AE]), MU_R)[1],
        mag.core_reluctance(LE, AE, MU_R) / 2,
        rtol=1e-14,
    )


def test_gap_reluctance_ideal_scalar_and_array():
    # Magnetic circuit law with mu_r = 1.
    assert fringing.gap_reluctance_ideal(1e-3, AE) == pytest.approx(
        1e-3 / (4e-7 * math.pi * 1e-4), rel=1e-12
    )
    gaps = np.array([0.0, 1e-4, 1e-3])
    np.testing.assert_allclose(
        fringing.gap_reluctance_ideal(gaps, AE), gaps / (MU0 * AE), rtol=1e-14, atol=0
    )


def test_mclyman_fringing_factor_check_value():
    # McLyman, Transformer and Inductor Design Handbook (formula from memory);
    # check_values.md: lg = 0.1 cm, Ac = 1 cm^2, G = 2 cm -> 1.368888, rel 1e-6.
    assert fringing.fringing_factor_mclyman(1e-3, 1e-4, 2e-2) == pytest.approx(1.368888, rel=1e-6)


def test_mclyman_fringing_factor_array_and_zero_gap_limit():
    gaps = np.array([0.0, 1e-12, 1e-4, 1e-3])
    factor = fringing.fringing_factor_mclyman(gaps, AE, WINDOW)
    assert factor[0] == 1.0  # limit lg ln(1/lg) -> 0, exactly
    assert np.all(np.isfinite(factor))
    # Handbook formula written out independently for the non-zero gaps.
    expected = 1 + gaps[1:] / math.sqrt(AE) * np.log(2 * WINDOW / gaps[1:])
    np.testing.assert_allclose(factor[1:], expected, rtol=1e-14)


def test_mclyman_fringing_warns_when_gap_exceeds_winding_length():
    with pytest.warns(ValidityRangeWarning):
        fringing.fringing_factor_mclyman(np.array([1e-3, 5e-3]), 1e-3, 4e-3)


def test_gap_reluctance_mclyman_is_ideal_over_factor():
    gaps = np.array([1e-4, 5e-4, 2e-3])
    np.testing.assert_allclose(
        fringing.gap_reluctance_mclyman(gaps, AE, WINDOW),
        gaps / (MU0 * AE) / fringing.fringing_factor_mclyman(gaps, AE, WINDOW),
        rtol=1e-14,
    )
    assert fringing.gap_reluctance_mclyman(0.0, AE, WINDOW) == 0.0
    assert fringing.gap_reluctance_mclyman(1e-3, AE, WINDOW) == pytest.approx(
        1e-3 / (MU0 * AE * 1.368888), rel=1e-6
    )


def test_muhlethaler_basic_permeance_check_value():
    # Muehlethaler, Kolar, Ecklebe, ICPE 2011, basic 2-D reluctance; check_values.md:
    # w = 10, l = 1, h = 10 -> P'/mu0 = 6.94871 (rel 1e-6). The basic element has
    # l = lg/2 and h = G/2, so lg = 2, G = 20. A very deep leg isolates the per-depth
    # 2-D permeance: R d -> lg / (mu0 (w + delta)) with delta/d < 1e-8.
    depth = 1e9
    reluctance = fringing.gap_reluctance_muhlethaler(2.0, 10.0, depth, 20.0)
    permeance_per_depth_over_mu0 = 1.0 / (reluctance * depth * MU0)
    assert permeance_per_depth_over_mu0 == pytest.approx(6.94871, rel=1e-6)


def test_muhlethaler_array_zero_gap_and_ideal_limit():
    gaps = np.array([0.0, 1e-9, 1e-5, 1e-3])
    reluctance = fringing.gap_reluctance_muhlethaler(gaps, SIDE, SIDE, WINDOW)
    assert reluctance.shape == (4,)
    assert reluctance[0] == 0.0
    ideal = fringing.gap_reluctance_ideal(gaps[1:], SIDE * SIDE)
    sigma = reluctance[1:] / ideal
    # Fringing only lowers the reluctance and vanishes as the gap closes.
    assert np.all(sigma < 1.0)
    assert sigma[0] == pytest.approx(1.0, abs=1e-5)
    assert np.all(np.diff(sigma) < 0)


def test_muhlethaler_close_to_mclyman_for_a_typical_gap():
    # Two published fringing estimates for lg = 1 mm on a 1 cm square leg with a
    # 2 cm window: they differ by about 12 %; they must agree within 20 %.
    mcl = fringing.gap_reluctance_mclyman(1e-3, AE, WINDOW)
    muh = fringing.gap_reluctance_muhlethaler(1e-3, SIDE, SIDE, WINDOW)
    assert muh == pytest.approx(mcl, rel=0.2)


def test_muhlethaler_warns_for_gap_longer_than_leg():
    with pytest.warns(ValidityRangeWarning):
        fringing.gap_reluctance_muhlethaler(np.array([1e-3, 2e-2]), SIDE, SIDE, 5e-2)


# --------------------------------------------------------------------------- inductance


def test_inductance_and_al_scalar():
    reluctance = 1e7
    assert mag.inductance(10, reluctance) == pytest.approx(1e-5, rel=1e-14)
    assert mag.al_value(reluctance) == pytest.approx(1e-7, rel=1e-14)


def test_inductance_scales_with_turns_squared_array():
    # Magnetic circuit law: L = N^2 A_L exactly.
    turns = np.array([1.0, 2.0, 7.0, 40.0])
    reluctance = mag.core_reluctance(LE, AE, MU_R) + fringing.gap_reluctance_ideal(5e-4, AE)
    ind = mag.inductance(turns, reluctance)
    np.testing.assert_allclose(ind / turns**2, mag.al_value(reluctance), rtol=1e-14)


def test_zero_gap_gives_core_only_inductance():
    core = mag.core_reluctance(LE, AE, MU_R)
    for gap_reluctance in (
        fringing.gap_reluctance_ideal(0.0, AE),
        fringing.gap_reluctance_mclyman(0.0, AE, WINDOW),
        fringing.gap_reluctance_muhlethaler(0.0, SIDE, SIDE, WINDOW),
    ):
        assert mag.inductance(20, core + gap_reluctance) == mag.inductance(20, core)


def test_energy_identities_of_the_magnetic_circuit():
    # Exact identities: W = L I^2/2 = N^2 I^2 / (2 R) = Phi^2 R / 2, Phi = B Ae.
    turns = np.array([5.0, 30.0, 120.0])
    current = np.array([0.5, 3.0, 12.0])
    total = mag.core_reluctance(LE, AE, MU_R) + fringing.gap_reluctance_mclyman(8e-4, AE, WINDOW)
    energy_from_l = 0.5 * mag.inductance(turns, total) * current**2
    energy_from_mmf = 0.5 * (turns * current) ** 2 / total
    flux = mag.flux_density(turns, current, total, AE) * AE
    energy_from_flux = 0.5 * flux**2 * total
    np.testing.assert_allclose(energy_from_l, energy_from_mmf, rtol=1e-13)
    np.testing.assert_allclose(energy_from_l, energy_from_flux, rtol=1e-13)


def test_flux_density_scalar():
    # B = N I / (R Ae): 10 turns, 2 A, 1e6 A/Wb, 1 cm^2 -> 0.2 T (hand calculation).
    assert mag.flux_density(10, 2.0, 1e6, 1e-4) == pytest.approx(0.2, rel=1e-14)


# --------------------------------------------------------------------------- gap solver


@pytest.mark.parametrize("model_name", ["ideal", "mclyman", "muhlethaler"])
def test_gap_for_inductance_substitutes_back(model_name):
    rng = np.random.default_rng(7)
    n = 500
    ae = 10 ** rng.uniform(-6, -3, n)
    side = np.sqrt(ae)
    window = side * rng.uniform(0.8, 4.0, n)
    le = side * rng.uniform(4.0, 20.0, n)
    mu_r = 10 ** rng.uniform(2.0, 4.0, n)
    turns = rng.integers(1, 300, n).astype(float)
    wanted_gap = side * 10 ** rng.uniform(-4, -0.2, n)
    models = {
        "ideal": lambda g: fringing.gap_reluctance_ideal(g, ae),
        "mclyman": lambda g: fringing.gap_reluctance_mclyman(g, ae, window),
        "muhlethaler": lambda g: fringing.gap_reluctance_muhlethaler(g, side, side, window),
    }
    gap_model = models[model_name]
    core = mag.core_reluctance(le, ae, mu_r)
    target_l = mag.inductance(turns, core + gap_model(wanted_gap))

    gap = mag.gap_for_inductance(turns, target_l, le, ae, mu_r, window, fringing=model_name)

    assert gap.shape == (n,)
    reached = core + gap_model(gap)
    np.testing.assert_allclose(reached, turns**2 / target_l, rtol=1e-10)
    np.testing.assert_allclose(gap, wanted_gap, rtol=1e-8)


def test_gap_for_inductance_scalar_with_explicit_leg_sides():
    width, depth = 8e-3, 1.5e-2
    core = mag.core_reluctance(LE, width * depth, MU_R)
    gap = fringing.gap_reluctance_muhlethaler(6e-4, width, depth, WINDOW)
    target_l = mag.inductance(25, core + gap)
    gap = mag.gap_for_inductance(
        25,
        target_l,
        LE,
        width * depth,
        MU_R,
        WINDOW,
        fringing="muhlethaler",
        leg_width_m=width,
        leg_depth_m=depth,
    )
    assert gap == pytest.approx(6e-4, rel=1e-9)


def test_gap_for_inductance_nan_where_unreachable_and_zero_at_core_only():
    core = mag.core_reluctance(LE, AE, MU_R)
    core_only = mag.inductance(20, core)
    targets = np.array([2.0 * core_only, core_only, 0.5 * core_only])
    gaps = mag.gap_for_inductance(20, targets, LE, AE, MU_R, WINDOW)
    assert np.isnan(gaps[0])
    assert gaps[1] == pytest.approx(0.0, abs=1e-15)
    assert gaps[2] > 0.0


def test_gap_for_inductance_ideal_closed_form():
    # Magnetic circuit law inverted by hand: lg = mu0 Ae (N^2/L - R_core).
    core = mag.core_reluctance(LE, AE, MU_R)
    expected = MU0 * AE * (100.0**2 / 1e-3 - core)
    assert mag.gap_for_inductance(100, 1e-3, LE, AE, MU_R, WINDOW, fringing="ideal") == (
        pytest.approx(expected, rel=1e-13)
    )


def test_gap_for_inductance_warns_when_solution_out_of_range():
    # 1 turn with a tiny inductance needs a gap far longer than the window.
    with pytest.warns(ValidityRangeWarning):
        mag.gap_for_inductance(1, 1e-9, LE, AE, MU_R, 5e-3, fringing="mclyman")


def test_gap_for_inductance_rejects_unknown_model():
    with pytest.raises(ValueError, match="fringing"):
        mag.gap_for_inductance(10, 1e-4, LE, AE, MU_R, WINDOW, fringing="nonsense")


# --------------------------------------------------------------------------- powder cores


def test_powder_permeability_fraction_scalar_and_array():
    # Common practice roll-off form, no source: 1/(a + b H^c) written out.
    assert saturation.powder_permeability_fraction(0.0, 1.0, 1e-6, 2.0) == 1.0
    field = np.array([0.0, 1e3, 1e4])
    np.testing.assert_allclose(
        saturation.powder_permeability_fraction(field, 1.0, 1e-8, 2.0),
        1.0 / (1.0 + 1e-8 * field**2),
        rtol=1e-14,
    )


@pytest.mark.parametrize(
    ("a", "b", "c"), [(1.0, 1e-8, 2.0), (1.0, 3e-5, 1.3), (0.9, 2e-3, 0.8), (1.0, 1e-4, 1.0)]
)
def test_powder_flux_density_matches_quadrature(a, b, c):
    # Independent numerical solution: scipy quad of mu0 mu_i / (a + b h^c).
    mu_i = 60.0
    fields = np.array([1.0, 3e2, 1e4, 8e4])
    flux = saturation.powder_flux_density(fields, mu_i, a, b, c)
    for field, value in zip(fields, flux, strict=True):
        integral, _ = quad(lambda h: 1.0 / (a + b * h**c), 0.0, field, epsrel=1e-12, limit=200)
        assert value == pytest.approx(MU0 * mu_i * integral, rel=1e-9)


def test_powder_flux_density_scalar_is_odd_and_linear_at_low_field():
    # Small field: B -> mu0 mu_i H / a (first term of the series).
    assert saturation.powder_flux_density(1e-3, 75.0, 1.0, 1e-8, 2.0) == pytest.approx(
        MU0 * 75.0 * 1e-3, rel=1e-12
    )
    assert saturation.powder_flux_density(-500.0, 75.0, 1.0, 1e-6, 1.7) == pytest.approx(
        -saturation.powder_flux_density(500.0, 75.0, 1.0, 1e-6, 1.7), rel=1e-15
    )


def test_powder_inductance_is_incremental_flux_linkage():
    # Independent route: L_inc = N Ae dB/dI by central finite difference of B(H(I)).
    turns, le, ae, mu_i, a, b, c = 40.0, 0.06, 6e-5, 60.0, 1.0, 2e-7, 1.9
    currents = np.array([0.0, 2.0, 10.0, 25.0])
    step = 1e-4
    b_plus = saturation.powder_flux_density(turns * (currents + step) / le, mu_i, a, b, c)
    b_minus = saturation.powder_flux_density(turns * (currents - step) / le, mu_i, a, b, c)
    finite_difference = turns * ae * (b_plus - b_minus) / (2 * step)
    inductance = saturation.powder_inductance(turns, currents, le, ae, mu_i, a, b, c)
    np.testing.assert_allclose(inductance, finite_difference, rtol=1e-6)


def test_powder_inductance_scalar_zero_bias_is_linear_core():
    # At zero current with a = 1 the powder core is the linear circuit L = N^2 / R_core.
    assert saturation.powder_inductance(30, 0.0, 0.06, 6e-5, 60.0, 1.0, 2e-7, 1.9) == pytest.approx(
        mag.inductance(30, mag.core_reluctance(0.06, 6e-5, 60.0)), rel=1e-14
    )


# --------------------------------------------------------------------------- soft saturation
# Fröhlich (Elektrotech. Z. 1881) / Kennelly (Trans. AIEE 1891) law, both from memory:
# the reluctivity H/J of the material is a straight line a + b|H| in the field.


def test_soft_saturation_reluctivity_is_kennellys_straight_line():
    mu_i, js = 2000.0, 0.4
    fields = np.array([1.0, 30.0, 300.0, 3e3, 3e4])
    polarisation = saturation.soft_saturation_polarization(fields, mu_i, js)
    reluctivity = fields / polarisation
    slope, intercept = np.polyfit(fields, reluctivity, 1)
    assert intercept == pytest.approx(1.0 / (MU0 * (mu_i - 1.0)), rel=1e-9)
    assert slope == pytest.approx(1.0 / js, rel=1e-9)
    np.testing.assert_allclose(reluctivity, intercept + slope * fields, rtol=1e-12)


def test_soft_saturation_fit_to_initial_permeability_and_bsat():
    mu_i, js = 1400.0, 0.38
    # Initial slope of B(H): central difference at H = 0 gives mu0 mu_i.
    step = 1e-6
    slope = (saturation.soft_saturation_flux_density(step, mu_i, js)
             - saturation.soft_saturation_flux_density(-step, mu_i, js)) / (2 * step)
    assert slope == pytest.approx(MU0 * mu_i, rel=1e-6)
    # Far field: the polarisation reaches J_s; B is odd in H.
    assert saturation.soft_saturation_polarization(1e9, mu_i, js) == pytest.approx(js, rel=1e-5)
    assert saturation.soft_saturation_flux_density(-250.0, mu_i, js) == pytest.approx(
        -saturation.soft_saturation_flux_density(250.0, mu_i, js), rel=1e-15
    )


@pytest.mark.parametrize("r_gap", [0.0, 2e5, 5e6])
def test_soft_saturation_operating_point_solves_amperes_law(r_gap):
    """Independent numerical solution: brentq on N I = le H + R_g Ae B(H), and the
    incremental inductance by a central difference of the flux linkage."""
    from scipy.optimize import brentq

    turns, le, ae, mu_i, js = 25.0, 0.045, 8e-5, 2300.0, 0.41
    currents = np.array([0.05, 0.8, 3.0, 12.0, 60.0])
    point = saturation.soft_saturation_operating_point(turns, currents, le, ae, mu_i, js, r_gap)
    for k, current in enumerate(currents):
        def residual(h, current=current):
            flux = saturation.soft_saturation_flux_density(h, mu_i, js)
            return le * h + r_gap * ae * flux - turns * current
        field = brentq(residual, 0.0, turns * current / le, xtol=1e-14, rtol=1e-14)
        assert point.field_A_per_m[k] == pytest.approx(field, rel=1e-9)
        assert point.flux_density_T[k] == pytest.approx(
            saturation.soft_saturation_flux_density(field, mu_i, js), rel=1e-9
        )
    step = 1e-5
    solve = saturation.soft_saturation_operating_point
    plus = solve(turns, currents + step, le, ae, mu_i, js, r_gap)
    minus = solve(turns, currents - step, le, ae, mu_i, js, r_gap)
    linkage_slope = turns * ae * (plus.flux_density_T - minus.flux_density_T) / (2 * step)
    np.testing.assert_allclose(point.inductance_H, linkage_slope, rtol=1e-6)


def test_soft_saturation_inductance_limits_and_roll_off():
    # Magnetic circuit law at zero current, mu_r = 1 (air-cored) far beyond saturation.
    turns, le, ae, mu_i, js, r_gap = 30.0, 0.05, 1e-4, 2000.0, 0.4, 1.5e6
    linear = mag.inductance(turns, mag.core_reluctance(le, ae, mu_i) + r_gap)
    air = mag.inductance(turns, mag.core_reluctance(le, ae, 1.0) + r_gap)
    currents = np.linspace(0.0, 400.0, 2001)
    point = saturation.soft_saturation_operating_point(turns, currents, le, ae, mu_i, js, r_gap)
    assert point.inductance_H[0] == pytest.approx(linear, rel=1e-12)
    assert point.inductance_H[-1] == pytest.approx(air, rel=2e-2)
    assert np.all(np.diff(point.inductance_H) < 0)  # rolls off monotonically
    # The roll-off starts before Bsat: at 70 % of J_s in the core L is already lower.
    at_70 = np.argmin(np.abs(point.flux_density_T - 0.7 * js))
    assert point.inductance_H[at_70] < 0.97 * linear
    # Negative current: same inductance, opposite flux.
    neg = saturation.soft_saturation_operating_point(turns, -currents[5], le, ae, mu_i, js, r_gap)
    assert neg.inductance_H == pytest.approx(point.inductance_H[5], rel=1e-14)
    assert neg.flux_density_T == pytest.approx(-point.flux_density_T[5], rel=1e-14)


# --------------------------------------------------------------------------- saturation


def test_bsat_at_temperature_scalar_passes_through_data_points():
    # Straight line through the two data points: common practice, no source.
    assert saturation.bsat_at_temperature(25.0, 0.49, 0.39) == pytest.approx(0.49, rel=1e-14)
    assert saturation.bsat_at_temperature(100.0, 0.49, 0.39) == pytest.approx(0.39, rel=1e-14)


def test_bsat_at_temperature_array_linear_and_floored():
    temperature = np.array([-40.0, 62.5, 140.0])
    bsat = saturation.bsat_at_temperature(temperature, 0.49, 0.39)
    np.testing.assert_allclose(bsat, 0.49 - 0.1 * (temperature - 25.0) / 75.0, rtol=1e-14)
    # A steep made-up slope crosses zero before 150 degC: the floor holds it at 0.
    assert saturation.bsat_at_temperature(140.0, 0.5, 0.1) == 0.0


def test_bsat_at_temperature_warns_beyond_150C():
    with pytest.warns(ValidityRangeWarning):
        saturation.bsat_at_temperature(np.array([100.0, 160.0]), 0.49, 0.39)


@pytest.mark.parametrize("name", ["ideal", "mclyman", "muhlethaler"])
def test_gap_reluctance_dispatch_equals_named_functions(name):
    """Two routes to one number: the registry dispatch and the named model function."""
    gap = np.array([0.05e-3, 0.3e-3, 1.0e-3])
    ae, breadth, w, d = 1e-4, 20e-3, 10e-3, 10e-3
    named = {
        "ideal": lambda: fringing.gap_reluctance_ideal(gap, ae),
        "mclyman": lambda: fringing.gap_reluctance_mclyman(gap, ae, breadth),
        "muhlethaler": lambda: fringing.gap_reluctance_muhlethaler(gap, w, d, breadth),
    }[name]()
    np.testing.assert_allclose(
        fringing.gap_reluctance(gap, ae, breadth, w, d, model=name), named, rtol=1e-12
    )
