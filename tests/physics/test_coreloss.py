"""Tests of optimag.physics.coreloss against the iGSE paper, quadrature and identities."""

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from optimag.errors import ValidityRangeWarning
from optimag.physics import coreloss as cl

# Steinmetz set used by check_values.md.
K, ALPHA, BETA = 1.5, 1.4, 2.5
F = 100e3


def test_cos_power_integral_matches_quadrature():
    # Independent numerical solution: quad of |cos t|^alpha over one period;
    # check_values.md: alpha = 1.4 -> 3.5820875 (rel 1e-6).
    alphas = np.array([1.0, 1.4, 2.0, 2.7])
    closed = cl._cos_power_integral(alphas)
    for alpha, value in zip(alphas, closed, strict=True):
        numeric, _ = quad(
            lambda t, a=alpha: abs(math.cos(t)) ** a,
            0.0,
            2 * math.pi,
            points=[math.pi / 2, 3 * math.pi / 2],
        )
        assert value == pytest.approx(numeric, rel=1e-10)
    assert closed[1] == pytest.approx(3.5820875, rel=1e-6)
    assert closed[0] == pytest.approx(4.0, rel=1e-14)  # int |cos| over a period = 4


def test_igse_coefficient_scalar_check_value():
    # Venkatachalam, Sullivan, Abdallah, Tacca, COMPEL 2002; check_values.md k_i = 0.0936591.
    assert cl.igse_coefficient(K, ALPHA, BETA) == pytest.approx(0.0936591, rel=1e-6)


def test_igse_coefficient_array_is_linear_in_k():
    k = np.array([1.0, 2.0, 10.0])
    np.testing.assert_allclose(
        cl.igse_coefficient(k, ALPHA, BETA), k * cl.igse_coefficient(1.0, ALPHA, BETA), rtol=1e-14
    )


def test_steinmetz_scalar_check_value():
    # check_values.md: f = 100 kHz, B = 0.1 T -> 47434.165 W/m^3 (rel 1e-6).
    assert cl.steinmetz_loss_density(F, 0.1, K, ALPHA, BETA) == pytest.approx(47434.165, rel=1e-6)


def test_steinmetz_array_power_laws():
    b = np.array([0.05, 0.1, 0.2])
    loss = cl.steinmetz_loss_density(F, b, K, ALPHA, BETA)
    np.testing.assert_allclose(loss / loss[1], (b / 0.1) ** BETA, rtol=1e-13)
    loss_f = cl.steinmetz_loss_density(np.array([F, 2 * F]), 0.1, K, ALPHA, BETA)
    assert loss_f[1] / loss_f[0] == pytest.approx(2**ALPHA, rel=1e-13)


def test_igse_of_sampled_sine_equals_steinmetz():
    # iGSE identity (paper): for a sine the iGSE reproduces Steinmetz (rel 1e-4).
    period = 1 / F
    time = np.linspace(0.0, period, 4001)
    flux = 0.1 * np.sin(2 * np.pi * F * time)
    loss = cl.igse_loss_density_piecewise(flux, time, K, ALPHA, BETA)
    assert loss == pytest.approx(47434.165, rel=1e-4)


@pytest.mark.parametrize(("rise", "expected"), [(0.5, 44214.743), (0.2, 50212.770)])
def test_igse_triangle_check_values(rise, expected):
    # check_values.md, iGSE triangle with dB = 0.2 T at 100 kHz (rel 1e-6).
    assert cl.igse_loss_density_triangle(F, 0.2, rise, K, ALPHA, BETA) == pytest.approx(
        expected, rel=1e-6
    )


def test_igse_triangle_array_agrees_with_piecewise():
    # Two routes to the same number: closed form vs the general piecewise sum, including
    # discontinuous conduction (flat tail) and a period that starts mid-ramp.
    rise = np.array([0.5, 0.2, 0.3, 0.1])
    fall = np.array([0.5, 0.8, 0.4, 0.2])
    swing = np.array([0.2, 0.05, 0.3, 0.1])
    period = 1 / F
    closed = cl.igse_loss_density_triangle(F, swing, rise, K, ALPHA, BETA, fall_fraction=fall)
    bottom = -0.3 * swing
    times = np.stack(
        [0 * rise, rise * period, (rise + fall) * period, np.full_like(rise, period)], axis=-1
    )
    flux = np.stack([bottom, bottom + swing, bottom, bottom], axis=-1)
    np.testing.assert_allclose(
        cl.igse_loss_density_piecewise(flux, times, K, ALPHA, BETA), closed, rtol=1e-12
    )
    # Same waveform with the period starting half-way up the ramp.
    t_half = 0.5 * rise[0] * period
    shifted_times = np.array([0.0, t_half, t_half + fall[0] * period, period - t_half, period])
    shifted_flux = np.array([0.0, 0.1, -0.1, -0.1, 0.0])
    assert cl.igse_loss_density_piecewise(
        shifted_flux, shifted_times, K, ALPHA, BETA
    ) == pytest.approx(closed[0], rel=1e-12)


def test_igse_piecewise_scalar_waveform_matches_time_integral():
    # Definition of the iGSE as a time integral, evaluated by quad on a trapezoid.
    times = np.array([0.0, 2e-6, 4e-6, 7e-6, 1e-5])
    flux = np.array([0.0, 0.08, 0.08, -0.04, 0.0])
    k_i = cl.igse_coefficient(K, ALPHA, BETA)
    swing = 0.12

    slopes = np.diff(flux) / np.diff(times)

    def integrand(t):
        segment = min(np.searchsorted(times, t, side="right") - 1, len(slopes) - 1)
        return k_i * abs(slopes[segment]) ** ALPHA * swing ** (BETA - ALPHA)

    total = sum(quad(integrand, t0, t1)[0] for t0, t1 in itertools.pairwise(times))
    assert cl.igse_loss_density_piecewise(flux, times, K, ALPHA, BETA) == pytest.approx(
        total / 1e-5, rel=1e-6
    )


def test_igse_zero_swing_and_zero_length_segments_give_zero_not_nan():
    # No flux change: no loss, even with empty segments and beta < alpha.
    flux = np.zeros(4)
    times = np.array([0.0, 0.0, 5e-6, 1e-5])
    assert cl.igse_loss_density_piecewise(flux, times, 1.0, 2.0, 1.5) == 0.0
    no_swing = np.array([0.0, 0.0])
    triangle = cl.igse_loss_density_triangle(F, no_swing, np.array([0.0, 1.0]), K, 2.0, 1.5)
    np.testing.assert_array_equal(triangle, [0.0, 0.0])
    # A zero-length flat segment next to moving ones contributes nothing.
    times = np.array([0.0, 4e-6, 4e-6, 1e-5])
    flux = np.array([0.0, 0.2, 0.2, 0.0])
    assert cl.igse_loss_density_piecewise(flux, times, K, ALPHA, BETA) == pytest.approx(
        cl.igse_loss_density_triangle(F, 0.2, 0.4, K, ALPHA, BETA), rel=1e-12
    )


def test_igse_flux_step_in_zero_time_warns():
    with pytest.warns(ValidityRangeWarning):
        loss = cl.igse_loss_density_triangle(F, 0.1, 1.0, K, ALPHA, BETA)
    assert np.isinf(loss)
    with pytest.warns(ValidityRangeWarning):
        cl.igse_loss_density_piecewise(
            np.array([0.0, 0.1, 0.0]), np.array([0.0, 1e-5, 1e-5]), K, ALPHA, BETA
        )


def test_temperature_factor_scalar_and_array():
    # Common practice parabolic form, no source; coefficients invented with minimum
    # 1 at 100 degC: ct0 - ct1 T + ct2 T^2 with ct1 = 2 ct2 * 100, ct0 = 1 + ct2 * 1e4.
    ct2 = 1e-4
    ct1, ct0 = 2 * ct2 * 100.0, 1.0 + ct2 * 1e4
    assert cl.core_loss_temperature_factor(100.0, ct0, ct1, ct2) == pytest.approx(1.0, rel=1e-14)
    temps = np.array([25.0, 60.0, 120.0])
    np.testing.assert_allclose(
        cl.core_loss_temperature_factor(temps, ct0, ct1, ct2),
        1.0 + ct2 * (temps - 100.0) ** 2,
        rtol=1e-13,
    )


def test_temperature_factor_floor_warns():
    with pytest.warns(ValidityRangeWarning):
        factor = cl.core_loss_temperature_factor(np.array([20.0, 200.0]), 1.0, 0.01, 0.0)
    assert factor[1] == pytest.approx(1e-3)
    assert factor[0] == pytest.approx(0.8, rel=1e-14)


def test_steinmetz_validity_check_inside_scalar_and_array():
    assert cl.steinmetz_validity_check(F, 0.1, 20e3, 500e3, 0.3)
    inside = cl.steinmetz_validity_check(np.array([25e3, 400e3]), -0.2, 20e3, 500e3, 0.3)
    np.testing.assert_array_equal(inside, [True, True])


def test_steinmetz_validity_check_warns_outside():
    with pytest.warns(ValidityRangeWarning):
        inside = cl.steinmetz_validity_check(
            np.array([10e3, 100e3, 100e3, 1e6]), np.array([0.1, 0.1, 0.4, 0.1]), 20e3, 500e3, 0.3
        )
    np.testing.assert_array_equal(inside, [False, True, False, False])


# --------------------------------------------------------------------------- properties

finite = {"allow_nan": False, "allow_infinity": False}
exponents_alpha = st.floats(1.0, 3.0, **finite)
exponents_beta = st.floats(1.5, 3.5, **finite)
coefficients = st.floats(1e-3, 1e3, **finite)
frequencies = st.floats(1.0, 1e7, **finite)
swings = st.floats(0.0, 2.0, **finite)
fractions = st.floats(1e-6, 1.0, **finite)
temperatures = st.floats(-40.0, 150.0, **finite)


@settings(max_examples=100, deadline=None)
@given(
    frequency=frequencies,
    swing=swings,
    rise=fractions,
    fall_share=st.floats(1e-6, 1.0, **finite),
    k=coefficients,
    alpha=exponents_alpha,
    beta=exponents_beta,
    temperature=temperatures,
)
def test_property_losses_finite_nonnegative(
    frequency, swing, rise, fall_share, k, alpha, beta, temperature
):
    fall = max(fall_share * (1.0 - rise), 1e-6)
    values = [
        cl.steinmetz_loss_density(frequency, swing / 2, k, alpha, beta),
        cl.igse_coefficient(k, alpha, beta),
        cl.igse_loss_density_triangle(frequency, swing, rise, k, alpha, beta, fall_fraction=fall),
        cl.core_loss_temperature_factor(temperature, 1.5, 0.01, 5e-5),
    ]
    for value in values:
        assert np.isfinite(value)
        assert value >= 0.0


@settings(max_examples=100, deadline=None)
@given(
    flux=st.lists(st.floats(-1.0, 1.0, **finite), min_size=2, max_size=12),
    steps=st.lists(st.floats(1e-9, 1e-3, **finite), min_size=12, max_size=12),
    shift=st.integers(0, 11),
    alpha=exponents_alpha,
    beta=exponents_beta,
)
def test_property_piecewise_finite_and_invariant_to_period_start(flux, steps, shift, alpha, beta):
    vertices = np.array([*flux, flux[0]])
    times = np.concatenate([[0.0], np.cumsum(steps[: len(flux)])])
    loss = cl.igse_loss_density_piecewise(vertices, times, K, alpha, beta)
    assert np.isfinite(loss)
    assert loss >= 0.0
    # The loss of a periodic waveform cannot depend on where the period starts.
    start = shift % len(flux)
    rolled_flux = np.roll(vertices[:-1], -start)
    rolled_steps = np.roll(np.diff(times), -start)
    rolled = cl.igse_loss_density_piecewise(
        np.append(rolled_flux, rolled_flux[0]),
        np.concatenate([[0.0], np.cumsum(rolled_steps)]),
        K,
        alpha,
        beta,
    )
    assert rolled == pytest.approx(loss, rel=1e-9, abs=1e-300)


def test_steinmetz_fit_excess_is_the_relative_distance_outside_the_fit():
    """The fit's range (f_min..f_max, |B| <= B_max) stated once: inside <= 0, outside > 0
    by the nearest violated bound's relative distance (a power law is a local fit only,
    Steinmetz 1892)."""
    f_min, f_max, b_max = 25e3, 150e3, 0.3
    excess = cl.steinmetz_fit_excess(
        np.array([100e3, 25e3, 150e3, 300e3, 12.5e3, 100e3, 100e3]),
        np.array([0.1, 0.3, -0.3, 0.1, 0.1, 0.45, -0.6]), f_min, f_max, b_max,
    )
    np.testing.assert_allclose(
        excess, [max(0.25 - 1, 100 / 150 - 1, 0.1 / 0.3 - 1), 0.0, 0.0, 1.0, 1.0, 0.5, 1.0]
    )
    with pytest.warns(ValidityRangeWarning):
        inside = cl.steinmetz_validity_check(100e3, [0.1, 0.31], f_min, f_max, b_max)
    assert inside.tolist() == [True, False]


# --- i²GSE relaxation term (Mühlethaler, Biela, Kolar, Ecklebe, IEEE TPEL 27(2) 2012,
# "Improved core-loss calculation...", relaxation energy per still interval, from memory) --

RELAX = {"k_r": 2.0e-3, "alpha_r": 1.2, "beta_r": 2.1, "tau_s": 4e-6, "q_r": 0.8}


def test_relaxation_term_follows_the_papers_relation():
    f, swing, d1, d2 = 100e3, 0.2, 0.2, 0.3
    period = 1 / f
    idle = 1 - d1 - d2
    before, after = swing / (d2 * period), swing / (d1 * period)
    expected = (f * RELAX["k_r"] * before ** RELAX["alpha_r"] * swing ** RELAX["beta_r"]
                * (1 - math.exp(-idle * period / RELAX["tau_s"]))
                * math.exp(-RELAX["q_r"] * after / before))
    got = cl.relaxation_loss_density(f, swing, d1, d2, **RELAX)
    assert got == pytest.approx(expected, rel=1e-12)


def test_relaxation_term_limits_and_scaling():
    f, d1, d2 = 100e3, 0.2, 0.3
    # No still interval (CCM) or no swing: no relaxation.
    assert cl.relaxation_loss_density(f, 0.2, 0.4, 0.6, **RELAX) == 0.0
    assert cl.relaxation_loss_density(f, 0.0, d1, d2, **RELAX) == 0.0
    # The interval length enters only through 1 - exp(-t1/tau): at t1 = tau, 1 - 1/e of
    # the fully relaxed value.
    idle = 1 - d1 - d2
    tau_equal = dict(RELAX, tau_s=idle / f)
    full = dict(RELAX, tau_s=1e-15)
    ratio = (cl.relaxation_loss_density(f, 0.2, d1, d2, **tau_equal)
             / cl.relaxation_loss_density(f, 0.2, d1, d2, **full))
    assert ratio == pytest.approx(1 - math.exp(-1), rel=1e-12)
    # Doubling the swing at fixed intervals scales by 2^(alpha_r + beta_r).
    double = (cl.relaxation_loss_density(f, 0.4, d1, d2, **RELAX)
              / cl.relaxation_loss_density(f, 0.2, d1, d2, **RELAX))
    assert double == pytest.approx(2 ** (RELAX["alpha_r"] + RELAX["beta_r"]), rel=1e-12)
    # Broadcasts over designs and points.
    out = cl.relaxation_loss_density(f, np.full((4, 3), 0.2), d1, d2, **RELAX)
    assert out.shape == (4, 3)


# --- DC-bias factor from a premagnetisation table (Mühlethaler et al., IEEE TPEL 27(2)
# 2012, "Core losses under the DC bias condition...", from memory) ---------------------


def test_dc_bias_factor_interpolates_the_table():
    table_h = np.array([[50.0, 100.0, 200.0]])
    table_f = np.array([[1.2, 1.8, 3.0]])
    h = np.array([[0.0, 25.0, 50.0, 150.0, 200.0, 400.0]])
    factor, beyond = cl.dc_bias_factor(h, table_h, table_f)
    np.testing.assert_allclose(factor, [[1.0, 1.1, 1.2, 2.4, 3.0, 3.0]])
    assert beyond.tolist() == [[False, False, False, False, False, True]]
    # Per-material tables broadcast against (n, K) fields.
    factor2, _ = cl.dc_bias_factor(np.array([[25.0], [25.0]]),
                                   np.array([[50.0, 100, 200], [25.0, 100, 200]]),
                                   np.array([[1.2, 1.8, 3.0], [2.0, 2.5, 3.0]]))
    np.testing.assert_allclose(factor2, [[1.1], [2.0]])
