"""Geometry of the wound part: boxed volume, footprint, surface, mass and cost.

The box is the smallest axis-aligned box around core and winding, the figure a board
designer reserves. All shapes here are common-practice approximations (no published
source); each function says what it neglects.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import FloatArray
from optimag.constants import COPPER_DENSITY
from optimag.errors import warn_outside_range

Box = tuple[FloatArray, FloatArray, FloatArray]


def wound_box_e_type(
    length_m: ArrayLike,
    width_m: ArrayLike,
    height_m: ArrayLike,
    leg_depth_m: ArrayLike,
    stack: ArrayLike,
    bobbin_wall_m: ArrayLike,
    build_m: ArrayLike,
) -> Box:
    """Box around a wound E-type core pair (E, EFD, ETD, PQ, ...) lying flat.

    Parameters
    ----------
    length_m : array_like
        Overall length of the core across its legs [m]
    width_m : array_like
        Depth of one core set, the stacking axis [m]
    height_m : array_like
        Height of the mated pair [m]
    leg_depth_m : array_like
        Depth of the centre leg along the stacking axis (its diameter if round) [m]
    stack : array_like
        Core sets stacked side by side along the depth [-]
    bobbin_wall_m : array_like
        Bobbin wall thickness around the centre leg [m]
    build_m : array_like
        Radial build of the winding [m]

    Returns
    -------
    box : tuple of ndarray
        (length, width, height) of the box [m]

    Notes
    -----
    The winding sits in the windows along the length and leaves the core on both faces
    of the depth axis, (wall + build) beyond the stacked centre leg:

    .. math::

        w_{box} = \\max\\left(w\\, n_s,\\ d_{leg} n_s + 2 (t_{wall} + \\text{build})\\right)

    Length and height are the core's. Bobbin flanges and terminals are neglected.

    References
    ----------
    None: common practice, no source.
    """
    stack = np.asarray(stack)
    protrusion = 2.0 * (np.asarray(bobbin_wall_m) + np.asarray(build_m))
    box_width = np.maximum(
        np.asarray(width_m) * stack, np.asarray(leg_depth_m) * stack + protrusion
    )
    box_length, box_width, box_height = np.broadcast_arrays(
        np.asarray(length_m, dtype=float), box_width, np.asarray(height_m, dtype=float)
    )
    return box_length, box_width, box_height


def wound_box_pot(diameter_m: ArrayLike, height_m: ArrayLike, stack: ArrayLike) -> Box:
    """Box around a wound pot (or RM-like enclosed) core pair.

    Parameters
    ----------
    diameter_m : array_like
        Outer diameter of the core [m]
    height_m : array_like
        Height of one mated pair [m]
    stack : array_like
        Pairs stacked along the height [-]

    Returns
    -------
    box : tuple of ndarray
        (length, width, height) of the box [m]

    Notes
    -----
    The winding is enclosed by the core: box D x D x (H n_s). Wire exits are neglected.

    References
    ----------
    None: common practice, no source.
    """
    height = np.asarray(height_m) * np.asarray(stack)
    length, width, height = np.broadcast_arrays(
        np.asarray(diameter_m, dtype=float), np.asarray(diameter_m, dtype=float), height
    )
    return length, width, height


def wound_box_toroid(
    outer_diameter_m: ArrayLike,
    inner_diameter_m: ArrayLike,
    height_m: ArrayLike,
    stack: ArrayLike,
    build_m: ArrayLike,
) -> Box:
    """Box around a wound toroid lying flat on the board.

    Parameters
    ----------
    outer_diameter_m : array_like
        Outer diameter of the core [m]
    inner_diameter_m : array_like
        Inner diameter of the core [m]
    height_m : array_like
        Height of one core [m]
    stack : array_like
        Cores stacked along the height [-]
    build_m : array_like
        Radial build of the winding [m]

    Returns
    -------
    box : tuple of ndarray
        (length, width, height) of the box [m]

    Notes
    -----
    .. math::

        OD_w = OD + 2\\,\\text{build}, \\quad H_w = H n_s + 2\\,\\text{build}

    box OD_w x OD_w x H_w. The build is taken equal on all faces and the closing of the hole
    is ignored; warns when 2 build >= ID, where the winding would fill the hole.

    References
    ----------
    None: common practice, no source.
    """
    build = np.asarray(build_m)
    warn_outside_range(2.0 * build >= np.asarray(inner_diameter_m),
                       "toroid box: winding build fills the core hole (2 build >= ID)")
    wound_diameter = np.asarray(outer_diameter_m) + 2.0 * build
    wound_height = np.asarray(height_m) * np.asarray(stack) + 2.0 * build
    length, width, height = np.broadcast_arrays(wound_diameter, wound_diameter, wound_height)
    return length, width, height


def box_volume(length_m: ArrayLike, width_m: ArrayLike, height_m: ArrayLike) -> FloatArray:
    """Volume of a box.

    Parameters
    ----------
    length_m : array_like
        Box length [m]
    width_m : array_like
        Box width [m]
    height_m : array_like
        Box height [m]

    Returns
    -------
    volume : ndarray
        Boxed volume [m^3]

    Notes
    -----
    .. math:: V = l\\, w\\, h

    References
    ----------
    None: elementary geometry.
    """
    return np.asarray(length_m) * np.asarray(width_m) * np.asarray(height_m)


def footprint(length_m: ArrayLike, width_m: ArrayLike) -> FloatArray:
    """Board area taken by a box.

    Parameters
    ----------
    length_m : array_like
        Box length [m]
    width_m : array_like
        Box width [m]

    Returns
    -------
    area : ndarray
        Footprint [m^2]

    Notes
    -----
    .. math:: A = l\\, w

    References
    ----------
    None: elementary geometry.
    """
    return np.asarray(length_m) * np.asarray(width_m)


def surface_area_box(length_m: ArrayLike, width_m: ArrayLike, height_m: ArrayLike) -> FloatArray:
    """Outer surface of a box, the cooling surface used by the thermal models.

    Parameters
    ----------
    length_m : array_like
        Box length [m]
    width_m : array_like
        Box width [m]
    height_m : array_like
        Box height [m]

    Returns
    -------
    area : ndarray
        Surface area of all six faces [m^2]

    Notes
    -----
    .. math:: S = 2 (l w + l h + w h)

    The face on the board is counted as cooling surface, as the empirical thermal laws that
    use it were fitted on whole-part surfaces (common practice, no source).

    References
    ----------
    None: elementary geometry.
    """
    length = np.asarray(length_m)
    width = np.asarray(width_m)
    height = np.asarray(height_m)
    return 2.0 * (length * width + length * height + width * height)


def copper_mass(
    turns: ArrayLike,
    mlt_m: ArrayLike,
    copper_area_m2: ArrayLike,
    density: ArrayLike = COPPER_DENSITY,
) -> FloatArray:
    """Mass of the copper in a winding.

    Parameters
    ----------
    turns : array_like
        Turns [-]
    mlt_m : array_like
        Mean turn length [m]
    copper_area_m2 : array_like
        Copper cross-section of one turn, all parallel conductors [m^2]
    density : array_like, optional
        Copper density [kg/m^3]

    Returns
    -------
    mass : ndarray
        Copper mass, insulation and leads excluded [kg]

    Notes
    -----
    .. math:: m_{cu} = N \\, MLT \\, A_{cu} \\rho_m

    References
    ----------
    None: elementary geometry; density from `optimag.constants`.
    """
    return np.asarray(turns) * np.asarray(mlt_m) * np.asarray(copper_area_m2) * np.asarray(density)


def core_mass(ve_m3: ArrayLike, density_kg_m3: ArrayLike, stack: ArrayLike) -> FloatArray:
    """Mass of the core from its effective volume.

    Parameters
    ----------
    ve_m3 : array_like
        Effective volume of one core set [m^3]
    density_kg_m3 : array_like
        Density of the core material [kg/m^3]
    stack : array_like
        Core sets stacked [-]

    Returns
    -------
    mass : ndarray
        Core mass [kg]

    Notes
    -----
    .. math:: m_{core} = V_e \\rho_m n_s

    Ve is an effective, not a physical, volume; the difference is a few per cent for
    usual shapes (common practice, no source).

    References
    ----------
    None: common practice, no source.
    """
    return np.asarray(ve_m3) * np.asarray(density_kg_m3) * np.asarray(stack)


def energy_cost(
    weighted_loss_W: ArrayLike, operating_hours: ArrayLike, price_per_kWh: ArrayLike
) -> FloatArray:
    """Cost of the energy a part dissipates over its service life.

    Parameters
    ----------
    weighted_loss_W : array_like
        Loss averaged over the operating points by their time shares [W]
    operating_hours : array_like
        Hours in service over the product's life [h]
    price_per_kWh : array_like
        Price of one kilowatt-hour of energy [currency/kWh]

    Returns
    -------
    cost : ndarray
        Energy cost over the life [currency]

    Notes
    -----
    .. math:: C_E = \\bar P \\, t \\, p / 1000

    Energy is power times time (1 kWh = 1000 W x 3600 s = 3.6 MJ, the SI brochure's
    table of non-SI units accepted for use with the SI). The loss's time-share weighting
    already makes the mean power over the hours in service. Heat the rest of the product
    must remove (fans, a larger heat sink) is not costed.

    References
    ----------
    BIPM, The International System of Units (SI), 9th ed., 2019, table 8 (kilowatt-hour).
    """
    return (np.asarray(weighted_loss_W, dtype=float) * np.asarray(operating_hours, dtype=float)
            * np.asarray(price_per_kWh, dtype=float) / 1000.0)


def part_cost(
    core_set_price: ArrayLike,
    stack: ArrayLike,
    material_price_factor: ArrayLike,
    copper_mass_kg: ArrayLike,
    wire_price_per_kg: ArrayLike,
    turns: ArrayLike,
    labour_per_turn: ArrayLike,
) -> FloatArray:
    """Bill-of-materials plus winding-labour cost of a part.

    Parameters
    ----------
    core_set_price : array_like
        Price of one core set in the reference material [currency]
    stack : array_like
        Core sets stacked [-]
    material_price_factor : array_like
        Price of the chosen material relative to the reference [-]
    copper_mass_kg : array_like
        Copper mass [kg]
    wire_price_per_kg : array_like
        Wire price per kilogram of copper [currency/kg]
    turns : array_like
        Turns [-]
    labour_per_turn : array_like
        Winding labour per turn [currency]

    Returns
    -------
    cost : ndarray
        Part cost [currency]

    Notes
    -----
    .. math:: C = c_{core} n_s k_{mat} + m_{cu} c_{wire} + N c_{turn}

    Bobbin, tape, varnish and test are left out. Common practice, no source.

    References
    ----------
    None: common practice, no source.
    """
    return (
        np.asarray(core_set_price) * np.asarray(stack) * np.asarray(material_price_factor)
        + np.asarray(copper_mass_kg) * np.asarray(wire_price_per_kg)
        + np.asarray(turns) * np.asarray(labour_per_turn)
    )
