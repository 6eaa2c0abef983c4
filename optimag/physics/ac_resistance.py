"""AC resistance of windings: Dowell's factor for layers of foil or round wire, litz
bundles, and the harmonic form the loss sum uses.

AC-resistance functions accept a frequency array whose last axis holds the harmonics
``n * f_s`` of the current; pass ``harmonic_axis=True`` to have the per-candidate arguments
broadcast against the leading axes of that array. Plain numpy expressions in SI units;
validity checks cost one ``np.any`` per call and warn with `ValidityRangeWarning`.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray
from optimag.codes import WireKind
from optimag.errors import warn_outside_range
from optimag.physics.winding import FIT_SLACK, skin_depth
from optimag.registry import Registry, callable_entry

# --------------------------------------------------------------------------- AC factors


#: Below this Dowell's Delta the closed form is replaced by its Taylor series [-].
#: At 0.3 the series truncated after Delta^20 is exact to ~1e-20 and the closed form has
#: lost only a few tens of ulps to cancellation, so both sides of the switch agree.
DOWELL_SERIES_LIMIT = 0.3


def _with_harmonic_axis(harmonic_axis: bool, *arrays: ArrayLike) -> tuple[ArrayLike, ...]:
    # A trailing length-1 axis lets per-candidate arrays broadcast against (..., harmonics).
    if not harmonic_axis:
        return arrays
    return tuple(np.asarray(a, dtype=float)[..., np.newaxis] for a in arrays)


# Series of psi1 - 1 and psi2 in Delta^4 (first coefficient multiplies Delta^4), derived
# by symbolic expansion of the closed forms; truncation at Delta^24 leaves < 1e-20 at 0.3.
_PSI1_SERIES = (
    4.0 / 45.0,
    -16.0 / 4725.0,
    88448.0 / 638512875.0,
    -925952.0 / 162820783125.0,
    357603328.0 / 1531329465290625.0,
)
_PSI2_SERIES = (
    1.0 / 6.0,
    -17.0 / 2520.0,
    691.0 / 2494800.0,
    -929569.0 / 81729648000.0,
    221930581.0 / 475176173472000.0,
)


def _horner(x: FloatArray, coefficients: tuple[float, ...]) -> FloatArray:
    result = coefficients[-1]
    for coefficient in reversed(coefficients[:-1]):
        result = coefficient + x * result
    return result


def _dowell_terms(delta: ArrayLike) -> tuple[FloatArray, FloatArray]:
    """Return (psi1, psi2) with F_R = psi1 + (2/3)(m^2 - 1) psi2."""
    delta = np.asarray(delta, dtype=float)
    # Closed form rewritten with exp(-Delta) so that nothing overflows for large Delta;
    # it is evaluated at max(Delta, limit) so the unused branch never divides 0 by 0.
    x = np.maximum(delta, DOWELL_SERIES_LIMIT)
    e1 = np.exp(-x)
    e2 = e1 * e1
    s = np.sin(x)
    c = np.cos(x)
    sin2 = 2.0 * s * c
    cos2 = 1.0 - 2.0 * s * s
    psi1_closed = x * (1.0 - e2 * e2 + 2.0 * e2 * sin2) / (1.0 + e2 * e2 - 2.0 * e2 * cos2)
    psi2_closed = x * (1.0 - e2 - 2.0 * e1 * s) / (1.0 + e2 + 2.0 * e1 * c)

    # Clipped like x above, so that a huge Delta cannot overflow the unused series.
    d4 = np.minimum(delta, DOWELL_SERIES_LIMIT) ** 4
    psi1_series = 1.0 + d4 * _horner(d4, _PSI1_SERIES)
    psi2_series = d4 * _horner(d4, _PSI2_SERIES)

    small = delta < DOWELL_SERIES_LIMIT
    return np.where(small, psi1_series, psi1_closed), np.where(small, psi2_series, psi2_closed)


def dowell_factor(delta: ArrayLike, layers: ArrayLike) -> FloatArray:
    """AC-to-DC resistance ratio of an m-layer foil winding portion (Dowell).

    Parameters
    ----------
    delta : array_like
        Layer thickness over skin depth, Delta = h/delta, >= 0 [-]
    layers : array_like
        Layers m between the zero-field point and the peak field; may be non-integer,
        >= 0.5 (warns below 1) [-]

    Returns
    -------
    factor : ndarray
        F_R = R_ac / R_dc [-]

    Notes
    -----
    Dowell's eq. (for a portion of m layers, field zero on one side):

    .. math::

        F_R = \\Delta \\left[ \\frac{\\sinh 2\\Delta + \\sin 2\\Delta}
        {\\cosh 2\\Delta - \\cos 2\\Delta} + \\frac{2}{3}(m^2 - 1)
        \\frac{\\sinh\\Delta - \\sin\\Delta}{\\cosh\\Delta + \\cos\\Delta} \\right]

    Evaluated in the exactly equivalent form scaled by exp(-Delta) (no overflow; for large
    Delta it reduces to the limit Delta (2m^2 + 1)/3). Below Delta = 0.3 the Taylor series

    .. math::

        F_R = 1 + \\frac{5m^2 - 1}{45}\\Delta^4 + \\frac{21 - 85 m^2}{18900}\\Delta^8
        + \\left(\\frac{691 m^2}{3742200} - \\frac{21421}{464373000}\\right)\\Delta^{12}
        + \\dots

    carried to Delta^20 (derived here by symbolic expansion of the closed form) replaces
    it, avoiding cancellation.

    References
    ----------
    P. L. Dowell, "Effects of eddy currents in transformer windings", Proceedings of the
    IEE, vol. 113, no. 8, pp. 1387-1394, 1966. DOI: 10.1049/piee.1966.0236
    """
    layers = np.asarray(layers, dtype=float)
    warn_outside_range(layers < 1.0, "Dowell factor: fewer than one layer is outside the 1-D model")
    psi1, psi2 = _dowell_terms(delta)
    return psi1 + (2.0 / 3.0) * (layers * layers - 1.0) * psi2


def equivalent_foil_delta(
    diameter_m: ArrayLike,
    conductors_per_layer: ArrayLike,
    breadth_m: ArrayLike,
    skin_depth_m: ArrayLike,
) -> FloatArray:
    """Dowell's Delta for a layer of round wires treated as an equivalent foil.

    Parameters
    ----------
    diameter_m : array_like
        Bare copper diameter of one wire [m]
    conductors_per_layer : array_like
        Wires side by side in one layer [-]
    breadth_m : array_like
        Window (winding) breadth along which a layer runs [m]
    skin_depth_m : array_like
        Skin depth in the copper [m]

    Returns
    -------
    delta : ndarray
        Effective Delta = (h/delta) sqrt(eta) [-]

    Notes
    -----
    A round wire is replaced by a square of equal area, side h, and the layer by a foil of
    porosity (copper fraction along the breadth) eta:

    .. math::

        h = \\frac{\\sqrt{\\pi}}{2} d, \\quad \\eta = \\frac{N_l h}{b}, \\quad
        \\Delta = \\frac{h}{\\delta}\\sqrt{\\eta}

    Warns when eta > 1 (wires would overlap).

    References
    ----------
    J. A. Ferreira, "Improved analytical modeling of conductive losses in magnetic
    components", IEEE Transactions on Power Electronics, vol. 9, no. 1, pp. 127-131, 1994.
    DOI: 10.1109/63.285503.
    R. W. Erickson, D. Maksimovic, Fundamentals of Power Electronics, 2nd ed., Kluwer,
    2001, ch. 13 (form used here).
    """
    side = (math.sqrt(math.pi) / 2.0) * np.asarray(diameter_m)
    porosity = np.asarray(conductors_per_layer) * side / np.asarray(breadth_m)
    warn_outside_range(porosity > 1.0 + FIT_SLACK,
                       "equivalent foil: porosity above 1 (wires overlap)")
    return side / np.asarray(skin_depth_m) * np.sqrt(porosity)


def litz_outside_range(
    strand_diameter_m: ArrayLike, frequency_Hz: ArrayLike, resistivity_ohm_m: ArrayLike
) -> BoolArray:
    """True where litz strands are thicker than the skin depth, beyond the low-frequency
    strand model of `litz_factor` (Sullivan).

    Parameters
    ----------
    strand_diameter_m : array_like  Bare strand diameter [m]
    frequency_Hz : array_like  Frequency [Hz]
    resistivity_ohm_m : array_like  Copper resistivity [ohm m]

    Returns
    -------
    ndarray of bool
    """
    return np.asarray(strand_diameter_m) > skin_depth(frequency_Hz, resistivity_ohm_m)


def litz_factor(
    strands: ArrayLike,
    turns: ArrayLike,
    strand_diameter_m: ArrayLike,
    breadth_m: ArrayLike,
    skin_depth_m: ArrayLike,
    k: ArrayLike = 1.0,
) -> FloatArray:
    """AC-to-DC resistance ratio of a litz winding from strand-level proximity loss.

    Parameters
    ----------
    strands : array_like
        Strands per bundle n [-]
    turns : array_like
        Turns N [-]
    strand_diameter_m : array_like
        Bare strand diameter d_c [m]
    breadth_m : array_like
        Breadth of the winding window b_c [m]
    skin_depth_m : array_like
        Skin depth in the copper [m]
    k : array_like, optional
        Field-distribution factor; 1 when the field is zero at one edge of the winding [-]

    Returns
    -------
    factor : ndarray
        F_r = R_ac / R_dc [-]

    Notes
    -----
    Low-frequency approximation (strands thin against the skin depth), Sullivan's eq.:

    .. math:: F_r = 1 + \\frac{(\\pi n N)^2 d_c^6 k}{192\\, \\delta^4 b_c^2}

    Warns where d_c > delta, where the approximation no longer holds.

    References
    ----------
    C. R. Sullivan, "Optimal choice for number of strands in a litz-wire transformer
    winding", IEEE Transactions on Power Electronics, vol. 14, no. 2, pp. 283-291, 1999.
    DOI: 10.1109/63.750181
    """
    strand_diameter_m = np.asarray(strand_diameter_m)
    skin_depth_m = np.asarray(skin_depth_m)
    warn_outside_range(
        strand_diameter_m > skin_depth_m,
        "litz factor: strand diameter above skin depth, low-frequency model not valid",
    )
    strand_turns = math.pi * np.asarray(strands) * np.asarray(turns)
    d3 = strand_diameter_m**3
    return 1.0 + (strand_turns * strand_turns) * (d3 * d3) * np.asarray(k) / (
        192.0 * skin_depth_m**4 * np.asarray(breadth_m) ** 2
    )


def round_wire_ac_factor(
    frequency_Hz: ArrayLike,
    resistivity_ohm_m: ArrayLike,
    diameter_m: ArrayLike,
    conductors_per_layer: ArrayLike,
    breadth_m: ArrayLike,
    layers: ArrayLike,
    *,
    harmonic_axis: bool = False,
) -> FloatArray:
    """AC factor of a round-wire winding: Dowell through the equivalent foil.

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency, or harmonic frequencies along the last axis [Hz]
    resistivity_ohm_m : array_like
        Copper resistivity [Ohm m]
    diameter_m : array_like
        Bare copper diameter [m]
    conductors_per_layer : array_like
        Wires side by side in one layer [-]
    breadth_m : array_like
        Window breadth [m]
    layers : array_like
        Layers of the winding [-]
    harmonic_axis : bool, optional
        If True, the last axis of `frequency_Hz` is harmonics and every other argument gets
        a trailing length-1 axis to broadcast against it [-]

    Returns
    -------
    factor : ndarray
        F_R = R_ac / R_dc per frequency [-]

    Notes
    -----
    Delta from `equivalent_foil_delta`, then `dowell_factor` with m = layers (an inductor
    winding: field zero on the core side, peak on the outside).

    References
    ----------
    P. L. Dowell, Proceedings of the IEE, 113(8), 1966. DOI: 10.1049/piee.1966.0236.
    J. A. Ferreira, IEEE Transactions on Power Electronics, 9(1), 1994.
    DOI: 10.1109/63.285503
    """
    resistivity_ohm_m, diameter_m, conductors_per_layer, breadth_m, layers = _with_harmonic_axis(
        harmonic_axis, resistivity_ohm_m, diameter_m, conductors_per_layer, breadth_m, layers
    )
    delta = equivalent_foil_delta(
        diameter_m, conductors_per_layer, breadth_m, skin_depth(frequency_Hz, resistivity_ohm_m)
    )
    return dowell_factor(delta, layers)


def foil_ac_factor(
    frequency_Hz: ArrayLike,
    resistivity_ohm_m: ArrayLike,
    thickness_m: ArrayLike,
    layers: ArrayLike,
    *,
    harmonic_axis: bool = False,
) -> FloatArray:
    """AC factor of a foil winding (Dowell with Delta = t/delta).

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency, or harmonic frequencies along the last axis [Hz]
    resistivity_ohm_m : array_like
        Copper resistivity [Ohm m]
    thickness_m : array_like
        Foil thickness [m]
    layers : array_like
        Foil layers (turns times parallel foils) [-]
    harmonic_axis : bool, optional
        If True, the last axis of `frequency_Hz` is harmonics (see `round_wire_ac_factor`)
        [-]

    Returns
    -------
    factor : ndarray
        F_R = R_ac / R_dc per frequency [-]

    Notes
    -----
    .. math:: \\Delta = t / \\delta, \\quad F_R = F_{Dowell}(\\Delta, m)

    Porosity 1 is assumed: the foil fills the window breadth (common practice, no source).

    References
    ----------
    P. L. Dowell, "Effects of eddy currents in transformer windings", Proceedings of the
    IEE, vol. 113, no. 8, pp. 1387-1394, 1966. DOI: 10.1049/piee.1966.0236
    """
    resistivity_ohm_m, thickness_m, layers = _with_harmonic_axis(
        harmonic_axis, resistivity_ohm_m, thickness_m, layers
    )
    delta = np.asarray(thickness_m) / skin_depth(frequency_Hz, resistivity_ohm_m)
    return dowell_factor(delta, layers)


def litz_ac_factor(
    frequency_Hz: ArrayLike,
    resistivity_ohm_m: ArrayLike,
    strands: ArrayLike,
    turns: ArrayLike,
    strand_diameter_m: ArrayLike,
    breadth_m: ArrayLike,
    *,
    harmonic_axis: bool = False,
) -> FloatArray:
    """AC factor of a litz winding (Sullivan's strand-level proximity factor).

    Parameters
    ----------
    frequency_Hz : array_like
        Frequency, or harmonic frequencies along the last axis [Hz]
    resistivity_ohm_m : array_like
        Copper resistivity [Ohm m]
    strands : array_like
        Strands per bundle [-]
    turns : array_like
        Turns [-]
    strand_diameter_m : array_like
        Bare strand diameter [m]
    breadth_m : array_like
        Window breadth [m]
    harmonic_axis : bool, optional
        If True, the last axis of `frequency_Hz` is harmonics (see `round_wire_ac_factor`)
        [-]

    Returns
    -------
    factor : ndarray
        F_r = R_ac / R_dc per frequency [-]

    Notes
    -----
    `litz_factor` with k = 1 and the skin depth at each frequency.

    References
    ----------
    C. R. Sullivan, "Optimal choice for number of strands in a litz-wire transformer
    winding", IEEE Transactions on Power Electronics, vol. 14, no. 2, pp. 283-291, 1999.
    DOI: 10.1109/63.750181
    """
    resistivity_ohm_m, strands, turns, strand_diameter_m, breadth_m = _with_harmonic_axis(
        harmonic_axis, resistivity_ohm_m, strands, turns, strand_diameter_m, breadth_m
    )
    return litz_factor(
        strands,
        turns,
        strand_diameter_m,
        breadth_m,
        skin_depth(frequency_Hz, resistivity_ohm_m),
    )


# --------------------------------------------------------------------------- registry


class WindingAC(NamedTuple):
    """What an AC-resistance model knows of each winding, one row per winding, each a
    column of shape (n, 1) (the harmonics run along the frequency array's last axis).

    kind : `optimag.codes.WireKind` code (round, litz, foil) [-]
    bare_diameter_m : copper diameter of a round wire [m]
    strands : strands of a litz bundle [-]
    strand_diameter_m : copper diameter of one litz strand [m]
    foil_thickness_m : copper thickness of a foil [m]
    turns_per_layer : turns in one layer [-]
    layers : layers of the winding [-]
    turns : turns of the winding [-]
    parallel : conductors wound in parallel [-]
    breadth_m : winding breadth (bobbin width along the layer) [m]
    """

    kind: FloatArray
    bare_diameter_m: FloatArray
    strands: FloatArray
    strand_diameter_m: FloatArray
    foil_thickness_m: FloatArray
    turns_per_layer: FloatArray
    layers: FloatArray
    turns: FloatArray
    parallel: FloatArray
    breadth_m: FloatArray


def layered_ac_factor(frequency_Hz: ArrayLike, resistivity_ohm_m: float,
                      winding: WindingAC) -> FloatArray:
    """AC resistance factor per harmonic by conductor kind: Dowell's layer model for round
    wire (`round_wire_ac_factor`) and foil (`foil_ac_factor`), the strand-level proximity
    factor for litz (`litz_ac_factor`, the parallel bundles as one bundle).

    Parameters
    ----------
    frequency_Hz : array_like
        Harmonic frequencies, shape (1, H) or (n, H) [Hz].
    resistivity_ohm_m : float
        Copper resistivity [ohm m].
    winding : WindingAC
        The windings, columns of shape (n, 1) [see `WindingAC`].

    Returns
    -------
    ndarray
        R_ac / R_dc per winding and harmonic, shape (n, H) [-].
    """
    freq = np.asarray(frequency_Hz, dtype=float)
    kind = np.asarray(winding.kind).reshape(-1)
    out = np.empty((len(kind), freq.shape[-1]))
    w = winding
    for code in np.unique(kind):
        sel = kind == code
        if code == WireKind.ROUND:
            out[sel] = round_wire_ac_factor(
                freq, resistivity_ohm_m, w.bare_diameter_m[sel], w.turns_per_layer[sel],
                w.breadth_m[sel], w.layers[sel],
            )
        elif code == WireKind.LITZ:
            out[sel] = litz_ac_factor(
                freq, resistivity_ohm_m, w.strands[sel] * w.parallel[sel], w.turns[sel],
                w.strand_diameter_m[sel], w.breadth_m[sel],
            )
        else:
            out[sel] = foil_ac_factor(freq, resistivity_ohm_m, w.foil_thickness_m[sel],
                                      w.layers[sel])
    return out


#: AC-resistance models by name, chosen by a study's ``[model] ac_resistance``: called as
#: ``model(frequency_Hz, resistivity_ohm_m, winding)`` like `layered_ac_factor`, returning
#: R_ac / R_dc of shape (n, H).
AC_RESISTANCE_MODELS: Registry = Registry("AC resistance", "model.ac_resistance",
                                          callable_entry)
AC_RESISTANCE_MODELS.register("dowell", layered_ac_factor)
