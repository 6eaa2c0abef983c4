"""Design records and the one schema of every figure they carry.

A record is one design in trade units, built from the model's own outputs (`model.evaluate`
and `model.design_details`), with the inputs each figure was computed from so that a reader
can re-derive it by hand. The search builds records (``search/``), the writers and the
report read them (``report/``); both import this module, which sits above ``model`` only.

Every figure a record, an export column, a report axis or a build-sheet line shows is
declared once in `FIGURES`: its name, unit, words, definition, the significant digits the
trade quotes it to, and its *scope* — whether it is a property of the design, a value at
one operating point, the highest over all points, or the time-share weighted mean. Other
modules add figures with `register`; the exports and the report take names, units,
headers and rounding from here.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from optimag import model
from optimag.codes import WireKind

SCOPES = ("design", "point", "worst", "weighted", "limit", "text")


@dataclass(frozen=True)
class Figure:
    """One named figure.

    ``unit`` is printed as given ("" for a pure number, ``"currency"`` for the run's
    currency); ``digits`` is the number of significant digits the trade quotes (None:
    exact — integers, text, flags); ``decimals`` replaces it with a fixed number of
    decimals (money). ``scope``: ``design`` (a property of the part), ``point`` (at the
    record's ``operating_point`` or, inside ``per_operating_point``, at that point),
    ``worst`` (the highest over all operating points), ``weighted`` (time-share weighted
    over all points), ``limit`` (from the study), ``text`` (names and flags).
    """

    name: str
    unit: str
    label: str
    definition: str
    digits: int | None = 3
    decimals: int | None = None
    scope: str = "design"

    def __post_init__(self) -> None:
        if self.scope not in SCOPES:
            raise ValueError(f"{self.name}: scope must be one of {SCOPES}")


#: name -> Figure, in declaration order.
FIGURES: dict[str, Figure] = {}


def register(*figures: Figure) -> None:
    """Add figures to the schema. A name already declared with another definition is an
    error: one name, one meaning."""
    for fig in figures:
        known = FIGURES.get(fig.name)
        if known is not None and known != fig:
            raise ValueError(f"figure {fig.name!r} is already declared differently")
        FIGURES[fig.name] = fig


def _f(name, unit, label, definition, digits=3, scope="design", decimals=None) -> Figure:
    return Figure(name, unit, label, definition, digits, decimals, scope)


register(
    # --- identity and construction -------------------------------------------------
    _f("design_id", "", "Design", "Identifier of the design within its run", None, "text"),
    _f("rank", "", "Rank", "Position in the short-list (1 = the knee)", None, "text"),
    _f("knee", "", "Knee", "True for the front's knee design", None, "text"),
    _f("feasible", "", "Feasible", "True when the design meets every limit", None, "text"),
    _f("core", "", "Core", "Catalogue core id", None, "text"),
    _f("family", "", "Core family", "E, pot or toroid", None, "text"),
    _f("material", "", "Material", "Catalogue material id", None, "text"),
    _f("material_kind", "", "Material kind", "ferrite or powder", None, "text"),
    _f("stack", "", "Cores stacked", "Core sets stacked side by side", None),
    _f("turns", "", "Turns", "Turns of the winding", None),
    _f("wire", "", "Wire", "Catalogue wire id", None, "text"),
    _f("wire_kind", "", "Wire kind", "round, litz or foil", None, "text"),
    _f("parallel", "", "Parallel conductors", "Conductors wound in hand per turn", None),
    _f("layers", "", "Layers", "Winding layers", None),
    _f("operating_point", "", "Operating point",
       "The operating point the record's point figures are taken at: the hottest one",
       None, "text"),
    _f("dcm", "", "DCM",
       "True when this design's current is discontinuous at the point (decided by its own "
       "inductance); over a line cycle, somewhere along it", None, "text"),
    # --- magnetic -----------------------------------------------------------------
    _f("gap_mm", "mm", "Air gap",
       "Gap length per gapped leg: the centre leg's gap of a ground core, the spacer "
       "thickness of a spacer-gapped core; 0 for powder (distributed gap) and ungapped "
       "rings"),
    _f("gap_centre_leg_mm", "mm", "Gap, centre leg",
       "Air gap in the centre leg (post) of an E or pot core: ground, each half's centre "
       "leg loses half of it; with a spacer, the spacer thickness"),
    _f("gap_outer_leg_mm", "mm", "Gap, outer legs",
       "Air gap in each outer leg (skirt): the spacer thickness when a spacer gaps every "
       "leg, 0 when the centre leg is ground and the outer legs touch"),
    _f("gap_method", "", "How the gap is made",
       "Words: ground centre leg, spacer under every leg, distributed (powder) or none",
       None, "text"),
    _f("inductance_uH", "µH", "Inductance", "Inductance at zero current"),
    _f("inductance_at_peak_uH", "µH", "Inductance at peak",
       "Inductance at the highest peak current of all operating points", 3, "worst"),
    _f("al_value_nH", "nH", "AL",
       "Inductance factor of the gapped core set: inductance at zero current per turn "
       "squared [nH/turn²]"),
    _f("peak_current_A", "A", "Peak current",
       "Peak inductor current (at this design's own ripple); in the record the highest of "
       "all operating points", 3, "worst"),
    _f("peak_flux_T", "T", "Peak flux density",
       "Peak flux density on the narrowest core section (Amin): the figure the saturation "
       "limit is checked against; in the record the highest of all operating points",
       3, "worst"),
    _f("flux_swing_T", "T", "Flux swing",
       "Peak-to-peak flux density on Ae, the swing core loss is computed from; over a "
       "line cycle the largest switching period's", 3, "point"),
    _f("flux_limit_T", "T", "Flux limit",
       "Allowed peak flux density: the flux margin times Bsat at the temperature limit",
       3, "limit"),
    _f("bsat_at_limit_temperature_T", "T", "Bsat at the temperature limit",
       "Saturation flux density of the material at the study's temperature limit", 3,
       "limit"),
    # --- losses and temperature ---------------------------------------------------
    _f("core_loss_W", "W", "Core loss",
       "Core loss (iGSE) at the operating point; over a line cycle the mean of its "
       "switching periods'", 3, "point"),
    _f("winding_dc_loss_W", "W", "Winding DC loss",
       "DC winding loss at the operating point: DC resistance at temperature times the "
       "DC current squared (over a line cycle: the line-frequency current's RMS squared)",
       3, "point"),
    _f("winding_ac_loss_W", "W", "Winding AC loss",
       "AC winding loss (ripple harmonics, Dowell/litz) at the operating point; over a line "
       "cycle the mean of its switching periods'", 3, "point"),
    _f("winding_gap_loss_W", "W", "Gap loss in the winding",
       "Extra eddy loss of the conductors in the gap's fringing field beyond the 1-D field "
       "of the AC loss (gap as a line MMF source with its yoke images, Roshen 2007; "
       "exact round-conductor transverse-field loss) at the operating point; 0 without a "
       "cut gap and for foil (not estimated)", 3, "point"),
    _f("total_loss_W", "W", "Total loss",
       "Core + winding DC + winding AC + gap loss in the winding at the operating point "
       "(the sum of its parts)", 3, "point"),
    _f("weighted_loss_W", "W", "Weighted loss",
       "Time-share weighted mean over all operating points of each point's total loss: "
       "the loss objective", 3, "weighted"),
    _f("temperature_C", "°C", "Surface temperature",
       "Settled surface temperature of the part at the operating point, where the loss "
       "equals the heat shed to the surroundings", 3, "point"),
    _f("hotspot_temperature_C", "°C", "Hot-spot temperature",
       "Hottest point inside the part at the operating point: the surface temperature plus "
       "the conduction rise from the winding's innermost layer (or the core's centre, "
       "whichever is higher) to the surface; the temperature limit applies to it (the "
       "record's operating point is the one where it is highest)", 3, "point"),
    _f("temperature_band_C", "°C", "Hot-spot band",
       "Lowest and highest worst hot-spot temperature over the thermal models that apply "
       "to this cooling and are inside their published ranges (the study's model always "
       "counts)", 3, "worst"),
    _f("temperature_band_low_C", "°C", "Hot-spot band, low end",
       "Lower end of temperature_band_C", 3, "worst"),
    _f("temperature_band_high_C", "°C", "Hot-spot band, high end",
       "Upper end of temperature_band_C", 3, "worst"),
    _f("thermal_model", "", "Thermal model",
       "The study's thermal model (face by face unless chosen otherwise)", None, "text"),
    _f("cooling_mode", "", "Cooling",
       "How the part sheds heat: free_air, on_board, enclosure, forced_air or potted",
       None, "text"),
    _f("thermal_in_range", "", "Thermal model in range",
       "True when every correlation and conduction shape the thermal model used stayed "
       "inside its published range at every operating point", None, "text"),
    _f("temperature_band_models", "", "Models in the band",
       "The thermal models the band spans", None, "text"),
    _f("time_share", "", "Time share", "Share of operating time at the point", 3, "point"),
    _f("name", "", "Operating point", "Name of the operating point", None, "text"),
    # --- winding ------------------------------------------------------------------
    _f("fill_factor", "", "Fill factor", "Copper area over window area"),
    _f("dc_resistance_20C_mOhm", "mΩ", "DC resistance at 20 °C",
       "DC resistance of the winding (all parallel conductors) at 20 °C, leads excluded"),
    _f("dc_resistance_mOhm", "mΩ", "DC resistance at temperature",
       "DC resistance of the winding at the operating point's temperature, leads excluded",
       3, "point"),
    _f("winding_length_m", "m", "Winding length",
       "Length of one conductor in the winding: turns x mean turn length"),
    _f("lead_allowance_mm", "mm", "Lead allowance",
       "Wire added at each end of each conductor for its leads", None),
    _f("wire_length_m", "m", "Wire to cut",
       "Wire to cut for the winding: each parallel conductor's winding length plus the lead "
       "allowance at both ends, all conductors together"),
    _f("copper_mass_g", "g", "Copper mass",
       "Mass of the copper in the winding, insulation and leads excluded"),
    # --- size, mass, cost ---------------------------------------------------------
    _f("box_length_mm", "mm", "Box length", "Length of the wound part's bounding box"),
    _f("box_width_mm", "mm", "Box width", "Width of the wound part's bounding box"),
    _f("box_height_mm", "mm", "Box height",
       "Height of the wound part's bounding box (seated height)"),
    _f("volume_cm3", "cm³", "Boxed volume", "Volume of the wound part's bounding box"),
    _f("mass_g", "g", "Mass", "Core plus copper mass"),
    _f("cost", "currency", "Cost",
       "Core sets x stack x material price factor + copper + labour per turn", None,
       "design", 2),
    _f("energy_cost", "currency", "Energy cost",
       "Weighted loss x [cost] operating_hours x energy_price_per_kWh / 1000: what the "
       "loss costs over the product's life (zero when the study sets no price or hours)",
       None, "weighted", 2),
    _f("lifetime_cost", "currency", "Lifetime cost",
       "Part cost + energy cost over the product's life", None, "weighted", 2),
    # --- sizing by area product and geometry coefficient --------------------------
    _f("area_product_cm4", "cm⁴", "Area product Ap",
       "Window area times the stacked core's Ae (McLyman)"),
    _f("area_product_required_cm4", "cm⁴", "Ap required",
       "Area product the energy-storage method asks: L Ipk Irms / (Bmax J Ku), with the "
       "required L, the highest converter peak and RMS current, the material's flux limit, "
       f"J = {model.HAND_CURRENT_DENSITY_A_PER_M2 / 1e6:g} A/mm² and Ku = the fill limit"),
    _f("geometry_coefficient_cm5", "cm⁵", "Geometry coefficient Kg",
       "Ae² Wa / MLT of the stacked core with this winding's mean turn length (Erickson)"),
    _f("geometry_coefficient_required_cm5", "cm⁵", "Kg required",
       "rho L² Ipk² / (Bmax² R Ku) with the required L, the highest converter peak "
       "current, the material's flux limit, this winding's DC resistance at 20 °C and "
       "Ku = the fill limit"),
    # --- inputs (what the point's figures were computed from) ---------------------
    _f("Ae_mm2", "mm²", "Ae", "Effective core area of the stacked core"),
    _f("Amin_mm2", "mm²", "Amin", "Narrowest core section of the stacked core"),
    _f("le_mm", "mm", "le", "Effective magnetic path length"),
    _f("Ve_mm3", "mm³", "Ve", "Effective core volume of the stacked core"),
    _f("mu_r", "", "µr", "Initial relative permeability of the material"),
    _f("window_inductance_uH", "µH", "Window's own inductance",
       "N² times the winding window's own permeance, in parallel with the core and gap "
       "path (its flux does not pass the core); part of the inductance at zero current"),
    _f("window_breadth_mm", "mm", "Window breadth", "Winding breadth along the leg"),
    _f("mlt_mm", "mm", "MLT", "Mean length of one turn"),
    _f("copper_area_mm2", "mm²", "Copper area", "Copper section of one turn, all parallel"),
    _f("frequency_kHz", "kHz", "Switching frequency", "Switching frequency", 3, "point"),
    _f("dc_current_A", "A", "DC current",
       "Average inductor current at the point; over a line cycle the RMS of the "
       "switching-period average (the line-frequency current)", 3, "point"),
    _f("ripple_A", "A", "Ripple",
       "Peak-to-peak ripple at this design's inductance; over a line cycle its largest",
       3, "point"),
    _f("duty", "", "Rise fraction",
       "Share of the period this design's current rises (D1); over a line cycle at the "
       "line peak", 3, "point"),
    _f("fall_fraction", "", "Fall fraction",
       "Share of the period this design's current falls (D2; 1 - D1 in CCM)", 3, "point"),
    _f("idle_fraction", "", "Idle fraction",
       "Share of the period this design's current stays at zero (1 - D1 - D2; 0 in CCM)",
       3, "point"),
    _f("input_V", "V", "Input voltage",
       "Converter input voltage at the point (pfc-boost: line RMS; inverter-filter: DC "
       "link; 0 for a current waveform file)", 3, "point"),
    _f("output_V", "V", "Output voltage",
       "Converter output voltage at the point (inverter-filter: grid RMS)", 3, "point"),
    _f("load_A", "A", "Load current",
       "Converter load current at the point (all phases of a multiphase buck; "
       "inverter-filter: grid RMS current)", 3, "point"),
    _f("output_ripple_A", "A", "Output ripple",
       "Multiphase buck: peak-to-peak of the summed phase currents (this design's phase "
       "current, the phases shifted by one period / phases)", 3, "point"),
    _f("ripple_cancellation", "", "Ripple cancellation",
       "Multiphase buck: output ripple over one phase's ripple for interleaved CCM phases, "
       "K(D, N) in closed form", 3, "point"),
    _f("phases", "", "Phases", "Interleaved phases (multiphase buck; 1 otherwise)", None),
    _f("steinmetz_k", "", "Steinmetz k", "Steinmetz k [W/m³ with f in Hz, B in T]", 4),
    _f("steinmetz_alpha", "", "Steinmetz α", "Steinmetz frequency exponent", 4),
    _f("steinmetz_beta", "", "Steinmetz β", "Steinmetz flux exponent", 4),
    _f("core_loss_temperature_factor", "", "Core-loss temperature factor",
       "ct0 - ct1 T + ct2 T² at the point's temperature", 3, "point"),
    # --- limits (margins) ---------------------------------------------------------
    _f("temperature_limit_C", "°C", "Temperature limit", "Study's temperature limit", 3,
       "limit"),
    _f("fill_limit", "", "Fill limit", "Study's fill-factor limit", 3, "limit"),
    _f("inductance_at_peak_fraction", "", "Inductance kept at peak",
       "Inductance at peak over the required inductance", 3, "worst"),
    _f("inductance_at_peak_limit", "", "Lowest inductance kept at peak",
       "Study's lowest allowed inductance at peak, as a share of the required", 3, "limit"),
    # --- production scatter (optimag.tolerance) ------------------------------------
    _f("yield_fraction", "", "Yield",
       "Share of Monte Carlo builds (the study's [tolerance] spreads) that meet every "
       "limit; empty for designs not analysed", 3, "design"),
    _f("yield_driver", "", "Yield driver",
       "The spread that alone loses the most yield (none: no spread alone loses any)",
       None, "text"),
    _f("model_flags", "", "Model flags",
       "Models this design's figures rest on outside their declared range, separated by "
       "';' (empty: none): " + "; ".join(f"{k} = {v}" for k, v in model.MODEL_FLAGS.items()),
       None, "text"),
    _f("worst_constraint", "", "Worst constraint",
       "The constraint an infeasible design violates most (normalised)", None, "text"),
    _f("worst_violation", "", "Worst violation",
       "That constraint's normalised violation (> 0 is violated)", 3, "text"),
)

#: Columns of pareto.csv (full precision, for machines).
PARETO_COLUMNS = [
    "design_id", "core", "family", "material", "material_kind", "stack", "turns", "gap_mm",
    "wire", "wire_kind", "parallel", "volume_cm3", "weighted_loss_W", "cost", "mass_g",
    "energy_cost", "lifetime_cost", "operating_point", "total_loss_W", "core_loss_W",
    "winding_dc_loss_W", "winding_ac_loss_W", "winding_gap_loss_W", "temperature_C",
    "hotspot_temperature_C", "peak_flux_T", "fill_factor", "inductance_uH",
    "inductance_at_peak_uH", "knee", "yield_fraction", "model_flags",
]

#: Text columns of pareto.csv (read back as strings).
PARETO_TEXT_COLUMNS = (
    "design_id", "core", "family", "material", "material_kind", "wire", "wire_kind",
    "operating_point", "model_flags",
)

#: Flat figures of a record, in the order the short-list tables show them.
SHORTLIST_COLUMNS = [
    "rank", "design_id", "knee", "core", "family", "material", "material_kind", "stack",
    "turns", "gap_mm", "gap_method", "gap_centre_leg_mm", "gap_outer_leg_mm", "wire",
    "wire_kind", "parallel", "layers", "fill_factor", "inductance_uH",
    "inductance_at_peak_uH", "al_value_nH", "peak_current_A", "peak_flux_T",
    "flux_limit_T", "weighted_loss_W", "operating_point", "total_loss_W", "core_loss_W",
    "winding_dc_loss_W", "winding_ac_loss_W", "winding_gap_loss_W", "temperature_C",
    "hotspot_temperature_C", "temperature_band_low_C", "temperature_band_high_C",
    "thermal_model", "cooling_mode", "thermal_in_range", "flux_swing_T", "dcm",
    "dc_resistance_20C_mOhm", "dc_resistance_mOhm", "winding_length_m",
    "lead_allowance_mm", "wire_length_m", "copper_mass_g", "box_length_mm", "box_width_mm",
    "box_height_mm", "volume_cm3", "mass_g", "cost", "energy_cost", "lifetime_cost",
    "area_product_cm4",
    "area_product_required_cm4", "geometry_coefficient_cm5",
    "geometry_coefficient_required_cm5", "yield_fraction", "yield_driver", "model_flags",
]

#: Fields every short-list record carries (shortlist.json).
RECORD_FIELDS = (
    *SHORTLIST_COLUMNS, "temperature_band_C", "temperature_band_models", "feasible",
    "per_operating_point", "inputs", "margins",
    "inductance_curve", "winding", "parts", "model_notes", "tolerance",
)

#: Fields a record carries since the line-cycle and multiphase topologies (a report of an
#: older run folder has none of them): ``phases`` and ``line_cycle`` (per line-cycle
#: point, its instants for the report's line-cycle figure; empty otherwise).
LATER_RECORD_FIELDS = ("phases", "line_cycle")

#: Figures of each per_operating_point entry (besides ``inputs``).
POINT_FIELDS = (
    "name", "time_share", "core_loss_W", "winding_dc_loss_W", "winding_ac_loss_W",
    "winding_gap_loss_W", "total_loss_W", "peak_flux_T", "flux_swing_T", "peak_current_A",
    "temperature_C", "hotspot_temperature_C", "dcm", "output_ripple_A",
    "ripple_cancellation",
)

#: Fields of an ``inputs`` object (a record's is the one of its operating point).
INPUT_FIELDS = (
    "input_V", "output_V", "load_A", "Ae_mm2", "Amin_mm2", "le_mm", "Ve_mm3", "mu_r",
    "window_breadth_mm", "mlt_mm", "copper_area_mm2", "dc_resistance_mOhm",
    "frequency_kHz", "dc_current_A", "ripple_A", "duty", "fall_fraction", "idle_fraction",
    "steinmetz_k", "steinmetz_alpha",
    "steinmetz_beta", "core_loss_temperature_factor", "window_inductance_uH",
)

#: Fields of a record's ``margins`` object (the limits its figures are checked against).
MARGIN_FIELDS = (
    "flux_limit_T", "bsat_at_limit_temperature_T", "temperature_limit_C", "fill_limit",
    "inductance_at_peak_fraction", "inductance_at_peak_limit",
)

#: Fields of a record's ``winding`` object (the layout the drawing is made from).
WINDING_FIELDS = (
    "kind", "conductor_outer_mm", "foil_thickness_mm", "conductors_per_layer", "layers",
    "turns", "parallel", "window_breadth_mm", "window_width_mm", "bobbin_wall_mm",
    "build_mm",
)

#: Points of the inductance-versus-current curve, from zero to 1.5 x peak current.
CURVE_POINTS = 41

_FAMILY_NAMES = {v: k for k, v in model.FAMILY_CODES.items()}
_MATERIAL_NAMES = {v: k for k, v in model.MATERIAL_KIND_CODES.items()}
_WIRE_NAMES = {v: k for k, v in model.WIRE_KIND_CODES.items()}


def figure(name: str) -> Figure:
    """The declared figure ``name`` (KeyError when undeclared)."""
    return FIGURES[name]


def unit_text(name: str, currency: str = "") -> str:
    """The unit of figure ``name`` as printed (the run's currency for money)."""
    unit = FIGURES[name].unit
    return currency if unit == "currency" else unit


def header(name: str, currency: str = "") -> str:
    """Words and unit for a column, axis or table line, e.g. ``Weighted loss [W]``."""
    fig = FIGURES[name]
    unit = unit_text(name, currency)
    return f"{fig.label} [{unit}]" if unit else fig.label


def trade_value(name: str, value):
    """``value`` rounded as the trade quotes figure ``name`` (significant digits or fixed
    decimals); integers, text, flags and undeclared names pass unchanged."""
    fig = FIGURES.get(name)
    if fig is None or isinstance(value, bool | str) or value is None:
        return value
    if isinstance(value, int | np.integer):
        return int(value)
    number = float(value)
    if not math.isfinite(number) or number == 0:
        return number
    if fig.decimals is not None:
        return round(number, fig.decimals)
    if fig.digits is None:
        return number
    return float(f"{number:.{fig.digits}g}")


def display(name: str, value) -> str:
    """``value`` as text at the trade's precision (no exponent for everyday sizes)."""
    rounded = trade_value(name, value)
    if rounded is None:
        return "—"
    if isinstance(rounded, bool | str | int):
        return str(rounded)
    fig = FIGURES.get(name)
    if fig is not None and fig.decimals is not None:
        return f"{rounded:.{fig.decimals}f}"
    digits = fig.digits if fig is not None and fig.digits else None
    if digits is None or rounded == 0:
        return f"{rounded:g}"
    if abs(rounded) >= 1e6 or abs(rounded) < 1e-4:
        return f"{rounded:.{digits}g}"
    # Keep the significant zeros (11.0, not 11); none past the decimal point of 1230.
    decimals = max(digits - 1 - math.floor(math.log10(abs(rounded))), 0)
    return f"{rounded:.{decimals}f}"


def number_format(name: str, value=None) -> str:
    """A spreadsheet number format showing figure ``name`` (and, given, this ``value``)
    at the trade's precision: fixed decimals for money, whole numbers for counts, and for
    a significant-digit figure as many decimals as ``value`` needs (0.648, 11.0, 1230)."""
    fig = FIGURES.get(name)
    if fig is None or fig.scope == "text":
        return "General"
    if fig.decimals is not None:
        return "0." + "0" * fig.decimals if fig.decimals else "0"
    if fig.digits is None:
        return "0"
    rounded = trade_value(name, value)
    if not isinstance(rounded, float) or rounded == 0 or not math.isfinite(rounded):
        return "General"
    magnitude = math.floor(math.log10(abs(rounded)))
    if magnitude >= 6 or magnitude < -4:
        return "0." + "0" * (fig.digits - 1) + "E+00"
    decimals = max(fig.digits - 1 - magnitude, 0)
    return "0." + "0" * decimals if decimals else "0"


def trade_row(row: dict) -> dict:
    """A flat row with every declared figure rounded as the trade quotes it."""
    return {key: trade_value(key, value) for key, value in row.items()}


def flat(record: dict) -> dict:
    """The record's flat figures in `SHORTLIST_COLUMNS` order (extra flat fields after)."""
    out = {c: record[c] for c in SHORTLIST_COLUMNS if c in record}
    for key, value in record.items():
        if key not in out and not isinstance(value, dict | list):
            out[key] = value
    return out


def records_frame(design_records: list[dict]) -> pd.DataFrame:
    """Flat table of records (nested parts dropped), full precision."""
    return pd.DataFrame([flat(r) for r in design_records])


def pareto_frame(design_records: list[dict]) -> pd.DataFrame:
    """pareto.csv's table: `PARETO_COLUMNS` of every record, full precision."""
    frame = records_frame(design_records)
    if frame.empty:
        return pd.DataFrame(columns=PARETO_COLUMNS)
    return frame[PARETO_COLUMNS]


def gap_method(family: str, material_kind: str, gap_mm: float, spacer: bool = False) -> str:
    """How the gap of a design is made, in words (common practice, no source)."""
    if material_kind == "powder":
        return "none cut: distributed in the powder material"
    if gap_mm <= 0:
        return "none: halves butt on every leg" if family != "toroid" else "none: closed ring"
    if spacer:
        legs = "post and skirt" if family == "pot" else "centre and outer legs"
        return (
            f"spacer: {gap_mm:.3g} mm thick non-magnetic spacer between the halves, gapping "
            f"the {legs} by {gap_mm:.3g} mm each"
        )
    return (
        f"ground centre leg: {gap_mm:.3g} mm in the centre leg "
        f"({gap_mm / 2:.3g} mm off each half's centre leg), outer legs butt"
    )


def parts_list(record: dict) -> list[dict]:
    """What to order for one design: core pieces, bobbin, clips and wire (common practice,
    no source: an E or pot set is two halves held by one clip pair per set or one clamp,
    wound on one bobbin spanning the stack; a ring is wound directly)."""
    family, stack = record["family"], int(record["stack"])
    core, material = record["core"], record["material"]
    parts = []
    if family == "toroid":
        parts.append({"item": "core ring", "quantity": stack,
                      "description": f"{core} in {material}, stacked {stack}"})
    else:
        parts.append({"item": "core half", "quantity": 2 * stack,
                      "description": f"{core} in {material}, {stack} set(s) of two halves; "
                                     f"gap: {record['gap_method']}"})
        parts.append({"item": "bobbin", "quantity": 1,
                      "description": f"for {core}, {stack} set(s) stacked"})
        clip = "clip pair" if family == "E" else "clamp"
        parts.append({"item": clip, "quantity": stack, "description": f"for {core}"})
    parts.append({
        "item": "wire", "quantity": trade_value("wire_length_m", record["wire_length_m"]),
        "description": f"{record['wire']} ({record['wire_kind']}) in metres, "
                       f"{int(record['parallel'])} conductor(s) in hand, "
                       f"{int(record['turns'])} turns, "
                       f"{record['lead_allowance_mm']:g} mm lead allowance per end",
    })
    return parts


def _finite_or_none(value: float) -> float | None:
    number = float(value)
    return number if math.isfinite(number) else None


def design_records(
    space: model.DesignSpace,
    candidates: model.Candidates,
    metrics: dict[str, np.ndarray],
    design_ids: list[str],
) -> list[dict]:
    """Records (full precision, SI converted to trade units) for evaluated candidates.

    Every figure comes from ``metrics`` (`model.evaluate`), `model.design_details` and
    `model.inductance_curve`; nothing is recomputed here.
    """
    details = model.design_details(space, candidates, metrics)
    details["temperature_band"] = model.temperature_band(space, candidates)
    curves = _curves(space, candidates, metrics)
    return [
        _record(space, candidates, metrics, details, curves, i, design_id)
        for i, design_id in enumerate(design_ids)
    ]


def _curves(space, candidates, metrics) -> tuple[np.ndarray, np.ndarray]:
    peak = metrics["peak_current_A"].max(axis=1)
    current = np.linspace(0.0, 1.5, CURVE_POINTS)[None, :] * peak[:, None]
    inductance = model.inductance_curve(space, candidates, metrics, current)
    return current, inductance


def _hottest(metrics: dict, i: int) -> int:
    temps, runaway = metrics["hotspot_temperature_C"][i], metrics["runaway"][i]
    return int(np.argmax(np.where(runaway, np.inf, temps)))


def _gap_inputs(space, candidates, metrics, details, i: int) -> dict:
    """What was gapped, so the fringing can be recomputed by hand: gap kind, the gapped
    leg (post diameter or leg width and depth, stack included), window height and width,
    yoke thickness, outer-leg faces, the gap per leg and the gap model."""
    c = space.cores
    core, stack = candidates.core[i], float(candidates.stack[i])
    family = _FAMILY_NAMES[int(c.family[core])]
    if family == "toroid" or metrics["gap_m"][i] <= 0:
        return {"gap_kind": "none"}
    spacer = bool(details["gap_spacer"][i])
    leg: dict = (
        {"post_diameter_mm": float(c.leg_width_m[core] * 1e3)}
        if family == "pot"
        else {"leg_width_mm": float(c.leg_width_m[core] * 1e3),
              "leg_depth_mm": float(c.leg_depth_m[core] * stack * 1e3)}
    )
    outer_area = c.outer_leg_area_m2[core] * (1.0 if family == "pot" else stack)
    return {
        "gap_kind": "spacer" if spacer else "centre",
        **leg,
        "window_height_mm": float(c.breadth_m[core] * 1e3),
        "window_width_mm": float(c.window_width_m[core] * 1e3),
        "yoke_thickness_mm": float(max(c.height_m[core] - c.breadth_m[core], 0.0) * 500.0),
        "outer_leg_width_mm": float(c.outer_leg_width_m[core] * 1e3),
        "outer_leg_area_mm2": float(outer_area * 1e6),
        "gap_centre_leg_mm": float(details["gap_centre_leg_m"][i] * 1e3),
        "gap_outer_leg_mm": float(details["gap_outer_leg_m"][i] * 1e3),
        "gap_model": space.requirements.fringing,
    }


def _inputs(space, candidates, metrics, details, i: int, k: int) -> dict:
    c, m, op = space.cores, space.materials, space.operating
    core, mat = candidates.core[i], candidates.material[i]
    stack = float(candidates.stack[i])
    return {
        "input_V": float(op.input_V[k]),
        "output_V": float(op.output_V[k]),
        "load_A": float(op.load_A[k]),
        "Ae_mm2": float(c.ae_m2[core] * stack * 1e6),
        "Amin_mm2": float(c.amin_m2[core] * stack * 1e6),
        "le_mm": float(c.le_m[core] * 1e3),
        "Ve_mm3": float(c.ve_m3[core] * stack * 1e9),
        "mu_r": float(m.mu_i[mat]),
        "window_breadth_mm": float(c.breadth_m[core] * 1e3),
        **_gap_inputs(space, candidates, metrics, details, i),
        "mlt_mm": float(metrics["mlt_m"][i] * 1e3),
        "copper_area_mm2": float(metrics["copper_area_m2"][i] * 1e6),
        "dc_resistance_mOhm": float(details["dc_resistance_ohm"][i, k] * 1e3),
        "frequency_kHz": float(op.frequency_Hz / 1e3),
        "dc_current_A": float(metrics["dc_current_A"][i, k]),
        "ripple_A": float(metrics["ripple_A"][i, k]),
        "duty": float(metrics["rise_fraction"][i, k]),
        "fall_fraction": float(metrics["fall_fraction"][i, k]),
        "idle_fraction": float(
            max(0.0, 1.0 - metrics["rise_fraction"][i, k] - metrics["fall_fraction"][i, k])
        ),
        "steinmetz_k": float(m.k[mat]),
        "steinmetz_alpha": float(m.alpha[mat]),
        "steinmetz_beta": float(m.beta[mat]),
        "core_loss_temperature_factor": float(metrics["core_loss_temperature_factor"][i, k]),
        "window_inductance_uH": float(metrics["window_inductance_H"][i] * 1e6),
    }


def _record(space, candidates, metrics, details, curves, i: int, design_id: str) -> dict:
    c, m, w = space.cores, space.materials, space.wires
    op, req = space.operating, space.requirements
    core, mat, wire = candidates.core[i], candidates.material[i], candidates.wire[i]
    hot = _hottest(metrics, i)
    per_point = []
    for k, name in enumerate(op.names):
        per_point.append({
            "name": name,
            "time_share": float(op.share[k]),
            "core_loss_W": float(metrics["core_loss_W"][i, k]),
            "winding_dc_loss_W": float(metrics["winding_dc_loss_W"][i, k]),
            "winding_ac_loss_W": float(metrics["winding_ac_loss_W"][i, k]),
            "winding_gap_loss_W": float(metrics["winding_gap_loss_W"][i, k]),
            "total_loss_W": float(metrics["point_loss_W"][i, k]),
            "peak_flux_T": float(metrics["peak_flux_T"][i, k]),
            "flux_swing_T": float(metrics["flux_swing_T"][i, k]),
            "peak_current_A": float(metrics["peak_current_A"][i, k]),
            "temperature_C": (
                None if metrics["runaway"][i, k] else float(metrics["temperature_C"][i, k])
            ),
            "hotspot_temperature_C": (
                None if metrics["runaway"][i, k]
                else float(metrics["hotspot_temperature_C"][i, k])
            ),
            "dcm": bool(metrics["dcm"][i, k]),
            **_interleaving(op, metrics, i, k),
            "inputs": _inputs(space, candidates, metrics, details, i, k),
        })
    at = per_point[hot]
    family = _FAMILY_NAMES[int(c.family[core])]
    material_kind = _MATERIAL_NAMES[int(m.kind[mat])]
    gap_mm = float(metrics["gap_m"][i] * 1e3)
    spread = details["temperature_band"]
    band = (
        [None, None] if not np.isfinite(spread["low_C"][i])
        else [float(spread["low_C"][i]), float(spread["high_C"][i])]
    )
    record = {
        "design_id": design_id,
        "core": str(c.ids[core]),
        "family": family,
        "material": str(m.ids[mat]),
        "material_kind": material_kind,
        "stack": int(candidates.stack[i]),
        "turns": int(candidates.turns[i]),
        "gap_mm": gap_mm,
        "gap_method": gap_method(family, material_kind, gap_mm,
                                 bool(details["gap_spacer"][i])),
        "gap_centre_leg_mm": float(details["gap_centre_leg_m"][i] * 1e3),
        "gap_outer_leg_mm": float(details["gap_outer_leg_m"][i] * 1e3),
        "wire": str(w.ids[wire]),
        "wire_kind": _WIRE_NAMES[int(w.kind[wire])],
        "parallel": int(candidates.parallel[i]),
        "layers": int(metrics["layers"][i]),
        "fill_factor": float(metrics["fill_factor"][i]),
        "inductance_uH": float(metrics["inductance_H"][i] * 1e6),
        "inductance_at_peak_uH": float(metrics["inductance_at_peak_H"][i] * 1e6),
        "al_value_nH": float(details["al_value_H"][i] * 1e9),
        "peak_current_A": float(metrics["peak_current_A"][i].max()),
        "peak_flux_T": float(metrics["worst_flux_T"][i]),
        "flux_limit_T": float(metrics["flux_limit_T"][i]),
        "weighted_loss_W": float(metrics["weighted_loss_W"][i]),
        "operating_point": op.names[hot],
        "total_loss_W": at["total_loss_W"],
        "core_loss_W": at["core_loss_W"],
        "winding_dc_loss_W": at["winding_dc_loss_W"],
        "winding_ac_loss_W": at["winding_ac_loss_W"],
        "winding_gap_loss_W": at["winding_gap_loss_W"],
        "temperature_C": float(metrics["temperature_C"][i, hot]),
        "hotspot_temperature_C": float(metrics["hotspot_temperature_C"][i, hot]),
        "temperature_band_C": band,
        "temperature_band_low_C": band[0],
        "temperature_band_high_C": band[1],
        "temperature_band_models": ", ".join(details["temperature_band"]["models"][i]),
        "thermal_model": req.thermal_model,
        "cooling_mode": req.cooling.mode,
        "thermal_in_range": not bool(metrics["outside_thermal_model"][i]),
        "flux_swing_T": at["flux_swing_T"],
        "dcm": at["dcm"],
        "dc_resistance_20C_mOhm": float(metrics["dc_resistance_20C_ohm"][i] * 1e3),
        "dc_resistance_mOhm": at["inputs"]["dc_resistance_mOhm"],
        "winding_length_m": float(details["winding_length_m"][i]),
        "lead_allowance_mm": model.LEAD_ALLOWANCE_M * 1e3,
        "wire_length_m": float(details["wire_length_m"][i]),
        "copper_mass_g": float(metrics["copper_mass_kg"][i] * 1e3),
        "box_length_mm": float(metrics["box_length_m"][i] * 1e3),
        "box_width_mm": float(metrics["box_width_m"][i] * 1e3),
        "box_height_mm": float(metrics["box_height_m"][i] * 1e3),
        "volume_cm3": float(metrics["volume_cm3"][i]),
        "mass_g": float(metrics["mass_g"][i]),
        "cost": float(metrics["cost"][i]),
        "energy_cost": float(metrics["energy_cost"][i]),
        "lifetime_cost": float(metrics["lifetime_cost"][i]),
        "area_product_cm4": float(details["area_product_m4"][i] * 1e8),
        # A flux limit driven towards zero makes the required Ap and Kg infinite: the
        # record says "none would do" as null, which strict JSON can carry.
        "area_product_required_cm4": _finite_or_none(
            details["area_product_required_m4"][i] * 1e8
        ),
        "geometry_coefficient_cm5": float(details["geometry_coefficient_m5"][i] * 1e10),
        "geometry_coefficient_required_cm5": _finite_or_none(
            details["geometry_coefficient_required_m5"][i] * 1e10
        ),
        "feasible": bool(metrics["feasible"][i]),
        "per_operating_point": per_point,
        "inputs": dict(at["inputs"]),
        "margins": {
            "flux_limit_T": float(metrics["flux_limit_T"][i]),
            "bsat_at_limit_temperature_T": float(metrics["bsat_at_limit_T"][i]),
            "temperature_limit_C": float(req.max_temperature_C),
            "fill_limit": float(req.max_fill_factor),
            "inductance_at_peak_fraction": float(
                metrics["inductance_at_peak_H"][i] / req.inductance_H
            ),
            "inductance_at_peak_limit": float(req.min_fraction_at_peak),
        },
        "inductance_curve": {
            "current_A": [float(v) for v in curves[0][i]],
            "inductance_uH": [float(v) * 1e6 for v in curves[1][i]],
        },
        "winding": {
            "kind": _WIRE_NAMES[int(w.kind[wire])],
            "conductor_outer_mm": float(w.outer_m[wire] * 1e3),
            "foil_thickness_mm": (
                float(w.foil_thickness_m[wire] * 1e3) if w.kind[wire] == WireKind.FOIL else None
            ),
            "conductors_per_layer": int(metrics["conductors_per_layer"][i]),
            "layers": int(metrics["layers"][i]),
            "turns": int(candidates.turns[i]),
            "parallel": int(candidates.parallel[i]),
            "window_breadth_mm": float(c.breadth_m[core] * 1e3),
            "window_width_mm": float(c.window_width_m[core] * 1e3),
            "bobbin_wall_mm": float(c.bobbin_wall_m[core] * 1e3),
            "build_mm": float(metrics["build_m"][i] * 1e3),
        },
    }
    record["phases"] = int(op.phases)
    record["line_cycle"] = line_cycle_part(space, candidates, metrics, i)
    record["parts"] = parts_list(record)
    flags = model.model_flag_names(metrics, i)
    record["model_flags"] = ";".join(flags)
    record["model_notes"] = _model_notes(
        space, candidates, metrics, i, flags, spread["runaway_models"][i]
    )
    if not record["feasible"]:
        viol = model.violations_matrix({k: v[i : i + 1] for k, v in metrics.items()})[0]
        worst = int(np.argmax(viol))
        record["worst_constraint"] = model.CONSTRAINTS[worst]
        record["worst_violation"] = float(viol[worst])
    return record


def _interleaving(op, metrics, i: int, k: int) -> dict:
    """Output ripple and its cancellation factor of a multiphase buck's point (empty for
    other topologies)."""
    if op.phases <= 1:
        return {}
    from optimag.study.linecycle import interleaved_ripple_factor
    from optimag.study.operating import interleaved_output_ripple

    duty = float(op.fall_V[k] / (op.rise_V[k] + op.fall_V[k]))
    ripple = float(metrics["ripple_A"][i, k])
    dcm = bool(metrics["dcm"][i, k])
    rise, fall = float(metrics["rise_fraction"][i, k]), float(metrics["fall_fraction"][i, k])
    return {
        "output_ripple_A": interleaved_output_ripple(
            rise, ripple, op.phases, fall=fall if dcm else None),
        "ripple_cancellation": float(interleaved_ripple_factor(duty, op.phases)),
    }


def line_cycle_part(space, candidates, metrics, i: int) -> list[dict]:
    """Per line-cycle point: the instants' angle, time, line voltage, average, peak and
    valley current, and core and winding loss at the point's settled temperature, for the
    report's line-cycle figure (empty for other topologies)."""
    op = space.operating
    if not op.line_cycle:
        return []
    profile = model.line_cycle_profile(space, candidates, metrics, i)
    out = []
    for k, name in enumerate(op.names):
        rows = op.point == k
        line_hz = float(op.line_frequency_Hz[k])
        angle = op.angle_rad[rows]
        out.append({
            "name": name,
            "angle_deg": [float(v) for v in np.degrees(angle)],
            "time_ms": [float(v) for v in angle / (2 * np.pi * line_hz) * 1e3],
            "line_V": [float(v) for v in op.line_V[rows]],
            "average_A": [float(v) for v in op.dc_A[rows]],
            "peak_A": [float(v) for v in profile["peak_A"][rows]],
            "valley_A": [float(v) for v in profile["valley_A"][rows]],
            "dcm": [bool(v) for v in profile["dcm"][rows]],
            "core_loss_W": [float(v) for v in profile["core_loss_W"][rows]],
            "winding_loss_W": [float(v) for v in profile["winding_loss_W"][rows]],
        })
    return out


def _model_notes(space, candidates, metrics, i, flags: list[str], runaway_models=()
                 ) -> list[str]:
    """One sentence per raised model flag (`model.MODEL_FLAGS`), with the figures behind it
    where they help, and the alternative thermal models that find no stable temperature."""
    m, op = space.materials, space.operating
    mat = candidates.material[i]
    notes = []
    for name in flags:
        if name == "material_fit":
            amplitude = float(np.max(metrics["flux_swing_T"][i]) / 2)
            notes.append(
                f"core loss: the Steinmetz fit of {m.ids[mat]} holds for "
                f"{m.f_min_Hz[mat] / 1e3:g}-{m.f_max_Hz[mat] / 1e3:g} kHz and up to "
                f"{m.b_max_T[mat]:g} T; this design runs at {op.frequency_Hz / 1e3:g} kHz and "
                f"{amplitude:.3f} T flux amplitude"
            )
        elif name == "thermal_model":
            thermal_name = space.requirements.thermal_model
            notes.append(
                f"thermal: the {thermal_name} model "
                f"({model.THERMAL_MODEL_WORDS.get(thermal_name, thermal_name)}) ran outside "
                "a correlation's or conduction shape's published range at some operating "
                "point; the nearest correlation was used"
            )
        else:
            notes.append(model.MODEL_FLAGS[name])
    for name in runaway_models:
        notes.append(f"thermal: the {name} model finds no stable temperature for this design")
    idle = 1.0 - metrics["rise_fraction"][i] - metrics["fall_fraction"][i]
    if np.any(idle > 1e-9) and not m.has_relaxation[mat]:
        notes.append(
            "core loss: relaxation during the zero-current interval (i²GSE) is not included: "
            f"{m.ids[mat]} has no relaxation parameters"
        )
    h_dc = float(np.max(metrics["dc_field_A_m"][i]))
    if h_dc > 0 and not m.has_bias_table[mat]:
        notes.append(
            f"core loss: this design runs at up to {h_dc:.3g} A/m DC field, outside what the "
            f"loss fit of {m.ids[mat]} covers (fitted without bias; no premagnetisation "
            "table), and ferrite loss rises with DC bias"
        )
    if op.line_cycle:
        span = "a quarter" if op.topology == "pfc-boost" else "half"
        notes.append(
            f"line cycle: losses averaged over {op.n_instants // op.n_points} instants of "
            f"{span} line cycle, each a switching period at the line's value then "
            "(quasi-static); the line-frequency current's skin effect is neglected"
            + ("; the filter inductor's own line-frequency voltage drop is neglected"
               if op.topology == "inverter-filter" else "")
        )
    if op.from_file.any():
        notes.append("current waveform file: core loss by iGSE over the whole period's "
                     "peak-to-peak flux (minor loops are not separated)")
    wire = candidates.wire[i]
    gap = metrics["gap_m"][i]
    if gap > 0 and space.wires.kind[wire] == WireKind.FOIL:
        notes.append("gap loss in the winding: not estimated for foil (the field normal to "
                     "the foil near the gap is not modelled); expect more loss than stated")
    nearest = space.cores.bobbin_wall_m[candidates.core[i]] + 0.5 * space.wires.outer_m[wire]
    if gap > 0 and space.wires.kind[wire] != WireKind.FOIL and gap > nearest:
        notes.append("gap loss in the winding: the first layer sits closer to the gap than "
                     "the gap is long; the line-source field over-states it there")
    return notes


def undeclared(names: Iterable[str]) -> list[str]:
    """Names not declared in the schema (a test keeps every exported column declared)."""
    return [n for n in names if n not in FIGURES]


#: Bins of the per-design histograms of Monte Carlo figures in a record's ``tolerance``.
YIELD_HISTOGRAM_BINS = 30


def tolerance_part(result, row: int) -> dict:
    """A record's ``tolerance`` object from a `optimag.tolerance.YieldResult` row: yield per
    constraint, percentiles, the yield each spread alone loses (largest first), and
    histograms of the sampled figures against their limits."""
    from optimag import tolerance

    table = result.table.iloc[row]
    by_constraint = {
        name: float(table[f"yield_{name}"]) for name in model.CONSTRAINTS
        if f"yield_{name}" in table
    }
    percentiles = {
        figure: {f"p{q:g}": float(table[f"{figure}_p{q:g}"]) for q in tolerance.PERCENTILES}
        for figure in tolerance.FIGURES
    }
    losses = {
        p: float(table[f"yield_loss_{p}"]) for p in tolerance.PARAMETERS
        if f"yield_loss_{p}" in table
    }
    histograms = {}
    for figure, values in result.samples.items():
        sample = np.asarray(values[row], dtype=float)
        sample = sample[np.isfinite(sample)]
        if sample.size == 0:
            continue
        counts, edges = np.histogram(sample, bins=YIELD_HISTOGRAM_BINS)
        histograms[figure] = {"edges": edges.tolist(), "counts": counts.tolist(),
                              "limit": result.limits.get(figure)}
    return {
        "samples": result.n_samples,
        "seed": result.seed,
        "yield_fraction": float(table["yield_fraction"]),
        "yield_by_constraint": by_constraint,
        "percentiles": percentiles,
        "yield_loss_by_spread": dict(sorted(losses.items(), key=lambda kv: -kv[1])),
        "histograms": histograms,
    }


def add_yields(design_records: list[dict], result) -> None:
    """Write a `optimag.tolerance.YieldResult` (row i for record i) into the records."""
    for row, record in enumerate(design_records):
        part = tolerance_part(result, row)
        record["yield_fraction"] = part["yield_fraction"]
        record["yield_driver"] = str(result.table.iloc[row].get("yield_driver", "none"))
        record["tolerance"] = part
