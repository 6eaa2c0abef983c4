"""Tests of optimag.physics.thermal against handbook laws and independent solutions.

Reference values and tolerances: tests/data/check_values.md, section "Thermal".
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from optimag.errors import ValidityRangeWarning
from optimag.physics import heat_balance
from optimag.physics import thermal as th

SIGMA = 5.670374419e-8  # Stefan-Boltzmann constant, CODATA 2018


# --------------------------------------------------------------------------- laws


def test_mclyman_check_values():
    # McLyman: dT = 450 psi^0.826, psi in W/cm^2; 0.03 -> 24.849, 0.1 -> 67.176 (rel 1e-4).
    # On 1 cm^2 the loss in W equals psi.
    assert th.temperature_rise_mclyman(0.03, 1e-4) == pytest.approx(24.849, rel=1e-4)
    rises = th.temperature_rise_mclyman(np.array([0.3, 1.0]), 10e-4)
    np.testing.assert_allclose(rises, [24.849, 67.176], rtol=1e-4)


def test_mclyman_warns_beyond_fitted_curve():
    with pytest.warns(ValidityRangeWarning):
        th.temperature_rise_mclyman(0.5, 1e-4)


def test_ferrite_thermal_resistance_maniktala():
    # Maniktala, Switching Power Supplies A-Z, 2012: R_th = 53 Ve^-0.54, 10 cm^3 -> 15.285
    # K/W (rel 1e-4).
    assert th.thermal_resistance_ferrite_core(10e-6) == pytest.approx(15.285, rel=1e-4)
    values = th.thermal_resistance_ferrite_core(np.array([1e-6, 10e-6]))
    np.testing.assert_allclose(values, [53.0, 15.285], rtol=1e-4)


def test_ferrite_thermal_resistance_warns_outside_core_range():
    with pytest.warns(ValidityRangeWarning):
        th.thermal_resistance_ferrite_core(1e-3)


def test_natural_convection_holman_check_value():
    # Holman simplified air relation, laminar vertical plate (from memory):
    # L = 0.05 m, dT = 50 K -> 7.985 W/m^2K (rel 1e-4).
    assert th.natural_convection_coefficient(50.0, 0.05) == pytest.approx(7.985, rel=1e-4)
    values = th.natural_convection_coefficient(np.array([50.0, 50.0 * 16]), 0.05)
    np.testing.assert_allclose(values, [7.985, 2 * 7.985], rtol=1e-4)


def _churchill_chu_laminar(delta_T: float, height: float, ambient_C: float = 25.0) -> float:
    """Churchill-Chu laminar vertical-plate correlation, Ra < 1e9 (from memory):
    Nu = 0.68 + 0.670 Ra^(1/4) / [1 + (0.492/Pr)^(9/16)]^(4/9),
    air properties at the film temperature, interpolated linearly between the 300 K and
    350 K rows of the usual air table (k, nu, Pr; from memory).
    """
    film_K = ambient_C + 273.15 + delta_T / 2.0
    share = (film_K - 300.0) / 50.0
    conductivity = 0.0263 + share * (0.0300 - 0.0263)
    viscosity = 15.89e-6 + share * (20.92e-6 - 15.89e-6)
    prandtl = 0.707 + share * (0.700 - 0.707)
    rayleigh = 9.81 / film_K * delta_T * height**3 * prandtl / viscosity**2
    nusselt = 0.68 + 0.670 * rayleigh**0.25 / (1.0 + (0.492 / prandtl) ** (9 / 16)) ** (4 / 9)
    return nusselt * conductivity / height


@pytest.mark.parametrize(("delta_T", "height"), [(50.0, 0.05), (30.0, 0.02), (80.0, 0.1)])
def test_natural_convection_against_churchill_chu(delta_T, height):
    # Churchill & Chu, Int. J. Heat Mass Transfer 18, 1975 (from memory): within 10 %.
    expected = _churchill_chu_laminar(delta_T, height)
    assert th.natural_convection_coefficient(delta_T, height) == pytest.approx(expected, rel=0.10)


def test_natural_convection_warns_outside_laminar_range():
    with pytest.warns(ValidityRangeWarning):
        th.natural_convection_coefficient(1.0, 0.002)


def test_radiation_check_value_and_unfactored_form():
    # Stefan-Boltzmann: eps = 0.9, 25 -> 75 degC gives 6.930 W/m^2K (rel 1e-4).
    assert th.radiation_coefficient(75.0, 25.0, 0.9) == pytest.approx(6.930, rel=1e-4)
    surface = np.array([30.0, 75.0, 150.0])
    ts, ta = surface + 273.15, 25.0 + 273.15
    unfactored = 0.9 * SIGMA * (ts**4 - ta**4) / (ts - ta)
    np.testing.assert_allclose(th.radiation_coefficient(surface, 25.0, 0.9), unfactored, rtol=1e-9)


def test_radiation_at_equal_temperatures_is_the_derivative():
    # Limit of the difference quotient: 4 eps sigma T^3 (Stefan-Boltzmann).
    t = 40.0 + 273.15
    assert th.radiation_coefficient(40.0, 40.0, 0.8) == pytest.approx(4 * 0.8 * SIGMA * t**3)


def test_radiation_warns_on_impossible_emissivity():
    with pytest.warns(ValidityRangeWarning):
        th.radiation_coefficient(75.0, 25.0, 1.2)


# --------------------------------------------------------------------------- models


def test_registry_holds_the_models():
    assert set(th.CONDUCTANCE_MODELS) == {
        "faces", "faces_laminar", "convection", "mclyman", "ferrite_rth"
    }


def test_conductance_models_scalar_and_array():
    part = th.ThermalContext(25.0, 20e-4, 0.03, 0.9, 5e-6)
    rises = np.array([20.0, 50.0])
    # Convection + radiation: (h_c + h_r) S from the two laws above.
    expected = (
        th.natural_convection_coefficient(rises, 0.03)
        + th.radiation_coefficient(25.0 + rises, 25.0, 0.9)
    ) * 20e-4
    np.testing.assert_allclose(th.conductance_convection(rises, part), expected, rtol=1e-12)
    # McLyman: G dT is the loss that McLyman's law maps back to dT.
    loss = th.conductance_mclyman(50.0, part) * 50.0
    assert th.temperature_rise_mclyman(loss, 20e-4) == pytest.approx(50.0, rel=1e-12)
    np.testing.assert_allclose(
        th.temperature_rise_mclyman(th.conductance_mclyman(rises, part) * rises, 20e-4),
        rises,
        rtol=1e-12,
    )
    # Ferrite: constant 1/R_th whatever the rise.
    np.testing.assert_allclose(
        th.conductance_ferrite_rth(rises, part),
        1.0 / th.thermal_resistance_ferrite_core(5e-6),
        rtol=1e-12,
    )
    assert th.conductance_ferrite_rth(10.0, part) == pytest.approx(
        1.0 / th.thermal_resistance_ferrite_core(5e-6)
    )


# --------------------------------------------------------------------------- fixed point

AMBIENT = 40.0
SURFACE = np.array([15e-4, 30e-4, 60e-4])
HEIGHT = np.array([0.02, 0.03, 0.04])
VE = np.array([3e-6, 10e-6, 30e-6])
# Copper part rising 0.393 %/K from 20 degC plus a core part with a shallow minimum:
# typical of a ferrite inductor (made-up but realistic figures).
A0 = np.array([0.8, 1.5, 3.0])
A1 = np.array([0.002, 0.004, 0.006])
A2 = np.array([2e-5, 3e-5, 4e-5])


def _conductance(model: str, rise, surface=SURFACE, height=HEIGHT, ve=VE, ambient=AMBIENT):
    part = th.ThermalContext(ambient, surface, height, 0.9, ve)
    return th.CONDUCTANCE_MODELS[model][0](rise, part)


@pytest.mark.parametrize("model", ["convection", "mclyman", "ferrite_rth"])
def test_fixed_point_satisfies_heat_balance(model):
    # The steady state must satisfy P(T) = G(T) (T - T_a) (rel 1e-3), G from the laws.
    result = heat_balance.loss_temperature_fixed_point(
        AMBIENT, (A0, A1, A2), SURFACE, HEIGHT, model=model, ve_m3=VE
    )
    assert not np.any(result.runaway)
    t = result.temperature_C
    loss = A0 + A1 * t + A2 * t**2
    np.testing.assert_allclose(result.loss_W, loss, rtol=1e-12)
    np.testing.assert_allclose(loss, _conductance(model, t - AMBIENT) * (t - AMBIENT), rtol=1e-3)


def test_fixed_point_scalar_input_gives_scalar():
    result = heat_balance.loss_temperature_fixed_point(25.0, (1.0, 0.004, 2e-5), 30e-4, 0.03)
    assert np.ndim(result.temperature_C) == 0 and not result.runaway
    t = float(result.temperature_C)
    loss = 1.0 + 0.004 * t + 2e-5 * t**2
    assert loss == pytest.approx(
        float(_conductance("convection", t - 25.0, 30e-4, 0.03, ambient=25.0)) * (t - 25.0),
        rel=1e-3,
    )


def test_constant_loss_matches_direct_formulas():
    # Losses giving rises of about 40 K, inside every model's range.
    loss = np.array([1.0, 2.0, 4.0])
    # Ferrite R_th: dT = P R_th exactly.
    rise = heat_balance.temperature_rise(loss, SURFACE, HEIGHT, "ferrite_rth", ambient_C=AMBIENT,
                                         ve_m3=VE)
    np.testing.assert_allclose(rise, loss * th.thermal_resistance_ferrite_core(VE), rtol=1e-9)
    # McLyman: the direct law.
    rise = heat_balance.temperature_rise(loss, SURFACE, HEIGHT, "mclyman", ambient_C=AMBIENT)
    np.testing.assert_allclose(rise, th.temperature_rise_mclyman(loss, SURFACE), rtol=1e-6)
    # Convection + radiation: P = (h_c + h_r) S dT solved independently by scipy brentq.
    rise = heat_balance.temperature_rise(loss, SURFACE, HEIGHT, ambient_C=AMBIENT)
    for i in range(loss.size):

        def surplus(dt, i=i):
            h = th.natural_convection_coefficient(dt, HEIGHT[i]) + th.radiation_coefficient(
                AMBIENT + dt, AMBIENT, 0.9
            )
            return h * SURFACE[i] * dt - loss[i]

        assert rise[i] == pytest.approx(brentq(surplus, 25.0, 500.0, xtol=1e-12), rel=1e-6)
    rise_alone = heat_balance.temperature_rise(2.0, 30e-4, 0.03, ambient_C=AMBIENT)
    assert rise_alone == pytest.approx(rise[1])


def test_newton_steps_and_bracketing_search_agree():
    # Two routes to the same equilibrium: tolerance 0 forces the scan-and-bisect search.
    fast = heat_balance.loss_temperature_fixed_point(AMBIENT, (A0, A1, A2), SURFACE, HEIGHT)
    slow = heat_balance.loss_temperature_fixed_point(
        AMBIENT, (A0, A1, A2), SURFACE, HEIGHT, max_iterations=1, tolerance=0.0
    )
    np.testing.assert_allclose(fast.temperature_C, slow.temperature_C, rtol=1e-9)


def test_runaway_is_flagged_not_nan():
    # Ferrite R_th: loss slope 0.2 W/K above 1/R_th (~0.045 W/K) has no equilibrium.
    result = heat_balance.loss_temperature_fixed_point(
        25.0,
        (np.array([1.0, 1.0]), np.array([0.2, 0.0]), 0.0),
        10e-4,
        0.02,
        model="ferrite_rth",
        ve_m3=5e-6,
    )
    np.testing.assert_array_equal(result.runaway, [True, False])
    assert result.temperature_C[0] == th.RUNAWAY_TEMPERATURE_C
    assert np.all(np.isfinite(result.temperature_C)) and np.all(np.isfinite(result.loss_W))
    # Convection: a loss growing with T^2 far faster than the surface can shed it.
    steep = heat_balance.loss_temperature_fixed_point(25.0, (1.0, 0.0, 0.01), 10e-4, 0.02)
    assert steep.runaway and np.isfinite(steep.temperature_C) and np.isfinite(steep.loss_W)


def test_fixed_point_rejects_unknown_model_and_missing_volume():
    with pytest.raises(ValueError, match="unknown thermal model"):
        heat_balance.loss_temperature_fixed_point(25.0, (1.0, 0.0, 0.0), 1e-3, 0.02,
                                                  model="forced_air")
    with pytest.raises(ValueError, match="ve_m3"):
        heat_balance.loss_temperature_fixed_point(25.0, (1.0, 0.0, 0.0), 1e-3, 0.02,
                                                  model="ferrite_rth")


def test_fixed_point_warns_when_final_state_is_out_of_range():
    with pytest.warns(ValidityRangeWarning):
        heat_balance.loss_temperature_fixed_point(25.0, (5.0, 0.0, 0.0), 10e-4, 0.02,
                                                  model="mclyman")


def test_temperature_rise_zero_loss_is_zero():
    # No loss, no rise; the convection law is then outside its range (Ra = 0) and says so.
    with pytest.warns(ValidityRangeWarning):
        assert heat_balance.temperature_rise(0.0, 10e-4, 0.02) == pytest.approx(0.0, abs=1e-12)
    assert heat_balance.temperature_rise(0.0, 10e-4, 0.02, "ferrite_rth", ve_m3=5e-6) == 0.0
    assert math.isfinite(heat_balance.temperature_rise(0.0, 10e-4, 0.02, "mclyman"))
