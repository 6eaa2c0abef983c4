"""Thermal physics: temperature rise of a part and its loss-temperature equilibrium.

Three interchangeable models of how the part sheds heat sit in `CONDUCTANCE_MODELS`, a
registry of callables returning the thermal conductance G = P / dT [W/K] at a temperature
rise. `loss_temperature_fixed_point` finds where a temperature-dependent loss P(T) equals
the heat shed, for millions of candidates at once.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from optimag.constants import STEFAN_BOLTZMANN, ZERO_CELSIUS_K
from optimag.errors import ValidityRangeWarning

FloatArray = np.floating | NDArray[np.floating]

#: McLyman's law: dT = MCLYMAN_COEFFICIENT * psi ** MCLYMAN_EXPONENT, psi in W/cm^2.
MCLYMAN_COEFFICIENT = 450.0
MCLYMAN_EXPONENT = 0.826

#: Temperature rise up to which McLyman's fitted curve is trusted [K] (from memory: the
#: published curve spans rises up to about 100 K).
MCLYMAN_MAX_RISE_K = 100.0

#: Core effective volumes over which R_th = 53 Ve^-0.54 is trusted [m^3]: the usual span of
#: ferrite power cores, about 0.1 to 100 cm^3 (common practice, no source).
FERRITE_RTH_VE_RANGE_M3 = (0.1e-6, 100e-6)

#: Rayleigh-number span of the laminar simplified air relation (from memory, Holman).
LAMINAR_RAYLEIGH_RANGE = (1e4, 1e9)

#: g beta / (nu alpha) of air at a 50 degC film temperature [1/(K m^3)], so that
#: Ra = AIR_RAYLEIGH_PER_K_M3 * dT * L^3 (air properties from memory).
AIR_RAYLEIGH_PER_K_M3 = 6.3e7

#: Largest rise at which an equilibrium is sought [K]; none below it counts as runaway.
#: 1000 K above ambient is far beyond any insulation class or ferrite Curie point, so an
#: equilibrium there is no design (common practice, no source).
RUNAWAY_CEILING_RISE_K = 1000.0

#: Temperature returned for a part in thermal runaway [degC]; a sentinel, not a prediction.
RUNAWAY_TEMPERATURE_C = 1.0e6

# Conductances are evaluated at no less than this rise: at dT = 0 the convective and
# McLyman conductances vanish, which would make every part look like a runaway.
_MIN_RISE_K = 1e-3
# Rises scanned, geometrically spaced, and bisection steps of the fallback search.
_SCAN_POINTS = 64
_BISECTIONS = 52
# Relative step of the forward difference giving dG/d(rise).
_SLOPE_STEP = 1e-4


def _warn_if(condition: ArrayLike, message: str) -> None:
    if np.any(condition):
        warnings.warn(message, ValidityRangeWarning, stacklevel=3)


def _check_mclyman(rise_K: ArrayLike) -> None:
    _warn_if(
        np.asarray(rise_K) > MCLYMAN_MAX_RISE_K,
        f"McLyman temperature rise above {MCLYMAN_MAX_RISE_K} K, beyond the fitted curve",
    )


def _check_ferrite_rth(ve_m3: ArrayLike) -> None:
    low, high = FERRITE_RTH_VE_RANGE_M3
    ve = np.asarray(ve_m3)
    _warn_if(
        (ve < low) | (ve > high),
        "ferrite thermal resistance: Ve outside 0.1..100 cm^3, beyond the fitted cores",
    )


def _check_laminar(delta_T_K: ArrayLike, height_m: ArrayLike) -> None:
    low, high = LAMINAR_RAYLEIGH_RANGE
    rayleigh = AIR_RAYLEIGH_PER_K_M3 * np.asarray(delta_T_K) * np.asarray(height_m) ** 3
    _warn_if(
        (rayleigh < low) | (rayleigh > high),
        "natural convection: Rayleigh number outside the laminar range 1e4..1e9",
    )


def _check_emissivity(emissivity: ArrayLike) -> None:
    e = np.asarray(emissivity)
    _warn_if((e < 0.0) | (e > 1.0), "radiation: emissivity outside 0..1")


# --------------------------------------------------------------------------- kernels
# Warning-free kernels: the fixed point calls them on trial values that may lie outside a
# model's range, and checks the range once on the final state instead.


def _mclyman_rise(loss_W: ArrayLike, surface_m2: ArrayLike) -> FloatArray:
    psi_W_cm2 = np.maximum(np.asarray(loss_W), 0.0) / (np.asarray(surface_m2) * 1e4)
    return MCLYMAN_COEFFICIENT * psi_W_cm2**MCLYMAN_EXPONENT


def _convection_h(delta_T_K: ArrayLike, height_m: ArrayLike) -> FloatArray:
    return 1.42 * np.sqrt(np.sqrt(np.maximum(np.asarray(delta_T_K), 0.0) / np.asarray(height_m)))


def _radiation_h(surface_C: ArrayLike, ambient_C: ArrayLike, emissivity: ArrayLike) -> FloatArray:
    ts = np.asarray(surface_C) + ZERO_CELSIUS_K
    ta = np.asarray(ambient_C) + ZERO_CELSIUS_K
    return np.asarray(emissivity) * STEFAN_BOLTZMANN * (ts * ts + ta * ta) * (ts + ta)


def _ferrite_rth(ve_m3: ArrayLike) -> FloatArray:
    return 53.0 * (np.asarray(ve_m3) * 1e6) ** -0.54


# --------------------------------------------------------------------------- public laws


def temperature_rise_mclyman(loss_W: ArrayLike, surface_m2: ArrayLike) -> FloatArray:
    """Temperature rise from total loss per unit surface (McLyman's empirical law).

    Parameters
    ----------
    loss_W : array_like
        Total loss of the part, >= 0 [W]
    surface_m2 : array_like
        Surface area of the wound part [m^2]

    Returns
    -------
    rise : ndarray
        Temperature rise above ambient [K]

    Notes
    -----
    .. math:: \\Delta T = 450\\, \\psi^{0.826}, \\quad \\psi = P / A_s \\ [\\mathrm{W/cm^2}]

    Warns for rises above 100 K.

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press, 2011
    (temperature rise versus surface dissipation).
    """
    rise = _mclyman_rise(loss_W, surface_m2)
    _check_mclyman(rise)
    return rise


def thermal_resistance_ferrite_core(ve_m3: ArrayLike) -> FloatArray:
    """Thermal resistance of a wound ferrite core from its effective volume.

    Parameters
    ----------
    ve_m3 : array_like
        Effective core volume Ve [m^3]

    Returns
    -------
    r_th : ndarray
        Thermal resistance surface-to-ambient [K/W]

    Notes
    -----
    .. math:: R_{th} = 53\\, V_e^{-0.54}, \\quad V_e \\ [\\mathrm{cm^3}]

    Warns outside Ve = 0.1..100 cm^3.

    References
    ----------
    S. Maniktala, Switching Power Supplies A-Z, 2nd ed., Newnes (Elsevier), 2012.
    """
    _check_ferrite_rth(ve_m3)
    return _ferrite_rth(ve_m3)


def natural_convection_coefficient(delta_T_K: ArrayLike, height_m: ArrayLike) -> FloatArray:
    """Natural-convection heat-transfer coefficient of a vertical surface in air.

    Parameters
    ----------
    delta_T_K : array_like
        Surface-to-ambient temperature difference, >= 0 [K]
    height_m : array_like
        Height of the vertical surface (characteristic length) [m]

    Returns
    -------
    h : ndarray
        Heat-transfer coefficient [W/(m^2 K)]

    Notes
    -----
    Simplified relation for air at atmospheric pressure, laminar flow:

    .. math:: h = 1.42 \\left(\\Delta T / L\\right)^{1/4}

    Warns when the Rayleigh number, estimated as 6.3e7 dT L^3 (air at a 50 degC film),
    leaves the laminar range 1e4..1e9.

    References
    ----------
    J. P. Holman, Heat Transfer, McGraw-Hill (simplified equations for free convection
    from surfaces to air; relation and range from memory).
    """
    _check_laminar(delta_T_K, height_m)
    return _convection_h(delta_T_K, height_m)


def radiation_coefficient(
    surface_C: ArrayLike, ambient_C: ArrayLike, emissivity: ArrayLike
) -> FloatArray:
    """Linearised radiation heat-transfer coefficient to surroundings at ambient.

    Parameters
    ----------
    surface_C : array_like
        Surface temperature [degC]
    ambient_C : array_like
        Ambient (surroundings) temperature [degC]
    emissivity : array_like
        Surface emissivity, 0..1 [-]

    Returns
    -------
    h_rad : ndarray
        Radiation coefficient [W/(m^2 K)]

    Notes
    -----
    .. math::

        h_{rad} = \\varepsilon\\sigma \\frac{T_s^4 - T_a^4}{T_s - T_a}
        = \\varepsilon\\sigma (T_s^2 + T_a^2)(T_s + T_a)

    in kelvin; the factored form is finite at T_s = T_a.

    References
    ----------
    F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, Fundamentals of Heat and
    Mass Transfer, 6th ed., Wiley, 2007, eq. 1.9 (radiation heat-transfer coefficient).
    """
    _check_emissivity(emissivity)
    return _radiation_h(surface_C, ambient_C, emissivity)


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


def _inside(name: str, value: ArrayLike) -> NDArray[np.bool_]:
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
    inside_range: NDArray[np.bool_]


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


def _faces_conductance(
    rise_K: FloatArray, part: ThermalContext, vertical: str, flags: bool = False
):
    if part.length_m is None or part.width_m is None:
        raise ValueError("the face-by-face thermal model needs length_m and width_m")
    faces = face_coefficients(
        rise_K, part.ambient_C, part.length_m, part.width_m, part.height_m, part.emissivity,
        part.air_speed_m_s, vertical=vertical, flags=flags,
    )
    length = np.asarray(part.length_m)
    width = np.asarray(part.width_m)
    side_area = 2.0 * (length + width) * np.asarray(part.height_m)
    top_area = length * width
    air = (faces.side_W_m2K + faces.radiation_W_m2K) * side_area + (
        faces.top_W_m2K + faces.radiation_W_m2K
    ) * top_area
    return np.asarray(part.air_exposed) * air + np.asarray(part.fixed_conductance_W_K), faces


def conductance_faces(rise_K: FloatArray, part: ThermalContext) -> FloatArray:
    """Conductance of the part face by face, plus any fixed path, G [W/K]

    Parameters
    ----------
    rise_K : array_like
        Temperature rise of the surface over the reference (air) temperature [K]
    part : ThermalContext
        Footprint sides, height, emissivity, air speed, fixed conductance and whether the
        faces meet air [-]

    Returns
    -------
    conductance : ndarray
        Thermal conductance to the reference temperature [W/K]

    Notes
    -----
    .. math::

        G = a\\left[(h_{side} + h_r)\\, 2(l + w) H + (h_{top} + h_r)\\, l w\\right]
        + G_{fixed}

    with the coefficients of `face_coefficients` and a = `air_exposed`. The face toward the
    board carries no air heat.

    References
    ----------
    See `face_coefficients`.
    """
    return _faces_conductance(rise_K, part, "churchill_chu")[0]


def conductance_faces_laminar(rise_K: FloatArray, part: ThermalContext) -> FloatArray:
    """As `conductance_faces` with the laminar Churchill-Chu form on the vertical faces.

    Parameters
    ----------
    rise_K : array_like
        Temperature rise of the surface [K]
    part : ThermalContext
        As for `conductance_faces` [-]

    Returns
    -------
    conductance : ndarray
        Thermal conductance [W/K]

    References
    ----------
    Incropera et al., 6th ed., eq. 9.27.
    """
    return _faces_conductance(rise_K, part, "churchill_chu_laminar")[0]


# --------------------------------------------------------------------------- models


class ThermalContext(NamedTuple):
    """What a conductance model may need about the part; fields broadcast together.

    Attributes
    ----------
    ambient_C : ambient temperature [degC]
    surface_m2 : surface area of the wound part [m^2]
    height_m : height of the part, the convection length [m]
    emissivity : surface emissivity [-]
    ve_m3 : effective core volume, or None when no model needs it [m^3]
    length_m, width_m : sides of the part's footprint, for the face-by-face model [m]
    air_speed_m_s : speed of a forced air stream along the part, 0 in still air [m/s]
    fixed_conductance_W_K : conductance of paths that do not depend on the rise (board,
        potting compound), added to the air path by the face-by-face model [W/K]
    air_exposed : 1 where the free faces meet air, 0 where a compound covers them [-]
    """

    ambient_C: ArrayLike
    surface_m2: ArrayLike
    height_m: ArrayLike
    emissivity: ArrayLike
    ve_m3: ArrayLike | None
    length_m: ArrayLike | None = None
    width_m: ArrayLike | None = None
    air_speed_m_s: ArrayLike = 0.0
    fixed_conductance_W_K: ArrayLike = 0.0
    air_exposed: ArrayLike = 1.0


ConductanceModel = Callable[[FloatArray, ThermalContext], FloatArray]


def conductance_convection(rise_K: FloatArray, part: ThermalContext) -> FloatArray:
    """Surface conductance by natural convection plus radiation, G = (h_c + h_r) S [W/K]

    Parameters
    ----------
    rise_K : array_like
        Temperature rise of the surface [K]
    part : ThermalContext
        Ambient, surface, height and emissivity of the part [-]

    Returns
    -------
    conductance : ndarray
        Thermal conductance to ambient [W/K]

    Notes
    -----
    .. math:: G = \\left[1.42 (\\Delta T / L)^{1/4} + h_{rad}\\right] S

    One coefficient for all faces, the part treated as a vertical surface of its height
    (common practice, no source).

    References
    ----------
    J. P. Holman, Heat Transfer, McGraw-Hill (from memory); Stefan-Boltzmann law.
    """
    h = _convection_h(rise_K, part.height_m) + _radiation_h(
        np.asarray(part.ambient_C) + rise_K, part.ambient_C, part.emissivity
    )
    return h * np.asarray(part.surface_m2)


def conductance_mclyman(rise_K: FloatArray, part: ThermalContext) -> FloatArray:
    """Equivalent conductance G = P / dT of McLyman's law at a temperature rise [W/K]

    Parameters
    ----------
    rise_K : array_like
        Temperature rise of the surface, > 0 [K]
    part : ThermalContext
        Surface of the part [-]

    Returns
    -------
    conductance : ndarray
        Thermal conductance to ambient [W/K]

    Notes
    -----
    Inverting dT = 450 (P / S_cm2)^0.826:

    .. math:: G = \\frac{P}{\\Delta T} = S_{cm^2} \\frac{(\\Delta T/450)^{1/0.826}}{\\Delta T}

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press, 2011.
    """
    rise = np.asarray(rise_K)
    surface_cm2 = np.asarray(part.surface_m2) * 1e4
    return surface_cm2 * (rise / MCLYMAN_COEFFICIENT) ** (1.0 / MCLYMAN_EXPONENT) / rise


def conductance_ferrite_rth(rise_K: FloatArray, part: ThermalContext) -> FloatArray:
    """Conductance 1/R_th of a ferrite core from its effective volume [W/K]

    Parameters
    ----------
    rise_K : array_like
        Temperature rise (unused: R_th is constant) [K]
    part : ThermalContext
        Effective core volume of the part [-]

    Returns
    -------
    conductance : ndarray
        Thermal conductance to ambient [W/K]

    Notes
    -----
    .. math:: G = 1 / (53\\, V_e^{-0.54}), \\quad V_e \\ [\\mathrm{cm^3}]

    References
    ----------
    S. Maniktala, Switching Power Supplies A-Z, 2nd ed., Newnes (Elsevier), 2012.
    """
    if part.ve_m3 is None:
        raise ValueError("thermal model 'ferrite_rth' needs ve_m3")
    # Adding 0 * rise broadcasts the constant to the shape of the trial rises.
    return 1.0 / _ferrite_rth(part.ve_m3) + 0.0 * np.asarray(rise_K)


def _inside_convection(rise_K: FloatArray, part: ThermalContext) -> NDArray[np.bool_]:
    low, high = LAMINAR_RAYLEIGH_RANGE
    rayleigh = AIR_RAYLEIGH_PER_K_M3 * np.asarray(rise_K) * np.asarray(part.height_m) ** 3
    e = np.asarray(part.emissivity)
    return (rayleigh >= low) & (rayleigh <= high) & (e >= 0.0) & (e <= 1.0)


def _inside_mclyman(rise_K: FloatArray, part: ThermalContext) -> NDArray[np.bool_]:
    return np.asarray(rise_K) <= MCLYMAN_MAX_RISE_K


def _inside_ferrite(rise_K: FloatArray, part: ThermalContext) -> NDArray[np.bool_]:
    low, high = FERRITE_RTH_VE_RANGE_M3
    ve = np.asarray(part.ve_m3)
    return (ve >= low) & (ve <= high) & np.ones(np.shape(rise_K), dtype=bool)


def _inside_faces(rise_K: FloatArray, part: ThermalContext) -> NDArray[np.bool_]:
    # Faces that meet no air (potted) use no air correlation.
    inside = _faces_conductance(rise_K, part, "churchill_chu", True)[1].inside_range
    return inside | (np.asarray(part.air_exposed) == 0)


def _inside_faces_laminar(rise_K: FloatArray, part: ThermalContext) -> NDArray[np.bool_]:
    inside = _faces_conductance(rise_K, part, "churchill_chu_laminar", True)[1].inside_range
    return inside | (np.asarray(part.air_exposed) == 0)


RangeFlags = Callable[[FloatArray, ThermalContext], NDArray[np.bool_]]

#: Thermal models by name: (conductance at a rise, per-part flag "inside the published
#: range" on the final state). "faces" is the face-by-face model (default); the others are
#: whole-part laws kept for comparison and for the uncertainty band.
CONDUCTANCE_MODELS: dict[str, tuple[ConductanceModel, RangeFlags]] = {
    "faces": (conductance_faces, _inside_faces),
    "faces_laminar": (conductance_faces_laminar, _inside_faces_laminar),
    "convection": (conductance_convection, _inside_convection),
    "mclyman": (conductance_mclyman, _inside_mclyman),
    "ferrite_rth": (conductance_ferrite_rth, _inside_ferrite),
}

#: What each model's range flag covers, for messages.
RANGE_MESSAGES = {
    "faces": "face-by-face convection: a correlation outside its published range",
    "faces_laminar": "face-by-face convection (laminar form): a correlation outside its range",
    "convection": "natural convection: Rayleigh number outside the laminar range 1e4..1e9",
    "mclyman": f"McLyman temperature rise above {MCLYMAN_MAX_RISE_K} K, beyond the fitted curve",
    "ferrite_rth": "ferrite thermal resistance: Ve outside 0.1..100 cm^3, beyond the fitted cores",
}


# --------------------------------------------------------------------------- equilibrium


class ThermalEquilibrium(NamedTuple):
    """Steady state of a part whose loss depends on its temperature.

    Attributes
    ----------
    temperature_C : part temperature; RUNAWAY_TEMPERATURE_C where `runaway` [degC]
    loss_W : loss at that temperature (a sentinel value too where `runaway`) [W]
    runaway : True where no equilibrium was found: the loss grows faster with temperature
        than the part can shed it [-]
    conductance_W_K : conductance to ambient used in the last step [W/K]
    inside_range : True where the model was used inside its published range at the
        equilibrium (True where `runaway`: there is no state to judge) [-]
    """

    temperature_C: FloatArray
    loss_W: FloatArray
    runaway: NDArray[np.bool_]
    conductance_W_K: FloatArray
    inside_range: NDArray[np.bool_]


def _smallest_nonnegative_root(
    a: FloatArray, b: FloatArray, c: FloatArray
) -> tuple[FloatArray, NDArray[np.bool_]]:
    """Smallest root x >= 0 of a x^2 + b x + c = 0 with c >= 0; (root, found)."""
    disc = b * b - 4.0 * a * c
    sqrt_disc = np.sqrt(np.maximum(disc, 0.0))
    # Citardauq form 2c / (-b + sqrt(disc)) gives the root nearest zero without the
    # cancellation of (-b - sqrt(disc)) / 2a, and stays valid when a = 0 or a < 0.
    denominator = sqrt_disc - b
    positive = denominator > 0.0
    found = ((disc >= 0.0) & positive) | (c <= 0.0)
    root = 2.0 * np.maximum(c, 0.0) / np.where(positive, denominator, 1.0)
    return np.where(found, root, 0.0), found


def _take(part: ThermalContext, index: NDArray[np.intp]) -> ThermalContext:
    return ThermalContext(*(None if v is None else v[index] for v in part))


def _bracket_first_equilibrium(
    conductance_of: ConductanceModel,
    part: ThermalContext,
    curvature: NDArray[np.floating],
    slope0: NDArray[np.floating],
    loss0: NDArray[np.floating],
) -> tuple[NDArray[np.floating], NDArray[np.bool_], NDArray[np.floating]]:
    """First rise where the heat shed catches up with the loss, by scan and bisection.

    The surplus s(x) = G(x) x - P(T_a + x) starts at -P(T_a) <= 0; the stable equilibrium
    is its first sign change. G non-decreasing makes G at the ceiling the largest below
    it, so the plain quadratic with that G either has no root (runaway, proven) or a root
    that bounds the equilibrium from below. From that bound to the ceiling the surplus is
    scanned on a geometric grid and its first sign change bisected. A stable window
    narrower than the grid spacing (about 10 % of the rise) is missed and reported as
    runaway: such a part is a hair from runaway anyway. Returns (rise, found, conductance).
    """
    rise = np.full(loss0.shape, RUNAWAY_CEILING_RISE_K)
    found = np.zeros(loss0.shape, dtype=bool)
    conductance = conductance_of(rise, part)
    lower, ok = _smallest_nonnegative_root(curvature, slope0 - conductance, loss0)
    maybe = np.flatnonzero(ok & (lower <= RUNAWAY_CEILING_RISE_K))
    # Rows per scan block keep the (part, grid point) matrices to a few MB.
    block = max(1, 2**18 // _SCAN_POINTS)
    for begin in range(0, maybe.size, block):
        rows = maybe[begin : begin + block]
        rise[rows], found[rows] = _scan_and_bisect(
            conductance_of,
            _take(part, rows),
            curvature[rows],
            slope0[rows],
            loss0[rows],
            np.maximum(lower[rows], _MIN_RISE_K),
        )
        conductance[rows] = conductance_of(np.maximum(rise[rows], _MIN_RISE_K), _take(part, rows))
    return rise, found, conductance


def _scan_and_bisect(
    conductance_of: ConductanceModel,
    part: ThermalContext,
    curvature: NDArray[np.floating],
    slope0: NDArray[np.floating],
    loss0: NDArray[np.floating],
    start: NDArray[np.floating],
) -> tuple[NDArray[np.floating], NDArray[np.bool_]]:
    def surplus(
        rise: NDArray[np.floating],
        parts: ThermalContext,
        curvature: NDArray[np.floating],
        slope0: NDArray[np.floating],
        loss0: NDArray[np.floating],
    ) -> NDArray[np.floating]:
        loss = loss0 + rise * (slope0 + curvature * rise)
        # A rounding-level allowance, so a lower bound that is itself the equilibrium (a
        # constant G) is not stepped over.
        return conductance_of(rise, parts) * rise - loss * (1.0 - 1e-12)

    fraction = np.linspace(0.0, 1.0, _SCAN_POINTS)
    # Geometric grid per part from its lower bound to the ceiling.
    grid = start[:, None] * (RUNAWAY_CEILING_RISE_K / start[:, None]) ** fraction
    column = ThermalContext(*(None if v is None else v[:, np.newaxis] for v in part))
    caught_up = surplus(grid, column, curvature[:, None], slope0[:, None], loss0[:, None]) >= 0.0
    found = caught_up.any(axis=1)
    first = np.argmax(caught_up, axis=1)
    rows = np.arange(first.size)
    high = grid[rows, first]
    low = np.where(first > 0, grid[rows, np.maximum(first - 1, 0)], 0.0)
    for _ in range(_BISECTIONS):
        middle = 0.5 * (low + high)
        ahead = surplus(middle, part, curvature, slope0, loss0) >= 0.0
        high = np.where(ahead, middle, high)
        low = np.where(ahead, low, middle)
    # The upper end sheds at least the loss: the conservative side of the bracket.
    return np.where(found, high, RUNAWAY_CEILING_RISE_K), found


def loss_temperature_fixed_point(
    ambient_C: ArrayLike,
    loss_coefficients: tuple[ArrayLike, ArrayLike, ArrayLike],
    surface_m2: ArrayLike,
    height_m: ArrayLike,
    emissivity: ArrayLike = 0.9,
    model: str = "convection",
    ve_m3: ArrayLike | None = None,
    max_iterations: int = 8,
    *,
    tolerance: float = 1e-7,
    length_m: ArrayLike | None = None,
    width_m: ArrayLike | None = None,
    air_speed_m_s: ArrayLike = 0.0,
    fixed_conductance_W_K: ArrayLike = 0.0,
    air_exposed: ArrayLike = 1.0,
    heat_offset_W: ArrayLike = 0.0,
    enclosure: Enclosure | None = None,
) -> ThermalEquilibrium:
    """Temperature at which a temperature-dependent loss equals the heat shed.

    Parameters
    ----------
    ambient_C : array_like
        Ambient temperature T_a [degC]
    loss_coefficients : tuple of array_like
        (a0, a1, a2) of the loss P(T) = a0 + a1 T + a2 T^2, T in degC; a0 in [W], a1 in
        [W/K], a2 in [W/K^2]; P must be >= 0 over the temperatures of interest [W]
    surface_m2 : array_like
        Surface area of the wound part [m^2]
    height_m : array_like
        Height of the part, the convection length [m]
    emissivity : array_like, optional
        Surface emissivity for the radiation part of "convection" [-]
    model : str, optional
        Key of `CONDUCTANCE_MODELS`: "convection" (default), "mclyman" or "ferrite_rth" [-]
    ve_m3 : array_like, optional
        Effective core volume, needed by "ferrite_rth" [m^3]
    max_iterations : int, optional
        Upper bound on conductance updates [-]
    tolerance : float, optional
        A part has settled once its rise changes by less than this fraction of
        (1 K + rise) in one step; 0 sends every part to the bracketing search (slow, for
        cross-checks) [-]
    length_m, width_m : array_like, optional
        Footprint sides, needed by "faces" and "faces_laminar" [m]
    air_speed_m_s : array_like, optional
        Forced air speed along the part, for the face models [m/s]
    fixed_conductance_W_K : array_like, optional
        Conductance of fixed paths (board, potting) to their sink [W/K]
    air_exposed : array_like, optional
        1 where the faces meet air, 0 where potted [-]
    heat_offset_W : array_like, optional
        Heat a sink warmer than ambient pushes into the part at ambient temperature: a
        board at T_b through G_b gives G_b (T_b - T_a), >= 0 [W]
    enclosure : Enclosure, optional
        A closed box around the part: ambient_C is then the air outside it, and the part
        sheds into the box's inside air, whose rise follows the part's loss [-]

    Returns
    -------
    equilibrium : ThermalEquilibrium
        Temperature, loss, runaway flag, conductance; never NaN or inf.
        Where `runaway` the temperature is RUNAWAY_TEMPERATURE_C and the loss is P there,
        both sentinels for "no design".

    Notes
    -----
    With the conductance G = 1/R_th frozen at the current estimate, the heat balance
    P(T) = G (T - T_a) in the rise x = T - T_a is the quadratic

    .. math::

        a_2 x^2 + \\left(P'(T_a) - G\\right) x + P(T_a) = 0,

    whose smallest root x >= 0 is the stable equilibrium (no root: the loss outgrows the
    heat shed). G is then re-evaluated at the new rise and the step repeated. To converge in
    a few steps even when the loss rises steeply with temperature, G is linearised about the
    estimate x_k, G(x) ~ G_k + G'_k (x - x_k) with G'_k >= 0 from a forward difference, which
    keeps the equation quadratic:

    .. math::

        (a_2 - G'_k) x^2 + \\left(P'(T_a) - G_k + G'_k x_k\\right) x + P(T_a) = 0

    (a Newton step on the heat balance; G'_k = 0 for the constant R_th model).

    A part whose steps yield no root, or have not settled after `max_iterations`, falls
    back to a bracketing search on the surplus G(x) x - P(T_a + x), negative at x = 0:
    G at RUNAWAY_CEILING_RISE_K is the largest conductance below it (G is non-decreasing in
    every model), so the plain quadratic with that G either has no root, proving runaway,
    or gives a lower bound of the equilibrium; from there to the ceiling the surplus is
    scanned on a geometric grid and its first sign change bisected (the upper end, where
    the part sheds at least its loss, is returned). No sign change: runaway. A stable window
    narrower than the grid spacing (about 10 % of the rise) is missed and reported as
    runaway; such a part is a hair from runaway anyway. Only the few hard parts pay for the
    scan.

    With a heat offset Q_0 the balance is P(T) + Q_0 = G x: a sink at T_b through G_b
    takes G_b (T - T_b) = G_b x - Q_0, so the board path joins G and its temperature enters
    as Q_0 (the same quadratic, P(T_a) raised by Q_0). In an enclosure, the inside air rise
    for the current loss (`enclosure_air_rise`) is added to the ambient and the equilibrium
    solved again until the air rise settles (a part whose air rise does not settle in
    `_ENCLOSURE_STEPS` rounds is reported as runaway).

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press, 2011;
    S. Maniktala, Switching Power Supplies A-Z, 2nd ed., Newnes, 2012;
    J. P. Holman, Heat Transfer, McGraw-Hill (from memory); Incropera et al., Fundamentals
    of Heat and Mass Transfer, 6th ed., 2007. The iteration scheme is this module's own (no
    source).
    """
    context = {
        "surface_m2": surface_m2, "height_m": height_m, "emissivity": emissivity,
        "ve_m3": ve_m3, "length_m": length_m, "width_m": width_m,
        "air_speed_m_s": air_speed_m_s, "fixed_conductance_W_K": fixed_conductance_W_K,
        "air_exposed": air_exposed,
    }
    options = {
        "model": model, "max_iterations": max_iterations, "tolerance": tolerance,
        "heat_offset_W": heat_offset_W,
    }
    if enclosure is None:
        return _fixed_point(ambient_C, loss_coefficients, context, **options)
    outside = np.asarray(ambient_C, dtype=float)
    if outside.ndim:
        raise ValueError("an enclosure needs one outside ambient temperature")
    a0, a1, a2 = (np.asarray(a, dtype=float) for a in loss_coefficients)
    shape = np.broadcast_shapes(
        a0.shape, a1.shape, a2.shape, np.shape(heat_offset_W),
        *(np.shape(v) for v in context.values() if v is not None),
    )

    def flat(value: ArrayLike | None) -> NDArray[np.floating] | None:
        if value is None:
            return None
        return np.broadcast_to(np.asarray(value, dtype=float), shape).ravel()

    coefficients = tuple(flat(a) for a in (a0, a1, a2))
    parts = {name: flat(value) for name, value in context.items()}
    options["heat_offset_W"] = flat(heat_offset_W)
    count = coefficients[0].size
    table_heat, table_ok = _enclosure_split(_ENCLOSURE_RISES, float(outside), enclosure)
    # First guess: the inside air heated by the loss at the outside temperature.
    t0 = float(outside)
    air_rise = np.interp(
        np.maximum(coefficients[0] + t0 * (coefficients[1] + coefficients[2] * t0), 0.0),
        table_heat, _ENCLOSURE_RISES, left=0.0,
    )
    temperature = np.empty(count)
    loss = np.empty(count)
    runaway = np.ones(count, dtype=bool)
    conductance = np.zeros(count)
    inside = np.ones(count, dtype=bool)
    active = np.arange(count)
    previous_air = np.full(count, np.nan)
    previous_new = np.full(count, np.nan)
    for _ in range(_ENCLOSURE_STEPS):
        result = _fixed_point(
            t0 + air_rise[active],
            tuple(a[active] for a in coefficients),
            {k: (None if v is None else v[active]) for k, v in parts.items()},
            **{**options, "heat_offset_W": options["heat_offset_W"][active]},
        )
        temperature[active], loss[active] = result.temperature_C, result.loss_W
        runaway[active], conductance[active] = result.runaway, result.conductance_W_K
        inside[active] = result.inside_range
        heat = np.where(result.runaway, 0.0, result.loss_W)
        new_rise = np.interp(heat, table_heat, _ENCLOSURE_RISES, left=0.0)
        current = air_rise[active]
        moving = ~result.runaway & (np.abs(new_rise - current) > _ENCLOSURE_TOLERANCE_K)
        # Secant step on air = E(P(T(air))): the plain update contracts slowly when the
        # loss rises steeply with temperature in a small box.
        with np.errstate(divide="ignore", invalid="ignore"):
            slope = (new_rise - previous_new[active]) / (current - previous_air[active])
        usable = np.isfinite(slope) & (slope < 0.9)
        step = np.where(usable, (new_rise - current) / (1.0 - np.where(usable, slope, 0.0)),
                        new_rise - current)
        previous_air[active], previous_new[active] = current, new_rise
        air_rise[active] = np.maximum(current + step, 0.0)
        active = active[moving]
        if active.size == 0:
            break
    # A part whose inside air has not settled is reported as runaway (conservative).
    runaway[active] = True
    # The box's own correlations, judged at the settled inside air rise (to the table's
    # resolution).
    box_ok = np.interp(air_rise, _ENCLOSURE_RISES, table_ok.astype(float)) > 0.5
    inside &= box_ok | runaway
    inside[active] = True
    temperature = np.where(runaway, RUNAWAY_TEMPERATURE_C, temperature)
    return ThermalEquilibrium(
        temperature.reshape(shape)[()], loss.reshape(shape)[()], runaway.reshape(shape)[()],
        conductance.reshape(shape)[()], inside.reshape(shape)[()],
    )


# Rounds of inside-air updates for a part in an enclosure, and the change of the inside
# air rise [K] below which it has settled.
_ENCLOSURE_STEPS = 40
_ENCLOSURE_TOLERANCE_K = 1e-6


def _fixed_point(
    ambient_C: ArrayLike,
    loss_coefficients: tuple[ArrayLike, ArrayLike, ArrayLike],
    context: dict,
    *,
    model: str,
    max_iterations: int,
    tolerance: float,
    heat_offset_W: ArrayLike,
) -> ThermalEquilibrium:
    ve_m3 = context["ve_m3"]
    try:
        conductance_of, inside_range = CONDUCTANCE_MODELS[model]
    except KeyError:
        raise ValueError(
            f"unknown thermal model {model!r}; choose one of {sorted(CONDUCTANCE_MODELS)}"
        ) from None
    if model == "ferrite_rth" and ve_m3 is None:
        raise ValueError("thermal model 'ferrite_rth' needs ve_m3")

    a0, a1, a2 = (np.asarray(a, dtype=float) for a in loss_coefficients)
    ambient = np.asarray(ambient_C, dtype=float)
    loss_at_ambient = a0 + ambient * (a1 + a2 * ambient)
    slope_at_ambient = a1 + 2.0 * a2 * ambient
    offset = np.asarray(heat_offset_W, dtype=float)
    shape = np.broadcast_shapes(
        loss_at_ambient.shape,
        offset.shape,
        *(np.shape(v) for v in context.values() if v is not None),
    )

    def flat(value: ArrayLike | None) -> NDArray[np.floating] | None:
        if value is None:
            return None
        return np.broadcast_to(np.asarray(value, dtype=float), shape).ravel()

    # Flat copies let the loop shrink to the parts still iterating: most settle in three
    # steps, a few near tangency need more.
    part = ThermalContext(
        ambient_C=flat(ambient), **{name: flat(value) for name, value in context.items()}
    )
    curvature, slope0 = flat(a2), flat(slope_at_ambient)
    loss0 = flat(loss_at_ambient) + flat(offset)
    count = loss0.size

    # McLyman's law at the ambient loss is a fair first guess for any surface-cooled part.
    rise = np.clip(_mclyman_rise(loss0, np.maximum(part.surface_m2, 1e-6)), 1.0, 200.0)
    conductance = np.zeros(count)
    found = np.zeros(count, dtype=bool)
    active = np.arange(count)
    unsettled = []
    for _ in range(max(int(max_iterations), 1)):
        sub = part if active.size == count else _take(part, active)
        at = np.maximum(rise[active], _MIN_RISE_K)
        g = conductance_of(at, sub)
        # Linearising G about the estimate turns the plain update of G into a Newton step:
        # without it, a loss rising steeply with temperature makes the plain update
        # alternate about the equilibrium and, near tangency, never settle.
        step = _SLOPE_STEP * at
        slope = np.maximum((conductance_of(at + step, sub) - g) / step, 0.0)
        root, ok = _smallest_nonnegative_root(
            curvature[active] - slope, slope0[active] - (g - slope * at), loss0[active]
        )
        ok &= root <= RUNAWAY_CEILING_RISE_K
        settled = ok & (np.abs(root - rise[active]) <= tolerance * (1.0 + root))
        rise[active] = np.where(ok, root, rise[active])
        conductance[active] = g
        found[active] = settled
        # No root of the linearised balance proves nothing when G is convex (radiation):
        # such parts go to the bracketing search below.
        unsettled.append(active[~ok])
        active = active[ok & ~settled]
        if active.size == 0:
            break
    unsettled.append(active)
    hard = np.concatenate(unsettled)
    if hard.size:
        rise[hard], found[hard], conductance[hard] = _bracket_first_equilibrium(
            conductance_of, _take(part, hard), curvature[hard], slope0[hard], loss0[hard]
        )

    runaway = ~found
    temperature = np.where(runaway, RUNAWAY_TEMPERATURE_C, part.ambient_C + rise)
    loss = flat(a0) + temperature * (flat(a1) + curvature * temperature)
    inside = np.ones(count, dtype=bool)
    if np.any(found):
        inside[found] = inside_range(rise[found], _take(part, found))
        _warn_if(~inside, RANGE_MESSAGES[model])
    return ThermalEquilibrium(
        temperature.reshape(shape)[()],
        loss.reshape(shape)[()],
        runaway.reshape(shape)[()],
        conductance.reshape(shape)[()],
        inside.reshape(shape)[()],
    )


def temperature_rise(
    loss_W: ArrayLike,
    surface_m2: ArrayLike,
    height_m: ArrayLike,
    model: str = "convection",
    *,
    ambient_C: ArrayLike = 25.0,
    emissivity: ArrayLike = 0.9,
    ve_m3: ArrayLike | None = None,
    max_iterations: int = 20,
    **options: ArrayLike,
) -> FloatArray:
    """Temperature rise of a part dissipating a fixed loss.

    Parameters
    ----------
    loss_W : array_like
        Total loss, >= 0 [W]
    surface_m2 : array_like
        Surface area of the wound part [m^2]
    height_m : array_like
        Height of the part, the convection length [m]
    model : str, optional
        Key of `CONDUCTANCE_MODELS` [-]
    ambient_C : array_like, optional
        Ambient temperature [degC]
    emissivity : array_like, optional
        Surface emissivity [-]
    ve_m3 : array_like, optional
        Effective core volume, needed by "ferrite_rth" [m^3]
    max_iterations : int, optional
        Upper bound on conductance updates [-]
    **options : array_like
        Footprint sides, air speed, fixed paths, as for `loss_temperature_fixed_point` [-]

    Returns
    -------
    rise : ndarray
        Temperature rise above ambient; RUNAWAY_TEMPERATURE_C - ambient where the part
        cannot shed the loss within RUNAWAY_CEILING_RISE_K [K]

    Notes
    -----
    `loss_temperature_fixed_point` with P(T) = P, i.e. solving P = G(dT) dT.

    References
    ----------
    See `loss_temperature_fixed_point`.
    """
    zero = np.zeros_like(np.asarray(loss_W, dtype=float))
    equilibrium = loss_temperature_fixed_point(
        ambient_C,
        (loss_W, zero, zero),
        surface_m2,
        height_m,
        emissivity=emissivity,
        model=model,
        ve_m3=ve_m3,
        max_iterations=max_iterations,
        **options,
    )
    return equilibrium.temperature_C - np.asarray(ambient_C)


def heat_shed(
    rise_K: ArrayLike,
    ambient_C: ArrayLike,
    surface_m2: ArrayLike,
    height_m: ArrayLike,
    emissivity: ArrayLike = 0.9,
    model: str = "convection",
    ve_m3: ArrayLike | None = None,
    *,
    length_m: ArrayLike | None = None,
    width_m: ArrayLike | None = None,
    air_speed_m_s: ArrayLike = 0.0,
    fixed_conductance_W_K: ArrayLike = 0.0,
    air_exposed: ArrayLike = 1.0,
) -> FloatArray:
    """Heat a part sheds to ambient at a given temperature rise, Q = G(dT) dT [W].

    Parameters
    ----------
    rise_K : array_like
        Temperature rise of the part over ambient, > 0 [K]
    ambient_C : array_like
        Ambient temperature [degC]
    surface_m2 : array_like
        Surface area of the part [m^2]
    height_m : array_like
        Height of the part (convection length) [m]
    emissivity : array_like
        Surface emissivity [-]
    model : str
        Key of `CONDUCTANCE_MODELS` [-]
    ve_m3 : array_like, optional
        Effective core volume, for "ferrite_rth" [m^3]
    length_m, width_m, air_speed_m_s, fixed_conductance_W_K, air_exposed : optional
        As for `loss_temperature_fixed_point` [-]

    Returns
    -------
    heat : ndarray
        Heat flow to ambient [W]

    Notes
    -----
    Q increases monotonically with the rise for every registered model, so a part whose
    smallest possible loss between ambient and a temperature limit exceeds Q at that limit
    cannot settle below the limit. The search uses this as an exact pre-screen.

    References
    ----------
    As for the conductance models in `CONDUCTANCE_MODELS`.
    """
    conductance, _ = CONDUCTANCE_MODELS[model]
    rise = np.maximum(np.asarray(rise_K, dtype=float), _MIN_RISE_K)
    part = ThermalContext(
        ambient_C, surface_m2, height_m, emissivity, ve_m3, length_m, width_m, air_speed_m_s,
        fixed_conductance_W_K, air_exposed,
    )
    return conductance(rise, part) * rise


# --------------------------------------------------------------------------- conduction paths

#: Thermal conductivity of copper [W/(m K)] (Incropera et al., 6th ed., Table A.1, pure
#: copper near 300-400 K: 401-393; from memory).
COPPER_CONDUCTIVITY_W_MK = 398.0

#: Thermal conductivity of the enamel and impregnating varnish between the turns
#: [W/(m K)] (polymer insulation, typically 0.15-0.25; from memory).
WINDING_INSULATION_CONDUCTIVITY_W_MK = 0.2

#: Thermal conductivity of ferrite and powder core material [W/(m K)] (MnZn ferrite is
#: about 3.5-5; from memory).
CORE_CONDUCTIVITY_W_MK = 4.0

#: Thermal conductivity of still air near 320 K [W/(m K)] (`AIR_TABLE`).
AIR_CONDUCTIVITY_W_MK = 0.0278

#: Board copper thickness, 1 oz/ft^2 [m] (common practice, no source).
BOARD_COPPER_THICKNESS_M = 35e-6

#: Length of each of the two terminals from the winding to the board pad [m], and gap
#: between the part's bottom face and the board [m] (common practice, no source).
TERMINAL_LENGTH_M = 5e-3
STANDOFF_GAP_M = 0.5e-3


def potting_shape_factor(
    length_m: ArrayLike, width_m: ArrayLike, height_m: ArrayLike, thickness_m: ArrayLike
) -> tuple[FloatArray, NDArray[np.bool_]]:
    """Conduction shape factor of a compound layer over a box's five free faces.

    Parameters
    ----------
    length_m, width_m : array_like
        Footprint sides of the part [m]
    height_m : array_like
        Height of the part [m]
    thickness_m : array_like
        Compound thickness from every free face to the wall [m]

    Returns
    -------
    shape_factor : ndarray
        S, so that G = k S [m]
    inside_range : ndarray of bool
        Every side at least a fifth of the thickness, the condition of the edge and corner
        factors [-]

    Notes
    -----
    Plane walls over the five faces (the face toward the board is left out), plus the
    edges and corners where free faces meet:

    .. math::

        S = \\frac{l w + 2 (l + w) H}{t} + 0.54\\,[2 (l + w) + 4 H] + 0.15\\, t \\cdot 4

    References
    ----------
    Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., Table 4.1, cases 8
    (edge of two adjoining walls, S = 0.54 D, D > L/5) and 9 (corner of three walls,
    S = 0.15 L).
    """
    length = np.asarray(length_m, dtype=float)
    width = np.asarray(width_m, dtype=float)
    height = np.asarray(height_m, dtype=float)
    t = np.asarray(thickness_m, dtype=float)
    faces = (length * width + 2.0 * (length + width) * height) / t
    edges = 0.54 * (2.0 * (length + width) + 4.0 * height)
    corners = 4.0 * 0.15 * t
    inside = np.minimum(np.minimum(length, width), height) > t / 5.0
    return faces + edges + corners, inside


def board_conductance(
    footprint_m2: ArrayLike,
    terminal_copper_area_m2: ArrayLike,
    board_copper_area_m2: ArrayLike,
) -> FloatArray:
    """Conductance from the part into the board at its copper area's edge [W/K].

    Parameters
    ----------
    footprint_m2 : array_like
        Area of the part's face toward the board [m^2]
    terminal_copper_area_m2 : array_like
        Copper cross-section of one terminal (the winding's conductor) [m^2]
    board_copper_area_m2 : array_like
        Board copper around the footprint tied to the terminals, 35 um thick [m^2]

    Returns
    -------
    conductance : ndarray
        G_board [W/K]

    Notes
    -----
    Two terminals (copper, `TERMINAL_LENGTH_M`) in parallel with the air gap under the
    bottom face (`STANDOFF_GAP_M`) lead into the board copper, which spreads the heat
    radially from the footprint's equivalent radius r1 to r2 of footprint plus copper area,
    where the board is at its stated temperature:

    .. math::

        G = \\left[\\frac{1}{2 k_{cu} A_t / l_t + k_{air} A_{fp} / \\delta}
        + \\frac{\\ln(r_2/r_1)}{2\\pi k_{cu} t_{cu}}\\right]^{-1}

    No board copper: no board path (G = 0).

    References
    ----------
    Incropera et al., 6th ed., eqs. 3.6 (plane wall) and 3.27 (radial conduction in a
    cylindrical wall); terminal length, gap and copper thickness: common practice, no
    source.
    """
    footprint = np.asarray(footprint_m2, dtype=float)
    copper = np.maximum(np.asarray(board_copper_area_m2, dtype=float), 0.0)
    into_pads = (
        2.0 * COPPER_CONDUCTIVITY_W_MK * np.asarray(terminal_copper_area_m2) / TERMINAL_LENGTH_M
        + AIR_CONDUCTIVITY_W_MK * footprint / STANDOFF_GAP_M
    )
    log_ratio = 0.5 * np.log1p(copper / footprint)
    spread = np.where(
        log_ratio > 0.0,
        2.0 * np.pi * COPPER_CONDUCTIVITY_W_MK * BOARD_COPPER_THICKNESS_M
        / np.where(log_ratio > 0.0, log_ratio, 1.0),
        0.0,
    )
    with np.errstate(divide="ignore", invalid="ignore"):
        total = np.where(spread > 0.0, 1.0 / (1.0 / into_pads + 1.0 / spread), 0.0)
    return total


def winding_conductivity_across_layers(
    pitch_m: ArrayLike,
    copper_thickness_m: ArrayLike,
    copper_W_mK: ArrayLike = COPPER_CONDUCTIVITY_W_MK,
    insulation_W_mK: ArrayLike = WINDING_INSULATION_CONDUCTIVITY_W_MK,
) -> FloatArray:
    """Effective conductivity of a winding across its layers, layers in series [W/(m K)].

    Parameters
    ----------
    pitch_m : array_like
        Layer pitch: conductor outer size in the build direction [m]
    copper_thickness_m : array_like
        Copper thickness per layer: the foil thickness, or a round or litz conductor's
        copper area divided by its pitch [m]
    copper_W_mK : array_like, optional
        Copper conductivity [W/(m K)]
    insulation_W_mK : array_like, optional
        Conductivity of insulation and impregnation between the copper [W/(m K)]

    Returns
    -------
    conductivity : ndarray
        k across the layers [W/(m K)]

    Notes
    -----
    Each layer is a copper slab and an insulation slab in series (composite wall):

    .. math:: k = \\frac{p}{t_{cu}/k_{cu} + (p - t_{cu})/k_{ins}}

    For round wire this is the lower (series, Wiener) bound of the transverse conductivity:
    a hot spot computed with it is not underestimated. An impregnated winding is assumed;
    air voids would lower the conductivity further.

    References
    ----------
    Incropera et al., 6th ed., eq. 3.19 (composite wall, series resistances).
    """
    pitch = np.asarray(pitch_m, dtype=float)
    copper = np.clip(np.asarray(copper_thickness_m, dtype=float), 0.0, pitch)
    resistance = copper / np.asarray(copper_W_mK) + (pitch - copper) / np.asarray(insulation_W_mK)
    return pitch / resistance


def slab_generation_rise(
    power_W: ArrayLike, thickness_m: ArrayLike, area_m2: ArrayLike, conductivity_W_mK: ArrayLike
) -> FloatArray:
    """Temperature rise inside a slab that generates heat uniformly, cooled on one face.

    Parameters
    ----------
    power_W : array_like
        Heat generated in the slab, >= 0 [W]
    thickness_m : array_like
        Slab thickness from the insulated to the cooled face [m]
    area_m2 : array_like
        Slab area [m^2]
    conductivity_W_mK : array_like
        Conductivity across the slab [W/(m K)]

    Returns
    -------
    rise : ndarray
        Hottest (insulated-face) minus cooled-face temperature [K]

    Notes
    -----
    .. math:: T_0 - T_s = \\frac{\\dot q\\, t^2}{2 k} = \\frac{P\\, t}{2 k A}

    References
    ----------
    Incropera et al., 6th ed., eq. 3.42 (plane wall with uniform generation; the
    insulated face is the symmetry plane).
    """
    return (
        np.maximum(np.asarray(power_W, dtype=float), 0.0)
        * np.asarray(thickness_m)
        / (2.0 * np.asarray(conductivity_W_mK) * np.asarray(area_m2))
    )


# --------------------------------------------------------------------------- enclosure

# Rises over which the enclosure's heat curve is tabulated [K].
_ENCLOSURE_RISES = np.geomspace(1e-4, 2.0 * RUNAWAY_CEILING_RISE_K, 600)


class Enclosure(NamedTuple):
    """A closed box around the part, cooled from outside (see `enclosure_air_rise`).

    Attributes
    ----------
    volume_m3 : inside volume, taken as a cube [m^3]
    emissivity : outer surface emissivity [-]
    """

    volume_m3: float
    emissivity: float = 0.9


def enclosure_heat_shed(rise_K: ArrayLike, ambient_C: float, box: Enclosure) -> FloatArray:
    """Heat a closed box passes from its inside air to the outside air at a rise [W].

    Parameters
    ----------
    rise_K : array_like
        Inside air temperature above the outside air, >= 0 [K]
    ambient_C : float
        Outside air temperature [degC]
    box : Enclosure
        Volume and emissivity of the box [-]

    Returns
    -------
    heat : ndarray
        Heat flow through the walls [W]

    Notes
    -----
    The box is a cube of side a = V^(1/3) standing on its bottom face (no heat there).
    Inside, the air gives heat to the four walls and the ceiling by natural convection
    (Churchill-Chu on the walls; the ceiling, cooler than the air below it, is the mirror
    of a hot plate's upper surface); outside, the same five faces shed it by natural
    convection (`face_coefficients`) and radiation. The thin wall's conduction is
    neglected. The inside wall temperature splits the rise so both paths carry the same
    heat (solved by bisection).

    References
    ----------
    Incropera et al., 6th ed., ch. 9 (correlations as in `face_coefficients`).
    """
    return _enclosure_split(rise_K, ambient_C, box)[0]


def enclosure_inside_range(rise_K: ArrayLike, ambient_C: float, box: Enclosure) -> NDArray:
    """True where the box's inside and outside correlations are inside their published
    ranges at an inside air rise (see `enclosure_heat_shed`) [-]."""
    return _enclosure_split(rise_K, ambient_C, box)[1]


def _enclosure_split(rise_K: ArrayLike, ambient_C: float, box: Enclosure):
    side = float(box.volume_m3) ** (1.0 / 3.0)
    rise = np.maximum(np.asarray(rise_K, dtype=float), 0.0)
    area_sides = 4.0 * side * side
    area_top = side * side

    def outside(dt, flags=False):
        f = face_coefficients(dt, ambient_C, side, side, side, box.emissivity, flags=flags)
        heat = ((f.side_W_m2K + f.radiation_W_m2K) * area_sides
                + (f.top_W_m2K + f.radiation_W_m2K) * area_top) * dt
        return heat, f.inside_range

    def inside(dt, wall_C, flags=False):
        f = face_coefficients(dt, wall_C, side, side, side, 0.0, flags=flags)
        return (f.side_W_m2K * area_sides + f.top_W_m2K * area_top) * dt, f.inside_range

    low = np.zeros_like(rise)
    high = rise.copy()
    for _ in range(50):
        wall = 0.5 * (low + high)  # wall rise over the outside air
        surplus = outside(wall)[0] - inside(rise - wall, ambient_C + wall)[0]
        high = np.where(surplus > 0, wall, high)
        low = np.where(surplus > 0, low, wall)
    wall = 0.5 * (low + high)
    heat, outer_ok = outside(wall, True)
    inner_ok = inside(rise - wall, ambient_C + wall, True)[1]
    return heat, np.asarray(outer_ok & inner_ok)


def enclosure_air_rise(heat_W: ArrayLike, ambient_C: float, box: Enclosure) -> FloatArray:
    """Inside air temperature of a closed box above the outside air for a heat load [K].

    Parameters
    ----------
    heat_W : array_like
        Heat dissipated inside the box, >= 0 [W]
    ambient_C : float
        Outside air temperature [degC]
    box : Enclosure
        The box [-]

    Returns
    -------
    rise : ndarray
        Inside air rise [K]; beyond the tabulated range, the largest tabulated rise

    Notes
    -----
    Inverts `enclosure_heat_shed` (increasing in the rise) by interpolation on a
    geometric table of rises.

    References
    ----------
    See `enclosure_heat_shed`.
    """
    heats = enclosure_heat_shed(_ENCLOSURE_RISES, ambient_C, box)
    heat = np.maximum(np.asarray(heat_W, dtype=float), 0.0)
    return np.interp(heat, heats, _ENCLOSURE_RISES, left=0.0)
