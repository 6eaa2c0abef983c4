"""Loss-temperature equilibrium: where a part's temperature-dependent loss equals the heat
it sheds, for millions of candidates at once, with runaway detection.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray, IndexArray
from optimag.errors import warn_outside_range
from optimag.physics.heat_paths import (
    _ENCLOSURE_RISES,
    Enclosure,
    _enclosure_split,
)
from optimag.physics.thermal import (
    _BISECTIONS,
    _MIN_RISE_K,
    _SCAN_POINTS,
    _SLOPE_STEP,
    CONDUCTANCE_MODELS,
    RANGE_MESSAGES,
    RUNAWAY_CEILING_RISE_K,
    RUNAWAY_TEMPERATURE_C,
    ConductanceModel,
    ThermalContext,
    _mclyman_rise,
)

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
    runaway: BoolArray
    conductance_W_K: FloatArray
    inside_range: BoolArray


def _smallest_nonnegative_root(
    a: FloatArray, b: FloatArray, c: FloatArray
) -> tuple[FloatArray, BoolArray]:
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


def _take(part: ThermalContext, index: IndexArray) -> ThermalContext:
    return ThermalContext(*(None if v is None else v[index] for v in part))


def _bracket_first_equilibrium(
    conductance_of: ConductanceModel,
    part: ThermalContext,
    curvature: FloatArray,
    slope0: FloatArray,
    loss0: FloatArray,
) -> tuple[FloatArray, BoolArray, FloatArray]:
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
    curvature: FloatArray,
    slope0: FloatArray,
    loss0: FloatArray,
    start: FloatArray,
) -> tuple[FloatArray, BoolArray]:
    def surplus(
        rise: FloatArray,
        parts: ThermalContext,
        curvature: FloatArray,
        slope0: FloatArray,
        loss0: FloatArray,
    ) -> FloatArray:
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

    def flat(value: ArrayLike | None) -> FloatArray | None:
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

    def flat(value: ArrayLike | None) -> FloatArray | None:
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
        warn_outside_range(~inside, RANGE_MESSAGES.get(
            model, f"thermal model {model}: outside its stated range"))
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
