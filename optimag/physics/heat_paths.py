"""Heat paths besides the free faces: through the board, a potting compound, across the
winding's layers, and out of a closed enclosure.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray
from optimag.physics.convection import face_coefficients
from optimag.physics.thermal import RUNAWAY_CEILING_RISE_K

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
) -> tuple[FloatArray, BoolArray]:
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


def enclosure_inside_range(rise_K: ArrayLike, ambient_C: float, box: Enclosure) -> BoolArray:
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
