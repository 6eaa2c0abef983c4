"""Two `optimag worker` processes share one optuna study in PostgreSQL.

Needs a server: ``OPTIMAG_TEST_POSTGRES_URL`` (e.g.
``postgresql+psycopg2://postgres@127.0.0.1:55432/optimag_test``), which ``.ci/run`` starts
and exports. Skipped without it, except under CI (``CI=true``), where it must run.
"""

import os
import subprocess
import sys
import uuid

import numpy as np
import optuna
import pytest

from optimag import model
from optimag.search import optuna_search as osearch
from optimag.search.pareto import nondominated_mask

pytestmark = pytest.mark.postgres

URL = os.environ.get("OPTIMAG_TEST_POSTGRES_URL")
WORKERS, TARGET, BATCH = 2, 300, 32


@pytest.fixture
def postgres_url():
    if not URL:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail("CI must provide OPTIMAG_TEST_POSTGRES_URL (see .ci/run)")
        pytest.skip("OPTIMAG_TEST_POSTGRES_URL is not set: no PostgreSQL server to test with")
    return URL


def test_two_workers_share_one_study(postgres_url, make_tiny_study):
    name = f"tiny-buck-{uuid.uuid4().hex[:10]}"
    path = make_tiny_study(replace={'name = "tiny-buck"': f'name = "{name}"'})
    # The creating run does a first batch and records what the workers need.
    osearch.explore_optuna(path, trials=BATCH, storage=postgres_url, batch_size=BATCH)
    command = [sys.executable, "-m", "optimag.cli", "worker", "--storage", postgres_url,
               "--study", name, "--trials", str(TARGET), "--batch-size", str(BATCH)]
    env = {**os.environ, "PYTHONWARNINGS": "ignore"}
    try:
        workers = [subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                                    env=env) for _ in range(WORKERS)]
        outputs = [w.communicate(timeout=240) for w in workers]
        for worker, (_out, err) in zip(workers, outputs, strict=True):
            assert worker.returncode == 0, err.decode()[-2000:]
        added = [int(out.decode().split("worker added ")[1].split()[0]) for out, _ in outputs]
        assert all(n > 0 for n in added), f"both workers must contribute, got {added}"

        disk = optuna.load_study(study_name=name, storage=postgres_url)
        trials = disk.get_trials(deepcopy=False)
        complete = [t for t in trials if t.state == optuna.trial.TrialState.COMPLETE]
        # Each worker checks the count before each batch: the target is met and overshot
        # by at most (workers - 1) batches.
        assert TARGET <= len(complete) <= TARGET + (WORKERS - 1) * BATCH
        assert len(complete) == BATCH + sum(added)
        numbers = [t.number for t in trials]
        assert len(numbers) == len(set(numbers)), "a trial number is duplicated"
        assert sorted(numbers) == list(range(len(trials))), "a trial is missing"
        assert all(t.state == optuna.trial.TrialState.COMPLETE for t in trials)

        problem = osearch.load_problem_from_storage(disk)
        crop = osearch.harvest(disk, problem)
        feasible = np.flatnonzero(crop.feasible)
        assert feasible.size
        front = feasible[nondominated_mask(crop.objectives[feasible])]
        assert front.size
        assert nondominated_mask(crop.objectives[front]).all()
        space, candidates = problem.materialise(crop.table.take(front))
        assert model.evaluate(space, candidates)["feasible"].all()
    finally:
        optuna.delete_study(study_name=name, storage=postgres_url)
