"""Catalogue schema: the columns of cores.csv, materials.csv and wires.csv, their units,
plausible ranges, which family or kind each applies to, and the row cross-checks each
table runs (see ``catalogs/README.md`` for the meaning of every column).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Literal

from optimag import ranges as R
from optimag.catalog.cross_checks import (
    RELAXATION_COLUMNS,
    RowValues,
    check_core_bobbin,
    check_core_gapped_leg,
    check_core_minimum_area,
    check_core_volume,
    check_core_window,
    check_material_frequency_range,
    check_material_optional_groups,
    check_material_saturation,
    check_material_temperature_factor,
    check_wire_conductor,
)
from optimag.codes import Family, MaterialKind, WireKind

ColumnKind = Literal["text", "choice", "float", "int"]

@dataclass(frozen=True)
class Column:
    """One column of a catalogue table.

    Parameters
    ----------
    name : column name as written in the CSV header, unit suffix included
    kind : "text" (free text), "choice" (the row's family/kind), "float" or "int"
    description : meaning and unit, for error messages and documentation
    lower, upper : bounds of the allowed range (None = unbounded)
    lower_inclusive, upper_inclusive : whether the bound itself is allowed
    required_for : families/kinds whose rows must fill this cell (None = all)
    allowed_for : families/kinds whose rows may fill this cell (None = all)
    optional : the column may be left out of the header (its cells then read as empty)
    """

    name: str
    kind: ColumnKind
    description: str
    lower: float | None = None
    upper: float | None = None
    lower_inclusive: bool = False
    upper_inclusive: bool = False
    required_for: frozenset[str] | None = None
    allowed_for: frozenset[str] | None = None
    optional: bool = False

    def is_required(self, selector_value: str | None) -> bool:
        if self.required_for is None:
            return True
        return selector_value is not None and selector_value in self.required_for

    def is_allowed(self, selector_value: str | None) -> bool:
        if self.allowed_for is None or selector_value is None:
            return True
        return selector_value in self.allowed_for

    def range_text(self) -> str:
        parts = []
        if self.lower is not None:
            parts.append(f"{self.lower:g} {'<=' if self.lower_inclusive else '<'}")
        parts.append(self.name)
        if self.upper is not None:
            parts.append(f"{'<=' if self.upper_inclusive else '<'} {self.upper:g}")
        return " ".join(parts)

    def in_range(self, value: float) -> bool:
        if self.lower is not None and (
            value < self.lower or (value == self.lower and not self.lower_inclusive)
        ):
            return False
        return not (
            self.upper is not None
            and (value > self.upper or (value == self.upper and not self.upper_inclusive))
        )


RowCheck = Callable[[RowValues], list[tuple[str, str]]]


@dataclass(frozen=True)
class Table:
    """Schema of one catalogue table.

    Parameters
    ----------
    file_name : name of the CSV file inside the catalogue folder
    noun : what one row is ("core", "material", "wire"), used in messages
    selector : the column that decides which other columns apply ("family" or "kind")
    choices : allowed values of the selector column
    columns : every column, in the canonical order
    row_checks : physical-consistency checks across the columns of one row
    """

    file_name: str
    noun: str
    selector: str
    choices: tuple[str, ...]
    columns: tuple[Column, ...]
    row_checks: tuple[RowCheck, ...]

    @property
    def column_names(self) -> tuple[str, ...]:
        return tuple(column.name for column in self.columns)


def _ranged(
    name: str,
    description: str,
    bounds: tuple[float, float],
    required_for: frozenset[str] | None = None,
    allowed_for: frozenset[str] | None = None,
    kind: ColumnKind = "float",
) -> Column:
    """A column whose values must lie within its plausible range (`optimag.ranges`,
    bounds inclusive)."""
    return Column(
        name, kind, description, lower=float(bounds[0]), upper=float(bounds[1]),
        lower_inclusive=True, upper_inclusive=True, required_for=required_for,
        allowed_for=allowed_for,
    )


def _optional_loss_columns() -> tuple[Column, ...]:
    never = frozenset()
    words = {
        "relax_k": "i²GSE relaxation coefficient k_r, energy in J/m³ with dB/dt in T/s "
                   "[J/m³]",
        "relax_alpha": "i²GSE relaxation exponent of |dB/dt| [1]",
        "relax_beta": "i²GSE relaxation exponent of the flux swing [1]",
        "relax_tau_us": "i²GSE relaxation time constant [µs]",
        "relax_q": "i²GSE weight q_r of the slope ratio [1]",
    }
    # Plausible upper bounds, far beyond any published fit (common practice, no source).
    upper = {"relax_k": 1e12, "relax_alpha": 5.0, "relax_beta": 5.0, "relax_tau_us": 1e4,
             "relax_q": 100.0}
    columns = [
        Column(name, "float", words[name], lower=0.0, lower_inclusive=name == "relax_q",
               upper=upper[name], upper_inclusive=True, required_for=never, optional=True)
        for name in RELAXATION_COLUMNS
    ]
    for j in (1, 2, 3):
        columns.append(Column(f"bias_H{j}_A_m", "float",
                              f"DC field of premagnetisation table point {j} [A/m]",
                              lower=0.0, upper=1e5, upper_inclusive=True, required_for=never,
                              optional=True))
        columns.append(Column(f"bias_factor{j}", "float",
                              f"core-loss multiplier at bias_H{j}_A_m (1 at zero field) [1]",
                              lower=0.0, upper=100.0, upper_inclusive=True,
                              required_for=never, optional=True))
    return tuple(columns)


# The words of the model's codes (`optimag.codes`), in code order.
_CORE_FAMILIES = tuple(Family.by_text())
_MATERIAL_KINDS = tuple(MaterialKind.by_text())
_WIRE_KINDS = tuple(WireKind.by_text())
_POWDER = frozenset({"powder"})
_ROUND = frozenset({"round"})
_LITZ = frozenset({"litz"})
_FOIL = frozenset({"foil"})

CORES = Table(
    file_name="cores.csv",
    noun="core",
    selector="family",
    choices=_CORE_FAMILIES,
    columns=(
        Column("id", "text", "unique name of the core set"),
        Column("family", "choice", "shape family: E, pot or toroid"),
        _ranged("Ae_mm2", "effective cross-section of one set [mm²]", R.CORE_AREA_MM2),
        _ranged("le_mm", "effective magnetic path length [mm]", R.CORE_LENGTH_MM),
        _ranged("Ve_mm3", "effective volume of one set [mm³]", R.CORE_VOLUME_MM3),
        _ranged("Amin_mm2", "smallest cross-section along the path [mm²]", R.CORE_AREA_MM2),
        _ranged("window_area_mm2", "winding window area [mm²]", R.CORE_AREA_MM2),
        _ranged("window_breadth_mm", "winding length along the leg [mm]", R.CORE_LENGTH_MM),
        _ranged(
            "window_width_mm",
            "radial depth available for the winding build [mm]",
            R.CORE_LENGTH_MM),
        _ranged(
            "leg_width_mm",
            "centre-leg width / post diameter / ring thickness [mm]",
            R.CORE_LENGTH_MM),
        _ranged(
            "leg_depth_mm",
            "centre-leg depth / post diameter / ring height [mm]",
            R.CORE_LENGTH_MM),
        _ranged(
            "outer_leg_width_mm",
            "width of one outer leg (E) / radial thickness of the skirt (pot) [mm]",
            R.CORE_LENGTH_MM,
            required_for=frozenset({"E", "pot"}),
            allowed_for=frozenset({"E", "pot"}),
        ),
        _ranged(
            "outer_leg_area_mm2",
            "face area of all outer legs (E) / of the skirt (pot) at the gap [mm²]",
            R.CORE_AREA_MM2,
            required_for=frozenset({"E", "pot"}),
            allowed_for=frozenset({"E", "pot"}),
        ),
        _ranged("bobbin_wall_mm", "bobbin wall thickness, 0 for a toroid [mm]", R.BOBBIN_WALL_MM),
        _ranged("length_mm", "outer length of one set on the board [mm]", R.CORE_LENGTH_MM),
        _ranged(
            "width_mm",
            "outer width of one set on the board, stacking direction [mm]",
            R.CORE_LENGTH_MM),
        _ranged("height_mm", "outer height of one set on the board [mm]", R.CORE_LENGTH_MM),
        _ranged("surface_mm2", "outer surface of the bare set [mm²]", R.CORE_SURFACE_MM2),
        _ranged("mass_g", "mass of one set at 4800 kg/m³ [g]", R.CORE_MASS_G),
        _ranged("price", "price of one set [currency units]", R.MONEY),
        _ranged(
            "max_stack", "largest number of sets stacked side by side [1]", R.MAX_STACK,
            kind="int",
        ),
    ),
    row_checks=(
        check_core_volume,
        check_core_minimum_area,
        check_core_gapped_leg,
        check_core_window,
        check_core_bobbin,
    ),
)

MATERIALS = Table(
    file_name="materials.csv",
    noun="material",
    selector="kind",
    choices=_MATERIAL_KINDS,
    columns=(
        Column("id", "text", "unique name of the material"),
        Column("kind", "choice", "ferrite or powder"),
        _ranged("mu_i", "initial relative permeability [1]", R.PERMEABILITY),
        _ranged("bsat_25C_T", "saturation flux density at 25 °C [T]", R.SATURATION_T),
        _ranged("bsat_100C_T", "saturation flux density at 100 °C [T]", R.SATURATION_T),
        _ranged("steinmetz_k", "Steinmetz coefficient, f in Hz, B in T [W/m³]", R.STEINMETZ_K),
        Column(
            "steinmetz_alpha", "float", "Steinmetz frequency exponent [1]",
            lower=R.STEINMETZ_ALPHA[0], upper=R.STEINMETZ_ALPHA[1],
        ),
        Column(
            "steinmetz_beta", "float", "Steinmetz flux-density exponent [1]",
            lower=R.STEINMETZ_BETA[0], upper=R.STEINMETZ_BETA[1],
        ),
        _ranged("f_min_kHz", "lowest frequency of the Steinmetz fit [kHz]", R.FIT_FREQUENCY_KHZ),
        _ranged("f_max_kHz", "highest frequency of the Steinmetz fit [kHz]", R.FIT_FREQUENCY_KHZ),
        Column(
            "b_max_T",
            "float",
            "highest peak flux density of the Steinmetz fit [T]",
            lower=R.FIT_FLUX_T[0],
            upper=R.FIT_FLUX_T[1],
            upper_inclusive=True,
        ),
        _ranged("ct0", "temperature factor constant term [1]", R.CT0),
        _ranged("ct1_per_C", "temperature factor linear coefficient [1/°C]", R.CT1_PER_C),
        _ranged(
            "ct2_per_C2", "temperature factor quadratic coefficient [1/°C²]", R.CT2_PER_C2
        ),
        _ranged(
            "rolloff_a",
            "roll-off fit constant a (powder only) [1]",
            R.ROLLOFF_A,
            required_for=_POWDER,
            allowed_for=_POWDER,
        ),
        _ranged(
            "rolloff_b",
            "roll-off fit coefficient b, H in A/m (powder only) [(A/m)^-c]",
            R.ROLLOFF_B,
            required_for=_POWDER,
            allowed_for=_POWDER,
        ),
        _ranged(
            "rolloff_c",
            "roll-off fit exponent c (powder only) [1]",
            R.ROLLOFF_C,
            required_for=_POWDER,
            allowed_for=_POWDER,
        ),
        *_optional_loss_columns(),
        _ranged("density_kg_m3", "material density [kg/m³]", R.DENSITY_KG_M3),
        _ranged("price_factor", "multiplier on the core-set price [1]", R.PRICE_FACTOR),
    ),
    row_checks=(
        check_material_saturation,
        check_material_frequency_range,
        check_material_temperature_factor,
        check_material_optional_groups,
    ),
)

WIRES = Table(
    file_name="wires.csv",
    noun="wire",
    selector="kind",
    choices=_WIRE_KINDS,
    columns=(
        Column("id", "text", "unique name of the wire"),
        Column("kind", "choice", "round, litz or foil"),
        _ranged(
            "bare_diameter_mm",
            "copper diameter of a round wire [mm]",
            R.WIRE_DIAMETER_MM,
            required_for=_ROUND,
            allowed_for=_ROUND,
        ),
        _ranged(
            "outer_diameter_mm",
            "insulated diameter (round) or bundle diameter (litz) [mm]",
            R.WIRE_DIAMETER_MM,
            required_for=_ROUND | _LITZ,
            allowed_for=_ROUND | _LITZ,
        ),
        _ranged(
            "strands",
            "number of strands: 1 for round, >= 2 for litz [1]",
            R.STRANDS,
            required_for=_ROUND | _LITZ,
            kind="int",
        ),
        _ranged(
            "strand_diameter_mm",
            "bare diameter of one litz strand [mm]",
            R.WIRE_DIAMETER_MM,
            required_for=_LITZ,
            allowed_for=_LITZ,
        ),
        _ranged(
            "foil_thickness_mm",
            "copper thickness of a foil [mm]",
            R.FOIL_THICKNESS_MM,
            required_for=_FOIL,
            allowed_for=_FOIL,
        ),
        _ranged(
            "foil_width_mm",
            "copper width of a foil [mm]",
            R.FOIL_WIDTH_MM,
            required_for=_FOIL,
            allowed_for=_FOIL,
        ),
        _ranged(
            "insulation_mm",
            "interlayer insulation of a foil winding [mm]",
            R.INSULATION_MM,
            required_for=_FOIL,
            allowed_for=_FOIL,
        ),
        _ranged("price_per_kg", "price of the wire [currency units/kg]", R.MONEY),
    ),
    row_checks=(check_wire_conductor,),
)

#: The three tables of a catalogue, in the order their bytes enter the content hash.
TABLES: tuple[Table, ...] = (CORES, MATERIALS, WIRES)


def range_table_markdown() -> str:
    """The plausible range of every numeric catalogue column, as the Markdown table that
    ``catalogs/README.md`` holds (a test keeps the two equal)."""
    lines = ["| file | column | plausible range |", "|---|---|---|"]
    for table in TABLES:
        for column in table.columns:
            if column.kind in ("float", "int"):
                shown = column.range_text().replace("<=", "≤")
                if column.kind == "int":
                    shown += " (whole number)"
                lines.append(f"| `{table.file_name}` | `{column.name}` | {shown} |")
    return "\n".join(lines) + "\n"


