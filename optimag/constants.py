"""Physical constants used by the physics modules (SI units).

Sources are named beside each value; values recalled from memory say so.
"""

import math

#: Permeability of free space [H/m]; the classical defined value 4*pi*1e-7, which
#: the CODATA 2018 value matches to 1e-9 relative.
MU0 = 4e-7 * math.pi

#: Resistivity of annealed copper at 20 degC [Ohm m]: 1/58 Ohm mm^2/m,
#: International Annealed Copper Standard, IEC 60028 (number from memory).
COPPER_RESISTIVITY_20C = 1.0 / 58.0e6

#: Temperature coefficient of copper resistivity at 20 degC [1/K], IEC 60028 (from memory).
COPPER_TEMPCO_20C = 0.00393

#: Density of copper [kg/m^3] (handbook value, from memory).
COPPER_DENSITY = 8890.0

#: Stefan-Boltzmann constant [W/(m^2 K^4)], CODATA 2018.
STEFAN_BOLTZMANN = 5.670374419e-8

#: Offset between degC and K.
ZERO_CELSIUS_K = 273.15
