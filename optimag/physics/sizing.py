"""Energy-storage sizing of inductor cores: area product Ap and geometry coefficient Kg.

Pure vectorised numpy functions; every argument may be a scalar or an array and
arguments broadcast. SI units: the area product is in m^4 (1 cm^4 = 1e-8 m^4), the
geometry coefficient in m^5 (1 cm^5 = 1e-10 m^5).

The two measures are linked through the winding: for a core filled to ``K_u`` with
N turns carrying current density J, ``Kg = Ap * Ae / MLT`` and the copper resistance
is ``R = rho * N * MLT * J / I``.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from optimag.arrays import FloatArray
from optimag.constants import COPPER_RESISTIVITY_20C

__all__ = [
    "area_product",
    "area_product_required",
    "geometry_coefficient",
    "geometry_coefficient_required",
]


def area_product_required(
    inductance_H: npt.ArrayLike,
    peak_current_A: npt.ArrayLike,
    rms_current_A: npt.ArrayLike,
    b_max_T: npt.ArrayLike,
    current_density_A_per_m2: npt.ArrayLike,
    window_utilisation: npt.ArrayLike,
) -> FloatArray:
    """Smallest core area product that stores the energy at a given current density.

    Parameters
    ----------
    inductance_H : array_like
        Inductance [H].
    peak_current_A : array_like
        Peak winding current (sets the peak flux) [A].
    rms_current_A : array_like
        RMS winding current (sets the copper section) [A].
    b_max_T : array_like
        Allowed peak flux density, > 0 [T].
    current_density_A_per_m2 : array_like
        Allowed RMS current density in the copper, > 0 [A/m^2].
    window_utilisation : array_like
        Window utilisation factor K_u (copper area / window area), in (0, 1] [1].

    Returns
    -------
    ndarray
        Required area product A_p = W_a A_c [m^4].

    Notes
    -----
    With :math:`N = L I_{pk} / (B_m A_c)` and copper section
    :math:`I_{rms} / J = K_u W_a / N`:

    .. math:: A_p = W_a A_c = \\frac{L I_{pk} I_{rms}}{B_m J K_u}
              \\;\\left(= \\frac{2 W}{B_m J K_u}, \\; W = \\tfrac12 L I_{pk}^2,
              \\text{ when } I_{rms} = I_{pk}\\right)

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011, ch. "Inductor design fundamentals" (area product).
       DOI: 10.1201/b10865 (from memory).
    """
    return (
        np.asarray(inductance_H, dtype=float)
        * np.asarray(peak_current_A)
        * np.asarray(rms_current_A)
        / (
            np.asarray(b_max_T)
            * np.asarray(current_density_A_per_m2)
            * np.asarray(window_utilisation)
        )
    )


def area_product(ae_m2: npt.ArrayLike, window_area_m2: npt.ArrayLike) -> FloatArray:
    """Area product of a core.

    Parameters
    ----------
    ae_m2 : array_like
        Core cross-sectional area A_c [m^2].
    window_area_m2 : array_like
        Winding window area W_a [m^2].

    Returns
    -------
    ndarray
        A_p [m^4].

    Notes
    -----
    .. math:: A_p = W_a A_c

    References
    ----------
    .. [1] C. W. T. McLyman, *Transformer and Inductor Design Handbook*, 4th ed.,
       CRC Press, 2011. DOI: 10.1201/b10865 (from memory).
    """
    return np.asarray(ae_m2, dtype=float) * np.asarray(window_area_m2)


def geometry_coefficient_required(
    inductance_H: npt.ArrayLike,
    peak_current_A: npt.ArrayLike,
    winding_resistance_ohm: npt.ArrayLike,
    b_max_T: npt.ArrayLike,
    window_utilisation: npt.ArrayLike,
    resistivity_ohm_m: npt.ArrayLike = COPPER_RESISTIVITY_20C,
) -> FloatArray:
    """Smallest core geometry coefficient for a given winding resistance.

    Parameters
    ----------
    inductance_H : array_like
        Inductance [H].
    peak_current_A : array_like
        Peak winding current I_max [A].
    winding_resistance_ohm : array_like
        Allowed winding resistance, > 0 [Ohm].
    b_max_T : array_like
        Allowed peak flux density, > 0 [T].
    window_utilisation : array_like
        Window utilisation factor K_u, in (0, 1] [1].
    resistivity_ohm_m : array_like, optional
        Conductor resistivity; default annealed copper at 20 degC [Ohm m].

    Returns
    -------
    ndarray
        Required K_g [m^5].

    Notes
    -----
    .. math:: K_g = \\frac{A_c^2 W_A}{MLT} \\ge
              \\frac{\\rho L^2 I_{max}^2}{B_{max}^2 R K_u}

    References
    ----------
    .. [1] R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*,
       3rd ed., Springer, 2020, ch. "Inductor design" (core geometrical constant
       K_g). DOI: 10.1007/978-3-030-43881-4 (from memory).
    """
    inductance = np.asarray(inductance_H, dtype=float)
    current = np.asarray(peak_current_A, dtype=float)
    b_max = np.asarray(b_max_T, dtype=float)
    return (
        np.asarray(resistivity_ohm_m)
        * (inductance * current) ** 2
        / (b_max * b_max * np.asarray(winding_resistance_ohm) * np.asarray(window_utilisation))
    )


def geometry_coefficient(
    ae_m2: npt.ArrayLike, window_area_m2: npt.ArrayLike, mlt_m: npt.ArrayLike
) -> FloatArray:
    """Geometry coefficient K_g of a core.

    Parameters
    ----------
    ae_m2 : array_like
        Core cross-sectional area A_c [m^2].
    window_area_m2 : array_like
        Winding window area W_A [m^2].
    mlt_m : array_like
        Mean length per turn of the winding, > 0 [m].

    Returns
    -------
    ndarray
        K_g [m^5].

    Notes
    -----
    .. math:: K_g = \\frac{A_c^2 W_A}{MLT}

    References
    ----------
    .. [1] R. W. Erickson, D. Maksimović, *Fundamentals of Power Electronics*,
       3rd ed., Springer, 2020, ch. "Inductor design". DOI: 10.1007/978-3-030-43881-4
       (from memory).
    """
    ae = np.asarray(ae_m2, dtype=float)
    return ae * ae * np.asarray(window_area_m2) / np.asarray(mlt_m)
