"""`optimag verify`: a short-listed design's core, gap and winding window solved with the
finite-element solvers, its figures written into the run folder and shown on the build
sheet."""

import json

import pytest

from optimag.cli import main
from optimag.runfolder import write_run
from optimag.search.run import explore
from optimag.study import load_study
from tests.search.conftest import write_tiny_study

fem = pytest.importorskip("optimag.fem")

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    folder = tmp_path_factory.mktemp("verify")
    study = load_study(write_tiny_study(folder))
    result = explore(study, top=8)
    return write_run(result, folder / "run")


def _gapped(run_dir, family):
    designs = json.loads((run_dir / "shortlist.json").read_text())["designs"]
    chosen = [d for d in designs if d["gap_mm"] > 0 and d["family"] == family]
    if not chosen:
        pytest.skip(f"no gapped {family} design on this short-list")
    return chosen[0]


@pytest.mark.parametrize("family", ["pot", "E"])
def test_verify_writes_the_check_and_the_build_sheet_shows_it(run_dir, family, capsys):
    from optimag.verify import gapped_core

    design = _gapped(run_dir, family)
    code = main(["verify", str(run_dir), design["design_id"]])
    out = capsys.readouterr().out
    assert code == 0
    assert "Inductance, field solution" in out
    result = json.loads((run_dir / f"verify-{design['design_id']}.json").read_text())
    assert (run_dir / f"verify-{design['design_id']}.html").stat().st_size > 10_000
    # Two routes to the field-solution inductance: the check's own solves and the fem
    # module's reference_inductance for the same catalogue core.
    from optimag.catalog import load_catalog

    meta = json.loads((run_dir / "run.json").read_text())
    cores = load_catalog(meta["catalog_folder"]).cores
    row = cores[cores["id"] == design["core"]].iloc[0].to_dict()
    reference = fem.reference_inductance(gapped_core(row), design["gap_mm"] * 1e-3, "centre",
                                         design["inputs"]["mu_r"], design["stack"])
    expected = reference["inductance_per_turn2_H"] * design["turns"] ** 2 * 1e6
    assert result["inductance_fem_uH"] == pytest.approx(expected, rel=1e-9)
    assert result["inductance_model_uH"] == pytest.approx(design["inductance_uH"])
    # Ampère along the gap's mid-plane: next to the gap the field exceeds the 1-D field.
    assert result["field_fem_mT"][0] > result["field_one_d_mT"][0]
    assert 0.7 < result["winding_b2_closed_form_over_fem"] < 1.6
    report = (run_dir / "report.html").read_text(encoding="utf-8")
    assert "Field check (finite elements)" in report


def test_verify_unknown_design_and_no_gap_exit_2(run_dir, capsys):
    assert main(["verify", str(run_dir), "D9999"]) == 2
    err = capsys.readouterr().err
    assert "shortlist.json: design_id: no design 'D9999'" in err
    designs = json.loads((run_dir / "shortlist.json").read_text())["designs"]
    ungapped = [d for d in designs if d["gap_mm"] == 0]
    if ungapped:
        assert main(["verify", str(run_dir), ungapped[0]["design_id"]]) == 2
        assert "nothing to check" in capsys.readouterr().err
