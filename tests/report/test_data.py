"""Data step of the report: run folder -> tables.

Outside references used here: the definition of Pareto dominance checked by brute
force over all pairs (independent of the sort-and-sweep in the code), plain geometry
(circles of one pitch laid side by side do not overlap and stay in their rectangle),
and arithmetic identities of the run record (components add up to totals,
shares are counts over the total).
"""

from __future__ import annotations

import json
import math
import random
from datetime import datetime
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from optimag.errors import InputError
from optimag.report import data


def _brute_force_non_dominated(points: np.ndarray) -> np.ndarray:
    """Textbook definition, O(n²): no other point is <= everywhere and < somewhere."""
    keep = np.ones(len(points), dtype=bool)
    for i, p in enumerate(points):
        for j, q in enumerate(points):
            if i != j and np.all(q <= p) and np.any(q < p):
                keep[i] = False
                break
    return keep


def _records(run_dir: Path) -> list[dict]:
    return json.loads((run_dir / "shortlist.json").read_text("utf-8"))["designs"]


def test_load_run_reads_every_file(run_dir: Path, hostile: dict[str, str]) -> None:
    run = data.load_run(run_dir)
    assert run.meta["study_title"] == hostile["title"]
    assert run.objectives == ["volume", "loss", "cost"]
    assert len(run.pareto) == run.meta["counts"]["pareto"] == 12
    assert [r["rank"] for r in run.shortlist] == [1, 2, 3, 4, 5]
    assert run.started == datetime(2025, 1, 14, 9, 30, 15)
    assert "buck" in run.study_text


def test_load_run_reports_all_problems_together(run_dir: Path) -> None:
    meta = json.loads((run_dir / "run.json").read_text("utf-8"))
    meta["objectives"] = ["volume", "speed"]
    (run_dir / "run.json").write_text(json.dumps(meta), "utf-8")
    pareto = (run_dir / "pareto.csv").read_text("utf-8").replace(",cost,", ",price,", 1)
    (run_dir / "pareto.csv").write_text(pareto, "utf-8")
    designs = _records(run_dir)
    del designs[2]["winding"]
    del designs[3]["margins"]["fill_limit"]
    (run_dir / "shortlist.json").write_text(json.dumps({"designs": designs}), "utf-8")

    with pytest.raises(InputError) as caught:
        data.load_run(run_dir)
    text = str(caught.value)
    assert len(caught.value.problems) == 4
    assert "run.json: objectives" in text and "speed" in text
    assert "pareto.csv" in text and "cost" in text
    assert "designs[2]" in text and "winding" in text
    assert "designs[3].margins" in text and "fill_limit" in text


def test_load_run_on_a_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="run folder not found"):
        data.load_run(tmp_path / "nowhere")


def test_pareto_table_types_and_order(run_dir: Path) -> None:
    table = data.pareto_table(data.load_run(run_dir))
    assert table["knee"].dtype == bool and table["knee"].sum() == 1
    assert table["turns"].dtype.kind == "i"
    assert np.all(np.diff(table["volume_cm3"]) >= 0)
    assert set(table["family"]) == {"E", "toroid"}
    assert table["material"].nunique() == 2


@settings(max_examples=100, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(0, 6), st.integers(0, 6)),  # small grid: many ties
        min_size=0,
        max_size=30,
    )
)
def test_non_dominated_matches_brute_force(pairs: list[tuple[int, int]]) -> None:
    points = np.array(pairs, dtype=float).reshape(-1, 2)
    assert np.array_equal(data.non_dominated(points), _brute_force_non_dominated(points))


@settings(max_examples=100, deadline=None)
@given(
    st.lists(
        st.tuples(st.floats(1e-6, 1e6, allow_nan=False), st.floats(1e-6, 1e6, allow_nan=False)),
        min_size=1,
        max_size=40,
    )
)
def test_non_dominated_on_wide_real_values(pairs: list[tuple[float, float]]) -> None:
    points = np.array(pairs)
    mask = data.non_dominated(points)
    assert mask.any()
    assert np.array_equal(mask, _brute_force_non_dominated(points))


def test_non_dominated_rejects_bad_input() -> None:
    with pytest.raises(ValueError, match="finite"):
        data.non_dominated(np.array([[1.0, np.nan]]))
    with pytest.raises(ValueError, match="shape"):
        data.non_dominated(np.ones((3, 3)))


@pytest.mark.parametrize(
    "objectives",
    [("volume", "loss"), ("volume", "loss", "cost"), ("loss", "cost", "volume", "mass")],
)
def test_pair_views_cover_every_pair(tmp_path: Path, make_run, objectives) -> None:
    run = data.load_run(make_run(tmp_path, objectives=objectives, shortlist_size=1))
    table = data.pareto_table(run)
    views = data.pair_views(run)
    assert len(views) == math.comb(len(objectives), 2)
    assert len({(v.x, v.y) for v in views}) == len(views)
    for view in views:
        mask = _brute_force_non_dominated(table[[view.x_column, view.y_column]].to_numpy())
        assert set(view.front_ids) == set(table.loc[mask, "design_id"])
        xs = table.set_index("design_id").loc[list(view.front_ids), view.x_column]
        assert np.all(np.diff(xs) >= 0)
    cost_titles = [v.y_title for v in views if v.y == "cost"] + [
        v.x_title for v in views if v.x == "cost"
    ]
    assert all(title == "Cost [EUR]" for title in cost_titles)


def test_shortlist_table_follows_rank_not_file_order(run_dir: Path) -> None:
    designs = _records(run_dir)
    random.Random(3).shuffle(designs)
    (run_dir / "shortlist.json").write_text(json.dumps({"designs": designs}), "utf-8")
    table = data.shortlist_table(data.load_run(run_dir))
    assert list(table["rank"]) == [1, 2, 3, 4, 5]
    assert bool(table.loc[0, "knee"]) and not table["knee"].iloc[1:].any()
    assert set(data.PARALLEL_AXES) <= set(table.columns)


def _inside(shapes, x0: float, y0: float, x1: float, y1: float) -> bool:
    tol = 1e-9
    return bool(
        (shapes["x0"] >= x0 - tol).all()
        and (shapes["y0"] >= y0 - tol).all()
        and (shapes["x1"] <= x1 + tol).all()
        and (shapes["y1"] <= y1 + tol).all()
        and (shapes["x1"] > shapes["x0"]).all()
        and (shapes["y1"] > shapes["y0"]).all()
    )


def _check_drawing(shapes, winding: dict) -> None:
    width, breadth = winding["window_width_mm"], winding["window_breadth_mm"]
    wall = winding["bobbin_wall_mm"]
    conductors = shapes[shapes["layer"] >= 0]
    bobbin = shapes[shapes["kind"] == "bobbin"]
    # Conductors stay in the winding space, everything in the core window.
    assert _inside(conductors, 0.0, 0.0, width, breadth)
    assert _inside(shapes, -wall, -wall, width, breadth + wall)
    # The bobbin lies outside the winding space, so it cannot overlap a conductor.
    assert ((bobbin["x1"] <= 0) | (bobbin["y1"] <= 0) | (bobbin["y0"] >= breadth)).all()
    assert len(bobbin) == (3 if wall > data.GEOMETRY_TOLERANCE_MM else 0)


def test_winding_drawing_of_every_shortlisted_design(run_dir: Path) -> None:
    kinds_seen = set()
    for record in _records(run_dir):
        winding = record["winding"]
        shapes = data.winding_drawing_shapes(record)
        conductors = shapes[shapes["layer"] >= 0]
        kinds_seen.add(winding["kind"])
        # One drawn conductor per strand of every turn.
        assert len(conductors) == record["turns"] * record["parallel"]
        assert conductors["layer"].nunique() == record["layers"]
        assert conductors["turn"].nunique() == record["turns"]
        assert set(conductors["kind"]) == {winding["kind"]}
        _check_drawing(shapes, winding)
        # The drawn build is the record's build, to within one conductor.
        assert conductors["x1"].max() == pytest.approx(
            winding["build_mm"], abs=winding["conductor_outer_mm"]
        )
        if winding["kind"] != "foil":
            centres = np.column_stack(
                [
                    (conductors["x0"] + conductors["x1"]) / 2,
                    (conductors["y0"] + conductors["y1"]) / 2,
                ]
            )
            gaps = np.linalg.norm(centres[:, None, :] - centres[None, :, :], axis=-1)
            np.fill_diagonal(gaps, np.inf)
            # Circles of diameter d with centres >= d apart do not overlap (geometry).
            assert gaps.min() >= winding["conductor_outer_mm"] - 1e-9
        else:
            assert np.allclose(conductors["x1"] - conductors["x0"], winding["foil_thickness_mm"])
            assert np.allclose(conductors["y1"] - conductors["y0"], winding["window_breadth_mm"])
    assert kinds_seen == {"round", "litz", "foil"}


def test_winding_drawing_refuses_what_does_not_fit(run_dir: Path) -> None:
    record = _records(run_dir)[0]
    too_many_layers = json.loads(json.dumps(record))
    too_many_layers["winding"]["layers"] += 1
    with pytest.raises(ValueError, match="layers"):
        data.winding_drawing_shapes(too_many_layers)
    too_wide = json.loads(json.dumps(record))
    too_wide["winding"]["conductors_per_layer"] = 200
    too_wide["winding"]["layers"] = 1
    with pytest.raises(ValueError, match="window offers"):
        data.winding_drawing_shapes(too_wide)
    too_deep = json.loads(json.dumps(record))
    too_deep["winding"]["window_width_mm"] = 1.0
    with pytest.raises(ValueError, match="do not fit"):
        data.winding_drawing_shapes(too_deep)


@settings(max_examples=150, deadline=None)
@given(
    breadth=st.floats(2.0, 80.0),
    width=st.floats(1.0, 30.0),
    wall=st.floats(0.0, 2.0),
    outer=st.floats(0.05, 5.0),
    turns=st.integers(1, 200),
    parallel=st.integers(1, 10),
    kind=st.sampled_from(["round", "litz", "foil"]),
)
def test_winding_drawing_property(breadth, width, wall, outer, turns, parallel, kind) -> None:
    per_layer = 1 if kind == "foil" else max(1, math.floor(breadth / outer))
    layers = math.ceil(turns * parallel / per_layer)
    winding = {
        "kind": kind,
        "conductor_outer_mm": outer,
        "foil_thickness_mm": 0.8 * outer if kind == "foil" else None,
        "conductors_per_layer": per_layer,
        "layers": layers,
        "turns": turns,
        "parallel": parallel,
        "window_breadth_mm": breadth,
        "window_width_mm": width,
        "bobbin_wall_mm": wall,
        "build_mm": layers * outer,
    }
    record = {"design_id": "DX", "winding": winding}
    # Sizes within the drawing's stated slack of the window are neither fit nor misfit.
    slack = data.GEOMETRY_TOLERANCE_MM + data.GEOMETRY_RELATIVE_TOLERANCE * max(breadth, width)
    assume(abs(layers * outer - width) > slack)
    assume(kind == "foil" or abs(per_layer * outer - breadth) > slack)
    fits = (kind == "foil" or per_layer * outer <= breadth) and layers * outer <= width
    if not fits:
        with pytest.raises(ValueError):
            data.winding_drawing_shapes(record)
        return
    shapes = data.winding_drawing_shapes(record)
    numbers = shapes[["x0", "y0", "x1", "y1"]].to_numpy(dtype=float)
    assert np.all(np.isfinite(numbers))
    assert (shapes["layer"] >= 0).sum() == turns * parallel
    _check_drawing(shapes, winding)


def test_loss_breakdown_adds_up_per_operating_point(run_dir: Path) -> None:
    for record in _records(run_dir):
        table = data.loss_breakdown(record)
        assert len(table) == 4 * len(record["per_operating_point"])
        sums = table.groupby("operating_point", sort=False)["loss_W"].sum()
        for point in record["per_operating_point"]:
            assert sums[point["name"]] == pytest.approx(point["total_loss_W"], rel=1e-6)
        shares = table.drop_duplicates("operating_point")["time_share"]
        assert shares.sum() == pytest.approx(1.0)


def test_loss_breakdown_refuses_inconsistent_totals(run_dir: Path) -> None:
    record = _records(run_dir)[0]
    record["per_operating_point"][1]["total_loss_W"] *= 1.1
    with pytest.raises(ValueError, match="add up"):
        data.loss_breakdown(record)


def test_margin_table_limits_and_directions(run_dir: Path) -> None:
    record = _records(run_dir)[0]
    table = data.margin_table(record).set_index("quantity")
    assert table["within"].all()
    flux = table.loc["Peak flux density"]
    assert flux["share"] == pytest.approx(
        record["peak_flux_T"] / record["margins"]["flux_limit_T"]
    )
    assert flux["headroom"] == pytest.approx(1 - flux["share"])
    assert table.loc["Inductance kept at peak", "sense"] == "min"
    # The limit applies to the hot spot, shown with its band between thermal models.
    hot = table.loc["Hot-spot temperature"]
    assert hot["value"] == record["hotspot_temperature_C"]
    assert (hot["band_low"], hot["band_high"]) == tuple(record["temperature_band_C"])
    assert np.isnan(flux["band_low"])

    record["peak_flux_T"] = 1.2 * record["margins"]["flux_limit_T"]
    record["margins"]["inductance_at_peak_fraction"] = 0.5
    worse = data.margin_table(record).set_index("quantity")
    assert not worse.loc["Peak flux density", "within"]
    assert worse.loc["Peak flux density", "headroom"] == pytest.approx(-0.2)
    assert not worse.loc["Inductance kept at peak", "within"]
    assert worse.loc["Inductance kept at peak", "headroom"] == pytest.approx(0.5 / 0.7 - 1)


def test_elimination_table_shares(run_dir: Path) -> None:
    run = data.load_run(run_dir)
    table = data.elimination_table(run)
    counts = run.meta["counts"]
    assert list(table["removed"]) == sorted(counts["eliminated"].values(), reverse=True)
    assert np.allclose(table["share"], table["removed"] / counts["total"])
    assert (table["meaning"] != "").all()

    run.meta["counts"]["eliminated"]["brand_new_limit"] = 5
    run.meta["counts"]["total"] = 0
    extended = data.elimination_table(run)
    assert extended.set_index("constraint").loc["brand_new_limit", "meaning"] == ""
    assert (extended["share"] == 0).all()


def test_input_tables(run_dir: Path) -> None:
    run = data.load_run(run_dir)
    points = data.operating_points_table(run)
    assert list(points["name"]) == ["low line", "nominal", "high line"]
    assert points["time_share"].sum() == pytest.approx(1.0)
    limits = data.limits_table(run).set_index("limit")
    assert limits.loc["max temperature", "unit"] == "°C"
    assert limits.loc["max height", "unit"] == "mm"
    assert limits.loc["flux margin", "unit"] == ""
    facts = dict(data.header_facts(run))
    assert facts["Catalogue"] == run.meta["catalog_hash"][:12]
    assert facts["Run"] == "2025-01-14 09:30"


def test_build_sheet_table(run_dir: Path, hostile: dict[str, str]) -> None:
    records = {r["design_id"]: r for r in _records(run_dir)}
    knee = next(r for r in records.values() if r["knee"])
    sheet = dict(data.build_sheet_table(knee, "EUR").itertuples(index=False, name=None))
    assert sheet["Core"] == hostile["core"]  # raw here; the page escapes it
    assert sheet["Turns"] == str(knee["turns"])
    assert sheet["Parallel conductors"] == str(knee["parallel"])
    assert sheet["Conductors per layer"] == str(knee["winding"]["conductors_per_layer"])
    assert "Cost [EUR]" in sheet
    assert sheet["How the gap is made"].startswith("ground centre leg")
    assert sheet["Order: bobbin"].startswith("1 · ")
    assert sheet["Order: core half"].startswith(f"{2 * knee['stack']} · ")
    powder = next(r for r in records.values() if r["gap_mm"] == 0)
    assert dict(data.build_sheet_table(powder, "").values)["How the gap is made"].startswith(
        "none")


def test_near_miss_table_when_nothing_is_feasible(tmp_path: Path, make_run) -> None:
    run = data.load_run(make_run(tmp_path, feasible=False))
    assert run.pareto.empty and run.shortlist == []
    misses = data.near_miss_table(run)
    assert list(misses["worst_constraint"]) == ["temperature", "saturation", "fill_factor"]
    assert data.pair_views(run)[0].front_ids == ()
