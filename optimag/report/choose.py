"""Data the page needs to help choose: compact rows of every front and reference design
(for the side-by-side comparison and the lifetime-cost ranking), in the schema's words.

Pure functions from a loaded run to JSON-ready dicts; `html` embeds them and the page's
script (`page.js`) draws from them.
"""

from __future__ import annotations

import math
from typing import Any

from optimag import records
from optimag.report.data import RunData

#: Figures in the comparison table, in order, and which way is better (``min``, ``max``
#: or None for identity and construction).
COMPARE_FIELDS: tuple[tuple[str, str | None], ...] = (
    ("core", None), ("material", None), ("stack", None), ("turns", None),
    ("gap_mm", None), ("wire", None), ("parallel", None), ("layers", None),
    ("inductance_uH", None), ("inductance_at_peak_uH", "max"), ("peak_current_A", None),
    ("peak_flux_T", "min"), ("fill_factor", "min"), ("hotspot_temperature_C", "min"),
    ("weighted_loss_W", "min"), ("total_loss_W", "min"), ("volume_cm3", "min"),
    ("box_height_mm", "min"), ("mass_g", "min"), ("cost", "min"), ("energy_cost", "min"),
    ("lifetime_cost", "min"), ("yield_fraction", "max"),
)

#: Loss parts per operating point, in the build sheet's order and words.
LOSS_PARTS: tuple[tuple[str, str], ...] = (
    ("core_loss_W", "Core"), ("winding_dc_loss_W", "Winding DC"),
    ("winding_ac_loss_W", "Winding AC"), ("winding_gap_loss_W", "Winding gap"),
)


def _value(record: dict[str, Any], name: str) -> Any:
    value = record.get(name)
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _row(record: dict[str, Any], kind: str, shortlisted: bool) -> dict[str, Any]:
    points = record.get("per_operating_point") or []
    return {
        "id": str(record["design_id"]),
        "kind": kind,
        "shortlisted": shortlisted,
        "values": [_value(record, name) for name, _ in COMPARE_FIELDS],
        "shown": [records.display(name, record[name]) if _value(record, name) is not None
                  else "—" for name, _ in COMPARE_FIELDS],
        "losses": [[float(p.get(part, 0.0)) for part, _ in LOSS_PARTS] for p in points],
    }


def design_rows(run: RunData) -> dict[str, Any]:
    """Every front design and reference design as a compact row for the page."""
    shortlisted = {str(r["design_id"]) for r in run.shortlist}
    rows = [_row(r, "front", str(r["design_id"]) in shortlisted) for r in run.front_records]
    rows += [_row(r, "reference", False) for r in run.reference_designs]
    energy = run.meta.get("energy") or {}
    return {
        "fields": [name for name, _ in COMPARE_FIELDS],
        "headers": [records.header(name, run.currency) for name, _ in COMPARE_FIELDS],
        "better": [better for _, better in COMPARE_FIELDS],
        "parts": [words for _, words in LOSS_PARTS],
        "points": [str(p["name"]) for p in run.meta.get("operating_points") or []],
        "currency": run.currency,
        "energy_price_per_kWh": energy.get("energy_price_per_kWh"),
        "operating_hours": energy.get("operating_hours"),
        "designs": rows,
    }


#: What-if limits: (near-front column, words, study key) in slider order.
WHATIF_LIMITS: tuple[tuple[str, str, str], ...] = (
    ("hotspot_temperature_C", "Hot-spot temperature [°C]", "max_temperature_C"),
    ("box_height_mm", "Height [mm]", "max_height_mm"),
    ("footprint_mm2", "Footprint [mm²]", "max_footprint_mm2"),
    ("weighted_loss_W", "Weighted loss [W]", "max_loss_W"),
    ("volume_cm3", "Boxed volume [cm³]", "max_volume_cm3"),
)

#: Significant digits of the what-if numbers in the page (the page's own front is
#: computed on these values).
WHATIF_DIGITS = 6


def _rounded(values: list[float]) -> list[float]:
    return [float(f"{v:.{WHATIF_DIGITS}g}") for v in values]


def whatif_data(run: RunData) -> dict[str, Any] | None:
    """The near-front designs for the page's what-if limits, or None when the run kept
    none (optuna runs, runs written before it, nothing feasible)."""
    near = run.near_front
    if not near or not near.get("columns") or not near["columns"].get("core"):
        return None
    columns = near["columns"]
    objectives = [name for name in near["objectives"] if name in _objective_columns()]
    limits = []
    for column, words, key in WHATIF_LIMITS:
        values = columns[column]
        limits.append({"column": column, "words": words, "key": key,
                       "study": near["limits"].get(column),
                       "low": min(values), "high": max(values)})
    numeric = [c for c, _, _ in WHATIF_LIMITS] + [_objective_columns()[o] for o in objectives]
    labels = [f"{core} · {material} · {stack}× · {turns} t · {wire} ×{parallel}"
              for core, material, stack, turns, wire, parallel in zip(
                  columns["core"], columns["material"], columns["stack"], columns["turns"],
                  columns["wire"], columns["parallel"], strict=True)]
    return {
        "objectives": objectives,
        "titles": [records.header(_objective_columns()[o], run.currency) for o in objectives],
        "objective_columns": [_objective_columns()[o] for o in objectives],
        "layers": near.get("layers"),
        "cap": near.get("cap"),
        "limits": limits,
        "columns": {name: _rounded(columns[name]) for name in dict.fromkeys(numeric)},
        "label": labels,
        "design_id": columns["design_id"],
        "layer": columns["layer"],
        "study_file": str(run.folder / "study.toml"),
    }


def _objective_columns() -> dict[str, str]:
    from optimag.model import OBJECTIVE_COLUMNS

    return OBJECTIVE_COLUMNS
