"""Parametric core geometry: from a few manufacturable dimensions to effective parameters.

Two shapes are drawn here, each as a mated pair of halves:

* **E** — a rectangular centre leg of width ``a`` and depth ``d``, two outer legs and two
  yokes (backs); by default each outer leg and each yoke is ``a/2`` thick, so the two
  return paths together carry the centre leg's area everywhere;
* **pot** — a round centre post of diameter ``D``, a closed outer wall whose annulus has
  the post's area, and two round base plates of thickness ``t`` (by default ``D/4``, which
  gives the plate the post's area where the flux enters it). No wire slots are cut.

Effective parameters follow IEC 60205: split the closed flux path into sections of length
``l_i`` and area ``A_i``, form the core constants ``C1 = Σ l_i/A_i`` and
``C2 = Σ l_i/A_i²``, then ``Ae = C1/C2``, ``le = C1²/C2`` and ``Ve = Ae le``.

Simplification of the standard's corner rule (its basic rule on sharp corners: the path
of a corner is the mean circular path joining the centres of the two adjacent uniform
sections, and its area is the mean of their areas). The path through the two section
centres is a quarter ellipse with semi-axes e1 and e2 (the distances of the two section
centres from the window corner); it is replaced here by a quarter circle of the mean
radius (e1 + e2)/2, of length ``l = (π/4)(e1 + e2)``, i.e. ``l = (π/8)(t1 + t2)`` for two
rectangular sections of thicknesses ``t1`` and ``t2``. For a round post or wall the
"centre" of the section is taken at the radius that halves its area. Straight sections
run along the window edges only (length = window breadth for legs, window width for yokes
and plates), so corners are not counted twice. Chamfers, slots and the mating gap are
ignored, as the standard ignores small irregularities.

Pure numpy, SI units inside; every argument broadcasts.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import numpy.typing as npt

from optimag.arrays import FloatArray
from optimag.errors import warn_outside_range

__all__ = [
    "MIN_WINDOW_TO_LEG_RATIO",
    "CoreGeometry",
    "core_constants",
    "e_core_geometry",
    "effective_parameters",
    "pot_core_geometry",
    "volume_price",
]

#: Smallest window side (breadth or width) as a fraction of the centre-leg width (E) or
#: post diameter (pot) for which lumped uniform sections describe the path fairly: below
#: it the corner zones are most of the path and the flux is far from uniform in them
#: (common practice, no source).
MIN_WINDOW_TO_LEG_RATIO = 0.1



class CoreGeometry(NamedTuple):
    """Effective parameters and dimensions of a core set, SI units; every field has the
    broadcast shape of the inputs."""

    #: Effective cross-section Ae [m^2].
    ae_m2: FloatArray
    #: Effective magnetic path length le [m].
    le_m: FloatArray
    #: Effective volume Ve = Ae le [m^3].
    ve_m3: FloatArray
    #: Smallest uniform cross-section Amin [m^2].
    amin_m2: FloatArray
    #: Core constant C1 = Σ l/A [1/m].
    c1_per_m: FloatArray
    #: Core constant C2 = Σ l/A² [1/m^3].
    c2_per_m3: FloatArray
    #: Winding window (one side of the leg) breadth x width [m^2].
    window_area_m2: FloatArray
    #: Window breadth, along the leg [m].
    window_breadth_m: FloatArray
    #: Window width, from leg to outer leg or wall [m].
    window_width_m: FloatArray
    #: Centre-leg width (E) or post diameter (pot) [m].
    leg_width_m: FloatArray
    #: Centre-leg depth (E) or post diameter (pot) [m].
    leg_depth_m: FloatArray
    #: Outer length of the set, across the legs [m].
    length_m: FloatArray
    #: Outer width of the set (E: depth; pot: diameter) [m].
    width_m: FloatArray
    #: Outer height of the mated set, along the legs [m].
    height_m: FloatArray
    #: Outer surface of the bare set [m^2].
    surface_m2: FloatArray
    #: Volume of core material [m^3].
    material_volume_m3: FloatArray


def _positive(**values: npt.ArrayLike) -> dict[str, FloatArray]:
    out = {}
    for name, value in values.items():
        array = np.asarray(value, dtype=float)
        if not np.all(np.isfinite(array)) or np.any(array <= 0):
            raise ValueError(f"{name} must be finite and > 0")
        out[name] = array
    return out


def _warn_squat_window(breadth: FloatArray, width: FloatArray, leg: FloatArray) -> None:
    squat = (breadth < MIN_WINDOW_TO_LEG_RATIO * leg) | (width < MIN_WINDOW_TO_LEG_RATIO * leg)
    warn_outside_range(
        squat,
        f"window side below {MIN_WINDOW_TO_LEG_RATIO:g} x the centre-leg width: the "
        "lumped-section effective parameters are a poor description of such a core",
        stacklevel=4,
    )


def core_constants(
    lengths_m: npt.ArrayLike, areas_m2: npt.ArrayLike, axis: int = -1
) -> tuple[FloatArray, FloatArray]:
    """Core constants of a closed path made of uniform sections in series.

    Parameters
    ----------
    lengths_m : array_like
        Mean path length of each section, sections along ``axis`` [m].
    areas_m2 : array_like
        Cross-section of each section, broadcast against ``lengths_m`` [m^2].
    axis : int
        Axis that runs over the sections [-].

    Returns
    -------
    c1 : ndarray
        C1 = Σ l_i / A_i [1/m].
    c2 : ndarray
        C2 = Σ l_i / A_i² [1/m^3].

    Notes
    -----
    .. math:: C_1 = \\sum_i \\frac{l_i}{A_i}, \\qquad C_2 = \\sum_i \\frac{l_i}{A_i^2}

    References
    ----------
    .. [1] IEC 60205:2016, *Calculation of the effective parameters of magnetic piece
       parts*, International Electrotechnical Commission, Geneva, 2016.
    """
    lengths = np.asarray(lengths_m, dtype=float)
    areas = np.asarray(areas_m2, dtype=float)
    return np.sum(lengths / areas, axis=axis), np.sum(lengths / areas**2, axis=axis)


def effective_parameters(
    c1_per_m: npt.ArrayLike, c2_per_m3: npt.ArrayLike
) -> tuple[FloatArray, FloatArray, FloatArray]:
    """Effective area, length and volume from the core constants.

    Parameters
    ----------
    c1_per_m : array_like
        Core constant C1 = Σ l/A [1/m].
    c2_per_m3 : array_like
        Core constant C2 = Σ l/A² [1/m^3].

    Returns
    -------
    ae : ndarray
        Effective cross-section [m^2].
    le : ndarray
        Effective path length [m].
    ve : ndarray
        Effective volume [m^3].

    Notes
    -----
    .. math:: A_e = \\frac{C_1}{C_2}, \\quad l_e = \\frac{C_1^2}{C_2},
              \\quad V_e = A_e l_e = \\frac{C_1^3}{C_2^2}

    A uniform ring of length l and area A gives back Ae = A, le = l.

    References
    ----------
    .. [1] IEC 60205:2016, *Calculation of the effective parameters of magnetic piece
       parts*, International Electrotechnical Commission, Geneva, 2016.
    .. [2] IEC 60050-221:1990, *International Electrotechnical Vocabulary — Magnetic
       materials and components*, items 221-04-31 ff.
    """
    c1 = np.asarray(c1_per_m, dtype=float)
    c2 = np.asarray(c2_per_m3, dtype=float)
    ae = c1 / c2
    le = c1 * ae
    return ae, le, ae * le


def e_core_geometry(
    leg_width_m: npt.ArrayLike,
    leg_depth_m: npt.ArrayLike,
    window_breadth_m: npt.ArrayLike,
    window_width_m: npt.ArrayLike,
    outer_leg_width_m: npt.ArrayLike | None = None,
    yoke_thickness_m: npt.ArrayLike | None = None,
) -> CoreGeometry:
    """Effective parameters and dimensions of a pair of E halves with a rectangular leg.

    Parameters
    ----------
    leg_width_m : array_like
        Centre-leg width a, across the window [m].
    leg_depth_m : array_like
        Depth d of every leg and yoke [m].
    window_breadth_m : array_like
        Window breadth h of the mated set, along the legs [m].
    window_width_m : array_like
        Window width w between centre leg and outer leg [m].
    outer_leg_width_m : array_like, optional
        Width b of each outer leg; default a/2 (the two outer legs carry the centre
        leg's area) [m].
    yoke_thickness_m : array_like, optional
        Thickness y of each yoke (back); default a/2 [m].

    Returns
    -------
    CoreGeometry

    Notes
    -----
    The flux leaves the centre leg to both sides; by symmetry the two halves of the
    circuit are combined into one path whose side sections have their areas summed.
    Sections (length, area):

    ========================  =========================  ========================
    centre leg                h                          a d
    outer legs                h                          2 b d
    yokes (top and bottom)    2 w                        2 y d
    corners at outer legs     2 (π/8)(b + y)             (b + y) d
    corners at centre leg     2 (π/8)(a/2 + y)           (a d + 2 y d)/2
    ========================  =========================  ========================

    .. math:: C_1 = \\sum l_i/A_i,\\; C_2 = \\sum l_i/A_i^2,\\;
              A_e = C_1/C_2,\\; l_e = C_1^2/C_2

    With the default proportions every section has the area a d, so Ae = a d and
    le = 2h + 2w + πa/2. Outer size: length 2b + 2w + a, width d, height h + 2y.
    A ValidityRangeWarning is raised for windows narrower or shorter than
    `MIN_WINDOW_TO_LEG_RATIO` times the leg width.

    References
    ----------
    .. [1] IEC 60205:2016, *Calculation of the effective parameters of magnetic piece
       parts*, International Electrotechnical Commission, Geneva, 2016 (clause numbers
       from memory).
    .. [2] IEC 60050-221:1990, *International Electrotechnical Vocabulary — Magnetic
       materials and components*, items 221-04-31 ff. (effective parameters).
    """
    dims = _positive(
        leg_width_m=leg_width_m, leg_depth_m=leg_depth_m, window_breadth_m=window_breadth_m,
        window_width_m=window_width_m,
    )
    a, d = dims["leg_width_m"], dims["leg_depth_m"]
    h, w = dims["window_breadth_m"], dims["window_width_m"]
    b = a / 2 if outer_leg_width_m is None else _positive(b=outer_leg_width_m)["b"]
    y = a / 2 if yoke_thickness_m is None else _positive(y=yoke_thickness_m)["y"]
    a, d, h, w, b, y = np.broadcast_arrays(a, d, h, w, b, y)
    _warn_squat_window(h, w, a)

    centre_area, outer_area, yoke_area = a * d, 2 * b * d, 2 * y * d
    lengths = np.stack(
        [h, h, 2 * w, 2 * (np.pi / 8) * (b + y), 2 * (np.pi / 8) * (a / 2 + y)], axis=-1
    )
    areas = np.stack(
        [centre_area, outer_area, yoke_area, (outer_area + yoke_area) / 2,
         (centre_area + yoke_area) / 2],
        axis=-1,
    )
    c1, c2 = core_constants(lengths, areas)
    ae, le, ve = effective_parameters(c1, c2)
    length = a + 2 * w + 2 * b
    height = h + 2 * y
    material = (length * height - 2 * w * h) * d
    return CoreGeometry(
        ae_m2=ae, le_m=le, ve_m3=ve,
        amin_m2=np.minimum(np.minimum(centre_area, outer_area), yoke_area),
        c1_per_m=c1, c2_per_m3=c2, window_area_m2=h * w, window_breadth_m=h,
        window_width_m=w, leg_width_m=a, leg_depth_m=d, length_m=length, width_m=d,
        height_m=height, surface_m2=2 * (length * d + length * height + d * height),
        material_volume_m3=material,
    )


def pot_core_geometry(
    post_diameter_m: npt.ArrayLike,
    window_breadth_m: npt.ArrayLike,
    window_width_m: npt.ArrayLike,
    base_thickness_m: npt.ArrayLike | None = None,
) -> CoreGeometry:
    """Effective parameters and dimensions of a pair of pot halves with a round post.

    Parameters
    ----------
    post_diameter_m : array_like
        Diameter D of the solid centre post [m].
    window_breadth_m : array_like
        Window breadth h of the mated set, along the post [m].
    window_width_m : array_like
        Radial window width w from post to outer wall [m].
    base_thickness_m : array_like, optional
        Thickness t of each base plate; default D/4, which gives the plate the post's
        area at the post's edge (2π r1 t = π r1²) [m].

    Returns
    -------
    CoreGeometry

    Notes
    -----
    Radii: post r1 = D/2, wall inside r2 = r1 + w, wall outside r3 = sqrt(r2² + r1²)
    (the wall's annulus has the post's area). Sections:

    * post and wall, each of length h, areas π r1² and π (r3² − r2²);
    * two plates, radial from r1 to r2, area 2π r t, integrated exactly:
      ∫ dr/(2π r t) = ln(r2/r1)/(2π t) and ∫ dr/(2π r t)² = (1/r1 − 1/r2)/(4π² t²);
    * four corners (two at the post, two at the wall), each a quarter circle of the mean
      radius (e + t/2)/2, of length (π/4)(e + t/2), with e the distance from the window edge to the
      radius that halves the post's (or wall's) area, and the mean area of the two
      adjacent sections (plate area taken at the window edge).

    .. math:: A_e = C_1/C_2, \\quad l_e = C_1^2/C_2

    Outer size: diameter 2 r3 (length and width), height h + 2t. Same validity
    warning as `e_core_geometry`, against the post diameter.

    References
    ----------
    .. [1] IEC 60205:2016, *Calculation of the effective parameters of magnetic piece
       parts*, International Electrotechnical Commission, Geneva, 2016 (clause numbers
       from memory).
    .. [2] IEC 60050-221:1990, *International Electrotechnical Vocabulary — Magnetic
       materials and components*, items 221-04-31 ff. (effective parameters).
    """
    dims = _positive(
        post_diameter_m=post_diameter_m, window_breadth_m=window_breadth_m,
        window_width_m=window_width_m,
    )
    diameter, h, w = dims["post_diameter_m"], dims["window_breadth_m"], dims["window_width_m"]
    t = diameter / 4 if base_thickness_m is None else _positive(t=base_thickness_m)["t"]
    diameter, h, w, t = np.broadcast_arrays(diameter, h, w, t)
    _warn_squat_window(h, w, diameter)

    r1 = diameter / 2
    r2 = r1 + w
    r3 = np.sqrt(r2**2 + r1**2)
    post_area = np.pi * r1**2
    wall_area = np.pi * (r3**2 - r2**2)
    plate_at_post = 2 * np.pi * r1 * t
    plate_at_wall = 2 * np.pi * r2 * t
    post_centre = r1 - r1 / np.sqrt(2.0)
    wall_centre = np.sqrt((r2**2 + r3**2) / 2) - r2
    post_corner = (np.pi / 4) * (post_centre + t / 2)
    wall_corner = (np.pi / 4) * (wall_centre + t / 2)
    lengths = np.stack([h, h, 2 * post_corner, 2 * wall_corner], axis=-1)
    areas = np.stack(
        [post_area, wall_area, (post_area + plate_at_post) / 2, (wall_area + plate_at_wall) / 2],
        axis=-1,
    )
    c1_sections, c2_sections = core_constants(lengths, areas)
    c1 = c1_sections + 2 * np.log(r2 / r1) / (2 * np.pi * t)
    c2 = c2_sections + 2 * (1 / r1 - 1 / r2) / (4 * np.pi**2 * t**2)
    ae, le, ve = effective_parameters(c1, c2)
    height = h + 2 * t
    material = np.pi * r3**2 * height - np.pi * (r2**2 - r1**2) * h
    return CoreGeometry(
        ae_m2=ae, le_m=le, ve_m3=ve,
        amin_m2=np.minimum(np.minimum(post_area, wall_area), plate_at_post),
        c1_per_m=c1, c2_per_m3=c2, window_area_m2=h * w, window_breadth_m=h,
        window_width_m=w, leg_width_m=diameter, leg_depth_m=diameter, length_m=2 * r3,
        width_m=2 * r3, height_m=height,
        surface_m2=2 * np.pi * r3**2 + 2 * np.pi * r3 * height,
        material_volume_m3=material,
    )


def volume_price(
    material_volume_m3: npt.ArrayLike, price_base: npt.ArrayLike, price_per_cm3: npt.ArrayLike
) -> FloatArray:
    """Price of a made-to-order core set from its material volume.

    Parameters
    ----------
    material_volume_m3 : array_like
        Volume of core material in the set [m^3].
    price_base : array_like
        Fixed price per set (tooling share, handling) [currency].
    price_per_cm3 : array_like
        Price per cubic centimetre of core material [currency/cm^3].

    Returns
    -------
    ndarray
        Price of the set [currency].

    Notes
    -----
    .. math:: p = p_0 + p_V \\, V_{material}

    An affine price rule stated by the study (common practice, no source).

    References
    ----------
    .. [1] None: the rule and its coefficients are the study author's.
    """
    volume_cm3 = np.asarray(material_volume_m3, dtype=float) * 1e6
    return np.asarray(price_base, dtype=float) + np.asarray(price_per_cm3, dtype=float) * volume_cm3
