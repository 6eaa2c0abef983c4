"""Winding physics: copper, wire sizes, layout in a window, MLT, fill, DC resistance, loss.

Every function is a plain numpy expression over scalars or arrays (broadcasting), in SI
units, so the search can evaluate millions of candidates per call. Validity checks cost one
``np.any`` per call and warn with `ValidityRangeWarning`, never per element.

AC factors are in `optimag.physics.ac_resistance`, the gap's field on the winding in
`optimag.physics.gap_field`.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray
from optimag.constants import (
    COPPER_RESISTIVITY_20C,
    COPPER_TEMPCO_20C,
    MU0,
)
from optimag.errors import warn_outside_range

#: Temperature span over which the linear resistivity law is trusted [degC]
#: (common practice, no source: the law is within about 1 % of measured copper there).
COPPER_LINEAR_RANGE_C = (-50.0, 200.0)

#: Gauge numbers covered by the ASTM B258 table, 0000 (= -3) to 56 [-] (from memory).
AWG_RANGE = (-3.0, 56.0)

# Relative slack on floor/ceil and fit comparisons: a window that holds exactly ten wires
# must not lose one to a rounding error in b/d.
FIT_SLACK = 1e-9


class WindingLayout(NamedTuple):
    """How a winding sits in the window; every field broadcasts to the inputs' shape.

    Attributes
    ----------
    conductors_per_layer : integer-valued conductors side by side along the breadth [-]
    layers : integer-valued number of layers [-]
    build_m : radial thickness of the winding [m]
    fits : True where the winding fits in the window [-]
    """

    conductors_per_layer: FloatArray
    layers: FloatArray
    build_m: FloatArray
    fits: BoolArray | np.bool_



# --------------------------------------------------------------------------- conductor


def copper_resistivity(temperature_C: ArrayLike) -> FloatArray:
    """Resistivity of annealed copper at a given temperature.

    Parameters
    ----------
    temperature_C : array_like
        Conductor temperature [degC]

    Returns
    -------
    resistivity : ndarray
        Electrical resistivity [Ohm m]

    Notes
    -----
    Linear law about 20 degC:

    .. math:: \\rho(T) = \\rho_{20} [1 + \\alpha_{20} (T - 20)]

    with rho20 = 1/58 Ohm mm^2/m and alpha20 = 0.00393 /K. Warns outside
    `COPPER_LINEAR_RANGE_C`.

    References
    ----------
    IEC 60028, International standard of resistance for copper (International Annealed
    Copper Standard), International Electrotechnical Commission, 1925.
    """
    low, high = COPPER_LINEAR_RANGE_C
    warn_outside_range(
        (np.asarray(temperature_C) < low) | (np.asarray(temperature_C) > high),
        f"copper resistivity: linear law used outside {low}..{high} degC",
    )
    return COPPER_RESISTIVITY_20C * (1.0 + COPPER_TEMPCO_20C * (np.asarray(temperature_C) - 20.0))


def awg_diameter_m(gauge: ArrayLike) -> FloatArray:
    """Bare diameter of a round American Wire Gauge conductor.

    Parameters
    ----------
    gauge : array_like
        AWG number; 0, 00, 000, 0000 are 0, -1, -2, -3 [-]

    Returns
    -------
    diameter : ndarray
        Bare copper diameter [m]

    Notes
    -----
    .. math:: d_n = 0.127\\,\\mathrm{mm} \\cdot 92^{(36 - n)/39}

    Warns outside gauges 0000..56, the span of the standard's table.

    References
    ----------
    ASTM B258, Standard Specification for Standard Nominal Diameters and Cross-Sectional
    Areas of AWG Sizes of Solid Round Wires Used as Electrical Conductors, ASTM
    International.
    """
    low, high = AWG_RANGE
    gauge = np.asarray(gauge, dtype=float)
    warn_outside_range((gauge < low) | (gauge > high), "AWG diameter: gauge outside 0000..56")
    return 0.127e-3 * np.power(92.0, (36.0 - gauge) / 39.0)


def skin_depth(frequency_Hz: ArrayLike, resistivity_ohm_m: ArrayLike) -> FloatArray:
    """Skin depth in a non-magnetic conductor.

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency, >= 0; 0 gives an infinite depth (DC) [Hz]
    resistivity_ohm_m : array_like
        Conductor resistivity [Ohm m]

    Returns
    -------
    delta : ndarray
        Skin depth [m]

    Notes
    -----
    .. math:: \\delta = \\sqrt{\\rho / (\\pi f \\mu_0)}

    References
    ----------
    S. Ramo, J. R. Whinnery, T. Van Duzer, Fields and Waves in Communication Electronics,
    3rd ed., Wiley, 1994, sec. 3.16.
    """
    # f = 0 (a DC term in a harmonic array) yields inf, which the AC factors map to 1.
    with np.errstate(divide="ignore"):
        return np.sqrt(np.asarray(resistivity_ohm_m) / (math.pi * MU0 * np.asarray(frequency_Hz)))


# --------------------------------------------------------------------------- layout


def round_layout(
    turns: ArrayLike,
    parallel: ArrayLike,
    outer_diameter_m: ArrayLike,
    breadth_m: ArrayLike,
    width_m: ArrayLike,
) -> WindingLayout:
    """Lay round wires (or litz bundles) in layers across a bobbin window.

    Parameters
    ----------
    turns : array_like
        Turns N [-]
    parallel : array_like
        Conductors in parallel per turn p [-]
    outer_diameter_m : array_like
        Outer diameter over insulation (bundle diameter for litz) [m]
    breadth_m : array_like
        Usable window breadth, along which a layer runs [m]
    width_m : array_like
        Usable window width, across which layers build up [m]

    Returns
    -------
    layout : WindingLayout
        Conductors per layer, layers, build and fit flag.

    Notes
    -----
    .. math::

        N_l = \\lfloor b / d_o \\rfloor, \\quad
        m = \\lceil N p / N_l \\rceil, \\quad
        \\text{build} = m\\, d_o

    Fits when build <= width, N_l >= 1 and p <= N_l (parallel conductors of a turn share a
    layer). Orthocyclic nesting is ignored, which over-estimates the build (conservative).
    Square-stacked layering: common practice, no source.

    References
    ----------
    None: common practice, no source.
    """
    per_layer = np.floor(np.asarray(breadth_m) / np.asarray(outer_diameter_m) * (1.0 + FIT_SLACK))
    conductors = np.asarray(turns) * np.asarray(parallel)
    layers = np.ceil(conductors / np.maximum(per_layer, 1.0) * (1.0 - FIT_SLACK))
    build = layers * np.asarray(outer_diameter_m)
    fits = (
        (build <= np.asarray(width_m) * (1.0 + FIT_SLACK))
        & (per_layer >= 1.0)
        & (np.asarray(parallel) <= per_layer)
    )
    return WindingLayout(per_layer, layers, build, fits)


def foil_layout(
    turns: ArrayLike,
    parallel: ArrayLike,
    thickness_m: ArrayLike,
    insulation_m: ArrayLike,
    foil_width_m: ArrayLike,
    breadth_m: ArrayLike,
    width_m: ArrayLike,
) -> WindingLayout:
    """Lay a foil winding (one turn per layer) in a bobbin window.

    Parameters
    ----------
    turns : array_like
        Turns N [-]
    parallel : array_like
        Foils in parallel per turn p [-]
    thickness_m : array_like
        Copper foil thickness t [m]
    insulation_m : array_like
        Interlayer insulation thickness t_ins [m]
    foil_width_m : array_like
        Foil width, along the window breadth [m]
    breadth_m : array_like
        Usable window breadth [m]
    width_m : array_like
        Usable window width, across which layers build up [m]

    Returns
    -------
    layout : WindingLayout
        conductors_per_layer = 1, layers = N p, build = N p (t + t_ins), fit flag.

    Notes
    -----
    .. math:: m = N p, \\quad \\text{build} = N p (t + t_{ins})

    Fits when build <= width and foil width <= breadth. Common practice, no source.

    References
    ----------
    None: common practice, no source.
    """
    layers = np.asarray(turns) * np.asarray(parallel)
    build = layers * (np.asarray(thickness_m) + np.asarray(insulation_m))
    fits = (build <= np.asarray(width_m) * (1.0 + FIT_SLACK)) & (
        np.asarray(foil_width_m) <= np.asarray(breadth_m) * (1.0 + FIT_SLACK)
    )
    per_layer = np.ones_like(build)
    return WindingLayout(per_layer, layers * per_layer, build, fits)


def mean_turn_length(
    leg_perimeter_m: ArrayLike, bobbin_wall_m: ArrayLike, build_m: ArrayLike
) -> FloatArray:
    """Mean length of one turn wound on a bobbin around a core leg.

    Parameters
    ----------
    leg_perimeter_m : array_like
        Perimeter of the centre leg (2(a + b) rectangular, pi d round) [m]
    bobbin_wall_m : array_like
        Bobbin wall thickness between leg and winding [m]
    build_m : array_like
        Radial build of the winding [m]

    Returns
    -------
    mlt : ndarray
        Mean turn length [m]

    Notes
    -----
    The turn at distance s from the leg surface follows the leg outline with corners
    rounded to radius s, so its length is the leg perimeter plus 2 pi s; at mid-build
    s = wall + build/2:

    .. math:: MLT = P_{leg} + 2\\pi (t_{wall} + \\text{build}/2)

    Exact for a round leg; for a rectangular leg it assumes the wire hugs the corners.

    References
    ----------
    None: common practice, no source.
    """
    return np.asarray(leg_perimeter_m) + 2.0 * math.pi * (
        np.asarray(bobbin_wall_m) + 0.5 * np.asarray(build_m)
    )


def mean_turn_length_toroid(
    outer_diameter_m: ArrayLike,
    inner_diameter_m: ArrayLike,
    height_m: ArrayLike,
    build_m: ArrayLike,
) -> FloatArray:
    """Mean length of one turn wound on a toroid.

    Parameters
    ----------
    outer_diameter_m : array_like
        Core outer diameter OD [m]
    inner_diameter_m : array_like
        Core inner diameter ID [m]
    height_m : array_like
        Core height (all stacked cores) [m]
    build_m : array_like
        Radial build of the winding at the hole, where the layers crowd [m]

    Returns
    -------
    mlt : ndarray
        Mean turn length [m]

    Notes
    -----
    A turn wraps the rectangular cross-section (OD - ID)/2 x H. At mid-build it runs at
    distance build/2 from the core on all four sides with corners rounded to that radius:

    .. math:: MLT = (OD - ID) + 2H + \\pi\\, \\text{build}

    The build at the hole is applied to all sides, which slightly over-estimates the length
    (the outer layers spread around the larger outer circumference).

    References
    ----------
    None: common practice, no source.
    """
    return (
        np.asarray(outer_diameter_m)
        - np.asarray(inner_diameter_m)
        + 2.0 * np.asarray(height_m)
        + math.pi * np.asarray(build_m)
    )


def fill_factor(copper_area_m2: ArrayLike, window_area_m2: ArrayLike) -> FloatArray:
    """Window fill (utilisation) factor.

    Parameters
    ----------
    copper_area_m2 : array_like
        Total copper cross-section through the window, all turns and strands [m^2]
    window_area_m2 : array_like
        Window area [m^2]

    Returns
    -------
    fill : ndarray
        Ku = A_cu / W_a [-]

    Notes
    -----
    .. math:: K_u = A_{cu} / W_a

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press, 2011,
    ch. 4 (window utilisation).
    """
    return np.asarray(copper_area_m2) / np.asarray(window_area_m2)


def dc_resistance(
    resistivity_ohm_m: ArrayLike,
    mlt_m: ArrayLike,
    turns: ArrayLike,
    copper_area_m2: ArrayLike,
) -> FloatArray:
    """DC resistance of a winding.

    Parameters
    ----------
    resistivity_ohm_m : array_like
        Copper resistivity at the winding temperature [Ohm m]
    mlt_m : array_like
        Mean turn length [m]
    turns : array_like
        Turns N [-]
    copper_area_m2 : array_like
        Copper cross-section of one turn, all parallel conductors together [m^2]

    Returns
    -------
    resistance : ndarray
        R_dc [Ohm]

    Notes
    -----
    .. math:: R_{dc} = \\rho N \\, MLT / A_{cu}

    References
    ----------
    R. W. Erickson, D. Maksimovic, Fundamentals of Power Electronics, 2nd ed., Kluwer,
    2001, ch. 14 (inductor design, winding resistance).
    """
    return (
        np.asarray(resistivity_ohm_m)
        * np.asarray(turns)
        * np.asarray(mlt_m)
        / np.asarray(copper_area_m2)
    )


# --------------------------------------------------------------------------- loss


def winding_loss_split(
    dc_resistance_ohm: ArrayLike,
    dc_current_A: ArrayLike,
    harmonic_amplitudes_A: ArrayLike,
    ac_factors: ArrayLike,
) -> tuple[FloatArray, FloatArray]:
    """Winding loss split into the DC part and the ripple (harmonic) part.

    Parameters
    ----------
    dc_resistance_ohm : array_like
        DC resistance, shape (...) [Ohm]
    dc_current_A : array_like
        Mean (DC) current, shape (...) [A]
    harmonic_amplitudes_A : array_like
        Peak amplitude of each current harmonic, harmonics along the last axis [A]
    ac_factors : array_like
        F_R at each harmonic's frequency, broadcasting with the amplitudes [-]

    Returns
    -------
    dc_W : ndarray
        R_dc I_dc^2 [W]
    ac_W : ndarray
        Sum over harmonics of R_dc F_R(n) I_n^2 / 2 [W]

    Notes
    -----
    .. math::

        P = R_{dc} I_{dc}^2 + \\sum_n R_{dc} F_R(n f_s) \\frac{\\hat I_n^2}{2}

    Harmonics are orthogonal, so their losses add.

    References
    ----------
    W. G. Hurley, E. Gath, J. G. Breslin, "Optimizing the AC resistance of multilayer
    transformer windings with arbitrary current waveforms", IEEE Transactions on Power
    Electronics, vol. 15, no. 2, pp. 369-376, 2000. DOI: 10.1109/63.838110
    """
    resistance = np.asarray(dc_resistance_ohm)
    amplitudes = np.asarray(harmonic_amplitudes_A)
    dc_W = resistance * np.square(dc_current_A)
    ac_W = 0.5 * resistance * np.sum(np.asarray(ac_factors) * (amplitudes * amplitudes), axis=-1)
    return dc_W, ac_W


def winding_loss(
    dc_resistance_ohm: ArrayLike,
    dc_current_A: ArrayLike,
    harmonic_amplitudes_A: ArrayLike,
    ac_factors: ArrayLike,
) -> FloatArray:
    """Total winding loss with DC and harmonic currents.

    Parameters
    ----------
    dc_resistance_ohm : array_like
        DC resistance, shape (...) [Ohm]
    dc_current_A : array_like
        Mean (DC) current, shape (...) [A]
    harmonic_amplitudes_A : array_like
        Peak amplitude of each current harmonic, harmonics along the last axis [A]
    ac_factors : array_like
        F_R at each harmonic's frequency, broadcasting with the amplitudes [-]

    Returns
    -------
    loss : ndarray
        Winding loss [W]

    Notes
    -----
    .. math::

        P = R_{dc} I_{dc}^2 + \\sum_n R_{dc} F_R(n f_s) \\frac{\\hat I_n^2}{2}

    References
    ----------
    W. G. Hurley, E. Gath, J. G. Breslin, "Optimizing the AC resistance of multilayer
    transformer windings with arbitrary current waveforms", IEEE Transactions on Power
    Electronics, vol. 15, no. 2, pp. 369-376, 2000. DOI: 10.1109/63.838110
    """
    dc_W, ac_W = winding_loss_split(
        dc_resistance_ohm, dc_current_A, harmonic_amplitudes_A, ac_factors
    )
    return dc_W + ac_W
