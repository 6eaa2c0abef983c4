"""Thermal physics: how a part sheds heat, as interchangeable conductance models.

The models sit in `CONDUCTANCE_MODELS`, a registry of callables returning the thermal
conductance G = P / dT [W/K] at a temperature rise, each with its range flags: whole-part
laws (McLyman, ferrite R_th, simplified laminar air) and face by face
(`optimag.physics.convection`). `optimag.physics.heat_balance` finds where a
temperature-dependent loss equals the heat shed; `optimag.physics.heat_paths` holds the
board, potting, winding and enclosure paths.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray
from optimag.errors import warn_outside_range
from optimag.physics.convection import _radiation_h, face_coefficients
from optimag.registry import Registry

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



def _check_mclyman(rise_K: ArrayLike) -> None:
    warn_outside_range(
        np.asarray(rise_K) > MCLYMAN_MAX_RISE_K,
        f"McLyman temperature rise above {MCLYMAN_MAX_RISE_K} K, beyond the fitted curve",
    )


def _check_ferrite_rth(ve_m3: ArrayLike) -> None:
    low, high = FERRITE_RTH_VE_RANGE_M3
    ve = np.asarray(ve_m3)
    warn_outside_range(
        (ve < low) | (ve > high),
        "ferrite thermal resistance: Ve outside 0.1..100 cm^3, beyond the fitted cores",
    )


def _check_laminar(delta_T_K: ArrayLike, height_m: ArrayLike) -> None:
    low, high = LAMINAR_RAYLEIGH_RANGE
    rayleigh = AIR_RAYLEIGH_PER_K_M3 * np.asarray(delta_T_K) * np.asarray(height_m) ** 3
    warn_outside_range(
        (rayleigh < low) | (rayleigh > high),
        "natural convection: Rayleigh number outside the laminar range 1e4..1e9",
    )


def _check_emissivity(emissivity: ArrayLike) -> None:
    e = np.asarray(emissivity)
    warn_outside_range((e < 0.0) | (e > 1.0), "radiation: emissivity outside 0..1")


# --------------------------------------------------------------------------- kernels
# Warning-free kernels: the fixed point calls them on trial values that may lie outside a
# model's range, and checks the range once on the final state instead.


def _mclyman_rise(loss_W: ArrayLike, surface_m2: ArrayLike) -> FloatArray:
    psi_W_cm2 = np.maximum(np.asarray(loss_W), 0.0) / (np.asarray(surface_m2) * 1e4)
    return MCLYMAN_COEFFICIENT * psi_W_cm2**MCLYMAN_EXPONENT


def _convection_h(delta_T_K: ArrayLike, height_m: ArrayLike) -> FloatArray:
    return 1.42 * np.sqrt(np.sqrt(np.maximum(np.asarray(delta_T_K), 0.0) / np.asarray(height_m)))


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


def _inside_convection(rise_K: FloatArray, part: ThermalContext) -> BoolArray:
    low, high = LAMINAR_RAYLEIGH_RANGE
    rayleigh = AIR_RAYLEIGH_PER_K_M3 * np.asarray(rise_K) * np.asarray(part.height_m) ** 3
    e = np.asarray(part.emissivity)
    return (rayleigh >= low) & (rayleigh <= high) & (e >= 0.0) & (e <= 1.0)


def _inside_mclyman(rise_K: FloatArray, part: ThermalContext) -> BoolArray:
    return np.asarray(rise_K) <= MCLYMAN_MAX_RISE_K


def _inside_ferrite(rise_K: FloatArray, part: ThermalContext) -> BoolArray:
    low, high = FERRITE_RTH_VE_RANGE_M3
    ve = np.asarray(part.ve_m3)
    return (ve >= low) & (ve <= high) & np.ones(np.shape(rise_K), dtype=bool)


def _inside_faces(rise_K: FloatArray, part: ThermalContext) -> BoolArray:
    # Faces that meet no air (potted) use no air correlation.
    inside = _faces_conductance(rise_K, part, "churchill_chu", True)[1].inside_range
    return inside | (np.asarray(part.air_exposed) == 0)


def _inside_faces_laminar(rise_K: FloatArray, part: ThermalContext) -> BoolArray:
    inside = _faces_conductance(rise_K, part, "churchill_chu_laminar", True)[1].inside_range
    return inside | (np.asarray(part.air_exposed) == 0)


RangeFlags = Callable[[FloatArray, ThermalContext], BoolArray]


class ThermalModel(NamedTuple):
    """A thermal model: the conductance from the part to its surroundings at a rise
    (``conductance(rise_K, part) -> (W/K, ...)`` as the built-in ones) and the per-part
    flag "inside the published range" on the settled state."""

    conductance: ConductanceModel
    inside_range: RangeFlags


def _thermal_model_entry(entry: object) -> None:
    if not (isinstance(entry, ThermalModel) and callable(entry.conductance)
            and callable(entry.inside_range)):
        raise TypeError("a thermal model is a thermal.ThermalModel(conductance, "
                        f"inside_range) of two callables, got {type(entry).__name__}")


#: Thermal models by name: (conductance at a rise, per-part flag "inside the published
#: range" on the final state). "faces" is the face-by-face model (default); the others are
#: whole-part laws kept for comparison and for the uncertainty band.
#: A study's ``[model] thermal`` chooses among them; register a `ThermalModel` to add one.
CONDUCTANCE_MODELS: Registry[ThermalModel] = Registry(
    "thermal", "model.thermal", _thermal_model_entry)
CONDUCTANCE_MODELS.register("faces", ThermalModel(conductance_faces, _inside_faces))
CONDUCTANCE_MODELS.register(
    "faces_laminar", ThermalModel(conductance_faces_laminar, _inside_faces_laminar),
    in_study=False)  # the uncertainty band's alternative only
CONDUCTANCE_MODELS.register("convection", ThermalModel(conductance_convection, _inside_convection))
CONDUCTANCE_MODELS.register("mclyman", ThermalModel(conductance_mclyman, _inside_mclyman))
CONDUCTANCE_MODELS.register("ferrite_rth", ThermalModel(conductance_ferrite_rth, _inside_ferrite))

#: What each model's range flag covers, for messages.
RANGE_MESSAGES = {
    "faces": "face-by-face convection: a correlation outside its published range",
    "faces_laminar": "face-by-face convection (laminar form): a correlation outside its range",
    "convection": "natural convection: Rayleigh number outside the laminar range 1e4..1e9",
    "mclyman": f"McLyman temperature rise above {MCLYMAN_MAX_RISE_K} K, beyond the fitted curve",
    "ferrite_rth": "ferrite thermal resistance: Ve outside 0.1..100 cm^3, beyond the fitted cores",
}
