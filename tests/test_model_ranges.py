"""Validity ranges owned by the physics: stages return per-candidate flags, a material used
outside its loss fit is excluded (``material_range``) unless the study asks to flag it."""

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from optimag import model, records
from optimag.catalog import load_catalog
from optimag.errors import InputError
from optimag.search.exhaustive import explore_exhaustive, magnetic_grid
from optimag.study import load_study
from tests.search.conftest import write_tiny_study

ROOT = Path(__file__).resolve().parents[1]


def _space(tmp_path, extra=""):
    # 200 kHz: fer-lowf's fit (25-150 kHz) does not cover it, fer-midf's and pwd-60u's do.
    path = write_tiny_study(tmp_path, extra=extra)
    text = path.read_text(encoding="utf-8").replace(
        "switching_frequency_kHz = 150", "switching_frequency_kHz = 200"
    )
    path.write_text(text, encoding="utf-8")
    study = load_study(path)
    return study, model.build_design_space(study, load_catalog(study.catalog.path))


def _material_candidates(space, material_id):
    mag = magnetic_grid(space)
    rows = np.flatnonzero(space.materials.ids[mag["material"]] == material_id)
    n_w, n_p = len(space.wires.ids), len(space.parallels)
    rows, wire, parallel = (a.ravel() for a in np.meshgrid(
        rows, np.arange(n_w), space.parallels, indexing="ij"))
    assert n_w * n_p
    return model.Candidates(
        core=mag["core"][rows], stack=mag["stack"][rows], material=mag["material"][rows],
        turns=mag["turns"][rows], gap_option=mag["gap_option"][rows], wire=wire,
        parallel=parallel,
    )


def test_a_material_outside_its_fit_is_excluded_and_counted(tmp_path):
    study, space = _space(tmp_path)
    assert space.requirements.outside_fit == "exclude"
    outcome = explore_exhaustive(space, list(study.search.objectives))
    assert outcome.eliminated["material_range"] > 0
    front_materials = set(space.materials.ids[outcome.front.payload["material"]])
    assert front_materials and "fer-lowf" not in front_materials
    cands = _material_candidates(space, "fer-lowf")
    metrics = model.evaluate(space, cands)
    assert metrics["outside_material_fit"].all()
    assert not metrics["feasible"].any()
    first = metrics["first_violated"]
    range_index = model.CONSTRAINTS.index("material_range")
    # Attributed to material_range unless an earlier constraint already failed.
    assert np.all((first == range_index) | ((first >= 0) & (first < range_index)))


def test_flag_keeps_such_designs_and_marks_them(tmp_path):
    study, space = _space(tmp_path, extra='\n[model]\noutside_fit = "flag"\n')
    assert space.requirements.outside_fit == "flag"
    outcome = explore_exhaustive(space, list(study.search.objectives))
    assert outcome.eliminated["material_range"] == 0
    cands = _material_candidates(space, "fer-lowf")
    metrics = model.evaluate(space, cands)
    kept = np.flatnonzero(metrics["feasible"])
    assert kept.size
    picked = cands.take(kept[:3])
    picked_metrics = model.evaluate(space, picked)
    for record in records.design_records(space, picked, picked_metrics,
                                         [f"d{i}" for i in range(len(picked))]):
        assert "material_fit" in record["model_flags"].split(";")
        assert any("Steinmetz fit of fer-lowf" in note for note in record["model_notes"])
    # pareto.csv and every export carry the column.
    assert "model_flags" in records.PARETO_COLUMNS
    assert "model_flags" in records.SHORTLIST_COLUMNS


def test_outside_fit_accepts_only_its_two_choices(tmp_path):
    path = write_tiny_study(tmp_path, extra='\n[model]\noutside_fit = "ignore"\n')
    with pytest.raises(InputError, match="outside_fit"):
        load_study(path)


@pytest.mark.parametrize("name", ["cargo-bike-buck", "compute-pol-buck"])
def test_example_study_fronts_stay_inside_their_materials_fits(name):
    """Done-when of the range work: nothing on an example study's front is outside its
    material's fit (these two studies have materials whose fit misses their frequency)."""
    study = load_study(ROOT / "studies" / f"{name}.toml")
    space = model.build_design_space(study, load_catalog(study.catalog.path))
    assert study.model.outside_fit == "exclude"
    outcome = explore_exhaustive(space, list(study.search.objectives))
    assert outcome.eliminated["material_range"] > 0
    payload = outcome.front.payload
    cands = model.Candidates(**{f: payload[f] for f in payload})
    assert len(cands)
    assert not model.evaluate(space, cands)["outside_material_fit"].any()
    flagged = dataclasses.replace(
        space, requirements=dataclasses.replace(space.requirements, outside_fit="flag")
    )
    assert explore_exhaustive(flagged, list(study.search.objectives)).eliminated[
        "material_range"] == 0
