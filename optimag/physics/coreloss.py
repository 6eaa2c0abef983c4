"""Core loss density: Steinmetz equation, improved generalised Steinmetz (iGSE).

Pure vectorised numpy functions; every argument may be a scalar or an array and
arguments broadcast. SI units: frequency in Hz, flux density in T, loss in W/m^3.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from optimag.arrays import FloatArray
from optimag.errors import warn_outside_range
from optimag.registry import Registry, callable_entry

__all__ = [
    "CORE_LOSS_MODELS",
    "core_loss_temperature_factor",
    "dc_bias_factor",
    "igse_coefficient",
    "igse_loss_density_piecewise",
    "igse_loss_density_triangle",
    "relaxation_loss_density",
    "steinmetz_fit_excess",
    "steinmetz_loss_density",
    "steinmetz_validity_check",
]

_TWO_PI = 2.0 * np.pi




def steinmetz_loss_density(
    frequency_Hz: npt.ArrayLike,
    b_peak_T: npt.ArrayLike,
    k: npt.ArrayLike,
    alpha: npt.ArrayLike,
    beta: npt.ArrayLike,
) -> FloatArray:
    """Core loss density under sinusoidal flux, Steinmetz equation.

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency of the sinusoidal flux, >= 0 [Hz].
    b_peak_T : array_like
        Peak flux density (half the peak-to-peak swing; magnitude used) [T].
    k : array_like
        Steinmetz coefficient for f in Hz and B in T [W/m^3].
    alpha : array_like
        Frequency exponent [1].
    beta : array_like
        Flux-density exponent [1].

    Returns
    -------
    ndarray
        Time-averaged loss density [W/m^3].

    Notes
    -----
    .. math:: P_v = k f^\\alpha \\hat{B}^\\beta

    Valid only inside the frequency and flux range the coefficients were fitted on;
    see `steinmetz_validity_check`.

    References
    ----------
    .. [1] C. P. Steinmetz, "On the law of hysteresis", Transactions of the AIEE,
       vol. 9, pp. 1-64, 1892. DOI: 10.1109/T-AIEE.1892.5570437 (from memory).
    """
    return (
        np.asarray(k, dtype=float)
        * np.asarray(frequency_Hz, dtype=float) ** np.asarray(alpha)
        * np.abs(b_peak_T) ** np.asarray(beta)
    )


def _cos_power_integral(alpha: FloatArray) -> FloatArray:
    # int_0^{2 pi} |cos t|^a dt = 4 int_0^{pi/2} cos^a = 2 B(1/2, (a+1)/2)
    from scipy.special import gamma  # here: validating a study needs no scipy

    return 2.0 * np.sqrt(np.pi) * gamma(0.5 * (alpha + 1.0)) / gamma(0.5 * alpha + 1.0)


def igse_coefficient(k: npt.ArrayLike, alpha: npt.ArrayLike, beta: npt.ArrayLike) -> FloatArray:
    """Coefficient k_i of the improved generalised Steinmetz equation.

    Parameters
    ----------
    k : array_like
        Steinmetz coefficient for f in Hz and B in T [W/m^3].
    alpha : array_like
        Steinmetz frequency exponent, > 0 [1].
    beta : array_like
        Steinmetz flux-density exponent [1].

    Returns
    -------
    ndarray
        k_i, such that the iGSE reproduces k f^alpha B^beta for a sine [W/m^3].

    Notes
    -----
    .. math:: k_i = \\frac{k}{(2\\pi)^{\\alpha-1} \\int_0^{2\\pi} |\\cos\\theta|^\\alpha
              d\\theta \\; 2^{\\beta-\\alpha}}, \\qquad
              \\int_0^{2\\pi} |\\cos\\theta|^\\alpha d\\theta =
              \\frac{2\\sqrt{\\pi}\\,\\Gamma\\left(\\frac{\\alpha+1}{2}\\right)}
                    {\\Gamma\\left(\\frac{\\alpha}{2}+1\\right)}

    (paper's eq. for k_i; the integral in closed form via the Beta function).

    References
    ----------
    .. [1] K. Venkatachalam, C. R. Sullivan, T. Abdallah, H. Tacca, "Accurate
       prediction of ferrite core loss with nonsinusoidal waveforms using only
       Steinmetz parameters", IEEE Workshop on Computers in Power Electronics
       (COMPEL), 2002, pp. 36-41. DOI: 10.1109/CIPE.2002.1196712 (from memory).
    """
    alpha_arr = np.asarray(alpha, dtype=float)
    return np.asarray(k, dtype=float) / (
        _TWO_PI ** (alpha_arr - 1.0)
        * _cos_power_integral(alpha_arr)
        * 2.0 ** (np.asarray(beta) - alpha_arr)
    )


def _segment_terms(
    flux_step: FloatArray, time_step: FloatArray, alpha: FloatArray
) -> FloatArray:
    """|dB|^alpha dt^(1-alpha) per segment; flat or empty segments give exactly 0."""
    flux_step = np.abs(flux_step)
    moving = flux_step > 0.0
    safe_time = np.where(moving, time_step, 1.0)
    with np.errstate(divide="ignore"):
        terms = flux_step**alpha * safe_time ** (1.0 - alpha)
    return np.where(moving, terms, 0.0)


def igse_loss_density_piecewise(
    flux_T: npt.ArrayLike,
    time_s: npt.ArrayLike,
    k: npt.ArrayLike,
    alpha: npt.ArrayLike,
    beta: npt.ArrayLike,
) -> FloatArray:
    """Core loss density of a piecewise-linear flux waveform, iGSE.

    Parameters
    ----------
    flux_T : array_like
        Flux density at the waveform's vertices along the last axis, first and last
        vertex one period apart (flux periodic); other axes broadcast [T].
    time_s : array_like
        Times of the vertices along the last axis, non-decreasing [s].
    k : array_like
        Steinmetz coefficient for f in Hz and B in T [W/m^3].
    alpha : array_like
        Steinmetz frequency exponent, > 0 [1].
    beta : array_like
        Steinmetz flux-density exponent [1].

    Returns
    -------
    ndarray
        Time-averaged loss density [W/m^3], shape of the broadcast inputs without
        the vertex axis.

    Notes
    -----
    .. math:: P_v = \\frac{k_i (\\Delta B)^{\\beta-\\alpha}}{T}
              \\sum_m |\\Delta B_m|^\\alpha \\, \\Delta t_m^{1-\\alpha}

    with :math:`\\Delta B` the peak-to-peak flux over the period and
    :math:`\\Delta B_m, \\Delta t_m` the flux and time steps of segment m (paper's
    piecewise-linear form of the iGSE, valid for waveforms without minor loops).
    Segments with no flux change contribute 0 whatever their duration. A segment
    that changes the flux in zero time has unbounded dB/dt: the result is inf (for
    alpha > 1) and a `ValidityRangeWarning` is emitted.

    References
    ----------
    .. [1] K. Venkatachalam, C. R. Sullivan, T. Abdallah, H. Tacca, "Accurate
       prediction of ferrite core loss with nonsinusoidal waveforms using only
       Steinmetz parameters", IEEE Workshop on Computers in Power Electronics
       (COMPEL), 2002, pp. 36-41. DOI: 10.1109/CIPE.2002.1196712 (from memory).
    """
    flux = np.asarray(flux_T, dtype=float)
    times = np.asarray(time_s, dtype=float)
    alpha_arr = np.asarray(alpha, dtype=float)
    flux_steps = np.diff(flux, axis=-1)
    time_steps = np.diff(times, axis=-1)
    warn_outside_range(
        (time_steps <= 0.0) & (flux_steps != 0.0),
        "iGSE: a flux step in zero time has unbounded dB/dt",
    )
    # alpha broadcasts against the segment axis only through a trailing new axis.
    terms = _segment_terms(flux_steps, time_steps, alpha_arr[..., np.newaxis])
    period = times[..., -1] - times[..., 0]
    swing = np.max(flux, axis=-1) - np.min(flux, axis=-1)
    return _igse_assemble(terms.sum(axis=-1) / period, swing, k, alpha_arr, beta)


def _igse_assemble(
    mean_term: FloatArray,
    swing: FloatArray,
    k: npt.ArrayLike,
    alpha: FloatArray,
    beta: npt.ArrayLike,
) -> FloatArray:
    # With no swing the loss is 0 even if beta < alpha makes swing^(beta-alpha) blow up.
    moving = swing > 0.0
    safe_swing = np.where(moving, swing, 1.0)
    density = igse_coefficient(k, alpha, beta) * safe_swing ** (np.asarray(beta) - alpha)
    return np.where(moving, density * mean_term, 0.0)


def igse_loss_density_triangle(
    frequency_Hz: npt.ArrayLike,
    delta_b_T: npt.ArrayLike,
    rise_fraction: npt.ArrayLike,
    k: npt.ArrayLike,
    alpha: npt.ArrayLike,
    beta: npt.ArrayLike,
    fall_fraction: npt.ArrayLike | None = None,
) -> FloatArray:
    """Core loss density of a triangular (or trapezoidal-in-time) flux, iGSE.

    Parameters
    ----------
    frequency_Hz : array_like
        Switching frequency, > 0 [Hz].
    delta_b_T : array_like
        Peak-to-peak flux density swing, >= 0 [T].
    rise_fraction : array_like
        Share of the period during which the flux rises, in [0, 1] [1].
    k : array_like
        Steinmetz coefficient for f in Hz and B in T [W/m^3].
    alpha : array_like
        Steinmetz frequency exponent, > 0 [1].
    beta : array_like
        Steinmetz flux-density exponent [1].
    fall_fraction : array_like, optional
        Share of the period during which the flux falls, in [0, 1 - rise_fraction];
        default ``1 - rise_fraction``. The rest of the period is flat
        (discontinuous conduction) and adds no loss [1].

    Returns
    -------
    ndarray
        Time-averaged loss density [W/m^3].

    Notes
    -----
    The piecewise-linear iGSE with two moving segments of swing :math:`\\Delta B`
    lasting :math:`D_1 T` and :math:`D_2 T`:

    .. math:: P_v = k_i \\, \\Delta B^\\beta f^\\alpha
              \\left[D_1^{1-\\alpha} + D_2^{1-\\alpha}\\right]

    With no swing the loss is 0 for any fractions. A zero fraction with a non-zero
    swing is an instantaneous flux step: the result is inf (alpha > 1) and a
    `ValidityRangeWarning` is emitted.

    References
    ----------
    .. [1] K. Venkatachalam, C. R. Sullivan, T. Abdallah, H. Tacca, "Accurate
       prediction of ferrite core loss with nonsinusoidal waveforms using only
       Steinmetz parameters", IEEE Workshop on Computers in Power Electronics
       (COMPEL), 2002, pp. 36-41. DOI: 10.1109/CIPE.2002.1196712 (from memory).
    """
    rise = np.asarray(rise_fraction, dtype=float)
    fall = 1.0 - rise if fall_fraction is None else np.asarray(fall_fraction, dtype=float)
    swing = np.abs(np.asarray(delta_b_T, dtype=float))
    alpha_arr = np.asarray(alpha, dtype=float)
    warn_outside_range(
        ((rise <= 0.0) | (fall <= 0.0)) & (swing > 0.0),
        "iGSE: a flux step in zero time has unbounded dB/dt",
    )
    moving = swing > 0.0
    exponent = 1.0 - alpha_arr
    with np.errstate(divide="ignore"):
        rise_term = np.where(moving, rise, 1.0) ** exponent
        fall_term = np.where(moving, fall, 1.0) ** exponent
    shape_sum = rise_term + fall_term
    density = (
        igse_coefficient(k, alpha_arr, beta)
        * swing ** np.asarray(beta)
        * np.asarray(frequency_Hz, dtype=float) ** alpha_arr
        * shape_sum
    )
    return np.where(moving, density, 0.0)


def core_loss_temperature_factor(
    temperature_C: npt.ArrayLike,
    ct0: npt.ArrayLike,
    ct1: npt.ArrayLike,
    ct2: npt.ArrayLike,
    minimum: float = 1e-3,
) -> FloatArray:
    """Multiplier of the Steinmetz loss for core temperature, parabolic fit.

    Parameters
    ----------
    temperature_C : array_like
        Core temperature [degC].
    ct0 : array_like
        Constant coefficient [1].
    ct1 : array_like
        Linear coefficient [1/degC].
    ct2 : array_like
        Quadratic coefficient [1/degC^2].
    minimum : float, optional
        Floor of the factor, > 0 [1].

    Returns
    -------
    ndarray
        Loss multiplier, >= ``minimum`` [1].

    Notes
    -----
    .. math:: C_T = c_{t0} - c_{t1} T + c_{t2} T^2

    The fitted parabola may dip below zero far from its fit range; the floor keeps
    the loss positive there and a `ValidityRangeWarning` is emitted when it acts.

    References
    ----------
    Common practice form of ferrite loss-versus-temperature fits, no source.
    """
    temperature = np.asarray(temperature_C, dtype=float)
    factor = np.asarray(ct0) - np.asarray(ct1) * temperature + np.asarray(ct2) * temperature**2
    warn_outside_range(factor < minimum, "core-loss temperature factor fell below its floor")
    return np.maximum(factor, minimum)


def steinmetz_fit_excess(
    frequency_Hz: npt.ArrayLike,
    b_peak_T: npt.ArrayLike,
    f_min_Hz: npt.ArrayLike,
    f_max_Hz: npt.ArrayLike,
    b_max_T: npt.ArrayLike,
) -> FloatArray:
    """How far a point lies outside the range a set of Steinmetz coefficients was fitted on.

    Parameters
    ----------
    frequency_Hz : array_like
        Operating frequency, > 0 [Hz].
    b_peak_T : array_like
        Peak flux density of the excitation (half the peak-to-peak swing; magnitude
        used) [T].
    f_min_Hz, f_max_Hz : array_like
        Frequency range of the fit [Hz].
    b_max_T : array_like
        Highest peak flux density of the fit, > 0 [T].

    Returns
    -------
    ndarray
        ``max(f_min / f - 1, f / f_max - 1, |B| / B_max - 1)`` [1]: <= 0 inside the fit,
        > 0 outside, by the relative distance to the nearest violated bound.

    Notes
    -----
    This is the single statement of the fit's range; `steinmetz_validity_check` and the
    model's ``material_range`` constraint read it.

    References
    ----------
    .. [1] C. P. Steinmetz, "On the law of hysteresis", Transactions of the AIEE,
       vol. 9, pp. 1-64, 1892 (a power law is a local fit only).
    """
    frequency = np.asarray(frequency_Hz, dtype=float)
    return np.maximum(
        np.maximum(np.asarray(f_min_Hz) / frequency - 1.0, frequency / np.asarray(f_max_Hz) - 1.0),
        np.abs(b_peak_T) / np.asarray(b_max_T) - 1.0,
    )


def steinmetz_validity_check(
    frequency_Hz: npt.ArrayLike,
    b_peak_T: npt.ArrayLike,
    f_min_Hz: npt.ArrayLike,
    f_max_Hz: npt.ArrayLike,
    b_max_T: npt.ArrayLike,
) -> npt.BoolArray:
    """Flag operating points outside the range a set of Steinmetz coefficients covers.

    Parameters
    ----------
    frequency_Hz : array_like
        Operating frequency [Hz].
    b_peak_T : array_like
        Peak flux density (magnitude used) [T].
    f_min_Hz : array_like
        Lowest frequency of the fit [Hz].
    f_max_Hz : array_like
        Highest frequency of the fit [Hz].
    b_max_T : array_like
        Highest peak flux density of the fit [T].

    Returns
    -------
    ndarray of bool
        True where the point lies inside the fitted range.

    Notes
    -----
    Inside means :math:`f_{min} \\le f \\le f_{max}` and :math:`|\\hat{B}| \\le B_{max}`.
    A `ValidityRangeWarning` is emitted once if any point lies outside.

    References
    ----------
    .. [1] C. P. Steinmetz, "On the law of hysteresis", Transactions of the AIEE,
       vol. 9, pp. 1-64, 1892 (a power law is a local fit only).
    """
    inside = steinmetz_fit_excess(frequency_Hz, b_peak_T, f_min_Hz, f_max_Hz, b_max_T) <= 0.0
    warn_outside_range(~inside, "Steinmetz coefficients used outside their fitted range")
    return inside


def relaxation_loss_density(
    frequency_Hz: npt.ArrayLike,
    delta_b_T: npt.ArrayLike,
    rise_fraction: npt.ArrayLike,
    fall_fraction: npt.ArrayLike,
    k_r: npt.ArrayLike,
    alpha_r: npt.ArrayLike,
    beta_r: npt.ArrayLike,
    tau_s: npt.ArrayLike,
    q_r: npt.ArrayLike,
) -> FloatArray:
    """Relaxation loss of the zero-voltage interval of a DCM inductor, i²GSE term.

    Parameters
    ----------
    frequency_Hz : array_like
        Switching frequency, > 0 [Hz].
    delta_b_T : array_like
        Peak-to-peak flux swing of the period, >= 0 [T].
    rise_fraction, fall_fraction : array_like
        Shares of the period the flux rises (D1) and falls (D2), > 0; the rest of the
        period, ``1 - D1 - D2``, the flux stands still (zero winding voltage) [1].
    k_r : array_like
        Relaxation coefficient, such that the energy per event is in J/m^3 with dB/dt in
        T/s and ΔB in T [J/m^3].
    alpha_r, beta_r : array_like
        Relaxation exponents of |dB/dt| and ΔB [1].
    tau_s : array_like
        Relaxation time constant, > 0 [s].
    q_r : array_like
        Weight of the slope ratio in the factor Q_r [1].

    Returns
    -------
    ndarray
        Time-averaged relaxation loss density [W/m^3]; 0 without a still interval (CCM)
        or without a swing.

    Notes
    -----
    One still interval per period, entered from the falling flux and left by the rising
    one. The paper's relaxation term for it:

    .. math:: P_r = \\frac{1}{T} k_r \\left|\\dot B(t_-)\\right|^{\\alpha_r}
              (\\Delta B)^{\\beta_r} \\left(1 - e^{-t_1/\\tau}\\right) Q_r, \\qquad
              Q_r = e^{-q_r |\\dot B(t_+)| / |\\dot B(t_-)|}

    with :math:`\\dot B(t_-) = ΔB / (D_2 T)` before, :math:`\\dot B(t_+) = ΔB / (D_1 T)`
    after, and :math:`t_1 = (1 - D_1 - D_2) T` the length of the still interval; the
    total loss is this plus the iGSE of the moving segments (`igse_loss_density_triangle`).

    References
    ----------
    .. [1] J. Mühlethaler, J. Biela, J. W. Kolar, A. Ecklebe, "Improved core-loss
       calculation for magnetic components employed in power electronic systems", IEEE
       Transactions on Power Electronics, vol. 27, no. 2, pp. 964-973, 2012.
       DOI: 10.1109/TPEL.2011.2162252 (equations from memory).
    """
    frequency = np.asarray(frequency_Hz, dtype=float)
    swing = np.abs(np.asarray(delta_b_T, dtype=float))
    rise = np.asarray(rise_fraction, dtype=float)
    fall = np.asarray(fall_fraction, dtype=float)
    idle = np.maximum(1.0 - rise - fall, 0.0)
    active = (swing > 0.0) & (idle > 0.0) & (rise > 0.0) & (fall > 0.0)
    period = 1.0 / frequency
    safe_fall = np.where(active, fall, 1.0)
    safe_rise = np.where(active, rise, 1.0)
    slope_before = swing / (safe_fall * period)
    slope_after = swing / (safe_rise * period)
    with np.errstate(divide="ignore", invalid="ignore"):
        q_factor = np.exp(-np.asarray(q_r) * slope_after / np.where(active, slope_before, 1.0))
        energy = (
            np.asarray(k_r) * slope_before ** np.asarray(alpha_r) * swing ** np.asarray(beta_r)
            * (1.0 - np.exp(-idle * period / np.asarray(tau_s))) * q_factor
        )
    return np.where(active, energy * frequency, 0.0)


def dc_bias_factor(
    h_dc_A_m: npt.ArrayLike, table_h_A_m: npt.ArrayLike, table_factor: npt.ArrayLike
) -> tuple[FloatArray, npt.BoolArray]:
    """Core-loss multiplier for a DC magnetising field from a premagnetisation table.

    Parameters
    ----------
    h_dc_A_m : array_like
        DC magnetising field N I_dc / le, >= 0 (magnitude used), shape (..., K) [A/m].
    table_h_A_m : array_like
        Table fields in increasing order on the last axis, > 0, shape (..., M) broadcasting
        with `h_dc_A_m` without its last axis [A/m].
    table_factor : array_like
        Loss multiplier at each table field (1 at zero field is implied) [1].

    Returns
    -------
    factor : ndarray
        Multiplier, linear in H between table points and 1 at H = 0; held at the last
        point beyond the table [1].
    beyond : ndarray of bool
        True where the field lies beyond the table's last point.

    Notes
    -----
    The premagnetisation graph gives the Steinmetz parameters as functions of the DC
    field; a table of the loss ratio P(H_dc) / P(0) at the material's operating region is
    its simplest use (the exponents kept, the coefficient k scaled), the form the
    catalogue carries.

    References
    ----------
    .. [1] J. Mühlethaler, J. Biela, J. W. Kolar, A. Ecklebe, "Core losses under the DC
       bias condition based on Steinmetz parameters", IEEE Transactions on Power
       Electronics, vol. 27, no. 2, pp. 953-963, 2012. DOI: 10.1109/TPEL.2011.2160971
       (from memory).
    """
    h = np.abs(np.asarray(h_dc_A_m, dtype=float))
    nodes_h = np.asarray(table_h_A_m, dtype=float)[..., None, :]
    nodes_f = np.asarray(table_factor, dtype=float)[..., None, :]
    zero = np.zeros((*nodes_h.shape[:-1], 1))
    nodes_h = np.concatenate([zero, nodes_h], axis=-1)
    nodes_f = np.concatenate([zero + 1.0, nodes_f], axis=-1)
    factor = np.broadcast_to(nodes_f[..., -1], np.broadcast_shapes(h.shape, nodes_f.shape[:-1]))
    factor = factor.copy()
    for j in range(nodes_h.shape[-1] - 2, -1, -1):
        lo_h, hi_h = nodes_h[..., j], nodes_h[..., j + 1]
        lo_f, hi_f = nodes_f[..., j], nodes_f[..., j + 1]
        inside = h <= hi_h
        width = hi_h - lo_h
        share = (h - lo_h) / np.where(width > 0, width, 1.0)
        factor = np.where(inside, lo_f + share * (hi_f - lo_f), factor)
    return factor, h > nodes_h[..., -1]


#: Core loss density models by name, chosen by a study's ``[model] core_loss``. A model is
#: called as ``model(frequency_Hz, delta_b_T, rise_fraction, k, alpha, beta,
#: fall_fraction=...)`` with the arguments of `igse_loss_density_triangle` (arrays of shape
#: (n, K): candidates x operating points; a DCM point has rise + fall < 1) and returns the
#: loss density [W/m^3] of the same shape. The design model multiplies it by the
#: temperature factor, the DC-bias factor and Ve, and adds the i²GSE relaxation term. An
#: operating point with an imposed current waveform (a waveform file, a line cycle) keeps
#: the piecewise-linear iGSE of its own flux (`igse_loss_density_piecewise`).
CORE_LOSS_MODELS: Registry = Registry("core loss", "model.core_loss", callable_entry)
CORE_LOSS_MODELS.register("igse", igse_loss_density_triangle)
