"""Gap fringing acting on the winding: the field a gap sets up in the window next to it
and the extra conductor loss it causes beyond the 1-D layer field.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import FloatArray
from optimag.constants import (
    MU0,
)

# --------------------------------------------------------------------------- gap fringing


def gap_fringing_field(
    x_m: ArrayLike, y_m: ArrayLike, window_height_m: ArrayLike, mmf_A: ArrayLike
) -> tuple[FloatArray, FloatArray]:
    """Field in a winding window next to a gapped leg: gap as a line MMF source.

    Parameters
    ----------
    x_m : array_like
        Distance from the gapped leg's surface into the window, > 0 [m]
    y_m : array_like
        Height from the gap's centre plane along the leg [m]
    window_height_m : array_like
        Window height h between the two yokes, the gap half-way up [m]
    mmf_A : array_like
        Magnetomotive force across the gap F_g [A]

    Returns
    -------
    h_x, h_y : ndarray
        Field across the window (normal to the leg) and along the leg [A/m]

    Notes
    -----
    Seen from a distance larger than its length, a gap in an infinitely permeable leg acts
    as a line source of its MMF on the leg's surface: the field of a line current F_g,
    doubled by its image in the leg, :math:`H = F_g / (\\pi r)`. The two yokes (also
    infinitely permeable, at y = ±h/2) image the source periodically with period h; the
    sum of the row of sources is closed-form,

    .. math:: H_y - i H_x = \\frac{F_g}{h} \\coth\\frac{\\pi (x + i y)}{h}

    which tends to the 1-D window field F_g/h far from the gap and to
    :math:`F_g/(\\pi r)` near it. The gap's own length is neglected, which over-states the
    field at distances below about the gap length. The outer leg and the winding's own
    2-D field are not imaged (the winding's 1-D field is the Dowell model's).

    References
    ----------
    .. [1] W. A. Roshen, "Fringing field formulas and winding loss due to an air gap",
       IEEE Transactions on Magnetics, 43(8), pp. 3387-3394, 2007.
       DOI: 10.1109/TMAG.2007.898908 (from memory): gap as an MMF source on a permeable
       surface, its field and the winding loss it causes.
    .. [2] K. J. Binns, P. J. Lawrenson, C. W. Trowbridge, *The Analytical and Numerical
       Solution of Electric and Magnetic Fields*, Wiley, 1992, ch. on the method of
       images (from memory).
    """
    h = np.asarray(window_height_m, dtype=float)
    z = (np.asarray(x_m, dtype=float) + 1j * np.asarray(y_m, dtype=float)) * (np.pi / h)
    value = np.asarray(mmf_A, dtype=float) / h / np.tanh(z)
    return -value.imag, value.real


def gap_fringing_excess(
    distance_m: ArrayLike,
    span_m: ArrayLike,
    window_height_m: ArrayLike,
    one_d_fraction: ArrayLike,
) -> FloatArray:
    """Excess of the mean squared field over a winding layer next to a gap, over the 1-D
    field the Dowell model assumes, in units of (F_g/h)^2.

    Parameters
    ----------
    distance_m : array_like
        Distance of the layer's conductor centres from the gapped leg, > 0 [m]
    span_m : array_like
        Height the layer covers, centred on the gap, 0 < span <= window height [m]
    window_height_m : array_like
        Window height h [m]
    one_d_fraction : array_like
        The layer's 1-D field as a fraction u of F_g/h (the share of the gap's MMF not yet
        returned by the layers between it and the leg) [-]

    Returns
    -------
    excess : ndarray
        :math:`(\\langle |H|^2 \\rangle - H_{1D}^2) / (F_g/h)^2` over the layer [-]

    Notes
    -----
    With :math:`H = H_{1D} \\hat y + (F_g/h)(\\coth(\\pi z/h) - 1)` (the gap field of
    `gap_fringing_field` less its 1-D part, plus the 1-D field :math:`u F_g/h`), the mean
    over :math:`y \\in [-s/2, s/2]` at :math:`a = \\pi x/h`, :math:`c_s = \\pi s/(2h)` is

    .. math:: \\langle |\\coth - 1|^2 \\rangle + 2u \\langle \\mathrm{Re}\\coth - 1
              \\rangle, \\quad
              \\langle \\mathrm{Re}\\coth \\rangle = \\frac{T}{c_s}, \\quad
              \\langle |\\coth|^2 \\rangle = \\frac{2 \\coth(2a)\\, T}{c_s} - 1, \\quad
              T = \\arctan(\\coth a \\tan c_s)

    from :math:`\\int dc / (\\cosh 2a - \\cos 2c)` in closed form (a standard integral,
    e.g. Gradshteyn & Ryzhik 2.553.3, from memory).

    References
    ----------
    .. [1] W. A. Roshen, IEEE Transactions on Magnetics, 43(8), 2007 (from memory).
    """
    h = np.asarray(window_height_m, dtype=float)
    a = np.pi * np.asarray(distance_m, dtype=float) / h
    c_s = np.minimum(0.5 * np.pi * np.asarray(span_m, dtype=float) / h, 0.5 * np.pi)
    # coth(a) tan(c_s) overflows gracefully to arctan(inf) = pi/2 at a full-height layer.
    with np.errstate(divide="ignore", over="ignore"):
        t = np.arctan(np.tan(c_s) / np.tanh(a))
    mean_re = t / c_s
    mean_sq = 2.0 * t / (np.tanh(2.0 * a) * c_s) - 1.0
    u = np.asarray(one_d_fraction, dtype=float)
    return mean_sq - 2.0 * mean_re + 1.0 + 2.0 * u * (mean_re - 1.0)


def round_conductor_transverse_loss(
    frequency_Hz: ArrayLike, resistivity_ohm_m: ArrayLike, diameter_m: ArrayLike
) -> FloatArray:
    """Eddy loss of a round conductor in a uniform transverse AC field, per unit length and
    per squared field amplitude.

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency, > 0 [Hz]
    resistivity_ohm_m : array_like
        Conductor resistivity [Ohm m]
    diameter_m : array_like
        Conductor diameter d [m]

    Returns
    -------
    g : ndarray
        Time-average loss per metre per squared peak field [W/m / (A/m)^2]

    Notes
    -----
    Exact 2-D solution of the field diffusion into a cylinder of radius a = d/2, with
    :math:`k = (1 - j)/\\delta`:

    .. math:: g = \\frac{2 \\pi a \\omega \\mu_0}{|k|^2}\\,
              \\mathrm{Re}\\left[ j \\frac{J_1(ka)}{J_0(ka)}
              \\left(\\frac{k J_1'(ka)}{J_0(ka)}\\right)^* \\right]

    Low-frequency limit :math:`\\pi \\omega^2 \\mu_0^2 d^4 / (128 \\rho)`; high-frequency
    limit :math:`2 \\pi a / (\\sigma \\delta)` (surface field 2 H sin θ). Bessel functions are
    evaluated exponentially scaled (scipy ``jve``), which cancels in the ratios.

    References
    ----------
    .. [1] J. Lammeraner, M. Štafl, *Eddy Currents*, Iliffe, 1966, ch. on a cylinder in a
       transverse field (from memory).
    .. [2] J. A. Ferreira, "Improved analytical modeling of conductive losses in magnetic
       components", IEEE Transactions on Power Electronics, 9(1), 1994.
       DOI: 10.1109/63.285503
    """
    from scipy.special import jve

    rho = np.asarray(resistivity_ohm_m, dtype=float)
    omega = 2.0 * np.pi * np.asarray(frequency_Hz, dtype=float)
    radius = 0.5 * np.asarray(diameter_m, dtype=float)
    delta = np.sqrt(2.0 * rho / (omega * MU0))
    k = (1.0 - 1.0j) / delta
    x = k * radius
    with np.errstate(divide="ignore", invalid="ignore"):  # d = 0 takes the series below
        j1_ratio = jve(1, x) / jve(0, x)
        slope_ratio = k * (1.0 - j1_ratio / x)  # k J1'(x) / J0(x), J1' = J0 - J1/x
        value = 2.0 * np.pi * radius * omega * MU0 / np.abs(k) ** 2 * np.real(
            1j * j1_ratio * np.conj(slope_ratio)
        )
    low_frequency = np.pi * omega**2 * MU0**2 * (2.0 * radius) ** 4 / (128.0 * rho)
    # Below d/delta ~ 0.05 the Bessel ratio loses digits; the series is exact there.
    return np.where(radius / delta < 0.025, low_frequency, value)
