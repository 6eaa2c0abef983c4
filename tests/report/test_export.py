"""The run folder's tables: trade rounding, the xlsx layout, full precision where promised."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from openpyxl import load_workbook

from optimag import records
from optimag.runfolder import write_run
from optimag.search.run import explore

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def folder(tmp_path_factory) -> Path:
    result = explore(ROOT / "studies" / "cargo-bike-buck.toml", top=6)
    return write_run(result, tmp_path_factory.mktemp("export") / "run")


def test_shortlist_csv_is_rounded_as_the_trade_quotes(folder):
    designs = json.loads((folder / "shortlist.json").read_text())["designs"]
    csv = pd.read_csv(folder / "shortlist.csv", dtype={"design_id": str})
    assert list(csv.columns[: len(records.SHORTLIST_COLUMNS)]) == records.SHORTLIST_COLUMNS
    for rec, row in zip(designs, csv.to_dict("records"), strict=True):
        assert row["design_id"] == rec["design_id"]
        for name in ("total_loss_W", "weighted_loss_W", "gap_mm", "wire_length_m",
                     "dc_resistance_mOhm", "volume_cm3"):
            assert row[name] == records.trade_value(name, rec[name])
            text = f"{abs(row[name]):.15g}"
            text = text if "." in text else text.rstrip("0")  # 1230: three digits
            assert len(text.replace(".", "").lstrip("0")) <= records.figure(name).digits
        assert row["cost"] == round(rec["cost"], 2)
        assert row["turns"] == rec["turns"]


def test_pareto_csv_keeps_full_precision(folder):
    designs = json.loads((folder / "shortlist.json").read_text())["designs"]
    pareto = pd.read_csv(folder / "pareto.csv", dtype={"design_id": str}).set_index("design_id")
    for rec in designs:
        for name in ("weighted_loss_W", "total_loss_W", "gap_mm", "volume_cm3", "cost"):
            assert pareto.loc[rec["design_id"], name] == rec[name]  # exact float round trip


def test_xlsx_layout(folder):
    designs = json.loads((folder / "shortlist.json").read_text())["designs"]
    book = load_workbook(folder / "shortlist.xlsx")
    points = [p["name"] for p in designs[0]["per_operating_point"]]
    assert book.sheetnames[0] == "shortlist"
    assert book.sheetnames[1 : 1 + len(points)] == [f"at {p}"[:31] for p in points]
    assert book.sheetnames[1 + len(points) :] == [f"build {d['design_id']}" for d in designs]
    sheet = book["shortlist"]
    names = [c.value for c in sheet[1]]
    units = [c.value for c in sheet[2]]
    assert names == records.SHORTLIST_COLUMNS
    assert units[names.index("weighted_loss_W")] == "W"
    assert units[names.index("gap_mm")] == "mm"
    assert sheet.freeze_panes == "B3"
    assert sheet.auto_filter.ref.startswith("A2:")
    assert sheet.max_row == 2 + len(designs)
    cost = sheet.cell(3, names.index("cost") + 1)
    assert cost.number_format == "0.00"
    # Significant digits shown as such: 3 digits of a figure below 1 need 3 decimals.
    for row in range(3, sheet.max_row + 1):
        gap = sheet.cell(row, names.index("gap_mm") + 1)
        if 0.1 <= gap.value < 1:
            assert gap.number_format == "0.000"
        volume = sheet.cell(row, names.index("volume_cm3") + 1)
        if 10 <= volume.value < 100:
            assert volume.number_format == "0.0"
    # A sheet per operating point: each design's figures and inputs at that point.
    first = book[book.sheetnames[1]]
    header = [c.value for c in first[1]]
    assert {"total_loss_W", "peak_flux_T", "input_V", "Amin_mm2"} <= set(header)
    row = {h: first.cell(3, i + 1).value for i, h in enumerate(header)}
    point = next(p for p in designs[0]["per_operating_point"] if p["name"] == points[0])
    assert row["design_id"] == designs[0]["design_id"]
    assert row["total_loss_W"] == records.trade_value("total_loss_W", point["total_loss_W"])
    # A build sheet per design with the parts to order.
    build = book[f"build {designs[0]['design_id']}"]
    items = {build.cell(r, 4).value: build.cell(r, 2).value for r in range(2, build.max_row + 1)}
    assert items["gap_method"] == designs[0]["gap_method"]
    assert items["wire_length_m"] == records.trade_value("wire_length_m",
                                                         designs[0]["wire_length_m"])
    column_a = [build.cell(r, 1).value for r in range(1, build.max_row + 1)]
    assert "parts to order" in column_a
    assert {"bobbin", "wire"} <= set(column_a) or "core ring" in column_a


def test_build_figures_add_up(folder):
    for rec in json.loads((folder / "shortlist.json").read_text())["designs"]:
        # Wire to cut = parallel x (winding length + two leads).
        leads = 2 * rec["lead_allowance_mm"] / 1e3
        assert rec["wire_length_m"] == pytest.approx(
            rec["parallel"] * (rec["winding_length_m"] + leads), rel=1e-12)
        assert rec["winding_length_m"] == pytest.approx(
            rec["turns"] * rec["inputs"]["mlt_mm"] / 1e3, rel=1e-12)
        # AL = L / N^2.
        assert rec["al_value_nH"] == pytest.approx(
            rec["inductance_uH"] * 1e3 / rec["turns"] ** 2, rel=1e-12)
        # Copper resistance rises linearly with temperature (IEC 60028, 0.00393 /K at
        # 20 degC; from memory).
        ratio = rec["dc_resistance_mOhm"] / rec["dc_resistance_20C_mOhm"]
        assert ratio == pytest.approx(1 + 0.00393 * (rec["temperature_C"] - 20), rel=1e-9)
        # Copper mass = N x MLT x copper section x 8890 kg/m^3 (handbook; from memory).
        mass = (rec["turns"] * rec["inputs"]["mlt_mm"] * rec["inputs"]["copper_area_mm2"]
                * 1e-9 * 8890 * 1e3)
        assert rec["copper_mass_g"] == pytest.approx(mass, rel=1e-9)
        if rec["family"] != "toroid":
            halves = next(p for p in rec["parts"] if p["item"] == "core half")
            assert halves["quantity"] == 2 * rec["stack"]
        if rec["gap_mm"] > 0:
            assert rec["gap_centre_leg_mm"] == rec["gap_mm"]
            assert rec["gap_outer_leg_mm"] == 0
