"""Operating points that are not one switching period: the line cycle and interleaving.

A power-factor-correction boost and the filter inductor of a grid inverter carry a current
that follows the line sine while the switching ripple changes along it. Each such operating
point is represented by *instants*: equally spaced angles over the part of the line cycle
that repeats (midpoints of equal sub-intervals, so every instant has the same weight), each
a quasi-static switching period with its own inductor voltages and average current. The
evaluation model treats every instant like a DC-DC operating point, with each design's own
inductance at the instant's current, and averages losses over the instants of a point.

Pure vectorised functions over the angle axis; `LineInstants` holds one point's instants.
A multiphase buck is one buck per phase carrying its share of the current;
`interleaved_ripple_factor` gives the output-ripple cancellation of its phases.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

#: Modulation of a single-phase full bridge.
MODULATIONS: tuple[str, ...] = ("bipolar", "unipolar")


@dataclass(frozen=True, eq=False)
class LineInstants:
    """Instants of one line-cycle operating point (arrays of shape (J,)).

    Attributes
    ----------
    angle_rad : ndarray  Line angle of each instant (grid voltage phase) [rad]
    weight : ndarray  Share of the point's time each instant stands for; sums to 1 [-]
    line_V : ndarray  Line (grid) voltage at the instant [V]
    rise_V : ndarray  Inductor voltage magnitude while the current rises [V]
    fall_V : ndarray  Inductor voltage magnitude while the current falls [V]
    average_A : ndarray  Magnitude of the switching-period average inductor current [A]
    frequency_multiplier : ndarray of int  Ripple frequency over the switching frequency:
        1, or 2 for a unipolar bridge (its output switches twice per carrier period) [-]
    bidirectional : ndarray of bool  The switches conduct both ways (a bridge): the current
        never stops at zero, so there is no discontinuous conduction [-]
    """

    angle_rad: NDArray[np.float64]
    weight: NDArray[np.float64]
    line_V: NDArray[np.float64]
    rise_V: NDArray[np.float64]
    fall_V: NDArray[np.float64]
    average_A: NDArray[np.float64]
    frequency_multiplier: NDArray[np.int64]
    bidirectional: NDArray[np.bool_]


def midpoint_angles(steps: int, span_rad: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Midpoints of ``steps`` equal sub-intervals of [0, span] and their equal weights.

    Parameters
    ----------
    steps : int  Number of sub-intervals, >= 1 [-]
    span_rad : float  Length of the angle interval [rad]

    Returns
    -------
    angle_rad : ndarray  (steps,) [rad]
    weight : ndarray  (steps,), each 1/steps [-]

    Notes
    -----
    The composite midpoint rule: an average over the interval is the mean of the values
    at the midpoints; its error falls as 1/steps² for a smooth integrand (P. J. Davis,
    P. Rabinowitz, *Methods of Numerical Integration*, 2nd ed., Academic Press, 1984,
    sec. 2.2; from memory), and it never evaluates at a zero crossing of the line.
    """
    if int(steps) < 1:
        raise ValueError("steps must be >= 1")
    count = int(steps)
    angle = (np.arange(count, dtype=float) + 0.5) * float(span_rad) / count
    return angle, np.full(count, 1.0 / count)


def pfc_boost_instants(
    line_V_rms: float, output_V: float, power_W: float, steps: int
) -> LineInstants:
    """Instants of a boost power-factor-correction stage over a quarter line cycle.

    Parameters
    ----------
    line_V_rms : float  Line voltage, RMS, > 0 [V]
    output_V : float  Output (bus) voltage, above the line's peak [V]
    power_W : float  Power drawn from the line (the converter is taken as lossless) [W]
    steps : int  Instants over the quarter cycle [-]

    Returns
    -------
    LineInstants

    Notes
    -----
    An ideal rectifier with unity power factor (Erickson & Maksimović, *Fundamentals of
    Power Electronics*, 2nd ed., 2001, ch. 18, PWM rectifiers; chapter from memory): the
    rectified line ``v(θ) = √2 V |sin θ|`` drives the boost whose average inductor current
    follows it, ``i(θ) = √2 (P / V) |sin θ|``; in CCM the duty ratio is
    ``d(θ) = 1 - v(θ) / V_o`` and the inductor sees ``v(θ)`` while the switch is on and
    ``V_o - v(θ)`` while it is off, so the ripple is ``Δi(θ) = v(θ) d(θ) / (L f_s)``.
    |sin| repeats every half cycle and is symmetric about its peak, so a quarter cycle
    averages the whole line cycle. The controller holds the average current to its
    reference also where the current is discontinuous (near the zero crossings; average
    current control).
    """
    vrms, vo, power = float(line_V_rms), float(output_V), float(power_W)
    if not (vrms > 0 and vo > np.sqrt(2.0) * vrms and power > 0):
        raise ValueError("need line_V_rms > 0, output_V above the line peak and power_W > 0")
    angle, weight = midpoint_angles(steps, 0.5 * np.pi)
    line = np.sqrt(2.0) * vrms * np.sin(angle)
    current = np.sqrt(2.0) * power / vrms * np.sin(angle)
    return LineInstants(
        angle_rad=angle, weight=weight, line_V=line, rise_V=line, fall_V=vo - line,
        average_A=current, frequency_multiplier=np.ones(angle.size, dtype=np.int64),
        bidirectional=np.zeros(angle.size, dtype=bool),
    )


def inverter_instants(
    dc_link_V: float, grid_V_rms: float, grid_A_rms: float, power_factor: float,
    modulation: str, steps: int,
) -> LineInstants:
    """Instants of the output filter inductor of a single-phase full-bridge inverter.

    Parameters
    ----------
    dc_link_V : float  DC link voltage, above the grid's peak [V]
    grid_V_rms : float  Grid voltage, RMS [V]
    grid_A_rms : float  Grid current, RMS [A]
    power_factor : float  cos φ of the grid current against the grid voltage, in (0, 1];
        the sign of φ does not change any figure [-]
    modulation : {"bipolar", "unipolar"}  Sine-triangle PWM of the bridge [-]
    steps : int  Instants over the half line cycle [-]

    Returns
    -------
    LineInstants

    Notes
    -----
    Sine-triangle PWM (Mohan, Undeland, Robbins, *Power Electronics*, 3rd ed., Wiley,
    2003, ch. 8, sec. 8-3): the bridge output averages the grid voltage over a switching
    period (the filter inductor's own line-frequency drop ``ω L i``, a few volts, is
    neglected). With ``v = √2 V_g sin θ`` and ``i = √2 I_g sin(θ - φ)``:

    * bipolar: the output switches between ``+V_d`` and ``-V_d`` at ``f_s``, duty
      ``(1 + v / V_d) / 2``; the inductor sees ``V_d - v`` rising and ``V_d + v``
      falling: ``Δi = (V_d² - v²) / (2 V_d L f_s)``, largest at the zero crossing;
    * unipolar: the output switches between ``±V_d`` and 0 at ``2 f_s`` (the two legs'
      pulses interleave), duty ``|v| / V_d``: ``Δi = |v| (V_d - |v|) / (2 V_d L f_s)``,
      largest where ``|v| = V_d / 2``.

    The bridge conducts both ways, so the current is never discontinuous. The second half
    cycle mirrors the first (all signs reversed), so a half cycle averages the whole.
    """
    vd, vg, ig, pf = float(dc_link_V), float(grid_V_rms), float(grid_A_rms), float(power_factor)
    if modulation not in MODULATIONS:
        raise ValueError(f"unknown modulation {modulation!r}; expected one of {MODULATIONS}")
    if not (vg > 0 and vd > np.sqrt(2.0) * vg and ig > 0 and 0 < pf <= 1):
        raise ValueError("need dc_link_V above the grid peak, grid_A_rms > 0, 0 < pf <= 1")
    angle, weight = midpoint_angles(steps, np.pi)
    line = np.sqrt(2.0) * vg * np.sin(angle)
    current = np.abs(np.sqrt(2.0) * ig * np.sin(angle - np.arccos(pf)))
    if modulation == "bipolar":
        rise, fall = vd - line, vd + line
        multiplier = np.ones(angle.size, dtype=np.int64)
    else:
        magnitude = np.abs(line)
        rise, fall = vd - magnitude, magnitude
        multiplier = np.full(angle.size, 2, dtype=np.int64)
    return LineInstants(
        angle_rad=angle, weight=weight, line_V=line, rise_V=rise, fall_V=fall,
        average_A=current, frequency_multiplier=multiplier,
        bidirectional=np.ones(angle.size, dtype=bool),
    )


def line_ripple_inductance(instants: LineInstants, frequency_Hz: float,
                           ripple_fraction: float) -> float:
    """Inductance whose largest CCM ripple over the line cycle is ``ripple_fraction`` of
    the peak line current [H].

    Parameters
    ----------
    instants : LineInstants  The point's instants [-]
    frequency_Hz : float  Switching frequency [Hz]
    ripple_fraction : float  Largest peak-to-peak ripple over the peak of the line current [-]

    Notes
    -----
    ``Δi = V_r D / (L f)`` with ``D = V_f / (V_r + V_f)`` at each instant (the relations of
    `pfc_boost_instants` and `inverter_instants`), maximised over the instants.
    """
    frequency = frequency_Hz * instants.frequency_multiplier
    volt_seconds = instants.rise_V * instants.fall_V / (instants.rise_V + instants.fall_V)
    peak = float(np.max(instants.average_A))
    return float(np.max(volt_seconds / frequency)) / (ripple_fraction * peak)


def interleaved_ripple_factor(duty: ArrayLike, phases: ArrayLike) -> NDArray[np.float64]:
    """Output-current ripple of N interleaved buck phases over the ripple of one phase.

    Parameters
    ----------
    duty : array_like  CCM duty ratio D of every phase, in [0, 1] [-]
    phases : array_like  Number of phases N, >= 1, their carriers shifted by T/N [-]

    Returns
    -------
    ndarray  Peak-to-peak of the summed phase currents over one phase's peak-to-peak
        ripple at the same duty ratio [-]

    Notes
    -----
    With ``m = floor(N D)``:

    .. math:: K(D, N) = \\frac{N (D - m/N) ((m + 1)/N - D)}{D (1 - D)}

    zero where N D is a whole number (complete cancellation). Taken from X. Zhou,
    P.-L. Wong, P. Xu, F. C. Lee, A. Q. Huang, "Investigation of candidate VRM
    topologies for future microprocessors", IEEE Trans. Power Electron. 15(6), 2000,
    pp. 1172-1182 (recalled from memory); the tests check it against the sum of N
    shifted triangles.
    """
    d = np.asarray(duty, dtype=float)
    n = np.asarray(phases, dtype=float)
    m = np.floor(n * d)
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = n * (d - m / n) * ((m + 1.0) / n - d) / (d * (1.0 - d))
    return np.where((d > 0) & (d < 1), factor, 0.0)
