"""Air-gap reluctance models: ideal, McLyman's fringing factor, Mühlethaler's 3-D
combination and the leg-edge model (default), each knowing the gapped leg's shape.

The models form a small registry (`GAP_RELUCTANCE_MODELS`) of `GapModel` entries
(reluctance with its slope, a bracketing bound, a range test) so that
`optimag.physics.magnetic.gap_for_inductance` solves any of them with one safeguarded
Newton loop. Pure vectorised numpy functions in SI units.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from optimag.arrays import FloatArray
from optimag.constants import MU0
from optimag.errors import warn_outside_range
from optimag.registry import Registry

_TWO_OVER_PI = 2.0 / np.pi


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
    warn_outside_range(
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


def _square_sides(geometry: GapGeometry) -> tuple[FloatArray, FloatArray]:
    """Leg sides; a round post as the square of equal area (side D sqrt(pi)/2)."""
    round_leg = np.asarray(geometry.round_leg, dtype=bool)
    width = np.asarray(geometry.leg_width_m, dtype=float)
    depth = np.asarray(geometry.leg_depth_m, dtype=float)
    side = 0.5 * np.sqrt(np.pi) * width
    return np.where(round_leg, side, width), np.where(round_leg, side, depth)


def _muhlethaler_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    width, depth = _square_sides(geometry)
    window = geometry.winding_length_m
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
    are derived here from symmetry. Where it holds, checked against the field solutions
    of tests/data/fem_gap_inductance.csv (with the window's own permeance added, as the
    design model does): rectangular E centre legs within 3 % up to lg = 0.05 sqrt(A) and
    7 % to 0.12 sqrt(A) (24 % at 0.5 sqrt(A)); a round post taken as the square of equal
    area gets too much fringing, L up to 8 % high at 0.05 sqrt(A), 28 % at 0.2 sqrt(A),
    55 % at 0.5 sqrt(A) — use the leg-edge model (axisymmetric for round posts) there.
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
    warn_outside_range(
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
    ae_m2 : face area of the gapped (centre) leg at the gap [m^2]
    winding_length_m : winding length G, the window height of the closed core [m]
    leg_width_m : gapped-leg width w across the window, or the post diameter [m]
    leg_depth_m : gapped-leg depth d (stack included), or the post diameter [m]
    round_leg : True where the gapped leg is a round post [-]
    window_width_m : window width from the gapped leg to the outer leg [m]
    outer_leg_width_m : width of one outer leg, or the skirt's radial thickness [m]
    outer_area_m2 : face area of all outer legs together [m^2]
    outer_legs : number of outer legs (E: 2, pot skirt: 1) [-]
    yoke_thickness_m : yoke (plate) thickness [m]
    spacer : True where a spacer gaps every leg by the gap length, False for a ground
        centre leg with the outer legs touching [-]
    """

    ae_m2: FloatArray
    winding_length_m: FloatArray
    leg_width_m: FloatArray
    leg_depth_m: FloatArray
    round_leg: FloatArray | bool = False
    window_width_m: FloatArray | float = np.inf
    outer_leg_width_m: FloatArray | float = 0.0
    outer_area_m2: FloatArray | float = 0.0
    outer_legs: FloatArray | float = 2.0
    yoke_thickness_m: FloatArray | float = 0.0
    spacer: FloatArray | bool = False

    def outer_leg(self) -> GapGeometry:
        """One outer leg as a rectangular leg of its own (a pot skirt: its width times its
        developed length), with the same window."""
        count = np.asarray(self.outer_legs, dtype=float)
        area = np.asarray(self.outer_area_m2, dtype=float) / count
        width = np.asarray(self.outer_leg_width_m, dtype=float)
        safe_width = np.where(width > 0.0, width, 1.0)
        return GapGeometry(
            np.where(area > 0.0, area, 1.0), self.winding_length_m, safe_width,
            np.where(area > 0.0, area, 1.0) / safe_width,
        )


def _add_outer_gaps(
    centre: Callable[[FloatArray, GapGeometry], tuple[FloatArray, FloatArray]],
) -> Callable[[FloatArray, GapGeometry], tuple[FloatArray, FloatArray]]:
    """Reluctance and slope of the centre gap plus, where a spacer gaps every leg, the outer
    legs' gaps in series (the outer legs in parallel with each other, each modelled by the
    same rectangular-leg form)."""

    def both(gap: FloatArray, geometry: GapGeometry) -> tuple[FloatArray, FloatArray]:
        reluctance, slope = centre(gap, geometry)
        spacer = np.asarray(geometry.spacer, dtype=bool)
        if not np.any(spacer):
            return reluctance, slope
        count = np.asarray(geometry.outer_legs, dtype=float)
        outer_r, outer_s = centre(gap, geometry.outer_leg())
        return (
            reluctance + np.where(spacer, outer_r / count, 0.0),
            slope + np.where(spacer, outer_s / count, 0.0),
        )

    return both


def ideal_gap_slope(geometry: GapGeometry) -> FloatArray:
    """R/lg without fringing: centre face, plus the outer faces in series for a spacer."""
    spacer = np.asarray(geometry.spacer, dtype=bool)
    outer = np.asarray(geometry.outer_area_m2, dtype=float)
    safe_outer = np.where(outer > 0.0, outer, 1.0)
    return 1.0 / (MU0 * geometry.ae_m2) + np.where(spacer, 1.0 / (MU0 * safe_outer), 0.0)


def _ideal_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    slope = ideal_gap_slope(geometry)
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
    width, depth = _square_sides(geometry)
    return (width + half_window) * (depth + half_window)


def _mclyman_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    return (gap > geometry.winding_length_m) | (gap * gap > geometry.ae_m2)


def _muhlethaler_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    shortest_side = np.minimum(*_square_sides(geometry))
    return (gap > geometry.winding_length_m) | (gap > shortest_side)


def _never_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    return np.zeros(np.shape(gap), dtype=bool)


# --------------------------------------------------------------------------- leg edges


#: Coefficients k of the edge term lg/pi ln(1 + k pi h / (2 lg)), by what the edge faces
#: and how the gap is made: least-squares fit of the leg-edge model (with the window's own
#: permeance, `window_permeance`, added as the design model adds it) to the field solutions
#: of tests/data/fem_gap_inductance.csv (every demo core series, both gap kinds,
#: lg/sqrt(Ae) 0.01-0.5; tests/data/make_fem_gap_table.py).
EDGE_COEFFICIENT_WINDOW = 0.503
EDGE_COEFFICIENT_OPEN = 17.85
EDGE_COEFFICIENT_WINDOW_SPACER = 0.603
EDGE_COEFFICIENT_OPEN_SPACER = 18.16


def _edge_widening(
    gap: FloatArray, side_height: FloatArray, coefficient: float = np.e
) -> FloatArray:
    """Widening of a gap face by one edge, lg/pi ln(1 + e pi h / (2 lg)) [m].

    The edge's 2-D fringing permeance per unit length in units of mu0 (both halves in
    series) times the gap; for h >> lg it is Mühlethaler's basic element
    (1/pi)(1 + ln(pi h / (2 lg))), and it falls to 0 with the side-face height h.
    """
    safe_gap = np.where(gap > 0.0, gap, 1.0)
    ratio = coefficient * np.pi * np.maximum(side_height, 0.0) / (2.0 * safe_gap)
    return np.where(gap > 0.0, gap, 0.0) / np.pi * np.log1p(ratio)


def _by_gap_kind(spacer: np.ndarray, with_spacer: Callable[[], FloatArray],
                 ground: Callable[[], FloatArray]) -> FloatArray:
    """``np.where(spacer, with_spacer(), ground())``, each branch evaluated only when some
    element takes it."""
    if not np.any(spacer):
        value = ground()
        return np.where(spacer, value, value)
    if np.all(spacer):
        value = with_spacer()
        return np.where(spacer, value, value)
    return np.where(spacer, with_spacer(), ground())


def _leg_edges_permeance(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    """Gap permeance x lg / mu0 of the centre face and, for a spacer, 1/(1/A_c + 1/A_o)."""
    spacer = np.asarray(geometry.spacer, dtype=bool)
    window = np.asarray(geometry.winding_length_m, dtype=float)
    yoke = np.asarray(geometry.yoke_thickness_m, dtype=float)
    round_leg = np.asarray(geometry.round_leg, dtype=bool)
    width = np.asarray(geometry.leg_width_m, dtype=float)
    depth = np.asarray(geometry.leg_depth_m, dtype=float)
    # Side-face height from the gap face to the yoke: a ground centre leg's faces sit lg/2
    # off the mid-plane inside the window; a spacer lifts the yokes with the faces.
    # Side-face height: half the window height, from the gap's mid-plane to the yoke.
    inside = 0.5 * window
    towards_window = _by_gap_kind(
        spacer,
        lambda: _edge_widening(gap, inside, EDGE_COEFFICIENT_WINDOW_SPACER),
        lambda: _edge_widening(gap, inside, EDGE_COEFFICIENT_WINDOW),
    )
    # Open space: with a ground centre leg the touching outer legs hold the halves' outer
    # faces near one potential, so the leg's own side face drives the fringe; a spacer
    # sets the whole half core (side face and yoke) against the other half.
    into_space = _by_gap_kind(
        spacer,
        lambda: _edge_widening(gap, inside + yoke, EDGE_COEFFICIENT_OPEN_SPACER),
        lambda: _edge_widening(gap, inside, EDGE_COEFFICIENT_OPEN),
    )
    centre = np.where(
        round_leg,
        np.pi * (0.5 * width + towards_window) ** 2,
        (width + 2.0 * towards_window) * (depth + 2.0 * into_space),
    )
    if not np.any(spacer):
        return centre
    outer_width = np.asarray(geometry.outer_leg_width_m, dtype=float)
    outer_area = np.asarray(geometry.outer_area_m2, dtype=float)
    count = np.asarray(geometry.outer_legs, dtype=float)
    # E: each outer leg has one window edge, one outside edge and two depth edges.
    per_leg = outer_area / count
    leg_depth = per_leg / np.where(outer_width > 0.0, outer_width, 1.0)
    rectangular = count * (outer_width + towards_window + into_space) * (
        leg_depth + 2.0 * into_space
    )
    # Pot skirt: the ring of the skirt's face area from the window outwards, its inner edge
    # fringing into the window and its outer edge into space.
    r_in = 0.5 * width + np.asarray(geometry.window_width_m, dtype=float)
    r_out = np.sqrt(r_in * r_in + outer_area / np.pi)
    ring = np.pi * ((r_out + into_space) ** 2 - np.maximum(r_in - towards_window, 0.0) ** 2)
    outer = np.where(round_leg, ring, rectangular)
    safe_outer = np.where(outer > 0.0, outer, 1.0)
    return np.where(spacer, 1.0 / (1.0 / centre + 1.0 / safe_outer), centre)


def _leg_edges_reluctance_and_slope(
    gap: FloatArray, geometry: GapGeometry
) -> tuple[FloatArray, FloatArray]:
    reluctance = gap / (MU0 * _leg_edges_permeance(gap, geometry))
    # Central difference for the slope (the Newton loop brackets, so its accuracy only
    # sets the convergence rate, never the solution).
    step = 1e-6 * np.maximum(gap, 1e-9)
    upper = gap + step
    lower = np.maximum(gap - step, 0.0)
    rise = upper / _leg_edges_permeance(upper, geometry)
    fall = lower / _leg_edges_permeance(lower, geometry)
    slope = (rise - fall) / (MU0 * (upper - lower))
    return reluctance, slope


def _leg_edges_area_bound(geometry: GapGeometry) -> FloatArray:
    # ln(1 + x) <= x: an edge widens the face by at most e h / 2.
    window = np.asarray(geometry.winding_length_m, dtype=float)
    inside = 0.25 * np.e * window
    outside = inside + 0.5 * np.e * np.asarray(geometry.yoke_thickness_m, dtype=float)
    width = np.asarray(geometry.leg_width_m, dtype=float)
    depth = np.asarray(geometry.leg_depth_m, dtype=float)
    return np.where(
        np.asarray(geometry.round_leg, dtype=bool),
        np.pi * (0.5 * width + inside) ** 2,
        (width + 2.0 * inside) * (depth + 2.0 * outside),
    )


#: Largest gap, in units of the square root of the gapped face, over which the leg-edge
#: model was checked against field solutions (tests/data/fem_gap_inductance.csv).
LEG_EDGES_MAX_GAP_RATIO = 0.5


def _leg_edges_outside(gap: FloatArray, geometry: GapGeometry) -> FloatArray:
    spacer = np.asarray(geometry.spacer, dtype=bool)
    ground_through = ~spacer & (gap >= geometry.winding_length_m)
    return ground_through | (gap > LEG_EDGES_MAX_GAP_RATIO * np.sqrt(geometry.ae_m2))


def gap_reluctance_leg_edges(gap_m: npt.ArrayLike, geometry: GapGeometry) -> FloatArray:
    """Gap reluctance from the gapped leg's own shape, edge by edge.

    Parameters
    ----------
    gap_m : array_like
        Centre gap length, or spacer thickness for a spacer gap (every leg), >= 0 [m].
    geometry : GapGeometry
        Face area, leg sides or post diameter, window height and width, yoke thickness,
        outer legs and gap kind [m, m^2, -].

    Returns
    -------
    ndarray
        Reluctance of all gaps of the core in series [A/Wb].

    Notes
    -----
    Each straight edge of a gap face widens it by
    :math:`\\delta = \\frac{l_g}{\\pi}\\ln\\left(1 + \\frac{e\\,\\pi h}{2 l_g}\\right)`,
    the 2-D fringing permeance per unit length (in units of :math:`\\mu_0`, both core
    halves in series) times the gap. For :math:`h \\gg l_g` this is the basic element
    of [1]_, :math:`\\frac{1}{\\pi}(1 + \\ln\\frac{\\pi h}{2 l_g})`; the form inside the
    logarithm keeps it positive and makes it vanish with h. The side height h is what the
    edge faces:

    - window-facing edges: the leg's side face up to the yoke, (G - l_g)/2 for a ground
      centre leg, G/2 for a spacer (which lifts the yokes with the faces);
    - edges facing open space (a rectangular leg's depth edges, an outer leg's outer
      edge): that side face plus the yoke thickness t.

    A rectangular centre leg of width w and depth d: :math:`A = (w + 2\\delta_w)(d +
    2\\delta_o)`; a round post of diameter D fringes axisymmetrically, :math:`A =
    \\pi (D/2 + \\delta_w)^2`. With a spacer every outer leg has its own gap: an E
    core's outer leg :math:`(w_o + \\delta_w + \\delta_o)(d + 2\\delta_o)` each, a pot
    skirt the ring of its face area widened inwards by :math:`\\delta_w` and outwards by
    :math:`\\delta_o`. :math:`\\mathcal{R} = l_g / (\\mu_0 A_c) + l_g / (\\mu_0 A_o)`.
    Checked against the field solutions of `optimag.fem` for every demo core series and
    both gap kinds over :math:`l_g/\\sqrt{A} \\le 0.5`; a `ValidityRangeWarning` beyond
    that, and where a centre gap would be ground through the window height.

    References
    ----------
    .. [1] J. Mühlethaler, J. W. Kolar, A. Ecklebe, "A novel approach for 3D air gap
       reluctance calculations", ICPE 2011 - ECCE Asia, 2011.
       DOI: 10.1109/ICPE.2011.5944575 (DOI from memory).
    """
    gap = np.asarray(gap_m, dtype=float)
    warn_outside_range(
        _leg_edges_outside(gap, geometry),
        "leg-edge gap model used beyond lg = 0.5 sqrt(A) or with a centre gap ground through "
        "the window; it was checked against field solutions only up to there",
    )
    return gap / (MU0 * _leg_edges_permeance(gap, geometry))


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


def _gap_model_entry(entry: object) -> None:
    if not isinstance(entry, GapModel):
        raise TypeError("a gap reluctance model is a fringing.GapModel (reluctance_and_slope, "
                        f"face_area_bound, outside_range), got {type(entry).__name__}")


#: Gap-reluctance models by the name given to `gap_for_inductance` and chosen by a study's
#: ``[model] fringing``; register a `GapModel` to add one.
GAP_RELUCTANCE_MODELS: Registry[GapModel] = Registry(
    "gap reluctance", "model.fringing", _gap_model_entry)
GAP_RELUCTANCE_MODELS.register(
    "leg_edges", GapModel(_leg_edges_reluctance_and_slope, _leg_edges_area_bound,
                          _leg_edges_outside))
GAP_RELUCTANCE_MODELS.register("mclyman", GapModel(
    _add_outer_gaps(_mclyman_reluctance_and_slope), _mclyman_area_bound, _mclyman_outside))
GAP_RELUCTANCE_MODELS.register("muhlethaler", GapModel(
    _add_outer_gaps(_muhlethaler_reluctance_and_slope), _muhlethaler_area_bound,
    _muhlethaler_outside))
GAP_RELUCTANCE_MODELS.register(
    "ideal", GapModel(_ideal_reluctance_and_slope, _ideal_area_bound, _never_outside))

#: Gap-reluctance model used when a study names none.
DEFAULT_GAP_MODEL = "leg_edges"

def gap_reluctance(
    gap_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    winding_length_m: npt.ArrayLike,
    leg_width_m: npt.ArrayLike,
    leg_depth_m: npt.ArrayLike,
    model: str = "mclyman",
    geometry: GapGeometry | None = None,
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
        "ideal", "mclyman", "muhlethaler" or "leg_edges" [-]
    geometry : GapGeometry, optional
        The whole gap geometry (leg shape, outer legs, gap kind); when given it replaces
        the four arrays above, which then describe a rectangular centre leg only.

    Returns
    -------
    reluctance : ndarray
        Gap reluctance of all gaps in series [A/Wb]

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
    if geometry is None:
        geometry = GapGeometry(
            np.asarray(ae_m2, dtype=float), np.asarray(winding_length_m, dtype=float),
            np.asarray(leg_width_m, dtype=float), np.asarray(leg_depth_m, dtype=float),
        )
    reluctance, _ = GAP_RELUCTANCE_MODELS[model].reluctance_and_slope(
        np.asarray(gap_m, dtype=float), geometry
    )
    return reluctance
