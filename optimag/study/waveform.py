"""Inductor current of a switch-mode converter over one switching period.

Three layers, as elsewhere in optimag: pure vectorised functions
(`inductor_current_shape`, `triangle_harmonics`, `piecewise_linear_harmonics`)
that broadcast over arrays; a frozen `Waveform` holder for one operating point;
and `operating_waveforms`, which turns a validated study into one waveform per
operating point.

The converter is ideal (lossless switches, no dead time) and the inductance is
constant over the period, so the current is piecewise linear. The flux the core
sees is this current scaled by ``L / (N Ae)``; the evaluation model applies that
scaling, so only the current is carried here.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Literal

import numpy as np
from numpy.typing import ArrayLike

from optimag.arrays import BoolArray, FloatArray

if TYPE_CHECKING:
    from optimag.study.file import Study

Topology = Literal["buck", "boost", "buck-boost"]
TOPOLOGIES: tuple[str, ...] = ("buck", "boost", "buck-boost")

# Below this |n w h / 2| the sinc difference in a segment integral is replaced by its
# Taylor series, because cos(z) - sin(z)/z loses all digits to cancellation there.
_SERIES_THRESHOLD = 1e-3


@dataclass(frozen=True, eq=False)
class InductorCurrentShape:
    """Arrays describing the inductor current of a converter (broadcast shape of the inputs).

    Attributes
    ----------
    dcm : ndarray of bool  Discontinuous conduction [-]
    rise_fraction : ndarray  Fraction of the period the current rises, D1 [-]
    fall_fraction : ndarray  Fraction of the period the current falls, D2 [-]
    dc_A : ndarray  Average inductor current [A]
    ripple_pp_A : ndarray  Peak-to-peak ripple [A]
    peak_A : ndarray  Peak current [A]
    valley_A : ndarray  Lowest current (0 in DCM) [A]
    rms_A : ndarray  RMS current [A]
    """

    dcm: BoolArray
    rise_fraction: FloatArray
    fall_fraction: FloatArray
    dc_A: FloatArray
    ripple_pp_A: FloatArray
    peak_A: FloatArray
    valley_A: FloatArray
    rms_A: FloatArray


@dataclass(frozen=True, eq=False)
class Waveform:
    """Inductor current over one switching period at one operating point.

    Attributes
    ----------
    name : str  Operating-point name [-]
    time_share : float  Share of operating time spent at this point [-]
    frequency_Hz : float  Switching frequency [Hz]
    dcm : bool  Discontinuous conduction [-]
    rise_fraction : float  Fraction of the period the current rises, D1 [-]
    fall_fraction : float  Fraction of the period the current falls, D2 (1 - D1 in CCM) [-]
    dc_A : float  Average inductor current [A]
    ripple_pp_A : float  Peak-to-peak ripple [A]
    peak_A : float  Peak current [A]
    valley_A : float  Lowest current [A]
    rms_A : float  RMS current [A]
    harmonics_A : ndarray  Amplitudes of harmonics n = 1..H, shape (H,) [A]
    times_s : ndarray  Vertex times over one period, first 0 and last 1/f [s]
    currents_A : ndarray  Current at each vertex; first equals last [A]
    input_V : float  Converter input voltage [V]
    output_V : float  Converter output voltage magnitude [V]
    load_A : float  Converter load current [A]
    """

    name: str
    time_share: float
    frequency_Hz: float
    dcm: bool
    rise_fraction: float
    fall_fraction: float
    dc_A: float
    ripple_pp_A: float
    peak_A: float
    valley_A: float
    rms_A: float
    harmonics_A: FloatArray
    times_s: FloatArray
    currents_A: FloatArray
    input_V: float
    output_V: float
    load_A: float

    @property
    def period_s(self) -> float:
        """Switching period [s]."""
        return 1.0 / self.frequency_Hz


def inductor_voltages(
    topology: Topology, input_V: ArrayLike, output_V: ArrayLike, load_A: ArrayLike
) -> tuple[FloatArray, FloatArray, FloatArray]:
    """Inductor voltage while the current rises and falls, and the average inductor current.

    Parameters
    ----------
    topology : {"buck", "boost", "buck-boost"}  Converter topology; buck-boost is the
        inverting one [-]
    input_V : array_like  Input voltage, > 0 [V]
    output_V : array_like  Output voltage magnitude, > 0; below `input_V` for a buck,
        above it for a boost [V]
    load_A : array_like  Load (output) current, >= 0 [A]

    Returns
    -------
    rise_V : ndarray  Magnitude of the inductor voltage while the current rises [V]
    fall_V : ndarray  Magnitude of the inductor voltage while the current falls [V]
    average_A : ndarray  Average inductor current the load demands, in CCM and DCM [A]

    Raises
    ------
    ValueError
        For an unknown topology or voltages outside the topology's range.

    Notes
    -----
    Ideal converter (Erickson & Maksimović, ch. 2):

    ======== ============ ============ ========================
    topology rise_V       fall_V       average inductor current
    ======== ============ ============ ========================
    buck     Vi - Vo      Vo           Io
    boost    Vi           Vo - Vi      Io Vo / Vi
    buck-boost Vi         Vo           Io (Vi + Vo) / Vi
    ======== ============ ============ ========================

    The average inductor current follows from power balance and is the same in
    continuous and discontinuous conduction.

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2. doi:10.1007/978-3-030-43881-4
    """
    vi, vo, io = np.broadcast_arrays(
        np.asarray(input_V, dtype=float),
        np.asarray(output_V, dtype=float),
        np.asarray(load_A, dtype=float),
    )
    if topology not in TOPOLOGIES:
        raise ValueError(f"unknown topology {topology!r}; expected one of {TOPOLOGIES}")
    if not (np.all(vi > 0) and np.all(vo > 0)):
        raise ValueError("input_V and output_V must be > 0")
    if not np.all(io >= 0):
        raise ValueError("load_A must be >= 0")
    if topology == "buck":
        if not np.all(vo < vi):
            raise ValueError("a buck needs output_V < input_V")
        return vi - vo, vo.copy(), io.copy()
    if topology == "boost":
        if not np.all(vo > vi):
            raise ValueError("a boost needs output_V > input_V")
        return vi.copy(), vo - vi, io * vo / vi
    return vi.copy(), vo.copy(), io * (vi + vo) / vi


def ccm_duty_ratio(
    topology: Topology, input_V: ArrayLike, output_V: ArrayLike
) -> FloatArray:
    """Duty ratio of the active switch in continuous conduction.

    Parameters
    ----------
    topology : {"buck", "boost", "buck-boost"}  Converter topology [-]
    input_V : array_like  Input voltage, > 0 [V]
    output_V : array_like  Output voltage magnitude, > 0 [V]

    Returns
    -------
    ndarray  Duty ratio D [-]

    Notes
    -----
    Inductor volt-second balance, ``rise_V D = fall_V (1 - D)``, gives
    ``D = fall_V / (rise_V + fall_V)``: buck ``Vo / Vi``, boost ``1 - Vi / Vo``,
    inverting buck-boost ``Vo / (Vi + Vo)`` (Erickson & Maksimović, ch. 2).

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2. doi:10.1007/978-3-030-43881-4
    """
    rise_V, fall_V, _ = inductor_voltages(topology, input_V, output_V, 0.0)
    return fall_V / (rise_V + fall_V)


def ccm_ripple_inductance(
    topology: Topology,
    input_V: ArrayLike,
    output_V: ArrayLike,
    load_A: ArrayLike,
    frequency_Hz: ArrayLike,
    ripple_fraction: ArrayLike,
) -> FloatArray:
    """Inductance giving a chosen peak-to-peak ripple, as a fraction of the average current.

    Parameters
    ----------
    topology : {"buck", "boost", "buck-boost"}  Converter topology [-]
    input_V : array_like  Input voltage, > 0 [V]
    output_V : array_like  Output voltage magnitude, > 0 [V]
    load_A : array_like  Load current, > 0 [A]
    frequency_Hz : array_like  Switching frequency, > 0 [Hz]
    ripple_fraction : array_like  Peak-to-peak ripple over average inductor current r,
        in (0, 2]; 2 is the CCM/DCM boundary [-]

    Returns
    -------
    ndarray  Inductance [H]

    Notes
    -----
    From ``ΔI = rise_V D / (L f)`` and ``ΔI = r I_L``:
    ``L = rise_V D / (f r I_L)`` (Erickson & Maksimović, ch. 2).

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2. doi:10.1007/978-3-030-43881-4
    """
    rise_V, fall_V, average_A = inductor_voltages(topology, input_V, output_V, load_A)
    duty = fall_V / (rise_V + fall_V)
    return (
        rise_V
        * duty
        / (
            np.asarray(frequency_Hz, dtype=float)
            * np.asarray(ripple_fraction, dtype=float)
            * average_A
        )
    )


def inductor_current_shape(
    topology: Topology,
    input_V: ArrayLike,
    output_V: ArrayLike,
    load_A: ArrayLike,
    frequency_Hz: ArrayLike,
    inductance_H: ArrayLike,
) -> InductorCurrentShape:
    """Duty fractions, average, peak, valley and RMS of the inductor current, CCM or DCM.

    Parameters
    ----------
    topology : {"buck", "boost", "buck-boost"}  Converter topology; buck-boost is the
        inverting one [-]
    input_V : array_like  Input voltage, > 0 [V]
    output_V : array_like  Output voltage magnitude, > 0; below `input_V` for a buck,
        above it for a boost [V]
    load_A : array_like  Load current, >= 0 [A]
    frequency_Hz : array_like  Switching frequency, > 0 [Hz]
    inductance_H : array_like  Inductance, > 0 [H]

    Returns
    -------
    InductorCurrentShape  Arrays in the broadcast shape of the inputs.

    Notes
    -----
    With ``V_r`` and ``V_f`` the inductor voltage magnitudes while the current rises
    and falls, and ``I_L`` the average current the load demands (see
    `inductor_voltages`), continuous conduction (Erickson & Maksimović, ch. 2) gives

    .. math:: D = V_f / (V_r + V_f), \\quad ΔI = V_r D / (L f), \\quad
              I_{pk,v} = I_L ± ΔI / 2.

    Conduction is discontinuous when ``ΔI / 2 > I_L``. The controller then keeps the
    same output voltage with a shorter on-time ``D1 T``: the current rises from 0 to
    ``I_pk = V_r D1 / (L f)``, falls back to 0 in ``D2 T`` and stays 0 for the rest
    of the period (Erickson & Maksimović, ch. 5). Volt-second balance over the period,
    ``V_r D1 = V_f D2``, gives

    .. math:: D_2 = D_1 V_r / V_f,

    and the triangle's average must equal the demanded average,

    .. math:: I_L = I_{pk} (D_1 + D_2) / 2 = V_r D_1^2 (1 + V_r / V_f) / (2 L f),

    so

    .. math:: D_1 = \\sqrt{2 L f I_L V_f / (V_r (V_r + V_f))}.

    Per topology: buck ``V_r = Vi - Vo``, ``V_f = Vo``, ``I_L = Io``; boost
    ``V_r = Vi``, ``V_f = Vo - Vi``, ``I_L = Io Vo / Vi``; buck-boost ``V_r = Vi``,
    ``V_f = Vo``, ``I_L = Io (Vi + Vo) / Vi``. At the boundary ``ΔI = 2 I_L`` the
    expression gives ``D1 = D``, so every quantity is continuous across it.

    The mean square of a linear segment from ``a`` to ``b`` lasting a fraction ``d``
    of the period is ``d (a² + a b + b²) / 3``; for CCM this sums to
    ``I_L² + ΔI² / 12``.

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2 (steady-state CCM) and ch. 5 (discontinuous conduction mode).
    doi:10.1007/978-3-030-43881-4
    """
    rise_V, fall_V, average_A = inductor_voltages(topology, input_V, output_V, load_A)
    return current_shape_from_voltages(rise_V, fall_V, average_A, frequency_Hz, inductance_H)


def current_shape_from_voltages(
    rise_V: ArrayLike,
    fall_V: ArrayLike,
    average_A: ArrayLike,
    frequency_Hz: ArrayLike,
    inductance_H: ArrayLike,
    allow_dcm: ArrayLike = True,
) -> InductorCurrentShape:
    """Inductor current of any of the three converters from its inductor voltages, CCM or DCM.

    Parameters
    ----------
    rise_V : array_like  Magnitude of the inductor voltage while the current rises, > 0 [V]
    fall_V : array_like  Magnitude of the inductor voltage while the current falls, > 0 [V]
    average_A : array_like  Average inductor current the load demands, >= 0 [A]
    frequency_Hz : array_like  Switching frequency, > 0 [Hz]
    inductance_H : array_like  Inductance, > 0 [H]
    allow_dcm : array_like of bool  False where the switches conduct both ways (a bridge):
        the current then stays a triangle that may cross zero (valley below 0) [-]

    Returns
    -------
    InductorCurrentShape  Arrays in the broadcast shape of the inputs.

    Notes
    -----
    The relations of `inductor_current_shape`, written on ``V_r``, ``V_f`` and ``I_L``
    (see `inductor_voltages` for each topology), so that a search can evaluate every
    design's own inductance at every operating point in one call: conduction is
    discontinuous where ``V_r D / (2 L f) > I_L`` with ``D = V_f / (V_r + V_f)``, and
    then ``D_1 = sqrt(2 L f I_L V_f / (V_r (V_r + V_f)))``, ``D_2 = D_1 V_r / V_f``,
    ``I_pk = V_r D_1 / (L f)`` (Erickson & Maksimović, ch. 5).

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2 (steady-state CCM) and ch. 5 (discontinuous conduction mode).
    doi:10.1007/978-3-030-43881-4
    """
    frequency = np.asarray(frequency_Hz, dtype=float)
    inductance = np.asarray(inductance_H, dtype=float)
    if not (np.all(frequency > 0) and np.all(inductance > 0)):
        raise ValueError("frequency_Hz and inductance_H must be > 0")
    rise_V, fall_V, average_A, frequency, inductance = np.broadcast_arrays(
        np.asarray(rise_V, dtype=float), np.asarray(fall_V, dtype=float),
        np.asarray(average_A, dtype=float), frequency, inductance,
    )

    ccm_duty = fall_V / (rise_V + fall_V)
    ccm_ripple = rise_V * ccm_duty / (inductance * frequency)
    dcm = (ccm_ripple / 2.0 > average_A) & np.asarray(allow_dcm, dtype=bool)

    dcm_rise = np.sqrt(
        2.0 * inductance * frequency * average_A * fall_V / (rise_V * (rise_V + fall_V))
    )
    rise = np.where(dcm, dcm_rise, ccm_duty)
    fall = np.where(dcm, rise * rise_V / fall_V, 1.0 - ccm_duty)
    peak = np.where(dcm, rise_V * rise / (inductance * frequency), average_A + ccm_ripple / 2.0)
    valley = np.where(dcm, 0.0, average_A - ccm_ripple / 2.0)
    # Both segments run between valley and peak; in DCM the zero interval adds nothing.
    mean_square = (rise + fall) * (valley**2 + valley * peak + peak**2) / 3.0
    return InductorCurrentShape(
        dcm=dcm,
        rise_fraction=rise,
        fall_fraction=fall,
        dc_A=average_A,
        ripple_pp_A=peak - valley,
        peak_A=peak,
        valley_A=valley,
        rms_A=np.sqrt(mean_square),
    )


def pulse_harmonics(
    ripple_pp_A: ArrayLike, rise_fraction: ArrayLike, fall_fraction: ArrayLike, harmonics: int
) -> FloatArray:
    """Fourier amplitudes of a triangle followed by a flat interval (CCM or DCM current).

    Parameters
    ----------
    ripple_pp_A : array_like  Peak-to-peak amplitude, >= 0 [A]
    rise_fraction : array_like  Fraction of the period the wave rises, D1 in (0, 1] [-]
    fall_fraction : array_like  Fraction of the period it falls, D2 in (0, 1 - D1]; the rest
        of the period is flat (``D1 + D2 = 1``: the CCM triangle) [-]
    harmonics : int  Number of harmonics H, >= 1 [-]

    Returns
    -------
    ndarray  Amplitudes c_n for n = 1..H on a new last axis [A]

    Notes
    -----
    The wave is continuous and piecewise linear, so its second derivative is a train of
    impulses of the slope changes ``Δs_j`` at the vertices ``t_j`` and
    ``X_n = -Σ_j Δs_j e^{-j n ω t_j} / (T (n ω)^2)``. With ``θ = 2 π n``, vertices at
    ``0, D1 T, (D1 + D2) T`` and slope changes ``ΔI / (D1 T)``,
    ``-ΔI (D1 + D2) / (D1 D2 T)``, ``ΔI / (D2 T)``:

    .. math:: c_n = \\frac{2 ΔI}{θ^2} \\left| \\frac{1}{D_1}
              - \\frac{D_1 + D_2}{D_1 D_2} e^{-jθ D_1}
              + \\frac{1}{D_2} e^{-jθ (D_1 + D_2)} \\right|

    For ``D1 + D2 = 1`` this is `triangle_harmonics`.

    References
    ----------
    A. V. Oppenheim, A. S. Willsky and S. H. Nawab, *Signals and Systems*, 2nd ed.,
    Prentice Hall, 1997, ch. 3 (Fourier series; differentiation property).
    """
    if int(harmonics) < 1:
        raise ValueError("harmonics must be >= 1")
    ripple = np.asarray(ripple_pp_A, dtype=float)[..., np.newaxis]
    d1 = np.asarray(rise_fraction, dtype=float)[..., np.newaxis]
    d2 = np.asarray(fall_fraction, dtype=float)[..., np.newaxis]
    if not (np.all(d1 > 0) and np.all(d2 > 0) and np.all(d1 + d2 <= 1.0 + 1e-12)):
        raise ValueError("need rise_fraction > 0, fall_fraction > 0 and their sum <= 1")
    theta = 2.0 * np.pi * np.arange(1, int(harmonics) + 1, dtype=float)
    a1, a2 = theta * d1, theta * (d1 + d2)
    s = (d1 + d2) / (d1 * d2)
    real = 1.0 / d1 - s * np.cos(a1) + np.cos(a2) / d2
    imag = s * np.sin(a1) - np.sin(a2) / d2
    return 2.0 * ripple * np.hypot(real, imag) / theta**2


def triangle_harmonics(
    ripple_pp_A: ArrayLike, rise_fraction: ArrayLike, harmonics: int
) -> FloatArray:
    """Fourier amplitudes of a triangular ripple.

    Parameters
    ----------
    ripple_pp_A : array_like  Peak-to-peak amplitude of the triangle, >= 0 [A]
    rise_fraction : array_like  Fraction of the period spent rising, D in [0, 1] [-]
    harmonics : int  Number of harmonics H, >= 1 [-]

    Returns
    -------
    ndarray  Amplitudes c_n for n = 1..H on a new last axis, shape
        ``broadcast(ripple_pp_A, rise_fraction).shape + (H,)`` [A]

    Notes
    -----
    .. math:: c_n = \\\frac{ΔI \\, |\\sin(π n D)|}{π^2 n^2 D (1 - D)}

    Written as ``ΔI |sinc(n m)| / (π n (1 - m))`` with ``m = min(D, 1 - D)`` (the
    spectrum is symmetric in D and 1 - D), which is finite at D = 0 and D = 1 where
    the triangle becomes a sawtooth with ``c_n = ΔI / (π n)``.

    The formula is the Fourier series of the two linear segments integrated in closed
    form (the same integral as `piecewise_linear_harmonics`, specialised).

    References
    ----------
    A. V. Oppenheim, A. S. Willsky and S. H. Nawab, *Signals and Systems*, 2nd ed.,
    Prentice Hall, 1997, ch. 3 (Fourier series of continuous-time periodic signals).
    """
    if int(harmonics) < 1:
        raise ValueError("harmonics must be >= 1")
    ripple = np.asarray(ripple_pp_A, dtype=float)[..., np.newaxis]
    duty = np.asarray(rise_fraction, dtype=float)[..., np.newaxis]
    if not np.all((duty >= 0) & (duty <= 1)):
        raise ValueError("rise_fraction must lie in [0, 1]")
    order = np.arange(1, int(harmonics) + 1, dtype=float)
    shorter = np.minimum(duty, 1.0 - duty)
    return ripple * np.abs(np.sinc(order * shorter)) / (np.pi * order * (1.0 - shorter))


def piecewise_linear_harmonics(
    times_s: ArrayLike, values: ArrayLike, harmonics: int
) -> FloatArray:
    """Exact Fourier amplitudes of a periodic piecewise-linear wave.

    Parameters
    ----------
    times_s : array_like  Vertex times, non-decreasing along the last axis; the period
        is ``times_s[..., -1] - times_s[..., 0]`` (> 0). Equal consecutive times give a
        step [s]
    values : array_like  Wave value at each vertex, same last-axis length as `times_s`;
        the wave is linear between vertices [any unit, e.g. A]
    harmonics : int  Number of harmonics H, >= 1 [-]

    Returns
    -------
    ndarray  Amplitudes c_n = 2 |X_n| for n = 1..H on the last axis, shape
        ``broadcast batch shape + (H,)`` [unit of `values`]

    Notes
    -----
    The complex Fourier coefficient ``X_n = (1/T) ∫ x(t) e^{-j n ω t} dt`` is summed
    over segments in closed form. For a segment of length ``h``, midpoint ``t_m``,
    mid value ``x_m`` and rise ``Δx`` (so slope ``Δx / h``), with ``w = n ω`` and
    ``z = w h / 2``:

    .. math:: ∫ x e^{-jwt} dt = e^{-j w t_m} \\left[ x_m h \\frac{\\sin z}{z}
              + j \\frac{Δx}{w} \\left(\\cos z - \\frac{\\sin z}{z}\\right) \\right]

    which needs no division by ``h``, so steps (``h = 0``) and flat segments are exact.
    A step contributes nothing to the integral, so a last value different from the
    first is read as a step at the period's end.

    References
    ----------
    A. V. Oppenheim, A. S. Willsky and S. H. Nawab, *Signals and Systems*, 2nd ed.,
    Prentice Hall, 1997, ch. 3 (Fourier series of continuous-time periodic signals).
    """
    if int(harmonics) < 1:
        raise ValueError("harmonics must be >= 1")
    times, wave = np.broadcast_arrays(
        np.asarray(times_s, dtype=float), np.asarray(values, dtype=float)
    )
    if times.ndim == 0 or times.shape[-1] < 2:
        raise ValueError("need at least two vertices")
    period = times[..., -1] - times[..., 0]
    if not np.all(period > 0) or not np.all(np.diff(times, axis=-1) >= 0):
        raise ValueError("times_s must be non-decreasing with a positive period")

    durations = np.diff(times, axis=-1)[..., np.newaxis]
    midpoints = (0.5 * (times[..., 1:] + times[..., :-1]))[..., np.newaxis]
    mid_values = (0.5 * (wave[..., 1:] + wave[..., :-1]))[..., np.newaxis]
    rises = np.diff(wave, axis=-1)[..., np.newaxis]

    period_b = period[..., np.newaxis, np.newaxis]
    order = np.arange(1, int(harmonics) + 1, dtype=float)
    angular = 2.0 * np.pi * order / period_b
    half_angle = angular * durations / 2.0
    sinc = np.sinc(half_angle / np.pi)
    small = np.abs(half_angle) < _SERIES_THRESHOLD
    z2 = half_angle**2
    sinc_gap = np.where(small, -z2 / 3.0 + z2**2 / 30.0, np.cos(half_angle) - sinc)
    segment = np.exp(-1j * angular * (midpoints - times[..., :1, np.newaxis])) * (
        mid_values * durations * sinc + 1j * rises / angular * sinc_gap
    )
    coefficient = segment.sum(axis=-2) / period[..., np.newaxis]
    return 2.0 * np.abs(coefficient)


def converter_waveform(
    topology: Topology,
    input_V: float,
    output_V: float,
    load_A: float,
    frequency_Hz: float,
    inductance_H: float,
    harmonics: int = 25,
    name: str = "",
    time_share: float = 1.0,
) -> Waveform:
    """Inductor current of one converter operating point, CCM or DCM.

    Parameters
    ----------
    topology : {"buck", "boost", "buck-boost"}  Converter topology [-]
    input_V : float  Input voltage [V]
    output_V : float  Output voltage magnitude [V]
    load_A : float  Load current, >= 0 [A]
    frequency_Hz : float  Switching frequency [Hz]
    inductance_H : float  Inductance [H]
    harmonics : int  Number of harmonics kept, >= 1 [-]
    name : str  Operating-point name [-]
    time_share : float  Share of operating time at this point [-]

    Returns
    -------
    Waveform

    Notes
    -----
    Relations as in `inductor_current_shape`. CCM vertices are
    ``(0, valley), (D T, peak), (T, valley)`` and the harmonics are the triangle's
    closed form; DCM vertices are ``(0, 0), (D1 T, peak), ((D1 + D2) T, 0), (T, 0)``
    and the harmonics come from `piecewise_linear_harmonics`.

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2 and 5. doi:10.1007/978-3-030-43881-4
    """
    shape = inductor_current_shape(topology, input_V, output_V, load_A, frequency_Hz, inductance_H)
    period = 1.0 / float(frequency_Hz)
    rise = float(shape.rise_fraction)
    fall = float(shape.fall_fraction)
    peak = float(shape.peak_A)
    valley = float(shape.valley_A)
    dcm = bool(shape.dcm)
    if dcm:
        times = np.array([0.0, rise, rise + fall, 1.0]) * period
        currents = np.array([0.0, peak, 0.0, 0.0])
        spectrum = piecewise_linear_harmonics(times, currents, harmonics)
    else:
        times = np.array([0.0, rise, 1.0]) * period
        currents = np.array([valley, peak, valley])
        spectrum = triangle_harmonics(peak - valley, rise, harmonics)
    for array in (times, currents, spectrum):
        array.setflags(write=False)
    return Waveform(
        name=name,
        time_share=float(time_share),
        frequency_Hz=float(frequency_Hz),
        dcm=dcm,
        rise_fraction=rise,
        fall_fraction=fall,
        dc_A=float(shape.dc_A),
        ripple_pp_A=float(shape.ripple_pp_A),
        peak_A=peak,
        valley_A=valley,
        rms_A=float(shape.rms_A),
        harmonics_A=spectrum,
        times_s=times,
        currents_A=currents,
        input_V=float(input_V),
        output_V=float(output_V),
        load_A=float(load_A),
    )


def operating_waveforms(
    study: Study, inductance_H: float | None = None, harmonics: int | None = None
) -> list[Waveform]:
    """One inductor-current waveform per operating point of a study.

    Parameters
    ----------
    study : Study  Validated study [-]
    inductance_H : float, optional  Inductance; default the study's required
        inductance [H]
    harmonics : int, optional  Harmonics kept; default ``study.search.harmonics`` [-]

    Returns
    -------
    list of Waveform  In the order of the study's operating points.

    Notes
    -----
    See `converter_waveform`.

    References
    ----------
    R. W. Erickson and D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. 2 and 5. doi:10.1007/978-3-030-43881-4
    """
    inductance = study.required_inductance_H if inductance_H is None else float(inductance_H)
    count = study.search.harmonics if harmonics is None else int(harmonics)
    return [
        converter_waveform(
            study.converter.topology,
            point.input_V,
            point.output_V,
            point.load_A,
            study.frequency_Hz,
            inductance,
            harmonics=count,
            name=point.name,
            time_share=point.time_share,
        )
        for point in study.operating_points
    ]
