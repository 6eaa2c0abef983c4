"""Plausible ranges of every number a user gives optimag, in one place.

A value outside its range is a typing error (a unit slip, a digit too many), never a
design: the bounds are those of a power inductor in a switch-mode converter, wide enough
for any real part and narrow enough that no figure of the model overflows and no design
space becomes astronomically large. All bounds are inclusive (common practice, no source).

The study file (`optimag.study.file`), the custom-core table (`optimag.study.custom_core`),
the catalogue tables (`optimag.catalog.schema`) and the command line read their bounds
from here; ``studies/README.md`` and ``catalogs/README.md`` list them (tested).
This module imports nothing, so the command line can use it without loading numpy.
"""

from __future__ import annotations

# --- study file ------------------------------------------------------------------------
FREQUENCY_KHZ = (1.0, 10_000.0)  # 1 kHz to 10 MHz
VOLTAGE_V = (0.01, 10_000.0)
CURRENT_A = (0.001, 10_000.0)
INDUCTANCE_UH = (0.001, 1e6)  # 1 nH to 1 H
RIPPLE_FRACTION = (0.01, 2.0)  # 2 is the CCM/DCM boundary
# Peak flux allowed as a fraction of Bsat: below 5 % no core is used as an inductor core.
FLUX_MARGIN = (0.05, 1.0)
TEMPERATURE_C = (-100.0, 300.0)
HEIGHT_MM = (0.1, 1000.0)
FOOTPRINT_MM2 = (0.01, 1e6)
LOSS_W = (1e-6, 1e6)
VOLUME_CM3 = (0.001, 1e6)
MASS_G = (0.001, 1e6)
MONEY = (0.0, 1e6)  # any price or cost, in currency units
ENERGY_PRICE_PER_KWH = (0.0, 1e3)  # currency units per kWh
OPERATING_HOURS = (0.0, 1e6)  # hours in service over the product's life (114 years)
TURNS = (1, 10_000)
STACK = (1, 100)
PARALLEL = (1, 100)
GAP_MM = (0.001, 100.0)
GAP_GRID_ENTRIES = 1000
TRIALS = (1, 100_000_000)
BATCH = (1, 100_000)
SEED = (0, 2**32 - 1)  # what numpy's and optuna's generators accept
TITLE_CHARACTERS = 200
BOARD_COPPER_MM2 = (0.0, 1e6)
ENCLOSURE_VOLUME_CM3 = (1.0, 1e7)
POTTING_THICKNESS_MM = (0.01, 100.0)
POWER_W = (0.001, 1e7)
LINE_FREQUENCY_HZ = (1.0, 2000.0)
LINE_STEPS = (4, 512)
PHASES_MAX = 64

# --- custom core -----------------------------------------------------------------------
CUSTOM_DIMENSION_MM = (0.1, 1000.0)
#: Drawing grid; with the dimension bound it keeps a dimension at most 10^6 grid points.
CUSTOM_STEP_MM = (0.001, 10.0)
BOBBIN_WALL_MM = (0.0, 100.0)

# --- catalogue -------------------------------------------------------------------------
CORE_LENGTH_MM = (0.1, 1000.0)
CORE_AREA_MM2 = (0.01, 1e6)
CORE_VOLUME_MM3 = (0.001, 1e9)
CORE_SURFACE_MM2 = (0.01, 1e7)
CORE_MASS_G = (0.001, 1e6)
CATALOGUE_PRICE = MONEY
MAX_STACK = STACK
PERMEABILITY = (1.0, 100_000.0)
SATURATION_T = (0.05, 3.0)
STEINMETZ_K = (1e-12, 1e9)  # W/m^3 with f in Hz and B in T
STEINMETZ_ALPHA = (0.0, 3.0)  # exclusive bounds
STEINMETZ_BETA = (1.0, 4.0)  # exclusive bounds
FIT_FREQUENCY_KHZ = (0.001, 100_000.0)
FIT_FLUX_T = (0.0, 3.0)  # lower bound exclusive
CT0 = (-100.0, 100.0)
CT1_PER_C = (-10.0, 10.0)
CT2_PER_C2 = (-1.0, 1.0)
ROLLOFF_A = (0.01, 100.0)
ROLLOFF_B = (1e-12, 1e6)
ROLLOFF_C = (0.01, 5.0)
DENSITY_KG_M3 = (100.0, 30_000.0)
PRICE_FACTOR = (0.0, 1000.0)
WIRE_DIAMETER_MM = (0.005, 100.0)
STRANDS = (1, 100_000)
FOIL_THICKNESS_MM = (0.001, 10.0)
FOIL_WIDTH_MM = (0.1, 1000.0)
INSULATION_MM = (0.0, 10.0)
BOBBIN_WALL_CATALOGUE_MM = BOBBIN_WALL_MM
#: Longest id or name (catalogue ids, operating-point names, the study's id filters): fits
#: a spreadsheet cell (32,767 characters) and a table column; longer is a pasted blob, not
#: a name.
ID_CHARACTERS = 80

# --- exhaustive search -----------------------------------------------------------------
#: Candidates above which the exhaustive search asks for --force (about 15 minutes at
#: 10 million candidates per second).
MAX_CANDIDATES = 10_000_000_000
#: Peak memory the exhaustive search plans for [bytes].
MEMORY_BUDGET_BYTES = 1_000_000_000
