"""Converter inductor-current waveforms and their harmonics.

Sources: CCM relations and the triangle spectrum from Erickson & Maksimović,
Fundamentals of Power Electronics (ch. 2, 5, 13) as listed in check_values.md;
independent routes are scipy quadrature and numpy FFT of finely sampled waves.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from optimag.study import (
    ccm_duty_ratio,
    ccm_ripple_inductance,
    converter_waveform,
    inductor_current_shape,
    inductor_voltages,
    piecewise_linear_harmonics,
    triangle_harmonics,
)

FFT_SAMPLES = 2**16


def sampled_amplitudes(times_s: np.ndarray, values: np.ndarray, harmonics: int) -> np.ndarray:
    """Harmonic amplitudes 2|X_n| of a wave sampled finely over one period (numpy FFT)."""
    period = times_s[-1] - times_s[0]
    grid = times_s[0] + period * np.arange(FFT_SAMPLES) / FFT_SAMPLES
    samples = np.interp(grid, times_s, values)
    spectrum = np.fft.rfft(samples) / FFT_SAMPLES
    return 2.0 * np.abs(spectrum[1 : harmonics + 1])


def quad_mean(times_s: np.ndarray, values: np.ndarray, power: int) -> float:
    """Period average of values**power by scipy quadrature over each segment."""
    total = 0.0
    for start, stop in itertools.pairwise(times_s):
        if stop > start:
            total += quad(lambda t: np.interp(t, times_s, values) ** power, start, stop)[0]
    return total / (times_s[-1] - times_s[0])


# --- CCM relations (Erickson & Maksimović ch. 2, check_values.md "Waveforms") ----------


def test_buck_ccm_duty_ripple_and_current_scalar() -> None:
    vi, vo, io, f, inductance = 48.0, 12.0, 5.0, 200e3, 47e-6
    shape = inductor_current_shape("buck", vi, vo, io, f, inductance)
    duty = vo / vi
    ripple = (vi - vo) * duty / (inductance * f)
    assert not shape.dcm
    assert shape.rise_fraction == pytest.approx(duty, rel=1e-12)
    assert shape.fall_fraction == pytest.approx(1 - duty, rel=1e-12)
    assert shape.ripple_pp_A == pytest.approx(ripple, rel=1e-12)
    assert shape.dc_A == pytest.approx(io, rel=1e-12)
    assert shape.peak_A == pytest.approx(io + ripple / 2, rel=1e-12)
    assert shape.valley_A == pytest.approx(io - ripple / 2, rel=1e-12)


def test_boost_ccm_relations_on_an_array() -> None:
    vi = np.array([12.0, 18.0, 24.0, 30.0])
    vo, io, f, inductance = 48.0, 2.0, 100e3, 100e-6
    shape = inductor_current_shape("boost", vi, vo, io, f, inductance)
    duty = 1 - vi / vo
    assert shape.rise_fraction.shape == (4,)
    assert not shape.dcm.any()
    np.testing.assert_allclose(shape.rise_fraction, duty, rtol=1e-12)
    np.testing.assert_allclose(shape.ripple_pp_A, vi * duty / (inductance * f), rtol=1e-12)
    np.testing.assert_allclose(shape.dc_A, io / (1 - duty), rtol=1e-12)


def test_inverting_buck_boost_ccm_relations_on_an_array() -> None:
    vi = np.array([[9.0], [12.0], [15.0]])
    vo = np.array([5.0, 12.0, 24.0])
    io, f, inductance = 3.0, 300e3, 33e-6
    shape = inductor_current_shape("buck-boost", vi, vo, io, f, inductance)
    duty = vo / (vi + vo)
    assert shape.dc_A.shape == (3, 3)
    np.testing.assert_allclose(shape.rise_fraction, duty, rtol=1e-12)
    np.testing.assert_allclose(shape.ripple_pp_A, vi * duty / (inductance * f), rtol=1e-12)
    np.testing.assert_allclose(shape.dc_A, io / (1 - duty), rtol=1e-12)


def test_ccm_duty_ratio_scalar_and_array() -> None:
    # Erickson & Maksimović ch. 2: buck Vo/Vi, boost 1 - Vi/Vo, buck-boost Vo/(Vi + Vo).
    assert float(ccm_duty_ratio("buck", 12.0, 3.3)) == pytest.approx(3.3 / 12.0, rel=1e-12)
    np.testing.assert_allclose(
        ccm_duty_ratio("boost", np.array([5.0, 10.0]), 20.0), [0.75, 0.5], rtol=1e-12
    )
    np.testing.assert_allclose(
        ccm_duty_ratio("buck-boost", 12.0, np.array([12.0, 36.0])), [0.5, 0.75], rtol=1e-12
    )


def test_inductor_voltages_scalar_and_array() -> None:
    # Inductor voltage on/off and power-balance average current, Erickson & Maksimović ch. 2.
    rise, fall, average = inductor_voltages("buck", 12.0, 5.0, 4.0)
    assert (float(rise), float(fall), float(average)) == pytest.approx((7.0, 5.0, 4.0))
    rise, fall, average = inductor_voltages("boost", np.array([10.0, 20.0]), 40.0, 1.0)
    np.testing.assert_allclose(rise, [10.0, 20.0])
    np.testing.assert_allclose(fall, [30.0, 20.0])
    np.testing.assert_allclose(average, [4.0, 2.0])


def test_ccm_ripple_inductance_gives_the_requested_ripple() -> None:
    # Two routes: L from the ripple fraction, then the ripple that L produces.
    vi = np.array([36.0, 46.0, 54.0])
    inductance = ccm_ripple_inductance("buck", vi, 12.0, 4.0, 200e3, 0.3)
    shape = inductor_current_shape("buck", vi, 12.0, 4.0, 200e3, inductance)
    np.testing.assert_allclose(shape.ripple_pp_A, 0.3 * 4.0, rtol=1e-12)
    scalar = float(ccm_ripple_inductance("boost", 18.0, 48.0, 2.0, 100e3, 0.4))
    duty = 1 - 18.0 / 48.0
    assert scalar == pytest.approx(18.0 * duty / (100e3 * 0.4 * 2.0 / (1 - duty)), rel=1e-12)


@pytest.mark.parametrize(
    ("topology", "input_V", "output_V"),
    [("buck", 12.0, 12.0), ("buck", 5.0, 12.0), ("boost", 12.0, 5.0), ("buck-boost", -1.0, 5.0)],
)
def test_voltages_outside_the_topology_range_are_rejected(
    topology: str, input_V: float, output_V: float
) -> None:
    with pytest.raises(ValueError, match=r"output_V|input_V"):
        inductor_current_shape(topology, input_V, output_V, 1.0, 100e3, 10e-6)


def test_unknown_topology_is_rejected() -> None:
    with pytest.raises(ValueError, match="unknown topology"):
        inductor_voltages("flyback", 12.0, 5.0, 1.0)


# --- RMS (check_values.md: I_rms² = I_dc² + ΔI²/12, 10.037430 A) ----------------------


def test_rms_of_dc_plus_triangle_check_value() -> None:
    # Buck 12 V -> 6 V, L f = 1 H/s gives ΔI = 3 A at I_dc = 10 A.
    waveform = converter_waveform("buck", 12.0, 6.0, 10.0, 100e3, 1e-5)
    assert waveform.ripple_pp_A == pytest.approx(3.0, rel=1e-12)
    assert waveform.rms_A == pytest.approx(10.037430, rel=1e-6)


def test_rms_matches_quadrature_for_ccm_and_dcm() -> None:
    for load_A in (10.0, 0.2):  # 0.2 A is deep in DCM for this inductance
        waveform = converter_waveform("boost", 12.0, 30.0, load_A, 100e3, 10e-6)
        expected = math.sqrt(quad_mean(waveform.times_s, waveform.currents_A, 2))
        assert waveform.rms_A == pytest.approx(expected, rel=1e-9)
    assert waveform.dcm


def test_rms_array_for_any_duty() -> None:
    # I_rms² = I_dc² + ΔI²/12 holds for any D (check_values.md, N).
    vo = np.linspace(1.0, 47.0, 7)
    shape = inductor_current_shape("buck", 48.0, vo, 10.0, 500e3, 50e-6)
    np.testing.assert_allclose(
        shape.rms_A, np.sqrt(shape.dc_A**2 + shape.ripple_pp_A**2 / 12), rtol=1e-12
    )


# --- triangle spectrum (check_values.md; c_n = ΔI |sin(π n D)| / (π² n² D (1 − D))) --


def test_triangle_harmonics_check_values() -> None:
    # Printed to 6 decimals in check_values.md, so compared to half a unit of that digit.
    symmetric = triangle_harmonics(1.0, 0.5, 4)
    assert symmetric[0] == pytest.approx(0.405285, abs=5e-7)
    assert symmetric[2] == pytest.approx(0.045032, abs=5e-7)
    assert symmetric[1] == pytest.approx(0.0, abs=1e-15)
    assert symmetric[3] == pytest.approx(0.0, abs=1e-15)
    # 4/π² and 4/(9π²): exact values of the symmetric triangle's first odd harmonics.
    assert symmetric[0] == pytest.approx(4 / math.pi**2, rel=1e-12)
    assert symmetric[2] == pytest.approx(4 / (9 * math.pi**2), rel=1e-12)
    skewed = triangle_harmonics(1.0, 0.3, 3)
    np.testing.assert_allclose(skewed, [0.390336, 0.114717, 0.016566], atol=5e-7)


def test_triangle_harmonics_vectorised_and_against_fft() -> None:
    ripple = np.array([1.0, 2.5, 0.7])
    duty = np.array([0.5, 0.3, 0.85])
    amplitudes = triangle_harmonics(ripple, duty, 25)
    assert amplitudes.shape == (3, 25)
    for row, (pp, d) in enumerate(zip(ripple, duty, strict=True)):
        times = np.array([0.0, d, 1.0])
        fft = sampled_amplitudes(times, np.array([0.0, pp, 0.0]), 25)
        np.testing.assert_allclose(amplitudes[row], fft, atol=1e-7 * pp)


def test_triangle_harmonics_sawtooth_limit() -> None:
    # D -> 0 or 1 is a sawtooth: c_n = ΔI / (π n) (standard Fourier series, from memory).
    order = np.arange(1, 11)
    for duty in (0.0, 1.0):
        np.testing.assert_allclose(
            triangle_harmonics(2.0, duty, 10), 2.0 / (np.pi * order), rtol=1e-12
        )


# --- general piecewise-linear spectrum ---------------------------------------------------


def test_piecewise_linear_equals_triangle_closed_form() -> None:
    period = 1 / 250e3
    for duty in (0.1, 0.5, 0.77):
        times = np.array([0.0, duty, 1.0]) * period
        values = np.array([3.0, 5.0, 3.0])
        np.testing.assert_allclose(
            piecewise_linear_harmonics(times, values, 60),
            triangle_harmonics(2.0, duty, 60),
            rtol=1e-9,
            atol=1e-13,
        )


def test_piecewise_linear_equals_fft_for_a_dcm_wave() -> None:
    waveform = converter_waveform("buck", 48.0, 12.0, 0.1, 200e3, 20e-6, harmonics=40)
    assert waveform.dcm
    fft = sampled_amplitudes(waveform.times_s, waveform.currents_A, 40)
    np.testing.assert_allclose(waveform.harmonics_A, fft, atol=1e-7 * waveform.peak_A)


def test_piecewise_linear_square_wave_with_steps() -> None:
    # Square wave ±1: c_n = 4/(π n) for odd n, 0 for even n (standard Fourier series,
    # from memory). Its steps are zero-length segments plus an implied step at T.
    times = np.array([0.0, 0.5, 0.5, 1.0])
    values = np.array([1.0, 1.0, -1.0, -1.0])
    order = np.arange(1, 10)
    expected = np.where(order % 2 == 1, 4 / (np.pi * order), 0.0)
    np.testing.assert_allclose(
        piecewise_linear_harmonics(times, values, 9), expected, rtol=1e-12, atol=1e-14
    )


def test_piecewise_linear_batch_rows_match_single_calls() -> None:
    rng = np.random.default_rng(7)
    times = np.sort(rng.uniform(0, 1, size=(5, 6)), axis=-1)
    times[:, 0], times[:, -1] = 0.0, 1.0
    values = rng.normal(size=(5, 6))
    # Closed waves are continuous, so the sampled FFT converges fast (aliasing ~ 1/N²);
    # steps are checked on the square wave above.
    values[:, -1] = values[:, 0]
    batch = piecewise_linear_harmonics(times, values, 30)
    assert batch.shape == (5, 30)
    for row in range(5):
        np.testing.assert_allclose(
            batch[row], piecewise_linear_harmonics(times[row], values[row], 30), rtol=1e-14
        )
        fft = sampled_amplitudes(times[row], values[row], 30)
        np.testing.assert_allclose(batch[row], fft, atol=1e-7)


def test_piecewise_linear_rejects_bad_vertices() -> None:
    with pytest.raises(ValueError, match="non-decreasing"):
        piecewise_linear_harmonics([0.0, 0.6, 0.4, 1.0], [0, 1, 2, 0], 5)
    with pytest.raises(ValueError, match="two vertices"):
        piecewise_linear_harmonics([0.0], [1.0], 5)


# --- Parseval: Σ c_n²/2 -> AC mean square -------------------------------------------------


def test_parseval_triangle_converges_to_ac_rms() -> None:
    # Tail of Σ c_n²/2 beyond H is below ΔI²/(6 π⁴ D² (1−D)² H³): 6e-8 relative for
    # D = 0.3 at H = 200, hence the stated rel 1e-7.
    duty, ripple = 0.3, 2.0
    ac_mean_square = ripple**2 / 12
    errors = [
        abs(np.sum(triangle_harmonics(ripple, duty, h) ** 2) / 2 - ac_mean_square)
        for h in (15, 50, 200)
    ]
    assert errors[0] > errors[1] > errors[2]
    assert errors[2] < 1e-7 * ac_mean_square


def test_parseval_dcm_wave() -> None:
    # AC mean square = RMS² − DC²; with H = 200 the continuous wave's tail is below 1e-5.
    waveform = converter_waveform("buck-boost", 12.0, 5.0, 0.05, 100e3, 10e-6, harmonics=200)
    assert waveform.dcm
    ac_mean_square = waveform.rms_A**2 - waveform.dc_A**2
    assert np.sum(waveform.harmonics_A**2) / 2 == pytest.approx(ac_mean_square, rel=1e-5)


# --- DCM (Erickson & Maksimović ch. 5) ------------------------------------------------


@pytest.mark.parametrize("topology", ["buck", "boost", "buck-boost"])
def test_dcm_continuity_at_the_boundary(topology: str) -> None:
    vi, vo = (48.0, 12.0) if topology != "boost" else (12.0, 48.0)
    f, inductance = 100e3, 20e-6
    rise_V, fall_V, demand_per_amp = inductor_voltages(topology, vi, vo, 1.0)
    duty = fall_V / (rise_V + fall_V)
    # Boundary: ΔI/2 = I_L; I_L is proportional to the load.
    boundary_load = float(rise_V * duty / (inductance * f) / 2 / demand_per_amp)
    loads = boundary_load * np.array([1 + 1e-9, 1 - 1e-9])
    shape = inductor_current_shape(topology, vi, vo, loads, f, inductance)
    assert shape.dcm.tolist() == [False, True]
    for quantity in ("dc_A", "peak_A", "valley_A", "rise_fraction", "fall_fraction", "rms_A"):
        values = getattr(shape, quantity)
        assert values[0] == pytest.approx(values[1], rel=1e-6, abs=1e-6 * shape.peak_A[1]), quantity
    # Lighter loads stay in DCM with a shrinking on-time.
    lighter = inductor_current_shape(
        topology, vi, vo, boundary_load * np.array([0.8, 0.4, 0.1]), f, inductance
    )
    assert lighter.dcm.all()
    assert np.all(np.diff(lighter.rise_fraction) < 0)
    assert np.all(lighter.rise_fraction + lighter.fall_fraction < 1)


@pytest.mark.parametrize(
    ("topology", "input_V", "output_V", "required_per_amp"),
    [
        ("buck", 24.0, 5.0, 1.0),  # I_L = Io
        ("boost", 12.0, 30.0, 30.0 / 12.0),  # I_L = Io Vo / Vi
        ("buck-boost", 12.0, 15.0, (12.0 + 15.0) / 12.0),  # I_L = Io (Vi + Vo) / Vi
    ],
)
def test_dcm_average_current_equals_required(
    topology: str, input_V: float, output_V: float, required_per_amp: float
) -> None:
    load_A = 0.05
    waveform = converter_waveform(topology, input_V, output_V, load_A, 100e3, 5e-6)
    assert waveform.dcm
    assert waveform.valley_A == 0.0
    average = quad_mean(waveform.times_s, waveform.currents_A, 1)
    assert average == pytest.approx(load_A * required_per_amp, rel=1e-9)
    assert waveform.dc_A == pytest.approx(load_A * required_per_amp, rel=1e-12)


def test_dcm_conversion_ratios_match_published_forms() -> None:
    # Erickson & Maksimović ch. 5 (table of DCM conversion ratios, from memory), with
    # K = 2 L f / R and D the on-time fraction: buck M = 2 / (1 + sqrt(1 + 4K/D²)),
    # boost M = (1 + sqrt(1 + 4D²/K)) / 2, buck-boost |M| = D / sqrt(K).
    f, inductance = 100e3, 5e-6
    ratio = {
        "buck": lambda d, k: 2 / (1 + np.sqrt(1 + 4 * k / d**2)),
        "boost": lambda d, k: (1 + np.sqrt(1 + 4 * d**2 / k)) / 2,
        "buck-boost": lambda d, k: d / np.sqrt(k),
    }
    cases = {"buck": (24.0, 5.0), "boost": (12.0, 30.0), "buck-boost": (12.0, 15.0)}
    loads = np.array([0.02, 0.05, 0.1])
    for topology, (vi, vo) in cases.items():
        shape = inductor_current_shape(topology, vi, vo, loads, f, inductance)
        assert shape.dcm.all()
        k = 2 * inductance * f / (vo / loads)
        np.testing.assert_allclose(ratio[topology](shape.rise_fraction, k), vo / vi, rtol=1e-12)


# --- the Waveform holder ---------------------------------------------------------------


def test_converter_waveform_vertices_and_metadata() -> None:
    waveform = converter_waveform(
        "buck", 48.0, 12.0, 4.0, 200e3, 47e-6, harmonics=30, name="cruise", time_share=0.6
    )
    assert (waveform.name, waveform.time_share, waveform.input_V) == ("cruise", 0.6, 48.0)
    assert waveform.times_s[0] == 0.0
    assert waveform.times_s[-1] == pytest.approx(1 / 200e3, rel=1e-15)
    assert waveform.period_s == pytest.approx(5e-6, rel=1e-15)
    assert waveform.currents_A[0] == waveform.currents_A[-1]
    assert waveform.harmonics_A.shape == (30,)
    assert waveform.peak_A == pytest.approx(waveform.currents_A.max())
    assert not waveform.harmonics_A.flags.writeable


def test_dcm_waveform_has_a_zero_interval() -> None:
    waveform = converter_waveform("buck", 48.0, 12.0, 0.1, 200e3, 20e-6)
    assert waveform.dcm
    assert waveform.rise_fraction + waveform.fall_fraction < 1
    np.testing.assert_array_equal(waveform.currents_A[[0, 2, 3]], 0.0)
    assert len(waveform.times_s) == 4


# --- property test: wide valid inputs never give NaN or inf ---------------------------

positive = st.floats(min_value=1e-3, max_value=1e4, allow_nan=False)


@settings(max_examples=100, deadline=None)
@given(
    topology=st.sampled_from(["buck", "boost", "buck-boost"]),
    low_V=st.floats(min_value=0.1, max_value=1000.0),
    ratio=st.floats(min_value=1.001, max_value=100.0),
    load_A=st.one_of(st.just(0.0), st.floats(min_value=1e-6, max_value=1e3)),
    frequency_Hz=st.floats(min_value=1e3, max_value=1e7),
    inductance_H=st.floats(min_value=1e-9, max_value=1.0),
    ripple=positive,
    duty=st.floats(min_value=0.0, max_value=1.0),
    harmonics=st.integers(min_value=1, max_value=200),
)
def test_waveforms_are_finite_for_wide_valid_inputs(
    topology: str,
    low_V: float,
    ratio: float,
    load_A: float,
    frequency_Hz: float,
    inductance_H: float,
    ripple: float,
    duty: float,
    harmonics: int,
) -> None:
    input_V, output_V = (low_V * ratio, low_V) if topology == "buck" else (low_V, low_V * ratio)
    waveform = converter_waveform(
        topology, input_V, output_V, load_A, frequency_Hz, inductance_H, harmonics=harmonics
    )
    scalars = [waveform.rms_A, waveform.peak_A, waveform.dc_A, waveform.rise_fraction]
    assert np.all(np.isfinite(scalars))
    assert np.all(np.isfinite(waveform.harmonics_A))
    assert 0 <= waveform.rise_fraction + waveform.fall_fraction <= 1 + 1e-12
    if load_A > 0:
        assert np.isfinite(
            ccm_ripple_inductance(topology, input_V, output_V, load_A, frequency_Hz, 0.5)
        )
    assert np.all(np.isfinite(triangle_harmonics(ripple, duty, harmonics)))
    times = np.array([0.0, duty, 1.0]) / frequency_Hz
    assert np.all(np.isfinite(piecewise_linear_harmonics(times, [0.0, ripple, 0.0], harmonics)))
