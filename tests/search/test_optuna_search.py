"""The optuna strategy against the exhaustive search, the model and its own bookkeeping."""

import os
import signal
import subprocess
import sys
import time

import numpy as np
import optuna
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from optimag import model
from optimag.catalog import load_catalog
from optimag.errors import StorageError
from optimag.search import optuna_search as osearch
from optimag.search.pareto import dominated_by_any
from optimag.search.run import explore
from optimag.study import load_study

CUSTOM_E = """
[custom_core]
family = "E"
leg_width_mm = [3, 10]
leg_depth_mm = [3, 12]
window_breadth_mm = [5, 16]
window_width_mm = [2, 8]
bobbin_wall_mm = 0.6
price_base = 0.2
price_per_cm3 = 0.08
max_height_mm = 25
"""


def _problem(path):
    study = load_study(path)
    return osearch.OptunaProblem(study, load_catalog(study.catalog.path))


def _run_memory(problem, trials, seed=0, batch=32):
    ostudy = osearch.memory_study(problem, osearch.make_sampler("nsga2", seed))
    counts = osearch.run_trials(ostudy, problem, trials, batch)
    return ostudy, counts


def _objectives_of(result, objectives):
    return result.pareto[[model.OBJECTIVE_COLUMNS[o] for o in objectives]].to_numpy(float)


# --- against the exhaustive search (an independent, complete enumeration) ---------------


def test_front_agrees_with_exhaustive_on_tiny_space(tiny_study_path):
    study = load_study(tiny_study_path)
    catalog = load_catalog(study.catalog.path)
    objectives = list(study.search.objectives)
    exact = _objectives_of(explore(study, catalog), objectives)
    result = osearch.explore_optuna(study, catalog, trials=900, seed=3)
    found = _objectives_of(result, objectives)
    assert len(found)
    # Nothing optuna found beats the exact front, and it finds the best design of every
    # objective.
    assert not dominated_by_any(exact, found).any()
    np.testing.assert_allclose(found.min(axis=0), exact.min(axis=0), rtol=1e-9)
    # Every front design is feasible when the model evaluates it afresh.
    assert model.evaluate(result.space, result.front_candidates)["feasible"].all()
    assert result.record["strategy"] == "optuna"
    assert set(result.record["optuna"]) >= {"sampler", "seed", "trials", "storage",
                                             "study_name", "batch_size"}


def test_counts_add_up(tiny_study_path):
    result = osearch.explore_optuna(tiny_study_path, trials=200, seed=1)
    counts = result.record["counts"]
    assert counts["total"] == 200
    assert counts["feasible"] + sum(counts["eliminated"].values()) == 200


# --- what optuna is told ------------------------------------------------------------------


def test_told_values_are_the_models_figures(tiny_study_path):
    """Each trial's objectives and constraint values equal the model's own evaluation of
    the design, evaluated alone (no batching, no decoders)."""
    problem = _problem(tiny_study_path)
    ostudy, _ = _run_memory(problem, 96)
    crop = osearch.harvest(ostudy, problem)
    trials = ostudy.get_trials(states=(optuna.trial.TrialState.COMPLETE,))
    for k in range(0, 96, 7):
        t = crop.table
        single = model.Candidates.from_arrays(
            core=t.catalogue_core[k], stack=t.stack[k], material=t.material[k],
            turns=t.turns[k], gap_option=t.gap_option[k], wire=t.wire[k],
            parallel=t.parallel[k])
        metrics = model.evaluate(problem.space, single)
        np.testing.assert_allclose(trials[k].values,
                                   model.objective_matrix(metrics, problem.objectives)[0])
        expected = model.violations_matrix(metrics)[0]
        np.testing.assert_allclose(trials[k].user_attrs["optimag.violations"], expected)
        # The samplers see one constraint: the sum of the positive violations when any is
        # positive (what they rank infeasible trials by), else the largest one (<= 0).
        positive = expected[expected > 0]
        (value,) = trials[k].constraints.values()
        assert value == pytest.approx(positive.sum() if positive.size else expected.max())


def test_decoded_turns_and_winding_are_admissible(tiny_study_path):
    """Brute force, one turn count and one winding at a time: the decoded design meets
    the magnetic and winding constraints whenever the drawn core admits any."""
    problem = _problem(tiny_study_path)
    space = problem.space
    rng = np.random.default_rng(5)
    params = [{"core": int(rng.integers(len(problem.core_order))),
               "stack": int(rng.integers(1, 3)),
               "material": str(space.materials.ids[rng.integers(len(space.materials.ids))]),
               "turns_position": float(rng.random()), "winding_position": float(rng.random())}
              for _ in range(12)]
    params[0].update(turns_position=0.0)
    table = problem.decode(list(range(12)), params)
    for k in range(12):
        core, stack, mat = table.catalogue_core[k], table.stack[k], table.material[k]
        admissible_turns = []
        for n in space.turns:
            mag = model.magnetic_stage(space, *(np.array([v]) for v in (core, stack, mat, n, 0)))
            if all(mag[f"violation_{c}"][0] <= 0 for c in model.MAGNETIC_CONSTRAINTS):
                admissible_turns.append(n)
        if admissible_turns:
            assert table.turns[k] in admissible_turns
            if k == 0:
                assert table.turns[k] == min(admissible_turns)
        layout = model.winding_layout_stage(
            space, *(np.array([v]) for v in (core, stack, table.turns[k], table.wire[k],
                                               table.parallel[k])))
        any_fits = False
        for wire in range(len(space.wires.ids)):
            for par in space.parallels:
                other = model.winding_layout_stage(
                    space, *(np.array([v]) for v in (core, stack, table.turns[k], wire, par)))
                any_fits |= all(other[f"violation_{c}"][0] <= 0
                                for c in model.WINDING_CONSTRAINTS)
        if any_fits:
            assert all(layout[f"violation_{c}"][0] <= 0 for c in model.WINDING_CONSTRAINTS)


def test_repeated_designs_are_replaced(tiny_study_path):
    """A design is evaluated twice only once every admissible (turns, winding) of its
    core, stack and material has been evaluated (checked by brute force)."""
    problem = _problem(tiny_study_path)
    space = problem.space
    ostudy, counts = _run_memory(problem, 300)
    keys = problem.design_keys(osearch.harvest(ostudy, problem).table)
    plain = osearch.memory_study(problem, osearch.make_sampler("nsga2", 0))
    osearch.run_trials(plain, problem, 300, 32, deduplicate=False)
    plain_keys = problem.design_keys(osearch.harvest(plain, problem).table)
    assert counts.duplicates > 0, "the sampler repeats itself on a tiny space"
    assert len(set(keys)) > len(set(plain_keys))
    evaluated = set(keys)
    repeated = {k for k in evaluated if keys.count(k) > 1}
    for core, stack, material, _turns, gap, *_rest in repeated:
        for n in space.turns:
            mag = model.magnetic_stage(
                space, *(np.array([v]) for v in (core, stack, material, n, gap)))
            if any(mag[f"violation_{c}"][0] > 0 for c in model.MAGNETIC_CONSTRAINTS):
                continue
            for wire in range(len(space.wires.ids)):
                for par in space.parallels:
                    layout = model.winding_layout_stage(
                        space, *(np.array([v]) for v in (core, stack, n, wire, par)))
                    if all(layout[f"violation_{c}"][0] <= 0
                           for c in model.WINDING_CONSTRAINTS):
                        assert (core, stack, material, n, gap, wire, par) in evaluated


# --- reproducibility, storage, resume ----------------------------------------------------


def test_same_seed_same_trials(tiny_study_path):
    problem = _problem(tiny_study_path)
    runs = [_run_memory(problem, 130, seed=seed)[0] for seed in (11, 11, 12)]
    params = [[t.params for t in run.get_trials()] for run in runs]
    assert params[0] == params[1]
    assert params[0] != params[2]


def test_resume_fails_stale_trials_and_tops_up(tmp_path, tiny_study_path):
    run_dir = tmp_path / "run"
    first = osearch.explore_optuna(tiny_study_path, trials=70, seed=2, run_dir=run_dir)
    assert first.record["optuna"]["complete_trials"] == 70
    journal = str(run_dir / "optuna.journal")
    assert first.record["optuna"]["storage"] == journal
    # A killed process leaves its in-flight trials RUNNING (asked here through optuna's
    # own journal file backend: the run folder's journal is in optuna's format).
    disk = optuna.load_study(study_name="tiny-buck", storage=_optuna_journal(journal))
    for _ in range(3):
        disk.ask()
    second = osearch.explore_optuna(tiny_study_path, trials=150, seed=2, run_dir=run_dir)
    assert second.record["optuna"]["stale_trials_failed"] == 3
    assert second.record["optuna"]["trials_this_run"] == 80
    states = [t.state for t in optuna.load_study(study_name="tiny-buck",
                                                 storage=_optuna_journal(journal)).get_trials()]
    assert states.count(optuna.trial.TrialState.COMPLETE) == 150
    assert states.count(optuna.trial.TrialState.FAIL) == 3
    assert second.record["counts"]["total"] == 150


def test_resume_refuses_changed_objectives(tmp_path, make_tiny_study):
    run_dir = tmp_path / "run"
    osearch.explore_optuna(make_tiny_study(), trials=40, run_dir=run_dir)
    with pytest.raises(StorageError, match=r"changed: search\.objectives.*--re-evaluate"):
        osearch.explore_optuna(make_tiny_study(("volume", "loss")), trials=80, run_dir=run_dir)


def test_worker_rebuilds_the_study_from_storage(tmp_path, make_tiny_study):
    path = make_tiny_study()
    url = str(tmp_path / "shared.journal")
    osearch.explore_optuna(path, trials=64, storage=url)
    path.unlink()  # the worker must not need the study file
    counts = osearch.run_worker(url, "tiny-buck", trials=130, batch_size=33)
    assert counts.told == 66
    disk = optuna.load_study(study_name="tiny-buck", storage=_optuna_journal(url))
    complete = disk.get_trials(states=(optuna.trial.TrialState.COMPLETE,))
    assert len(complete) == 130
    assert sorted(t.number for t in disk.get_trials()) == list(range(130))


def test_kill_and_resume_in_a_subprocess(tmp_path, tiny_study_path):
    """SIGKILL a real `explore --strategy optuna` once trials are in its database, then
    run it again: the study ends with exactly the requested COMPLETE trials."""
    out, trials = tmp_path / "run", 400
    command = [sys.executable, "-m", "optimag.cli", "explore", str(tiny_study_path),
               "--strategy", "optuna", "--out", str(out), "--trials", str(trials),
               "--seed", "4"]
    env = {**os.environ, "PYTHONWARNINGS": "ignore"}
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                               env=env)
    journal = out / "optuna.journal"
    complete = 0
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and process.poll() is None:
        complete = _complete_in_journal(journal)
        if complete >= 1:
            break
        time.sleep(0.05)
    assert process.poll() is None, "the run ended before it could be killed"
    process.send_signal(signal.SIGKILL)
    process.wait(timeout=10)
    assert 0 < complete < trials
    finished = subprocess.run(command, capture_output=True, env=env, timeout=120)
    assert finished.returncode in (0, 1), finished.stderr.decode()[-2000:]
    states = [t.state for t in optuna.load_study(
        study_name="tiny-buck", storage=_optuna_journal(str(journal))).get_trials()]
    assert states.count(optuna.trial.TrialState.COMPLETE) == trials
    assert optuna.trial.TrialState.RUNNING not in states


def _optuna_journal(path: str):
    """The journal read and written by optuna's own file backend (an independent reader)."""
    from optuna.storages import JournalStorage
    from optuna.storages.journal import JournalFileBackend

    return JournalStorage(JournalFileBackend(path))


def _complete_in_journal(path) -> int:
    if not path.exists():
        return 0
    try:
        study = optuna.load_study(study_name="tiny-buck", storage=_optuna_journal(str(path)))
    except KeyError:
        return 0  # the study is not created yet
    return len(study.get_trials(deepcopy=False,
                                states=(optuna.trial.TrialState.COMPLETE,)))


# --- custom cores ------------------------------------------------------------------------


def test_custom_core_trials_carry_their_geometry(make_tiny_study):
    path = make_tiny_study(replace={'materials = ["fer-lowf", "fer-midf", "pwd-60u"]':
                                    'materials = ["fer-lowf", "fer-midf"]'})
    path.write_text(path.read_text(encoding="utf-8") + CUSTOM_E, encoding="utf-8")
    result = osearch.explore_optuna(path, trials=400, seed=0)
    record = result.record
    assert record["optuna"]["study_name"] == "tiny-buck-custom-E"
    cores = record["custom_cores"]
    assert cores, "custom designs reach the front of this study"
    # The recorded effective parameters are the IEC 60205 geometry of the recorded
    # dimensions, and the design space row used for evaluation holds the same values.
    from optimag.search.custom_core import e_core_geometry

    ids = [str(i) for i in result.space.cores.ids]
    for core_id, dims in cores.items():
        g = e_core_geometry(*(dims[f"{n}_mm"] * 1e-3 for n in
                              ("leg_width", "leg_depth", "window_breadth", "window_width")))
        assert dims["Ae_mm2"] == pytest.approx(float(g.ae_m2) * 1e6, rel=1e-4)
        assert dims["height_mm"] <= 25 + 1e-9
        row = ids.index(core_id)
        assert result.space.cores.le_m[row] == pytest.approx(float(g.le_m), rel=1e-9)
    comparison = record["custom_vs_catalogue"]
    assert "rows" in comparison
    for row in comparison["rows"]:
        if row["custom_volume_cm3"] is not None:
            assert row["volume_ratio"] == pytest.approx(
                row["catalogue_volume_cm3"] / row["custom_volume_cm3"])


def test_custom_vs_catalogue_by_hand():
    """Catalogue designs (volume, loss): (10, 1), (6, 2), (12, 1.5) — the last is
    dominated; custom designs (4, 1.8), (8, 0.9). At loss <= 1 only (8, 0.9) qualifies:
    ratio 10/8; at loss <= 2 the smallest is 4: ratio 6/4."""
    rows = osearch.custom_vs_catalogue(
        np.array([10.0, 6.0, 12.0]), np.array([1.0, 2.0, 1.5]),
        np.array([4.0, 8.0]), np.array([1.8, 0.9]))
    assert [r["catalogue"] for r in rows] == [0, 1]
    assert rows[0]["volume_ratio"] == pytest.approx(10 / 8)
    assert rows[1]["volume_ratio"] == pytest.approx(6 / 4)
    none = osearch.custom_vs_catalogue(np.array([3.0]), np.array([0.1]), np.array([1.0]),
                                       np.array([0.5]))
    assert none[0]["custom_volume_cm3"] is None and none[0]["volume_ratio"] is None


@given(arrays(np.float64, st.integers(1, 30), elements=st.floats(1e-3, 1e3)),
       arrays(np.float64, st.integers(1, 30), elements=st.floats(1e-3, 1e3)),
       st.randoms(use_true_random=False))
@settings(max_examples=100, deadline=None)
def test_custom_vs_catalogue_is_finite(volumes, losses, rnd):
    n = min(len(volumes), len(losses))
    split = rnd.randint(0, n)
    rows = osearch.custom_vs_catalogue(volumes[:split] if split else volumes[:n],
                                       losses[:split] if split else losses[:n],
                                       volumes[:n], losses[:n])
    for row in rows:
        for key in ("weighted_loss_W", "catalogue_volume_cm3"):
            assert np.isfinite(row[key])
        if row["volume_ratio"] is not None:
            assert np.isfinite(row["volume_ratio"]) and row["volume_ratio"] > 0


@given(arrays(np.bool_, st.tuples(st.integers(1, 20), st.integers(1, 40))),
       st.floats(0.0, 1.0))
@settings(max_examples=200, deadline=None)
def test_position_pick_lands_on_admissible_column(admissible, position):
    pick = osearch.pick_position(admissible, np.full(len(admissible), position))
    for row, column in enumerate(pick):
        assert 0 <= column < admissible.shape[1]
        if admissible[row].any():
            assert admissible[row, column]


def test_front_lists_each_design_once(tiny_study_path):
    """More trials than the tiny space has good designs: repeats must not fill the front."""
    result = osearch.explore_optuna(tiny_study_path, trials=1500, seed=5)
    keys = result.pareto[["core", "stack", "material", "turns", "gap_mm", "wire", "parallel"]]
    assert not keys.duplicated().any()


def test_batch_friendly_sampler_reproduces_optunas_nsga2(tiny_study_path):
    """The generation cache changes speed only: the same seed gives the same trials as
    optuna's own NSGA-II sampler over several generations."""
    import inspect
    import warnings

    import optuna

    kwargs = {}
    if "mutation" in inspect.signature(optuna.samplers.NSGAIISampler).parameters:
        from optuna.samplers.nsgaii import PolynomialMutation

        with warnings.catch_warnings():
            warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
            kwargs["mutation"] = PolynomialMutation()
    runs = []
    for sampler in (
        osearch.make_sampler("nsga2", 11, population_size=20),
        optuna.samplers.NSGAIISampler(seed=11, population_size=20, **kwargs),
    ):
        problem = _problem(tiny_study_path)  # a fresh problem: it caches what it has seen
        ostudy = osearch.memory_study(problem, sampler)
        osearch.run_trials(ostudy, problem, 160, 16)
        runs.append([t.params for t in ostudy.trials])
    assert isinstance(osearch.make_sampler("nsga2", 0), osearch.BatchFriendlyNSGAIISampler)
    assert runs[0] == runs[1]
