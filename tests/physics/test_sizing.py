"""Tests of optimag.physics.sizing against McLyman and Erickson & Maksimović."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from optimag.constants import COPPER_RESISTIVITY_20C
from optimag.physics import sizing as sz

CM4 = 1e-8  # m^4 per cm^4
CM5 = 1e-10  # m^5 per cm^5


def test_area_product_required_check_value():
    # McLyman, Transformer and Inductor Design Handbook (equation from memory);
    # check_values.md: L = 100 uH, I = 10 A, Bm = 0.3 T, J = 400 A/cm^2, Ku = 0.4
    # -> 2.08333 cm^4 (rel 1e-5 at the printed digits).
    ap = sz.area_product_required(100e-6, 10.0, 10.0, 0.3, 400e4, 0.4)
    assert ap / CM4 == pytest.approx(2.08333, rel=1e-5)


def test_area_product_required_array_energy_form():
    # McLyman's energy form Ap = 2 W / (Bm J Ku) with W = L I^2 / 2 when Irms = Ipk.
    current = np.array([1.0, 5.0, 20.0])
    energy = 0.5 * 47e-6 * current**2
    np.testing.assert_allclose(
        sz.area_product_required(47e-6, current, current, 0.25, 3e6, 0.35),
        2 * energy / (0.25 * 3e6 * 0.35),
        rtol=1e-14,
    )


def test_area_product_scalar_and_array():
    assert sz.area_product(1e-4, 2e-4) == pytest.approx(2e-8, rel=1e-14)
    np.testing.assert_allclose(
        sz.area_product(np.array([1e-4, 2e-4]), 3e-4), [3e-8, 6e-8], rtol=1e-14
    )


def test_geometry_coefficient_required_check_value():
    # Erickson & Maksimović, Fundamentals of Power Electronics, inductor-design chapter;
    # check_values.md: rho = 1.724e-6 Ohm cm, L = 100 uH, I = 10 A, B = 0.3 T,
    # R = 10 mOhm, Ku = 0.5 -> 0.383111 cm^5 (rel 1e-6).
    kg = sz.geometry_coefficient_required(100e-6, 10.0, 10e-3, 0.3, 0.5, resistivity_ohm_m=1.724e-8)
    assert kg / CM5 == pytest.approx(0.383111, rel=1e-6)


def test_geometry_coefficient_required_array_default_copper():
    resistance = np.array([5e-3, 10e-3, 40e-3])
    kg = sz.geometry_coefficient_required(100e-6, 10.0, resistance, 0.3, 0.5)
    # Inverse in R; default resistivity is the IEC 60028 annealed-copper value.
    np.testing.assert_allclose(kg * resistance, kg[0] * resistance[0], rtol=1e-14)
    assert kg[1] / CM5 == pytest.approx(0.383111 * COPPER_RESISTIVITY_20C / 1.724e-8, rel=1e-6)


def test_geometry_coefficient_scalar_and_array():
    # Kg = Ac^2 Wa / MLT written out: 1 cm^2, 2 cm^2, 5 cm -> 0.4 cm^5.
    assert sz.geometry_coefficient(1e-4, 2e-4, 0.05) / CM5 == pytest.approx(0.4, rel=1e-14)
    kg = sz.geometry_coefficient(np.array([1e-4, 2e-4]), 2e-4, 0.05)
    np.testing.assert_allclose(kg / kg[0], [1.0, 4.0], rtol=1e-14)


def _wound_core(ae, window, mlt, inductance, current, b_max, fill):
    """Wind a core by hand: the turns that give b_max at current, copper filling Ku Wa."""
    turns = inductance * current / (b_max * ae)
    copper_section = fill * window / turns
    resistance = COPPER_RESISTIVITY_20C * turns * mlt / copper_section
    current_density = current / copper_section
    return resistance, current_density


@pytest.mark.parametrize(
    ("ae", "window", "mlt"), [(1e-4, 2e-4, 0.05), (3.5e-5, 6e-5, 0.032), (4e-4, 9e-4, 0.11)]
)
def test_area_product_and_geometry_coefficient_agree_on_a_wound_core(ae, window, mlt):
    # McLyman's Ap and Erickson & Maksimović's Kg both come from the same winding:
    # N = L I / (B Ac), copper section Ku Wa / N, R = rho N MLT / section, J = I / section.
    # The core then meets both requirements with equality, and Kg = Ap Ac / MLT.
    inductance, current, b_max, fill = 220e-6, 6.0, 0.28, 0.45
    resistance, density = _wound_core(ae, window, mlt, inductance, current, b_max, fill)
    ap_required = sz.area_product_required(inductance, current, current, b_max, density, fill)
    kg_required = sz.geometry_coefficient_required(inductance, current, resistance, b_max, fill)
    assert ap_required == pytest.approx(sz.area_product(ae, window), rel=1e-12)
    assert kg_required == pytest.approx(sz.geometry_coefficient(ae, window, mlt), rel=1e-12)
    assert kg_required == pytest.approx(ap_required * ae / mlt, rel=1e-12)


@settings(max_examples=100, deadline=None)
@given(
    inductance=st.floats(1e-8, 1.0),
    current=st.floats(1e-3, 1e3),
    rms_share=st.floats(0.01, 1.0),
    b_max=st.floats(0.01, 2.0),
    density=st.floats(1e5, 2e7),
    fill=st.floats(0.05, 0.9),
    resistance=st.floats(1e-5, 1e2),
    ae=st.floats(1e-7, 1e-2),
    window=st.floats(1e-7, 1e-2),
    mlt=st.floats(1e-3, 1.0),
)
def test_property_sizing_finite_positive(
    inductance, current, rms_share, b_max, density, fill, resistance, ae, window, mlt
):
    values = [
        sz.area_product_required(inductance, current, rms_share * current, b_max, density, fill),
        sz.area_product(ae, window),
        sz.geometry_coefficient_required(inductance, current, resistance, b_max, fill),
        sz.geometry_coefficient(ae, window, mlt),
    ]
    for value in values:
        assert np.isfinite(value)
        assert value > 0.0
