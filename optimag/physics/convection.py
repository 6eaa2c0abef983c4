"""Heat from a part's free faces to the air: air properties, convection correlations face
by face (natural, forced, mixed) with their declared ranges, and radiation.

`face_coefficients` gives every face's coefficient at once for millions of parts; the
conductance models of `optimag.physics.thermal` sum them over the faces.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray
from optimag.constants import STEFAN_BOLTZMANN, ZERO_CELSIUS_K


def _radiation_h(surface_C: ArrayLike, ambient_C: ArrayLike, emissivity: ArrayLike) -> FloatArray:
    ts = np.asarray(surface_C) + ZERO_CELSIUS_K
    ta = np.asarray(ambient_C) + ZERO_CELSIUS_K
    return np.asarray(emissivity) * STEFAN_BOLTZMANN * (ts * ts + ta * ta) * (ts + ta)


# --------------------------------------------------------------------------- air and faces

#: Properties of air at atmospheric pressure against temperature: T [K], kinematic
#: viscosity nu [m^2/s], conductivity k [W/(m K)], diffusivity alpha [m^2/s], Prandtl number
#: [-]. Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 6th ed.,
#: Wiley, 2007, Table A.4 (values from memory; tests/data/incropera_air_table_a4.json holds
#: the copy the tests check against the book's worked examples).
AIR_TABLE = np.array(
    [
        [250.0, 11.44e-6, 22.3e-3, 15.9e-6, 0.720],
        [300.0, 15.89e-6, 26.3e-3, 22.5e-6, 0.707],
        [350.0, 20.92e-6, 30.0e-3, 29.9e-6, 0.700],
        [400.0, 26.41e-6, 33.8e-3, 38.3e-6, 0.690],
        [450.0, 32.39e-6, 37.3e-3, 47.2e-6, 0.686],
        [500.0, 38.79e-6, 40.7e-3, 56.7e-6, 0.684],
        [600.0, 52.69e-6, 46.9e-3, 76.9e-6, 0.685],
    ]
)

#: Standard acceleration of gravity [m/s^2] (ISO 80000-3).
GRAVITY = 9.80665

#: Published validity range of each correlation, in its own dimensionless number, declared
#: once: (low, high). Rayleigh numbers unless the name says Reynolds; "air_film_K" is the
#: span of the air table [K].
CORRELATION_RANGES: dict[str, tuple[float, float]] = {
    # Churchill & Chu 1975, all Ra: their correlated data span 1e-1..1e12 (from memory).
    "vertical_churchill_chu": (1e-1, 1e12),
    # Churchill & Chu laminar form, Incropera eq. 9.27: Ra <= 1e9.
    "vertical_churchill_chu_laminar": (1e-1, 1e9),
    # Lloyd & Moran / Goldstein, upper surface of a hot plate, Incropera eqs. 9.30-9.31.
    "upper_hot_lloyd_moran": (1e4, 1e11),
    # Raithby & Hollands thin-layer form for upward-facing plates: Ra from about 1 (from
    # memory), used below the Lloyd-Moran range.
    "upper_hot_raithby_hollands": (1.0, 1e4),
    # Lower surface of a hot plate, Incropera 6th ed. eq. 9.32.
    "lower_hot_surface": (1e5, 1e10),
    # Laminar flat plate, Incropera eq. 7.30: Re_L below the transition Reynolds number.
    "flat_plate_laminar_reynolds": (0.0, 5e5),
    "air_film_K": (250.0, 600.0),
}


class AirProperties(NamedTuple):
    """Properties of air at a temperature (see `air_properties`)."""

    kinematic_viscosity_m2_s: FloatArray
    conductivity_W_mK: FloatArray
    diffusivity_m2_s: FloatArray
    prandtl: FloatArray


def air_properties(temperature_K: ArrayLike) -> AirProperties:
    """Properties of dry air at atmospheric pressure, interpolated linearly in `AIR_TABLE`.

    Parameters
    ----------
    temperature_K : array_like
        Air (film) temperature; held at the table's ends outside 250..600 K [K]

    Returns
    -------
    properties : AirProperties
        Kinematic viscosity [m^2/s], conductivity [W/(m K)], diffusivity [m^2/s], Prandtl
        number [-]

    References
    ----------
    F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, Fundamentals of Heat and
    Mass Transfer, 6th ed., Wiley, 2007, Table A.4 (from memory).
    """
    t = np.asarray(temperature_K, dtype=float)
    table = AIR_TABLE
    return AirProperties(*(np.interp(t, table[:, 0], table[:, j]) for j in range(1, 5)))


def rayleigh_number(
    delta_T_K: ArrayLike, length_m: ArrayLike, film_K: ArrayLike
) -> FloatArray:
    """Rayleigh number of a surface in air, Ra = g beta dT L^3 / (nu alpha), beta = 1/T_f.

    Parameters
    ----------
    delta_T_K : array_like
        Surface-to-air temperature difference, >= 0 [K]
    length_m : array_like
        Characteristic length of the surface [m]
    film_K : array_like
        Film temperature, the mean of surface and air [K]

    Returns
    -------
    rayleigh : ndarray
        Rayleigh number [-]

    References
    ----------
    Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., eq. 9.25 (ideal gas:
    beta = 1/T).
    """
    air = air_properties(film_K)
    film = np.asarray(film_K, dtype=float)
    return (
        GRAVITY
        / film
        * np.maximum(np.asarray(delta_T_K, dtype=float), 0.0)
        * np.asarray(length_m, dtype=float) ** 3
        / (air.kinematic_viscosity_m2_s * air.diffusivity_m2_s)
    )


def _prandtl_factor(prandtl: ArrayLike, power: float) -> FloatArray:
    return (1.0 + (0.492 / np.asarray(prandtl)) ** (9.0 / 16.0)) ** power


def nusselt_vertical_plate(rayleigh: ArrayLike, prandtl: ArrayLike) -> FloatArray:
    """Mean Nusselt number of an isothermal vertical plate, all Rayleigh numbers.

    Parameters
    ----------
    rayleigh : array_like
        Rayleigh number on the plate height [-]
    prandtl : array_like
        Prandtl number of the fluid [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number on the plate height [-]

    Notes
    -----
    .. math::

        \\overline{Nu}_L = \\left\\{0.825 + \\frac{0.387\\, Ra_L^{1/6}}
        {[1 + (0.492/Pr)^{9/16}]^{8/27}}\\right\\}^2

    Range: `CORRELATION_RANGES["vertical_churchill_chu"]`.

    References
    ----------
    S. W. Churchill, H. H. S. Chu, Correlating equations for laminar and turbulent free
    convection from a vertical plate, Int. J. Heat Mass Transfer 18 (1975) 1323-1329;
    Incropera et al., 6th ed., eq. 9.26.
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 0.0)
    return (0.825 + 0.387 * ra ** (1.0 / 6.0) / _prandtl_factor(prandtl, 8.0 / 27.0)) ** 2


def nusselt_vertical_plate_laminar(rayleigh: ArrayLike, prandtl: ArrayLike) -> FloatArray:
    """Mean Nusselt number of an isothermal vertical plate, laminar form (Ra <= 1e9).

    Parameters
    ----------
    rayleigh : array_like
        Rayleigh number on the plate height [-]
    prandtl : array_like
        Prandtl number of the fluid [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number [-]

    Notes
    -----
    .. math::

        \\overline{Nu}_L = 0.68 + \\frac{0.670\\, Ra_L^{1/4}}{[1 + (0.492/Pr)^{9/16}]^{4/9}}

    References
    ----------
    Churchill & Chu 1975; Incropera et al., 6th ed., eq. 9.27.
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 0.0)
    return 0.68 + 0.670 * ra**0.25 / _prandtl_factor(prandtl, 4.0 / 9.0)


def nusselt_upper_hot_surface(rayleigh: ArrayLike) -> FloatArray:
    """Mean Nusselt number of the upper surface of a hot horizontal plate.

    Parameters
    ----------
    rayleigh : array_like
        Rayleigh number on the length L = A / P (area over perimeter) [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number on L [-]

    Notes
    -----
    .. math::

        \\overline{Nu}_L = 0.54\\, Ra_L^{1/4} \\ (10^4 \\le Ra_L \\le 10^7), \\quad
        0.15\\, Ra_L^{1/3} \\ (10^7 \\le Ra_L \\le 10^{11})

    References
    ----------
    J. R. Lloyd, W. R. Moran, Natural convection adjacent to horizontal surfaces of various
    planforms, ASME J. Heat Transfer 96 (1974); R. J. Goldstein, E. M. Sparrow, D. C. Jones,
    Int. J. Heat Mass Transfer 16 (1973); Incropera et al., 6th ed., eqs. 9.30-9.31.
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 0.0)
    return np.where(ra < 1e7, 0.54 * ra**0.25, 0.15 * np.cbrt(ra))


def nusselt_upper_hot_surface_low_rayleigh(
    rayleigh: ArrayLike, prandtl: ArrayLike
) -> FloatArray:
    """Mean Nusselt number of an upward-facing hot plate at small Rayleigh numbers.

    Parameters
    ----------
    rayleigh : array_like
        Rayleigh number on the length L = A / P [-]
    prandtl : array_like
        Prandtl number [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number on L [-]

    Notes
    -----
    The thin-layer value is corrected for the thick boundary layer of small plates:

    .. math::

        Nu_T = 0.835\\, \\bar C_l\\, Ra^{1/4}, \\quad
        \\bar C_l = \\frac{0.671}{[1 + (0.492/Pr)^{9/16}]^{4/9}}, \\quad
        Nu = \\frac{1.4}{\\ln(1 + 1.4 / Nu_T)}

    (the turbulent branch 0.14 Ra^{1/3} does not matter below Ra = 1e4). Used below the
    Lloyd-Moran range; range `CORRELATION_RANGES["upper_hot_raithby_hollands"]`.

    References
    ----------
    G. D. Raithby, K. G. T. Hollands, Natural convection, in W. M. Rohsenow, J. P. Hartnett,
    Y. I. Cho (eds.), Handbook of Heat Transfer, 3rd ed., McGraw-Hill, 1998, ch. 4 (form and
    constants from memory).
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 1e-12)
    thin = 0.835 * 0.671 / _prandtl_factor(prandtl, 4.0 / 9.0) * ra**0.25
    return 1.4 / np.log1p(1.4 / thin)


def nusselt_lower_hot_surface(rayleigh: ArrayLike) -> FloatArray:
    """Mean Nusselt number of the lower surface of a hot horizontal plate.

    Parameters
    ----------
    rayleigh : array_like
        Rayleigh number on the length L = A / P [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number on L [-]

    Notes
    -----
    .. math:: \\overline{Nu}_L = 0.27\\, Ra_L^{1/4} \\quad (10^5 \\le Ra_L \\le 10^{10})

    References
    ----------
    Incropera et al., 6th ed., eq. 9.32 (after Lloyd & Moran 1974 and Goldstein et al.
    1973).
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 0.0)
    return 0.27 * ra**0.25


def nusselt_flat_plate_laminar(reynolds: ArrayLike, prandtl: ArrayLike) -> FloatArray:
    """Mean Nusselt number of a flat plate in a parallel laminar stream.

    Parameters
    ----------
    reynolds : array_like
        Reynolds number on the plate length in the flow direction [-]
    prandtl : array_like
        Prandtl number, >= 0.6 [-]

    Returns
    -------
    nusselt : ndarray
        Mean Nusselt number on the plate length [-]

    Notes
    -----
    .. math:: \\overline{Nu}_L = 0.664\\, Re_L^{1/2} Pr^{1/3}

    References
    ----------
    Incropera et al., 6th ed., eq. 7.30 (Pohlhausen's similarity solution).
    """
    re = np.maximum(np.asarray(reynolds, dtype=float), 0.0)
    return 0.664 * np.sqrt(re) * np.cbrt(np.asarray(prandtl, dtype=float))


def combine_mixed_convection(forced: ArrayLike, natural: ArrayLike) -> FloatArray:
    """Nusselt number (or coefficient) of forced and natural convection together.

    Parameters
    ----------
    forced : array_like
        Forced-convection Nusselt number or coefficient [-]
    natural : array_like
        Natural-convection value on the same basis [-]

    Returns
    -------
    combined : ndarray
        (forced^3 + natural^3)^(1/3) [-]

    Notes
    -----
    Assisting and transverse flows, exponent 3; never below either part alone.

    References
    ----------
    Incropera et al., 6th ed., eq. 9.64 (after Churchill).
    """
    f = np.asarray(forced, dtype=float)
    n = np.asarray(natural, dtype=float)
    return np.cbrt(f**3 + n**3)


def _inside(name: str, value: ArrayLike) -> BoolArray:
    low, high = CORRELATION_RANGES[name]
    v = np.asarray(value)
    return (v >= low) & (v <= high)


class FaceCoefficients(NamedTuple):
    """Heat-transfer coefficients of the free faces of a box (see `face_coefficients`).

    Attributes
    ----------
    side_W_m2K : convection on the four vertical faces [W/(m^2 K)]
    top_W_m2K : convection on the top face [W/(m^2 K)]
    radiation_W_m2K : radiation from every free face [W/(m^2 K)]
    inside_range : every correlation used inside its published range [-]
    """

    side_W_m2K: FloatArray
    top_W_m2K: FloatArray
    radiation_W_m2K: FloatArray
    inside_range: BoolArray


def face_coefficients(
    rise_K: ArrayLike,
    ambient_C: ArrayLike,
    length_m: ArrayLike,
    width_m: ArrayLike,
    height_m: ArrayLike,
    emissivity: ArrayLike,
    air_speed_m_s: ArrayLike = 0.0,
    *,
    vertical: str = "churchill_chu",
    flags: bool = True,
) -> FaceCoefficients:
    """Convection and radiation coefficients of a box's free faces, face by face.

    Parameters
    ----------
    rise_K : array_like
        Surface temperature above the air, >= 0 [K]
    ambient_C : array_like
        Air (and surroundings) temperature [degC]
    length_m, width_m : array_like
        Sides of the footprint [m]
    height_m : array_like
        Height of the box, the length of its vertical faces [m]
    emissivity : array_like
        Emissivity of the faces (area-weighted over core and winding) [-]
    air_speed_m_s : array_like, optional
        Speed of an air stream along the longer footprint side, 0 in still air [m/s]
    vertical : {"churchill_chu", "churchill_chu_laminar"}, optional
        Correlation for the vertical faces: the all-range form (default) or the laminar
        form (an alternative inside Ra <= 1e9, used for the uncertainty band) [-]
    flags : bool, optional
        Whether to judge the ranges (False: `inside_range` is a plain True, for the
        solver's trial states) [-]

    Returns
    -------
    coefficients : FaceCoefficients
        Side, top and radiation coefficients [W/(m^2 K)] and the range flag [-]

    Notes
    -----
    The face toward the board is no free face; it is left out here. Each remaining face
    takes the correlation published for its orientation, on its own characteristic
    length, with air properties at the film temperature:

    * vertical faces: Churchill-Chu on the height H (`nusselt_vertical_plate`);
    * top face: on L = A/P, Lloyd-Moran/Goldstein where 1e4 <= Ra <= 1e11
      (`nusselt_upper_hot_surface`), below it the Raithby-Hollands small-plate form
      (`nusselt_upper_hot_surface_low_rayleigh`);
    * in an air stream, each face's natural value is combined with the laminar flat-plate
      value on the flow length (`combine_mixed_convection`, `nusselt_flat_plate_laminar`);
    * radiation to surroundings at the air temperature, view factor 1 (a convex part).

    Outside every range the nearest correlation is still evaluated (the fallback) and
    `inside_range` is False.

    References
    ----------
    Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, 2007,
    ch. 7 and 9; the individual correlations' sources.
    """
    rise = np.maximum(np.asarray(rise_K, dtype=float), 0.0)
    film = np.asarray(ambient_C, dtype=float) + ZERO_CELSIUS_K + 0.5 * rise
    # One table lookup for the three properties used (the same interpolation as
    # `air_properties`).
    table = AIR_TABLE
    position = np.clip(
        np.searchsorted(table[:, 0], film, side="right") - 1, 0, len(table) - 2
    )
    lower_T = table[position, 0]
    share = np.clip((film - lower_T) / (table[position + 1, 0] - lower_T), 0.0, 1.0)

    def column(j: int) -> FloatArray:
        low = table[position, j]
        return low + share * (table[position + 1, j] - low)

    viscosity, k, diffusivity, prandtl = column(1), column(2), column(3), column(4)
    length = np.asarray(length_m, dtype=float)
    width = np.asarray(width_m, dtype=float)
    height = np.asarray(height_m, dtype=float)
    scale = GRAVITY / film * rise / (viscosity * diffusivity)
    prandtl_base = 1.0 + (0.492 / prandtl) ** (9.0 / 16.0)

    ra_side = scale * height**3
    if vertical == "churchill_chu":
        nu_side = (0.825 + 0.387 * ra_side ** (1.0 / 6.0) / prandtl_base ** (8.0 / 27.0)) ** 2
    elif vertical == "churchill_chu_laminar":
        nu_side = 0.68 + 0.670 * np.sqrt(np.sqrt(ra_side)) / prandtl_base ** (4.0 / 9.0)
    else:
        raise ValueError(f"unknown vertical-face correlation {vertical!r}")
    h_side = nu_side * k / height

    top_length = length * width / (2.0 * (length + width))
    ra_top = scale * top_length**3
    handover = CORRELATION_RANGES["upper_hot_lloyd_moran"][0]
    high = ra_top >= handover
    # Small-plate form (Raithby-Hollands) below the Lloyd-Moran range, as in
    # `nusselt_upper_hot_surface_low_rayleigh`.
    thin = 0.835 * 0.671 / prandtl_base ** (4.0 / 9.0) * np.sqrt(np.sqrt(np.maximum(ra_top, 1e-12)))
    nu_top = 1.4 / np.log1p(1.4 / thin)
    if np.any(high):
        nu_top = np.where(high, nusselt_upper_hot_surface(ra_top), nu_top)
    h_top = nu_top * k / top_length

    speed = np.asarray(air_speed_m_s, dtype=float)
    forced = bool(np.any(speed > 0))
    if forced:
        flow_length = np.maximum(length, width)
        reynolds = speed * flow_length / viscosity
        h_forced = nusselt_flat_plate_laminar(reynolds, prandtl) * k / flow_length
        h_side = combine_mixed_convection(h_forced, h_side)
        h_top = combine_mixed_convection(h_forced, h_top)

    e = np.asarray(emissivity, dtype=float)
    h_rad = _radiation_h(np.asarray(ambient_C) + rise, ambient_C, e)
    if not flags:
        return FaceCoefficients(h_side, h_top, h_rad, np.ones((), dtype=bool))
    vertical_name = (
        "vertical_churchill_chu" if vertical == "churchill_chu"
        else "vertical_churchill_chu_laminar"
    )
    ok = _inside(vertical_name, ra_side) & np.where(
        high,
        _inside("upper_hot_lloyd_moran", ra_top),
        _inside("upper_hot_raithby_hollands", ra_top),
    )
    if forced:
        ok = ok & _inside("flat_plate_laminar_reynolds", reynolds)
    ok = ok & _inside("air_film_K", film) & (e >= 0.0) & (e <= 1.0)
    return FaceCoefficients(h_side, h_top, h_rad, np.asarray(ok))
