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
