"""Honest resume: stored trials are reused only under the study that scored them."""

import hashlib
import json
from pathlib import Path

import optuna
import pandas as pd
import pytest

from optimag import cli
from optimag.catalog import load_catalog
from optimag.errors import StorageError
from optimag.search import optuna_search as osearch
from optimag.search.fingerprint import fingerprint_changes, fingerprint_content, study_fingerprint
from optimag.study import load_study

TIGHTER = {
    "max_temperature_C = 100": "max_temperature_C = 80\nmax_loss_W = 0.6",
}


def _digest(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.iterdir()) if p.is_file() and not p.name.startswith(".")}


def test_fingerprint_ignores_run_settings_and_sees_every_figure_input(make_tiny_study):
    path = make_tiny_study()
    study = load_study(path)
    catalog = load_catalog(study.catalog.path)
    base = study_fingerprint(study, catalog)
    same = make_tiny_study(replace={'title = "Tiny buck for search tests"': 'title = "x"'})
    text = same.read_text() + "\n"
    same.write_text(text.replace("[search]", "[search]\ntrials = 77\nseed = 5\nbatch_size = 9"))
    assert study_fingerprint(load_study(same), catalog) == base
    for old, new in [("max_temperature_C = 100", "max_temperature_C = 99"),
                     ("load_A = 3.0", "load_A = 3.1"), ("turns_max = 30", "turns_max = 31"),
                     ("inductance_uH = 33.0", "inductance_uH = 34.0")]:
        changed = load_study(make_tiny_study(replace={old: new}))
        assert study_fingerprint(changed, catalog) != base, old
    changed = load_study(make_tiny_study(replace=TIGHTER))
    changes = fingerprint_changes(fingerprint_content(study, catalog),
                                  fingerprint_content(changed, catalog))
    assert changes == ["limits.max_loss_W", "limits.max_temperature_C"]


def test_stale_resume_is_refused_and_re_evaluate_rescores(make_tiny_study, tmp_path, capsys):
    """The reported case: run optuna into R, tighten max_temperature_C and add max_loss_W,
    run again with more trials into R."""
    study = make_tiny_study()
    out = tmp_path / "R"
    first = cli.main(["explore", str(study), "--strategy", "optuna", "--trials", "64",
                      "--seed", "4", "--out", str(out)])
    assert first == 0
    before = _digest(out)
    tightened = make_tiny_study(replace=TIGHTER)
    assert tightened == study
    capsys.readouterr()
    code = cli.main(["explore", str(study), "--strategy", "optuna", "--trials", "100",
                     "--seed", "4", "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err
    refusal = [line for line in err.splitlines() if line.startswith("optimag:")]
    assert len(refusal) == 1  # one line says it all
    assert "limits.max_temperature_C" in refusal[0] and "limits.max_loss_W" in refusal[0]
    assert "--re-evaluate" in refusal[0] and "64 stored trials" in refusal[0]
    assert _digest(out) == before  # nothing written, the old run kept

    code = cli.main(["explore", str(study), "--strategy", "optuna", "--trials", "100",
                     "--seed", "4", "--out", str(out), "--re-evaluate"])
    assert code in (0, 1)
    record = json.loads((out / "run.json").read_text())
    assert record["optuna"]["re_evaluated"]["trials"] == 64
    assert record["optuna"]["re_evaluated"]["changes"] == [
        "limits.max_loss_W", "limits.max_temperature_C"]
    assert record["optuna"]["complete_trials"] == 100
    assert record["fingerprint"] == study_fingerprint(
        load_study(study), load_catalog(load_study(study).catalog.path))
    front = pd.read_csv(out / "pareto.csv")
    assert len(front) and (front["temperature_C"] <= 80 + 1e-6).all()
    assert (front["weighted_loss_W"] <= 0.6 + 1e-9).all()
    # Every stored trial now carries the current study's figures: a trial that the
    # tightened limits rule out is stored as infeasible.
    url = str(out / "optuna.journal")
    disk = optuna.load_study(study_name="tiny-buck", storage=osearch.open_storage(url))
    problem = osearch.OptunaProblem(load_study(study), load_catalog(
        load_study(study).catalog.path))
    crop = osearch.harvest(disk, problem)
    objectives, violations = problem.evaluate(crop.table)
    assert crop.violations == pytest.approx(violations)
    assert crop.objectives == pytest.approx(objectives)
    # Resuming again under the same study needs no flag.
    again = osearch.explore_optuna(study, trials=110, seed=4, storage=url)
    assert again.record["optuna"]["complete_trials"] == 110


def test_worker_refuses_a_different_study(make_tiny_study, tmp_path):
    path = make_tiny_study()
    url = f"sqlite:///{tmp_path / 'shared.db'}"
    osearch.explore_optuna(path, trials=64, storage=url)
    other = make_tiny_study(replace=TIGHTER)
    with pytest.raises(StorageError, match=r"limits\.max_temperature_C.*--re-evaluate"):
        osearch.run_worker(url, "tiny-buck", study_file=other, trials=100)
