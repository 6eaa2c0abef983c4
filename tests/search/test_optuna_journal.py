"""The run folder's journal file, and run folders from before it (SQLite ``optuna.db``).

The journal's format is optuna's own (JSON lines): optuna's `JournalFileBackend` is the
independent reader and writer these tests compare with.
"""

import json
import os
import subprocess
import sys

import numpy as np
import optuna
import pytest
from optuna.storages import JournalStorage
from optuna.storages.journal import JournalFileBackend
from optuna.trial import TrialState

from optimag import model
from optimag.catalog import load_catalog
from optimag.search import optuna_search as osearch
from optimag.search.optuna_search.journal import JournalFile
from optimag.study import load_study

COMPLETE = (TrialState.COMPLETE,)


def _objective(trial):
    x = trial.suggest_float("x", 0.0, 1.0)
    n = trial.suggest_int("n", 1, 9)
    trial.set_user_attr("tag", f"t{n}")
    return x * n, x - n


def _trials(study):
    return [(t.number, t.params, t.values, t.user_attrs)
            for t in study.get_trials(deepcopy=False, states=COMPLETE)]


def test_optuna_reads_our_journal_and_we_read_optunas(tmp_path):
    ours = tmp_path / "ours.journal"
    study = optuna.create_study(storage=JournalStorage(JournalFile(ours)), study_name="s",
                                directions=["minimize", "minimize"],
                                sampler=optuna.samplers.RandomSampler(seed=1))
    study.optimize(_objective, n_trials=30)
    theirs = optuna.load_study(study_name="s", storage=JournalStorage(JournalFileBackend(
        str(ours))))
    assert _trials(theirs) == _trials(study)
    # And the other way round, continuing the same file with optuna's backend.
    theirs.sampler = optuna.samplers.RandomSampler(seed=2)
    theirs.optimize(_objective, n_trials=5)
    again = optuna.load_study(study_name="s", storage=JournalStorage(JournalFile(ours)))
    assert _trials(again) == _trials(theirs) and len(_trials(again)) == 35


def test_a_line_still_being_written_is_left_for_later(tmp_path):
    path = tmp_path / "x.journal"
    journal = JournalFile(path)
    journal.append_logs([{"op_code": 0, "n": 1}, {"op_code": 0, "n": 2}])
    with open(path, "ab") as file:
        file.write(b'{"op_code":0,"n"')  # a writer in the middle of its line
    assert [log["n"] for log in journal.read_logs(0)] == [1, 2]
    with open(path, "ab") as file:
        file.write(b':3}\n')
    assert [log["n"] for log in journal.read_logs(2)] == [3]
    assert [log["n"] for log in journal.read_logs(0)] == [1, 2, 3]
    journal.sync()  # waits for a flush under way, then flushes what is left
    assert not journal.unsynced


def test_a_damaged_line_is_named(tmp_path):
    path = tmp_path / "x.journal"
    path.write_bytes(b'{"op_code":0}\nnot json\n{"op_code":0}\n')
    with pytest.raises(ValueError, match=r"line 2 of the journal is damaged"):
        list(JournalFile(path).read_logs(0))


def test_a_symlinked_journal_is_refused(tmp_path):
    (tmp_path / "real.journal").write_bytes(b"")
    (tmp_path / "link.journal").symlink_to(tmp_path / "real.journal")
    with pytest.raises(OSError):
        JournalFile(tmp_path / "link.journal")


WRITER = """
import sys, optuna
from optuna.storages import JournalStorage
from optimag.search.optuna_search.journal import JournalFile
optuna.logging.set_verbosity(optuna.logging.WARNING)
study = optuna.load_study(study_name="s", storage=JournalStorage(JournalFile(sys.argv[1])))
trial = optuna.trial.create_trial(params={"x": 0.5}, values=[1.0],
    distributions={"x": optuna.distributions.FloatDistribution(0, 1)})
for _ in range(150):
    study.add_trial(trial)
"""


def test_two_processes_append_to_one_journal(tmp_path):
    path = tmp_path / "shared.journal"
    optuna.create_study(storage=JournalStorage(JournalFile(path)), study_name="s")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    writers = [subprocess.Popen([sys.executable, "-c", WRITER, str(path)], env=env)
               for _ in range(2)]
    assert all(w.wait(timeout=120) == 0 for w in writers)
    lines = path.read_bytes().splitlines()
    assert all(json.loads(line) for line in lines)  # no two appends interleaved
    trials = optuna.load_study(study_name="s", storage=JournalStorage(
        JournalFileBackend(str(path)))).get_trials()
    assert sorted(t.number for t in trials) == list(range(300))


def test_a_folder_with_an_older_sqlite_storage_resumes(tmp_path, tiny_study_path):
    """A run folder written before the journal: its ``optuna.db`` holds trials in the
    older form (violations as optuna's list-valued constraints, no optimag user
    attribute but the evaluated design). The run goes on in that database and reads
    those trials right."""
    run_dir = tmp_path / "run"
    run_dir.mkdir()
    url = f"sqlite:///{run_dir / 'optuna.db'}"
    first = osearch.explore_optuna(tiny_study_path, trials=40, seed=1, storage=url)
    assert first.record["optuna"]["storage"] == url
    study = optuna.load_study(study_name="tiny-buck", storage=url)
    trials = study.get_trials(deepcopy=False, states=COMPLETE)
    told = np.array([t.user_attrs["optimag.violations"] for t in trials])
    older = [optuna.trial.create_trial(
        params=t.params, distributions=t.distributions, values=t.values,
        user_attrs={k: v for k, v in t.user_attrs.items() if k == "optimag.design"},
        system_attrs={"constraints": list(v)}) for t, v in zip(trials, told, strict=True)]
    attrs = study.user_attrs
    optuna.delete_study(study_name="tiny-buck", storage=url)
    older_study = optuna.create_study(study_name="tiny-buck", storage=url,
                                      directions=["minimize"] * 3)
    older_study.add_trials(older)
    for key, value in attrs.items():
        older_study.set_user_attr(key, value)

    assert osearch.folder_storage(run_dir) == url
    second = osearch.explore_optuna(tiny_study_path, trials=100, seed=1, run_dir=run_dir)
    assert second.record["optuna"]["storage"] == url
    assert second.record["optuna"]["trials_this_run"] == 60
    assert not (run_dir / "optuna.journal").exists()
    counts = second.record["counts"]
    assert counts["total"] == 100
    assert counts["feasible"] + sum(counts["eliminated"].values()) == 100
    problem = osearch.OptunaProblem(load_study(tiny_study_path),
                                    load_catalog(load_study(tiny_study_path).catalog.path))
    crop = osearch.harvest(optuna.load_study(study_name="tiny-buck", storage=url), problem)
    assert crop.violations.shape == (100, len(model.CONSTRAINTS))
    _, violations = problem.evaluate(crop.table)
    np.testing.assert_allclose(crop.violations, violations)
