"""Design records: figures that add up, one peak flux, the schema every export reads.

The independent checks re-derive figures from each record's own ``inputs`` with textbook
relations: a sum of loss parts, a time-share weighted mean, Joule's law P = R I^2 for the
DC winding loss, and for a ferrite core the gapped magnetic circuit with the
Fröhlich-Kennelly soft-saturation law (Fröhlich 1881, Kennelly 1891; from memory; the
circuit solution itself is checked against a root finder in tests/physics) on the core and
gap path (the inductance less the window's own part) and the narrowest section Amin.
"""

from __future__ import annotations

import ast
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimag import records
from optimag.physics import magnetic, saturation
from optimag.runfolder import write_run
from optimag.search.run import explore

ROOT = Path(__file__).resolve().parents[1]
STUDY = ROOT / "studies" / "cargo-bike-buck.toml"


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    result = explore(STUDY, top=12)
    folder = write_run(result, tmp_path_factory.mktemp("records") / "run")
    return result, folder


def _all_records(result) -> list[dict]:
    from optimag import model

    ids = [f"D{i + 1:04d}" for i in range(len(result.front_candidates))]
    return records.design_records(result.space, result.front_candidates,
                                  model.evaluate(result.space, result.front_candidates), ids)


def test_total_loss_is_the_sum_of_its_parts_and_weighted_loss_the_mean(run):
    result, folder = run
    every = _all_records(result) + result.shortlist_records
    assert len(every) > 10
    for rec in every:
        parts = (rec["core_loss_W"] + rec["winding_dc_loss_W"] + rec["winding_ac_loss_W"]
                 + rec["winding_gap_loss_W"])
        assert rec["total_loss_W"] == pytest.approx(parts, rel=1e-12)
        weighted = 0.0
        names = [p["name"] for p in rec["per_operating_point"]]
        assert rec["operating_point"] in names
        for point in rec["per_operating_point"]:
            point_parts = (point["core_loss_W"] + point["winding_dc_loss_W"]
                           + point["winding_ac_loss_W"] + point["winding_gap_loss_W"])
            assert point["total_loss_W"] == pytest.approx(point_parts, rel=1e-12)
            weighted += point["time_share"] * point["total_loss_W"]
            if point["name"] == rec["operating_point"]:
                assert point["total_loss_W"] == rec["total_loss_W"]
                assert point["inputs"] == rec["inputs"]
        assert rec["weighted_loss_W"] == pytest.approx(weighted, rel=1e-12)
    # The same holds in the files: pareto.csv keeps full precision.
    pareto = pd.read_csv(folder / "pareto.csv")
    parts = pareto[["core_loss_W", "winding_dc_loss_W", "winding_ac_loss_W",
                    "winding_gap_loss_W"]].sum(axis=1)
    assert np.allclose(pareto["total_loss_W"], parts, rtol=1e-12)
    shortlist = json.loads((folder / "shortlist.json").read_text())["designs"]
    for rec in shortlist:
        parts = (rec["core_loss_W"] + rec["winding_dc_loss_W"] + rec["winding_ac_loss_W"]
                 + rec["winding_gap_loss_W"])
        assert rec["total_loss_W"] == pytest.approx(parts, rel=1e-12)


def test_each_point_recomputes_alone_from_its_inputs(run):
    result, _ = run
    for rec in result.shortlist_records:
        for point in rec["per_operating_point"]:
            inputs = point["inputs"]
            assert set(records.INPUT_FIELDS) <= set(inputs)
            # Joule: P_dc = R(T) I_dc^2.
            joule = inputs["dc_resistance_mOhm"] * 1e-3 * inputs["dc_current_A"] ** 2
            assert point["winding_dc_loss_W"] == pytest.approx(joule, rel=1e-9)
            if rec["material_kind"] == "ferrite":
                # Soft saturation (Fröhlich-Kennelly, physics.magnetic) on the gapped
                # circuit: the gap reluctance is N^2/L - le/(mu0 mu_r Ae), Bsat the one at
                # the temperature limit; the peak flux is reported on Amin.
                n, ae = rec["turns"], inputs["Ae_mm2"] * 1e-6
                le = inputs["le_mm"] * 1e-3
                core_path = (rec["inductance_uH"] - inputs["window_inductance_uH"]) * 1e-6
                r_gap = n**2 / core_path - magnetic.core_reluctance(le, ae, inputs["mu_r"])
                bsat = rec["margins"]["bsat_at_limit_temperature_T"]

                def flux_at(current, n=n, le=le, ae=ae, inputs=inputs, bsat=bsat, r=r_gap):
                    return saturation.soft_saturation_operating_point(
                        n, current, le, ae, inputs["mu_r"], bsat, r).flux_density_T

                flux = flux_at(point["peak_current_A"]) * inputs["Ae_mm2"] / inputs["Amin_mm2"]
                assert point["peak_flux_T"] == pytest.approx(flux, rel=1e-6)
                # The swing for core loss stays on Ae.
                swing = flux_at(point["peak_current_A"]) - flux_at(
                    point["peak_current_A"] - inputs["ripple_A"])
                if not point["dcm"]:
                    assert point["flux_swing_T"] == pytest.approx(swing, rel=1e-6)
        assert rec["peak_flux_T"] == max(p["peak_flux_T"] for p in rec["per_operating_point"])
        assert rec["peak_flux_T"] <= rec["margins"]["flux_limit_T"] * (1 + 1e-12)


def test_exports_axes_and_headroom_read_one_peak_flux(run):
    from optimag.report import data, figures

    result, folder = run
    by_id = {r["design_id"]: r for r in result.shortlist_records}
    pareto = pd.read_csv(folder / "pareto.csv").set_index("design_id")
    csv = pd.read_csv(folder / "shortlist.csv").set_index("design_id")
    xlsx = pd.read_excel(folder / "shortlist.xlsx", sheet_name="shortlist",
                         skiprows=[1]).set_index("design_id")
    loaded = data.load_run(folder)
    table = data.shortlist_table(loaded)
    parallel = figures.shortlist_parallel_figure(table, loaded.currency)
    dims = {d["label"]: np.asarray(d["values"], dtype=float)
            for d in parallel["data"][0]["dimensions"]}
    axis = dims[data.PARALLEL_AXES["peak_flux_T"]]
    for position, design in enumerate(table["design_id"]):
        rec = by_id[design]
        value = rec["peak_flux_T"]
        assert pareto.loc[design, "peak_flux_T"] == value
        assert csv.loc[design, "peak_flux_T"] == records.trade_value("peak_flux_T", value)
        assert xlsx.loc[design, "peak_flux_T"] == records.trade_value("peak_flux_T", value)
        assert axis[position] == pytest.approx(value, rel=1e-15)
        headroom = data.margin_table(rec).set_index("quantity")
        assert headroom.loc["Peak flux density", "value"] == value
        assert headroom.loc["Peak flux density", "limit"] == rec["margins"]["flux_limit_T"]


def test_every_exported_name_is_declared_once():
    names = (list(records.PARETO_COLUMNS) + list(records.SHORTLIST_COLUMNS)
             + list(records.POINT_FIELDS) + list(records.INPUT_FIELDS)
             + list(records.MARGIN_FIELDS))
    assert records.undeclared(names) == []
    with pytest.raises(ValueError):
        records.register(records.Figure("total_loss_W", "W", "Loss", "something else"))
    # Registering the same declaration again is harmless.
    records.register(records.figure("total_loss_W"))


def test_record_fields_and_units(run):
    result, _ = run
    for rec in result.shortlist_records:
        assert set(records.RECORD_FIELDS) <= set(rec)
        flat = [k for k, v in rec.items() if not isinstance(v, dict | list)]
        assert records.undeclared(flat) == []
    assert records.header("weighted_loss_W") == "Weighted loss [W]"
    assert records.header("cost", "EUR") == "Cost [EUR]"
    assert records.trade_value("total_loss_W", 1.83788047) == 1.84
    assert records.trade_value("cost", 1.286585) == 1.29
    assert records.trade_value("turns", 16) == 16
    assert records.display("dc_resistance_mOhm", 28.08783) == "28.1"
    assert records.display("volume_cm3", 11032.9106) == "11000"


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            found.add(node.module)
            found.update(f"{node.module}.{alias.name}" for alias in node.names)
    return found


@pytest.mark.parametrize(
    ("package", "forbidden"),
    [
        ("search", ("optimag.report", "optimag.runfolder", "optimag.cli")),
        ("model.py", ("optimag.records", "optimag.search", "optimag.report")),
        ("records.py", ("optimag.search", "optimag.report", "optimag.runfolder")),
        ("physics", ("optimag.model", "optimag.records", "optimag.search", "optimag.report")),
    ],
)
def test_imports_point_down(package, forbidden):
    """No arrow from search to report (nor from a lower layer to a higher one), including
    imports inside functions."""
    target = ROOT / "optimag" / package
    files = [target] if target.is_file() else sorted(target.rglob("*.py"))
    assert files
    for path in files:
        bad = [name for name in _imports(path)
               if any(name == f or name.startswith(f + ".") for f in forbidden)]
        assert bad == [], f"{path.relative_to(ROOT)} imports {bad}"


def test_hand_procedure_is_reported_beside_the_front(run):
    from optimag.report import data

    _, folder = run
    table = data.hand_sizing_table(data.load_run(folder))
    assert len(table) >= 1
    assert table["standing"].str.len().min() > 0
    assert (table["area_product_cm4"] >= table["area_product_required_cm4"]).all()



def test_every_record_names_its_thermal_model_range_and_band(run):
    """The cargo-bike study is potted: records state the model, the cooling, whether it
    stayed in range, and a band around the hot spot that the limit applies to."""
    result, folder = run
    saved = json.loads((folder / "shortlist.json").read_text(encoding="utf-8"))["designs"]
    for rec in _all_records(result) + saved:
        assert rec["thermal_model"] == "faces" and rec["cooling_mode"] == "potted"
        assert isinstance(rec["thermal_in_range"], bool)
        low, high = rec["temperature_band_C"]
        assert (low, high) == (rec["temperature_band_low_C"], rec["temperature_band_high_C"])
        assert low <= rec["hotspot_temperature_C"] <= high
        assert rec["hotspot_temperature_C"] >= rec["temperature_C"]
        assert "faces_edges_corners" in rec["temperature_band_models"]
        hottest = max(p["hotspot_temperature_C"] for p in rec["per_operating_point"])
        assert rec["hotspot_temperature_C"] == hottest
        if rec["feasible"]:
            assert rec["hotspot_temperature_C"] <= rec["margins"]["temperature_limit_C"]
