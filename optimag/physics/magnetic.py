"""Magnetic circuit of a gapped or distributed-gap inductor core: core reluctance, the gap
that gives a wanted inductance, the window's own permeance, inductance, AL, flux density.

Pure vectorised numpy functions: every argument may be a scalar or an array and
arguments broadcast against each other. SI units throughout. Gap models are in
`optimag.physics.fringing`, saturation in `optimag.physics.saturation`.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from optimag.arrays import FloatArray
from optimag.constants import MU0
from optimag.errors import warn_outside_range
from optimag.physics.fringing import (
    GAP_RELUCTANCE_MODELS,
    GapGeometry,
    GapModel,
    ideal_gap_slope,
)

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


_NEWTON_MAX_STEPS = 60
_RELATIVE_TOLERANCE = 1e-12


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
    geometry: GapGeometry | None = None,
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
    fringing : {"ideal", "mclyman", "muhlethaler", "leg_edges"}
        Gap reluctance model (keys of `GAP_RELUCTANCE_MODELS`).
    leg_width_m, leg_depth_m : array_like, optional
        Leg sides for "muhlethaler" [m]; default the side of the square of area Ae.
    geometry : GapGeometry, optional
        The whole gap geometry (gapped face, leg shape, outer legs, gap kind); when given,
        the gap is solved on it (Ae then only enters the core reluctance).

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
    if geometry is None:
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
    lower = target / ideal_gap_slope(geometry)
    if fringing == "ideal":
        # closed form: no fringing means R_g = lg / (mu0 Ae) exactly
        return np.where(reachable, lower, np.nan)
    gap = _solve_gap(target, lower, model, geometry)
    warn_outside_range(
        model.outside_range(gap, geometry),
        f"gap_for_inductance: the {fringing} gap model is used outside its range",
    )
    return np.where(reachable, gap, np.nan)


def _solve_gap(
    target: FloatArray, lower: FloatArray, model: GapModel, geometry: GapGeometry
) -> FloatArray:
    upper = MU0 * model.face_area_bound(geometry) * target
    fields = {name: np.asarray(value) for name, value in vars(geometry).items()}
    shape = np.broadcast(target, lower, upper, *fields.values()).shape

    def flat(values) -> np.ndarray:
        return np.broadcast_to(values, shape).ravel()

    lower, upper, target = flat(lower).copy(), flat(upper).copy(), flat(target)
    fields = {name: flat(value) for name, value in fields.items()}
    gap = lower.copy()
    tolerance = _RELATIVE_TOLERANCE * target
    # Only the elements not yet converged are iterated: a converged element stays put (a
    # bisection step would throw it off again), and every step is element by element, so
    # each element takes the same steps as if the whole array were iterated.
    active = np.arange(gap.size)
    for _ in range(_NEWTON_MAX_STEPS):
        here = gap[active]
        reluctance, slope = model.reluctance_and_slope(
            here, GapGeometry(**{name: value[active] for name, value in fields.items()})
        )
        residual = reluctance - target[active]
        moving = ~(np.abs(residual) <= tolerance[active])
        if not np.any(moving):
            break
        active, here = active[moving], here[moving]
        residual, slope = residual[moving], slope[moving]
        too_long = residual > 0.0
        high = np.where(too_long, here, upper[active])
        low = np.where(too_long, lower[active], here)
        upper[active], lower[active] = high, low
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = here - residual / slope
        inside = (newton >= low) & (newton <= high)
        gap[active] = np.where(inside, newton, 0.5 * (low + high))
    return gap.reshape(shape)


def window_permeance(
    window_length_m: npt.ArrayLike,
    window_width_m: npt.ArrayLike,
    window_height_m: npt.ArrayLike,
    centre_share: npt.ArrayLike,
) -> FloatArray:
    """Permeance of the winding window's own field, weighted by the turns it links.

    Parameters
    ----------
    window_length_m : array_like
        Length of window along the winding: both windows of an E core (2 x leg depth),
        the mean circumference of a pot core's annular window [m].
    window_width_m : array_like
        Window width from the gapped leg to the outer leg [m].
    window_height_m : array_like
        Window height between the yokes [m].
    centre_share : array_like
        Share a of the winding's MMF dropped between the yokes on the gapped leg's side
        (1 for a ground centre leg with ideal iron, 1/2 for equal spacer gaps) [1].

    Returns
    -------
    ndarray
        Permeance P_w [H] to add as N^2 P_w to the inductance.

    Notes
    -----
    With the winding spread evenly over the window width w, Ampère's law round a loop
    through the window at distance x from the gapped leg gives a field across the window
    :math:`H(x) G = NI (a - x/w)`; its energy
    :math:`\\tfrac12 \\mu_0 \\ell \\int_0^w H^2 G\\,dx` gives

    .. math:: P_w = \\frac{\\mu_0 \\ell w}{G}\\left(a^2 - a + \\tfrac13\\right)

    the leakage field of a winding in its window, as for the leakage inductance of a
    winding between two others ([1]_), here between the leg and the outer leg.

    References
    ----------
    .. [1] R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
       Springer, 2020, ch. "Basic magnetics theory", leakage inductance of a winding in a
       window (MMF diagram). DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    share = np.asarray(centre_share, dtype=float)
    return (
        MU0 * np.asarray(window_length_m, dtype=float) * np.asarray(window_width_m, dtype=float)
        / np.asarray(window_height_m, dtype=float) * (share * share - share + 1.0 / 3.0)
    )


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
