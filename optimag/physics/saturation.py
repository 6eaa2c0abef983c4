"""Saturation of core materials: powder-core permeability roll-off with DC bias, ferrite
soft saturation (Fröhlich-Kennelly) and Bsat against temperature.

Pure vectorised numpy functions in SI units.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import numpy.typing as npt
from scipy.special import hyp2f1

from optimag.arrays import FloatArray
from optimag.constants import MU0
from optimag.errors import warn_outside_range

#: Temperatures [degC] beyond which a straight line through the 25 and 100 degC
#: saturation values is no longer a fair guess (ferrite Curie points lie near
#: 200-300 degC). Common practice, no source.
BSAT_TEMPERATURE_RANGE_C = (-55.0, 150.0)


# --------------------------------------------------------------------------- powder cores


def powder_permeability_fraction(
    h_A_per_m: npt.ArrayLike, a: npt.ArrayLike, b: npt.ArrayLike, c: npt.ArrayLike
) -> FloatArray:
    """Incremental permeability of a powder core as a fraction of its initial value.

    Parameters
    ----------
    h_A_per_m : array_like
        DC magnetising field H (its magnitude is used) [A/m].
    a : array_like
        Fit coefficient, > 0; 1 for a fit normalised to mu_i [1].
    b : array_like
        Fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        mu(H)/mu_i [1].

    Notes
    -----
    .. math:: \\frac{\\mu(H)}{\\mu_i} = \\frac{1}{a + b |H|^c}

    References
    ----------
    Common practice form of powder-core DC-bias roll-off fits, no source.
    """
    return 1.0 / (np.asarray(a, dtype=float) + np.asarray(b) * np.abs(h_A_per_m) ** np.asarray(c))


def powder_flux_density(
    h_A_per_m: npt.ArrayLike,
    mu_i: npt.ArrayLike,
    a: npt.ArrayLike,
    b: npt.ArrayLike,
    c: npt.ArrayLike,
) -> FloatArray:
    """Flux density of a powder core magnetised along its roll-off curve.

    Parameters
    ----------
    h_A_per_m : array_like
        Magnetising field H (the curve is odd in H) [A/m].
    mu_i : array_like
        Initial relative permeability [1].
    a : array_like
        Fit coefficient, > 0 [1].
    b : array_like
        Fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        Flux density B [T].

    Notes
    -----
    Integrating the incremental permeability from 0 to H:

    .. math:: B = \\mu_0 \\mu_i \\int_0^H \\frac{dh}{a + b h^c}
              = \\mu_0 \\mu_i \\frac{H}{a}\\,
                {}_2F_1\\!\\left(1, \\tfrac{1}{c}; 1 + \\tfrac{1}{c}; -\\frac{b H^c}{a}\\right)

    (substituting :math:`u = (h/H)^c` turns the integral into Euler's integral
    representation of :math:`{}_2F_1`).

    References
    ----------
    Roll-off form: common practice, no source. Hypergeometric integral:
    M. Abramowitz, I. A. Stegun, *Handbook of Mathematical Functions*, NBS, 1964,
    eq. 15.3.1 (Euler's integral representation; equation number from memory).
    """
    field = np.asarray(h_A_per_m, dtype=float)
    magnitude = np.abs(field)
    a_arr = np.asarray(a, dtype=float)
    inv_c = 1.0 / np.asarray(c, dtype=float)
    z = -np.asarray(b) * magnitude ** np.asarray(c) / a_arr
    integral = magnitude / a_arr * hyp2f1(1.0, inv_c, 1.0 + inv_c, z)
    return MU0 * np.asarray(mu_i) * np.copysign(integral, field)


def powder_inductance(
    turns: npt.ArrayLike,
    current_A: npt.ArrayLike,
    le_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    mu_i: npt.ArrayLike,
    a: npt.ArrayLike,
    b: npt.ArrayLike,
    c: npt.ArrayLike,
) -> FloatArray:
    """Incremental inductance of a powder-core winding at a DC current.

    Parameters
    ----------
    turns : array_like
        Number of turns N [1].
    current_A : array_like
        DC winding current [A].
    le_m : array_like
        Effective magnetic path length [m].
    ae_m2 : array_like
        Effective cross-sectional area [m^2].
    mu_i : array_like
        Initial relative permeability [1].
    a : array_like
        Roll-off fit coefficient, > 0 [1].
    b : array_like
        Roll-off fit coefficient, >= 0 [(A/m)^-c].
    c : array_like
        Roll-off fit exponent, in [0.2, 5] [1].

    Returns
    -------
    ndarray
        Incremental inductance dPsi/dI [H].

    Notes
    -----
    .. math:: H = \\frac{N I}{l_e}, \\qquad
              L = \\frac{\\mu_0 \\mu_i N^2 A_e}{l_e} \\frac{1}{a + b H^c}

    References
    ----------
    Roll-off form: common practice, no source. Magnetic circuit:
    R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*, 3rd ed.,
    Springer, 2020, ch. "Basic magnetics theory". DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    turns_arr = np.asarray(turns, dtype=float)
    le = np.asarray(le_m, dtype=float)
    field = turns_arr * np.asarray(current_A) / le
    zero_bias = MU0 * np.asarray(mu_i) * turns_arr * turns_arr * np.asarray(ae_m2) / le
    return zero_bias * powder_permeability_fraction(field, a, b, c)


# --------------------------------------------------------------------------- soft saturation


def soft_saturation_polarization(
    h_A_per_m: npt.ArrayLike, mu_i: npt.ArrayLike, bsat_T: npt.ArrayLike
) -> FloatArray:
    """Magnetic polarisation of a ferrite on its anhysteretic curve, Fröhlich-Kennelly form.

    Parameters
    ----------
    h_A_per_m : array_like
        Magnetising field H (the curve is odd in H) [A/m].
    mu_i : array_like
        Initial relative permeability, > 1 [1].
    bsat_T : array_like
        Saturation polarisation J_s, taken as the material's Bsat at the temperature of
        interest, > 0 [T].

    Returns
    -------
    ndarray
        Polarisation J = B - mu0 H [T].

    Notes
    -----
    Fröhlich's law, or Kennelly's linear reluctivity law, written for the polarisation:

    .. math:: J(H) = \\frac{H}{a + b |H|}, \\qquad
              a = \\frac{1}{\\mu_0 (\\mu_i - 1)}, \\quad b = \\frac{1}{J_s}

    so the reluctivity H/J = a + b|H| is a straight line in |H| [2]. The two constants are
    fitted exactly to the initial permeability (dB/dH = mu0 mu_i at H = 0) and to the
    saturation value (J -> J_s). Bsat as catalogued includes mu0 H at the measuring field
    (about 1.5 mT at 1.2 kA/m), which is neglected against J_s.

    References
    ----------
    .. [1] O. Fröhlich, "Investigations of dynamoelectric machines and electric power
       transmission and theoretical conclusions therefrom", *Elektrotechnische
       Zeitschrift*, vol. 2, pp. 134-141, 1881 (from memory).
    .. [2] A. E. Kennelly, "Magnetic reluctance", *Transactions of the AIEE*, vol. 8,
       pp. 485-517, 1891 (from memory).
    .. [3] F. C. Trutt, E. A. Erdelyi, R. E. Hopkins, "Representation of the magnetization
       characteristic of DC machines for computer use", *IEEE Transactions on Power
       Apparatus and Systems*, vol. PAS-87, no. 3, pp. 665-669, 1968 (from memory).
    """
    field = np.asarray(h_A_per_m, dtype=float)
    a = 1.0 / (MU0 * (np.asarray(mu_i, dtype=float) - 1.0))
    b = 1.0 / np.asarray(bsat_T, dtype=float)
    return field / (a + b * np.abs(field))


def soft_saturation_flux_density(
    h_A_per_m: npt.ArrayLike, mu_i: npt.ArrayLike, bsat_T: npt.ArrayLike
) -> FloatArray:
    """Flux density B = mu0 H + J(H) of a ferrite on its Fröhlich-Kennelly curve.

    Parameters
    ----------
    h_A_per_m : array_like
        Magnetising field H [A/m].
    mu_i : array_like
        Initial relative permeability, > 1 [1].
    bsat_T : array_like
        Saturation polarisation J_s (Bsat at the temperature of interest) [T].

    Returns
    -------
    ndarray
        Flux density [T].

    Notes
    -----
    See `soft_saturation_polarization`. Far beyond saturation the incremental relative
    permeability tends to 1, as for a fully saturated core.

    References
    ----------
    .. [1] O. Fröhlich, Elektrotechnische Zeitschrift, vol. 2, pp. 134-141, 1881;
       A. E. Kennelly, "Magnetic reluctance", Trans. AIEE, vol. 8, pp. 485-517, 1891
       (both from memory).
    """
    field = np.asarray(h_A_per_m, dtype=float)
    return MU0 * field + soft_saturation_polarization(field, mu_i, bsat_T)


@dataclass(frozen=True)
class SoftSaturationPoint:
    """Operating point of a gapped soft-saturating core at a DC current.

    Parameters
    ----------
    flux_density_T : flux density in the core's effective section [T]
    field_A_per_m : magnetising field in the core [A/m]
    inductance_H : incremental inductance N dPhi/dI [H]
    """

    flux_density_T: FloatArray
    field_A_per_m: FloatArray
    inductance_H: FloatArray


def soft_saturation_operating_point(
    turns: npt.ArrayLike,
    current_A: npt.ArrayLike,
    le_m: npt.ArrayLike,
    ae_m2: npt.ArrayLike,
    mu_i: npt.ArrayLike,
    bsat_T: npt.ArrayLike,
    gap_reluctance: npt.ArrayLike,
) -> SoftSaturationPoint:
    """Flux and incremental inductance of a gapped core with a Fröhlich-Kennelly B-H law.

    Parameters
    ----------
    turns : array_like
        Number of turns N [1].
    current_A : array_like
        Winding current (flux and field are odd in it) [A].
    le_m : array_like
        Effective magnetic path length [m].
    ae_m2 : array_like
        Effective cross-sectional area, taken as uniform along le [m^2].
    mu_i : array_like
        Initial relative permeability, > 1 [1].
    bsat_T : array_like
        Saturation polarisation J_s (Bsat at the temperature of interest), > 0 [T].
    gap_reluctance : array_like
        Reluctance of the air gap including fringing, >= 0 [A/Wb].

    Returns
    -------
    SoftSaturationPoint
        Flux density, field and incremental inductance, broadcast over the inputs.

    Notes
    -----
    Ampère's law around the magnetic circuit, :math:`N I = l_e H + \\mathcal{R}_g A_e B`,
    with :math:`B = \\mu_0 H + J` and the Fröhlich-Kennelly law inverted for H,
    :math:`H = \\frac{J_s}{\\mu_0 (\\mu_i - 1)} \\frac{j}{1 - j}`, :math:`j = J/J_s`,
    is a quadratic in j:

    .. math:: c_2 j^2 - (c_1 + c_2 + F) j + F = 0, \\quad F = N |I|, \\quad
              c_1 = \\frac{(l_e + \\mu_0 \\mathcal{R}_g A_e) J_s}{\\mu_0 (\\mu_i - 1)},
              \\quad c_2 = \\mathcal{R}_g A_e J_s

    whose root in [0, 1) is taken in the cancellation-free form
    :math:`j = 2F / (s + \\sqrt{s^2 - 4 c_2 F})`, :math:`s = c_1 + c_2 + F` (valid
    without a gap, c_2 = 0, too). The incremental inductance is

    .. math:: L = N A_e \\frac{dB}{dI} = N^2 A_e \\frac{dB/dj}{dF/dj}
              = N^2 A_e \\frac{J_s \\left[1 + \\frac{1}{(\\mu_i - 1)(1 - j)^2}\\right]}
                {c_1 / (1 - j)^2 + c_2}

    It equals :math:`N^2 / (\\mathcal{R}_c + \\mathcal{R}_g)` at zero current and tends to
    the air-cored value :math:`N^2 / (l_e/(\\mu_0 A_e) + \\mathcal{R}_g)` far beyond
    saturation. The core is one effective section (IEC 60205 effective parameters): a
    narrower section saturates locally earlier, which the saturation margin on Amin guards.
    The gap reluctance does not depend on the core's state.

    References
    ----------
    .. [1] O. Fröhlich, Elektrotechnische Zeitschrift, vol. 2, pp. 134-141, 1881;
       A. E. Kennelly, "Magnetic reluctance", Trans. AIEE, vol. 8, pp. 485-517, 1891
       (both from memory).
    .. [2] IEC 60205, *Calculation of the effective parameters of magnetic piece parts*.
    """
    turns_arr = np.asarray(turns, dtype=float)
    current = np.asarray(current_A, dtype=float)
    le = np.asarray(le_m, dtype=float)
    ae = np.asarray(ae_m2, dtype=float)
    chi = np.asarray(mu_i, dtype=float) - 1.0
    js = np.asarray(bsat_T, dtype=float)
    r_gap = np.asarray(gap_reluctance, dtype=float)
    mmf = turns_arr * np.abs(current)
    c1 = (le + MU0 * r_gap * ae) * js / (MU0 * chi)
    c2 = r_gap * ae * js
    s = c1 + c2 + mmf
    j = 2.0 * mmf / (s + np.sqrt(np.maximum(s * s - 4.0 * c2 * mmf, 0.0)))
    free = 1.0 - j
    field = js / (MU0 * chi) * j / free
    flux = MU0 * field + js * j
    slope_b = js * (1.0 + 1.0 / (chi * free * free))
    inductance_value = turns_arr * turns_arr * ae * slope_b / (c1 / (free * free) + c2)
    sign = np.sign(current)
    return SoftSaturationPoint(
        flux_density_T=flux * sign, field_A_per_m=field * sign, inductance_H=inductance_value
    )


# --------------------------------------------------------------------------- saturation


def bsat_at_temperature(
    temperature_C: npt.ArrayLike, bsat_25C_T: npt.ArrayLike, bsat_100C_T: npt.ArrayLike
) -> FloatArray:
    """Saturation flux density at a temperature, by a line through two data points.

    Parameters
    ----------
    temperature_C : array_like
        Core temperature [degC].
    bsat_25C_T : array_like
        Saturation flux density at 25 degC [T].
    bsat_100C_T : array_like
        Saturation flux density at 100 degC [T].

    Returns
    -------
    ndarray
        Saturation flux density, >= 0 [T].

    Notes
    -----
    .. math:: B_{sat}(T) = \\max\\left(0,\\; B_{25} + (B_{100} - B_{25})
              \\frac{T - 25}{75}\\right)

    A `ValidityRangeWarning` is emitted outside -55 ... 150 degC, where the line is
    a far extrapolation (ferrite saturation falls faster towards the Curie point).

    References
    ----------
    Common practice, no source.
    """
    temperature = np.asarray(temperature_C, dtype=float)
    low, high = BSAT_TEMPERATURE_RANGE_C
    warn_outside_range(
        (temperature < low) | (temperature > high),
        f"saturation flux density extrapolated outside {low:g} ... {high:g} degC",
    )
    b25 = np.asarray(bsat_25C_T, dtype=float)
    slope = (np.asarray(bsat_100C_T) - b25) / 75.0
    return np.maximum(b25 + slope * (temperature - 25.0), 0.0)
