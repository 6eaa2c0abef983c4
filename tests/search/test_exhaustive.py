"""The exhaustive search against a plain per-design loop, and its bookkeeping."""

import itertools
import json

import numpy as np
import pytest

from optimag import model
from optimag.catalog import load_catalog
from optimag.search.exhaustive import explore_exhaustive, magnetic_grid, space_size
from optimag.search.pareto import dominated_by_any
from optimag.search.run import explore
from optimag.study import load_study


def _space(path):
    study = load_study(path)
    return study, model.build_design_space(study, load_catalog(study.catalog.path))


def _every_candidate(space):
    mag = magnetic_grid(space)
    rows = []
    for i in range(len(mag["core"])):
        for wire, par in itertools.product(range(len(space.wires.ids)), space.parallels):
            rows.append((mag["core"][i], mag["stack"][i], mag["material"][i], mag["turns"][i],
                         mag["gap_option"][i], wire, par))
    return np.array(rows)


def test_front_equals_per_design_brute_force(tiny_study_path):
    """Definition check: evaluate every design alone, filter feasible, compare fronts."""
    study, space = _space(tiny_study_path)
    objectives = list(study.search.objectives)
    rows = _every_candidate(space)
    assert len(rows) == space_size(space)
    feasible_rows, feasible_obj = [], []
    for row in rows:
        cand = model.Candidates.from_arrays(**dict(zip(
            ("core", "stack", "material", "turns", "gap_option", "wire", "parallel"), row,
            strict=True)))
        metrics = model.evaluate(space, cand)
        if metrics["feasible"][0]:
            feasible_rows.append(tuple(row))
            feasible_obj.append(model.objective_matrix(metrics, objectives)[0])
    feasible_obj = np.array(feasible_obj)
    assert len(feasible_rows) > 10, "the tiny study must have feasible designs"
    brute = {
        feasible_rows[i] for i in range(len(feasible_rows))
        if not dominated_by_any(feasible_obj[i : i + 1], feasible_obj)[0]
    }
    outcome = explore_exhaustive(space, objectives, chunk_size=500)
    found = set(zip(*(outcome.front.payload[f].tolist() for f in
                      ("core", "stack", "material", "turns", "gap_option", "wire", "parallel")),
                    strict=True))
    assert found == brute
    assert outcome.feasible == len(feasible_rows)
    assert outcome.feasible + sum(outcome.eliminated.values()) == outcome.total == len(rows)


def test_shortlist_is_reproducible_and_undominated(tiny_study_path):
    first = explore(tiny_study_path, top=8)
    second = explore(tiny_study_path, top=8)
    assert len(first.pareto) > 0
    assert first.record["diagnosis"] is None  # only an infeasible run is diagnosed
    assert first.pareto.drop(columns=[]).equals(second.pareto)
    objectives = ["volume_cm3", "weighted_loss_W", "cost"]
    front = first.pareto[objectives].to_numpy()
    assert not dominated_by_any(front, front).any()
    # Each short-listed design evaluated alone reproduces its recorded figures.
    space = first.space
    for rec in first.shortlist_records:
        cand = model.Candidates.from_arrays(
            core=list(space.cores.ids).index(rec["core"]),
            stack=rec["stack"],
            material=list(space.materials.ids).index(rec["material"]),
            turns=rec["turns"],
            gap_option=0,
            wire=list(space.wires.ids).index(rec["wire"]),
            parallel=rec["parallel"],
        )
        metrics = model.evaluate(space, cand)
        assert metrics["feasible"][0]
        assert metrics["weighted_loss_W"][0] == pytest.approx(rec["weighted_loss_W"], rel=1e-5)
        assert metrics["volume_cm3"][0] == pytest.approx(rec["volume_cm3"], rel=1e-5)
        assert metrics["cost"][0] == pytest.approx(rec["cost"], rel=1e-5)
        assert metrics["gap_m"][0] * 1e3 == pytest.approx(rec["gap_mm"], rel=1e-5, abs=1e-9)
    # The knee comes first.
    assert first.shortlist_records[0]["knee"]
    json.dumps(first.record, allow_nan=False)


def test_no_feasible_design_gives_counts_and_near_misses(make_tiny_study, capsys, tmp_path):
    # 40 degC of headroom is impossible at 0.05 W budget: every design fails the loss budget
    # or an earlier constraint.
    budget = "max_fill_factor = 0.5\nmax_loss_W = 0.005"
    path = make_tiny_study(replace={"max_fill_factor = 0.5": budget})
    result = explore(path)
    assert len(result.pareto) == 0
    counts = result.record["counts"]
    assert counts["feasible"] == 0
    assert counts["eliminated"]["loss_budget"] > 0
    assert sum(counts["eliminated"].values()) == counts["total"]
    assert 1 <= len(result.near_miss_records) <= 5
    assert all(r["worst_constraint"] for r in result.near_miss_records)

    from optimag.cli import main

    code = main(["explore", str(path), "--out", str(tmp_path / "run")])
    out = capsys.readouterr().out
    assert code == 1
    assert "No candidate meets every constraint" in out
    assert "loss_budget" in out
    assert "Nearest misses" in out
    record = json.loads((tmp_path / "run" / "run.json").read_text())
    assert record["counts"]["feasible"] == 0 and record["near_misses"]


def test_chunk_size_does_not_change_the_front(tiny_study_path):
    study, space = _space(tiny_study_path)
    objectives = list(study.search.objectives)
    small = explore_exhaustive(space, objectives, chunk_size=97)
    large = explore_exhaustive(space, objectives, chunk_size=1_000_000)
    assert small.eliminated == large.eliminated
    order_s = np.lexsort(small.front.objectives.T)
    order_l = np.lexsort(large.front.objectives.T)
    np.testing.assert_allclose(small.front.objectives[order_s], large.front.objectives[order_l])


def test_interrupt_keeps_what_was_found(tiny_study_path):
    """Ctrl-C (KeyboardInterrupt) stops the pass cleanly with the partial front."""
    study, space = _space(tiny_study_path)
    calls = []

    def stop_after_a_few(done, total):
        calls.append(done)
        if len(calls) == 4:
            raise KeyboardInterrupt

    outcome = explore_exhaustive(space, list(study.search.objectives), chunk_size=50,
                                 progress=stop_after_a_few)
    assert outcome.interrupted
    assert len(calls) == 4
    full = explore_exhaustive(space, list(study.search.objectives))
    assert sum(outcome.eliminated.values()) + outcome.feasible < full.total


def test_unknown_filter_id_is_reported_with_suggestion(make_tiny_study, capsys):
    from optimag.cli import main

    path = make_tiny_study(replace={'"fer-midf"': '"fer-mid"'})
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "search.materials" in err and "did you mean 'fer-midf'" in err


def test_volume_and_mass_limits_cut_the_front_where_they_should(make_tiny_study):
    free = explore(make_tiny_study())
    volume = free.pareto["volume_cm3"].to_numpy()
    mass = free.pareto["mass_g"].to_numpy()
    # Just above the median (exported figures are rounded to six significant digits).
    volume_limit = float(np.median(volume)) * (1 + 1e-4)
    mass_limit = float(np.median(mass)) * (1 + 1e-4)
    limits = f"max_volume_cm3 = {volume_limit!r}\nmax_mass_g = {mass_limit!r}\n"
    cut = explore(make_tiny_study(replace={"max_fill_factor = 0.5": "max_fill_factor = 0.5\n"
                                           + limits}))
    counts = cut.record["counts"]
    assert counts["eliminated"]["volume"] > 0 and counts["eliminated"]["mass"] > 0
    assert sum(counts["eliminated"].values()) + counts["feasible"] == counts["total"]
    assert cut.pareto["volume_cm3"].max() <= volume_limit
    assert cut.pareto["mass_g"].max() <= mass_limit
    # Every free-front design within both limits is still feasible, so it is on the new
    # front or dominated by a member of it (the limits remove designs, they add none).
    inside = (volume <= volume_limit) & (mass <= mass_limit)
    assert inside.any()
    columns = ["volume_cm3", "weighted_loss_W", "cost"]
    new_front = cut.pareto[columns].to_numpy()
    for row in free.pareto.loc[inside, columns].to_numpy():
        assert np.any(np.all(new_front <= row * (1 + 1e-9), axis=1))


def test_blocks_and_wire_slices_do_not_change_the_front(tiny_study_path):
    """Stage 1 in blocks of one group and stage 2 in slices of one wire give the same front
    and counts as one pass over the whole space."""
    from optimag.search.exhaustive import SearchPlan, plan

    study, space = _space(tiny_study_path)
    objectives = list(study.search.objectives)
    whole = explore_exhaustive(space, objectives)
    size = space_size(space)
    tiny = SearchPlan(candidates=size, magnetic_block=1, chunk=len(space.parallels),
                      peak_bytes=0)
    pieces = explore_exhaustive(space, objectives, search_plan=tiny)
    assert pieces.total == whole.total == size == plan(space).candidates
    assert pieces.eliminated == whole.eliminated and pieces.feasible == whole.feasible
    assert pieces.stage_sizes["magnetic"] == len(magnetic_grid(space)["core"])
    order_p = np.lexsort(pieces.front.objectives.T)
    order_w = np.lexsort(whole.front.objectives.T)
    np.testing.assert_array_equal(pieces.front.objectives[order_p],
                                  whole.front.objectives[order_w])


def test_space_size_counts_without_building_the_grid(tiny_study_path):
    """The closed-form count equals the number of rows of the grid times the windings."""
    _, space = _space(tiny_study_path)
    rows = len(magnetic_grid(space)["core"])
    assert space_size(space) == rows * len(space.wires.ids) * len(space.parallels)


def test_oversized_space_is_refused_before_the_search(tmp_path, capsys):
    """A space above the candidate limit is refused at once (exit 2) with its size and the
    way out; nothing is evaluated, no run is written."""
    from pathlib import Path

    from optimag.cli import main

    root = Path(__file__).resolve().parents[2]
    text = (root / "studies" / "cargo-bike-buck.toml").read_text(encoding="utf-8")
    text = text.replace('path = "../catalogs/demo"', f'path = "{root}/catalogs/demo"')
    for key, value in (("turns_max", 10_000), ("parallel_max", 100), ("stack_max", 3)):
        text = "\n".join(f"{key} = {value}" if line.startswith(f"{key} =") else line
                         for line in text.splitlines())
    study = tmp_path / "big.toml"
    study.write_text(text, encoding="utf-8")
    assert main(["explore", str(study), "--out", str(tmp_path / "run")]) == 2
    captured = capsys.readouterr()
    err = captured.err
    assert "candidates" in err and "--force" in err and "Traceback" not in err
    assert "estimated peak memory" in captured.out
    assert not (tmp_path / "run" / "run.json").exists()


def test_force_runs_a_space_above_the_limit(tiny_study_path, monkeypatch, capsys):
    from optimag.cli import main
    from optimag.search import run

    monkeypatch.setattr(run, "MAX_CANDIDATES", 10)
    out = tiny_study_path.parent / "run"
    assert main(["explore", str(tiny_study_path), "--out", str(out)]) == 2
    assert "above the exhaustive search's limit of 10" in capsys.readouterr().err
    assert main(["explore", str(tiny_study_path), "--out", str(out), "--force"]) in (0, 1)
    assert (out / "run.json").is_file()
