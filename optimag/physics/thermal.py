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
    """

    ambient_C: ArrayLike
    surface_m2: ArrayLike
    height_m: ArrayLike
    emissivity: ArrayLike
    ve_m3: ArrayLike | None


ConductanceModel = Callable[[FloatArray, ThermalContext], FloatArray]
RangeCheck = Callable[[FloatArray, ThermalContext], None]


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


def _check_convection_final(rise_K: FloatArray, part: ThermalContext) -> None:
    _check_laminar(rise_K, part.height_m)
    _check_emissivity(part.emissivity)


def _check_mclyman_final(rise_K: FloatArray, part: ThermalContext) -> None:
    _check_mclyman(rise_K)


def _check_ferrite_final(rise_K: FloatArray, part: ThermalContext) -> None:
    _check_ferrite_rth(part.ve_m3)


#: Thermal models by name: (conductance at a rise, validity check on the final state).
CONDUCTANCE_MODELS: dict[str, tuple[ConductanceModel, RangeCheck]] = {
    "convection": (conductance_convection, _check_convection_final),
    "mclyman": (conductance_mclyman, _check_mclyman_final),
    "ferrite_rth": (conductance_ferrite_rth, _check_ferrite_final),
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
    """

    temperature_C: FloatArray
    loss_W: FloatArray
    runaway: NDArray[np.bool_]
    conductance_W_K: FloatArray


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

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press, 2011;
    S. Maniktala, Switching Power Supplies A-Z, 2nd ed., Newnes, 2012;
    J. P. Holman, Heat Transfer, McGraw-Hill (from memory). The iteration scheme is this
    module's own (no source).
    """
    try:
        conductance_of, check_range = CONDUCTANCE_MODELS[model]
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
    shape = np.broadcast_shapes(
        loss_at_ambient.shape,
        np.shape(surface_m2),
        np.shape(height_m),
        np.shape(emissivity),
        np.shape(ve_m3) if ve_m3 is not None else (),
    )

    def flat(value: ArrayLike | None) -> NDArray[np.floating] | None:
        if value is None:
            return None
        return np.broadcast_to(np.asarray(value, dtype=float), shape).ravel()

    # Flat copies let the loop shrink to the parts still iterating: most settle in three
    # steps, a few near tangency need more.
    part = ThermalContext(
        flat(ambient), flat(surface_m2), flat(height_m), flat(emissivity), flat(ve_m3)
    )
    curvature, slope0, loss0 = flat(a2), flat(slope_at_ambient), flat(loss_at_ambient)
    count = loss0.size

    # McLyman's law at the ambient loss is a fair first guess for any surface-cooled part.
    rise = np.clip(_mclyman_rise(loss0, part.surface_m2), 1.0, 200.0)
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
    if np.any(found):
        check_range(rise[found], _take(part, found))
    return ThermalEquilibrium(
        temperature.reshape(shape)[()],
        loss.reshape(shape)[()],
        runaway.reshape(shape)[()],
        conductance.reshape(shape)[()],
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
    part = ThermalContext(ambient_C, surface_m2, height_m, emissivity, ve_m3)
    return conductance(rise, part) * rise
