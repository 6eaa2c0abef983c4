"""One path for the command line and the library: `optimag.explore` runs what the study
asks, `optimag.write_run` writes the run folder and report."""

import json
import sys
from pathlib import Path

import pytest

import optimag
from optimag import cli
from optimag.errors import InputError

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "search"))
from conftest import write_tiny_study  # noqa: E402


def test_explore_runs_the_studys_optuna_strategy_with_its_custom_core(tmp_path):
    study = ROOT / "studies" / "custom-core-buck.toml"
    assert 'strategy = "optuna"' in study.read_text(encoding="utf-8")
    result = optimag.explore(study, trials=128, seed=3)
    record = result.record
    assert record["strategy"] == "optuna"
    assert record["optuna"]["complete_trials"] == 128 and record["optuna"]["seed"] == 3
    assert "custom_cores" in record  # [custom_core] was searched
    folder = optimag.write_run(result, tmp_path / "run")
    assert (folder / "report.html").is_file()
    assert json.loads((folder / "run.json").read_text())["strategy"] == "optuna"


def test_explore_strategy_argument_overrides_the_study(tmp_path):
    study = write_tiny_study(tmp_path)
    exhaustive = optimag.explore(study, top=3)
    assert exhaustive.record["strategy"] == "exhaustive"
    tuned = optimag.explore(study, strategy="optuna", trials=64, seed=2, top=3)
    assert tuned.record["strategy"] == "optuna"
    assert tuned.record["optuna"]["storage"] == "memory"
    with pytest.raises(InputError, match=r"search\.strategy"):
        optimag.explore(study, strategy="random")


def test_explore_in_a_storage_resumes(tmp_path):
    study = write_tiny_study(tmp_path)
    url = f"sqlite:///{tmp_path / 'trials.db'}"
    optimag.explore(study, strategy="optuna", trials=32, seed=1, storage=url)
    again = optimag.explore(study, strategy="optuna", trials=48, seed=1, storage=url)
    assert again.record["optuna"]["complete_trials"] == 48
    assert again.record["optuna"]["trials_this_run"] == 16


def test_the_command_calls_the_library(tmp_path, monkeypatch):
    calls = []
    real_explore, real_write = optimag.explore, optimag.write_run

    def explore(*args, **kwargs):
        calls.append(("explore", kwargs.get("strategy"), kwargs.get("trials")))
        return real_explore(*args, **kwargs)

    def write_run(*args, **kwargs):
        calls.append(("write_run",))
        return real_write(*args, **kwargs)

    monkeypatch.setattr(optimag, "explore", explore)
    monkeypatch.setattr(optimag, "write_run", write_run)
    study = write_tiny_study(tmp_path)
    code = cli.main(["explore", str(study), "--strategy", "optuna", "--trials", "40",
                     "--out", str(tmp_path / "run")])
    assert code in (0, 1)
    assert calls == [("explore", "optuna", 40), ("write_run",)]
