"""Magnetic circuit of a gapped or distributed-gap inductor core.

Pure vectorised numpy functions: every argument may be a scalar or an array and
arguments broadcast against each other. SI units throughout.

The air-gap reluctance models form a small registry (`GAP_RELUCTANCE_MODELS`) of
`GapModel` entries (reluctance with its slope, a bracketing bound, a range test) so
that `gap_for_inductance` solves any of them with one safeguarded Newton loop.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt
from scipy.special import hyp2f1

from optimag.constants import MU0
from optimag.errors import ValidityRangeWarning

FloatArray = npt.NDArray[np.float64]

__all__ = [
    "GAP_RELUCTANCE_MODELS",
    "GapGeometry",
    "GapModel",
    "al_value",
    "bsat_at_temperature",
    "core_reluctance",
    "flux_density",
    "fringing_factor_mclyman",
    "gap_for_inductance",
    "gap_reluctance",
    "gap_reluctance_ideal",
    "gap_reluctance_mclyman",
    "gap_reluctance_muhlethaler",
    "inductance",
    "powder_flux_density",
    "powder_inductance",
    "powder_permeability_fraction",
]

_TWO_OVER_PI = 2.0 / np.pi

#: Temperatures [degC] beyond which a straight line through the 25 and 100 degC
#: saturation values is no longer a fair guess (ferrite Curie points lie near
#: 200-300 degC). Common practice, no source.
BSAT_TEMPERATURE_RANGE_C = (-55.0, 150.0)


def _warn_if(condition: FloatArray | np.bool_ | bool, message: str) -> None:
    if np.any(condition):
        warnings.warn(message, ValidityRangeWarning, stacklevel=3)


# --------------------------------------------------------------------------- linear circuit


def core_reluctance(le_m: npt.ArrayLike, ae_m2: npt.ArrayLike, mu_r: npt.ArrayLike) -> FloatArray:
    """Reluctance of a magnetic core path of uniform section.

    Parameters
    ----------
    le_m : array_like
        Effective magnetic path length [m].
    ae_m2 : array_like
        Effective cross-sectional area [m^2].
    mu_r : array_like
        Relative permeability of the core material [1].

    Returns
    -------
    ndarray
        Core reluctance [A/Wb] (= 1/H).

    Notes
    -----
    .. math:: \\mathcal{R}_c = \\frac{l_e}{\\mu_0 \\mu_r A_e}

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011, ch. "Magnetic materials and their characteristics".
       DOI: 10.1201/b10865 (from memory).
    """
    return np.asarray(le_m, dtype=float) / (MU0 * np.asarray(mu_r) * np.asarray(ae_m2))


def gap_reluctance_ideal(gap_m: npt.ArrayLike, area_m2: npt.ArrayLike) -> FloatArray:
    """Reluctance of an air gap whose flux stays inside the gap's face area.

    Parameters
    ----------
    gap_m : array_like
        Air-gap length [m].
    area_m2 : array_like
        Area of the pole faces bounding the gap [m^2].

    Returns
    -------
    ndarray
        Gap reluctance without fringing [A/Wb].

    Notes
    -----
    .. math:: \\mathcal{R}_g = \\frac{l_g}{\\mu_0 A}

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011. DOI: 10.1201/b10865 (from memory).
    """
    return np.asarray(gap_m, dtype=float) / (MU0 * np.asarray(area_m2))


def fringing_factor_mclyman(
    gap_m: npt.ArrayLike, ae_m2: npt.ArrayLike, winding_length_m: npt.ArrayLike
) -> FloatArray:
    """Fringing-flux factor of a gapped core, McLyman's form.

    Parameters
    ----------
    gap_m : array_like
        Air-gap length, >= 0 [m].
    ae_m2 : array_like
        Core cross-sectional area at the gap, > 0 [m^2].
    winding_length_m : array_like
        Winding length G (window height along the gapped leg), > 0 [m].

    Returns
    -------
    ndarray
        Fringing factor F >= 1 [1]; the gap reluctance is divided by it.

    Notes
    -----
    .. math:: F = 1 + \\frac{l_g}{\\sqrt{A_c}} \\ln\\frac{2 G}{l_g}

    The limit for :math:`l_g \\to 0` is 1 (``l ln(1/l) -> 0``) and is returned
    exactly. Past :math:`l_g = 2G` the logarithm turns negative; the factor is held
    at 1 there so that it never lowers the effective area. A
    `ValidityRangeWarning` is emitted when :math:`l_g > G` or
    :math:`l_g > \\sqrt{A_c}`, where the single-logarithm fit has no support
    (bounds chosen here, not taken from the source).

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011, ch. "Inductor design fundamentals" (fringing flux).
       DOI: 10.1201/b10865 (from memory).
    """
    gap = np.asarray(gap_m, dtype=float)
    ae = np.asarray(ae_m2, dtype=float)
    window = np.asarray(winding_length_m, dtype=float)
    side = np.sqrt(ae)
    _warn_if(
        _mclyman_outside(gap, GapGeometry(ae, window, side, side)),
        "McLyman fringing factor used with a gap longer than the winding length or "
        "the core's side; the estimate is unsupported there",
    )
    return _fringing_factor_mclyman(gap, side, window)


def _fringing_factor_mclyman(gap: FloatArray, side: FloatArray, window: FloatArray) -> FloatArray:
    # np.where keeps gap = 0 out of the logarithm: the limit is exactly 1.
    safe_gap = np.where(gap > 0.0, gap, 1.0)
    # Difference of logarithms stays finite for subnormal gaps where 2G/lg overflows.
    log_term = np.maximum(np.log(2.0 * window) - np.log(safe_gap), 0.0)
    return 1.0 + np.where(gap > 0.0, gap, 0.0) / side * log_term


def _mclyman_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    side = np.sqrt(geometry.ae_m2)
    fringing = _fringing_factor_mclyman(gap, side, geometry.winding_length_m)
    safe_gap = np.where(gap > 0.0, gap, 1.0)
    log_ratio = np.log(2.0 * geometry.winding_length_m) - np.log(safe_gap)
    # d/dlg [lg / F] = (F - lg F') / F^2 with F' = (ln(2G/lg) - 1)/sqrt(Ac) while the
    # logarithm is positive, 0 where F is held at 1.
    fringing_slope = np.where(log_ratio > 0.0, (log_ratio - 1.0) / side, 0.0)
    numerator = fringing - np.where(gap > 0.0, gap, 0.0) * fringing_slope
    reluctance = gap / (MU0 * geometry.ae_m2 * fringing)
    slope = numerator / (MU0 * geometry.ae_m2 * fringing * fringing)
    return reluctance, slope


def gap_reluctance_mclyman(
    gap_m: npt.ArrayLike, ae_m2: npt.ArrayLike, winding_length_m: npt.ArrayLike
) -> FloatArray:
    """Gap reluctance corrected for fringing with McLyman's factor.

    Parameters
    ----------
    gap_m : array_like
        Air-gap length, >= 0 [m].
    ae_m2 : array_like
        Core cross-sectional area at the gap, > 0 [m^2].
    winding_length_m : array_like
        Winding length G (window height along the gapped leg), > 0 [m].

    Returns
    -------
    ndarray
        Gap reluctance [A/Wb].

    Notes
    -----
    .. math:: \\mathcal{R}_g = \\frac{l_g}{\\mu_0 A_c F}, \\quad
              F = 1 + \\frac{l_g}{\\sqrt{A_c}} \\ln\\frac{2 G}{l_g}

    See `fringing_factor_mclyman` for the range checks.

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011, ch. "Inductor design fundamentals" (fringing flux).
       DOI: 10.1201/b10865 (from memory).
    """
    gap = np.asarray(gap_m, dtype=float)
    ae = np.asarray(ae_m2, dtype=float)
    return gap / (MU0 * ae * fringing_factor_mclyman(gap, ae, winding_length_m))


def _muhlethaler_fringe_width(gap: FloatArray, winding_length: FloatArray) -> FloatArray:
    """Widening of the gap face per edge pair, lg * (2/pi)(1 + ln(pi G / (4 lg))) [m]."""
    safe_gap = np.where(gap > 0.0, gap, 1.0)
    log_ratio = np.log(0.25 * np.pi * winding_length) - np.log(safe_gap)
    edge_term = _TWO_OVER_PI * (1.0 + log_ratio)
    # A negative edge conductance would mean the formula left its range (h << l);
    # clamping keeps the fringing coefficient <= 1.
    return np.where(gap > 0.0, gap, 0.0) * np.maximum(edge_term, 0.0)


def _muhlethaler_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    width, depth, window = geometry.leg_width_m, geometry.leg_depth_m, geometry.winding_length_m
    widening = _muhlethaler_fringe_width(gap, window)
    safe_gap = np.where(gap > 0.0, gap, 1.0)
    log_ratio = np.log(0.25 * np.pi * window) - np.log(safe_gap)
    # d(widening)/d lg = (2/pi) ln(pi G / (4 lg)) while the edge term is positive.
    widening_slope = np.where(1.0 + log_ratio > 0.0, _TWO_OVER_PI * log_ratio, 0.0)
    eff_width = width + widening
    eff_depth = depth + widening
    conductance = MU0 * eff_width * eff_depth
    reluctance = gap / conductance
    slope = (1.0 - gap * widening_slope * (1.0 / eff_width + 1.0 / eff_depth)) / conductance
    return reluctance, slope


def gap_reluctance_muhlethaler(
    gap_m: npt.ArrayLike,
    leg_width_m: npt.ArrayLike,
    leg_depth_m: npt.ArrayLike,
    winding_length_m: npt.ArrayLike,
) -> FloatArray:
    """Reluctance of a gap in the middle of a rectangular leg, 2-D basic reluctances.

    The gap separates two core halves; it sits half-way along a winding window of
    height G, so each pole face has a free side face of height h = G/2 above it.

    Parameters
    ----------
    gap_m : array_like
        Total air-gap length l_g between the two core halves, >= 0 [m].
    leg_width_m : array_like
        Leg width w (across the window) [m].
    leg_depth_m : array_like
        Leg depth d (along the stack) [m].
    winding_length_m : array_like
        Winding length G, the window height along the gapped leg [m].

    Returns
    -------
    ndarray
        Gap reluctance including fringing [A/Wb].

    Notes
    -----
    Basic 2-D reluctance per unit depth of a pole edge of half-width w/2 facing a
    plane at distance l, with a side face of height h (paper's basic element,
    Schwarz-Christoffel solution):

    .. math:: \\mathcal{R}'_{basic} = \\frac{1}{\\mu_0 \\left[\\frac{w}{2l}
              + \\frac{2}{\\pi}\\left(1 + \\ln\\frac{\\pi h}{4 l}\\right)\\right]}

    A gap between two cores is symmetric about its mid-plane and about the leg's
    centre line: two quarter elements (l = l_g/2, h = G/2) in series, two in
    parallel, so the 2-D reluctance per depth is :math:`\\mathcal{R}'_{basic}`
    itself. Per direction the fringing coefficient is
    :math:`\\sigma = \\mathcal{R}' / (l_g/(\\mu_0 w))` and

    .. math:: \\mathcal{R}_{3D} = \\sigma_x \\sigma_y \\frac{l_g}{\\mu_0 w d}
              = \\frac{l_g}{\\mu_0 (w + \\delta)(d + \\delta)}, \\quad
              \\delta = l_g \\frac{2}{\\pi}\\left(1 + \\ln\\frac{\\pi G}{4 l_g}\\right)

    The same side height is used in both directions. The basic formula is the
    paper's; the series/parallel combination for this case and the choice h = G/2
    are derived here from symmetry and not confirmed against the paper's text.
    The edge term is clamped at 0 (so :math:`\\sigma \\le 1`) and a
    `ValidityRangeWarning` is emitted when :math:`l_g > G` or
    :math:`l_g > \\min(w, d)` (bounds chosen here: the derivation assumes side
    faces and pole faces long against the gap). Round legs: pass the side of the
    square of equal area as both w and d.

    References
    ----------
    .. [1] J. Mühlethaler, J. W. Kolar, A. Ecklebe, "A novel approach for 3D air gap
       reluctance calculations", 8th International Conference on Power Electronics
       (ICPE 2011 - ECCE Asia), Jeju, 2011, pp. 446-452.
       DOI: 10.1109/ICPE.2011.5944575 (DOI and pages from memory).
    """
    gap = np.asarray(gap_m, dtype=float)
    width = np.asarray(leg_width_m, dtype=float)
    depth = np.asarray(leg_depth_m, dtype=float)
    window = np.asarray(winding_length_m, dtype=float)
    _warn_if(
        _muhlethaler_outside(gap, GapGeometry(width * depth, window, width, depth)),
        "Muehlethaler gap reluctance used with a gap longer than the winding length or "
        "the leg's side; the 2-D basic reluctance is unsupported there",
    )
    widening = _muhlethaler_fringe_width(gap, window)
    return gap / (MU0 * (width + widening) * (depth + widening))


# --------------------------------------------------------------------------- model registry


@dataclass(frozen=True)
class GapGeometry:
    """Geometry a gap-reluctance model may need (arrays broadcast together).

    Parameters
    ----------
    ae_m2 : core cross-sectional area at the gap [m^2]
    winding_length_m : winding length G along the gapped leg [m]
    leg_width_m : leg width w [m]
    leg_depth_m : leg depth d [m]
    """

    ae_m2: FloatArray
    winding_length_m: FloatArray
    leg_width_m: FloatArray
    leg_depth_m: FloatArray


def _ideal_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    slope = 1.0 / (MU0 * geometry.ae_m2)
    return gap * slope, np.broadcast_to(slope, np.broadcast(gap, slope).shape)


def _ideal_area_bound(geometry: GapGeometry) -> FloatArray:
    return geometry.ae_m2


def _mclyman_area_bound(geometry: GapGeometry) -> FloatArray:
    # lg ln(2G/lg) peaks at lg = 2G/e, so F <= 1 + 2G / (e sqrt(Ac)).
    side = np.sqrt(geometry.ae_m2)
    return geometry.ae_m2 * (1.0 + 2.0 * geometry.winding_length_m / (np.e * side))


def _muhlethaler_area_bound(geometry: GapGeometry) -> FloatArray:
    # lg (2/pi)(1 + ln(pi G/(4 lg))) peaks at lg = pi G/4 with the value G/2.
    half_window = 0.5 * geometry.winding_length_m
    return (geometry.leg_width_m + half_window) * (geometry.leg_depth_m + half_window)


def _mclyman_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    return (gap > geometry.winding_length_m) | (gap * gap > geometry.ae_m2)


def _muhlethaler_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    shortest_side = np.minimum(geometry.leg_width_m, geometry.leg_depth_m)
    return (gap > geometry.winding_length_m) | (gap > shortest_side)


def _never_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    return np.zeros(np.shape(gap), dtype=bool)


@dataclass(frozen=True)
class GapModel:
    """One gap-reluctance model as used by `gap_for_inductance`.

    Parameters
    ----------
    reluctance_and_slope : ``(gap [m], geometry) -> (R [A/Wb], dR/dgap [A/(Wb m)])``,
        without range warnings
    face_area_bound : ``geometry -> A_max [m^2]`` with R(lg) >= lg / (mu0 A_max) for
        every gap, which brackets the solution from above
    outside_range : ``(gap [m], geometry) -> bool array`` marking gaps the model does
        not support
    """

    reluctance_and_slope: Callable[[FloatArray, GapGeometry], tuple[FloatArray, FloatArray]]
    face_area_bound: Callable[[GapGeometry], FloatArray]
    outside_range: Callable[[FloatArray, GapGeometry], FloatArray]


#: Gap-reluctance models by the name given to `gap_for_inductance`.
GAP_RELUCTANCE_MODELS: dict[str, GapModel] = {
    "ideal": GapModel(_ideal_reluctance_and_slope, _ideal_area_bound, _never_outside),
    "mclyman": GapModel(_mclyman_reluctance_and_slope, _mclyman_area_bound, _mclyman_outside),
    "muhlethaler": GapModel(
        _muhlethaler_reluctance_and_slope, _muhlethaler_area_bound, _muhlethaler_outside
    ),
}

_NEWTON_MAX_STEPS = 60
_RELATIVE_TOLERANCE = 1e-12


def gap_reluctance(
    gap_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    winding_length_m: npt.ArrayLike,
    leg_width_m: npt.ArrayLike,
    leg_depth_m: npt.ArrayLike,
    model: str = "mclyman",
) -> FloatArray:
    """Gap reluctance by the model named in `GAP_RELUCTANCE_MODELS`.

    Parameters
    ----------
    gap_m : array_like
        Air-gap length, >= 0 [m]
    ae_m2 : array_like
        Core cross-sectional area at the gap [m^2]
    winding_length_m : array_like
        Winding length G along the gapped leg [m]
    leg_width_m : array_like
        Gapped-leg width [m]
    leg_depth_m : array_like
        Gapped-leg depth [m]
    model : str
        "ideal", "mclyman" or "muhlethaler" [-]

    Returns
    -------
    reluctance : ndarray
        Gap reluctance [A/Wb]

    Notes
    -----
    Dispatches to the same registry entry that `gap_for_inductance` inverts, so a gap
    solved with one model gives back its inductance with the same model; no range warning
    (the named functions `gap_reluctance_ideal`, `gap_reluctance_mclyman` and
    `gap_reluctance_muhlethaler` warn).

    References
    ----------
    As for the named functions.
    """
    geometry = GapGeometry(
        np.asarray(ae_m2, dtype=float), np.asarray(winding_length_m, dtype=float),
        np.asarray(leg_width_m, dtype=float), np.asarray(leg_depth_m, dtype=float),
    )
    reluctance, _ = GAP_RELUCTANCE_MODELS[model].reluctance_and_slope(
        np.asarray(gap_m, dtype=float), geometry
    )
    return reluctance


def gap_for_inductance(
    turns: npt.ArrayLike,
    inductance_H: npt.ArrayLike,
    le_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    mu_r: npt.ArrayLike,
    winding_length_m: npt.ArrayLike,
    fringing: str = "mclyman",
    leg_width_m: npt.ArrayLike | None = None,
    leg_depth_m: npt.ArrayLike | None = None,
) -> FloatArray:
    """Air-gap length that gives a wanted inductance with a given number of turns.

    Parameters
    ----------
    turns : array_like
        Number of turns N, > 0 [1].
    inductance_H : array_like
        Wanted inductance, > 0 [H].
    le_m : array_like
        Effective magnetic path length of the core [m].
    ae_m2 : array_like
        Core cross-sectional area (also the gap face area) [m^2].
    mu_r : array_like
        Relative permeability of the core material [1].
    winding_length_m : array_like
        Winding length G along the gapped leg [m].
    fringing : {"ideal", "mclyman", "muhlethaler"}
        Gap reluctance model (keys of `GAP_RELUCTANCE_MODELS`).
    leg_width_m, leg_depth_m : array_like, optional
        Leg sides for "muhlethaler" [m]; default the side of the square of area Ae.

    Returns
    -------
    ndarray
        Gap length [m]; NaN where the core alone already has more reluctance than
        N^2/L (the target cannot be reached by gapping).

    Notes
    -----
    Solves :math:`\\mathcal{R}_g(l_g) = N^2/L - \\mathcal{R}_c`. The ideal model
    is inverted in closed form, :math:`l_g = \\mu_0 A_e (N^2/L - \\mathcal{R}_c)`.
    Every fringing model lowers the reluctance, so that :math:`l_g` is a lower
    bracket; an upper bracket follows from the largest widening the model can give.
    Inside that bracket a Newton step on the analytic slope is taken, falling back
    to bisection whenever it leaves the bracket; the loop stops when every element
    meets a relative reluctance tolerance of 1e-12 (at most 60 steps). The gap
    reluctance grows monotonically with the gap for both fringing models in their
    range of validity. A `ValidityRangeWarning` is emitted when a solution lies
    outside the chosen model's range.

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011. DOI: 10.1201/b10865 (from memory).
    .. [2] J. Mühlethaler, J. W. Kolar, A. Ecklebe, "A novel approach for 3D air gap
       reluctance calculations", ICPE 2011 - ECCE Asia, 2011.
       DOI: 10.1109/ICPE.2011.5944575 (DOI and pages from memory).
    """
    if fringing not in GAP_RELUCTANCE_MODELS:
        raise ValueError(
            f"unknown fringing model {fringing!r}; choose one of {sorted(GAP_RELUCTANCE_MODELS)}"
        )
    ae = np.asarray(ae_m2, dtype=float)
    side = np.sqrt(ae)
    geometry = GapGeometry(
        ae_m2=ae,
        winding_length_m=np.asarray(winding_length_m, dtype=float),
        leg_width_m=side if leg_width_m is None else np.asarray(leg_width_m, dtype=float),
        leg_depth_m=side if leg_depth_m is None else np.asarray(leg_depth_m, dtype=float),
    )
    turns_arr = np.asarray(turns, dtype=float)
    target = turns_arr * turns_arr / np.asarray(inductance_H, dtype=float) - core_reluctance(
        le_m, ae, mu_r
    )
    reachable = target >= 0.0
    target = np.where(reachable, target, 0.0)

    model = GAP_RELUCTANCE_MODELS[fringing]
    lower = MU0 * ae * target
    if fringing == "ideal":
        # closed form: no fringing means R_g = lg / (mu0 Ae) exactly
        return np.where(reachable, lower, np.nan)
    gap = _solve_gap(target, lower, model, geometry)
    _warn_if(
        model.outside_range(gap, geometry),
        f"gap_for_inductance: the {fringing} gap model is used outside its range",
    )
    return np.where(reachable, gap, np.nan)


def _solve_gap(
    target: FloatArray, lower: FloatArray, model: GapModel, geometry: GapGeometry
) -> FloatArray:
    upper = MU0 * model.face_area_bound(geometry) * target
    shape = np.broadcast(target, lower, upper, *vars(geometry).values()).shape
    lower = np.broadcast_to(lower, shape).copy()
    upper = np.broadcast_to(upper, shape).copy()
    target = np.broadcast_to(target, shape)
    gap = lower.copy()
    tolerance = _RELATIVE_TOLERANCE * target
    for _ in range(_NEWTON_MAX_STEPS):
        reluctance, slope = model.reluctance_and_slope(gap, geometry)
        residual = reluctance - target
        converged = np.abs(residual) <= tolerance
        if np.all(converged):
            break
        too_long = residual > 0.0
        np.copyto(upper, gap, where=too_long)
        np.copyto(lower, gap, where=~too_long)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = gap - residual / slope
        inside = (newton >= lower) & (newton <= upper)
        # Converged elements stay put: a bisection step would throw them off again.
        step = np.where(inside, newton, 0.5 * (lower + upper))
        gap = np.where(converged, gap, step)
    return gap


def inductance(turns: npt.ArrayLike, total_reluctance: npt.ArrayLike) -> FloatArray:
    """Inductance of a winding on a magnetic circuit.

    Parameters
    ----------
    turns : array_like
        Number of turns N [1].
    total_reluctance : array_like
        Reluctance of the whole flux path (core + gap) [A/Wb].

    Returns
    -------
    ndarray
        Inductance [H].

    Notes
    -----
    .. math:: L = \\frac{N^2}{\\mathcal{R}}

    References
    ----------
    .. [1] R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*,
       3rd ed., Springer, 2020, ch. "Basic magnetics theory".
       DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    turns_arr = np.asarray(turns, dtype=float)
    return turns_arr * turns_arr / np.asarray(total_reluctance)


def al_value(total_reluctance: npt.ArrayLike) -> FloatArray:
    """Inductance factor A_L of a core (inductance per turn squared).

    Parameters
    ----------
    total_reluctance : array_like
        Reluctance of the whole flux path (core + gap) [A/Wb].

    Returns
    -------
    ndarray
        A_L [H/turn^2].

    Notes
    -----
    .. math:: A_L = \\frac{L}{N^2} = \\frac{1}{\\mathcal{R}}

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011. DOI: 10.1201/b10865 (from memory).
    """
    return 1.0 / np.asarray(total_reluctance, dtype=float)


def flux_density(
    turns: npt.ArrayLike,
    current_A: npt.ArrayLike,
    total_reluctance: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
) -> FloatArray:
    """Flux density in a linear magnetic circuit.

    Parameters
    ----------
    turns : array_like
        Number of turns N [1].
    current_A : array_like
        Winding current [A].
    total_reluctance : array_like
        Reluctance of the whole flux path [A/Wb].
    ae_m2 : array_like
        Core cross-sectional area [m^2].

    Returns
    -------
    ndarray
        Flux density [T].

    Notes
    -----
    .. math:: B = \\frac{\\Phi}{A_e} = \\frac{N I}{\\mathcal{R} A_e}

    References
    ----------
    .. [1] R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*,
       3rd ed., Springer, 2020, ch. "Basic magnetics theory".
       DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    return (
        np.asarray(turns, dtype=float)
        * np.asarray(current_A)
        / (np.asarray(total_reluctance) * np.asarray(ae_m2))
    )


# --------------------------------------------------------------------------- powder cores


def powder_permeability_fraction(
    h_A_per_m: npt.ArrayLike, a: npt.ArrayLike, b: npt.ArrayLike, c: npt.ArrayLike
) -> FloatArray:
    """Incremental permeability of a powder core as a fraction of its initial value.

    Parameters
    ----------
    h_A_per_m : array_like
        DC magnetising field H (its magnitude is used) [A/m].
    a : array_like
        Fit coefficient, > 0; 1 for a fit normalised to mu_i [1].
    b : array_like
        Fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        mu(H)/mu_i [1].

    Notes
    -----
    .. math:: \\frac{\\mu(H)}{\\mu_i} = \\frac{1}{a + b |H|^c}

    References
    ----------
    Common practice form of powder-core DC-bias roll-off fits, no source.
    """
    return 1.0 / (np.asarray(a, dtype=float) + np.asarray(b) * np.abs(h_A_per_m) ** np.asarray(c))


def powder_flux_density(
    h_A_per_m: npt.ArrayLike,
    mu_i: npt.ArrayLike,
    a: npt.ArrayLike,
    b: npt.ArrayLike,
    c: npt.ArrayLike,
) -> FloatArray:
    """Flux density of a powder core magnetised along its roll-off curve.

    Parameters
    ----------
    h_A_per_m : array_like
        Magnetising field H (the curve is odd in H) [A/m].
    mu_i : array_like
        Initial relative permeability [1].
    a : array_like
        Fit coefficient, > 0 [1].
    b : array_like
        Fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        Flux density B [T].

    Notes
    -----
    Integrating the incremental permeability from 0 to H:

    .. math:: B = \\mu_0 \\mu_i \\int_0^H \\frac{dh}{a + b h^c}
              = \\mu_0 \\mu_i \\frac{H}{a}\\,
                {}_2F_1\\!\\left(1, \\tfrac{1}{c}; 1 + \\tfrac{1}{c}; -\\frac{b H^c}{a}\\right)

    (substituting :math:`u = (h/H)^c` turns the integral into Euler's integral
    representation of :math:`{}_2F_1`).

    References
    ----------
    Roll-off form: common practice, no source. Hypergeometric integral:
    M. Abramowitz, I. A. Stegun, *Handbook of Mathematical Functions*, NBS, 1964,
    eq. 15.3.1 (Euler's integral representation; equation number from memory).
    """
    field = np.asarray(h_A_per_m, dtype=float)
    magnitude = np.abs(field)
    a_arr = np.asarray(a, dtype=float)
    inv_c = 1.0 / np.asarray(c, dtype=float)
    z = -np.asarray(b) * magnitude ** np.asarray(c) / a_arr
    integral = magnitude / a_arr * hyp2f1(1.0, inv_c, 1.0 + inv_c, z)
    return MU0 * np.asarray(mu_i) * np.copysign(integral, field)


def powder_inductance(
    turns: npt.ArrayLike,
    current_A: npt.ArrayLike,
    le_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    mu_i: npt.ArrayLike,
    a: npt.ArrayLike,
    b: npt.ArrayLike,
    c: npt.ArrayLike,
) -> FloatArray:
    """Incremental inductance of a powder-core winding at a DC current.

    Parameters
    ----------
    turns : array_like
        Number of turns N [1].
    current_A : array_like
        DC winding current [A].
    le_m : array_like
        Effective magnetic path length [m].
    ae_m2 : array_like
        Effective cross-sectional area [m^2].
    mu_i : array_like
        Initial relative permeability [1].
    a : array_like
        Roll-off fit coefficient, > 0 [1].
    b : array_like
        Roll-off fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Roll-off fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        Incremental inductance dPsi/dI [H].

    Notes
    -----
    .. math:: H = \\frac{N I}{l_e}, \\qquad
              L = \\frac{\\mu_0 \\mu_i N^2 A_e}{l_e} \\frac{1}{a + b H^c}

    References
    ----------
    Roll-off form: common practice, no source. Magnetic circuit:
    R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. "Basic magnetics theory". DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    turns_arr = np.asarray(turns, dtype=float)
    le = np.asarray(le_m, dtype=float)
    field = turns_arr * np.asarray(current_A) / le
    zero_bias = MU0 * np.asarray(mu_i) * turns_arr * turns_arr * np.asarray(ae_m2) / le
    return zero_bias * powder_permeability_fraction(field, a, b, c)


# --------------------------------------------------------------------------- saturation


def bsat_at_temperature(
    temperature_C: npt.ArrayLike, bsat_25C_T: npt.ArrayLike, bsat_100C_T: npt.ArrayLike
) -> FloatArray:
    """Saturation flux density at a temperature, by a line through two data points.

    Parameters
    ----------
    temperature_C : array_like
        Core temperature [degC].
    bsat_25C_T : array_like
        Saturation flux density at 25 degC [T].
    bsat_100C_T : array_like
        Saturation flux density at 100 degC [T].

    Returns
    -------
    ndarray
        Saturation flux density, >= 0 [T].

    Notes
    -----
    .. math:: B_{sat}(T) = \\max\\left(0,\\; B_{25} + (B_{100} - B_{25})
              \\frac{T - 25}{75}\\right)

    A `ValidityRangeWarning` is emitted outside -55 ... 150 degC, where the line is
    a far extrapolation (ferrite saturation falls faster towards the Curie point).

    References
    ----------
    Common practice, no source.
    """
    temperature = np.asarray(temperature_C, dtype=float)
    low, high = BSAT_TEMPERATURE_RANGE_C
    _warn_if(
        (temperature < low) | (temperature > high),
        f"saturation flux density extrapolated outside {low:g} ... {high:g} degC",
    )
    b25 = np.asarray(bsat_25C_T, dtype=float)
    slope = (np.asarray(bsat_100C_T) - b25) / 75.0
    return np.maximum(b25 + slope * (temperature - 25.0), 0.0)
