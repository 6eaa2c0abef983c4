"""Catalogue tables: schema, loader and validation.

A catalogue is a folder holding three CSV tables, ``cores.csv``, ``materials.csv`` and
``wires.csv``, with the fixed, unit-suffixed column names of :data:`TABLES` (see
``catalogs/README.md`` for the meaning of every column). Sizes are stored in the units their
names state (mm, mm², mm³, g, kHz, T); converting to SI is the model's job.

Validation collects every problem of all three files before giving up, so that a user fixes
a broken catalogue in one pass. Each problem names the file, the CSV line (header = line 1),
the column, and the row's id where one is known.

Choices made here:

* Every column of the schema must be present in the header, even where all its cells are
  empty (a catalogue of round wires still has the foil columns); unknown columns are errors,
  with the closest known name suggested, because a wrong unit suffix (``Ae_cm2``) must not be
  silently ignored.
* A cell that does not apply to the row's family or kind must be empty. In particular a
  ferrite row with roll-off coefficients is rejected rather than silently ignored: it usually
  means the ``kind`` is wrong.
* ``strands`` may be empty for a foil (a foil is one conductor); it is then stored as 1 so the
  column keeps an integer dtype.
* Blank lines are skipped; lines starting with ``#`` are errors (notes belong in a README).
"""

from __future__ import annotations

import csv
import difflib
import hashlib
import io
import math
import os
import re
import stat
from array import array
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, BinaryIO, Literal, TextIO

import numpy as np
import pandas as pd

from optimag import ranges as R
from optimag.errors import InputError, Problem

ColumnKind = Literal["text", "choice", "float", "int"]

# Only plain decimal notation: float() would also accept "nan", "inf", "1_000" and "0x10".
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")
# A C0 control character or DEL in a cell: a binary or damaged file, never table text.
_CONTROL = re.compile(r"[\x00-\x1f\x7f]")
_NON_FINITE_WORDS = frozenset(
    {"nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"}
)

VE_TOLERANCE = 0.10
WINDOW_AREA_TOLERANCE = 0.15
AMIN_MARGIN = 1.001
#: Temperatures [°C] over which the core-loss temperature factor must stay positive.
LOSS_FACTOR_CHECK_RANGE_C = (0.0, 150.0)


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


RowValues = dict[str, Any]
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


def _relative_deviation(value: float, expected: float) -> float:
    # Absurdly large sizes can overflow the product; report them as infinitely far off
    # rather than letting NaN slip through the comparison.
    if expected == 0.0 or not math.isfinite(expected):
        return math.inf
    return abs(value - expected) / abs(expected)


# --- cores -----------------------------------------------------------------------------


def _check_core_volume(row: RowValues) -> list[tuple[str, str]]:
    ae, le, ve = row.get("Ae_mm2"), row.get("le_mm"), row.get("Ve_mm3")
    if ae is None or le is None or ve is None:
        return []
    expected = float(ae) * float(le)
    deviation = _relative_deviation(float(ve), expected)
    if deviation <= VE_TOLERANCE:
        return []
    return [
        (
            "Ve_mm3",
            f"Ve_mm3 = {ve:g} is {100 * deviation:.0f} % away from Ae_mm2·le_mm = "
            f"{expected:g}; expected within {100 * VE_TOLERANCE:.0f} %",
        )
    ]


def _check_core_minimum_area(row: RowValues) -> list[tuple[str, str]]:
    ae, amin = row.get("Ae_mm2"), row.get("Amin_mm2")
    if ae is None or amin is None or float(amin) <= float(ae) * AMIN_MARGIN:
        return []
    return [
        (
            "Amin_mm2",
            f"Amin_mm2 = {amin:g} is larger than Ae_mm2 = {ae:g}; the smallest cross-section "
            "cannot exceed the effective area",
        )
    ]


#: How far Ae may lie from the gapped leg's own face (round post pi/4 d², rectangular leg
#: w·d) before the two contradict each other: the effective area is a weighted mean of the
#: path's sections, of which the gapped leg is one, so in a sensibly proportioned E or pot
#: set it lies near the leg's face (common practice, no source).
AE_TO_LEG_RANGE = (0.75, 1.10)
#: Tolerance for dimensions that must add up (leg, windows and outer legs to the outer
#: length; outer-leg faces to their width times depth): rounding only.
DIMENSION_TOLERANCE = 0.02


def _check_core_gapped_leg(row: RowValues) -> list[tuple[str, str]]:
    """The gapped leg against Ae and Amin, and the outer legs against the outer size."""
    family = row.get("family")
    if family not in ("E", "pot"):
        return []
    values = {name: row.get(name) for name in (
        "Ae_mm2", "Amin_mm2", "leg_width_mm", "leg_depth_mm", "window_width_mm",
        "outer_leg_width_mm", "outer_leg_area_mm2", "length_mm",
    )}  # fmt: skip
    if any(value is None for value in values.values()):
        return []
    v = {name: float(value) for name, value in values.items()}
    found: list[tuple[str, str]] = []
    width, depth = v["leg_width_mm"], v["leg_depth_mm"]
    if family == "pot":
        if _relative_deviation(depth, width) > DIMENSION_TOLERANCE:
            found.append(("leg_depth_mm", f"leg_depth_mm = {depth:g} differs from leg_width_mm "
                          f"= {width:g}; a pot core's post is round: both are its diameter"))
        face, face_text = math.pi / 4.0 * width * width, "the post's π/4·d² = "
    else:
        face, face_text = width * depth, "the centre leg's width·depth = "
    face_text += f"{face:.4g} mm²"
    low, high = AE_TO_LEG_RANGE
    ratio = v["Ae_mm2"] / face
    if not low <= ratio <= high:
        found.append(("Ae_mm2", f"Ae_mm2 = {v['Ae_mm2']:g} is {ratio:.2f}× {face_text}; "
                      f"expected {low:g}-{high:g}× for the gapped leg of this set"))
    if v["Amin_mm2"] > face * AMIN_MARGIN:
        found.append(("Amin_mm2", f"Amin_mm2 = {v['Amin_mm2']:g} is larger than {face_text}; "
                      "the gapped leg is one of the sections, so the smallest cannot exceed it"))
    outer_w, outer_area = v["outer_leg_width_mm"], v["outer_leg_area_mm2"]
    across = width + 2.0 * v["window_width_mm"] + 2.0 * outer_w
    if _relative_deviation(across, v["length_mm"]) > DIMENSION_TOLERANCE:
        found.append(("outer_leg_width_mm", f"leg_width_mm + 2·window_width_mm + "
                      f"2·outer_leg_width_mm = {across:.4g} differs from length_mm = "
                      f"{v['length_mm']:g}; expected within {100 * DIMENSION_TOLERANCE:g} %"))
    if family == "E":
        expected = 2.0 * outer_w * depth
        if _relative_deviation(outer_area, expected) > DIMENSION_TOLERANCE:
            found.append(("outer_leg_area_mm2", f"outer_leg_area_mm2 = {outer_area:g} differs "
                          f"from 2·outer_leg_width_mm·leg_depth_mm = {expected:.4g}"))
    else:
        r_in = width / 2.0 + v["window_width_mm"]
        ring = math.pi * ((r_in + outer_w) ** 2 - r_in**2)
        if not 0.5 * ring <= outer_area <= ring * (1.0 + DIMENSION_TOLERANCE):
            found.append(("outer_leg_area_mm2", f"outer_leg_area_mm2 = {outer_area:g} does not "
                          f"fit the skirt ring of {ring:.4g} mm² (at most the ring, at least "
                          "half of it with the wire slots)"))
    if v["Amin_mm2"] > outer_area * AMIN_MARGIN:
        found.append(("Amin_mm2", f"Amin_mm2 = {v['Amin_mm2']:g} is larger than the outer legs' "
                      f"face outer_leg_area_mm2 = {outer_area:g}"))
    return found


def _check_core_window(row: RowValues) -> list[tuple[str, str]]:
    family = row.get("family")
    area, breadth, width = (
        row.get("window_area_mm2"),
        row.get("window_breadth_mm"),
        row.get("window_width_mm"),
    )
    found: list[tuple[str, str]] = []
    if family == "toroid":
        if area is not None and width is not None:
            expected = math.pi * (2.0 * float(width)) ** 2 / 4.0
            deviation = _relative_deviation(float(area), expected)
            if deviation > WINDOW_AREA_TOLERANCE:
                found.append(
                    (
                        "window_area_mm2",
                        f"window_area_mm2 = {area:g} is {100 * deviation:.0f} % away from the "
                        f"inner-hole area π·(2·window_width_mm)²/4 = {expected:.4g}; expected "
                        f"within {100 * WINDOW_AREA_TOLERANCE:.0f} % (for a toroid "
                        "window_width_mm is ID/2)",
                    )
                )
        if breadth is not None and width is not None:
            expected = math.pi * 2.0 * float(width)
            deviation = _relative_deviation(float(breadth), expected)
            if deviation > WINDOW_AREA_TOLERANCE:
                found.append(
                    (
                        "window_breadth_mm",
                        f"window_breadth_mm = {breadth:g} is {100 * deviation:.0f} % away from "
                        f"the inner circumference π·2·window_width_mm = {expected:.4g}; expected "
                        f"within {100 * WINDOW_AREA_TOLERANCE:.0f} %",
                    )
                )
    elif family in ("E", "pot") and None not in (area, breadth, width):
        expected = float(breadth) * float(width)
        deviation = _relative_deviation(float(area), expected)
        if deviation > WINDOW_AREA_TOLERANCE:
            found.append(
                (
                    "window_area_mm2",
                    f"window_area_mm2 = {area:g} is {100 * deviation:.0f} % away from "
                    f"window_breadth_mm·window_width_mm = {expected:.4g}; expected within "
                    f"{100 * WINDOW_AREA_TOLERANCE:.0f} %",
                )
            )
    return found


def _check_core_bobbin(row: RowValues) -> list[tuple[str, str]]:
    family, wall = row.get("family"), row.get("bobbin_wall_mm")
    if wall is None:
        return []
    wall = float(wall)
    if family == "toroid":
        if wall != 0.0:
            return [
                (
                    "bobbin_wall_mm",
                    f"bobbin_wall_mm = {wall:g} but a toroid is wound without a bobbin; write 0",
                )
            ]
        return []
    breadth, width = row.get("window_breadth_mm"), row.get("window_width_mm")
    if width is not None and wall >= float(width):
        return [
            (
                "bobbin_wall_mm",
                f"bobbin_wall_mm = {wall:g} leaves no room for the winding: it must be smaller "
                f"than window_width_mm = {width:g}",
            )
        ]
    if breadth is not None and 2.0 * wall >= float(breadth):
        return [
            (
                "bobbin_wall_mm",
                f"bobbin_wall_mm = {wall:g} leaves no room for the winding: twice the wall must "
                f"be smaller than window_breadth_mm = {breadth:g}",
            )
        ]
    return []


# --- materials -------------------------------------------------------------------------


def _check_material_saturation(row: RowValues) -> list[tuple[str, str]]:
    hot, cold = row.get("bsat_100C_T"), row.get("bsat_25C_T")
    if hot is None or cold is None or float(hot) <= float(cold):
        return []
    return [
        (
            "bsat_100C_T",
            f"bsat_100C_T = {hot:g} is larger than bsat_25C_T = {cold:g}; saturation flux "
            "density falls with temperature",
        )
    ]


def _check_material_frequency_range(row: RowValues) -> list[tuple[str, str]]:
    low, high = row.get("f_min_kHz"), row.get("f_max_kHz")
    if low is None or high is None or float(low) < float(high):
        return []
    return [
        (
            "f_max_kHz",
            f"f_max_kHz = {high:g} must be greater than f_min_kHz = {low:g}",
        )
    ]


def _check_material_temperature_factor(row: RowValues) -> list[tuple[str, str]]:
    coefficients = [row.get(name) for name in ("ct0", "ct1_per_C", "ct2_per_C2")]
    if any(value is None for value in coefficients):
        return []
    ct0, ct1, ct2 = (float(value) for value in coefficients)
    low, high = LOSS_FACTOR_CHECK_RANGE_C
    candidates = [low, high]
    if ct2 != 0.0:
        vertex = ct1 / (2.0 * ct2)
        if low < vertex < high:
            candidates.append(vertex)
    worst_t = min(candidates, key=lambda t: ct0 - ct1 * t + ct2 * t * t)
    worst = ct0 - ct1 * worst_t + ct2 * worst_t * worst_t
    if not math.isfinite(worst):
        return [("ct0", "core-loss temperature factor overflows; the coefficients are too large")]
    if worst > 0.0:
        return []
    return [
        (
            "ct0",
            f"core-loss temperature factor ct0 − ct1·T + ct2·T² = {worst:.3g} at T = "
            f"{worst_t:g} °C; it must stay positive from {low:g} to {high:g} °C",
        )
    ]


#: Optional materials.csv columns: the i²GSE relaxation parameters (all or none) and a
#: premagnetisation (DC-bias) loss-factor table of up to three points.
RELAXATION_COLUMNS = ("relax_k", "relax_alpha", "relax_beta", "relax_tau_us", "relax_q")
BIAS_TABLE_COLUMNS = tuple(
    name for j in (1, 2, 3) for name in (f"bias_H{j}_A_m", f"bias_factor{j}")
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


def _check_material_optional_groups(row: RowValues) -> list[tuple[str, str]]:
    found: list[tuple[str, str]] = []
    given = [name for name in RELAXATION_COLUMNS if row.get(name) is not None]
    if given and len(given) < len(RELAXATION_COLUMNS):
        absent = [name for name in RELAXATION_COLUMNS if name not in given]
        found.append((absent[0], "the relaxation parameters go together: fill "
                                 f"{', '.join(RELAXATION_COLUMNS)} or none"))
    last_h = 0.0
    ended = False
    for j in (1, 2, 3):
        h, factor = row.get(f"bias_H{j}_A_m"), row.get(f"bias_factor{j}")
        if (h is None) != (factor is None):
            found.append((f"bias_factor{j}" if factor is None else f"bias_H{j}_A_m",
                          f"bias_H{j}_A_m and bias_factor{j} go together"))
        elif h is not None:
            if ended:
                found.append((f"bias_H{j}_A_m", f"table point {j} follows an empty one; "
                                                "fill the points from 1 on"))
            elif float(h) <= last_h:
                found.append((f"bias_H{j}_A_m", f"bias_H{j}_A_m = {h:g} must be above the "
                                                f"previous point's field ({last_h:g})"))
            last_h = float(h)
        else:
            ended = True
    return found


# --- wires -----------------------------------------------------------------------------


def _check_wire_conductor(row: RowValues) -> list[tuple[str, str]]:
    kind = row.get("kind")
    strands = row.get("strands")
    outer = row.get("outer_diameter_mm")
    found: list[tuple[str, str]] = []
    if kind == "round":
        bare = row.get("bare_diameter_mm")
        if bare is not None and outer is not None and float(outer) <= float(bare):
            found.append(
                (
                    "outer_diameter_mm",
                    f"outer_diameter_mm = {outer:g} must be larger than bare_diameter_mm = "
                    f"{bare:g} (it includes the insulation)",
                )
            )
        if strands is not None and strands != 1:
            found.append(
                (
                    "strands",
                    f"strands = {strands} but a round wire has 1 strand; use kind 'litz' for a "
                    "stranded bundle",
                )
            )
    elif kind == "litz":
        if strands is not None and strands < 2:
            found.append(("strands", f"strands = {strands} but a litz wire has at least 2"))
        strand = row.get("strand_diameter_mm")
        if strands is not None and strand is not None and outer is not None:
            copper = float(strands) * math.pi * float(strand) ** 2 / 4.0
            bundle = math.pi * float(outer) ** 2 / 4.0
            if copper >= bundle:
                found.append(
                    (
                        "outer_diameter_mm",
                        f"{strands} strands of {strand:g} mm (copper {copper:.4g} mm²) do not fit "
                        f"in a bundle of outer_diameter_mm = {outer:g} ({bundle:.4g} mm²)",
                    )
                )
    elif kind == "foil" and strands is not None and strands != 1:
        found.append(
            (
                "strands",
                f"strands = {strands} but a foil is one conductor; write 1 or leave it empty",
            )
        )
    return found


_CORE_FAMILIES = ("E", "pot", "toroid")
_MATERIAL_KINDS = ("ferrite", "powder")
_WIRE_KINDS = ("round", "litz", "foil")
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
        _check_core_volume,
        _check_core_minimum_area,
        _check_core_gapped_leg,
        _check_core_window,
        _check_core_bobbin,
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
        _check_material_saturation,
        _check_material_frequency_range,
        _check_material_temperature_factor,
        _check_material_optional_groups,
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
    row_checks=(_check_wire_conductor,),
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


@dataclass(frozen=True, eq=False)
class Catalog:
    """A validated catalogue.

    Parameters
    ----------
    folder : the folder the tables were read from
    cores, materials, wires : one row per catalogue entry, index 0..n-1, columns in the
        order of :data:`TABLES` plus ``line`` (1-based CSV line, header = 1); numeric columns
        are float64 (NaN where not applicable), ``max_stack`` and ``strands`` int64
    content_hash : sha256 hex digest of the three files (see :func:`catalog_content_hash`)
    """

    folder: Path
    cores: pd.DataFrame
    materials: pd.DataFrame
    wires: pd.DataFrame
    content_hash: str


def catalog_content_hash(file_bytes: Sequence[tuple[str, bytes]]) -> str:
    """Hash the tables of a catalogue.

    Each file enters as its name, its length and its bytes, in the fixed order cores,
    materials, wires; the framing keeps two different catalogues whose concatenated bytes
    happen to agree from sharing a hash.
    """
    digest = hashlib.sha256()
    for name, content in file_bytes:
        digest.update(f"{name}\0{len(content)}\0".encode())
        digest.update(content)
    return digest.hexdigest()


#: Problems kept per file; beyond it they are counted, so a huge broken file cannot fill
#: memory with messages.
MAX_PROBLEMS_PER_FILE = 1000


class _Columns:
    """The valid rows of a table, stored column by column in compact arrays (8 bytes per
    number), so a catalogue of millions of rows stays small in memory."""

    def __init__(self, table: Table):
        self.table = table
        self.numbers = {
            c.name: array("q" if c.kind == "int" else "d")
            for c in table.columns
            if c.kind in ("int", "float")
        }
        self.texts: dict[str, list[str]] = {
            c.name: [] for c in table.columns if c.kind in ("text", "choice")
        }
        self.lines = array("q")

    def __len__(self) -> int:
        return len(self.lines)

    def append(self, values: RowValues, line: int) -> None:
        for name, column in self.numbers.items():
            cell = values.get(name)
            if column.typecode == "q":
                # Integer columns may be empty only where a single conductor is implied.
                column.append(1 if cell is None else int(cell))
            else:
                column.append(math.nan if cell is None else float(cell))
        for name, column in self.texts.items():
            column.append(str(values.get(name)))
        self.lines.append(line)

    def frame(self) -> pd.DataFrame:
        """The rows as a DataFrame; the compact arrays are released column by column as
        they are copied, so the peak is the frame plus one column."""
        data: dict[str, object] = {}
        for column in self.table.columns:
            if column.name in self.texts:
                data[column.name] = self.texts[column.name]
            else:
                numbers = self.numbers[column.name]
                dtype = np.int64 if numbers.typecode == "q" else np.float64
                data[column.name] = np.frombuffer(numbers, dtype=dtype).copy()
                self.numbers[column.name] = array(numbers.typecode)
        data["line"] = np.frombuffer(self.lines, dtype=np.int64).copy()
        # copy=False: the columns just copied are the frame's own (no second copy).
        return pd.DataFrame(data, index=pd.RangeIndex(len(self)), copy=False)


@dataclass
class _ParsedTable:
    rows: _Columns
    problems: list[Problem]


def _row_label(table: Table, row_id: str | None, line: int) -> str:
    if not row_id:
        return f"{table.noun} on line {line}"
    shown = row_id if len(row_id) <= 40 else row_id[:37] + "..."
    return f"{table.noun} '{shown}'"


def _closest(name: str, candidates: Sequence[str]) -> str | None:
    by_lower = {candidate.lower(): candidate for candidate in candidates}
    match = difflib.get_close_matches(name.lower(), list(by_lower), n=1, cutoff=0.6)
    return by_lower[match[0]] if match else None


def _parse_number(text: str) -> tuple[float | None, str | None]:
    """Return (value, None) or (None, reason)."""
    # Fast path: float() alone also takes "nan", "inf", "1_000" and spaces, which the
    # pattern below refuses; only digits, a sign, '.' and an exponent pass it here.
    if text.isascii() and "_" not in text and " " not in text and "n" not in text.lower():
        try:
            value = float(text)
        except ValueError:
            pass
        else:
            if math.isfinite(value):
                return value, None
    if not _NUMBER.match(text):
        if text.lower() in _NON_FINITE_WORDS:
            return None, "is not a finite number"
        if re.fullmatch(r"[+-]?\d+,\d+", text):
            return None, "is not a number (use '.' as the decimal separator)"
        return None, "is not a number"
    value = float(text)
    if not math.isfinite(value):
        return None, "is not a finite number"
    return value, None


def _check_header(
    table: Table, header: list[str], file: str
) -> tuple[dict[str, int], list[Problem]]:
    """Map known column names to cell positions and report header faults."""
    problems: list[Problem] = []
    known = set(table.column_names)
    positions: dict[str, int] = {}
    unknown: list[tuple[int, str]] = []
    for position, raw in enumerate(header):
        name = raw.strip()
        if not name:
            problems.append(
                Problem(file, 1, "", f"column {position + 1} of the header has no name")
            )
        elif name in positions:
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"column '{name}' appears twice (columns {positions[name] + 1} and "
                    f"{position + 1})",
                )
            )
        elif name in known:
            positions[name] = position
        else:
            unknown.append((position, name))
    optional = {c.name for c in table.columns if c.optional}
    missing = [
        name for name in table.column_names if name not in positions and name not in optional
    ]
    explained: set[str] = set()
    for _position, name in unknown:
        suggestion = _closest(name, table.column_names)
        if suggestion is not None and suggestion in missing and suggestion not in explained:
            explained.add(suggestion)
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"unknown column '{name}'; did you mean '{suggestion}'? The unit is part "
                    "of the column name: convert the values to that unit and rename the "
                    "column",
                )
            )
        else:
            hint = f"; did you mean '{suggestion}'?" if suggestion else ""
            problems.append(
                Problem(
                    file,
                    1,
                    name,
                    f"unknown column '{name}'{hint} (known columns: "
                    f"{', '.join(table.column_names)})",
                )
            )
    problems.extend(
        Problem(file, 1, name, f"required column '{name}' is missing from the header")
        for name in missing
        if name not in explained
    )
    return positions, problems


def _check_row(
    table: Table,
    cells: dict[str, str],
    line: int,
    file: str,
    seen_ids: dict[str, int],
) -> tuple[RowValues | None, list[Problem]]:
    """Validate one data row; return its typed values (None if anything is wrong)."""
    problems: list[Problem] = []
    damaged = (
        {name for name, text in cells.items() if _CONTROL.search(text)}
        if _CONTROL.search("".join(cells.values()))
        else set()
    )
    for name in sorted(damaged, key=list(cells).index):
        code = ord(_CONTROL.search(cells[name]).group())
        problems.append(
            Problem(
                file,
                line,
                name,
                f"{table.noun} on line {line}: {name} contains the control character "
                f"U+{code:04X}; the file is damaged or not a text table (re-export it as "
                "CSV)",
            )
        )
    row_id = "" if "id" in damaged else cells.get("id", "")
    label = _row_label(table, row_id, line)

    if "id" in cells and "id" not in damaged:
        if len(row_id) > R.ID_CHARACTERS:
            problems.append(
                Problem(
                    file,
                    line,
                    "id",
                    f"{label}: id has {len(row_id):,} characters; at most {R.ID_CHARACTERS} "
                    "are allowed",
                )
            )
        elif not row_id:
            problems.append(Problem(file, line, "id", f"{label}: id is empty; every row needs one"))
        elif row_id in seen_ids:
            problems.append(
                Problem(
                    file,
                    line,
                    "id",
                    f"{label}: id '{row_id}' is already used on line {seen_ids[row_id]}; "
                    "ids must be unique",
                )
            )
        else:
            seen_ids[row_id] = line

    selector_value: str | None = None
    if table.selector in cells and table.selector not in damaged:
        text = cells[table.selector]
        if text in table.choices:
            # The schema's own string: a million rows share one object, not a million.
            selector_value = table.choices[table.choices.index(text)]
        else:
            suggestion = _closest(text, table.choices) if text else None
            hint = f"; did you mean '{suggestion}'?" if suggestion else ""
            shown = f"'{text}'" if text else "empty"
            problems.append(
                Problem(
                    file,
                    line,
                    table.selector,
                    f"{label}: {table.selector} {shown} is not one of "
                    f"{', '.join(table.choices)}{hint}",
                )
            )

    values: RowValues = {"id": row_id, table.selector: selector_value}
    for column in table.columns:
        if column.kind in ("text", "choice") or column.name not in cells:
            continue
        if column.name in damaged:
            values[column.name] = None
            continue
        text = cells[column.name]
        if text == "":
            if selector_value is not None and column.is_required(selector_value):
                problems.append(
                    Problem(
                        file,
                        line,
                        column.name,
                        f"{label}: {column.name} is empty but required for "
                        f"{table.selector} '{selector_value}' ({column.description})",
                    )
                )
            values[column.name] = None
            continue
        if not column.is_allowed(selector_value):
            applies = ", ".join(sorted(column.allowed_for or ()))
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {text} does not apply to {table.selector} "
                    f"'{selector_value}' (only to {applies}); leave the cell empty",
                )
            )
            continue
        value, reason = _parse_number(text)
        if value is None:
            problems.append(
                Problem(file, line, column.name, f"{label}: {column.name} = '{text}' {reason}")
            )
            continue
        if column.kind == "int" and value != math.floor(value):
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {text} is not a whole number",
                )
            )
            continue
        if not column.in_range(value):
            problems.append(
                Problem(
                    file,
                    line,
                    column.name,
                    f"{label}: {column.name} = {value:g} is out of range; expected "
                    f"{column.range_text()}",
                )
            )
            continue
        values[column.name] = int(value) if column.kind == "int" else value

    for check in table.row_checks:
        for field, message in check(values):
            problems.append(Problem(file, line, field, f"{label}: {message}"))
    return (None if problems else values), problems


class _Problems(list):
    """A file's problems, keeping the first `MAX_PROBLEMS_PER_FILE` and counting the rest."""

    def __init__(self, file: str):
        super().__init__()
        self.file = file
        self.dropped = 0

    def append(self, problem: Problem) -> None:
        if len(self) < MAX_PROBLEMS_PER_FILE:
            super().append(problem)
        else:
            self.dropped += 1

    def extend(self, problems) -> None:
        for problem in problems:
            self.append(problem)

    def closed(self) -> list[Problem]:
        found = list(self)
        if self.dropped:
            found.append(Problem(
                self.file, None, "",
                f"... and {self.dropped:,} more problem(s) in this file (only the first "
                f"{MAX_PROBLEMS_PER_FILE:,} are listed)",
            ))
        return found


class _HashingReader(io.RawIOBase):
    """Reads a binary file and feeds every byte to a hash on the way."""

    def __init__(self, raw: BinaryIO, digest: Any):
        self.raw = raw
        self.digest = digest
        self.size = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer: Any) -> int:
        count = self.raw.readinto(buffer)
        if count:
            self.digest.update(memoryview(buffer)[:count])
            self.size += count
        return count or 0


def _parse_table(table: Table, path: Path, text: TextIO) -> _ParsedTable:
    """Parse one table from a text stream, row by row (the file is never held whole)."""
    file = str(path)
    problems = _Problems(file)
    rows = _Columns(table)
    reader = csv.reader(text, strict=True)
    positions: dict[str, int] | None = None
    header_names: list[str] = []
    header_width = 0
    seen_ids: dict[str, int] = {}
    next_line = 1
    try:
        for row in reader:
            line = next_line
            next_line = reader.line_num + 1
            if positions is None:
                if line != 1 or not any(cell.strip() for cell in row):
                    problems.append(
                        Problem(file, line, "", "line 1 must be the header row; it is empty")
                    )
                    return _ParsedTable(rows, problems.closed())
                if row[0].lstrip().startswith("#"):
                    problems.append(
                        Problem(
                            file,
                            1,
                            "",
                            "line 1 starts with '#': comment lines are not allowed; line 1 "
                            "must be the header row",
                        )
                    )
                    return _ParsedTable(rows, problems.closed())
                positions, header_problems = _check_header(table, row, file)
                problems.extend(header_problems)
                header_names = [cell.strip() for cell in row]
                header_width = len(row)
                continue
            if not any(cell.strip() for cell in row):
                continue
            if row[0].lstrip().startswith("#"):
                problems.append(
                    Problem(
                        file,
                        line,
                        "",
                        "line starts with '#': comment lines are not allowed in catalogue "
                        "tables; keep notes in a README beside them",
                    )
                )
                continue
            if len(row) != header_width:
                row_id = row[positions["id"]].strip() if "id" in positions else ""
                label = _row_label(table, row_id, line)
                if len(row) < header_width:
                    first_missing = header_names[len(row)]
                    problems.append(
                        Problem(
                            file,
                            line,
                            first_missing,
                            f"{label}: row has {len(row)} cells but the header has "
                            f"{header_width}; it ends before column '{first_missing}' "
                            "(write empty cells as nothing between commas)",
                        )
                    )
                else:
                    problems.append(
                        Problem(
                            file,
                            line,
                            "",
                            f"{label}: row has {len(row)} cells but the header has "
                            f"{header_width}; remove the extra cells (a decimal comma?)",
                        )
                    )
                continue
            cells = {name: row[position].strip() for name, position in positions.items()}
            values, row_problems = _check_row(table, cells, line, file, seen_ids)
            problems.extend(row_problems)
            if values is not None and not problems:
                # Once a file has a problem it will not load, so its rows are not kept.
                rows.append(values, line)
    except csv.Error as error:
        problems.append(Problem(file, reader.line_num, "", f"unreadable CSV: {error}"))
        return _ParsedTable(rows, problems.closed())
    except UnicodeDecodeError as error:
        problems.append(Problem(file, None, "", f"file is not UTF-8 text ({error.reason})"))
        return _ParsedTable(rows, problems.closed())

    if positions is None:
        problems.append(Problem(file, None, "", "file is empty; line 1 must be the header row"))
    elif not len(rows) and not problems:
        problems.append(
            Problem(file, None, "", f"table has no rows; add at least one {table.noun}")
        )
    return _ParsedTable(rows, problems.closed())


def _read(folder: str | Path) -> tuple[list[Problem], Catalog | None]:
    folder_path = Path(folder)
    try:
        is_dir = stat.S_ISDIR(folder_path.stat().st_mode)
        exists = True
    except FileNotFoundError:
        is_dir = exists = False
    except OSError as error:  # a symbolic-link loop, no permission, a name too long
        return [Problem(str(folder_path), None, "", f"cannot open: {error.strerror}")], None
    if not exists:
        return [Problem(str(folder_path), None, "", "catalogue folder not found")], None
    if not is_dir:
        return [
            Problem(
                str(folder_path),
                None,
                "",
                "not a folder; a catalogue is a folder holding "
                + ", ".join(table.file_name for table in TABLES),
            )
        ], None

    problems: list[Problem] = []
    parsed: list[_ParsedTable] = []
    digest = hashlib.sha256()
    for table in TABLES:
        path = folder_path / table.file_name
        try:
            with open(path, "rb") as raw:
                size = os.fstat(raw.fileno()).st_size
                digest.update(f"{table.file_name}\0{size}\0".encode())
                hashing = _HashingReader(raw, digest)
                text = io.TextIOWrapper(
                    io.BufferedReader(hashing, buffer_size=1 << 20),
                    encoding="utf-8-sig",
                    newline="",
                )
                result = _parse_table(table, path, text)
                if not result.problems and hashing.size != size:
                    result.problems.append(Problem(
                        str(path), None, "",
                        "the file changed while it was read; run again when it is saved",
                    ))
        except FileNotFoundError:
            problems.append(
                Problem(
                    str(path),
                    None,
                    "",
                    "file not found; a catalogue folder holds "
                    + ", ".join(t.file_name for t in TABLES),
                )
            )
            continue
        except OSError as error:
            problems.append(Problem(str(path), None, "", f"cannot read the file ({error})"))
            continue
        parsed.append(result)
        problems.extend(result.problems)
    if problems:
        return problems, None
    cores, materials, wires = (result.rows.frame() for result in parsed)
    catalog = Catalog(
        folder=folder_path,
        cores=cores,
        materials=materials,
        wires=wires,
        content_hash=digest.hexdigest(),
    )
    return [], catalog


def check_catalog(folder: str | Path) -> list[Problem]:
    """Validate a catalogue folder and return every problem found (empty when fine).

    Parameters
    ----------
    folder : str or Path
        Folder holding cores.csv, materials.csv and wires.csv [path].

    Returns
    -------
    list of Problem
        Each names the file, the CSV line (header = 1; None for file-wide faults), the
        column and what is wrong.
    """
    problems, _ = _read(folder)
    return problems


def load_catalog(folder: str | Path) -> Catalog:
    """Load and validate a catalogue folder.

    Parameters
    ----------
    folder : str or Path
        Folder holding cores.csv, materials.csv and wires.csv [path].

    Returns
    -------
    Catalog
        The three tables as DataFrames and the content hash.

    Raises
    ------
    InputError
        Listing every problem of all three files.
    """
    problems, catalog = _read(folder)
    if catalog is None:
        raise InputError(problems)
    return catalog
