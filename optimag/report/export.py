"""The run folder's tables, written from design records (`optimag.records`).

* ``pareto.csv`` — every front design, full precision, for machines;
* ``shortlist.csv`` — the short-list's flat figures rounded as the trade quotes them;
* ``shortlist.xlsx`` — the same with a units row, frozen header, filters and number
  formats, one sheet per operating point and one build sheet per design;
* ``shortlist.json`` — the full records (nested parts, curves, inputs), full precision.

Names, units, words and rounding all come from the schema in `optimag.records`.
"""

from __future__ import annotations

import json
import re
from collections.abc import Callable
from pathlib import Path

import pandas as pd

from optimag import files, records

#: Build-sheet lines: the figures a builder needs, in order.
BUILD_SHEET_FIELDS = (
    "core", "family", "stack", "material", "material_kind", "gap_method",
    "gap_centre_leg_mm", "gap_outer_leg_mm", "al_value_nH", "turns", "wire", "wire_kind",
    "parallel", "layers", "fill_factor", "winding_length_m", "lead_allowance_mm",
    "wire_length_m", "copper_mass_g", "dc_resistance_20C_mOhm", "dc_resistance_mOhm",
    "box_length_mm", "box_width_mm", "box_height_mm", "volume_cm3", "mass_g", "cost",
    "inductance_uH", "inductance_at_peak_uH", "peak_current_A", "peak_flux_T",
    "flux_limit_T", "operating_point", "total_loss_W", "core_loss_W", "winding_dc_loss_W",
    "winding_ac_loss_W", "winding_gap_loss_W", "temperature_C", "weighted_loss_W",
)

_SHEET_FORBIDDEN = re.compile(r"[\[\]:*?/\\]")


def shortlist_frame(design_records: list[dict]) -> pd.DataFrame:
    """shortlist.csv's table: flat figures rounded as the trade quotes them."""
    rows = [records.trade_row(records.flat(r)) for r in design_records]
    columns = records.SHORTLIST_COLUMNS
    frame = pd.DataFrame(rows)
    if frame.empty:
        return pd.DataFrame(columns=columns)
    extra = [c for c in frame.columns if c not in columns]
    return frame[[c for c in columns if c in frame.columns] + extra]


def point_rows(design_records: list[dict], point: str) -> list[dict]:
    """One flat row per design at operating point ``point``: its figures and inputs."""
    rows = []
    for record in design_records:
        for entry in record["per_operating_point"]:
            if entry["name"] != point:
                continue
            row = {"design_id": record["design_id"], "rank": record.get("rank")}
            row.update({k: v for k, v in entry.items() if k not in ("inputs", "name")})
            row.update(entry["inputs"])
            rows.append(row)
    return rows


def _atomic(path: Path, write: Callable[[Path], None]) -> None:
    """Write ``path`` through a temporary name in the same folder, then replace it
    (`optimag.files.atomic_path`: never through a symlink; a failure names the file)."""
    with files.atomic_path(path) as temp:
        write(temp)


def _sheet_name(text: str, taken: set[str]) -> str:
    base = _SHEET_FORBIDDEN.sub("_", text).strip("'")[:31] or "sheet"
    name, n = base, 2
    while name.lower() in taken:
        suffix = f" ({n})"
        name = base[: 31 - len(suffix)] + suffix
        n += 1
    taken.add(name.lower())
    return name


def _table_sheet(book, title: str, rows: list[dict], columns: list[str], currency: str):
    """A sheet with field names, a units row, frozen header, filters, number formats."""
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter

    sheet = book.create_sheet(title)
    sheet.append(columns)
    sheet.append([records.unit_text(c, currency) if c in records.FIGURES else ""
                  for c in columns])
    for row in rows:
        sheet.append([records.trade_value(c, row.get(c)) for c in columns])
    bold = Font(bold=True)
    for cell in sheet[1]:
        cell.font = bold
    for index, name in enumerate(columns, start=1):
        letter = get_column_letter(index)
        for cell in sheet[letter][2:]:
            cell.number_format = records.number_format(name, cell.value)
        sheet.column_dimensions[letter].width = max(9, min(28, len(name) + 2))
    sheet.freeze_panes = "B3"
    last = get_column_letter(max(len(columns), 1))
    sheet.auto_filter.ref = f"A2:{last}{max(len(rows) + 2, 2)}"
    return sheet


def _build_sheet(book, title: str, record: dict, currency: str) -> None:
    from openpyxl.styles import Font

    sheet = book.create_sheet(title)
    bold = Font(bold=True)
    sheet.append(["item", "value", "unit", "field"])
    for cell in sheet[1]:
        cell.font = bold
    for name in BUILD_SHEET_FIELDS:
        if name not in record:
            continue
        cell_value = records.trade_value(name, record[name])
        sheet.append([records.figure(name).label, cell_value,
                      records.unit_text(name, currency), name])
        sheet.cell(sheet.max_row, 2).number_format = records.number_format(name, cell_value)
    sheet.append([])
    sheet.append(["parts to order", "quantity", "description"])
    for cell in sheet[sheet.max_row]:
        cell.font = bold
    for part in record.get("parts", []):
        sheet.append([part["item"], part["quantity"], part["description"]])
    sheet.freeze_panes = "A2"
    for letter, width in (("A", 30), ("B", 16), ("C", 60), ("D", 26)):
        sheet.column_dimensions[letter].width = width


def write_xlsx(path: Path, design_records: list[dict], currency: str = "") -> None:
    """shortlist.xlsx: the short-list sheet, a sheet per operating point, a build sheet
    per design."""
    from openpyxl import Workbook

    book = Workbook()
    book.remove(book.active)
    taken: set[str] = set()
    flat_rows = [records.flat(r) for r in design_records]
    columns = list(records.SHORTLIST_COLUMNS)
    _table_sheet(book, _sheet_name("shortlist", taken), flat_rows, columns, currency)
    points: list[str] = []
    for record in design_records:
        for entry in record["per_operating_point"]:
            if entry["name"] not in points:
                points.append(entry["name"])
    point_columns = [
        "design_id", "rank",
        *[f for f in records.POINT_FIELDS if f != "name"], *records.INPUT_FIELDS,
    ]
    for point in points:
        _table_sheet(book, _sheet_name(f"at {point}", taken), point_rows(design_records, point),
                     point_columns, currency)
    for record in design_records:
        _build_sheet(book, _sheet_name(f"build {record['design_id']}", taken), record,
                     currency)
    files.neutralise_workbook(book)  # no cell may be read as a formula
    _atomic(path, lambda temp: book.save(temp))


def write_tables(
    run_dir: Path, pareto: pd.DataFrame, shortlist_records: list[dict], currency: str = "",
    front_records: list[dict] | None = None, near_front: dict | None = None,
) -> None:
    """Write pareto.csv and the short-list as csv, xlsx and json into ``run_dir``.

    Every file is written atomically and every text cell neutralised against formula
    injection (`optimag.files`).
    """
    run_dir = Path(run_dir)
    files.write_csv(pareto, run_dir / "pareto.csv")
    files.write_csv(shortlist_frame(shortlist_records), run_dir / "shortlist.csv")
    write_xlsx(run_dir / "shortlist.xlsx", shortlist_records, currency)
    text = json.dumps({"designs": shortlist_records}, indent=1, allow_nan=False)
    _atomic(run_dir / "shortlist.json", lambda temp: temp.write_text(text, encoding="utf-8"))
    if front_records:
        front = json.dumps({"designs": front_records}, separators=(",", ":"), allow_nan=False)
        _atomic(run_dir / "front.json", lambda temp: temp.write_text(front, encoding="utf-8"))
    if near_front:
        near = json.dumps(near_front, separators=(",", ":"), allow_nan=False)
        _atomic(run_dir / "near_front.json",
                lambda temp: temp.write_text(near, encoding="utf-8"))
